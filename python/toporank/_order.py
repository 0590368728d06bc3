"""Topological order by Kahn's algorithm, order checks and inverse permutations."""

from __future__ import annotations

from typing import Any, Literal

import numpy as np

from . import _core
from ._errors import GraphInputError, InvalidOrderError
from ._graph import Graph, as_graph, as_nodes
from ._validate import (
    TIES,
    OnCycle,
    integer_ids,
    node_ids,
    on_cycle_choice,
    policy,
    raise_cycle,
    show,
    thread_count,
)

__all__ = ["TIES", "order", "positions", "verify_order"]

Tie = Literal["queue", "stack", "priority", "random"]


def order(
    graph: Any,
    *,
    tie: Tie = "queue",
    key: Any = None,
    descending: bool = False,
    seed: int | None = None,
    on_cycle: OnCycle = "raise",
    n: int | None = None,
    threads: int | None = None,
) -> np.ndarray:
    """Return a topological order of ``graph`` computed by Kahn's algorithm.

    Parameters
    ----------
    graph
        A scipy sparse matrix or array (stored entry ``A[i, j]`` is the edge
        ``i -> j``: ``i`` comes first; must be square), a tuple ``(src, dst)``
        of 1-D numpy integer arrays, an ``(m, 2)`` numpy integer array, a
        sequence of ``(u, v)`` pairs of hashable labels, or a :class:`Graph`.
        Duplicate edges are allowed; a self-loop is a cycle.
    tie
        Which ready node (in-degree 0, not yet emitted) goes next:
        ``"queue"`` the one that became ready first (FIFO), ``"stack"`` the
        one that became ready last (LIFO), ``"priority"`` the smallest
        ``key`` (ties to the smaller node id), ``"random"`` a uniformly random
        one drawn from ``seed``.
    key
        For ``tie="priority"``: one value per node (an int, float or
        datetime64 array of length ``n``, e.g. publication dates; for
        labelled graphs also a mapping label -> value).
        ``None`` means the node id, which gives the lexicographically smallest
        order.
    descending
        For ``tie="priority"``: largest key first (ties still to the smaller id).
    seed
        For ``tie="random"``: a non-negative integer; the same seed gives the
        same order. ``None`` draws fresh entropy, so runs differ.
    on_cycle
        ``"raise"`` raises :class:`CyclicGraphError` for a graph with a cycle;
        ``"partial"`` returns the nodes ordered before the ready set ran dry;
        ``"condense"`` returns every node, each strongly connected component
        as a contiguous block (members in ascending id; for ``tie="priority"``
        in key order, ties to the smaller id), the blocks in Kahn's order of
        the condensation under ``tie`` (a block ranks as its first member);
        ``"cut"`` removes the edges :func:`toporank.cut_cycles` finds and
        orders what remains under ``tie``. On a DAG both give the same order
        as ``"raise"``. See :func:`toporank.condense` and
        :func:`toporank.cut_cycles`.
    n
        Node count for the edge-array forms (to include isolated nodes whose
        ids exceed every edge's); default ``max id + 1``.
    threads
        Workers sharing the in-degree pass on graphs of millions of edges
        (the loop itself is sequential). ``None`` reads the environment
        variable ``TOPORANK_NUM_THREADS``, else uses every usable core;
        counts beyond the usable cores are capped to them. The order is the
        same for every thread count.

    Returns
    -------
    numpy.ndarray
        Node ids in topological order, in the graph's index dtype (int32 or
        int64), or the labels (object array) for a labelled graph.

    Raises
    ------
    CyclicGraphError
        The graph has a cycle (and ``on_cycle="raise"``).
    GraphInputError
        Malformed input; the message names the offending value.

    Notes
    -----
    The semantics, identical for every policy: the nodes of in-degree 0
    enter the ready set in ascending id (so the queue emits the smallest-id
    source first and the stack the largest-id one); when a node is emitted,
    its successors are examined in the order they are stored in its CSR row
    and enter the ready set in that order as their in-degree reaches 0. For
    edge-list input a row keeps the input order of its edges. Cost is
    O(V + E), plus a log factor for ``"priority"``; the GIL is released while
    the core runs, so do not mutate the input arrays during a call.

    Examples
    --------
    >>> import numpy as np, toporank
    >>> src, dst = np.array([3, 3, 0, 1]), np.array([1, 0, 2, 2])
    >>> toporank.order((src, dst))
    array([3, 1, 0, 2])
    >>> toporank.order((src, dst), tie="stack")
    array([3, 0, 1, 2])
    >>> toporank.order((src, dst), tie="priority", key=np.array([2000, 1990, 2010, 1985]))
    array([3, 1, 0, 2])
    >>> toporank.order([("core", "io"), ("core", "net"), ("io", "app"), ("net", "app")])
    array(['core', 'io', 'net', 'app'], dtype=object)
    """
    g = as_graph(graph, n)
    key_array, seed_value = policy(g, tie, key, descending, seed)
    workers = thread_count(threads)
    on_cycle = on_cycle_choice(on_cycle)
    if on_cycle in ("condense", "cut"):
        found = _core.order_despite_cycles(
            g.indptr, g.indices, on_cycle, tie, key_array, bool(descending), seed_value
        )
        return as_nodes(g, found)
    kahn = _core.kahn_order(
        g.indptr, g.indices, tie, key_array, bool(descending), seed_value, workers
    )
    if isinstance(kahn, _core.Cyclic):
        if on_cycle == "raise":
            raise_cycle(g, kahn)
        return as_nodes(g, kahn.order)
    return as_nodes(g, kahn)


def positions(order: Any) -> np.ndarray:
    """Return the position of each node in ``order`` (the inverse permutation).

    ``order`` must be a permutation of ``0..len(order) - 1``; the result
    ``pos`` satisfies ``order[pos[v]] == v``.

    Raises
    ------
    InvalidOrderError
        ``order`` repeats a node, misses one, or holds a value out of range.

    Examples
    --------
    >>> import numpy as np, toporank
    >>> toporank.positions(np.array([2, 0, 1]))
    array([1, 2, 0])
    """
    array = np.asarray(order)
    if array.ndim != 1 or (len(array) and array.dtype.kind not in "iu"):
        raise GraphInputError(
            f"order must be a 1-D integer array, got dtype {array.dtype} and shape "
            f"{array.shape}; for labels use {{label: i for i, label in enumerate(order)}}"
        )
    ids = integer_ids(array, "order")
    found = _core.positions(ids, len(ids))
    if isinstance(found, _core.Violation):
        raise order_error(None, found, ids, array)
    return found


def verify_order(graph: Any, order: Any, *, n: int | None = None) -> None:
    """Return ``None`` if ``order`` is a topological order of ``graph``; raise otherwise.

    ``order`` lists node ids (labels for a labelled graph). It must hold each
    node exactly once, and every edge ``u -> v`` must have ``u`` before ``v``.

    Raises
    ------
    InvalidOrderError
        Naming the first violated edge ``(u, v)`` in stored edge order with
        both positions, or the duplicated, missing or unknown node.

    Examples
    --------
    >>> import numpy as np, toporank
    >>> edges = np.array([[0, 1], [1, 2]])
    >>> toporank.verify_order(edges, np.array([0, 1, 2]))
    >>> toporank.verify_order(edges, np.array([1, 0, 2]))
    Traceback (most recent call last):
    ...
    toporank._errors.InvalidOrderError: edge 0 -> 1 goes backwards: 0 is at position 1, ...
    """
    g = as_graph(graph, n)
    ids, given = node_ids(g, order, "order")
    found = _core.verify_order(g.indptr, g.indices, ids)
    if found is not None:
        raise order_error(g, found, ids, given)


def order_error(
    g: Graph | None, found: _core.Violation, ids: np.ndarray, given: Any
) -> InvalidOrderError:
    """The InvalidOrderError of a core ``Violation``; ``given`` is the order as passed."""

    def name(node: int | None) -> Any:
        assert node is not None
        return node if g is None or g.labels is None else g.labels[node]

    reason = found.kind
    if reason == "edge":
        edge, pos_u, pos_v = found.edge, found.first, found.second
        assert pos_u is not None and pos_v is not None
        u, v = name(found.source), name(found.target)
        what = "is a self-loop" if pos_u == pos_v else "goes backwards"
        return InvalidOrderError(
            f"edge {u} -> {v} {what}: {u} is at position {pos_u}, {v} at position {pos_v} "
            f"(stored edge {edge})",
            reason="edge",
            edge=(u, v),
            edge_index=edge,
            positions=(pos_u, pos_v),
        )
    if reason == "duplicate":
        first, second = found.first, found.second
        assert first is not None and second is not None
        node = name(found.node)
        return InvalidOrderError(
            f"node {node} appears twice, at positions {first} and {second}",
            reason="duplicate",
            node=node,
            positions=(first, second),
        )
    if reason == "missing":
        node = name(found.node)
        return InvalidOrderError(
            f"node {node} is missing from the order", reason="missing", node=node
        )
    position = found.position
    assert position is not None
    value = given[position]
    if isinstance(value, np.generic):
        value = value.item()
    total = len(ids) if g is None else g.n
    return InvalidOrderError(
        f"order[{position}] = {show(value)} is not a node of the graph (it has {total} nodes)",
        reason="unknown",
        node=value,
    )
