"""Graphs with cycles: components, condensation, witnesses and cuts.

Outside references: scipy.sparse.csgraph.connected_components(connection=
"strong") and networkx (strongly_connected_components, condensation,
shortest_path_length, is_directed_acyclic_graph, has_path); brute-force
minimum cuts computed here; the Eades, Lin & Smyth bound (IPL 47(6), 1993).
"""

from __future__ import annotations

import itertools
import time

import networkx as nx
import numpy as np
import pytest
import scipy.sparse as sp
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.sparse.csgraph import connected_components

import toporank
from graphs import check_topological, edge_lists, to_networkx
from toporank._synthetic import citation_dag, with_back_edges

TIES = ("queue", "stack", "priority", "random")


def canonical(labels):
    """A partition as 'smallest node of my block' per node, so label values do not matter."""
    labels = np.asarray(labels)
    first = {}
    for v, label in enumerate(labels.tolist()):
        first.setdefault(label, v)
    return [first[label] for label in labels.tolist()]


def nx_partition(src, dst, n):
    block = [0] * n
    for members in nx.strongly_connected_components(to_networkx(src, dst, n)):
        for v in members:
            block[v] = min(members)
    return block


def csr_of(src, dst, n):
    return sp.csr_array((np.ones(len(src)), (src, dst)), shape=(n, n))


# ---------------------------------------------------------------- components


@given(edge_lists(max_nodes=14, max_edges=40, acyclic=False))
def test_components_match_scipy_and_networkx(graph):
    src, dst, n = graph
    labels = toporank.components((src, dst), n=n)
    assert len(labels) == n
    # scipy.sparse.csgraph: same partition (compared as partitions).
    if n:
        _, theirs = connected_components(csr_of(src, dst, n), directed=True, connection="strong")
        assert canonical(labels) == canonical(theirs)
    # networkx: same partition.
    assert canonical(labels) == nx_partition(src, dst, n)
    # Numbering: 0..count-1, and every edge goes to an equal or larger label.
    assert sorted(set(labels.tolist())) == list(range(len(set(labels.tolist()))))
    assert np.all(labels[src] <= labels[dst])


def test_components_textbook_example():
    # Cormen, Leiserson, Rivest & Stein, Introduction to Algorithms (3rd ed.),
    # Figure 22.9 (edges from memory): components {a,b,e}, {c,d}, {f,g}, {h}.
    edges = [("a", "b"), ("b", "c"), ("b", "e"), ("b", "f"), ("c", "d"), ("c", "g"),
             ("d", "c"), ("d", "h"), ("e", "a"), ("e", "f"), ("f", "g"), ("g", "f"),
             ("g", "h"), ("h", "h")]  # fmt: skip
    cond = toporank.condense(edges)
    blocks = [sorted(cond.members(c).tolist()) for c in range(cond.count)]
    assert blocks == [["a", "b", "e"], ["c", "d"], ["f", "g"], ["h"]]
    assert cond.sizes.tolist() == [3, 2, 2, 1]


def test_ten_million_node_path_and_ring():
    n = 10_000_000
    indptr = np.minimum(np.arange(n + 1, dtype=np.int32), n - 1)
    indices = np.arange(1, n, dtype=np.int32)
    labels = toporank.components(toporank.Graph.from_csr(indptr, indices))
    assert labels.dtype == np.int32
    assert np.array_equal(labels, np.arange(n, dtype=np.int32))
    # Walked from its far end, the search goes ten million nodes deep.
    back = toporank.Graph.from_csr(
        np.maximum(np.arange(n + 1, dtype=np.int32) - 1, 0), np.arange(n - 1, dtype=np.int32)
    )
    assert np.array_equal(toporank.components(back), np.arange(n - 1, -1, -1, dtype=np.int32))
    ring = toporank.Graph.from_csr(np.arange(n + 1, dtype=np.int32), np.roll(np.arange(n), -1))
    assert not toporank.components(ring).any()


def test_empty_and_isolated_nodes():
    none = (np.zeros(0, np.int64), np.zeros(0, np.int64))
    assert toporank.components(none).tolist() == []
    # No edges: each node its own component, numbered by id (common practice).
    assert toporank.components(none, n=3).tolist() == [0, 1, 2]
    cond = toporank.condense(none, n=3)
    assert cond.dag.shape == (3, 3) and cond.dag.nnz == 0
    assert toporank.cycle_witness(none, n=3) is None
    cut = toporank.cut_cycles(none, n=3)
    assert len(cut) == 0 and cut.order.tolist() == [0, 1, 2]
    for mode in ("condense", "cut"):
        assert toporank.order(none, n=3, on_cycle=mode).tolist() == [0, 1, 2]


def test_self_loop_is_a_one_node_cycle_everywhere():
    src, dst = np.array([0, 1, 1]), np.array([1, 1, 2])
    labels = toporank.components((src, dst))
    assert canonical(labels) == nx_partition(src, dst, 3) == [0, 1, 2]
    assert toporank.cycle_witness((src, dst)).tolist() == [1]
    assert toporank.cycle_witness((src, dst), through=1).tolist() == [1]
    assert toporank.cycle_witness((src, dst), through=0) is None
    cut = toporank.cut_cycles((src, dst))
    assert cut.edge_index.tolist() == [1]
    assert (cut.sources.tolist(), cut.targets.tolist()) == ([1], [1])
    assert cut.order.tolist() == [0, 1, 2]
    assert toporank.order((src, dst), on_cycle="condense").tolist() == [0, 1, 2]


# -------------------------------------------------------------- condensation


@given(edge_lists(max_nodes=12, max_edges=36, acyclic=False))
def test_condensation_matches_networkx(graph):
    src, dst, n = graph
    cond = toporank.condense((src, dst), n=n)
    assert cond.dag.shape == (cond.count, cond.count)
    theirs = nx.condensation(to_networkx(src, dst, n))
    assert cond.count == theirs.number_of_nodes()
    # Relabel: component c of ours is networkx's component of its members.
    mapping = theirs.graph["mapping"]
    ours_to_theirs = {}
    for c in range(cond.count):
        members = cond.members(c).tolist()
        assert len(members) == cond.sizes[c]
        assert set(members) == theirs.nodes[mapping[members[0]]]["members"]
        ours_to_theirs[c] = mapping[members[0]]
    coo = cond.dag.tocoo()
    ours = {(ours_to_theirs[a], ours_to_theirs[b]) for a, b in zip(coo.row, coo.col, strict=True)}
    assert ours == set(theirs.edges())
    assert cond.dag.nnz == theirs.number_of_edges()
    assert np.all(coo.row < coo.col)
    # Values count the graph's edges between the two components (plain count).
    crossing = cond.labels[src] != cond.labels[dst]
    pairs = list(zip(cond.labels[src][crossing].tolist(), cond.labels[dst][crossing].tolist(),
                     strict=True))  # fmt: skip
    for a, b in zip(coo.row.tolist(), coo.col.tolist(), strict=True):
        assert cond.dag[a, b] == pairs.count((a, b))


@given(edge_lists(max_nodes=12, max_edges=36, acyclic=False), st.sampled_from(TIES),
       st.integers(0, 2**64 - 1))  # fmt: skip
def test_condense_mode_orders_blocks_topologically(graph, tie, seed):
    src, dst, n = graph
    key = np.arange(n)[::-1] % 3 if tie == "priority" else None
    order = toporank.order(
        (src, dst), n=n, tie=tie, key=key, seed=seed if tie == "random" else None,
        on_cycle="condense",
    )  # fmt: skip
    assert sorted(order.tolist()) == list(range(n))
    cond = toporank.condense((src, dst), n=n)
    blocks = [cond.labels[v] for v in order.tolist()]
    runs = [label for k, label in enumerate(blocks) if k == 0 or blocks[k - 1] != label]
    assert len(runs) == cond.count, "every component is one contiguous block"
    # Our checker on our condensation, and networkx's condensation as well.
    toporank.verify_order(cond.dag, np.array(runs, dtype=np.int64))
    theirs = nx.condensation(to_networkx(src, dst, n))
    position = {v: p for p, v in enumerate(order.tolist())}
    for a, b in theirs.edges():
        assert max(position[v] for v in theirs.nodes[a]["members"]) < min(
            position[v] for v in theirs.nodes[b]["members"]
        )
    # Members follow node id, or (key, id) under tie="priority".
    for a, b in itertools.pairwise(order.tolist()):
        if cond.labels[a] == cond.labels[b]:
            assert (key[a], a) < (key[b], b) if tie == "priority" else a < b


@given(edge_lists(max_nodes=12, max_edges=36, acyclic=True), st.sampled_from(TIES))
def test_condense_and_cut_modes_equal_plain_order_on_a_dag(graph, tie):
    src, dst, n = graph
    seed = 5 if tie == "random" else None
    plain = toporank.order((src, dst), n=n, tie=tie, seed=seed)
    check_topological(src, dst, n, plain)
    for mode in ("condense", "cut"):
        again = toporank.order((src, dst), n=n, tie=tie, seed=seed, on_cycle=mode)
        assert again.tolist() == plain.tolist()


def test_condense_mode_worked_example():
    # A fictional monorepo: io and net import each other; app needs both.
    modules = [("core", "io"), ("io", "net"), ("net", "io"), ("net", "app"), ("core", "log")]
    order = toporank.order(modules, on_cycle="condense")
    assert order.tolist() == ["core", "io", "net", "log", "app"]
    order = toporank.order(modules, on_cycle="condense", tie="stack")
    assert order.tolist() == ["core", "log", "io", "net", "app"]
    with pytest.raises(toporank.CyclicGraphError):
        toporank.order(modules)
    assert toporank.order(modules, on_cycle="partial").tolist() == ["core", "log"]


# ------------------------------------------------------------ cycle witnesses


def assert_real_cycle(cycle, src, dst):
    edges = set(zip(src.tolist(), dst.tolist(), strict=True))
    cycle = cycle.tolist()
    assert len(set(cycle)) == len(cycle) >= 1
    for k, u in enumerate(cycle):
        assert (u, cycle[(k + 1) % len(cycle)]) in edges


@given(edge_lists(max_nodes=10, max_edges=24, acyclic=False))
def test_cycle_witness_is_a_real_cycle_and_shortest_through_each_node(graph):
    src, dst, n = graph
    g = to_networkx(src, dst, n)
    cycle = toporank.cycle_witness((src, dst), n=n)
    assert (cycle is None) == nx.is_directed_acyclic_graph(g)
    if cycle is not None:
        assert_real_cycle(cycle, src, dst)
    for v in range(n):
        # networkx BFS: a shortest cycle through v is an edge u -> v closing
        # a shortest path v ~> u.
        lengths = nx.single_source_shortest_path_length(g, v)
        best = min((lengths[u] + 1 for u in g.predecessors(v) if u in lengths), default=None)
        found = toporank.cycle_witness((src, dst), through=v, n=n)
        assert (None if found is None else len(found)) == best
        if found is not None:
            assert found[0] == v
            assert_real_cycle(found, src, dst)


def test_cycle_witness_labels_and_errors():
    pairs = [("paper-a", "paper-b"), ("paper-b", "paper-c"), ("paper-c", "paper-a")]
    assert toporank.cycle_witness(pairs, through="paper-b").tolist() == [
        "paper-b", "paper-c", "paper-a",
    ]  # fmt: skip
    with pytest.raises(toporank.GraphInputError, match="paper-z"):
        toporank.cycle_witness(pairs, through="paper-z")
    edges = np.array([[0, 1], [1, 0]])
    for bad in (2, -1, True, 1.5, "x"):
        with pytest.raises(toporank.GraphInputError, match=repr(bad) if bad != 2 else "2"):
            toporank.cycle_witness(edges, through=bad)
    assert toporank.cycle_witness(edges, through=np.int64(1)).tolist() == [1, 0]


# ----------------------------------------------------------------- cycle cuts


def remaining(src, dst, n, cut):
    keep = np.ones(len(src), dtype=bool)
    keep[cut.edge_index] = False
    return src[keep], dst[keep]


def exact_minimum_cut(src, dst, n):
    """Smallest number of stored edges whose removal leaves a DAG, by brute
    force over the edges inside each strongly connected component (networkx
    finds the components); None when a component has more than 10 edges."""
    g = to_networkx(src, dst, n)
    total = int(np.sum(src == dst))
    for members in nx.strongly_connected_components(g):
        inside = [(u, v) for u, v in zip(src.tolist(), dst.tolist(), strict=True)
                  if u != v and u in members and v in members]  # fmt: skip
        if not inside:
            continue
        if len(inside) > 10:
            return None
        for size in range(1, len(inside) + 1):
            if any(
                nx.is_directed_acyclic_graph(
                    nx.DiGraph([e for k, e in enumerate(inside) if k not in drop])
                )
                for drop in map(set, itertools.combinations(range(len(inside)), size))
            ):
                total += size
                break
    return total


@settings(max_examples=150)
@given(edge_lists(max_nodes=8, max_edges=18, acyclic=False))
def test_cut_leaves_a_dag_and_is_minimal(graph):
    src, dst, n = graph
    cut = toporank.cut_cycles((src, dst), n=n)
    # The named edges are the input's edges at those positions.
    assert np.array_equal(src[cut.edge_index], cut.sources)
    assert np.array_equal(dst[cut.edge_index], cut.targets)
    assert np.all(np.diff(cut.edge_index) > 0)
    rest_src, rest_dst = remaining(src, dst, n, cut)
    rest = to_networkx(rest_src, rest_dst, n)
    assert nx.is_directed_acyclic_graph(rest)  # networkx
    check_topological(rest_src, rest_dst, n, cut.order)
    # Minimal: putting back any removed edge u -> v closes a cycle (networkx has_path).
    for u, v in zip(cut.sources.tolist(), cut.targets.tolist(), strict=True):
        assert u == v or nx.has_path(rest, v, u)
    # Edges between components are never cut (networkx components).
    block = nx_partition(src, dst, n)
    assert all(block[u] == block[v] for u, v in zip(cut.sources, cut.targets, strict=True))
    if _components_are_simple_cycles(src, dst, n):
        # Common practice: a simple cycle loses exactly one edge in any minimal
        # cut, so a minimal cut of such a graph is a minimum one (brute force).
        assert len(cut) == exact_minimum_cut(src, dst, n)
    for tie in TIES:
        order = toporank.order((src, dst), n=n, tie=tie, on_cycle="cut",
                               seed=1 if tie == "random" else None)  # fmt: skip
        check_topological(rest_src, rest_dst, n, order)


def _components_are_simple_cycles(src, dst, n):
    """Every strongly connected component (networkx) of 2+ nodes has exactly as
    many edges inside as nodes, and no node has a self-loop."""
    if np.any(src == dst):
        return False
    for members in nx.strongly_connected_components(to_networkx(src, dst, n)):
        inside = sum(u in members and v in members for u, v in zip(src.tolist(), dst.tolist()))
        if len(members) > 1 and inside != len(members):
            return False
    return True


@st.composite
def connected_without_two_cycles(draw):
    """Simple weakly connected graphs with no 2-cycles and no self-loops."""
    n = draw(st.integers(2, 10))
    pairs = {(draw(st.integers(0, v - 1)), v) for v in range(1, n)}
    extra = draw(st.lists(st.tuples(st.integers(0, n - 1), st.integers(0, n - 1)), max_size=25))
    pairs |= {(min(a, b), max(a, b)) for a, b in extra if a != b}
    flips = draw(st.lists(st.booleans(), min_size=len(pairs), max_size=len(pairs)))
    edges = [(b, a) if flip else (a, b) for (a, b), flip in zip(sorted(pairs), flips, strict=True)]
    return np.array([e[0] for e in edges]), np.array([e[1] for e in edges]), n


@given(connected_without_two_cycles())
def test_cut_respects_the_eades_lin_smyth_bound(graph):
    # Eades, Lin & Smyth, IPL 47(6), 1993: for a connected graph without
    # 2-cycles, |cut| <= m/2 - n/6.
    src, dst, n = graph
    assert nx.is_weakly_connected(to_networkx(src, dst, n))
    cut = toporank.cut_cycles((src, dst), n=n)
    assert 6 * len(cut) <= 3 * len(src) - n


def test_cut_size_against_exact_minimum(record_property):
    """Report how close the greedy cut comes to the exact minimum (brute force)."""
    rng = np.random.default_rng(2026)
    ratios = []
    while len(ratios) < 200:
        n = int(rng.integers(3, 9))
        m = int(rng.integers(n, 2 * n + 3))
        src, dst = rng.integers(0, n, m), rng.integers(0, n, m)
        exact = exact_minimum_cut(src, dst, n)
        if not exact:
            continue
        cut = toporank.cut_cycles((src, dst), n=n)
        ratios.append(len(cut) / exact)
    ratios = np.array(ratios)
    summary = (
        f"greedy cut / exact minimum over {len(ratios)} small cyclic graphs: "
        f"mean {ratios.mean():.3f}, worst {ratios.max():.3f}, exact in "
        f"{np.mean(ratios == 1):.0%}"
    )
    record_property("cut_ratio", summary)
    print(summary)
    # Measured: exact in 99% of these seeded graphs, mean 1.002, worst 1.25.
    # The bounds leave room, but a put-back pass that stopped working fails them.
    assert np.mean(ratios == 1) >= 0.9 and ratios.mean() <= 1.05 and ratios.max() <= 1.5


def test_cut_worked_example_and_input_positions():
    # A fictional journal: three papers of one issue cite each other in a ring.
    pairs = [("ed", "p1"), ("p1", "p2"), ("p2", "p3"), ("p3", "p1"), ("p3", "p3")]
    cut = toporank.cut_cycles(pairs)
    assert cut.edge_index.tolist() == [3, 4]
    assert list(zip(cut.sources, cut.targets, strict=True)) == [("p3", "p1"), ("p3", "p3")]
    assert cut.order.tolist() == ["ed", "p1", "p2", "p3"]
    assert toporank.order(pairs, on_cycle="cut").tolist() == ["ed", "p1", "p2", "p3"]
    # Edge-list input out of source order: positions refer to the input rows.
    src, dst = np.array([2, 0, 1, 2]), np.array([0, 1, 2, 3])
    cut = toporank.cut_cycles((src, dst))
    assert len(cut) == 1 and cut.edge_index[0] in (0, 1, 2)
    k = cut.edge_index[0]
    assert (cut.sources[0], cut.targets[0]) == (src[k], dst[k])
    with pytest.raises(toporank.GraphInputError, match="'exact'"):
        toporank.cut_cycles(pairs, method="exact")


# ------------------------------------------------------------- real size


def test_citation_graph_with_back_edges():
    src, dst, _ = citation_dag(100_000, 8, seed=3)
    src, dst = with_back_edges(src, dst, 500, seed=4)
    g = toporank.Graph.from_edges(src, dst, n=100_000)
    matrix = sp.csr_array((np.ones(g.m), g.indices, g.indptr), shape=(g.n, g.n), copy=True)
    # scipy 1.17's strong components never return on a row holding a
    # duplicate entry (seen here with a two-node graph), so merge them first.
    matrix.sum_duplicates()
    count, theirs = connected_components(matrix, directed=True, connection="strong")
    labels = toporank.components(g)
    assert canonical(labels) == canonical(theirs)  # scipy
    assert labels.max() + 1 == count
    assert np.all(labels[src] <= labels[dst])
    assert np.sum(toporank.condense(g).sizes > 1) > 10, "many non-trivial components"

    order = toporank.order(g, on_cycle="condense")
    position = np.empty(g.n, dtype=np.int64)
    position[order] = np.arange(g.n)
    crossing = labels[src] != labels[dst]
    assert np.all(position[src[crossing]] < position[dst[crossing]])

    cut = toporank.cut_cycles(g)
    rest_src, rest_dst = remaining(src, dst, g.n, cut)
    check_topological(rest_src, rest_dst, g.n, cut.order)
    rest = sp.csr_array((np.ones(len(rest_src)), (rest_src, rest_dst)), shape=(g.n, g.n))
    assert connected_components(rest, directed=True, connection="strong")[0] == g.n  # scipy
    assert 0 < len(cut) <= 550, "the 500 added back-edges form a cut; greedy should be close"

    cycle = toporank.cycle_witness(g)
    assert_real_cycle(cycle, src, dst)


# ------------------------------------------------------------------ misc


def test_bad_arguments_are_named():
    with pytest.raises(toporank.GraphInputError, match="'sideways'"):
        toporank.order([(1, 2)], on_cycle="sideways")
    cond = toporank.condense(np.array([[0, 1], [1, 0]]))
    with pytest.raises(toporank.GraphInputError, match="component 3"):
        cond.members(3)
    with pytest.raises(toporank.GraphInputError, match="src"):
        toporank.components((np.array([0, -1]), np.array([1, 1])), n=2)


# ------------------------------------------------- hostile shapes for the cut


@settings(max_examples=100)
@given(edge_lists(max_nodes=40, max_edges=120, acyclic=False))
def test_cut_of_mid_sized_graphs_leaves_a_dag_and_each_cut_edge_closes_a_cycle(graph):
    src, dst, n = graph
    cut = toporank.cut_cycles((src, dst), n=n)
    rest_src, rest_dst = remaining(src, dst, n, cut)
    rest = to_networkx(rest_src, rest_dst, n)
    assert nx.is_directed_acyclic_graph(rest)  # networkx
    check_topological(rest_src, rest_dst, n, cut.order)
    assert cut.untested == 0
    # Components this small are tested without a search budget, so the cut
    # is minimal: each cut edge u -> v closes a cycle (networkx has_path).
    for u, v in zip(cut.sources.tolist(), cut.targets.tolist(), strict=True):
        assert u == v or nx.has_path(rest, v, u)


def local_dag_with_back_edge(n, m, seed):
    """Edges u -> u + 1..20 (clipped at n - 1) plus the back edge n - 1 -> 0."""
    rng = np.random.default_rng(seed)
    src = rng.integers(0, n - 1, m - 1)
    dst = np.minimum(src + rng.integers(1, 21, m - 1), n - 1)
    return np.append(src, n - 1), np.append(dst, 0)


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_cut_of_a_local_dag_with_one_back_edge_is_that_edge(seed):
    # Every cycle passes through the one back edge n - 1 -> 0, so one edge
    # is a smallest cut (common practice); the greedy pass finds it, quickly.
    n, m = 20_000, 200_000
    src, dst = local_dag_with_back_edge(n, m, seed)
    assert not nx.is_directed_acyclic_graph(to_networkx(src, dst, n))  # networkx
    start = time.perf_counter()
    cut = toporank.cut_cycles((src, dst), n=n)
    took = time.perf_counter() - start
    assert cut.edge_index.tolist() == [m - 1]
    rest_src, rest_dst = remaining(src, dst, n, cut)
    assert nx.is_directed_acyclic_graph(to_networkx(rest_src, rest_dst, n))  # networkx
    check_topological(rest_src, rest_dst, n, cut.order)
    assert took < 5.0, f"{took:.1f} s (this shape took minutes before the fix)"


@pytest.mark.parametrize(("n", "m"), [(3_000, 9_000), (1_000, 10_000)])
def test_cut_of_a_uniform_random_graph_is_valid_and_quick(n, m):
    rng = np.random.default_rng(n + m)
    src, dst = rng.integers(0, n, m), rng.integers(0, n, m)
    start = time.perf_counter()
    cut = toporank.cut_cycles((src, dst), n=n)
    took = time.perf_counter() - start
    whole = to_networkx(src, dst, n)
    rest_src, rest_dst = remaining(src, dst, n, cut)
    rest = to_networkx(rest_src, rest_dst, n)
    assert nx.is_directed_acyclic_graph(rest)  # networkx
    check_topological(rest_src, rest_dst, n, cut.order)
    # Every cut edge u -> v lies on a cycle of the graph (networkx has_path).
    for u, v in zip(cut.sources.tolist(), cut.targets.tolist(), strict=True):
        assert u == v or nx.has_path(whole, v, u)
    # Most cut edges close a cycle with the kept edges: the put-back budget
    # gives up on some tests at this size, never on most.
    closing = sum(
        u == v or nx.has_path(rest, v, u)
        for u, v in zip(cut.sources.tolist(), cut.targets.tolist(), strict=True)
    )
    assert closing >= 0.5 * len(cut)
    # Only the edges counted untested may fail to close a cycle: every
    # tested one does (networkx has_path above).
    assert len(cut) - closing <= cut.untested
    assert took < 5.0, f"{took:.1f} s"


def test_cut_counts_untested_edges_only_beyond_the_exact_size():
    # A dense random graph: its one big component is far beyond the size
    # tested without a budget, and the budget runs out on some tests.
    rng = np.random.default_rng(11)
    n, m = 1_000, 10_000
    src, dst = rng.integers(0, n, m), rng.integers(0, n, m)
    cut = toporank.cut_cycles((src, dst), n=n)
    rest_src, rest_dst = remaining(src, dst, n, cut)
    rest = to_networkx(rest_src, rest_dst, n)
    assert nx.is_directed_acyclic_graph(rest)  # networkx
    open_edges = sum(
        not (u == v or nx.has_path(rest, v, u))
        for u, v in zip(cut.sources.tolist(), cut.targets.tolist(), strict=True)
    )
    assert 0 < cut.untested < len(cut)
    assert open_edges <= cut.untested
    # The same count reaches the command line's cut report.
    from toporank._graph import as_graph
    from toporank._report import cut_report

    assert cut_report(as_graph((src, dst), n=n))["untested"] == cut.untested


@given(edge_lists(max_nodes=12, max_edges=30, acyclic=False))
def test_cycle_report_witness_per_component_is_shortest_inside_it(graph):
    from toporank._graph import as_graph
    from toporank._report import cycle_report

    src, dst, n = graph
    g = to_networkx(src, dst, n)
    report = cycle_report(as_graph((src, dst), n=n), witnesses=True)
    # networkx: the components holding a cycle, largest first.
    cyclic = [
        sorted(c)
        for c in nx.strongly_connected_components(g)
        if len(c) > 1 or g.has_edge(*[*c] * 2)
    ]
    assert report["cyclic_components"] == len(cyclic)
    assert report["component_sizes"] == sorted((len(c) for c in cyclic), reverse=True)
    assert len(report["components"]) == len(cyclic)
    seen = set()
    for entry in report["components"]:
        cycle = np.asarray(entry["cycle"], dtype=np.int64)
        members = next(c for c in cyclic if cycle[0] in c)
        assert entry["size"] == len(members)
        assert cycle[0] == members[0]  # the component's smallest node
        assert set(cycle.tolist()) <= set(members)
        assert_real_cycle(cycle, src, dst)
        # networkx BFS on the component alone: a shortest cycle through the
        # start is an edge u -> start closing a shortest start ~> u path.
        inside = g.subgraph(members)
        lengths = nx.single_source_shortest_path_length(inside, members[0])
        best = min(lengths[u] + 1 for u in inside.predecessors(members[0]) if u in lengths)
        assert len(cycle) == best
        seen.add(members[0])
    assert len(seen) == len(cyclic)


def test_cycle_report_witnesses_take_one_pass_beside_a_wide_node():
    from toporank._graph import as_graph
    from toporank._report import cycle_report

    # 4,000 two-node cycles beside one node with 200,000 successors: one
    # search per component scanning every edge took seconds here; a search
    # kept inside each component is one pass over the graph.
    k, wide = 4_000, 200_000
    src = np.concatenate([np.arange(0, 2 * k, 2), np.arange(1, 2 * k, 2), np.full(wide, 2 * k)])
    dst = np.concatenate(
        [np.arange(1, 2 * k, 2), np.arange(0, 2 * k, 2), 2 * k + 1 + np.arange(wide)]
    )
    g = as_graph((src, dst))
    cycle_report(g, witnesses=True)  # warm up
    start = time.perf_counter()
    report = cycle_report(g, witnesses=True)
    took = time.perf_counter() - start
    assert report["cyclic_components"] == k
    # networkx: each component is a 2-cycle {2i, 2i + 1}, shortest cycle length 2.
    whole = to_networkx(src[: 2 * k], dst[: 2 * k], 2 * k)
    assert sorted(map(sorted, nx.simple_cycles(whole))) == [[2 * i, 2 * i + 1] for i in range(k)]
    assert all(entry["cycle"] == [2 * i, 2 * i + 1] for i, entry in enumerate(report["components"]))
    assert took < 0.5, f"{took:.2f} s (this shape took 1.6-3.6 s with a search per component)"


@pytest.mark.parametrize("form", ["edge arrays", "csr", "file not grouped by source"])
def test_cut_edges_are_named_in_input_order_for_every_graph_form(form, tmp_path):
    # A ring of 3,000 nodes with random chords both ways: many cut edges,
    # self-loops included, spread over the rows.
    rng = np.random.default_rng(11)
    n = 3_000
    ring = np.arange(n)
    src = np.concatenate([ring, rng.integers(0, n, 6_000), [5, 5]])
    dst = np.concatenate([(ring + 1) % n, rng.integers(0, n, 6_000), [5, 9]])
    order = rng.permutation(len(src))
    src, dst = src[order], dst[order]
    if form == "edge arrays":
        graph = toporank.Graph.from_edges(src, dst, n=n)
        named_src, named_dst = src, dst
    elif form == "csr":
        by_source = np.argsort(src, kind="stable")
        named_src, named_dst = src[by_source], dst[by_source]
        indptr = np.concatenate([[0], np.cumsum(np.bincount(named_src, minlength=n))])
        graph = toporank.Graph.from_csr(indptr, named_dst)
    else:
        path = tmp_path / "edges.tsv"
        path.write_text("".join(f"{u}\t{v}\n" for u, v in zip(src, dst, strict=True)))
        graph = toporank.read_graph(path)
        named_src, named_dst = src, dst
        assert graph.edge_input_positions() is not None
    cut = toporank.cut_cycles(graph)
    assert len(cut) > 100 and 5 in cut.sources[cut.sources == cut.targets]
    assert np.all(np.diff(cut.edge_index) > 0)
    assert np.array_equal(named_src[cut.edge_index], cut.sources)
    assert np.array_equal(named_dst[cut.edge_index], cut.targets)
    keep = np.ones(len(src), dtype=bool)
    keep[cut.edge_index] = False
    rest = nx.DiGraph(list(zip(named_src[keep].tolist(), named_dst[keep].tolist(), strict=True)))
    assert nx.is_directed_acyclic_graph(rest)  # networkx
