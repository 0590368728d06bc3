"""Frontier: handing out every task of a 1M-edge DAG, against ordering it.

A 100k-node / 1M-edge citation-like DAG (``toporank._synthetic.citation_dag``)
is drained by one Python loop, building the frontier included:

* one task at a time (``take(1)`` then ``finish(task)``) against the pure
  cost of the order plus the Python call overhead of the same loop (``order``
  once, then two calls of empty Python methods per task): target <= 10;
* in batches of 1,000 (``take(1000)`` then ``finish(batch)``) against FIFO
  ``order``: target <= 3.

All runs alternate in one process (``conftest.interleaved``), so load on
the machine affects each alike.

Run: ``pytest benches/bench_frontier.py --benchmark-enable -s``;
``TOPORANK_BENCH_SMALL=1`` shrinks everything for a smoke run.
"""

from __future__ import annotations

import pytest
from conftest import interleaved, scaled

import toporank
from toporank._synthetic import citation_dag

N = scaled(100_000, 2_000)
K = 10
BATCH = 1_000


@pytest.fixture(scope="module")
def citation():
    src, dst, _ = citation_dag(N, K, seed=5)
    return toporank.Graph.from_edges(src, dst, N)


class _Empty:
    """The least an executor loop calls per task: two Python methods doing nothing."""

    def take(self, k: int) -> int:
        return k

    def finish(self, task: int) -> None:
        return None


def one_at_a_time(g: toporank.Graph) -> list[int]:
    f = toporank.Frontier(g)
    take, finish = f.take, f.finish
    seen = []
    for _ in range(g.n):
        for task in take(1):
            seen.append(task)
            finish(task)
    assert f.is_done
    return seen


def in_batches(g: toporank.Graph) -> None:
    f = toporank.Frontier(g)
    while f.remaining:
        f.finish(f.take(BATCH))


def order_and_calls(g: toporank.Graph) -> None:
    toporank.order(g)
    empty = _Empty()
    take, finish = empty.take, empty.finish
    for task in range(g.n):
        take(1)
        finish(task)


def test_frontier_against_order(citation, ratio_table, benchmark):
    g = citation
    # The loop replays the FIFO order (checked once, outside the timing).
    assert one_at_a_time(g) == toporank.order(g).tolist()
    times = interleaved(
        {
            "single": lambda: one_at_a_time(g),
            "order+calls": lambda: order_and_calls(g),
            "batches": lambda: in_batches(g),
            "order": lambda: toporank.order(g),
        },
        repeat=5,
    )
    single = times["single"] / times["order+calls"]
    batches = times["batches"] / times["order"]
    shape = f"(n={g.n}, m={g.m})"
    ratio_table("frontier: one at a time / (order + Python calls)", single, f"target <= 10 {shape}")
    ratio_table(f"frontier: batches of {BATCH} / FIFO order", batches, f"target <= 3 {shape}")
    ratio_table("frontier: seconds per task, one at a time", times["single"] / g.n)
    ratio_table("frontier: order + Python calls / order", times["order+calls"] / times["order"])
    benchmark.extra_info["single_over_order_and_calls"] = single
    benchmark.extra_info["batches_over_order"] = batches
    benchmark.pedantic(lambda: in_batches(g), rounds=1, iterations=1)
