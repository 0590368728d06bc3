"""The command's cycle and level reports, checked against networkx directly."""

from __future__ import annotations

import json

import networkx as nx

from toporank.cli import main

# invented modules: one 3-cycle (db, orm, cache), one self-loop (api), one 2-cycle (ui, web)
PAIRS = [
    ("log", "config"),
    ("config", "db"),
    ("db", "orm"),
    ("orm", "cache"),
    ("cache", "db"),
    ("orm", "api"),
    ("api", "api"),
    ("api", "ui"),
    ("ui", "web"),
    ("web", "ui"),
    ("log", "cli"),
]


def _tsv(path, pairs):
    path.write_text("".join(f"{u}\t{v}\n" for u, v in pairs))
    return str(path)


def test_cycles_report_matches_networkx(tmp_path, capsys):
    path = _tsv(tmp_path / "deps.tsv", PAIRS)
    status = main(["cycles", path, "--json", str(tmp_path / "report.json")])
    out, err = capsys.readouterr()
    assert status == 1, err  # 1: cycles found
    report = json.loads((tmp_path / "report.json").read_text())
    d = nx.DiGraph(PAIRS)
    cyclic = [s for s in nx.strongly_connected_components(d) if len(s) > 1 or d.has_edge(*[*s] * 2)]
    assert report["cyclic_components"] == len(cyclic) == 3
    assert report["component_sizes"] == sorted((len(s) for s in cyclic), reverse=True)
    for item in report["components"]:
        cycle = item["cycle"]
        # each witness is a closed walk on the graph's edges, inside one component (networkx)
        assert all(d.has_edge(u, v) for u, v in zip(cycle, cycle[1:] + cycle[:1], strict=True))
        assert any(set(cycle) <= s for s in cyclic)
    assert "db" in out and "ui" in out and "api -> api" in out


def test_cut_edges_leave_a_dag(tmp_path, capsys):
    path = _tsv(tmp_path / "deps.tsv", PAIRS)
    status = main(["cycles", path, "--cut", "-o", str(tmp_path / "cut.csv")])
    _, err = capsys.readouterr()
    assert status == 1, err  # 1: cycles found
    lines = (tmp_path / "cut.csv").read_text().splitlines()
    assert lines[0].startswith("source,target")
    cut = {tuple(line.split(",")[:2]) for line in lines[1:]}
    assert nx.is_directed_acyclic_graph(nx.DiGraph([e for e in PAIRS if e not in cut]))


def test_levels_column_is_the_longest_path_to_each_node(tmp_path, capsys):
    dag = [
        (u, v) for u, v in PAIRS if (u, v) not in {("cache", "db"), ("api", "api"), ("web", "ui")}
    ]
    path = _tsv(tmp_path / "dag.tsv", dag)
    status = main(["order", path, "-o", str(tmp_path / "order.csv")])
    _, err = capsys.readouterr()
    assert status == 0, err
    rows = [line.split(",") for line in (tmp_path / "order.csv").read_text().splitlines()]
    assert rows[0] == ["node", "position", "level"]
    d = nx.DiGraph(dag)
    for node, _, level in rows[1:]:
        # level = number of edges on the longest path ending at the node (networkx)
        longest = max(
            (len(p) - 1 for a in nx.ancestors(d, node) for p in nx.all_simple_paths(d, a, node)),
            default=0,
        )
        assert int(level) == longest
