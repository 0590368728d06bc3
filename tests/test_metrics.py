"""order_metrics against plain numpy recomputations of every measure from its definition.

The orders measured come from toporank's policies and, independently, from
networkx's topological sorts (outside reference for "a valid order").
"""

from __future__ import annotations

import math

import networkx as nx
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import toporank
from graphs import edge_lists, to_networkx
from toporank._synthetic import citation_dag


def plain_measures(src, dst, n, order, key=None, descending=False):
    """Each measure by replaying the order step by step (O(n * m)), plain numpy."""
    order = np.asarray(order, dtype=np.int64)
    position = np.empty(n, dtype=np.int64)
    position[order] = np.arange(n)
    emitted = np.zeros(n, dtype=bool)
    ready, live = [], []
    for t in range(n):
        # Ready: not emitted, and no edge from a node not yet emitted.
        blocked = np.bincount(dst[~emitted[src]], minlength=n) > 0
        ready.append(int(np.sum(~emitted & ~blocked)))
        emitted[order[t]] = True
        # Live: emitted, with an edge to a node not yet emitted.
        waiting = np.bincount(src[~emitted[dst]], minlength=n) > 0
        live.append(int(np.sum(emitted & waiting)))
    span = position[dst] - position[src]
    out = {
        "ready_peak": max(ready, default=0),
        "ready_mean": sum(ready) / n if n else 0.0,
        "live_peak": max(live, default=0),
        "live_mean": sum(live) / n if n else 0.0,
        "span_total": int(span.sum()),
        "span_mean": int(span.sum()) / len(span) if len(span) else 0.0,
        "span_max": int(span.max(initial=0)),
    }
    if key is not None:
        key = np.asarray(key, dtype=np.float64)
        if descending:
            key = -key
        seq = key[order]
        later = np.triu(np.ones((n, n), dtype=bool), 1)
        diff = seq[None, :] - seq[:, None]  # diff[i, j] = key of later j minus earlier i
        out["key_pair_agreement"] = _share(np.sum(later & (diff > 0)), np.sum(later & (diff < 0)))
        step = seq[1:] - seq[:-1]
        out["key_step_agreement"] = _share(np.sum(step > 0), np.sum(step < 0))
        edge = key[dst] - key[src]
        out["key_edge_agreement"] = _share(np.sum(edge > 0), np.sum(edge < 0))
    return out, np.array(ready), np.array(live)


def _share(agree, disagree):
    agree, disagree = int(agree), int(disagree)
    return agree / (agree + disagree) if agree + disagree else math.nan


def assert_same(ours, plain):
    assert set(ours) == set(plain)
    for name, value in plain.items():
        if isinstance(value, float) and math.isnan(value):
            assert math.isnan(ours[name]), name
        else:
            assert ours[name] == value, (name, ours[name], value)


def candidate_orders(src, dst, n, seed):
    """Orders from each toporank policy and from networkx (independent)."""
    graph = (src, dst)
    orders = [toporank.order(graph, tie=t, n=n) for t in ("queue", "stack", "priority")]
    orders.append(toporank.order(graph, tie="random", seed=seed, n=n))
    g = to_networkx(src, dst, n)
    orders.append(np.array(list(nx.topological_sort(g)), dtype=np.int64))
    rng = np.random.default_rng(seed)
    shuffle = rng.permutation(n)
    orders.append(np.array(list(nx.lexicographical_topological_sort(g, key=lambda v: shuffle[v]))))
    return orders


@settings(max_examples=60)
@given(
    edge_lists(max_nodes=10, max_edges=30, acyclic=True),
    st.integers(0, 2**32),
    st.sampled_from(["int", "float", None]),
    st.booleans(),
)
def test_measures_match_plain_numpy(graph, seed, key_kind, descending):
    src, dst, n = graph
    rng = np.random.default_rng(seed)
    key = None
    if key_kind is not None:
        key = rng.integers(-3, 4, size=n)  # small range: ties in the key
        if key_kind == "float":
            key = key * 0.5
    for order in candidate_orders(src, dst, n, seed):
        ours = toporank.order_metrics(
            (src, dst), order, key=key, descending=descending and key is not None, n=n
        )
        plain, ready, live = plain_measures(src, dst, n, order, key, descending)
        assert_same(ours, plain)
        np.testing.assert_array_equal(ours.ready_sizes, ready)
        np.testing.assert_array_equal(ours.live_sizes, live)


def test_chain_has_one_ready_node_and_one_order():
    # Common practice: a chain admits exactly one topological order.
    n = 50
    src, dst = np.arange(n - 1), np.arange(1, n)
    assert sum(1 for _ in nx.all_topological_sorts(to_networkx(src, dst, n))) == 1
    for tie in toporank.TIES:
        seed = 1 if tie == "random" else None
        order = toporank.order((src, dst), tie=tie, seed=seed)
        np.testing.assert_array_equal(order, np.arange(n))
        m = toporank.order_metrics((src, dst), order)
        assert m["ready_peak"] == 1 and m["live_peak"] == 1
        assert m["span_max"] == 1 and m["span_mean"] == 1.0


def test_isolated_nodes_are_all_ready_at_once():
    # Common practice: without edges every node is ready from the start.
    n = 9
    empty = np.zeros(0, dtype=np.int64)
    for tie in toporank.TIES:
        seed = 4 if tie == "random" else None
        order = toporank.order((empty, empty), tie=tie, seed=seed, n=n)
        m = toporank.order_metrics((empty, empty), order, n=n)
        assert m["ready_peak"] == n
        assert m["live_peak"] == 0 and m["span_total"] == 0 and m["span_mean"] == 0.0
        np.testing.assert_array_equal(m.ready_sizes, np.arange(n, 0, -1))


def test_key_consistent_with_the_graph_is_fully_followed_by_priority():
    # Common practice: when the key never decreases along an edge, ordering by
    # the key (ties by id) is itself topological, so every decided pair agrees.
    src, dst, year = citation_dag(2000, 5, seed=3)
    assert np.all(year[src] <= year[dst])
    order = toporank.order((src, dst), tie="priority", key=year)
    m = toporank.order_metrics((src, dst), order, key=year)
    assert m.key_pair_agreement == 1.0 and m.key_step_agreement == 1.0
    assert m.key_edge_agreement == 1.0
    reverse = toporank.order_metrics((src, dst), order, key=year, descending=True)
    assert reverse.key_pair_agreement == 0.0


def test_labelled_graph_with_key_mapping():
    pairs = [("a", "b"), ("a", "c"), ("b", "d"), ("c", "d")]
    year = {"a": 1990, "b": 2005, "c": 1999, "d": 2010}
    m = toporank.order_metrics(pairs, ["a", "b", "c", "d"], key=year)
    src, dst = np.array([0, 0, 1, 2]), np.array([1, 2, 3, 3])
    plain, _, _ = plain_measures(src, dst, 4, [0, 1, 2, 3], [1990, 2005, 1999, 2010])
    assert_same(m, plain)
    assert m.key_pair_agreement == 5 / 6


def test_result_is_a_read_only_mapping():
    m = toporank.order_metrics(np.array([[0, 1]]), np.array([0, 1]))
    assert dict(m) == {
        "ready_peak": 1,
        "ready_mean": 1.0,
        "live_peak": 1,
        "live_mean": 0.5,
        "span_total": 1,
        "span_mean": 1.0,
        "span_max": 1,
    }
    assert m.live_peak == m["live_peak"]
    with pytest.raises(AttributeError, match="key="):
        _ = m.key_pair_agreement
    with pytest.raises(TypeError):
        m["ready_peak"] = 3  # type: ignore[index]
    assert "ready_peak=1" in repr(m)


def test_int32_graph_gives_int32_curves():
    import scipy.sparse as sp

    matrix = sp.csr_array((np.ones(2), (np.array([0, 1]), np.array([1, 2]))), shape=(3, 3))
    matrix.indptr = matrix.indptr.astype(np.int32)
    matrix.indices = matrix.indices.astype(np.int32)
    m = toporank.order_metrics(matrix, toporank.order(matrix))
    assert m.ready_sizes.dtype == np.int32 and m["ready_peak"] == 1


def test_bad_orders_are_named():
    edges = np.array([[0, 1], [1, 2]])
    with pytest.raises(toporank.InvalidOrderError, match="edge 0 -> 1 goes backwards") as info:
        toporank.order_metrics(edges, np.array([1, 0, 2]))
    assert info.value.reason == "edge"
    with pytest.raises(toporank.InvalidOrderError, match="appears twice"):
        toporank.order_metrics(edges, np.array([0, 0, 2]))
    with pytest.raises(toporank.InvalidOrderError, match="missing"):
        toporank.order_metrics(edges, np.array([0, 1]))
    with pytest.raises(toporank.InvalidOrderError, match="'zz' is not a node"):
        toporank.order_metrics([("x", "y")], ["x", "zz"])
    # A cycle admits no valid order at all.
    with pytest.raises(toporank.InvalidOrderError, match="goes backwards"):
        toporank.order_metrics(np.array([[0, 1], [1, 0]]), np.array([0, 1]))


def test_bad_keys_are_named():
    edges = np.array([[0, 1]])
    with pytest.raises(toporank.GraphInputError, match=r"key\[1\] is NaN"):
        toporank.order_metrics(edges, np.array([0, 1]), key=np.array([1.0, np.nan]))
    with pytest.raises(toporank.GraphInputError, match="one value per node"):
        toporank.order_metrics(edges, np.array([0, 1]), key=np.array([1.0]))
    with pytest.raises(toporank.GraphInputError, match="descending"):
        toporank.order_metrics(edges, np.array([0, 1]), descending=True)
