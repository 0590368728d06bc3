"""Cost of measuring and scheduling an order, as ratios to FIFO ``order`` on the same graph.

Targets (issue 5), on the ~10M-edge citation-like DAG: ``order_metrics`` at
most 2x and ``schedule`` on 8 workers at most 4x the FIFO ``order`` time;
``compare`` on a ~1M-edge graph within a few seconds. The baseline is
measured in the same run; a table is printed at the end (run with ``-s`` to
see it; pytest-benchmark also records each ratio in ``extra_info``).

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

ROWS: list[tuple[str, float, float, float, float | None]] = []


def _median_seconds(fn, runs=RUNS):
    times = []
    for _ in range(runs):
        begin = time.perf_counter()
        fn()
        times.append(time.perf_counter() - begin)
    return statistics.median(times)


@pytest.fixture(scope="module")
def big():
    src, dst, year = citation_dag(*BIG, seed=1)
    graph = toporank.as_graph((src, dst))
    fifo = _median_seconds(lambda: toporank.order(graph))
    return graph, year, fifo


def _report(benchmark, name, fn, baseline, limit):
    seconds = _median_seconds(fn)
    ratio = seconds / baseline
    benchmark.extra_info.update(
        seconds=seconds, baseline_fifo_seconds=baseline, ratio=ratio, target=limit
    )
    ROWS.append((name, seconds, baseline, ratio, limit))
    benchmark.pedantic(fn, rounds=RUNS, iterations=1)


def test_order_metrics_vs_fifo(benchmark, big):
    graph, _, fifo = big
    order = toporank.order(graph).astype(np.int64)
    _report(benchmark, "order_metrics", lambda: toporank.order_metrics(graph, order), fifo, 2.0)


def test_order_metrics_with_key_vs_fifo(benchmark, big):
    graph, year, fifo = big
    order = toporank.order(graph).astype(np.int64)
    _report(
        benchmark,
        "order_metrics + year key",
        lambda: toporank.order_metrics(graph, order, key=year),
        fifo,
        None,
    )


@pytest.mark.parametrize("tie", ["queue", "critical"])
def test_schedule_8_workers_vs_fifo(benchmark, big, tie):
    graph, _, fifo = big
    _report(
        benchmark,
        f"schedule, 8 workers, {tie}",
        lambda: toporank.schedule(graph, workers=8, tie=tie),
        fifo,
        4.0 if tie == "queue" else None,
    )


def test_compare_on_a_million_edges(benchmark):
    src, dst, year = citation_dag(*MEDIUM, seed=2)
    graph = toporank.as_graph((src, dst))
    fifo = _median_seconds(lambda: toporank.order(graph))
    _report(
        benchmark,
        f"compare, {graph.m} edges, 5 ties, key, 8 workers",
        lambda: toporank.compare(graph, key=year, workers=8, repeat=3),
        fifo,
        None,
    )


def test_print_table(capsys):
    with capsys.disabled():
        print(f"\nbench_compare on citation_dag{BIG} (medium: {MEDIUM}), median of {RUNS}")
        print(f"{'measured':48} {'seconds':>9} {'FIFO s':>9} {'ratio':>7} {'target':>7}")
        for name, seconds, baseline, ratio, limit in ROWS:
            target = "" if limit is None else f"<= {limit:g}"
            print(f"{name:48} {seconds:9.3f} {baseline:9.3f} {ratio:7.2f} {target:>7}")
