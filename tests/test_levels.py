"""levels and heights, cross-checked against networkx."""

from __future__ import annotations

import multiprocessing
import warnings

import networkx as nx
import numpy as np
import pytest
import scipy.sparse as sp
from hypothesis import given

import toporank
from graphs import edge_lists, to_networkx
from toporank import CyclicGraphError, GraphInputError
from toporank._synthetic import citation_dag


@given(edge_lists(acyclic=True))
def test_grouped_levels_equal_networkx_generations(graph):
    # Reference: networkx.topological_generations (same definition of level).
    src, dst, n = graph
    ours = toporank.levels((src, dst), grouped=True, n=n, threads=1)
    expected = [sorted(g) for g in nx.topological_generations(to_networkx(src, dst, n))]
    assert [group.tolist() for group in ours] == expected
    flat = toporank.levels((src, dst), n=n, threads=1)
    for k, group in enumerate(ours):
        assert np.all(flat[group] == k)


@given(edge_lists(acyclic=True))
def test_heights_are_levels_of_the_reversed_graph(graph):
    # Reference: networkx.topological_generations on networkx's own reverse.
    src, dst, n = graph
    reverse = to_networkx(src, dst, n).reverse()
    expected = np.zeros(n, dtype=np.int64)
    for k, group in enumerate(nx.topological_generations(reverse)):
        expected[list(group)] = k
    assert toporank.heights((src, dst), n=n, threads=1).tolist() == expected.tolist()
    assert np.array_equal(
        toporank.heights((src, dst), n=n, threads=2),
        toporank.levels((dst, src), n=n, threads=2),
    )


@given(edge_lists(acyclic=True, max_nodes=30, max_edges=80))
def test_one_and_two_threads_agree_on_small_graphs(graph):
    src, dst, n = graph
    for function in (toporank.levels, toporank.heights):
        one = function((src, dst), n=n, threads=1)
        assert np.array_equal(one, function((src, dst), n=n, threads=2))
        assert np.array_equal(one, function((src, dst), n=n, threads=3))


def test_threads_agree_on_a_graph_with_wide_frontiers():
    # Wide enough that frontiers are shared among workers, not run inline.
    src, dst, _ = citation_dag(30_000, 5, seed=3)
    g = toporank.Graph.from_edges(src, dst, n=30_000)
    one = toporank.levels(g, threads=1)
    assert max(np.bincount(one)) > 2_000
    for threads in (2, 4):
        assert np.array_equal(one, toporank.levels(g, threads=threads))
        assert np.array_equal(toporank.heights(g, threads=1), toporank.heights(g, threads=threads))
    grouped = toporank.levels(g, grouped=True, threads=2)
    assert [len(x) for x in grouped] == np.bincount(one).tolist()
    assert all(np.all(np.diff(x) > 0) for x in grouped)
    # Reference: networkx.topological_generations on the same graph.
    reference = nx.topological_generations(to_networkx(src, dst, 30_000))
    assert [sorted(x) for x in reference] == [x.tolist() for x in grouped]


def test_forms_labels_and_dtypes():
    src, dst = np.array([0, 0, 1, 2, 3]), np.array([1, 2, 3, 3, 4])
    matrix = sp.csr_array((np.ones(5), (src, dst)), shape=(6, 6))
    assert toporank.levels(matrix, threads=1).tolist() == [0, 1, 1, 2, 3, 0]
    assert toporank.levels(matrix, threads=1).dtype == matrix.indices.dtype
    assert toporank.levels((src, dst), n=6, threads=2)[5] == 0
    pairs = [("b", "a"), ("c", "a"), ("a", "d")]
    grouped = toporank.levels(pairs, grouped=True)
    assert [x.tolist() for x in grouped] == [["b", "c"], ["a"], ["d"]]
    assert toporank.levels([], grouped=True) == []
    assert toporank.heights([]).tolist() == []


def test_cycles_raise_with_a_real_cycle():
    pairs = [("x", "y"), ("y", "z"), ("z", "y"), ("w", "x")]
    for threads in (1, 2):
        with pytest.raises(CyclicGraphError) as info:
            toporank.levels(pairs, threads=threads)
        assert sorted(info.value.cycle.tolist()) == ["y", "z"]
        with pytest.raises(CyclicGraphError):
            toporank.heights(pairs, threads=threads)
    with pytest.raises(GraphInputError, match="on_cycle"):
        toporank.levels(pairs, on_cycle="skip")


def test_thread_counts_are_checked(monkeypatch):
    edges = np.array([[0, 1]])
    for bad in (0, -2, True, 1.5, "2"):
        with pytest.raises(GraphInputError, match="threads must be a positive integer"):
            toporank.levels(edges, threads=bad)
    monkeypatch.setenv("TOPORANK_NUM_THREADS", "many")
    with pytest.raises(GraphInputError, match="TOPORANK_NUM_THREADS='many'"):
        toporank.levels(edges)
    monkeypatch.setenv("TOPORANK_NUM_THREADS", "0")
    with pytest.raises(GraphInputError, match="from TOPORANK_NUM_THREADS"):
        toporank.heights(edges)
    monkeypatch.setenv("TOPORANK_NUM_THREADS", "2")
    assert toporank.levels(edges).tolist() == [0, 1]


def _levels_in_child(queue, src, dst):
    queue.put(toporank.levels((src, dst), threads=2).tolist())


def test_a_forked_child_gets_fresh_workers():
    src, dst, _ = citation_dag(20_000, 4, seed=1)
    parent = toporank.levels((src, dst), threads=2).tolist()
    context = multiprocessing.get_context("fork")
    queue = context.Queue()
    with warnings.catch_warnings():
        # Python warns that forking a threaded process may deadlock; that is
        # exactly the situation this test proves harmless here.
        warnings.simplefilter("ignore", DeprecationWarning)
        child = context.Process(target=_levels_in_child, args=(queue, src, dst))
        child.start()
    try:
        assert queue.get(timeout=60) == parent
    finally:
        child.join(timeout=60)
        if child.is_alive():
            child.kill()
    assert child.exitcode == 0


def _generation_of(graph):
    """Per node: its index in networkx.topological_generations of a DAG."""
    level = {}
    for k, group in enumerate(nx.topological_generations(graph)):
        for v in group:
            level[v] = k
    return level


def _on_cycle_reference(src, dst, n, on_cycle, backward):
    """levels (heights when ``backward``) under ``on_cycle``, computed with networkx."""
    graph = to_networkx(src, dst, n)
    if on_cycle == "cut":
        # the cut is ours; the levels of what remains are networkx's
        removed = set(toporank.cut_cycles((src, dst), n=n).edge_index.tolist())
        keep = [k for k in range(len(src)) if k not in removed]
        graph = to_networkx(src[keep], dst[keep], n)
    if backward:
        graph = graph.reverse()
    if on_cycle == "condense":
        condensed = nx.condensation(nx.DiGraph(graph))
        level = _generation_of(condensed)
        mapping = condensed.graph["mapping"]
        return [level[mapping[v]] for v in range(n)]
    if on_cycle == "partial":
        # nodes on a cycle (a component of 2+ nodes, or a self-loop) and all they reach
        cyclic = {v for c in nx.strongly_connected_components(graph) if len(c) > 1 for v in c}
        cyclic |= set(nx.nodes_with_selfloops(graph))
        behind = set(cyclic)
        for v in cyclic:
            behind |= nx.descendants(graph, v)
        level = _generation_of(graph.subgraph(set(range(n)) - behind))
        return [level.get(v, -1) for v in range(n)]
    level = _generation_of(graph)
    return [level[v] for v in range(n)]


@pytest.mark.parametrize("on_cycle", ["partial", "condense", "cut"])
@given(graph=edge_lists())
def test_levels_and_heights_despite_cycles_equal_networkx(on_cycle, graph):
    # Reference: networkx.topological_generations, condensation, descendants.
    src, dst, n = graph
    ours = toporank.levels((src, dst), n=n, on_cycle=on_cycle).tolist()
    assert ours == _on_cycle_reference(src, dst, n, on_cycle, backward=False)
    ours = toporank.heights((src, dst), n=n, on_cycle=on_cycle).tolist()
    assert ours == _on_cycle_reference(src, dst, n, on_cycle, backward=True)
    grouped = toporank.levels((src, dst), n=n, on_cycle=on_cycle, grouped=True)
    flat = toporank.levels((src, dst), n=n, on_cycle=on_cycle)
    for k, group in enumerate(grouped):
        assert group.tolist() == np.flatnonzero(flat == k).tolist()


def test_on_cycle_choices_agree_on_a_dag_and_speak_labels():
    dag = [("fetch", "build"), ("lint", "build"), ("build", "ship")]
    # by hand from the definition of level (nodes in first-seen order: fetch, build, lint, ship)
    for on_cycle in ("raise", "partial", "condense", "cut"):
        assert toporank.levels(dag, on_cycle=on_cycle).tolist() == [0, 1, 0, 2]
        assert toporank.heights(dag, on_cycle=on_cycle).tolist() == [2, 1, 2, 0]
    loop = [("a", "b"), ("b", "a"), ("b", "c"), ("d", "c")]
    groups = toporank.levels(loop, on_cycle="partial", grouped=True)
    assert [g.tolist() for g in groups] == [["d"]]
