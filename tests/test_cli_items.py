"""The command line a practitioner expects: headers, one option vocabulary, one-line errors.

One test (or a few) per numbered item of the issue that asked for them. Outside
references: networkx for graph facts, the demo's own generator for its files,
and "common practice" for shell conventions (exit statuses, one-line errors).
"""

from __future__ import annotations

import csv
import gzip
import os
import subprocess
import sys

import numpy as np
import pytest

import toporank
from toporank._demo import MONOREPO, journal, monorepo
from toporank.cli import main


def _run(capsys, *argv):
    status = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return status, out, err


def _write(path, text: str) -> str:
    path.write_text(text, encoding="utf-8")
    return str(path)


def _one_line_error(err: str, *parts: str) -> None:
    assert err.startswith("toporank: ") and err.count("\n") == 1, err
    assert "Traceback" not in err
    for part in parts:
        assert part in err, err


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    folder = tmp_path_factory.mktemp("demo")
    result = subprocess.run(
        [sys.executable, "-m", "toporank", "demo", "-o", str(folder), "-q"],
        capture_output=True,
        text=True,
        timeout=300,
    )
    assert result.returncode == 0, result.stderr
    return folder


# 1. headers -----------------------------------------------------------------


def test_demo_journal_header_is_detected(demo, capsys):
    # the demo's generator says how many papers there are (3080); the header adds none
    edges, years = journal()
    path = demo / "journal-citations.tsv"
    g = toporank.read_graph(path)
    assert (g.n, g.m) == (len(years), len(edges))
    status, out, err = _run(capsys, "order", path, "--on-cycle", "condense", "-q")
    assert status == 0, err
    assert len(out.split()) == len(years) and "cited" not in out.split()


def test_demo_journal_without_its_header(demo, tmp_path):
    edges, years = journal()
    lines = (demo / "journal-citations.tsv").read_text().splitlines()
    bare = _write(tmp_path / "bare.tsv", "\n".join(lines[2:]) + "\n")  # comment and header gone
    g = toporank.read_graph(bare)
    assert (g.n, g.m) == (len(years), len(edges))
    assert g.labels[0] == edges[0][0]


def test_labelled_csv_header_of_plain_words_is_detected_with_a_note(demo, capsys):
    # monorepo-imports.csv: "module,imports" then module names with slashes
    path = demo / "monorepo-imports.csv"
    status, out, err = _run(capsys, "order", path, "--on-cycle", "cut")
    assert status == 0, err
    assert sorted(out.split()) == sorted(MONOREPO)  # 25 modules, no "module"/"imports" node
    assert f"{path}:1: read as a header (module, imports)" in err
    # --no-header overrides: the first line is then an edge between two more nodes
    g = toporank.read_graph(path, header=False)
    assert g.n == len(MONOREPO) + 2 and g.m == len(monorepo()) + 1


def test_labels_with_digits_never_make_a_header(tmp_path):
    # invented node names like "n236594": a first edge whose nodes never recur is still an edge
    rows = [(f"n{k}", f"n{k + 1000}") for k in range(3000)]
    path = _write(tmp_path / "e.tsv", "".join(f"{u}\t{v}\n" for u, v in rows))
    g = toporank.read_graph(path)
    assert (g.n, g.m) == (len({x for r in rows for x in r}), len(rows))


def test_header_above_integer_ids_and_numeric_labels(tmp_path):
    path = _write(tmp_path / "e.tsv", "source\ttarget\n10\t20\n20\t30\n")
    g = toporank.read_graph(path)
    assert g.labels is None and (g.n, g.m) == (31, 2)
    # labels that are numbers, kept as labels
    g = toporank.read_graph(path, labels=True)
    assert g.labels.tolist() == ["10", "20", "30"]


def test_numeric_looking_header_names(tmp_path):
    # a header of names that look like numbers cannot be told from an edge: --header says so
    path = _write(tmp_path / "e.tsv", "1990\t2000\n0\t1\n1\t2\n")
    assert toporank.read_graph(path).m == 3
    assert toporank.read_graph(path, header=True).m == 2
    # names that start with a digit but are not numbers are detected
    path = _write(tmp_path / "f.tsv", "1st\t2nd\n0\t1\n1\t2\n")
    assert toporank.read_graph(path).m == 2


def test_help_states_the_header_default(capsys):
    with pytest.raises(SystemExit):
        main(["order", "--help"])
    out = " ".join(capsys.readouterr().out.split())
    assert "the first line names the columns (default: detected" in out


# 2. the README's verify example: see test_readme.py; the demo's build order is complete


def test_demo_build_order_holds_every_module_and_verifies(demo, capsys):
    order = (demo / "monorepo-build-order.txt").read_text().split()
    assert sorted(order) == sorted(MONOREPO)
    status, out, err = _run(
        capsys,
        "verify",
        demo / "monorepo-imports-cut.csv",
        "--columns",
        "imports,module",
        demo / "monorepo-build-order.txt",
    )
    assert status == 0 and out.startswith("ok:"), err


# 3. --columns naming one column twice ------------------------------------------


@pytest.mark.parametrize("columns", ["0,0", "target,target"])
def test_columns_naming_one_column_twice(tmp_path, capsys, columns):
    path = _write(tmp_path / "e.tsv", "source\ttarget\n0\t1\n")
    status, _, err = _run(capsys, "order", path, "--columns", columns)
    assert status == 2
    _one_line_error(err, f"--columns {columns} names one column twice")
    with pytest.raises(toporank.GraphInputError, match="same column twice"):
        toporank.read_graph(path, columns=(0, 0))


# 4. levels names labels in its cycle message ------------------------------------


def test_levels_cycle_message_names_labels(tmp_path, capsys):
    path = _write(tmp_path / "e.tsv", "x\ta\na\tb\nb\ta\n")
    status, out, err = _run(capsys, "levels", path)
    assert status == 1 and out == ""
    _one_line_error(err, "has a cycle:", "Nothing was written")
    assert "a -> b -> a" in err or "b -> a -> b" in err


# 5. a note whenever output omits nodes ------------------------------------------


def test_partial_order_to_stdout_says_what_was_left_out(tmp_path, capsys):
    import networkx as nx

    pairs = [("x", "a"), ("a", "b"), ("b", "a"), ("x", "y")]
    path = _write(tmp_path / "e.tsv", "".join(f"{u}\t{v}\n" for u, v in pairs))
    status, out, err = _run(capsys, "order", path, "--on-cycle", "partial")
    assert status == 0
    g = nx.DiGraph(pairs)
    blocked = {"a", "b"} | nx.descendants(g, "a")
    assert set(out.split()) == set(g) - blocked
    assert f"wrote 2 of 4 nodes to standard output: {len(blocked)} are on or behind cycles" in err


# 6. messages in the command's own words -------------------------------------------


def test_fake_gz_names_the_file(tmp_path, capsys):
    path = tmp_path / "e.tsv.gz"
    path.write_bytes(b"so\tfake\n")
    status, _, err = _run(capsys, "order", path)
    assert status == 2
    _one_line_error(err, f"{path}: ends in .gz but is not a gzip file")


def test_key_file_bad_value_is_reported_at_its_line(tmp_path, capsys):
    graph = _write(tmp_path / "e.tsv", "a\tb\nb\tc\n")
    key = _write(tmp_path / "k.tsv", "node\tyear\na\t2001\nb\tlate\nc\t2003\n")
    status, _, err = _run(capsys, "order", graph, "--tie", "priority", "--key", key)
    assert status == 2
    _one_line_error(err, f"{key}:3: 'late' is not a number")


def test_tie_options_refused_in_the_words_typed(tmp_path, capsys):
    graph = _write(tmp_path / "e.tsv", "a\tb\n")
    key = _write(tmp_path / "k.tsv", "a\t1\nb\t2\n")
    status, _, err = _run(capsys, "order", graph, "--key", key)
    assert status == 2
    _one_line_error(err, "--key applies to --tie priority, not --tie queue")
    assert "descending" not in err and "tie='priority'" not in err


def test_ids_error_does_not_advise_python_keywords(tmp_path, capsys):
    graph = _write(tmp_path / "e.tsv", "0\t1\n1\tx\n")
    status, _, err = _run(capsys, "order", graph, "--ids")
    assert status == 2
    _one_line_error(err, f"{graph}:2: 'x' is not an integer node id")
    assert "labels=True" not in err


# 7. one option vocabulary -------------------------------------------------------


def _cyclic_file(tmp_path) -> str:
    return _write(tmp_path / "e.tsv", "x\ta\na\tb\nb\ta\nb\ty\n")


@pytest.mark.parametrize("command", ["order", "levels", "compare"])
def test_on_cycle_has_the_same_four_choices(capsys, command):
    with pytest.raises(SystemExit):
        main([command, "--help"])
    out = " ".join(capsys.readouterr().out.split())
    assert "--on-cycle {raise,partial,condense,cut}" in out


def test_levels_on_cycle_choices_against_networkx(tmp_path, capsys):
    import networkx as nx

    path = _cyclic_file(tmp_path)
    g = nx.DiGraph([("x", "a"), ("a", "b"), ("b", "a"), ("b", "y")])
    # condense: the level of a node's strongly connected component in the condensation
    c = nx.condensation(g)
    component_level = {k: i for i, gen in enumerate(nx.topological_generations(c)) for k in gen}
    expected = {v: component_level[c.graph["mapping"][v]] for v in g}
    status, out, err = _run(capsys, "levels", path, "--on-cycle", "condense")
    assert status == 0, err
    assert {r["node"]: int(r["level"]) for r in csv.DictReader(out.splitlines())} == expected
    # partial: only x, whose level is 0
    status, out, err = _run(capsys, "levels", path, "--on-cycle", "partial")
    assert status == 0 and out.splitlines()[1:] == ["x,0"], err
    assert "levels of 1 of 4 nodes" in err
    # cut: levels of the graph left after the cut, which networkx confirms is a DAG
    status, out, err = _run(capsys, "levels", path, "--on-cycle", "cut")
    assert status == 0, err
    cut = toporank.cut_cycles([("x", "a"), ("a", "b"), ("b", "a"), ("b", "y")])
    removed = set(zip(cut.sources.tolist(), cut.targets.tolist(), strict=True))
    left = nx.DiGraph([e for e in g.edges if e not in removed])
    left.add_nodes_from(g)
    assert nx.is_directed_acyclic_graph(left)
    expected = {v: k for k, gen in enumerate(nx.topological_generations(left)) for v in gen}
    assert {r["node"]: int(r["level"]) for r in csv.DictReader(out.splitlines())} == expected


def test_compare_writes_csv_and_json_and_takes_partial(tmp_path, capsys):
    import json

    path = _cyclic_file(tmp_path)
    status, _, err = _run(
        capsys, "compare", path, "--on-cycle", "partial", "-o", tmp_path / "c.json"
    )
    assert status == 0, err
    rows = json.loads((tmp_path / "c.json").read_text())
    # only x is not on or behind the cycle: a one-node graph, every ready peak is 1
    assert [r["ready_peak"] for r in rows] == [1] * len(rows)
    status, _, err = _run(
        capsys, "compare", path, "--on-cycle", "condense", "-o", tmp_path / "c.csv"
    )
    assert status == 0, err
    header = (tmp_path / "c.csv").read_text().splitlines()[0]
    assert header.startswith("tie,")


def test_demo_takes_o_like_every_other_subcommand(tmp_path):
    result = subprocess.run(
        [sys.executable, "-m", "toporank", "demo", "-o", str(tmp_path / "d"), "-q"],
        capture_output=True,
        text=True,
        timeout=300,
        cwd=tmp_path,
    )
    assert result.returncode == 0, result.stderr
    assert (tmp_path / "d" / "monorepo-build-order.txt").exists()
    assert sorted(os.listdir(tmp_path)) == ["d"]


def test_subcommand_usage_errors_show_that_subcommand(capsys):
    with pytest.raises(SystemExit) as stop:
        main(["levels"])
    assert stop.value.code == 2
    assert "usage: toporank levels" in capsys.readouterr().err


# 8. outputs ---------------------------------------------------------------------


def test_levels_lines_name_the_nodes(tmp_path, capsys):
    path = _write(tmp_path / "e.tsv", "a\tb\nb\tc\n")
    status, out, err = _run(capsys, "levels", path, "--output-format", "lines")
    assert status == 0, err
    assert out.splitlines() == ["a 0", "b 1", "c 2"]


def test_plot_must_be_a_png(tmp_path, capsys):
    path = _write(tmp_path / "e.tsv", "a\tb\n")
    status, out, err = _run(capsys, "compare", path, "--plot", tmp_path / "p.txt")
    assert status == 2 and out == ""
    _one_line_error(err, "name it *.png")
    assert not (tmp_path / "p.txt").exists()


def test_order_files_empty_or_with_a_header(tmp_path, capsys):
    graph = _write(tmp_path / "e.tsv", "a\tb\nb\tc\n")
    empty = _write(tmp_path / "empty.txt", "")
    status, _, err = _run(capsys, "verify", graph, empty)
    assert status == 2
    _one_line_error(err, "holds no entries")
    assert "edges" not in err
    # a CSV whose header is not called node: the header is not taken as a node
    named = _write(tmp_path / "o.csv", "module,position\na,0\nb,1\nc,2\n")
    status, out, err = _run(capsys, "verify", graph, named)
    assert status == 0 and out.startswith("ok:"), err


def test_extra_columns_and_ragged_rows_are_noted(tmp_path, capsys):
    weighted = _write(tmp_path / "w.tsv", "a\tb\t0.5\nb\tc\t0.7\n")
    status, out, err = _run(capsys, "order", weighted)
    assert status == 0 and out.split() == ["a", "b", "c"]
    assert f"{weighted}: 3 columns; reading columns 0 and 1, the others are ignored" in err
    ragged = _write(tmp_path / "r.tsv", "0\t1\n1\t2\t7\n2\t3\n")
    status, out, err = _run(capsys, "order", ragged)
    assert status == 0 and out.split() == ["0", "1", "2", "3"]
    assert f"{ragged}:2: 1 line(s) have a different number of fields than line 1" in err


# 9. np.savez archives -------------------------------------------------------------


def test_savez_edge_arrays_are_read(tmp_path, capsys):
    import networkx as nx

    src, dst = np.array([0, 0, 1, 2]), np.array([1, 2, 3, 3])
    np.savez(tmp_path / "g.npz", src=src, dst=dst, n=np.int64(5))
    g = toporank.read_graph(tmp_path / "g.npz")
    assert (g.n, g.m) == (5, 4)
    status, out, err = _run(capsys, "order", tmp_path / "g.npz")
    assert status == 0, err
    emitted = [int(x) for x in out.split()]
    reference = nx.DiGraph(list(zip(src.tolist(), dst.tolist(), strict=True)))
    reference.add_node(4)
    # networkx: every edge goes forward in the order, and every node appears once
    assert sorted(emitted) == sorted(reference.nodes)
    position = {v: k for k, v in enumerate(emitted)}
    assert all(position[u] < position[v] for u, v in reference.edges)
    np.savez(tmp_path / "l.npz", src=src, dst=dst, labels=np.array(["a", "b", "c", "d"]))
    g = toporank.read_graph(tmp_path / "l.npz")
    assert toporank.order(g).tolist()[0] == "a"


# 10. --plot without matplotlib checks first ---------------------------------------


def test_plot_without_matplotlib_stops_before_any_work(tmp_path, capsys, monkeypatch):
    monkeypatch.setitem(sys.modules, "matplotlib", None)
    path = _write(tmp_path / "e.tsv", "a\tb\n")
    status, out, err = _run(capsys, "compare", path, "--plot", tmp_path / "p.png")
    assert status == 2 and out == ""  # no table printed before the failure
    _one_line_error(err, "--plot needs matplotlib")


# 11. Graph's repr ------------------------------------------------------------------


def test_graph_repr_is_short():
    g = toporank.Graph.from_edges(np.arange(5000), np.arange(1, 5001))
    assert repr(g) == f"Graph(n=5001, m=5000, ids, {g.indices.dtype})"
    assert len(repr(g)) < 60  # not thousands of lines of arrays
    labelled = toporank.Graph.from_pairs([("a", "b")])
    assert repr(labelled) == f"Graph(n=2, m=1, labelled, {labelled.indices.dtype})"


# 12. exit codes as documented ----------------------------------------------------


def test_cycles_exit_status_and_cut_on_a_dag(tmp_path, capsys):
    dag = _write(tmp_path / "dag.tsv", "a\tb\nb\tc\n")
    status, out, _ = _run(capsys, "cycles", dag, "--cut")
    assert status == 0
    assert not out.rstrip().endswith(":")
    assert "no edges to cut" in out
    cyclic = _write(tmp_path / "c.tsv", "a\tb\nb\ta\n")
    status, out, _ = _run(capsys, "cycles", cyclic)
    assert status == 1 and ("a -> b -> a" in out or "b -> a -> b" in out)


@pytest.mark.parametrize(
    ("argv", "expected"),
    [
        (["order", "{dag}"], 0),
        (["order", "{cyclic}"], 1),
        (["order", "{missing}"], 2),
        (["levels", "{dag}"], 0),
        (["levels", "{cyclic}"], 1),
        (["levels", "{missing}"], 2),
        (["cycles", "{dag}"], 0),
        (["cycles", "{cyclic}"], 1),
        (["cycles", "{missing}"], 2),
        (["verify", "{dag}", "{good}"], 0),
        (["verify", "{dag}", "{bad}"], 1),
        (["verify", "{dag}", "{missing}"], 2),
        (["compare", "{dag}"], 0),
        (["compare", "{cyclic}"], 1),
        (["compare", "{missing}"], 2),
    ],
)
def test_exit_statuses_as_documented(tmp_path, capsys, argv, expected):
    # the documented statuses (the --help epilog): 0 ok, 1 cycle or invalid order, 2 bad input
    files = {
        "dag": _write(tmp_path / "dag.tsv", "a\tb\nb\tc\n"),
        "cyclic": _write(tmp_path / "cyclic.tsv", "a\tb\nb\ta\n"),
        "good": _write(tmp_path / "good.txt", "a\nb\nc\n"),
        "bad": _write(tmp_path / "bad.txt", "b\na\nc\n"),
        "missing": str(tmp_path / "missing.tsv"),
    }
    status, _, err = _run(capsys, *[a.format(**files) for a in argv])
    assert status == expected, err
    assert "Traceback" not in err


# 14. the README's commands write into the demo folder: see test_readme.py

# gzip input with a header still reads (header detection runs on the decompressed text)


def test_gzip_input_with_header(tmp_path):
    path = tmp_path / "e.tsv.gz"
    with gzip.open(path, "wt") as f:
        f.write("source\ttarget\n0\t1\n1\t2\n")
    g = toporank.read_graph(path)
    assert (g.n, g.m) == (3, 2)


# 15. the plot ----------------------------------------------------------------------


def _drawn(monkeypatch):
    pytest.importorskip("matplotlib")
    from matplotlib.figure import Figure

    figures = []
    original = Figure.savefig

    def keep(self, *args, **kwargs):
        figures.append(self)
        return original(self, *args, **kwargs)

    monkeypatch.setattr(Figure, "savefig", keep)
    return figures


def test_plot_axes_are_labelled_and_name_the_input(tmp_path, capsys, monkeypatch):
    figures = _drawn(monkeypatch)
    # an invented wide fan: the policies' peaks differ, so bars and limits can be checked
    pairs = [(0, k) for k in range(1, 40)] + [(k, k + 40) for k in range(1, 40)]
    path = _write(tmp_path / "fan.tsv", "".join(f"{u}\t{v}\n" for u, v in pairs))
    status, _, err = _run(
        capsys, "compare", path, "--plot", tmp_path / "p.png", "--plot-scale", "log"
    )
    assert status == 0, err
    (figure,) = figures
    axes = [ax for ax in figure.get_axes() if ax.get_visible()]
    curves, bars = axes[0], axes[1:]
    assert "fan.tsv" in curves.get_title()
    assert curves.get_yscale() == "log"
    assert "per bin" not in curves.get_ylabel() and curves.get_ylabel()
    assert len(bars) == 3  # no --workers: no empty fourth panel
    for ax in bars:
        assert ax.get_ylabel(), ax.get_title()  # every panel says what its bars count
        heights = [p.get_height() for p in ax.patches]
        bottom, top = ax.get_ylim()
        if max(heights) > min(heights):
            # the spread between bars fills at least half the panel: small differences show
            assert (max(heights) - min(heights)) / (top - bottom) >= 0.5, ax.get_title()
