"""Traversal weights and main paths, checked against brute-force enumeration
of paths with networkx (all_simple_edge_paths) and against the definitions of
Hummon & Doreian (1989), Batagelj (arXiv cs/0309023, 2003) and Liu & Lu
(JASIST 2012) (details from memory)."""

from __future__ import annotations

import itertools
import math

import networkx as nx
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import toporank
from graphs import edge_lists
from toporank import CyclicGraphError, GraphInputError

SMALL_DAGS = edge_lists(max_nodes=7, max_edges=12, acyclic=True)


def _multigraph(src, dst, n):
    g = nx.MultiDiGraph()
    g.add_nodes_from(range(n))
    for k, (u, v) in enumerate(zip(src.tolist(), dst.tolist(), strict=True)):
        g.add_edge(u, v, key=k)
    return g


def _through(src, dst, n, starts, ends):
    """Per input edge: the paths from a node of ``starts`` to one of ``ends``
    that use it (networkx enumeration)."""
    g = _multigraph(src, dst, n)
    through = np.zeros(len(src), np.int64)
    for s in starts:
        targets = [t for t in ends if t != s]
        for path in nx.all_simple_edge_paths(g, s, targets):
            for _, _, key in path:
                through[key] += 1
    return through


@given(SMALL_DAGS)
@settings(max_examples=60, deadline=None)
def test_weights_equal_enumeration_over_their_node_pairs(graph):
    # Definitions: Batagelj 2003 (SPC, SPLC, SPNP), from memory.
    src, dst, n = graph
    g = _multigraph(src, dst, n)
    sources = [v for v in g if g.in_degree(v) == 0]
    sinks = [v for v in g if g.out_degree(v) == 0]
    everyone = list(g)
    expected = {
        "spc": _through(src, dst, n, sources, sinks),
        "splc": _through(src, dst, n, everyone, sinks),
        "spnp": _through(src, dst, n, everyone, everyone),
    }
    for kind, through in expected.items():
        found = toporank.path_counts((src, dst), kind=kind, n=n)
        assert not found.overflow
        assert found.exact_through_edge.tolist() == through.tolist(), kind
        assert np.array_equal(found.through_edge, through.astype(float))


@given(SMALL_DAGS)
@settings(max_examples=60, deadline=None)
def test_search_path_count_obeys_kirchhoffs_law(graph):
    # Batagelj 2003: SPC is a flow; into a node equals out of it, sources and sinks aside.
    src, dst, n = graph
    spc = toporank.path_counts((src, dst), n=n).exact_through_edge.astype(np.int64)
    inflow = np.bincount(dst, weights=spc, minlength=n)
    outflow = np.bincount(src, weights=spc, minlength=n)
    inner = (np.bincount(dst, minlength=n) > 0) & (np.bincount(src, minlength=n) > 0)
    assert np.array_equal(inflow[inner], outflow[inner])


def _source_sink_paths(src, dst, n):
    g = _multigraph(src, dst, n)
    sinks = [v for v in g if g.out_degree(v) == 0]
    for s in (v for v in g if g.in_degree(v) == 0 and g.out_degree(v) > 0):
        yield from nx.all_simple_edge_paths(g, s, sinks)


@given(SMALL_DAGS, st.data())
@settings(max_examples=60, deadline=None)
def test_global_main_path_is_the_heaviest_source_to_sink_path(graph, data):
    src, dst, n = graph
    weights = np.array(data.draw(st.lists(st.integers(0, 5), min_size=len(src), max_size=len(src))))
    for weight in ("spc", "splc", "spnp", weights):
        w = weight if not isinstance(weight, str) else None
        if w is None:
            w = toporank.path_counts((src, dst), kind=weight, n=n).through_edge
        best = max((sum(w[k] for _, _, k in p) for p in _source_sink_paths(src, dst, n)), default=0)
        mp = toporank.main_path((src, dst), weight=weight, n=n)
        assert mp.weight == best  # networkx enumeration
        assert mp.single
        if len(src):
            # A source-to-sink path whose edges chain up.
            assert mp.nodes[0] not in dst and mp.nodes[-1] not in src
            steps = mp.nodes.tolist()
            pairs = sorted(zip(mp.sources.tolist(), mp.targets.tolist(), strict=True))
            assert pairs == sorted(itertools.pairwise(steps))
            assert np.array_equal(src[mp.edge_index], mp.sources)
            assert np.array_equal(dst[mp.edge_index], mp.targets)
        every = toporank.main_path((src, dst), weight=weight, ties="all", n=n)
        assert set(mp.edge_index.tolist()) <= set(every.edge_index.tolist())
        # Every edge of the union lies on some heaviest path (networkx enumeration).
        heaviest = [p for p in _source_sink_paths(src, dst, n) if sum(w[k] for *_, k in p) == best]
        assert set(every.edge_index.tolist()) == {k for p in heaviest for *_, k in p}


@given(SMALL_DAGS, st.data())
@settings(max_examples=60, deadline=None)
def test_local_main_paths_take_a_heaviest_edge_at_each_step(graph, data):
    # Hummon & Doreian 1989, the local (greedy) search, from memory.
    src, dst, n = graph
    w = np.array(data.draw(st.lists(st.integers(0, 3), min_size=len(src), max_size=len(src))))
    has_in, has_out = np.isin(np.arange(n), dst), np.isin(np.arange(n), src)
    forward = toporank.main_path((src, dst), weight=w, method="forward", n=n)
    backward = toporank.main_path((src, dst), weight=w, method="backward", n=n)
    if not len(src):
        assert len(forward) == len(backward) == 0
        return
    steps = forward.nodes.tolist()
    first = has_out & ~has_in
    chosen = forward.edge_index
    by_path = dict(zip(zip(src[chosen], dst[chosen]), w[chosen]))
    start_edges = np.isin(src, np.flatnonzero(first))
    assert by_path[(steps[0], steps[1])] == w[start_edges].max()
    for u, v in itertools.pairwise(steps[1:]):
        assert by_path[(u, v)] == w[src == u].max()
    assert not has_out[steps[-1]]
    steps = backward.nodes.tolist()
    by_path = dict(
        zip(zip(src[backward.edge_index], dst[backward.edge_index]), w[backward.edge_index])
    )
    end_edges = np.isin(dst, np.flatnonzero(~has_out))
    assert by_path[(steps[-2], steps[-1])] == w[end_edges].max()
    for u, v in itertools.pairwise(steps[:-1]):
        assert by_path[(u, v)] == w[dst == v].max()
    assert not has_in[steps[0]]
    for method in ("forward", "backward"):
        one = toporank.main_path((src, dst), weight=w, method=method, n=n)
        every = toporank.main_path((src, dst), weight=w, method=method, ties="all", n=n)
        assert set(one.edge_index.tolist()) <= set(every.edge_index.tolist())


@given(SMALL_DAGS, st.integers(1, 5), st.sampled_from(["local", "global"]), st.data())
@settings(max_examples=60, deadline=None)
def test_key_routes_contain_their_seed_edges(graph, routes, extend, data):
    # Liu & Lu 2012: the key routes are the heaviest edges, from memory.
    src, dst, n = graph
    w = np.array(data.draw(st.lists(st.integers(0, 4), min_size=len(src), max_size=len(src))))
    for ties in ("first", "all"):
        found = toporank.main_path(
            (src, dst), weight=w, method="key-route", routes=routes, extend=extend, ties=ties, n=n
        )
        k = min(routes, len(src))
        if k == 0:
            assert len(found) == 0
            continue
        threshold = np.sort(w)[::-1][k - 1]
        chosen = set(found.edge_index.tolist())
        assert set(np.flatnonzero(w > threshold).tolist()) <= chosen
        assert int(np.sum(w[list(chosen)] >= threshold)) >= k
        # Each route reaches a source and a sink: the union's ends are graph ends.
        sub_src, sub_dst = src[list(chosen)], dst[list(chosen)]
        for v in set(sub_dst.tolist()) - set(sub_src.tolist()):
            assert v not in src
        for u in set(sub_src.tolist()) - set(sub_dst.tolist()):
            assert u not in dst


@given(edge_lists(max_nodes=8, max_edges=16, acyclic=False))
@settings(max_examples=80, deadline=None)
def test_preprint_transformation_yields_a_dag_keeping_links_across_components(graph):
    # Batagelj 2003 (preprint transformation), details from memory; checked with networkx.
    src, dst, n = graph
    t = toporank.preprint_transform((src, dst), n=n)
    tg = t.graph
    t_src = np.repeat(np.arange(tg.n), np.diff(tg.indptr))
    t_dst = tg.indices
    h = nx.MultiDiGraph()
    h.add_nodes_from(range(tg.n))
    h.add_edges_from(zip(t_src.tolist(), t_dst.tolist(), strict=True))
    assert nx.is_directed_acyclic_graph(h)
    assert np.array_equal(t.node_of[:n], np.arange(n))
    g = _multigraph(src, dst, n)
    comp = {}
    for k, members in enumerate(nx.strongly_connected_components(g)):
        for v in members:
            comp[v] = k
    kept = set(zip(t.edge_of.tolist(), t_src.tolist(), t_dst.tolist(), strict=True))
    for e, (u, v) in enumerate(zip(src.tolist(), dst.tolist(), strict=True)):
        # every edge maps back to itself; edges across components are kept as they are
        assert np.array_equal(t.node_of[t_src[t.edge_of == e]], np.full((t.edge_of == e).sum(), u))
        assert np.all(t.node_of[t_dst[t.edge_of == e]] == v)
        if comp[u] != comp[v]:
            assert (e, u, v) in kept
    if nx.is_directed_acyclic_graph(g):
        # identity: same CSR, each stored edge standing for itself
        original = toporank.as_graph((src, dst), n=n)
        assert tg.n == n and np.array_equal(tg.indptr, original.indptr)
        assert np.array_equal(tg.indices, original.indices)
        assert np.array_equal(src[t.edge_of], t_src) and np.array_equal(dst[t.edge_of], t_dst)


def _diamonds(k):
    src, dst = [], []
    for d in range(k):
        top, a, b, bottom = 3 * d, 3 * d + 1, 3 * d + 2, 3 * d + 3
        src += [top, top, a, b]
        dst += [a, b, bottom, bottom]
    return np.array(src), np.array(dst), 3 * k + 1


@pytest.mark.parametrize("kind", ["spc", "splc", "spnp"])
def test_seventy_diamonds_overflow_exact_counts_with_a_finite_log(kind):
    # 2**70 source-to-sink paths (common practice: a diamond doubles the paths).
    src, dst, n = _diamonds(70)
    found = toporank.path_counts((src, dst), kind=kind, n=n)
    assert found.overflow and found.exact_through_edge is None
    assert math.isfinite(found.log_total) and found.log_total >= 70 * math.log(2)
    mp = toporank.main_path((src, dst), weight=kind, n=n)
    assert len(mp) == 140 and math.isfinite(mp.weight)


def test_cycles_raise_by_default_and_every_policy_returns_a_path():
    papers = [("A", "B"), ("B", "C"), ("C", "B"), ("C", "D"), ("B", "E")]
    with pytest.raises(CyclicGraphError):
        toporank.main_path(papers)
    for on_cycle in ("cut", "condense", "preprint"):
        mp = toporank.main_path(papers, on_cycle=on_cycle)
        assert mp.sources[0] == "A" and len(mp) >= 2
        assert all(papers[e] == (s, t) for e, s, t in zip(mp.edge_index, mp.sources, mp.targets))


def test_arguments_are_checked():
    papers = [("A", "B")]
    for kwargs in (
        {"method": "sideways"},
        {"weight": "hits"},
        {"routes": 0, "method": "key-route"},
        {"routes": 2},
        {"ties": "some"},
        {"on_cycle": "partial"},
        {"weight": [-1.0]},
        {"weight": [1.0, 2.0]},
    ):
        with pytest.raises(GraphInputError):
            toporank.main_path(papers, **kwargs)
    with pytest.raises(GraphInputError):
        toporank.path_counts(papers, kind="hits")


def test_plot_draws_the_demo_journal(tmp_path):
    pytest.importorskip("matplotlib")
    from toporank._demo import journal_main_path

    mp, years = journal_main_path()
    target = mp.plot(tmp_path / "mp.png", key=years)
    assert target.stat().st_size > 10_000
    with pytest.raises(GraphInputError):
        mp.plot(tmp_path / "bad.png", key={})
