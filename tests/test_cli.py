"""The ``toporank`` command: exit statuses, messages, outputs, and the console script itself.

Orders written by the command are checked with ``toporank.verify_order``
and, for graphs with cycles, against networkx (which nodes lie on or after
a cycle).
"""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import time

import numpy as np

import toporank
from toporank.cli import main

# An invented package graph with one import cycle (db -> orm -> cache -> db)
# and a part that does not depend on it.
CYCLIC = [
    ("log", "config"),
    ("config", "db"),
    ("db", "orm"),
    ("orm", "cache"),
    ("cache", "db"),
    ("orm", "api"),
    ("log", "cli"),
    ("config", "cli"),
]


def _tsv(path, pairs, header=None) -> str:
    lines = [] if header is None else ["\t".join(header)]
    path.write_text("\n".join(lines + [f"{u}\t{v}" for u, v in pairs]) + "\n")
    return str(path)


def _run(capsys, *argv):
    status = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return status, out, err


def _script(*argv, **kwargs):
    return subprocess.run(
        [sys.executable, "-m", "toporank", *map(str, argv)],
        capture_output=True,
        text=True,
        timeout=120,
        **kwargs,
    )


def test_order_writes_one_node_per_line_and_verifies(tmp_path, capsys):
    pairs = [(u, v) for u, v in CYCLIC if (u, v) != ("cache", "db")]
    path = _tsv(tmp_path / "deps.tsv", pairs)
    status, out, err = _run(capsys, "order", path)
    assert status == 0, err
    toporank.verify_order(pairs, np.array(out.split(), dtype=object))
    assert out.split() == toporank.order(pairs).tolist()


def test_cycle_stops_order_with_status_1_and_writes_only_the_summary(tmp_path, capsys):
    path = _tsv(tmp_path / "deps.tsv", CYCLIC)
    output, summary = tmp_path / "order.txt", tmp_path / "summary.json"
    status, _, err = _run(capsys, "order", path, "-o", output, "--summary", summary)
    assert status == 1
    # the only cycle of CYCLIC (by construction), from whichever node the report starts
    rotations = [
        "db -> orm -> cache -> db",
        "orm -> cache -> db -> orm",
        "cache -> db -> orm -> cache",
    ]
    assert any(f"{path}: has a cycle: {r};" in err for r in rotations), err
    assert f"Only the summary was written to {summary}" in err
    assert not output.exists()
    report = json.loads(summary.read_text())
    assert report["cycles"]["is_dag"] is False
    cycle = report["cycles"]["witness_cycle"]
    assert set(cycle) == {"db", "orm", "cache"}  # the only cycle of CYCLIC (by construction)
    for u, v in zip(cycle, cycle[1:] + cycle[:1], strict=True):
        assert (u, v) in CYCLIC


def test_partial_order_matches_networkx_on_which_nodes_are_blocked(tmp_path, capsys):
    import networkx as nx

    path = _tsv(tmp_path / "deps.tsv", CYCLIC)
    output = tmp_path / "order.csv"
    status, _, err = _run(capsys, "order", path, "--on-cycle", "partial", "-o", output)
    assert status == 0, err
    rows = [line.split(",") for line in output.read_text().splitlines()]
    assert rows[0][:2] == ["node", "position"]
    emitted = [r[0] for r in rows[1:]]
    assert [int(r[1]) for r in rows[1:]] == list(range(len(emitted)))
    # networkx: a node is blocked iff it or an ancestor lies on a cycle.
    g = nx.DiGraph(CYCLIC)
    on_cycles = {v for c in nx.strongly_connected_components(g) if len(c) > 1 for v in c}
    blocked = set(on_cycles)
    for v in on_cycles:
        blocked |= nx.descendants(g, v)
    assert set(emitted) == set(g) - blocked
    sub = [(u, v) for u, v in CYCLIC if u in emitted and v in emitted]
    toporank.verify_order(sub, np.array(emitted, dtype=object))


def test_console_script_on_labelled_cyclic_file(tmp_path):
    """The installed script, as a user runs it, on string labels with cycles."""
    path = _tsv(tmp_path / "deps.tsv", CYCLIC, header=("package", "used_by"))
    script = os.path.join(os.path.dirname(sys.executable), "toporank")
    command = [script] if os.path.exists(script) else [sys.executable, "-m", "toporank"]

    def run(*argv):
        return subprocess.run([*command, *argv], capture_output=True, text=True, timeout=120)

    result = run("order", path, "--header", "--on-cycle", "partial", "-q")
    assert result.returncode == 0, result.stderr
    emitted = result.stdout.split()
    assert emitted == ["log", "config", "cli"]  # db, orm, cache and api sit on or after the cycle
    kept = [(u, v) for u, v in CYCLIC if u in emitted and v in emitted]
    toporank.verify_order(kept, np.array(emitted, dtype=object))

    refused = run("order", path, "--header", "-q")
    assert refused.returncode == 1 and "cycle" in refused.stderr

    result = run("order", path, "--header", "--on-cycle", "cut", "-q")
    assert result.returncode == 0, result.stderr
    cut_file = tmp_path / "cut.csv"
    # exit 1: cycles found (the documented meaning of 1)
    assert run("cycles", path, "--header", "--cut", "-o", str(cut_file)).returncode == 1
    cut = {tuple(line.split(",")[:2]) for line in cut_file.read_text().splitlines()[1:]}
    kept = [e for e in CYCLIC if e not in cut]
    toporank.verify_order(kept, np.array(result.stdout.split(), dtype=object))


def test_verify_subcommand(tmp_path, capsys):
    path = _tsv(tmp_path / "e.tsv", [(0, 1), (1, 2), (0, 2)])
    good = tmp_path / "good.txt"
    good.write_text("0\n1\n2\n")
    bad = tmp_path / "bad.txt"
    bad.write_text("1\n0\n2\n")
    status, out, _ = _run(capsys, "verify", path, good)
    assert status == 0 and out.startswith("ok:")
    status, _, err = _run(capsys, "verify", path, bad)
    assert status == 1 and "edge 0 -> 1 goes backwards" in err


def test_csv_npy_and_summary_outputs(tmp_path, capsys):
    src, dst = np.array([3, 3, 0, 1]), np.array([1, 0, 2, 2])
    path = _tsv(tmp_path / "e.tsv", zip(src, dst, strict=True))
    status, _, err = _run(
        capsys,
        "order",
        path,
        "-o",
        tmp_path / "o.npy",
        "--summary",
        tmp_path / "s.json",
        "--tie",
        "stack",
    )
    assert status == 0, err
    np.testing.assert_array_equal(
        np.load(tmp_path / "o.npy"), toporank.order((src, dst), tie="stack")
    )
    summary = json.loads((tmp_path / "s.json").read_text())
    assert (summary["nodes"], summary["edges"], summary["ordered"]) == (4, 4, 4)
    assert summary["cycles"]["is_dag"] is True
    status, _, _ = _run(
        capsys, "order", path, "-o", tmp_path / "o.csv", "--tie", "priority", "--descending"
    )
    lines = (tmp_path / "o.csv").read_text().splitlines()
    assert lines[0].startswith("node,position")
    nodes = [int(line.split(",")[0]) for line in lines[1:]]
    assert nodes == toporank.order((src, dst), tie="priority", descending=True).tolist()


def test_key_file_drives_priority(tmp_path, capsys):
    path = _tsv(tmp_path / "e.tsv", [("a", "c"), ("b", "c")])
    key = _tsv(tmp_path / "year.tsv", [("a", 2001), ("b", 1999), ("c", 2005)])
    status, out, _ = _run(capsys, "order", path, "--tie", "priority", "--key", key)
    assert status == 0 and out.split() == ["b", "a", "c"]


def test_stdin_input(tmp_path):
    result = _script("order", "-", input="# from a pipe\n2\t0\n0\t1\n")
    assert result.returncode == 0, result.stderr
    assert result.stdout.split() == ["2", "0", "1"]
    assert result.stderr == ""  # no progress bar when stderr is not a terminal


# ---------------------------------------------------------------------------
# error paths: exit status 2, one-line message naming file, line and text, nothing written


def _fails(capsys, tmp_path, *argv, message):
    before = set(os.listdir(tmp_path))
    status, _, err = _run(capsys, *argv)
    assert status == 2
    assert err.startswith("toporank: ") and err.count("\n") == 1, err
    assert "Traceback" not in err
    assert message in err, err
    assert set(os.listdir(tmp_path)) == before  # nothing written
    return err


def test_bad_line(tmp_path, capsys):
    path = _tsv(tmp_path / "e.tsv", [(0, 1), (1, "x2")])
    _fails(
        capsys,
        tmp_path,
        "order",
        path,
        "--ids",
        "-o",
        tmp_path / "o.txt",
        message=f"{path}:2: 'x2' is not an integer node id",
    )


def test_missing_column(tmp_path, capsys):
    path = tmp_path / "e.csv"
    path.write_text("a,b\nb\n")
    _fails(
        capsys,
        tmp_path,
        "order",
        path,
        "-o",
        tmp_path / "o.txt",
        message=f"{path}:2: needs at least 2 columns, found 1: 'b'",
    )


def test_unknown_label_column(tmp_path, capsys):
    path = tmp_path / "e.csv"
    path.write_text("package,used_by\na,b\n")
    _fails(
        capsys,
        tmp_path,
        "order",
        path,
        "--columns",
        "package,importer",
        message=f"{path}:1: no column named 'importer'",
    )


def test_header_too_large(tmp_path, capsys):
    path = tmp_path / "g.mtx"
    path.write_text(
        "%%MatrixMarket matrix coordinate pattern general\n"
        "4000000000 4000000000 800000000000\n1 2\n"
    )
    _fails(
        capsys,
        tmp_path,
        "order",
        path,
        "-o",
        tmp_path / "o.txt",
        message="refusing before allocating",
    )


def test_output_equal_to_input(tmp_path, capsys):
    path = _tsv(tmp_path / "e.tsv", [(0, 1)])
    original = (tmp_path / "e.tsv").read_text()
    _fails(capsys, tmp_path, "order", path, "-o", path, message="is the input file")
    assert (tmp_path / "e.tsv").read_text() == original


def test_unwritable_folder(tmp_path, capsys):
    path = _tsv(tmp_path / "e.tsv", [(0, 1)])
    not_a_folder = tmp_path / "file"
    not_a_folder.write_text("")
    _fails(capsys, tmp_path, "order", path, "-o", not_a_folder / "o.txt", message="does not exist")
    _fails(
        capsys,
        tmp_path,
        "order",
        path,
        "--summary",
        tmp_path / "missing" / "s.json",
        message="does not exist",
    )


def test_missing_input_file(tmp_path, capsys):
    _fails(capsys, tmp_path, "order", tmp_path / "nope.tsv", message="nope.tsv: no such file")


# ---------------------------------------------------------------------------
# subcommands that use functions from other modules; they run once those exist


def test_levels_subcommand(tmp_path, capsys):
    import networkx as nx

    pairs = [("a", "b"), ("b", "c"), ("a", "c"), ("d", "c")]
    status, out, err = _run(capsys, "levels", _tsv(tmp_path / "e.tsv", pairs))
    assert status == 0, err
    rows = dict(line.split(",") for line in out.splitlines()[1:])
    # level = longest path from a source (networkx dag_longest_path_length on ancestors)
    g = nx.DiGraph(pairs)
    # networkx's topological generations: generation k holds the nodes whose longest path
    # from a source has k edges, which is the level
    expected = {v: k for k, gen in enumerate(nx.topological_generations(g)) for v in gen}
    assert {node: int(level) for node, level in rows.items()} == expected


def test_cycles_subcommand(tmp_path, capsys):
    path = _tsv(tmp_path / "deps.tsv", [*CYCLIC, ("api", "api")])
    import networkx as nx

    status, out, err = _run(capsys, "cycles", path, "--json", tmp_path / "c.json")
    assert status == 1, err  # cycles found
    report = json.loads((tmp_path / "c.json").read_text())
    # networkx: strongly connected components with more than one node, plus self-loops
    g = nx.DiGraph([*CYCLIC, ("api", "api")])
    cyclic = [
        c for c in nx.strongly_connected_components(g) if len(c) > 1 or g.has_edge(*[*c, *c][:2])
    ]
    assert report["cyclic_components"] == len(cyclic)
    assert sorted(report["component_sizes"]) == sorted(map(len, cyclic))
    assert "db" in out and "api" in out


def test_cut_subcommand(tmp_path, capsys):
    import networkx as nx

    path = _tsv(tmp_path / "deps.tsv", CYCLIC)
    status, out, err = _run(capsys, "cycles", path, "--cut", "-o", tmp_path / "cut.csv")
    assert status == 1, err
    # A small graph: every put-back test ran, so the cut is reported minimal.
    assert "(minimal: putting back any one closes a cycle)" in out
    rows = [
        tuple(line.split(",")[:2]) for line in (tmp_path / "cut.csv").read_text().splitlines()[1:]
    ]
    remaining = nx.DiGraph([e for e in CYCLIC if e not in rows])
    assert nx.is_directed_acyclic_graph(remaining)


def test_compare_subcommand(tmp_path, capsys):
    import csv

    path = _tsv(tmp_path / "e.tsv", [(0, 1), (0, 2), (1, 3)])
    status, out, err = _run(capsys, "compare", path)
    assert status == 0, err
    assert "4 nodes, 3 edges" in out
    # the CSV written with -o holds the library's own records (time columns aside)
    status, _, err = _run(capsys, "compare", path, "-o", tmp_path / "c.csv")
    assert status == 0, err
    rows = list(csv.DictReader((tmp_path / "c.csv").open()))
    expected = toporank.compare((np.array([0, 0, 1]), np.array([1, 2, 3]))).records()
    assert [r["tie"] for r in rows] == [r["tie"] for r in expected]
    for got, want in zip(rows, expected, strict=True):
        assert int(got["ready_peak"]) == want["ready_peak"]
        assert int(got["live_peak"]) == want["live_peak"]


def test_compare_on_a_cyclic_file_stops_or_cuts(tmp_path, capsys):
    # invented modules with one import ring (a -> b -> c -> a)
    path = _tsv(tmp_path / "e.tsv", [("x", "a"), ("a", "b"), ("b", "c"), ("c", "a"), ("c", "y")])
    status, _, err = _run(capsys, "compare", path)
    assert status == 1 and "cycle" in err
    status, out, err = _run(capsys, "compare", path, "--on-cycle", "cut", "--workers", "2")
    assert status == 0, err
    assert "without the 1 edges cut_cycles removed" in err
    for policy in toporank.SCHEDULE_TIES:
        assert policy in out
    # the graph left after the cut (5 nodes, 4 of the 5 edges) is what was compared
    assert "5 nodes, 4 edges" in out


# ---------------------------------------------------------------------------
# demo and interruption


def test_demo_writes_its_outputs_and_reports_the_loops(tmp_path):
    result = _script("demo", "-o", tmp_path / "demo", "-q", cwd=tmp_path)
    assert result.returncode == 0, result.stderr
    assert "Journal of Imaginary Results" in result.stdout
    assert "citation loop" in result.stdout and "import cycle" in result.stdout
    folder = tmp_path / "demo"
    citations = toporank.read_graph(str(folder / "journal-citations.tsv"), header=True)
    rows = [line.split(",") for line in (folder / "journal-order.csv").read_text().splitlines()[1:]]
    emitted = [r[0] for r in rows]
    years = [int(r[2]) for r in rows]
    assert years == sorted(years)  # priority by year on a graph whose edges never go back in time
    index = {p: i for i, p in enumerate(emitted)}
    src = np.repeat(np.arange(citations.n), np.diff(citations.indptr))
    dst = citations.indices
    labels = citations.labels
    # papers of one invented citation ring may come in any order among themselves
    # (--on-cycle condense keeps them together); every other citation goes forward
    from toporank._demo import LOOPS, paper_id

    rings = {
        paper_id(year, issue, k): ring
        for ring, (year, issue, members) in enumerate(LOOPS)
        for k in members
    }
    for u, v in zip(labels[src], labels[dst], strict=True):
        if u in index and v in index and not (u in rings and rings[u] == rings.get(v)):
            assert index[u] < index[v]
    summary = json.loads((folder / "monorepo-summary.json").read_text())
    assert set(summary["cycles"]["witness_cycle"]) == {
        "billing/invoice",
        "billing/tax",
        "billing/ledger",
    }


def test_ctrl_c_leaves_no_output_and_exits_130(tmp_path):
    output = tmp_path / "order.txt"
    process = subprocess.Popen(
        [sys.executable, "-m", "toporank", "order", "-", "-o", str(output)],
        stdin=subprocess.PIPE,
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        cwd=tmp_path,
    )
    assert process.stdin is not None
    process.stdin.write(b"0\t1\n" * 1000)
    process.stdin.flush()
    time.sleep(1.5)  # the command is now waiting for the rest of the input
    started = time.monotonic()
    process.send_signal(signal.SIGINT)
    _, err = process.communicate(timeout=30)
    assert process.returncode == 130, err
    assert time.monotonic() - started < 5
    assert b"interrupted" in err
    assert os.listdir(tmp_path) == []
