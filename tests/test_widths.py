"""Every public function runs on every supported pair of index widths alike.

Modelled on the guard idea in scipy.sparse.csgraph's test-suite (common
practice there): this test fails when a public function is added to
``toporank.__all__`` without being listed in ``CALLS``.
"""

from __future__ import annotations

import inspect
import os
import tempfile

import numpy as np
import pytest
import scipy.sparse as sp

import toporank

# A small DAG: 0 -> 1 -> 3, 0 -> 2 -> 3, 4 isolated, plus 2 -> 1.
SRC = np.array([0, 0, 1, 2, 2])
DST = np.array([1, 2, 3, 3, 1])
N = 5


# (indptr dtype, indices dtype): every pair the core reads without a copy.
PAIRS = [
    (np.int32, np.int32),
    (np.int64, np.int64),
    (np.int64, np.int32),
    (np.int32, np.int64),
    (np.int64, np.uint32),
    (np.int32, np.uint32),
]


def _pair_name(pair):
    return "-".join(np.dtype(t).name for t in pair)


def _dag(dtype, ids=None):
    matrix = sp.csr_array((np.ones(len(SRC)), (SRC, DST)), shape=(N, N))
    matrix.indptr = matrix.indptr.astype(dtype)
    matrix.indices = matrix.indices.astype(dtype if ids is None else ids)
    return matrix


# name -> function of a graph returning something comparable across widths.
CALLS = {
    "as_graph": lambda g: toporank.as_graph(g).n,
    "order": lambda g: toporank.order(g, tie="priority").tolist(),
    "positions": lambda g: toporank.positions(toporank.order(g)).tolist(),
    "read_graph": lambda g: _saved_and_read(g).indices.tolist(),
    "save_graph": lambda g: _packed_and_reopened(g),
    "verify_order": lambda g: _verified(g),
    "order_metrics": lambda g: dict(
        toporank.order_metrics(g, toporank.order(g), key=np.arange(N)[::-1])
    ),
    "schedule": lambda g: toporank.schedule(g, workers=2, tie="critical").records(),
    "compare": lambda g: [
        {k: v for k, v in row.items() if k != "seconds"}
        for row in toporank.compare(g, workers=2, repeat=1).records()
    ],
    "levels": lambda g: [a.tolist() for a in toporank.levels(g, grouped=True, threads=2)],
    "heights": lambda g: toporank.heights(g, threads=2).tolist(),
    "critical_path": lambda g: toporank.critical_path(g, edge_weight="data").path.tolist(),
    "path_counts": lambda g: toporank.path_counts(g).exact_through_edge.tolist(),
    "main_path": lambda g: toporank.main_path(g, method="key-route", routes=2).nodes.tolist(),
    "preprint_transform": lambda g: toporank.preprint_transform(
        _with_back_edge(g)
    ).edge_of.tolist(),
    "components": lambda g: toporank.components(g).tolist(),
    "condense": lambda g: toporank.condense(g).dag.toarray().tolist(),
    "cycle_witness": lambda g: toporank.cycle_witness(_with_back_edge(g), through=1).tolist(),
    "cut_cycles": lambda g: toporank.cut_cycles(g).order.tolist(),
    "DynamicOrder": lambda g: _dynamic_run(g),
    "Frontier": lambda g: _frontier_run(g),
}


def _verified(matrix):
    """A valid order passes (None); a reversed one fails naming the same edge."""
    good = toporank.verify_order(matrix, toporank.order(matrix))
    try:
        toporank.verify_order(matrix, toporank.order(matrix)[::-1])
    except toporank.InvalidOrderError as e:
        return good, str(e), e.edge
    raise AssertionError("a reversed order of a graph with edges passed")


def _with_back_edge(matrix):
    """The same graph plus the edge 3 -> 0, closing the cycle 0 -> 1 -> 3 -> 0."""
    row = np.append(SRC, 3)
    col = np.append(DST, 0)
    cyclic = sp.csr_array((np.ones(len(row)), (row, col)), shape=(N, N))
    cyclic.indptr = cyclic.indptr.astype(matrix.indptr.dtype)
    cyclic.indices = cyclic.indices.astype(matrix.indices.dtype)
    return cyclic


def _dynamic_run(graph):
    d = toporank.DynamicOrder(graph)
    d.add_edge(4, 0)
    d.add_edges(np.array([4], dtype=np.int32), np.array([3], dtype=np.int32))
    d.remove_edge(2, 1)
    return d.order.tolist(), d.graph.indices.tolist()


def _frontier_run(graph):
    f = toporank.Frontier(graph, tie="critical")
    first = f.take(1).tolist()
    f.finish(first)
    skipped = f.fail(f.take(1)).tolist()
    return first, skipped, f.take().tolist(), f.remaining


def _saved_and_read(matrix):
    with tempfile.TemporaryDirectory() as folder:
        path = os.path.join(folder, "g.npz")
        sp.save_npz(path, matrix)
        return toporank.read_graph(path)


def _packed_and_reopened(matrix):
    """A saved graph reopens with the same arrays, at the width it was saved with."""
    with tempfile.TemporaryDirectory() as folder:
        path = os.path.join(folder, "g.graph")
        toporank.save_graph(toporank.as_graph(matrix), path)
        g = toporank.read_graph(path)
        assert g.indices.dtype == matrix.indices.dtype
        return g.indptr.tolist(), g.indices.tolist()


# Public callables that take no graph.
NOT_GRAPH_FUNCTIONS = {
    "Graph",
    "OrderMetrics",
    "Schedule",
    "Comparison",
    "CriticalPath",
    "PathCounts",
    "MainPath",
    "Preprint",
    "Condensation",
    "CycleCut",
    "ReadOptions",
}


def _public_functions():
    for name in toporank.__all__:
        obj = getattr(toporank, name)
        if inspect.isclass(obj) and issubclass(obj, Exception):
            continue
        if callable(obj) and name not in NOT_GRAPH_FUNCTIONS:
            yield name


def test_every_public_function_is_listed():
    missing = sorted(set(_public_functions()) - set(CALLS))
    assert not missing, f"add these public functions to CALLS: {missing}"


@pytest.mark.parametrize("pair", PAIRS, ids=_pair_name)
@pytest.mark.parametrize("name", sorted(CALLS))
def test_every_width_pair_agrees_with_int64(name, pair):
    graph, wide = _dag(*pair), _dag(np.int64)
    kept = toporank.as_graph(graph)
    assert (kept.indptr.dtype, kept.indices.dtype) == pair
    assert CALLS[name](graph) == CALLS[name](wide)


@pytest.mark.parametrize("pair", PAIRS, ids=_pair_name)
def test_every_width_pair_is_not_copied(pair):
    matrix = _dag(*pair)
    g = toporank.as_graph(matrix)
    assert g.indptr is matrix.indptr and g.indices is matrix.indices
    g = toporank.Graph.from_csr(matrix.indptr, matrix.indices)
    assert np.shares_memory(g.indptr, matrix.indptr)
    assert np.shares_memory(g.indices, matrix.indices)


def test_other_dtypes_are_widened_to_int64():
    """The rule for dtypes the core does not read: widen to int64 (a copy)."""
    g = toporank.Graph.from_csr(np.array([0, 1, 1], dtype=np.uint32), np.array([1], np.int16))
    assert (g.indptr.dtype, g.indices.dtype) == (np.int64, np.int64)
    assert toporank.order(g).tolist() == [0, 1]


def test_a_mixed_graph_is_ordered_without_a_per_edge_allocation():
    """int64 offsets with int32 ids: no copy of indices on the way to the core.

    Widening the ids to int64 (what a width-unifying copy would do) allocates
    8 bytes per edge through numpy, which tracemalloc sees.
    """
    import tracemalloc

    rng = np.random.default_rng(3)
    n, m = 200_000, 2_000_000
    src = np.sort(rng.integers(0, n - 1, m))
    dst = (src + 1 + rng.integers(0, 50, m)).clip(max=n - 1).astype(np.int32)
    indptr = np.searchsorted(src, np.arange(n + 1)).astype(np.int64)
    graph = toporank.Graph.from_csr(indptr, dst)
    toporank.order(graph)  # warm up
    tracemalloc.start()
    try:
        order = toporank.order(graph)
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    assert peak < m, f"{peak} bytes traced for {m} edges"
    # The order is a topological one (checked edge by edge, common practice).
    position = np.empty(n, dtype=np.int64)
    position[order] = np.arange(n)
    rows = np.repeat(np.arange(n), np.diff(indptr))
    assert np.all(position[rows] < position[dst])
