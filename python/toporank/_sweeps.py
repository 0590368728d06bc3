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
from dataclasses import dataclass, field
from functools import cached_property
from typing import Any

import numpy as np

from . import _core
from ._graph import Graph, as_graph, as_nodes
from ._validate import (
    COUNT_KINDS,
    OnCycle,
    choice,
    edge_values,
    node_weights,
    on_cycle_choice,
    raise_cycle,
    sweep_threads,
    switch,
)

__all__ = [
    "CriticalPath",
    "PathCounts",
    "critical_path",
    "heights",
    "levels",
    "path_counts",
]


def _sources(g: Graph) -> np.ndarray:
    """The source of every stored edge."""
    return np.repeat(np.arange(g.n, dtype=g.indices.dtype), np.diff(g.indptr))


def _reversed(g: Graph) -> Graph:
    """``g`` with every edge turned around."""
    return Graph.from_edges(g.indices, _sources(g), g.n)


def _without_edges(g: Graph, keep: np.ndarray) -> Graph:
    """``g`` keeping only the stored edges where ``keep`` is true (rows in stored order)."""
    return Graph.from_edges(_sources(g)[keep], g.indices[keep], g.n)


def _levels_despite_cycles(g: Graph, on_cycle: str, threads: int, backward: bool) -> np.ndarray:
    """Per node: its level (its height when ``backward``) under ``on_cycle``.

    ``"partial"``: nodes behind a cycle (reached from one; for heights,
    reaching one) get -1; ``"condense"``: the level of the node's component
    in the condensation; ``"cut"``: the level once :func:`toporank.cut_cycles`'
    edges are removed.
    """
    if on_cycle == "condense":
        condensed = _core.condensation(g.indptr, g.indices)
        dag = Graph.from_csr(condensed.indptr, condensed.indices)
        return _levels_despite_cycles(dag, "raise", threads, backward)[condensed.labels]
    if on_cycle == "cut":
        keep = np.ones(g.m, dtype=bool)
        keep[_core.cut_cycles(g.indptr, g.indices).removed] = False
        return _levels_despite_cycles(_without_edges(g, keep), "raise", threads, backward)
    direction = _reversed(g) if backward else g
    found = _core.levels(direction.indptr, direction.indices, threads, False)
    if not isinstance(found, _core.Cyclic):
        return found.level
    if on_cycle == "raise":
        raise_cycle(g, found)
    behind = np.zeros(g.n, dtype=bool)
    behind[found.blocked] = True
    sources = _sources(direction)
    rest = _without_edges(direction, ~(behind[sources] | behind[direction.indices]))
    level = _levels_despite_cycles(rest, "raise", threads, False)
    level[behind] = -1
    return level


def _grouped(g: Graph, level: np.ndarray) -> list[np.ndarray]:
    """The nodes of level 0, 1, ... (ascending id inside a level; level -1 left out)."""
    ids = np.argsort(level, kind="stable").astype(g.indices.dtype, copy=False)
    ids = ids[level[ids] >= 0]
    bounds = np.searchsorted(level[ids], np.arange(int(level.max(initial=-1)) + 2))
    nodes = as_nodes(g, ids)
    return [nodes[bounds[k] : bounds[k + 1]] for k in range(len(bounds) - 1)]


def _all_nodes(g: Graph) -> np.ndarray:
    return as_nodes(g, np.arange(g.n, dtype=g.indices.dtype))


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
        in-degrees down atomically. Counts beyond the usable cores are capped
        to them, and the loop falls back to serial where parallel does not
        pay. Workers are started on the first parallel call (never at import)
        and rebuilt in a forked child. The result is the same for every
        thread count.
    on_cycle
        What a graph with a cycle gives, the vocabulary of
        :func:`toporank.order`: ``"raise"`` raises :class:`CyclicGraphError`;
        ``"partial"`` gives -1 to the nodes behind a cycle (reachable from
        one) and their level to the others; ``"condense"`` gives each node the
        level of its strongly connected component in the condensation (see
        :func:`toporank.condense`); ``"cut"`` the level once the edges
        :func:`toporank.cut_cycles` finds are removed. On a DAG all four agree.
    n
        Node count for the edge-array forms, as in :func:`toporank.order`.

    Returns
    -------
    numpy.ndarray or list of numpy.ndarray
        Per node id, its level, in the graph's index dtype; or, with
        ``grouped=True``, the nodes of level 0, 1, ... in that order (nodes
        of level -1 left out).

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
    >>> toporank.levels([("a", "b"), ("b", "a"), ("b", "c"), ("d", "c")], on_cycle="condense")
    array([0, 0, 1, 0])
    """
    g = as_graph(graph, n)
    on_cycle = on_cycle_choice(on_cycle)
    workers = sweep_threads(threads)
    grouped = switch(grouped, "grouped")
    if on_cycle != "raise":
        level = _levels_despite_cycles(g, on_cycle, workers, backward=False)
        return _grouped(g, level) if grouped else level
    found = _core.levels(g.indptr, g.indices, workers, bool(grouped))
    if isinstance(found, _core.Cyclic):
        raise_cycle(g, found)
    if not grouped:
        return found.level
    nodes, offsets = found.nodes, found.offsets
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
    threads, n
        As in :func:`levels`; the result is the same for every thread count.
    on_cycle
        As in :func:`levels`, read backwards: ``"partial"`` gives -1 to the
        nodes that reach a cycle (their longest path has no end);
        ``"condense"`` gives each node its component's height in the
        condensation; ``"cut"`` the height once :func:`toporank.cut_cycles`'
        edges are removed.

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
    >>> toporank.heights([("a", "b"), ("b", "a"), ("b", "c")], on_cycle="partial")
    array([-1, -1,  0])
    """
    g = as_graph(graph, n)
    on_cycle = on_cycle_choice(on_cycle)
    workers = sweep_threads(threads)
    if on_cycle != "raise":
        return _levels_despite_cycles(g, on_cycle, workers, backward=True)
    found = _core.heights(g.indptr, g.indices, workers)
    if isinstance(found, _core.Cyclic):
        raise_cycle(g, found)
    return found


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
    threads, n
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
    durations = None if node_weight is None else node_weights(g, node_weight, "node_weight")
    lags = None if edge_weight is None else edge_values(g, edge_weight, "edge_weight", graph)
    default_lag = 1.0 if node_weight is None else 0.0
    found = _core.critical_path(
        g.indptr, g.indices, durations, lags, default_lag, sweep_threads(threads)
    )
    if isinstance(found, _core.Cyclic):
        raise_cycle(g, found)
    return CriticalPath(
        length=float(found.length),
        path=as_nodes(g, found.path),
        earliest_start=found.earliest_start,
        latest_start=found.latest_start,
        slack=found.latest_start - found.earliest_start,
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
    kind: str = "spc",
    threads: int | None = None,
    n: int | None = None,
) -> PathCounts:
    """Return the number of paths from sources and to sinks per node, and through each edge.

    The per-edge count is a traversal weight of main path analysis (Hummon &
    Doreian, Social Networks 11(1), 1989; Batagelj, "Efficient algorithms
    for citation network analysis", arXiv cs/0309023, 2003; Liu & Lu,
    JASIST 63(3), 2012; details from memory). Parallel edges are distinct
    edges, so each one carries its own paths.

    * ``"spc"``, search path count: the source-to-sink paths through the
      edge. ``from_sources`` counts paths from any source to a node,
      ``to_sinks`` paths from a node to any sink.
    * ``"splc"``, search path link count: the paths through the edge that
      start at any ancestor of its tail (the tail itself included) and end
      at a sink. ``from_sources`` then counts the paths from every node
      (the node itself included, as an empty path) to a node.
    * ``"spnp"``, search path node pair: the paths through the edge between
      any pair of nodes (start at any ancestor of the tail or the tail, end
      at any descendant of the head or the head). ``to_sinks`` then counts
      the paths from a node to every node.

    For every kind ``through_edge[u -> v] = from_sources[u] *
    to_sinks[v]``, and ``total`` is the number of paths the kind counts
    (empty paths included for ``"splc"``/``"spnp"``), so shares stay in
    (0, 1].

    Parameters
    ----------
    graph
        Any graph form :func:`toporank.order` accepts.
    kind
        ``"spc"`` (default), ``"splc"`` or ``"spnp"``.
    threads, n
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

    The link count also starts paths at the cited papers themselves:

    >>> toporank.path_counts((src, dst), kind="splc").exact_through_edge
    array([1, 1, 2, 2], dtype=uint64)
    """
    g = as_graph(graph, n)
    kind = choice(kind, "kind", COUNT_KINDS)
    found = _core.path_counts(g.indptr, g.indices, sweep_threads(threads), kind)
    if isinstance(found, _core.Cyclic):
        raise_cycle(g, found)
    exact, log = found.exact, found.log
    positions = g.edge_input_positions()

    def edge_order(stored: np.ndarray) -> np.ndarray:
        if positions is None:
            return stored
        out = np.empty_like(stored)
        out[positions] = stored
        return out

    logs = None
    if log is not None:
        logs = (log.from_sources, log.to_sinks, edge_order(log.through_edge), float(log.total))
    return PathCounts(
        from_sources=found.from_sources,
        to_sinks=found.to_sinks,
        through_edge=edge_order(found.through_edge),
        total=float(found.total),
        overflow=exact is None,
        exact_from_sources=None if exact is None else exact.from_sources,
        exact_to_sinks=None if exact is None else exact.to_sinks,
        exact_through_edge=None if exact is None else edge_order(exact.through_edge),
        exact_total=None if exact is None else int(exact.total),
        nodes=_all_nodes(g),
        _logs=logs,
    )
