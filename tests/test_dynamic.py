"""DynamicOrder: a topological order maintained under insertions and removals.

Outside references: networkx (is_directed_acyclic_graph, has_path,
topological_sort) on the current edge list, kept beside the structure in
plain Python; a plain positions check (every edge goes forward in a
permutation, common practice).
"""

from __future__ import annotations

import itertools
import pickle

import networkx as nx
import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

import toporank
from graphs import edge_lists, ticks_inside


def nx_graph(edges, n):
    g = nx.DiGraph()
    g.add_nodes_from(range(n))
    g.add_edges_from(edges)
    return g


def edge_multiset(d):
    g = d.graph
    src = np.repeat(np.arange(g.n), np.diff(g.indptr))
    return sorted(zip(src.tolist(), g.indices.tolist()))


def check_state(d, edges, n):
    """The order is a topological order of exactly the edges we think are there."""
    assert d.n == n and d.m == len(edges)
    assert edge_multiset(d) == sorted(edges)
    assert nx.is_directed_acyclic_graph(nx_graph(edges, n))  # networkx
    order, positions = d.order, d.positions
    assert sorted(order.tolist()) == list(range(n))
    assert np.array_equal(positions[order], np.arange(n))
    for u, v in edges:
        assert positions[u] < positions[v], (u, v)
        assert d.precedes(u, v) and not d.precedes(v, u)
    for v in range(n):
        assert d.position(v) == positions[v]


def check_cycle(edges, u, v, cycle):
    """``cycle`` is the path v -> ... -> u over ``edges``; with u -> v a real cycle."""
    cycle = [int(x) for x in cycle]
    assert cycle[0] == v and cycle[-1] == u
    present = set(edges)
    for a, b in itertools.pairwise(cycle):
        assert (a, b) in present, (a, b)
    assert len(set(cycle)) == len(cycle)


def snapshot(d):
    g = d.graph
    return d.order.tolist(), g.indptr.tolist(), g.indices.tolist()


@given(start=edge_lists(max_nodes=10, max_edges=25, acyclic=True), data=st.data())
def test_random_operation_sequences(start, data):
    src, dst, n = start
    d = toporank.DynamicOrder((src, dst), n=n)
    edges = list(zip(src.tolist(), dst.tolist()))
    check_state(d, edges, n)
    if n == 0:
        return
    node = st.integers(0, n - 1)
    for _ in range(data.draw(st.integers(1, 25))):
        kind = data.draw(st.sampled_from(["add", "add", "add", "remove", "batch", "unbatch"]))
        if kind == "add":
            u, v = data.draw(node), data.draw(node)
            closes = u == v or nx.has_path(nx_graph(edges, n), v, u)  # networkx
            before = snapshot(d)
            try:
                d.add_edge(u, v)
            except toporank.CyclicGraphError as refused:
                assert closes
                assert refused.edge == (u, v)
                check_cycle(edges, u, v, refused.cycle)
                assert snapshot(d) == before
            else:
                assert not closes
                edges.append((u, v))
        elif kind == "remove" and edges:
            u, v = edges.pop(data.draw(st.integers(0, len(edges) - 1)))
            d.remove_edge(u, v)
        elif kind == "batch":
            batch = data.draw(st.lists(st.tuples(node, node), max_size=5))
            before = snapshot(d)
            bsrc = np.array([e[0] for e in batch], dtype=np.int64)
            bdst = np.array([e[1] for e in batch], dtype=np.int64)
            try:
                d.add_edges(bsrc, bdst)
            except toporank.CyclicGraphError as refused:
                k = refused.index
                u, v = batch[k]
                prefix = edges + batch[:k]
                # networkx: the prefix is acyclic and the refused edge closes a cycle
                assert nx.is_directed_acyclic_graph(nx_graph(prefix, n))
                assert u == v or nx.has_path(nx_graph(prefix, n), v, u)
                check_cycle(prefix, u, v, refused.cycle)
                assert snapshot(d) == before
            else:
                edges.extend(batch)
                assert nx.is_directed_acyclic_graph(nx_graph(edges, n))
        elif kind == "unbatch" and edges:
            picks = data.draw(st.lists(st.integers(0, len(edges) - 1), unique=True, max_size=4))
            chosen = [edges[i] for i in picks]
            d.remove_edges([e[0] for e in chosen], [e[1] for e in chosen])
            for i in sorted(picks, reverse=True):
                edges.pop(i)
        check_state(d, edges, n)


@given(start=edge_lists(max_nodes=9, max_edges=20, acyclic=True), data=st.data())
def test_refusal_agrees_with_has_path(start, data):
    src, dst, n = start
    if n == 0:
        return
    d = toporank.DynamicOrder((src, dst), n=n)
    g = nx_graph(zip(src.tolist(), dst.tolist()), n)
    u, v = data.draw(st.integers(0, n - 1)), data.draw(st.integers(0, n - 1))
    try:
        d.add_edge(u, v)
        refused = False
    except toporank.CyclicGraphError:
        refused = True
    assert refused == (u == v or nx.has_path(g, v, u))  # networkx


def test_failed_removal_batch_changes_nothing():
    d = toporank.DynamicOrder(n=4)
    d.add_edges([0, 0, 0, 1], [1, 2, 3, 2])
    before = snapshot(d)
    with pytest.raises(toporank.GraphInputError, match=r"edge 2 of the batch, 0 -> 1"):
        d.remove_edges([0, 1, 0], [1, 2, 1])
    assert snapshot(d) == before


def test_errors_name_the_node_or_edge():
    d = toporank.DynamicOrder(n=3)
    with pytest.raises(toporank.GraphInputError, match=r"v = 3 is not a node id"):
        d.add_edge(0, 3)
    with pytest.raises(toporank.GraphInputError, match=r"u = -1 is not a node id"):
        d.add_edge(-1, 0)
    with pytest.raises(toporank.GraphInputError, match=r"dst\[1\] = 7 is not a node id"):
        d.add_edges([0, 1], [1, 7])
    with pytest.raises(toporank.GraphInputError, match=r"no edge 1 -> 2"):
        d.remove_edge(1, 2)
    with pytest.raises(toporank.GraphInputError, match=r"dst has length 1, expected 2"):
        d.add_edges([0, 1], [2])
    with pytest.raises(toporank.GraphInputError, match="x"):
        d.position("x")
    with pytest.raises(toporank.CyclicGraphError, match=r"adding 2 -> 2 .* 2 -> 2") as info:
        d.add_edge(2, 2)
    assert info.value.cycle.tolist() == [2]
    assert d.m == 0
    with pytest.raises(toporank.GraphInputError, match="count"):
        d.add_nodes(-1)
    labelled = toporank.DynamicOrder([("lib", "app")])
    with pytest.raises(toporank.GraphInputError, match="'web' is not a node"):
        labelled.add_edge("lib", "web")
    with pytest.raises(toporank.GraphInputError, match=r"src\[1\] = 'cli'"):
        labelled.add_edges(["lib", "cli"], ["app", "app"])
    with pytest.raises(toporank.GraphInputError, match="'lib' is already"):
        labelled.add_nodes(["lib"])
    with pytest.raises(toporank.GraphInputError, match="'app' -> 'lib'"):
        labelled.remove_edge("app", "lib")


def test_labelled_graphs_speak_labels():
    # An invented monorepo: dependencies arrive one at a time.
    d = toporank.DynamicOrder([("core", "http"), ("http", "api")])
    d.add_nodes(["auth", "cli"])
    d.add_edge("auth", "core")
    d.add_edges(["api", "auth"], ["cli", "http"])
    order = d.order.tolist()
    g = d.graph
    assert list(g.labels) == ["core", "http", "api", "auth", "cli"]
    expected = nx.DiGraph([("core", "http"), ("http", "api"), ("auth", "core"), ("api", "cli")])
    expected.add_edge("auth", "http")
    assert nx.is_directed_acyclic_graph(expected)  # networkx
    for a, b in expected.edges:
        assert order.index(a) < order.index(b)
        assert d.precedes(a, b)
    with pytest.raises(toporank.CyclicGraphError) as info:
        d.add_edge("cli", "auth")
    assert info.value.cycle.tolist()[0] == "auth" and info.value.cycle.tolist()[-1] == "cli"
    assert info.value.edge == ("cli", "auth")
    assert isinstance(info.value, ValueError)
    assert d.order.tolist() == order


def test_cyclic_input_and_empty_start():
    with pytest.raises(toporank.CyclicGraphError) as info:
        toporank.DynamicOrder((np.array([0, 1]), np.array([1, 0])))
    assert sorted(info.value.cycle.tolist()) == [0, 1]
    d = toporank.DynamicOrder()
    assert d.n == 0 and len(d.order) == 0
    d.add_nodes(3)
    d.add_edge(2, 0)
    # Pearce-Kelly (common practice): 2 and 0 swap places, 1 stays
    assert d.order.tolist() == [2, 1, 0]
    assert "3 nodes, 1 edges" in repr(d)


def test_starting_order_is_fifo_kahn():
    src, dst = np.array([3, 3, 0, 1]), np.array([1, 0, 2, 2])
    d = toporank.DynamicOrder((src, dst))
    assert d.order.tolist() == toporank.order((src, dst)).tolist()
    # networkx: the same graph is a DAG and the order is one of its orders
    assert nx.is_directed_acyclic_graph(nx.DiGraph(list(zip(src.tolist(), dst.tolist()))))


def test_affected_region_is_local():
    # A chain 0 -> 1 -> ... -> 99 added in id order (the order stays the id
    # order, nothing moves) plus isolated nodes 100..199.
    chain = np.arange(99)
    d = toporank.DynamicOrder(n=200)
    d.add_edges(chain, chain + 1)
    assert d.affected_total == 0
    d.add_edge(150, 0)
    # Pearce-Kelly (common practice): the forward set is {0..99} (reached from 0,
    # placed before 150), the backward set {150}; nodes 100..149 stay put.
    assert d.affected_total == 101
    # the 101 freed places {0..99, 150} go to 150 first, then 0..99 in order
    assert d.order.tolist() == [150, *range(99), *range(100, 150), 99, *range(151, 200)]
    d.add_edge(0, 199)  # already forward: nothing moves
    assert d.affected_total == 101


def test_batch_that_reverses_a_chain():
    # Edges i + 1 -> i in descending i: one step at a time the affected regions
    # grow to the whole chain; the batch switches to one re-sort of its window.
    n = 3000
    ids = np.arange(n - 1, dtype=np.int64)[::-1]
    d = toporank.DynamicOrder(n=n)
    d.add_edges(ids + 1, ids)
    # networkx: a path has exactly one topological order
    path = nx.DiGraph(list(zip((ids + 1).tolist(), ids.tolist())))
    assert d.order.tolist() == list(nx.topological_sort(path))
    assert d.affected_total < n * 10
    # the same batch closing a cycle at its end is refused as a whole, quickly
    # (halving with window re-sorts, not single steps)
    n = 100_000
    ids = np.arange(n - 1, dtype=np.int64)[::-1]
    e = toporank.DynamicOrder(n=n)
    with pytest.raises(toporank.CyclicGraphError) as info:
        e.add_edges(np.append(ids + 1, 0), np.append(ids, n - 1))
    assert info.value.index == n - 1
    assert info.value.cycle.tolist() == list(range(n - 1, -1, -1))
    assert e.m == 0 and e.order.tolist() == list(range(n))


def test_batches_release_the_gil():
    n = 200_000
    src = np.arange(n - 1, dtype=np.int64)
    d = toporank.DynamicOrder(n=n)

    def run():
        d.add_edges(src[::-1], src[::-1] + 1)
        d.remove_edges(src, src + 1)

    assert ticks_inside(run, 3) > 0


def test_error_survives_pickling():
    d = toporank.DynamicOrder(n=2)
    d.add_edge(0, 1)
    with pytest.raises(toporank.CyclicGraphError) as info:
        d.add_edge(1, 0)
    again = pickle.loads(pickle.dumps(info.value))
    assert again.cycle.tolist() == [0, 1]


def test_threads_may_share_one_instance():
    # Batches run without the GIL; two threads calling at once used to get
    # RuntimeError("Already mutably borrowed") for most calls. Now each call
    # waits for the one lock, every batch goes in, and the order stays a
    # topological order of the final graph (checked with networkx).
    import threading

    n = 50_000
    d = toporank.DynamicOrder(n=n)
    errors: list[BaseException] = []

    def insert(seed: int) -> None:
        rng = np.random.default_rng(seed)
        for _ in range(15):
            u, v = rng.integers(0, n, 5_000), rng.integers(0, n, 5_000)
            keep = u != v
            try:  # lower id -> higher id: never a cycle
                d.add_edges(np.minimum(u, v)[keep], np.maximum(u, v)[keep])
                assert len(d.order) == n
            except BaseException as error:  # reported below
                errors.append(error)

    workers = [threading.Thread(target=insert, args=(seed,)) for seed in range(4)]
    for w in workers:
        w.start()
    for w in workers:
        w.join()
    assert errors == []
    g = d.graph
    sources = np.repeat(np.arange(n), np.diff(g.indptr))
    reference = nx.DiGraph(zip(sources.tolist(), g.indices.tolist(), strict=True))
    position = d.positions
    assert all(position[u] < position[v] for u, v in reference.edges)  # networkx's edge list
    expected = 0
    for seed in range(4):  # every batch went in: replay the draws
        rng = np.random.default_rng(seed)
        for _ in range(15):
            u, v = rng.integers(0, n, 5_000), rng.integers(0, n, 5_000)
            expected += int((u != v).sum())
    assert g.m == expected


def test_threads_may_add_labelled_nodes_while_others_read():
    import threading

    d = toporank.DynamicOrder([("root", "leaf")])
    errors: list[BaseException] = []

    def grow(prefix: str) -> None:
        try:
            for k in range(300):
                d.add_nodes([f"{prefix}{k}"])
                d.add_edge("root", f"{prefix}{k}")
        except BaseException as error:  # reported below
            errors.append(error)

    def read() -> None:
        try:
            for _ in range(300):
                names = d.order
                assert names[0] == "root" and None not in names
        except BaseException as error:  # reported below
            errors.append(error)

    workers = [threading.Thread(target=grow, args=(p,)) for p in "ab"]
    workers += [threading.Thread(target=read) for _ in range(2)]
    for w in workers:
        w.start()
    for w in workers:
        w.join()
    assert errors == []
    assert d.n == 602 and d.m == 601
    toporank.verify_order(d.graph, d.order)
