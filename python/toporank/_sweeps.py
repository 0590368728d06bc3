"""Sweeps along a topological order: levels, heights, critical path, path counts.

Each is one O(V + E) pass (two for the quantities that also need the
reverse direction) run by the compiled core with the GIL released.

Per-node arrays are indexed by node id; for a graph built from label pairs,
node ``i`` is the ``i``-th distinct label in first-seen order (the
``nodes`` attribute of the results, or ``toporank.as_graph(pairs).labels``).
Per-edge arrays follow the package's edge order: the stored order of a CSR
matrix (the order of its ``.data``), the input order of an edge list or of
label pairs, the ``.tocoo()`` order of other sparse formats.
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass, field
from functools import cached_property
from typing import Any, Literal

import numpy as np

from . import _core
from ._errors import CyclicGraphError, GraphInputError
from ._graph import (
    THREADS_VARIABLE,
    Graph,
    as_graph,
    as_nodes,
    edge_values,
    node_weights,
    thread_count,
)

__all__ = [
    "CriticalPath",
    "PathCounts",
    "critical_path",
    "heights",
    "levels",
    "path_counts",
]

ON_CYCLE = ("raise",)

OnCycle = Literal["raise"]


def _check_on_cycle(on_cycle: str) -> None:
    if on_cycle not in ON_CYCLE:
        raise GraphInputError(f"on_cycle must be one of {ON_CYCLE}, got {on_cycle!r}")


def _raise_if_cyclic(g: Graph, cyclic: tuple[np.ndarray, np.ndarray, np.ndarray] | None) -> None:
    if cyclic is not None:
        emitted, blocked, cycle = cyclic
        raise CyclicGraphError(as_nodes(g, cycle), as_nodes(g, emitted), as_nodes(g, blocked))


def _all_nodes(g: Graph) -> np.ndarray:
    return as_nodes(g, np.arange(g.n, dtype=g.indptr.dtype))


def levels(
    graph: Any,
    *,
    grouped: bool = False,
    threads: int | None = None,
    on_cycle: OnCycle = "raise",
    n: int | None = None,
) -> Any:
    """Return each node's level: 0 for sources, else 1 + the largest level of its predecessors.

    The level is the length, in edges, of the longest path from any source
    to the node. Nodes of one level have no path between them, so they can
    be processed together once all lower levels are done.

    Parameters
    ----------
    graph
        Any graph form :func:`toporank.order` accepts.
    grouped
        Return a list with one array of nodes per level (ascending node id
        inside a level; labels for a labelled graph) instead of the
        per-node array.
    threads
        Worker threads for the frontier-parallel loop. ``None`` reads the
        environment variable ``TOPORANK_NUM_THREADS``, else runs the serial
        loop: on citation-like graphs the serial FIFO sweep (with
        prefetching, no atomics) measured faster than two workers counting
        in-degrees down atomically. Workers are started on the first
        parallel call (never at import) and rebuilt in a forked child. The
        result is the same for every thread count.
    on_cycle
        ``"raise"`` (the only choice for now) raises :class:`CyclicGraphError`.
    n
        Node count for the edge-array forms, as in :func:`toporank.order`.

    Returns
    -------
    numpy.ndarray or list of numpy.ndarray
        Per node id, its level, in the graph's index dtype; or, with
        ``grouped=True``, the nodes of level 0, 1, ... in that order.

    Raises
    ------
    CyclicGraphError
        The graph has a cycle; the error names one.
    GraphInputError
        Malformed input or a bad ``threads`` value.

    Notes
    -----
    One pass of Kahn's algorithm run frontier by frontier, O(V + E). With
    more than one thread each frontier is shared among the workers, with
    in-degrees counted down atomically; frontiers under about a thousand
    nodes stay on one thread. Graphs with more than ``2**32 - 1`` nodes or
    edges always run on one thread.

    Examples
    --------
    >>> import numpy as np, toporank
    >>> src, dst = np.array([0, 0, 1, 2, 3]), np.array([1, 2, 3, 3, 4])
    >>> toporank.levels((src, dst), threads=1)
    array([0, 1, 1, 2, 3])
    >>> toporank.levels((src, dst), grouped=True, threads=1)
    [array([0]), array([1, 2]), array([3]), array([4])]
    >>> steps = [("fetch", "build"), ("lint", "build"), ("build", "ship")]
    >>> for level in toporank.levels(steps, grouped=True):
    ...     print(level.tolist())
    ['fetch', 'lint']
    ['build']
    ['ship']
    """
    g = as_graph(graph, n)
    _check_on_cycle(on_cycle)
    serial_default = threads is None and not os.environ.get(THREADS_VARIABLE)
    workers = 1 if serial_default else thread_count(threads)
    cyclic, level, nodes, offsets = _core.levels(g.indptr, g.indices, workers, bool(grouped))
    _raise_if_cyclic(g, cyclic)
    if not grouped:
        return level
    assert nodes is not None and offsets is not None
    nodes = as_nodes(g, nodes)
    return [nodes[offsets[k] : offsets[k + 1]] for k in range(len(offsets) - 1)]


def heights(
    graph: Any,
    *,
    threads: int | None = None,
    on_cycle: OnCycle = "raise",
    n: int | None = None,
) -> np.ndarray:
    """Return the length, in edges, of the longest path from every node to any sink.

    Sinks (nodes without successors) have height 0. The height equals the
    level in the reversed graph; ``levels(g)[v] + heights(g)[v]`` is the
    length of the longest path through ``v``.

    Parameters
    ----------
    graph
        Any graph form :func:`toporank.order` accepts.
    threads, on_cycle, n
        As in :func:`levels`; the result is the same for every thread count.

    Returns
    -------
    numpy.ndarray
        Per node id, its height, in the graph's index dtype.

    Raises
    ------
    CyclicGraphError
        The graph has a cycle.

    Examples
    --------
    >>> import numpy as np, toporank
    >>> src, dst = np.array([0, 0, 1, 2, 3]), np.array([1, 2, 3, 3, 4])
    >>> toporank.heights((src, dst), threads=1)
    array([3, 2, 2, 1, 0])
    """
    g = as_graph(graph, n)
    _check_on_cycle(on_cycle)
    cyclic, height = _core.heights(g.indptr, g.indices, thread_count(threads))
    _raise_if_cyclic(g, cyclic)
    return height


@dataclass(frozen=True, eq=False)
class CriticalPath:
    """The critical-path-method quantities of a DAG (see :func:`critical_path`).

    Attributes
    ----------
    length : float
        The largest earliest finish: the length of a longest path.
    path : numpy.ndarray
        One longest path, first node first (ids, or labels).
    earliest_start, latest_start, slack : numpy.ndarray
        Per node id, float64. ``slack = latest_start - earliest_start``.
    duration : numpy.ndarray
        The node weights used (zeros when none were given).
    nodes : numpy.ndarray
        The node of each position of the per-node arrays (ids, or labels).
    """

    length: float
    path: np.ndarray
    earliest_start: np.ndarray
    latest_start: np.ndarray
    slack: np.ndarray
    duration: np.ndarray
    nodes: np.ndarray

    @property
    def earliest_finish(self) -> np.ndarray:
        """Per node: earliest start + duration."""
        return self.earliest_start + self.duration

    @property
    def latest_finish(self) -> np.ndarray:
        """Per node: latest start + duration."""
        return self.latest_start + self.duration

    @property
    def critical(self) -> np.ndarray:
        """Per node: ``True`` when the slack is zero (to 1e-9 of the length, for rounding)."""
        return self.slack <= 1e-9 * max(1.0, abs(self.length))


def critical_path(
    graph: Any,
    *,
    node_weight: Any = None,
    edge_weight: Any = None,
    threads: int | None = None,
    on_cycle: OnCycle = "raise",
    n: int | None = None,
) -> CriticalPath:
    """Return the critical path of a DAG: its length, one longest path and every node's slack.

    Each node ``u`` is a task of duration ``d[u]`` (``node_weight``); each
    edge ``u -> v`` says ``v`` may start ``w`` after ``u`` finishes
    (``edge_weight``, a lag). The definitions are those of the critical path
    method:

    * earliest start ``ES[v] = max(ES[u] + d[u] + w)`` over edges ``u -> v``,
      0 for a node without predecessors; earliest finish ``EF = ES + d``;
    * ``length = max(EF)``;
    * latest finish ``LF[u] = min(LS[v] - w)`` over edges ``u -> v``,
      ``length`` for a node without successors; latest start ``LS = LF - d``;
    * slack (total float) ``LS - ES``: how long a node can slip without
      delaying the whole; zero exactly on the longest paths.

    Parameters
    ----------
    graph
        Any graph form :func:`toporank.order` accepts.
    node_weight
        Durations, one per node (for a labelled graph also a mapping
        label -> number). Default: all 0.
    edge_weight
        Lags, one per edge in the package's edge order (see
        :mod:`toporank` notes: a CSR matrix's stored order, an edge list's
        input order), or ``"data"`` to use a scipy sparse matrix's stored
        values. Default: all 1 when ``node_weight`` is ``None`` (so the
        length counts edges, like :func:`levels`), else all 0 (a plain
        activity-on-node network).
    threads, on_cycle, n
        As in :func:`levels`: ``threads`` share the backward pass (latest
        starts) level by level; the result is the same for every count.

    Returns
    -------
    CriticalPath
        ``length``, ``path``, ``earliest_start``, ``latest_start``, ``slack``,
        ``duration``, ``nodes``; properties ``earliest_finish``,
        ``latest_finish`` and ``critical``.

    Raises
    ------
    CyclicGraphError
        The graph has a cycle.
    GraphInputError
        A weight is negative, NaN or infinite (named with its position and
        edge or node), or has the wrong length.

    Notes
    -----
    Ties are broken toward smaller ids: the path ends at the smallest-id
    node whose earliest finish equals the length, and steps back each time to
    the smallest-id predecessor that fixes the current node's earliest start.
    Weights are read as float64 (integers exact up to 2**53). Cost O(V + E).

    Examples
    --------
    A small invented release pipeline, durations in hours:

    >>> import toporank
    >>> tasks = [("spec", "code"), ("spec", "docs"), ("code", "test"), ("docs", "ship"),
    ...          ("test", "ship")]
    >>> hours = {"spec": 2, "code": 8, "docs": 3, "test": 4, "ship": 1}
    >>> cp = toporank.critical_path(tasks, node_weight=hours)
    >>> cp.length
    15.0
    >>> cp.path
    array(['spec', 'code', 'test', 'ship'], dtype=object)
    >>> dict(zip(cp.nodes, cp.slack.tolist()))
    {'spec': 0.0, 'code': 0.0, 'docs': 9.0, 'test': 0.0, 'ship': 0.0}
    >>> toporank.critical_path(tasks).length  # no weights: edges on a longest path
    3.0
    """
    g = as_graph(graph, n)
    _check_on_cycle(on_cycle)
    durations = None if node_weight is None else node_weights(g, node_weight, "node_weight")
    lags = None if edge_weight is None else edge_values(g, edge_weight, "edge_weight", graph)
    default_lag = 1.0 if node_weight is None else 0.0
    cyclic, length, path, earliest, latest = _core.critical_path(
        g.indptr, g.indices, durations, lags, default_lag, thread_count(threads)
    )
    _raise_if_cyclic(g, cyclic)
    return CriticalPath(
        length=float(length),
        path=as_nodes(g, path),
        earliest_start=earliest,
        latest_start=latest,
        slack=latest - earliest,
        duration=np.zeros(g.n) if durations is None else durations,
        nodes=_all_nodes(g),
    )


@dataclass(frozen=True, eq=False)
class PathCounts:
    """Path counts of a DAG (see :func:`path_counts`).

    A source is a node without predecessors, a sink one without successors;
    an isolated node is both and carries one path of its own.

    Attributes
    ----------
    from_sources : numpy.ndarray
        Per node id: number of paths from any source to the node (float64).
    to_sinks : numpy.ndarray
        Per node id: number of paths from the node to any sink (float64).
    through_edge : numpy.ndarray
        Per edge, in the package's edge order: number of source-to-sink
        paths using the edge, ``from_sources[u] * to_sinks[v]`` (the search
        path count of main path analysis), float64.
    total : float
        Number of source-to-sink paths.
    overflow : bool
        ``True`` when the total exceeds ``2**64 - 1``: the ``exact_*``
        attributes are then ``None``. Floats are exact below ``2**53`` and
        become ``inf`` past about ``1.8e308``; the ``log_*`` attributes and
        shares stay finite however deep the graph.
    exact_from_sources, exact_to_sinks, exact_through_edge : numpy.ndarray or None
        The same counts as uint64, when they fit.
    exact_total : int or None
        The exact total, when it fits.
    nodes : numpy.ndarray
        The node of each position of the per-node arrays (ids, or labels).
    """

    from_sources: np.ndarray
    to_sinks: np.ndarray
    through_edge: np.ndarray
    total: float
    overflow: bool
    exact_from_sources: np.ndarray | None
    exact_to_sinks: np.ndarray | None
    exact_through_edge: np.ndarray | None
    exact_total: int | None
    nodes: np.ndarray
    _logs: tuple[np.ndarray, np.ndarray, np.ndarray, float] | None = field(default=None, repr=False)

    @cached_property
    def log_from_sources(self) -> np.ndarray:
        """Natural log of ``from_sources``, finite even where the float count is ``inf``."""
        return self._logs[0] if self._logs else np.log(self.from_sources)

    @cached_property
    def log_to_sinks(self) -> np.ndarray:
        """Natural log of ``to_sinks``, always finite."""
        return self._logs[1] if self._logs else np.log(self.to_sinks)

    @cached_property
    def log_through_edge(self) -> np.ndarray:
        """Natural log of ``through_edge``, always finite."""
        return self._logs[2] if self._logs else np.log(self.through_edge)

    @property
    def log_total(self) -> float:
        """Natural log of ``total``, finite except ``-inf`` for a graph without nodes."""
        if self._logs:
            return self._logs[3]
        return -math.inf if self.total == 0 else math.log(self.total)

    @property
    def through_node(self) -> np.ndarray:
        """Per node id: source-to-sink paths through the node, ``from_sources * to_sinks``."""
        return self.from_sources * self.to_sinks

    @property
    def edge_share(self) -> np.ndarray:
        """Per edge: the share of all source-to-sink paths using it, in (0, 1], always finite."""
        if math.isfinite(self.total):
            return self.through_edge / self.total
        return np.exp(self.log_through_edge - self.log_total)

    @property
    def node_share(self) -> np.ndarray:
        """Per node id: the share of all source-to-sink paths through it, in (0, 1]."""
        if math.isfinite(self.total):
            return self.through_node / self.total
        return np.exp(self.log_from_sources + self.log_to_sinks - self.log_total)


def path_counts(
    graph: Any,
    *,
    threads: int | None = None,
    on_cycle: OnCycle = "raise",
    n: int | None = None,
) -> PathCounts:
    """Return the number of paths from sources and to sinks per node, and through each edge.

    The per-edge count is the search path count (SPC) of main path
    analysis: the number of source-to-sink paths that use the edge. Parallel
    edges are distinct edges, so each one carries its own paths.

    Parameters
    ----------
    graph
        Any graph form :func:`toporank.order` accepts.
    threads, on_cycle, n
        As in :func:`levels`: ``threads`` share the backward pass (paths to
        sinks and through edges) level by level; the result is the same, bit
        for bit, for every count.

    Returns
    -------
    PathCounts
        float64 counts, exact uint64 counts when the total fits (else
        ``overflow`` is ``True`` and they are ``None``), and log-scale counts
        and shares that stay finite on deep graphs.

    Raises
    ------
    CyclicGraphError
        The graph has a cycle.

    Notes
    -----
    One forward and one backward pass, O(V + E). A second exact pass runs
    only when the total lies between ``2**53`` and ``2**64``, and a log-scale
    pass only when float64 overflows.

    Examples
    --------
    Two invented papers cite a survey, and a third cites both of them:

    >>> import numpy as np, toporank
    >>> src, dst = np.array([0, 0, 1, 2]), np.array([1, 2, 3, 3])
    >>> pc = toporank.path_counts((src, dst))
    >>> pc.exact_total, pc.overflow
    (2, False)
    >>> pc.exact_through_edge
    array([1, 1, 1, 1], dtype=uint64)
    >>> pc.edge_share
    array([0.5, 0.5, 0.5, 0.5])
    >>> pc.from_sources, pc.to_sinks
    (array([1., 1., 1., 2.]), array([2., 1., 1., 1.]))
    """
    g = as_graph(graph, n)
    _check_on_cycle(on_cycle)
    cyclic, from_sources, to_sinks, through, total, exact, logs = _core.path_counts(
        g.indptr, g.indices, thread_count(threads)
    )
    _raise_if_cyclic(g, cyclic)
    positions = g.edge_input_positions()

    def edge_order(stored: np.ndarray) -> np.ndarray:
        if positions is None:
            return stored
        out = np.empty_like(stored)
        out[positions] = stored
        return out

    if logs is not None:
        logs = (logs[0], logs[1], edge_order(logs[2]), float(logs[3]))
    return PathCounts(
        from_sources=from_sources,
        to_sinks=to_sinks,
        through_edge=edge_order(through),
        total=float(total),
        overflow=exact is None,
        exact_from_sources=None if exact is None else exact[0],
        exact_to_sinks=None if exact is None else exact[1],
        exact_through_edge=None if exact is None else edge_order(exact[2]),
        exact_total=None if exact is None else int(exact[3]),
        nodes=_all_nodes(g),
        _logs=logs,
    )
