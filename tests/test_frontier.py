"""toporank.Frontier: the ready set handed to workers (references named beside each check)."""

from __future__ import annotations

import collections
import pickle
import random
import threading
import time

import networkx as nx
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import toporank
from graphs import edge_lists, to_networkx
from toporank._synthetic import citation_dag


def _drain_one_at_a_time(frontier):
    seen = []
    while not frontier.is_done:
        (task,) = frontier.take(1).tolist()
        seen.append(task)
        frontier.finish(task)
    return seen


@settings(max_examples=60, deadline=None)
@given(edge_lists(acyclic=True), st.sampled_from(["queue", "stack", "priority", "random"]))
def test_one_worker_one_task_follows_order(graph, tie):
    # The order's documented semantics (sources in ascending id, successors
    # in row order) are the frontier's, so one worker replays toporank.order;
    # the replay is itself checked against networkx (every predecessor first).
    src, dst, n = graph
    kwargs = {"seed": 11} if tie == "random" else {}
    if tie == "priority" and n:
        kwargs = {"key": np.random.default_rng(n).integers(0, 3, n)}
    frontier = toporank.Frontier((src, dst), tie=tie, n=n, **kwargs)
    seen = _drain_one_at_a_time(frontier)
    assert seen == toporank.order((src, dst), tie=tie, n=n, **kwargs).tolist()
    reference = to_networkx(src, dst, n)
    position = {v: k for k, v in enumerate(seen)}
    assert all(position[u] < position[v] for u, v in reference.edges)  # networkx edges
    assert frontier.finished.tolist() == seen


def test_critical_takes_the_longest_remaining_path_first():
    # networkx dag_longest_path_length (node-weighted via edge weights of the
    # head) gives each task's bottom level; the frontier hands out, among the
    # ready tasks, the largest bottom level first, ties to the smaller id.
    src, dst, _ = citation_dag(300, 4, seed=3)
    n = 300
    duration = np.random.default_rng(1).integers(1, 9, n)
    frontier = toporank.Frontier((src, dst), tie="critical", duration=duration, n=n)
    g = to_networkx(src, dst, n)
    bottom = {}
    for v in reversed(list(nx.topological_sort(g))):
        bottom[v] = int(duration[v]) + max((bottom[w] for w in g.successors(v)), default=0)
    ready = {v for v in range(n) if g.in_degree(v) == 0}
    done = set()
    while not frontier.is_done:
        (task,) = frontier.take(1).tolist()
        assert task == min(ready, key=lambda v: (-bottom[v], v))
        ready.remove(task)
        done.add(task)
        frontier.finish(task)
        ready |= {w for w in g.successors(task) if all(p in done for p in g.predecessors(w))}


def test_many_threads_hand_out_each_task_once_after_its_predecessors():
    # networkx predecessors: a task may be handed out only after every
    # predecessor's finish was called; every task exactly once.
    src, dst, _ = citation_dag(400, 5, seed=7)
    n = 400
    g = to_networkx(src, dst, n)
    frontier = toporank.Frontier((src, dst), tie="priority", n=n)
    finish_called = np.full(n, np.inf)
    taken_at = np.full(n, -np.inf)
    handed = collections.Counter()
    lock = threading.Lock()
    errors = []

    def worker(seed):
        rng = random.Random(seed)
        try:
            while True:
                try:
                    batch = frontier.take(rng.choice([1, 1, 2, 5])).tolist()
                except toporank.TaskStateError:
                    return
                now = time.perf_counter()
                if not batch:
                    time.sleep(0.0002)
                    continue
                with lock:
                    handed.update(batch)
                    for task in batch:
                        taken_at[task] = now
                time.sleep(rng.random() * 0.0005)
                with lock:
                    for task in batch:
                        finish_called[task] = time.perf_counter()
                frontier.finish(batch)
        except Exception as error:  # reported below
            errors.append(error)

    threads = [threading.Thread(target=worker, args=(s,)) for s in range(6)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert not errors
    assert handed == collections.Counter(range(n))
    for v in range(n):
        for u in g.predecessors(v):
            assert finish_called[u] < taken_at[v], (u, v)
    assert sorted(frontier.finished.tolist()) == list(range(n))
    assert frontier.is_done and frontier.remaining == 0 and frontier.ready_count == 0


@settings(max_examples=60, deadline=None)
@given(edge_lists(acyclic=True, max_nodes=15), st.data())
def test_fail_skips_exactly_the_descendants(graph, data):
    # networkx descendants: failing a set of running tasks skips the union
    # of their descendants, and nothing skipped is ever handed out.
    src, dst, n = graph
    if n == 0:
        return
    frontier = toporank.Frontier((src, dst), n=n)
    reference = to_networkx(src, dst, n)
    finished = data.draw(st.integers(0, n))
    for _ in range(finished):
        if frontier.is_done:
            return
        frontier.finish(frontier.take(1))
    if frontier.is_done:
        return
    running = frontier.take().tolist()
    failing = data.draw(st.lists(st.sampled_from(running), min_size=1, unique=True))
    skipped = frontier.fail(failing).tolist()
    expected = set().union(*(nx.descendants(reference, t) for t in failing))
    assert len(skipped) == len(set(skipped))
    assert set(skipped) == expected
    assert set(frontier.skipped.tolist()) == expected
    frontier.finish([t for t in running if t not in failing])
    handed = []
    while not frontier.is_done:
        batch = frontier.take().tolist()
        handed += batch
        frontier.finish(batch)
    assert not set(handed) & expected


def test_misuse_raises_naming_the_task_and_changes_nothing():
    # From memory (the executor contract): finishing a task never taken, a
    # task twice, or taking after the end are errors naming the task.
    build = toporank.Frontier([("fetch", "compile"), ("compile", "test"), ("fetch", "lint")])
    with pytest.raises(toporank.TaskStateError, match="cannot finish task 'compile'") as e:
        build.finish("compile")
    assert e.value.task == "compile" and e.value.state == "waiting"
    assert isinstance(e.value, RuntimeError)
    (fetch,) = build.take()
    with pytest.raises(toporank.TaskStateError, match="never taken"):
        build.finish(["fetch", "lint"])  # lint is waiting: the batch is refused whole
    assert build.running.tolist() == ["fetch"]
    with pytest.raises(toporank.TaskStateError, match="lists it twice"):
        build.finish(["fetch", "fetch"])
    assert build.running.tolist() == ["fetch"]
    build.finish(fetch)
    with pytest.raises(toporank.TaskStateError, match="'fetch': it is already finished"):
        build.finish("fetch")
    with pytest.raises(toporank.TaskStateError, match="'fetch': it is already finished"):
        build.fail(["fetch"])
    with pytest.raises(toporank.GraphInputError, match="'deploy' is not a node"):
        build.finish(["deploy"])
    assert build.take().tolist() == ["compile", "lint"]
    assert build.fail("compile").tolist() == ["test"]
    with pytest.raises(toporank.TaskStateError, match="'test': it is already skipped"):
        build.finish("test")
    build.finish("lint")
    assert build.is_done
    with pytest.raises(toporank.TaskStateError, match="nothing left to take"):
        build.take()
    copy = pickle.loads(pickle.dumps(e.value))
    assert (copy.task, copy.state, str(copy)) == (e.value.task, e.value.state, str(e.value))


def test_integer_ids_and_argument_checks():
    # From memory: ids outside 0..n are not nodes; k must be a count.
    f = toporank.Frontier((np.array([0, 1]), np.array([1, 2])))
    with pytest.raises(toporank.GraphInputError, match="tasks"):
        f.finish(7)
    with pytest.raises(toporank.GraphInputError, match="tasks"):
        f.finish([-1])
    with pytest.raises(toporank.GraphInputError, match="k"):
        f.take(-1)
    with pytest.raises(toporank.GraphInputError, match="k"):
        f.take(1.5)
    with pytest.raises(toporank.GraphInputError, match="duration applies"):
        toporank.Frontier([("a", "b")], duration={"a": 1, "b": 2})
    with pytest.raises(toporank.GraphInputError, match="tie must be one of"):
        toporank.Frontier([("a", "b")], tie="oldest")
    assert f.take(np.int64(0)).tolist() == []
    assert f.take(np.int64(3)).tolist() == [0]
    assert "3 tasks" in repr(f)


def test_a_cycle_raises_cyclic_graph_error():
    # networkx find_cycle agrees that the reported cycle is one.
    pairs = [("a", "b"), ("b", "c"), ("c", "a"), ("c", "d")]
    with pytest.raises(toporank.CyclicGraphError) as e:
        toporank.Frontier(pairs)
    cycle = e.value.cycle.tolist()
    g = nx.DiGraph(pairs)
    assert all(g.has_edge(u, v) for u, v in zip(cycle, cycle[1:] + cycle[:1]))
    with pytest.raises(toporank.CyclicGraphError):
        toporank.Frontier(pairs, tie="critical")


def test_batches_release_the_gil():
    # Common practice (tests/graphs.ticks_inside): a large batch runs
    # without the GIL, so another Python thread keeps running meanwhile.
    from graphs import ticks_inside

    src, dst, _ = citation_dag(200_000, 10, seed=2)

    def run():
        f = toporank.Frontier((src, dst))
        while not f.is_done:
            f.finish(f.take())

    assert ticks_inside(run, repeat=1) > 0
