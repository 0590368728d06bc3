"""path_counts, cross-checked against enumeration of every path by networkx."""

from __future__ import annotations

import math

import networkx as nx
import numpy as np
import pytest
import scipy.sparse as sp
from hypothesis import given

import toporank
from graphs import edge_lists
from toporank import CyclicGraphError
from toporank._synthetic import citation_dag


def _enumerated(src, dst, n):
    """Counts from networkx.all_simple_edge_paths on a multigraph keyed by
    input edge position, so parallel edges are told apart."""
    g = nx.MultiDiGraph()
    g.add_nodes_from(range(n))
    for k, (u, v) in enumerate(zip(src.tolist(), dst.tolist(), strict=True)):
        g.add_edge(u, v, key=k)
    sources = [v for v in g if g.in_degree(v) == 0]
    sinks = [v for v in g if g.out_degree(v) == 0]
    from_sources, to_sinks = np.zeros(n, np.int64), np.zeros(n, np.int64)
    through = np.zeros(len(src), np.int64)
    total = 0
    for s in sources:
        for path in nx.all_simple_edge_paths(g, s, sinks):
            total += 1
            for _, _, key in path:
                through[key] += 1
    for v in range(n):
        for s in sources:
            from_sources[v] += sum(1 for _ in nx.all_simple_edge_paths(g, s, v)) if s != v else 1
        to_sinks[v] = sum(
            sum(1 for _ in nx.all_simple_edge_paths(g, v, t)) if t != v else 1 for t in sinks
        )
    return from_sources, to_sinks, through, total


@given(edge_lists(acyclic=True, max_nodes=8, max_edges=14))
def test_counts_equal_enumeration_of_all_paths(graph):
    # Reference: networkx.all_simple_edge_paths (every path of a DAG is simple).
    src, dst, n = graph
    pc = toporank.path_counts((src, dst), n=n)
    from_sources, to_sinks, through, total = _enumerated(src, dst, n)
    assert not pc.overflow and pc.exact_total == total and pc.total == total
    assert pc.exact_from_sources.tolist() == from_sources.tolist()
    assert pc.exact_to_sinks.tolist() == to_sinks.tolist()
    assert pc.exact_through_edge.tolist() == through.tolist()
    assert pc.through_edge.tolist() == through.tolist()
    assert np.allclose(pc.edge_share, through / max(total, 1))
    assert np.allclose(pc.log_through_edge, np.log(through))


def _diamonds(k, extra_isolated=0):
    """A chain of k diamonds (2**k source-to-sink paths), plus isolated nodes."""
    top = 3 * np.arange(k)
    src = np.stack([top, top, top + 1, top + 2], axis=1).ravel()
    dst = np.stack([top + 1, top + 2, top + 3, top + 3], axis=1).ravel()
    return src, dst, 3 * k + 1 + extra_isolated


@pytest.mark.parametrize("k", [1, 20, 53, 60, 63])
def test_diamond_chains_are_exact_below_two_to_the_64(k):
    # Fact of the trade: a chain of k diamonds has 2**k paths; each diamond
    # edge carries half of them.
    src, dst, n = _diamonds(k)
    pc = toporank.path_counts((src, dst))
    assert not pc.overflow
    assert pc.exact_total == 2**k and pc.exact_to_sinks[0] == 2**k
    assert pc.exact_from_sources[n - 1] == 2**k
    assert np.all(pc.exact_through_edge == 2 ** (k - 1))
    assert pc.exact_through_edge.dtype == np.uint64
    assert np.all(pc.edge_share == 0.5)


def test_exact_counts_beyond_float_precision():
    # An isolated node adds one path: 2**60 + 1 is not a float64 value.
    src, dst, n = _diamonds(60, extra_isolated=1)
    pc = toporank.path_counts((src, dst), n=n)
    assert pc.exact_total == 2**60 + 1
    assert pc.total == float(2**60)


@pytest.mark.parametrize("k", [64, 100])
def test_overflow_is_reported_not_wrapped(k):
    src, dst, _ = _diamonds(k)
    pc = toporank.path_counts((src, dst))
    assert pc.overflow
    assert pc.exact_total is None and pc.exact_through_edge is None
    assert pc.total == 2.0**k
    assert math.isclose(pc.log_total, k * math.log(2))


def test_deep_graphs_stay_finite_on_the_log_scale():
    k = 2000  # 2**2000 paths: far beyond float64
    src, dst, n = _diamonds(k)
    pc = toporank.path_counts((src, dst))
    assert pc.overflow and math.isinf(pc.total)
    assert math.isclose(pc.log_total, k * math.log(2), rel_tol=1e-12)
    assert np.allclose(pc.edge_share, 0.5, rtol=1e-9)
    assert np.all(np.isfinite(pc.log_from_sources)) and np.all(np.isfinite(pc.log_to_sinks))
    assert math.isclose(pc.log_from_sources[n - 1], k * math.log(2), rel_tol=1e-12)
    assert np.allclose(pc.node_share[::3], 1.0)  # every path crosses each junction


def test_per_edge_counts_follow_the_package_edge_order():
    # 0 -> 1 twice (parallel), 1 -> 2, 0 -> 2, given out of CSR order.
    src, dst = np.array([1, 0, 0, 0]), np.array([2, 1, 2, 1])
    pc = toporank.path_counts((src, dst))
    assert pc.exact_through_edge.tolist() == [2, 1, 1, 1]
    assert pc.through_edge.tolist() == [2.0, 1.0, 1.0, 1.0]
    # A CSR matrix with a duplicate stored entry: counts come in .data order.
    matrix = sp.csr_array((np.ones(4), np.array([1, 2, 1, 2]), np.array([0, 3, 4, 4])), (3, 3))
    csr = toporank.path_counts(matrix)
    assert csr.exact_through_edge.tolist() == [1, 1, 1, 2]
    assert csr.exact_through_edge.tolist() == _enumerated(*_stored_edges(matrix), 3)[2].tolist()


def _stored_edges(matrix):
    rows = np.repeat(np.arange(matrix.shape[0]), np.diff(matrix.indptr))
    return rows, matrix.indices.astype(np.int64)


def test_labels_and_cycles():
    pc = toporank.path_counts([("survey", "a"), ("survey", "b"), ("a", "c"), ("b", "c")])
    assert pc.nodes.tolist() == ["survey", "a", "b", "c"]
    assert dict(zip(pc.nodes, pc.through_node.tolist(), strict=True)) == {
        "survey": 2.0,
        "a": 1.0,
        "b": 1.0,
        "c": 2.0,
    }
    with pytest.raises(CyclicGraphError):
        toporank.path_counts([("a", "b"), ("b", "c"), ("c", "a")])


def test_one_and_two_threads_agree_bit_for_bit():
    # Wide enough that levels are shared among workers.
    src, dst, _ = citation_dag(30_000, 5, seed=5)
    one = toporank.path_counts((src, dst), threads=1)
    two = toporank.path_counts((src, dst), threads=2)
    assert one.total == two.total and one.exact_total == two.exact_total
    for name in ("from_sources", "to_sinks", "through_edge", "exact_through_edge"):
        assert np.array_equal(getattr(one, name), getattr(two, name))
    # Common practice: every source-to-sink path leaves exactly one source
    # and enters exactly one sink.
    sources = np.setdiff1d(np.arange(30_000), dst)
    sinks = np.setdiff1d(np.arange(30_000), src)
    assert math.isclose(one.to_sinks[sources].sum(), one.total, rel_tol=1e-9)
    assert math.isclose(one.from_sources[sinks].sum(), one.total, rel_tol=1e-9)
