"""DynamicOrder: single-edge insertions against recomputing the whole order.

A 100k-node / 1M-edge citation-like DAG gets 10,000 edges, one at a time,
each pointing forward in a hidden topological order (a seeded random Kahn
order of the starting graph), so every insertion keeps the graph acyclic;
the maintained order starts as the FIFO order, so some insertions go
backwards in it. Two draws of the pairs: uniform places in the hidden
order, and places near each other (within ``WINDOW``), where the two orders
disagree most often.

Ratios, measured side by side in one run (chunks of insertions alternate
with recomputes of ``toporank.order`` on a snapshot of the current graph):
* 10,000 recomputes (estimated as 10,000 x the median of the sampled
  recomputes) / 10,000 insertions: target >= 50;
* the mean affected-region size (nodes repositioned per insertion);
* one ``add_edges`` batch of the same 10,000 edges / the 10,000 single calls,
  and / one recompute (a re-sort of everything, the most a local re-sort
  of the batch's window could cost).

Run: ``pytest benches/bench_dynamic.py --benchmark-enable -s``;
``TOPORANK_BENCH_SMALL=1`` shrinks everything for a smoke run.
"""

from __future__ import annotations

import statistics
import time

import numpy as np
import pytest
from conftest import SMALL, scaled

import toporank
from toporank._synthetic import citation_dag

N = scaled(100_000, 2_000)
K = 10
INSERTIONS = scaled(10_000, 200)
CHUNKS = scaled(20, 2)
WINDOW = scaled(100, 10)


@pytest.fixture(scope="module")
def citation():
    src, dst, _ = citation_dag(N, K, seed=5)
    g = toporank.Graph.from_edges(src, dst, N)
    return g, toporank.order(g, tie="random", seed=11)


def new_edges(hidden_order: np.ndarray, draw: str) -> tuple[np.ndarray, np.ndarray]:
    """Pairs of places in the hidden order, each edge pointing forward in it.

    ``"uniform"``: both places uniform; ``"near"``: the second at most
    ``WINDOW`` places after the first, where the hidden order and the
    maintained one disagree most often.
    """
    rng = np.random.default_rng(13)
    if draw == "uniform":
        a = rng.integers(0, N, size=2 * INSERTIONS)
        b = rng.integers(0, N, size=2 * INSERTIONS)
        keep = a != b
        a, b = a[keep][:INSERTIONS], b[keep][:INSERTIONS]
        first, second = np.minimum(a, b), np.maximum(a, b)
    else:
        first = rng.integers(0, N - WINDOW, size=INSERTIONS)
        second = first + rng.integers(1, WINDOW + 1, size=INSERTIONS)
    return hidden_order[first].astype(np.int64), hidden_order[second].astype(np.int64)


@pytest.mark.parametrize("draw", ["uniform", "near"])
def test_insertions_vs_recomputes(citation, draw, ratio_table, benchmark):
    g, hidden_order = citation
    new_src, new_dst = new_edges(hidden_order, draw)
    d = toporank.DynamicOrder(g)
    insert_seconds = 0.0
    recompute_samples: list[float] = []
    per_chunk = len(new_src) // CHUNKS
    for chunk in range(CHUNKS):
        low = chunk * per_chunk
        high = len(new_src) if chunk == CHUNKS - 1 else low + per_chunk
        us, vs = new_src[low:high].tolist(), new_dst[low:high].tolist()
        add = d.add_edge
        start = time.perf_counter()
        for u, v in zip(us, vs):
            add(u, v)
        insert_seconds += time.perf_counter() - start
        current = d.graph  # snapshot not timed: the recompute's input
        start = time.perf_counter()
        toporank.order(current)
        recompute_samples.append(time.perf_counter() - start)
    count = len(new_src)
    recompute_seconds = count * statistics.median(recompute_samples)
    ratio = recompute_seconds / insert_seconds
    mean_affected = d.affected_total / count
    ratio_table(
        f"dynamic ({draw}): 10k order() recomputes / 10k add_edge",
        ratio,
        f"target >= 50 (n={g.n}, m={g.m}, {count} insertions)",
    )
    ratio_table(f"dynamic ({draw}): mean affected region (nodes)", mean_affected, "")
    ratio_table(f"dynamic ({draw}): seconds per add_edge", insert_seconds / count, "")
    # the result is a topological order of the final graph
    toporank.verify_order(d.graph, d.order)
    if not SMALL:
        assert ratio >= 50

    batch = toporank.DynamicOrder(g)
    start = time.perf_counter()
    batch.add_edges(new_src, new_dst)
    batch_seconds = time.perf_counter() - start
    ratio_table(
        f"dynamic ({draw}): one add_edges batch / single add_edge calls",
        batch_seconds / insert_seconds,
    )
    toporank.verify_order(batch.graph, batch.order)
    # A re-sort of the whole graph bounds any local re-sort from above; the
    # batch is kept as sequential Pearce-Kelly steps while it is not slower.
    ratio_table(
        f"dynamic ({draw}): one add_edges batch / one order() recompute",
        batch_seconds / statistics.median(recompute_samples),
    )
    benchmark.extra_info["recomputes_over_insertions"] = ratio
    benchmark.extra_info["mean_affected"] = mean_affected
    benchmark.pedantic(lambda: d.precedes(0, 1), rounds=3, iterations=1)


def test_batch_against_single_steps_on_a_reversed_chain(ratio_table):
    # Edges i + 1 -> i arriving in descending i: every single step drags the
    # whole chain built so far (quadratic in total); one batch re-sorts its
    # window once.
    n = scaled(5_000, 200)
    ids = np.arange(n - 1, dtype=np.int64)[::-1]
    single = toporank.DynamicOrder(n=n)
    add = single.add_edge
    start = time.perf_counter()
    for u, v in zip((ids + 1).tolist(), ids.tolist()):
        add(u, v)
    single_seconds = time.perf_counter() - start
    batch = toporank.DynamicOrder(n=n)
    start = time.perf_counter()
    batch.add_edges(ids + 1, ids)
    batch_seconds = time.perf_counter() - start
    assert batch.order.tolist() == single.order.tolist() == list(range(n))[::-1]
    ratio_table(
        "dynamic: reversed chain, single add_edge calls / one add_edges batch",
        single_seconds / batch_seconds,
        f"n={n}",
    )
