"""critical_path, cross-checked against networkx and a textbook project network."""

from __future__ import annotations

import itertools
import math

import networkx as nx
import numpy as np
import pytest
import scipy.sparse as sp
from hypothesis import given
from hypothesis import strategies as st

import toporank
from graphs import edge_lists, to_networkx
from toporank import CyclicGraphError, GraphInputError
from toporank._synthetic import citation_dag


def _weighted_networkx(src, dst, n, lag, duration=None):
    """DiGraph with the largest lag of each parallel bundle (the one a longest
    path uses) plus, when durations are given, a private tail node per node
    reached by an edge of that node's duration and every edge carrying its
    source's duration, so longest paths in it are our schedule lengths."""
    g = nx.DiGraph()
    g.add_nodes_from(range(n))
    for u, v, w in zip(src.tolist(), dst.tolist(), lag.tolist(), strict=True):
        extra = 0.0 if duration is None else duration[u]
        if not g.has_edge(u, v) or g[u][v]["w"] < w + extra:
            g.add_edge(u, v, w=w + extra)
    if duration is not None:
        for u in range(n):
            g.add_edge(u, ("tail", u), w=duration[u])
    return g


@given(edge_lists(acyclic=True), st.randoms(use_true_random=False))
def test_length_equals_networkx_longest_path(graph, rng):
    # Reference: networkx.dag_longest_path_length with the same edge weights.
    src, dst, n = graph
    lag = np.array([rng.randint(0, 5) for _ in src], dtype=np.float64)
    cp = toporank.critical_path((src, dst), edge_weight=lag, n=n)
    g = _weighted_networkx(src, dst, n, lag)
    assert cp.length == nx.dag_longest_path_length(g, weight="w")
    plain = toporank.critical_path((src, dst), n=n)
    assert plain.length == nx.dag_longest_path_length(to_networkx(src, dst, n))
    _check_path_and_schedule(src, dst, n, lag, np.zeros(n), cp)


@given(edge_lists(acyclic=True), st.randoms(use_true_random=False))
def test_node_and_edge_weights_equal_networkx_on_a_split_graph(graph, rng):
    # Reference: networkx.dag_longest_path_length on the graph where each
    # node's duration moves onto its out-edges and a private tail edge.
    src, dst, n = graph
    lag = np.array([rng.randint(0, 3) for _ in src], dtype=np.float64)
    duration = np.array([rng.randint(0, 6) for _ in range(n)], dtype=np.float64)
    cp = toporank.critical_path((src, dst), node_weight=duration, edge_weight=lag, n=n)
    g = _weighted_networkx(src, dst, n, lag, duration)
    assert cp.length == (nx.dag_longest_path_length(g, weight="w") if n else 0)
    _check_path_and_schedule(src, dst, n, lag, duration, cp)


def _check_path_and_schedule(src, dst, n, lag, duration, cp):
    if n == 0:
        assert cp.length == 0 and len(cp.path) == 0
        return
    # The path is real and as long as claimed (a parallel bundle contributes
    # its largest lag).
    path = cp.path.tolist()
    total = duration[path[0]]
    for u, v in itertools.pairwise(path):
        bundle = lag[(src == u) & (dst == v)]
        assert len(bundle), f"{u} -> {v} is not an edge"
        total += bundle.max() + duration[v]
    assert total == cp.length
    # Common practice: a CPM schedule respects every precedence at both
    # extremes, has non-negative slack, and the critical path has none.
    es, ls = cp.earliest_start, cp.latest_start
    assert np.all(es[dst] >= es[src] + duration[src] + lag)
    assert np.all(ls[dst] >= ls[src] + duration[src] + lag)
    assert np.all(cp.slack >= 0) and np.all(cp.slack[path] == 0)
    assert np.all(cp.latest_finish <= cp.length) and np.all(es >= 0)
    assert cp.critical[path].all()


def test_textbook_project_network():
    # Source: Hillier & Lieberman, Introduction to Operations Research, the
    # Reliable Construction Co. project (chapter on PERT/CPM). Activities,
    # durations in weeks, precedences and the ES/LS/slack table from memory:
    # project length 44 weeks, critical path A B C E F J L N.
    duration = dict(A=2, B=4, C=10, D=6, E=4, F=5, G=7, H=9, I=7, J=8, K=4, L=5, M=2, N=6)
    precedences = [
        ("A", "B"), ("B", "C"), ("C", "D"), ("C", "E"), ("C", "I"), ("D", "G"),
        ("E", "F"), ("E", "H"), ("G", "H"), ("F", "J"), ("I", "J"), ("J", "K"),
        ("J", "L"), ("H", "M"), ("K", "N"), ("L", "N"),
    ]  # fmt: skip
    cp = toporank.critical_path(precedences, node_weight=duration)
    assert cp.length == 44
    assert "".join(cp.path) == "ABCEFJLN"
    table = {  # activity: (earliest start, latest start, slack)
        "A": (0, 0, 0), "B": (2, 2, 0), "C": (6, 6, 0), "D": (16, 20, 4),
        "E": (16, 16, 0), "F": (20, 20, 0), "G": (22, 26, 4), "H": (29, 33, 4),
        "I": (16, 18, 2), "J": (25, 25, 0), "K": (33, 34, 1), "L": (33, 33, 0),
        "M": (38, 42, 4), "N": (38, 38, 0),
    }  # fmt: skip
    got = {
        node: (es, ls, slack)
        for node, es, ls, slack in zip(
            cp.nodes, cp.earliest_start, cp.latest_start, cp.slack, strict=True
        )
    }
    assert got == table
    assert sorted(cp.nodes[cp.critical]) == list("ABCEFJLN")


def test_edge_weights_follow_the_package_edge_order():
    # Edges given out of CSR order; the weights travel with their edges.
    src, dst = np.array([2, 0, 0, 1]), np.array([3, 2, 1, 3])
    lag = np.array([5.0, 1.0, 1.0, 2.0])
    by_list = toporank.critical_path((src, dst), edge_weight=lag)
    assert by_list.length == 6 and by_list.path.tolist() == [0, 2, 3]
    matrix = sp.csr_array((lag, (src, dst)), shape=(4, 4))
    by_data = toporank.critical_path(matrix, edge_weight="data")
    by_array = toporank.critical_path(matrix, edge_weight=matrix.data)
    assert by_data.length == by_array.length == 6
    assert by_data.path.tolist() == [0, 2, 3]
    coo = sp.coo_array((lag, (src, dst)), shape=(4, 4))
    assert toporank.critical_path(coo, edge_weight="data").path.tolist() == [0, 2, 3]


def test_ties_go_to_smaller_ids():
    # Two equally long routes 0 -> 2 -> 3 and 0 -> 1 -> 3; 4 -> 5 equally long
    # at the end but 3 < 5.
    pairs = np.array([[0, 2], [0, 1], [2, 3], [1, 3], [6, 4], [4, 5]])
    assert toporank.critical_path(pairs).path.tolist() == [0, 1, 3]


def test_bad_weights_are_named():
    pairs = [("a", "b"), ("b", "c")]
    with pytest.raises(GraphInputError, match=r"edge_weight\[1\] = -1.0 \(edge 'b' -> 'c'\)"):
        toporank.critical_path(pairs, edge_weight=[1, -1])
    with pytest.raises(GraphInputError, match=r"node_weight\[2\] = inf \(node 'c'\)"):
        toporank.critical_path(pairs, node_weight={"a": 1, "b": 2, "c": np.inf})
    with pytest.raises(GraphInputError, match="NaN"):
        toporank.critical_path(pairs, node_weight=[1, np.nan, 2])
    with pytest.raises(GraphInputError, match="one value per edge"):
        toporank.critical_path(pairs, edge_weight=[1.0])
    with pytest.raises(GraphInputError, match="scipy sparse"):
        toporank.critical_path(pairs, edge_weight="data")
    with pytest.raises(GraphInputError, match="expected integers or floats"):
        toporank.critical_path(pairs, edge_weight=["x", "y"])
    with pytest.raises(CyclicGraphError):
        toporank.critical_path([("a", "b"), ("b", "a")])


def test_one_and_two_threads_agree_bit_for_bit():
    # Wide enough that levels are shared among workers.
    src, dst, _ = citation_dag(30_000, 5, seed=4)
    rng = np.random.default_rng(0)
    lag = rng.random(len(src))
    duration = rng.random(30_000)
    one = toporank.critical_path((src, dst), node_weight=duration, edge_weight=lag, threads=1)
    two = toporank.critical_path((src, dst), node_weight=duration, edge_weight=lag, threads=2)
    assert one.length == two.length and np.array_equal(one.path, two.path)
    assert np.array_equal(one.latest_start, two.latest_start)
    assert np.array_equal(one.earliest_start, two.earliest_start)
    # Reference: networkx.dag_longest_path_length on the split graph.
    g = _weighted_networkx(src, dst, 30_000, lag, duration)
    assert math.isclose(one.length, nx.dag_longest_path_length(g, weight="w"), rel_tol=1e-12)
