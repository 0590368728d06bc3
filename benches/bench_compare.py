"""Cost of measuring and scheduling an order, as ratios to FIFO ``order`` on the same graph.

Targets (issue 5), on the ~10M-edge citation-like DAG (1M nodes, 10
citations each): ``order_metrics`` at most 2x and ``schedule`` on 8 workers
at most 4x the FIFO ``order`` time; ``compare`` on a ~1M-edge graph within a
few seconds. Each ratio is measured side by side in one run, candidate and
baseline timed in turn so machine load affects both alike. Rows go to the
shared ratio table when the bench conftest provides one, else to a table
printed by the last test (run with ``-s``); pytest-benchmark also keeps each
ratio in ``extra_info``.

``TOPORANK_BENCH_SMALL=1`` shrinks the graphs for a smoke test.
"""

from __future__ import annotations

import os
import statistics
import time

import numpy as np
import pytest

import toporank
from toporank._synthetic import citation_dag

SMALL = os.environ.get("TOPORANK_BENCH_SMALL", "") not in ("", "0")
# (nodes, citations per paper): 1M x 10 is just under 10M edges.
BIG = (2_000, 5) if SMALL else (1_000_000, 10)
MEDIUM = (1_000, 5) if SMALL else (100_000, 10)
RUNS = 1 if SMALL else 3

_ROWS: list[tuple[str, float, str]] = []


def _interleaved(candidate, baseline, runs=RUNS):
    """Median seconds of ``candidate`` and ``baseline``, timed in turn."""
    times: tuple[list[float], list[float]] = ([], [])
    for _ in range(runs):
        for fn, into in ((candidate, times[0]), (baseline, times[1])):
            begin = time.perf_counter()
            fn()
            into.append(time.perf_counter() - begin)
    return statistics.median(times[0]), statistics.median(times[1])


@pytest.fixture
def record(request):
    """The shared ``ratio_table`` recorder if the bench conftest has one, else a local one."""
    try:
        return request.getfixturevalue("ratio_table")
    except pytest.FixtureLookupError:

        def local(what, value, target=""):
            _ROWS.append((what, value, target))
            return value

        return local


@pytest.fixture(scope="module")
def big():
    src, dst, year = citation_dag(*BIG, seed=1)
    return toporank.as_graph((src, dst)), year


def _report(benchmark, record, name, fn, graph, limit):
    seconds, fifo = _interleaved(fn, lambda: toporank.order(graph))
    ratio = seconds / fifo
    target = f"target <= {limit:g}" if limit else ""
    record(f"{name} / order(queue)", ratio, target)
    record(f"{name} seconds", seconds, f"n={graph.n}, m={graph.m}")
    benchmark.extra_info.update(seconds=seconds, fifo_seconds=fifo, ratio=ratio)
    benchmark.pedantic(fn, rounds=RUNS, iterations=1)


def test_order_metrics_vs_fifo(benchmark, record, big):
    graph, _ = big
    order = toporank.order(graph).astype(np.int64)
    _report(
        benchmark, record, "order_metrics", lambda: toporank.order_metrics(graph, order), graph, 2.0
    )


def test_order_metrics_with_key_vs_fifo(benchmark, record, big):
    graph, year = big
    order = toporank.order(graph).astype(np.int64)
    _report(
        benchmark,
        record,
        "order_metrics(key=year)",
        lambda: toporank.order_metrics(graph, order, key=year),
        graph,
        None,
    )


@pytest.mark.parametrize("tie", ["queue", "critical"])
def test_schedule_8_workers_vs_fifo(benchmark, record, big, tie):
    graph, _ = big
    limit = 4.0 if tie == "queue" else None
    _report(
        benchmark,
        record,
        f"schedule(workers=8, tie={tie!r})",
        lambda: toporank.schedule(graph, workers=8, tie=tie),
        graph,
        limit,
    )


def test_compare_on_a_million_edges(benchmark, record):
    src, dst, year = citation_dag(*MEDIUM, seed=2)
    graph = toporank.as_graph((src, dst))
    _report(
        benchmark,
        record,
        "compare(5 ties, key, workers=8)",
        lambda: toporank.compare(graph, key=year, workers=8, repeat=3),
        graph,
        None,
    )


def test_print_local_table(capsys):
    if not _ROWS:
        return
    with capsys.disabled():
        print(f"\nbench_compare on citation_dag{BIG} (compare: {MEDIUM}), median of {RUNS}")
        if SMALL:
            print("smoke run on tiny graphs: ratios below are not meaningful")
        width = max(len(row[0]) for row in _ROWS)
        for what, value, target in _ROWS:
            print(f"{what:<{width}}  {value:10.4g}   {target}")
