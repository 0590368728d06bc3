"""A topological order kept up to date while edges come and go (Pearce-Kelly)."""

from __future__ import annotations

import operator
import threading
from collections.abc import Hashable, Iterable
from typing import Any, NoReturn

import numpy as np

from . import _core
from ._errors import CyclicGraphError, GraphInputError
from ._graph import Graph, as_graph
from ._validate import integer_ids, node_list, ordered, show

__all__ = ["DynamicOrder"]


class DynamicOrder:
    """A DAG with a topological order that follows every edge insertion and removal.

    The order is maintained by Pearce and Kelly's dynamic topological sort:
    inserting ``u -> v`` when ``u`` already comes first costs O(1);
    otherwise only the affected region is searched and reordered (the nodes
    reachable from ``v`` placed before ``u``, and the nodes reaching ``u``
    placed after ``v``), never the whole graph. An insertion that would
    close a cycle is refused: the state stays exactly as it was and
    :class:`CyclicGraphError` names the cycle.

    Parameters
    ----------
    graph
        Any graph form :func:`toporank.order` accepts (it must be a DAG), or
        ``None`` for a graph without edges on ``n`` nodes. The starting order
        is Kahn's FIFO order (``toporank.order(graph)``). A labelled graph
        (label pairs, ``[]`` for an empty one) makes every method speak labels.
    n
        Node count: for ``graph=None`` the number of nodes (default 0); for
        the edge-array forms as in :func:`toporank.order`.

    Raises
    ------
    CyclicGraphError
        ``graph`` has a cycle.
    GraphInputError
        Malformed input; the message names the offending value.

    Notes
    -----
    The graph is a multigraph, as elsewhere in the package: adding an edge
    twice stores two copies, and :meth:`remove_edge` removes one. Node ids
    (``order``, ``positions``) are int64. Several threads may share one
    instance: every call takes one internal lock, and batch methods wait
    for it and work without the GIL.

    References
    ----------
    D. J. Pearce and P. H. J. Kelly, "A dynamic topological sort algorithm
    for directed acyclic graphs", ACM Journal of Experimental Algorithmics
    11 (2006) (venue from memory).

    Examples
    --------
    >>> import toporank
    >>> build = toporank.DynamicOrder([("core", "io"), ("io", "app")])
    >>> build.order
    array(['core', 'io', 'app'], dtype=object)
    >>> build.add_nodes(["log"])
    >>> build.add_edge("log", "core")
    >>> build.order
    array(['log', 'core', 'io', 'app'], dtype=object)
    >>> build.precedes("log", "app")
    True
    >>> try:
    ...     build.add_edge("app", "log")
    ... except toporank.CyclicGraphError as refused:
    ...     print(refused.cycle)
    ['log' 'core' 'io' 'app']
    >>> build.remove_edge("core", "io")
    >>> build.graph.m
    2
    """

    def __init__(self, graph: Any = None, *, n: int | None = None) -> None:
        self._labels: list[Hashable] | None = None
        self._index: dict[Hashable, int] | None = None
        self._naming = threading.Lock()
        if graph is None:
            count = 0 if n is None else _count(n, "n")
            self._core = _core.DynamicCore(count)
            return
        g = as_graph(graph, n)
        built = _core.DynamicCore.from_csr(g.indptr, g.indices)
        if not isinstance(built, _core.DynamicCore):
            from ._order import order

            order(g)  # raises CyclicGraphError with the full report
            raise CyclicGraphError(built, np.zeros(0, np.int64), built)  # pragma: no cover
        self._core = built
        if g.labels is not None:
            self._labels = list(g.labels.tolist())
            self._index = dict(g.label_index)

    def __copy__(self) -> NoReturn:
        # a shallow copy would share the state: a change through one would
        # show in the other
        raise TypeError(
            "a DynamicOrder cannot be copied or pickled; build another from its .graph "
            "(its order is then recomputed)"
        )

    def __reduce_ex__(self, protocol: Any) -> NoReturn:
        self.__copy__()

    def __repr__(self) -> str:
        kind = "labelled " if self._labels is not None else ""
        return f"<toporank.DynamicOrder: {kind}{self.n} nodes, {self.m} edges>"

    @property
    def n(self) -> int:
        """Number of nodes."""
        return int(self._core.n)

    @property
    def m(self) -> int:
        """Number of edges (duplicates counted)."""
        return int(self._core.m)

    @property
    def affected_total(self) -> int:
        """Total size of the affected regions of every insertion so far.

        The nodes each insertion repositioned (0 when the edge already went
        forward), summed; a refused insertion or batch adds nothing.
        """
        return int(self._core.affected_total)

    @property
    def order(self) -> np.ndarray:
        """The current topological order (a copy; labels for a labelled graph).

        Examples
        --------
        >>> import toporank
        >>> toporank.DynamicOrder(n=3).order
        array([0, 1, 2])
        """
        return self._nodes(self._core.order())

    @property
    def positions(self) -> np.ndarray:
        """``positions[i]`` is the place of node id ``i`` in :attr:`order` (int64, a copy).

        For a labelled graph node ``i`` is ``graph.labels[i]``.

        Examples
        --------
        >>> import numpy as np, toporank
        >>> d = toporank.DynamicOrder(n=3)
        >>> d.add_edge(2, 0)
        >>> d.order, d.positions
        (array([2, 1, 0]), array([2, 1, 0]))
        """
        positions: np.ndarray = self._core.positions()
        return positions

    @property
    def graph(self) -> Graph:
        """A snapshot of the current graph as a :class:`toporank.Graph`.

        Rows list successors in insertion order, except that a removal
        moves a row's last edge into the gap.

        Examples
        --------
        >>> import toporank
        >>> d = toporank.DynamicOrder(n=3)
        >>> d.add_edges([0, 1], [1, 2])
        >>> d.graph.indptr, d.graph.indices
        (array([0, 1, 2, 2]), array([1, 2]))
        """
        arrays = self._core.to_csr()
        indptr, indices = arrays.indptr, arrays.indices
        if self._labels is None:
            return Graph(indptr, indices)
        return Graph(indptr, indices, self._label_array(len(indptr) - 1))

    def position(self, v: Any) -> int:
        """Return the place of node ``v`` in :attr:`order` (O(1)).

        Examples
        --------
        >>> import toporank
        >>> toporank.DynamicOrder([("a", "b")]).position("b")
        1
        """
        return int(self._core.position(self._id(v, "v")))

    def precedes(self, u: Any, v: Any) -> bool:
        """Return whether ``u`` comes before ``v`` in the current order (O(1)).

        Every path ``u -> ... -> v`` implies it; the converse does not hold.

        Examples
        --------
        >>> import toporank
        >>> d = toporank.DynamicOrder([("a", "b")])
        >>> d.precedes("a", "b"), d.precedes("b", "a")
        (True, False)
        """
        return bool(self._core.precedes(self._id(u, "u"), self._id(v, "v")))

    def add_nodes(self, nodes: int | Iterable[Hashable]) -> None:
        """Add isolated nodes, placed last in the order.

        Parameters
        ----------
        nodes
            For integer ids: how many (they get the next ids). For a
            labelled graph: the new labels, none already present.

        Examples
        --------
        >>> import toporank
        >>> d = toporank.DynamicOrder(n=2)
        >>> d.add_nodes(2)
        >>> d.order
        array([0, 1, 2, 3])
        """
        if self._labels is None or self._index is None:
            if not isinstance(nodes, (int, np.integer)) or isinstance(nodes, bool):
                raise GraphInputError(
                    f"add_nodes takes a count for a graph with integer ids, got {nodes!r}"
                )
            self._core.add_nodes(_count(nodes, "add_nodes count"))
            return
        if isinstance(nodes, (str, bytes)) or not isinstance(nodes, Iterable):
            raise GraphInputError(
                f"add_nodes takes an iterable of new labels for a labelled graph, got {nodes!r}"
            )
        ordered(nodes, "nodes")
        fresh = list(nodes)
        with self._naming:  # one labelled add_nodes at a time: check, then name
            seen: set[Hashable] = set()
            for label in fresh:
                try:
                    known = label in self._index or label in seen
                except TypeError:
                    raise GraphInputError(f"label {label!r} is not hashable") from None
                if known:
                    raise GraphInputError(f"node {label!r} is already in the graph")
                seen.add(label)
            # names first: a reader in another thread may see more names than
            # nodes for a moment, never a node without a name
            start = len(self._labels)
            self._labels.extend(fresh)
            self._index.update((label, start + k) for k, label in enumerate(fresh))
            try:
                self._core.add_nodes(len(fresh))
            except BaseException:
                for label in fresh:
                    del self._index[label]
                del self._labels[start:]
                raise

    def add_edge(self, u: Any, v: Any) -> None:
        """Insert the edge ``u -> v`` unless it would close a cycle.

        Raises
        ------
        CyclicGraphError
            ``v`` reaches ``u`` (or ``u == v``). Nothing changed. ``.cycle``
            is the path from ``v`` back to ``u``; the refused edge ``u -> v``
            closes it. ``.edge`` is ``(u, v)``.
        GraphInputError
            ``u`` or ``v`` is not a node.

        Examples
        --------
        >>> import toporank
        >>> d = toporank.DynamicOrder(n=3)
        >>> d.add_edge(2, 1)
        >>> d.add_edge(1, 0)
        >>> d.order
        array([2, 1, 0])
        >>> d.add_edge(0, 2)
        Traceback (most recent call last):
        ...
        toporank._errors.CyclicGraphError: adding 0 -> 2 would close the cycle 2 -> 1 -> 0 -> 2; \
nothing changed
        """
        refusal = self._core.add_edge(self._id(u, "u"), self._id(v, "v"))
        if refusal is not None:
            raise self._refused(refusal.cycle, (u, v), None)

    def add_edges(self, src: Any, dst: Any) -> None:
        """Insert every edge ``src[k] -> dst[k]``, or none when one would close a cycle.

        Parameters
        ----------
        src, dst
            Sequences or 1-D arrays of equal length: node ids, or labels for
            a labelled graph.

        Notes
        -----
        Edges go in one Pearce-Kelly step at a time until the steps' work
        exceeds what one re-sort of the batch's window would cost (the
        places between the lowest target and the highest source of the
        edges that go backwards); the rest then go in by one Kahn re-sort
        of that window alone. The GIL is released meanwhile.

        Raises
        ------
        CyclicGraphError
            Some edge closes a cycle with the graph plus the batch edges
            before it. No edge of the batch was added. ``.cycle`` is as for
            :meth:`add_edge`; ``.edge`` is that edge and ``.index`` its
            place in the batch.
        GraphInputError
            An endpoint is not a node, or the lengths differ.

        Examples
        --------
        >>> import toporank
        >>> d = toporank.DynamicOrder(n=4)
        >>> d.add_edges([3, 2], [2, 1])
        >>> d.order
        array([0, 3, 2, 1])
        >>> d.add_edges([0, 1], [1, 3])
        Traceback (most recent call last):
        ...
        toporank._errors.CyclicGraphError: edge 1 of the batch, 1 -> 3, would close the cycle \
3 -> 2 -> 1 -> 3; no edge of the batch was added
        >>> d.m
        2
        """
        src_ids, dst_ids = self._ids(src, "src"), self._ids(dst, "dst")
        refusal = self._core.add_edges(src_ids, dst_ids)
        if refusal is not None:
            k = int(refusal.index)
            edge = (self._node(int(src_ids[k])), self._node(int(dst_ids[k])))
            raise self._refused(refusal.cycle, edge, k)

    def remove_edge(self, u: Any, v: Any) -> None:
        """Remove one copy of the edge ``u -> v``; the order stays valid as it is.

        Raises
        ------
        GraphInputError
            There is no edge ``u -> v``, or ``u`` or ``v`` is not a node.

        Examples
        --------
        >>> import toporank
        >>> d = toporank.DynamicOrder([("a", "b")])
        >>> d.remove_edge("a", "b")
        >>> d.m
        0
        """
        if not self._core.remove_edge(self._id(u, "u"), self._id(v, "v")):
            raise GraphInputError(f"there is no edge {u!r} -> {v!r} to remove")

    def remove_edges(self, src: Any, dst: Any) -> None:
        """Remove one copy of every edge ``src[k] -> dst[k]``, or none when one is missing.

        A pair listed twice removes two copies.

        Raises
        ------
        GraphInputError
            Edge ``k`` is not in the graph (counting the copies removed
            before it); nothing was removed. Or an endpoint is not a node.

        Examples
        --------
        >>> import numpy as np, toporank
        >>> d = toporank.DynamicOrder((np.array([0, 1]), np.array([1, 2])))
        >>> d.remove_edges([0, 1], [1, 2])
        >>> d.m
        0
        """
        src_ids, dst_ids = self._ids(src, "src"), self._ids(dst, "dst")
        missing = self._core.remove_edges(src_ids, dst_ids)
        if missing is not None:
            k = int(missing)
            u, v = self._node(int(src_ids[k])), self._node(int(dst_ids[k]))
            raise GraphInputError(
                f"edge {k} of the batch, {u!r} -> {v!r}, is not in the graph (counting the "
                f"copies removed before it); no edge was removed"
            )

    # -- ids and labels -------------------------------------------------

    def _node(self, node_id: int) -> Any:
        return node_id if self._labels is None else self._labels[node_id]

    def _nodes(self, ids: np.ndarray) -> np.ndarray:
        if self._labels is None:
            return ids
        return self._label_array(len(self._labels))[ids]

    def _label_array(self, count: int) -> np.ndarray:
        """The first ``count`` labels as an object array. Labels are only
        appended, so this holds while another thread adds nodes."""
        assert self._labels is not None
        labels = np.empty(count, dtype=object)
        labels[:] = self._labels[:count]
        return labels

    def _id(self, node: Any, what: str) -> int:
        if self._index is not None:
            try:
                return self._index[node]
            except (KeyError, TypeError):
                raise GraphInputError(f"{what} = {node!r} is not a node of the graph") from None
        if isinstance(node, bool):
            raise GraphInputError(f"{what} = {node!r} is not a node id")
        try:
            value = operator.index(node)
        except TypeError:
            raise GraphInputError(f"{what} = {node!r} is not an integer node id") from None
        if not -(2**63) <= value < 2**63:
            raise GraphInputError(
                f"{what} = {value} is not a node id; ids must satisfy 0 <= id < {self.n}"
            )
        return value

    def _ids(self, nodes: Any, what: str) -> np.ndarray:
        if self._index is None:
            if isinstance(nodes, (str, bytes)):
                raise GraphInputError(f"{what} must be a sequence of node ids, got {nodes!r}")
            given = nodes if isinstance(nodes, np.ndarray) else node_list(nodes, what)
            array = np.asarray(given)
            if array.dtype.kind == "b":
                raise GraphInputError(f"{what} has dtype bool, expected integer node ids")
            # a list numpy read as floats or objects goes back for exact ints
            ids = integer_ids(given if array.dtype.kind in "fO" else array, what)
            # values beyond int64 come back as -1: name the value as given
            bad = np.flatnonzero((ids < 0) | (ids >= self.n))
            if len(bad):
                k = int(bad[0])
                raise GraphInputError(
                    f"{what}[{k}] = {show(given[k])} is not a node id; "
                    f"ids must satisfy 0 <= id < {self.n}"
                )
            return ids
        index = self._index
        items = node_list(nodes, what)
        ids = np.empty(len(items), dtype=np.int64)
        for k, label in enumerate(items):
            try:
                ids[k] = index[label]
            except (KeyError, TypeError):
                raise GraphInputError(
                    f"{what}[{k}] = {label!r} is not a node of the graph"
                ) from None
        return ids

    def _refused(self, cycle: np.ndarray, edge: tuple[Any, Any], index: int | None) -> Exception:
        nodes = self._nodes(cycle)
        u, v = edge
        shown = " -> ".join(str(x) for x in nodes[:12].tolist())
        if len(nodes) > 12:
            shown += f" -> ... ({len(nodes) - 12} more)"
        closing = f"{shown} -> {v}"
        if index is None:
            message = f"adding {u!r} -> {v!r} would close the cycle {closing}; nothing changed"
        else:
            message = (
                f"edge {index} of the batch, {u!r} -> {v!r}, would close the cycle {closing}; "
                "no edge of the batch was added"
            )
        error = CyclicGraphError(nodes, self.order, nodes[:0])
        error.args = (message,)
        error.edge = edge  # type: ignore[attr-defined]
        error.index = index  # type: ignore[attr-defined]
        return error


def _count(value: Any, what: str) -> int:
    if isinstance(value, bool):
        raise GraphInputError(f"{what} must be a non-negative integer, got {value!r}")
    try:
        count = operator.index(value)
    except TypeError:
        raise GraphInputError(f"{what} must be a non-negative integer, got {value!r}") from None
    if not 0 <= count <= 2**63 - 1:
        raise GraphInputError(f"{what} must be a non-negative integer below 2**63, got {count}")
    return count
