"""The compiled core releases the GIL while it computes."""

from __future__ import annotations

import numpy as np
import pytest

import toporank
from graphs import ticks_inside
from toporank import _core
from toporank._synthetic import citation_dag


def test_other_python_threads_run_during_a_core_call():
    n = 300_000
    src, dst, _ = citation_dag(n, 10, seed=3)
    g = toporank.Graph.from_edges(src, dst, n)
    inside = ticks_inside(lambda: _core.kahn_order(g.indptr, g.indices, "queue"), repeat=5)
    assert inside > 100, inside


def test_order_is_the_same_for_every_thread_count():
    n = 300_000  # 3M edges: enough for the in-degree pass to be shared
    src, dst, year = citation_dag(n, 10, seed=4)
    g = toporank.Graph.from_edges(src, dst, n)
    for tie, extra in [("queue", {}), ("priority", {"key": year}), ("random", {"seed": 3})]:
        one = toporank.order(g, tie=tie, threads=1, **extra)
        for threads in (2, 3):
            assert np.array_equal(toporank.order(g, tie=tie, threads=threads, **extra), one)


def test_bad_thread_counts_are_named(monkeypatch):
    edges = np.array([[0, 1]])
    with pytest.raises(toporank.GraphInputError, match="got 0"):
        toporank.order(edges, threads=0)
    monkeypatch.setenv("TOPORANK_NUM_THREADS", "many")
    with pytest.raises(toporank.GraphInputError, match="'many'"):
        toporank.order(edges)


def test_thread_defaults_are_one_rule_for_every_sweep(monkeypatch):
    # The sweeps share one default (serial unless TOPORANK_NUM_THREADS is set);
    # counts beyond the usable cores (os.sched_getaffinity) are capped.
    from toporank import _validate

    monkeypatch.delenv("TOPORANK_NUM_THREADS", raising=False)
    assert _validate.sweep_threads(None) == 1
    cores = _validate.usable_cores()
    assert _validate.thread_count(None) == cores
    assert _validate.thread_count(10**6) == cores
    monkeypatch.setenv("TOPORANK_NUM_THREADS", "2")
    assert _validate.sweep_threads(None) == min(2, cores)
    monkeypatch.setenv("TOPORANK_NUM_THREADS", str(2**70))
    assert _validate.sweep_threads(None) == cores
