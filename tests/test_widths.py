"""Every public function runs on int32 and int64 index arrays alike.

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


def _dag(dtype):
    matrix = sp.csr_array((np.ones(len(SRC)), (SRC, DST)), shape=(N, N))
    matrix.indptr = matrix.indptr.astype(dtype)
    matrix.indices = matrix.indices.astype(dtype)
    return matrix


# name -> function of a graph returning something comparable across widths.
CALLS = {
    "as_graph": lambda g: toporank.as_graph(g).n,
    "order": lambda g: toporank.order(g, tie="priority").tolist(),
    "positions": lambda g: toporank.positions(toporank.order(g)).tolist(),
    "read_graph": lambda g: _saved_and_read(g).indices.tolist(),
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
    coo = matrix.tocoo()
    row = np.append(coo.row, 3)
    col = np.append(coo.col, 0)
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


# Public callables that take no graph.
NOT_GRAPH_FUNCTIONS = {
    "Graph",
    "OrderMetrics",
    "Schedule",
    "Comparison",
    "CriticalPath",
    "PathCounts",
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


@pytest.mark.parametrize("name", sorted(CALLS))
def test_int32_and_int64_agree(name):
    narrow, wide = _dag(np.int32), _dag(np.int64)
    assert toporank.as_graph(narrow).indices.dtype == np.int32
    assert toporank.as_graph(wide).indices.dtype == np.int64
    assert CALLS[name](narrow) == CALLS[name](wide)


def test_int32_and_int64_arrays_are_not_copied():
    for dtype in (np.int32, np.int64):
        matrix = _dag(dtype)
        g = toporank.as_graph(matrix)
        assert g.indptr is matrix.indptr and g.indices is matrix.indices
