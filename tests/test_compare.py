"""compare: agrees with the separate calls, renders a table, CSV, JSON and a valid PNG."""

from __future__ import annotations

import csv
import io
import json
import math
import sys
import time

import numpy as np
import pytest

import toporank
from toporank._synthetic import citation_dag


@pytest.fixture(scope="module")
def papers():
    src, dst, year = citation_dag(3000, 4, seed=1)
    return (src, dst), year


@pytest.fixture(scope="module")
def comparison(papers):
    graph, year = papers
    return toporank.compare(graph, key=year, workers=4, repeat=2)


def test_every_policy_matches_the_separate_calls(papers, comparison):
    graph, year = papers
    assert comparison.ties == toporank.SCHEDULE_TIES
    for tie in toporank.TIES:
        kwargs = {"seed": 0} if tie == "random" else {}
        if tie == "priority":
            kwargs = {"key": year}
        order = toporank.order(graph, tie=tie, **kwargs)
        np.testing.assert_array_equal(comparison.orders[tie], order)
        assert dict(comparison.metrics[tie]) == pytest.approx(
            dict(toporank.order_metrics(graph, order, key=year)), nan_ok=True
        )
        s = toporank.schedule(graph, workers=4, tie=tie, **kwargs)
        assert comparison.schedules[tie].makespan == s.makespan
    critical = toporank.schedule(graph, workers=1, tie="critical")
    np.testing.assert_array_equal(comparison.orders["critical"], critical.order)
    assert (
        comparison.schedules["critical"].makespan
        == toporank.schedule(graph, workers=4, tie="critical").makespan
    )
    # Common practice: ordering by a key that never decreases along an edge
    # (publication year along citations) agrees with it on every decided pair.
    assert comparison.metrics["priority"]["key_pair_agreement"] == 1.0
    assert comparison.best("key_pair_agreement") == "priority"
    assert comparison.best("ready_peak") == min(
        comparison.ties, key=lambda t: comparison.metrics[t]["ready_peak"]
    )


def test_table_names_every_policy_and_marks_the_best(comparison):
    text = str(comparison)
    lines = text.splitlines()
    for tie in comparison.ties:
        assert any(line.startswith(tie) for line in lines), tie
    assert "ready peak" in lines[0] and "makespan" in lines[0] and "key pairs" in lines[0]
    best = comparison.best("live_peak")
    column = lines[0].index("live peak") + len("live peak")
    row = next(line for line in lines if line.startswith(best))
    assert row[column - 1] == "*"


def test_records_csv_and_json_carry_the_same_numbers(comparison, tmp_path):
    records = comparison.records()
    assert [r["tie"] for r in records] == list(comparison.ties)
    rows = list(csv.DictReader(io.StringIO(comparison.to_csv(tmp_path / "c.csv"))))
    assert (tmp_path / "c.csv").read_text() == comparison.to_csv()
    parsed = json.loads(comparison.to_json(tmp_path / "c.json"))
    for record, row, item in zip(records, rows, parsed, strict=True):
        assert set(row) == set(record) == set(item)
        for name, value in record.items():
            if isinstance(value, float) and math.isnan(value):
                assert item[name] is None
            elif name != "tie":
                assert float(row[name]) == pytest.approx(value) and item[name] == value


def test_plot_writes_a_valid_png(comparison, tmp_path):
    image = pytest.importorskip("matplotlib.image")
    path = comparison.plot(tmp_path / "policies.png")
    data = path.read_bytes()
    assert len(data) > 1000 and data[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature
    pixels = image.imread(path)
    assert pixels.ndim == 3 and pixels.shape[0] > 100 and pixels.shape[1] > 100


def test_plot_without_matplotlib_names_the_extra(comparison, tmp_path, monkeypatch):
    monkeypatch.setitem(sys.modules, "matplotlib", None)
    monkeypatch.setitem(sys.modules, "matplotlib.figure", None)
    with pytest.raises(ImportError, match=r"toporank\[plot\]"):
        comparison.plot(tmp_path / "x.png")


def test_results_are_deterministic_except_timings(papers):
    graph, year = papers

    def untimed(c):
        return [{k: v for k, v in r.items() if k != "seconds"} for r in c.records()]

    first = toporank.compare(graph, key=year, workers=3, repeat=1)
    second = toporank.compare(graph, key=year, workers=3, repeat=1)
    assert untimed(first) == untimed(second)


def test_chain_and_isolated_nodes():
    # Common practice: one ready node at a time on a chain; all n at the start
    # when there are no edges.
    chain = toporank.compare((np.arange(9), np.arange(1, 10)), repeat=1)
    assert {r["ready_peak"] for r in chain.records()} == {1}
    assert len({tuple(o.tolist()) for o in chain.orders.values()}) == 1
    empty = np.zeros(0, dtype=np.int64)
    loose = toporank.compare((empty, empty), n=7, workers=2, repeat=1)
    assert {r["ready_peak"] for r in loose.records()} == {7}
    assert {r["makespan"] for r in loose.records()} == {4}


def test_bad_arguments_are_named():
    edges = np.array([[0, 1]])
    with pytest.raises(toporank.GraphInputError, match=r"tie must be one of .*, got 'lifo'"):
        toporank.compare(edges, ("queue", "lifo"))
    with pytest.raises(toporank.GraphInputError, match="'queue' more than once"):
        toporank.compare(edges, ("queue", "stack", "queue"))
    with pytest.raises(toporank.GraphInputError, match="ties is empty"):
        toporank.compare(edges, ())
    with pytest.raises(toporank.GraphInputError, match="repeat must be at least 1, got 0"):
        toporank.compare(edges, repeat=0)
    with pytest.raises(toporank.GraphInputError, match="workers = 0"):
        toporank.compare(edges, workers=0)
    with pytest.raises(toporank.GraphInputError, match="no column 'speed'"):
        toporank.compare(edges, repeat=1).best("speed")
    with pytest.raises(toporank.CyclicGraphError):
        toporank.compare(np.array([[0, 1], [1, 0]]), ("queue",))
    with pytest.raises(toporank.CyclicGraphError):
        toporank.compare(np.array([[0, 1], [1, 0]]), ("critical",))


@pytest.mark.parametrize("repeat", [2**64, 10**6, 1_001])
def test_huge_repeat_is_refused_at_once(repeat):
    # repeat=2**64 used to start timing runs that would never end; a count
    # beyond the cap is refused before any work (common practice: validate
    # arguments up front). Timed so a regression cannot hang quietly.
    edges = (np.array([0, 1]), np.array([1, 2]))
    start = time.perf_counter()
    with pytest.raises(toporank.GraphInputError, match=rf"repeat = {repeat} timed runs"):
        toporank.compare(edges, repeat=repeat)
    assert time.perf_counter() - start < 1.0
    with pytest.raises(toporank.GraphInputError, match=r"1 <= repeat <= 1000"):
        toporank.compare(edges, repeat=repeat)


def test_repeat_at_the_cap_runs():
    edges = (np.array([0, 1]), np.array([1, 2]))
    c = toporank.compare(edges, ("queue",), repeat=1000)
    assert c.repeat == 1000
    assert "median of 1000 run(s)" in str(c)
