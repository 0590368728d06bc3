"""The command's use of functions from other modules, with networkx stand-ins.

``toporank cycles``, ``levels``, ``compare`` and ``--on-cycle condense|cut``
call ``toporank.components``, ``cycle_witness``, ``cut_cycles``, ``levels``,
``compare`` and ``condense`` when the package has them. These tests put
networkx-backed stand-ins with the documented signatures in their place
(only where the package lacks the real one) and check the command's
reports against networkx directly.
"""

from __future__ import annotations

import json
import os
from types import SimpleNamespace

import networkx as nx
import numpy as np
import pytest

import toporank
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


def _nx(graph):
    g = toporank.as_graph(graph)
    d = nx.DiGraph()
    d.add_nodes_from(range(g.n))
    rows = np.repeat(np.arange(g.n), np.diff(g.indptr))
    d.add_edges_from(zip(rows.tolist(), g.indices.tolist(), strict=True))
    return d


def _components(graph):
    d = _nx(graph)
    c = nx.condensation(d)
    number = {scc: k for k, scc in enumerate(nx.topological_sort(c))}
    return np.array([number[c.graph["mapping"][v]] for v in range(d.number_of_nodes())])


def _cycle_witness(graph, through=None):
    d = _nx(graph)
    component = next(s for s in nx.strongly_connected_components(d) if through in s)
    edges = nx.find_cycle(d.subgraph(component), source=through)
    return np.array([u for u, _ in edges])


def _cut_cycles(graph):
    d = _nx(graph)
    # edges going backwards in reversed DFS postorder (self-loops included): every
    # remaining edge goes forward in one linear order, so removing them leaves a DAG
    rank = {v: k for k, v in enumerate(reversed(list(nx.dfs_postorder_nodes(d))))}
    back = [(u, v) for u, v in d.edges if rank[u] >= rank[v]]
    return SimpleNamespace(
        source=np.array([e[0] for e in back], dtype=np.int64),
        target=np.array([e[1] for e in back], dtype=np.int64),
    )


@pytest.fixture
def stand_ins(monkeypatch):
    for name, function in [
        ("components", _components),
        ("cycle_witness", _cycle_witness),
        ("cut_cycles", _cut_cycles),
    ]:
        if not hasattr(toporank, name):
            monkeypatch.setattr(toporank, name, function, raising=False)


def _tsv(path, pairs):
    path.write_text("".join(f"{u}\t{v}\n" for u, v in pairs))
    return str(path)


def test_cycles_report_matches_networkx(tmp_path, capsys, stand_ins):
    path = _tsv(tmp_path / "deps.tsv", PAIRS)
    status = main(["cycles", path, "--json", str(tmp_path / "report.json")])
    out, err = capsys.readouterr()
    assert status == 0, err
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


def test_cut_edges_leave_a_dag(tmp_path, capsys, stand_ins):
    path = _tsv(tmp_path / "deps.tsv", PAIRS)
    status = main(["cycles", path, "--cut", "-o", str(tmp_path / "cut.csv")])
    _, err = capsys.readouterr()
    assert status == 0, err
    lines = (tmp_path / "cut.csv").read_text().splitlines()
    assert lines[0].startswith("source,target")
    cut = {tuple(line.split(",")[:2]) for line in lines[1:]}
    assert nx.is_directed_acyclic_graph(nx.DiGraph([e for e in PAIRS if e not in cut]))


def test_levels_column_uses_the_level_function(tmp_path, capsys, monkeypatch):
    def longest_path_levels(graph):
        d = _nx(graph)
        level = dict.fromkeys(d, 0)
        for v in nx.topological_sort(d):
            for w in d.successors(v):
                level[w] = max(level[w], level[v] + 1)
        return np.array([level[v] for v in range(d.number_of_nodes())])

    if not hasattr(toporank, "levels"):
        monkeypatch.setattr(toporank, "levels", longest_path_levels, raising=False)
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


def test_compare_prints_the_table_and_writes_the_plot_whole(tmp_path, capsys, monkeypatch):
    calls = []

    class Comparison:
        def __str__(self):
            return "policy  ready peak\nqueue   2"

        def plot(self, path):
            calls.append(path)
            with open(path, "w") as f:
                f.write("png")

    def compare(graph, ties=("queue",), *, key=None, descending=False, workers=None):
        calls.append((toporank.as_graph(graph).m, tuple(ties), workers))
        return Comparison()

    if hasattr(toporank, "compare"):
        pytest.skip("the real toporank.compare is tested with it")
    monkeypatch.setattr(toporank, "compare", compare, raising=False)
    path = _tsv(tmp_path / "e.tsv", [(0, 1), (0, 2)])
    plot = tmp_path / "cmp.png"
    status = main(["compare", path, "--ties", "queue,stack", "--workers", "2", "--plot", str(plot)])
    out, err = capsys.readouterr()
    assert status == 0, err
    assert out.startswith("policy  ready peak")
    assert calls[0] == (2, ("queue", "stack"), 2)
    assert plot.read_text() == "png" and calls[1] != str(plot)  # drawn elsewhere, then renamed
    assert sorted(os.listdir(tmp_path)) == ["cmp.png", "e.tsv"]
