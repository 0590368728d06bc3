"""``toporank mainpath``: exit statuses and outputs, checked against networkx
(the heaviest source-to-sink path by brute-force enumeration)."""

from __future__ import annotations

import csv
import io
import json

import networkx as nx
import pytest

import toporank
from toporank.cli import main

# An invented journal: two papers of one issue cite each other (C <-> D).
PAPERS = [("A", "B"), ("A", "C"), ("B", "D"), ("C", "D"), ("D", "C"), ("C", "E"), ("D", "F")]
DAG = [p for p in PAPERS if p != ("D", "C")]


def _tsv(path, pairs):
    path.write_text("".join(f"{u}\t{v}\n" for u, v in pairs))
    return str(path)


def _run(capsys, *argv):
    status = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return status, out, err


def test_csv_output_is_the_heaviest_path(tmp_path, capsys):
    status, out, _ = _run(capsys, "mainpath", _tsv(tmp_path / "g.tsv", DAG))
    assert status == 0
    rows = list(csv.DictReader(io.StringIO(out)))
    spc = toporank.path_counts(DAG)
    weight = dict(zip(DAG, spc.through_edge.tolist(), strict=True))
    g = nx.MultiDiGraph(DAG)
    sinks = [v for v in g if g.out_degree(v) == 0]
    best = max(
        sum(weight[(u, v)] for u, v, _ in p) for p in nx.all_simple_edge_paths(g, "A", sinks)
    )
    assert sum(float(r["weight"]) for r in rows) == best  # networkx enumeration
    assert rows[0]["source"] == "A"
    assert all(DAG[int(r["edge_index"])] == (r["source"], r["target"]) for r in rows)


def test_cycle_exits_1_without_output_and_preprint_writes_json_and_png(tmp_path, capsys):
    path = _tsv(tmp_path / "g.tsv", PAPERS)
    target = tmp_path / "mp.json"
    status, _, err = _run(capsys, "mainpath", path, "-o", target)
    assert status == 1 and "cycle" in err and not target.exists()
    options = ["--on-cycle", "preprint", "--method", "key-route", "--routes", "2", "-q"]
    args = ["mainpath", path, "-o", target, *options]
    if pytest.importorskip("matplotlib"):
        args += ["--plot", tmp_path / "mp.png"]
    status, _, err = _run(capsys, *args)
    assert status == 0 and err == ""
    found = json.loads(target.read_text())
    assert found["method"] == "key-route" and not found["single_path"]
    assert {(e["source"], e["target"]) for e in found["edges"]} <= set(PAPERS)
    assert (tmp_path / "mp.png").stat().st_size > 1000


@pytest.mark.parametrize(
    "extra",
    [
        ["--routes", "2"],
        ["--method", "global", "--extend", "global"],
        ["--plot", "x.jpg"],
        ["--plot-key", "k.tsv"],
        ["--weight", "hits"],
        ["--on-cycle", "partial"],
        ["--method", "key-route", "--routes", "0"],  # was taken as 1
        ["--method", "key-route", "--routes", "99999999999999999999"],  # was an OverflowError
    ],
)
def test_usage_errors_exit_2(tmp_path, capsys, extra):
    path = _tsv(tmp_path / "g.tsv", DAG)
    try:
        status = main(["mainpath", path, *extra])
    except SystemExit as stop:  # argparse's own usage errors
        status = stop.code
    assert status == 2
    assert capsys.readouterr().out == ""
