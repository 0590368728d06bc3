"""Graphs with cycles: strongly connected components, the condensation, cycle
witnesses and cycle cuts.

A graph that is not a DAG still has structure: its strongly connected
components (sets of nodes that all reach one another) form a DAG, the
condensation. These functions explain the cycles and give usable orders
anyway; :func:`toporank.order` uses them for ``on_cycle="condense"`` and
``on_cycle="cut"``.
"""

from __future__ import annotations

import operator
from dataclasses import dataclass, field
from functools import cached_property
from typing import Any

import numpy as np

from . import _core
from ._errors import GraphInputError
from ._graph import Graph, as_graph, as_nodes
from ._validate import node_argument

__all__ = ["Condensation", "CycleCut", "components", "condense", "cut_cycles", "cycle_witness"]

CUT_METHODS = ("greedy",)


def components(graph: Any, *, n: int | None = None) -> np.ndarray:
    """Return the strongly connected component label of every node.

    Two nodes share a label exactly when each reaches the other. Labels run
    from 0 to (number of components) - 1 in a topological order of the
    condensation: every edge ``u -> v`` has ``labels[u] <= labels[v]``, with
    equality exactly for edges inside a component. The numbering is
    deterministic (depth-first search from nodes in descending id, edges in
    stored order); nodes joined by no path, such as isolated nodes, keep
    their id order.

    Parameters
    ----------
    graph
        Any graph form :func:`toporank.order` accepts. A self-loop does not
        change the partition: its node is a component of its own.
    n
        Node count for the edge-array forms (see :func:`toporank.order`).

    Returns
    -------
    numpy.ndarray
        ``labels[i]`` is the component of node ``i``, in the graph's index
        dtype (int32 or int64). For a labelled graph node ``i`` is
        ``toporank.as_graph(graph).labels[i]`` (labels numbered in first-seen
        order); :func:`condense` lists the members of each component by label.

    Raises
    ------
    GraphInputError
        Malformed input; the message names the offending value.

    Notes
    -----
    Pearce's space-efficient variant of Tarjan's algorithm, with an explicit
    stack (a path of ten million nodes is fine): O(V + E) time, GIL released.

    Examples
    --------
    >>> import numpy as np, toporank
    >>> src, dst = np.array([0, 1, 2, 2, 3]), np.array([1, 2, 1, 3, 4])
    >>> toporank.components((src, dst))
    array([0, 1, 1, 2, 3])
    """
    g = as_graph(graph, n)
    labels: np.ndarray = _core.strong_components(g.indptr, g.indices).labels
    return labels


@dataclass(frozen=True, eq=False)
class Condensation:
    """The component DAG of a graph, as built by :func:`condense`.

    Attributes
    ----------
    dag : scipy.sparse.csr_array
        ``count x count``; a stored entry ``(a, b)`` means some edge goes from
        component ``a`` to component ``b`` (``a < b`` always); its value is how
        many edges of the graph do. Rows have ascending column indices.
    labels : numpy.ndarray
        Component of each node (as returned by :func:`components`).
    sizes : numpy.ndarray
        Number of nodes of each component.
    """

    dag: Any
    labels: np.ndarray
    sizes: np.ndarray
    _graph: Graph = field(repr=False)

    @property
    def count(self) -> int:
        """Number of components."""
        return len(self.sizes)

    @cached_property
    def _grouped(self) -> tuple[np.ndarray, np.ndarray]:
        start = np.zeros(self.count + 1, dtype=np.int64)
        np.cumsum(self.sizes, out=start[1:])
        return start, np.argsort(self.labels, kind="stable")

    def members(self, component: int) -> np.ndarray:
        """Return the nodes of one component in ascending id (labels for a labelled graph).

        Examples
        --------
        >>> import toporank
        >>> c = toporank.condense([("io", "net"), ("net", "io"), ("net", "app")])
        >>> c.members(0)
        array(['io', 'net'], dtype=object)
        """
        try:
            c = operator.index(component)
        except TypeError:
            raise GraphInputError(f"component must be an integer, got {component!r}") from None
        if isinstance(component, bool) or not 0 <= c < self.count:
            raise GraphInputError(
                f"component {component!r} does not exist; labels satisfy 0 <= label < {self.count}"
            )
        start, grouped = self._grouped
        return as_nodes(self._graph, grouped[start[c] : start[c + 1]])


def condense(graph: Any, *, n: int | None = None) -> Condensation:
    """Return the condensation of ``graph``: its strongly connected components as a DAG.

    Parameters
    ----------
    graph
        Any graph form :func:`toporank.order` accepts.
    n
        Node count for the edge-array forms.

    Returns
    -------
    Condensation
        ``dag`` (scipy ``csr_array`` over components, numbered topologically,
        with edge multiplicities as values), ``labels`` (component of each
        node), ``sizes`` and ``members(c)``.

    Notes
    -----
    O(V + E); parallel edges between two components merge into one entry.
    ``toporank.order(graph, on_cycle="condense")`` orders all nodes with each
    component contiguous.

    Examples
    --------
    >>> import toporank
    >>> modules = [("core", "io"), ("io", "net"), ("net", "io"), ("net", "app"), ("io", "app")]
    >>> c = toporank.condense(modules)
    >>> c.labels, c.sizes
    (array([0, 1, 1, 2]), array([1, 2, 1]))
    >>> c.dag.toarray()
    array([[0, 1, 0],
           [0, 0, 2],
           [0, 0, 0]])
    >>> c.members(1)
    array(['io', 'net'], dtype=object)
    """
    import scipy.sparse

    g = as_graph(graph, n)
    found = _core.condensation(g.indptr, g.indices)
    count = len(found.sizes)
    dag = scipy.sparse.csr_array(
        (found.weights.astype(np.int64), found.indices, found.indptr), shape=(count, count)
    )
    return Condensation(dag, found.labels, found.sizes, g)


def cycle_witness(graph: Any, through: Any = None, *, n: int | None = None) -> np.ndarray | None:
    """Return one directed cycle of ``graph`` as a node array, or ``None`` if there is none.

    Parameters
    ----------
    graph
        Any graph form :func:`toporank.order` accepts.
    through
        ``None``: any cycle; the one returned is a shortest cycle through the
        smallest node id that lies on a cycle, so ``None`` means the graph is
        a DAG. A node (id, or label for a labelled graph): a shortest cycle
        through that node, or ``None`` when no cycle passes through it.
    n
        Node count for the edge-array forms.

    Returns
    -------
    numpy.ndarray or None
        ``cycle[k] -> cycle[k + 1]`` and ``cycle[-1] -> cycle[0]`` are edges
        of the graph, no node repeats, and ``cycle[0]`` is ``through`` when
        given. A self-loop is a cycle of one node.

    Raises
    ------
    GraphInputError
        ``through`` is not a node of the graph, or the graph is malformed.

    Notes
    -----
    Breadth-first search from the start node (O(V + E), stopping when the
    cycle closes); without ``through``, strongly connected components first
    pick the start. Among shortest cycles, the first one found in stored edge
    order is returned.

    Examples
    --------
    >>> import numpy as np, toporank
    >>> src, dst = np.array([0, 1, 2, 3, 3]), np.array([1, 2, 3, 1, 0])
    >>> toporank.cycle_witness((src, dst))
    array([0, 1, 2, 3])
    >>> toporank.cycle_witness((src, dst), through=2)
    array([2, 3, 1])
    >>> toporank.cycle_witness([("a", "b"), ("b", "c")]) is None
    True
    """
    g = as_graph(graph, n)
    start = None if through is None else node_argument(g, through, "through")
    cycle = _core.cycle_witness(g.indptr, g.indices, start)
    return None if cycle is None else as_nodes(g, cycle)


@dataclass(frozen=True, eq=False)
class CycleCut:
    """Edges whose removal leaves a DAG, as found by :func:`cut_cycles`.

    Attributes
    ----------
    sources, targets : numpy.ndarray
        The removed edges ``sources[k] -> targets[k]`` (labels for a labelled
        graph), sorted by ``edge_index``. Parallel copies of an edge are
        listed separately.
    edge_index : numpy.ndarray
        Position of each removed edge in the input's edge order (int64): the
        pair index, the row of an edge array, or the stored entry of a sparse
        matrix.
    order : numpy.ndarray
        A topological order of the graph without the removed edges. Exactly
        the removed edges go backwards in it.
    untested : int
        Removed edges whose put-back test ran out of its search budget (only
        on very large cyclic components): they stay removed without a
        verdict. The cut is minimal exactly when this is 0.
    """

    sources: np.ndarray
    targets: np.ndarray
    edge_index: np.ndarray
    order: np.ndarray
    untested: int = 0

    def __len__(self) -> int:
        return len(self.edge_index)


def cut_cycles(graph: Any, *, method: str = "greedy", n: int | None = None) -> CycleCut:
    """Return edges whose removal leaves ``graph`` acyclic, a minimal set when none is untested.

    Parameters
    ----------
    graph
        Any graph form :func:`toporank.order` accepts.
    method
        ``"greedy"``: the Eades-Lin-Smyth heuristic (the only method so far).
    n
        Node count for the edge-array forms.

    Returns
    -------
    CycleCut
        The removed edges (``sources``, ``targets``, ``edge_index``), an
        ``order`` of the nodes that is topological once they are removed, and
        ``untested``, the removed edges left without a put-back verdict.

    Notes
    -----
    Edges between different strongly connected components are never removed,
    and every self-loop is. Inside each component of two or more nodes the
    greedy heuristic of Eades, Lin & Smyth (Information Processing Letters
    47(6), 1993) builds a node sequence in linear time (bin formulation):
    sinks go to the back, sources to the front, otherwise a node with the
    largest out-degree minus in-degree goes to the front; the edges pointing
    backwards in it are removed. For a connected graph without 2-cycles that
    removes at most ``m/2 - n/6`` edges. A put-back pass then tries, in
    order, to reinsert every removed edge that closes no cycle, maintaining
    the order with the Pearce-Kelly insertion algorithm, nearest candidates
    first (by the distance between their ends in the sequence). The searches
    of that pass share a budget of the nodes plus edges of the cyclic
    components, and no test is started once few of the recent ones reached a
    verdict; an edge whose test runs out of budget or is not started stays
    removed untested and is counted in ``untested``. When ``untested`` is 0 (always so for cyclic
    components totalling at most 4,096 nodes and edges) the result is
    minimal: putting back any single removed edge creates a cycle. Otherwise
    every removed edge still lies on a cycle of the input, and every tested
    one closes a cycle with the kept edges. (Minimal is not minimum; finding
    a smallest cut is NP-hard.)

    Cost: O(V + E) for the components and the greedy sequence, and
    O((V + E) log(V + E)) for the put-back pass (its searches are bounded by
    the budget; the log comes from sorting the reordered nodes). The GIL is
    released.

    Examples
    --------
    >>> import toporank
    >>> modules = [("core", "io"), ("io", "net"), ("net", "io"), ("net", "app"), ("app", "app")]
    >>> cut = toporank.cut_cycles(modules)
    >>> len(cut)
    2
    >>> list(zip(cut.sources, cut.targets, cut.edge_index.tolist()))
    [('net', 'io', 2), ('app', 'app', 4)]
    >>> cut.order
    array(['core', 'io', 'net', 'app'], dtype=object)
    >>> cut.untested  # 0: putting back either edge closes a cycle
    0
    """
    if method not in CUT_METHODS:
        raise GraphInputError(f"method must be one of {CUT_METHODS}, got {method!r}")
    g = as_graph(graph, n)
    found = _core.cut_cycles(g.indptr, g.indices)
    edge_index, sources, targets = g.edges_in_input_order(found.removed, found.sources)
    return CycleCut(
        as_nodes(g, sources),
        as_nodes(g, targets),
        edge_index,
        as_nodes(g, found.order),
        int(found.untested),
    )
