"""schedule: Graham's published anomaly, feasibility, Graham's bound, networkx longest paths."""

from __future__ import annotations

import networkx as nx
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import toporank
from graphs import edge_lists, ticks_inside


def check_feasible(src, dst, durations, s):
    """Precedences hold and no worker runs two tasks at once (plain numpy)."""
    assert np.all(s.start[dst] >= s.finish[src]), "a task starts before a predecessor ends"
    np.testing.assert_array_equal(s.finish, s.start + durations)
    assert np.all((0 <= s.worker) & (s.worker < s.workers))
    for w in np.unique(s.worker):
        mine = np.flatnonzero(s.worker == w)
        # Sorting by (start, finish) puts zero-length tasks before the task
        # that starts at the same instant on the same worker.
        mine = mine[np.lexsort((s.finish[mine], s.start[mine]))]
        assert np.all(s.start[mine[1:]] >= s.finish[mine[:-1]]), f"worker {w} overlaps"


def networkx_critical_path(src, dst, n, durations):
    """Longest duration-weighted path, via networkx on a graph with a super-source."""
    g = nx.DiGraph()
    g.add_nodes_from(range(n + 1))
    for v in range(n):
        g.add_edge(n, v, weight=durations[v])
    for u, v in zip(src.tolist(), dst.tolist(), strict=True):
        g.add_edge(u, v, weight=durations[v])
    return nx.dag_longest_path_length(g, weight="weight") if n else 0


# Graham, "Bounds on multiprocessing timing anomalies", SIAM J. Appl. Math.
# 17(2), 1969 (values from memory): tasks T1..T9 with durations 3, 2, 2, 2,
# 4, 4, 4, 4, 9; T1 precedes T9 and T4 precedes T5, T6, T7, T8; priority list
# (T1, ..., T9); 3 processors.
GRAHAM_SRC = np.array([0, 3, 3, 3, 3])
GRAHAM_DST = np.array([8, 4, 5, 6, 7])
GRAHAM_DURATIONS = np.array([3, 2, 2, 2, 4, 4, 4, 4, 9])
GRAHAM_LIST = np.arange(9)  # key = position in the list


def graham(src=GRAHAM_SRC, dst=GRAHAM_DST, durations=GRAHAM_DURATIONS, workers=3):
    return toporank.schedule(
        (src, dst), workers=workers, tie="priority", key=GRAHAM_LIST, duration=durations, n=9
    )


def test_graham_anomaly():
    base = graham()
    assert base.makespan == 12
    check_feasible(GRAHAM_SRC, GRAHAM_DST, GRAHAM_DURATIONS, base)
    assert graham(durations=GRAHAM_DURATIONS - 1).makespan == 13  # every task 1 shorter
    assert graham(workers=4).makespan == 15  # one more processor
    # Dropping the precedences T4 -> T5 and T4 -> T6.
    assert graham(src=np.array([0, 3, 3]), dst=np.array([8, 6, 7])).makespan == 16
    assert base.critical_path == 12 and base.total_work == 34
    assert base.lower_bound == 12 and base.ratio == 1.0


@settings(max_examples=60)
@given(
    edge_lists(max_nodes=12, max_edges=30, acyclic=True),
    st.integers(1, 4),
    st.sampled_from(toporank.SCHEDULE_TIES),
    st.sampled_from(["unit", "int", "float"]),
    st.integers(0, 2**32),
)
def test_schedules_are_feasible_and_within_grahams_bound(graph, workers, tie, kind, seed):
    src, dst, n = graph
    rng = np.random.default_rng(seed)
    durations = {
        "unit": np.ones(n, dtype=np.int64),
        "int": rng.integers(0, 6, size=n),
        "float": rng.integers(0, 12, size=n) * 0.25,  # exact in binary
    }[kind]
    kwargs = {"seed": seed} if tie == "random" else {}
    s = toporank.schedule((src, dst), workers=workers, tie=tie, duration=durations, n=n, **kwargs)
    check_feasible(src, dst, durations, s)
    assert s.total_work == durations.sum()
    assert s.critical_path == networkx_critical_path(src, dst, n, durations)
    assert s.makespan == (s.finish.max() if n else 0)
    assert s.lower_bound <= s.makespan
    # Graham's bound, multiplied out: p * makespan <= total + (p - 1) * critical path.
    assert workers * s.makespan <= s.total_work + (workers - 1) * s.critical_path
    assert s.makespan <= (2 - 1 / workers) * s.lower_bound + 1e-9
    toporank.verify_order((src, dst), s.order, n=n)


@settings(max_examples=40)
@given(edge_lists(max_nodes=12, max_edges=30, acyclic=True), st.integers(0, 2**32))
def test_one_worker_replays_order_and_many_workers_reach_the_critical_path(graph, seed):
    src, dst, n = graph
    for tie in toporank.TIES:
        kwargs = {"seed": seed} if tie == "random" else {}
        s = toporank.schedule((src, dst), workers=1, tie=tie, n=n, **kwargs)
        np.testing.assert_array_equal(s.order, toporank.order((src, dst), tie=tie, n=n, **kwargs))
        assert s.makespan == n
    # Common practice: with a worker per task, a greedy schedule starts every
    # task as soon as its predecessors end, so it meets the longest path.
    durations = np.random.default_rng(seed).integers(1, 5, size=n)
    s = toporank.schedule((src, dst), workers=max(n, 1), duration=durations, n=n)
    assert s.makespan == networkx_critical_path(src, dst, n, durations)


def test_critical_path_priority_beats_fifo_on_a_long_chain():
    # A chain of 4 plus 4 independent tasks on 2 workers (worked by hand):
    # starting the chain first finishes at 4, the chain's length; FIFO lets
    # loose tasks delay the chain and ends at 5; LIFO starts the chain last
    # and ends at 6.
    src = np.array([0, 1, 2])
    dst = np.array([1, 2, 3])
    s_fifo = toporank.schedule((src, dst), workers=2, n=8)
    s_crit = toporank.schedule((src, dst), workers=2, tie="critical", n=8)
    assert s_crit.makespan == 4 and s_fifo.makespan == 5
    s_stack = toporank.schedule((src, dst), workers=2, tie="stack", n=8)
    assert s_stack.makespan == 6


def test_labelled_records_and_float_times():
    pairs = [("fetch", "parse"), ("parse", "index"), ("fetch", "log")]
    s = toporank.schedule(
        pairs, workers=2, duration={"fetch": 0.5, "parse": 1.25, "index": 2.0, "log": 3.0}
    )
    assert s.makespan == 3.75 and isinstance(s.makespan, float)
    assert s.start.dtype == np.float64
    assert [r["node"] for r in s.records()] == ["fetch", "parse", "log", "index"]
    assert s.records()[-1] == {"node": "index", "start": 1.75, "finish": 3.75, "worker": 0}
    assert s.utilization == pytest.approx(6.75 / 7.5)


def test_bad_arguments_are_named():
    edges = np.array([[0, 1], [1, 2]])
    for workers, text in [(0, "workers = 0"), (-2, "workers = -2"), (2.5, "2.5"), (True, "True")]:
        with pytest.raises(toporank.GraphInputError, match=text):
            toporank.schedule(edges, workers=workers)
    with pytest.raises(toporank.GraphInputError, match="tie must be one of"):
        toporank.schedule(edges, workers=2, tie="fastest")
    with pytest.raises(toporank.GraphInputError, match="key and descending apply"):
        toporank.schedule(edges, workers=2, tie="queue", key=np.arange(3))
    with pytest.raises(toporank.GraphInputError, match="do not apply to tie='critical'"):
        toporank.schedule(edges, workers=2, tie="critical", seed=3)
    with pytest.raises(toporank.GraphInputError, match=r"duration\[1\] = -1 is not a duration"):
        toporank.schedule(edges, workers=2, duration=np.array([1, -1, 2]))
    with pytest.raises(toporank.GraphInputError, match=r"duration\[2\] = inf"):
        toporank.schedule(edges, workers=2, duration=np.array([1, 1, np.inf]))
    with pytest.raises(toporank.GraphInputError, match=r"duration\[0\] is NaN"):
        toporank.schedule(edges, workers=2, duration=np.array([np.nan, 1, 2]))
    with pytest.raises(toporank.GraphInputError, match="one value per node"):
        toporank.schedule(edges, workers=2, duration=np.array([1, 2]))
    with pytest.raises(toporank.GraphInputError, match=r"node 'b'"):
        toporank.schedule([("a", "b")], workers=1, duration={"a": 1, "b": -4})
    with pytest.raises(toporank.GraphInputError, match="add up to more than 64-bit integers"):
        toporank.schedule(edges, workers=1, duration=np.array([2**62, 2**62, 2**62]))


def test_more_workers_than_tasks():
    s = toporank.schedule(np.array([[0, 1], [0, 2]]), workers=2**70)
    assert s.makespan == 2 and s.workers == 2**70
    assert s.worker.tolist() == [0, 0, 1]


def test_cycles_are_reported():
    for tie in ("queue", "critical"):
        with pytest.raises(toporank.CyclicGraphError) as info:
            toporank.schedule([("a", "b"), ("b", "c"), ("c", "b")], workers=2, tie=tie)
        assert sorted(info.value.cycle.tolist()) == ["b", "c"]


@pytest.mark.parametrize("call", ["list_schedule", "bottom_levels", "order_metrics"])
def test_core_calls_release_the_gil(call):

    from toporank import _core
    from toporank._synthetic import citation_dag

    n = 50_000
    src, dst, _ = citation_dag(n, 10, seed=3)
    g = toporank.as_graph((src, dst))
    unit = np.ones(n, dtype=np.int64)
    order = toporank.order(g).astype(np.int64)
    run = {
        "list_schedule": lambda: _core.list_schedule(g.indptr, g.indices, unit, 8, "critical"),
        "bottom_levels": lambda: _core.bottom_levels(g.indptr, g.indices, unit),
        "order_metrics": lambda: _core.order_metrics(g.indptr, g.indices, order),
    }[call]
    inside = ticks_inside(run, repeat=3)
    assert inside > 100, inside
