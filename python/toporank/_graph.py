"""Input normalisation: every accepted graph form becomes one :class:`Graph`.

This is the only module that inspects user input; the compiled core then
trusts dtypes and shapes (it still checks every node id, cheaply, while it
works). CSR arrays are used without copying when ``indptr`` is int32 or
int64 and ``indices`` is int32, int64 or uint32, in any combination; any
other integer dtype is widened to int64 (a copy).
"""

from __future__ import annotations

from collections.abc import Hashable, Iterable, Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from . import _core
from ._errors import GraphInputError
from ._validate import distinct_labels, node_count, ordered

__all__ = ["Graph", "as_graph"]

_INT32_LIMIT = 2**31 - 1


@dataclass(frozen=True, eq=False)
class Graph:
    """A directed graph in CSR form, as every toporank function sees it.

    Row ``u`` of the CSR arrays lists the successors of ``u``: the edge
    ``u -> v`` means ``u`` comes before ``v``. Any function of the package
    accepts a ``Graph`` directly, skipping normalisation, so build one when
    several calls share a graph.

    Attributes
    ----------
    indptr, indices : numpy.ndarray
        CSR arrays: ``indptr`` int32 or int64, ``indices`` int32, int64 or
        uint32, each with its own width (int64 offsets with int32 ids is the
        usual layout of large graphs). Not copied from the input when it
        already had such a form; do not mutate them during a call.
    labels : numpy.ndarray or None
        For graphs built from labelled pairs: ``labels[i]`` is node ``i``'s
        label (numbered in first-seen order); ``None`` for integer graphs.

    Examples
    --------
    >>> import numpy as np, toporank
    >>> g = toporank.Graph.from_edges(np.array([0, 0, 2]), np.array([1, 2, 1]), n=4)
    >>> g.n, g.m
    (4, 3)
    >>> g.indptr
    array([0, 2, 2, 3, 3])
    """

    indptr: np.ndarray
    indices: np.ndarray
    labels: np.ndarray | None = None
    _label_index: dict[Any, int] | None = field(default=None, repr=False)
    # The edge list the graph was grouped from, kept (not copied) so per-edge
    # input positions can be recomputed on demand.
    _edges: tuple[np.ndarray, np.ndarray] | None = field(default=None, repr=False)
    # Input position of each stored edge, when a streaming build kept them
    # (input not grouped by source) instead of the edge list.
    _positions: np.ndarray | None = field(default=None, repr=False)
    # read with ReadOptions(edge_positions=False) from input not grouped by source
    _positions_dropped: bool = field(default=False, repr=False)

    def __repr__(self) -> str:
        kind = "labelled" if self.labels is not None else "ids"
        return f"Graph(n={self.n}, m={self.m}, {kind}, {self.indices.dtype})"

    @property
    def n(self) -> int:
        """Number of nodes."""
        return len(self.indptr) - 1

    @property
    def m(self) -> int:
        """Number of stored edges (duplicates and self-loops included)."""
        return len(self.indices)

    @property
    def label_index(self) -> dict[Any, int]:
        """Map from label to node id (labelled graphs only)."""
        if self.labels is None:
            raise GraphInputError("this graph has integer node ids, not labels")
        if self._label_index is not None:
            return self._label_index
        # built on first use: readers of large labelled files need not pay for it
        index = {label: node for node, label in enumerate(self.labels.tolist())}
        object.__setattr__(self, "_label_index", index)
        return index

    def edge_input_positions(self) -> np.ndarray | None:
        """Input position of each stored edge, or ``None`` when stored order is input order.

        Edge-list input is grouped by source with a stable sort, so the
        ``k``-th stored edge was edge ``edge_input_positions()[k]`` of the input.
        """
        if self._positions is not None:
            return self._positions
        if self._positions_dropped:
            raise GraphInputError(
                "this graph was read with edge_positions=False from input not grouped by "
                "source, so its edges cannot be named by input position; read it again with "
                "edge_positions=True"
            )
        if self._edges is None:
            return None
        src, dst = self._edges
        return _core.edges_to_csr(src, dst, self.n, True).edge_ids

    def edges_in_input_order(
        self, stored: np.ndarray, sources: np.ndarray
    ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Some stored edges, ordered by input position.

        ``stored`` are ascending stored positions (int64) and ``sources`` their
        source nodes. Returns ``(edge_index, sources, targets)`` ordered by
        ``edge_index``, the input positions (see :meth:`edge_input_positions`),
        in time linear in the edges without building every edge's position
        when the graph keeps its edge list.
        """
        if self._positions is None and not self._positions_dropped and self._edges is not None:
            src, dst = self._edges
            index = _core.input_positions_of(src, self.indptr, stored)
            return index, src[index].astype(np.int64), dst[index].astype(np.int64)
        targets = self.indices[stored].astype(np.int64)
        sources = sources.astype(np.int64, copy=False)
        positions = self.edge_input_positions()
        if positions is None:
            return stored, sources, targets
        index = positions[stored].astype(np.int64)
        by_input = np.argsort(index, kind="stable")
        return index[by_input], sources[by_input], targets[by_input]

    @classmethod
    def from_csr(cls, indptr: Any, indices: Any) -> Graph:
        """A graph from CSR arrays (``indptr`` of length ``n + 1``)."""
        indptr = _index_array(indptr, "indptr")
        indices = _index_array(indices, "indices", ids=True)
        if indptr.ndim != 1 or indices.ndim != 1:
            raise GraphInputError(
                f"indptr and indices must be 1-D, got shapes {indptr.shape} and {indices.shape}"
            )
        if len(indptr) == 0:
            raise GraphInputError("indptr is empty; it needs n + 1 entries for n nodes")
        return cls(indptr, _ids_for(indices, len(indptr) - 1))

    @classmethod
    def from_edges(cls, src: Any, dst: Any, n: int | None = None) -> Graph:
        """A graph from parallel arrays of edge sources and targets.

        Each row keeps the input order of its edges. ``n`` defaults to
        ``max id + 1``; give it to include isolated nodes with larger ids.
        """
        src = _index_array(src, "src")
        dst = _index_array(dst, "dst")
        if src.ndim != 1 or dst.ndim != 1:
            raise GraphInputError(
                f"src and dst must be 1-D, got shapes {src.shape} and {dst.shape}"
            )
        if len(src) != len(dst):
            raise GraphInputError(f"src has {len(src)} entries but dst has {len(dst)}")
        n = _node_count(src, dst, n)
        src, dst = _same_width(src, dst, max(n, len(src)))
        built = _core.edges_to_csr(src, dst, n, False)
        return cls(built.indptr, built.indices, _edges=(src, dst))

    @classmethod
    def from_labelled_edges(cls, src: Any, dst: Any, labels: Any) -> Graph:
        """A graph from integer edge arrays over nodes named ``labels[0], labels[1], ...``.

        Labels must be distinct; results then speak labels, as for :meth:`from_pairs`.
        """
        labels = np.asarray(labels, dtype=object)
        if labels.ndim != 1:
            raise GraphInputError(f"labels must be 1-D, got shape {labels.shape}")
        distinct_labels(labels)
        plain = cls.from_edges(src, dst, len(labels))
        return cls(plain.indptr, plain.indices, labels, None, plain._edges)

    @classmethod
    def from_pairs(cls, pairs: Iterable[tuple[Hashable, Hashable]]) -> Graph:
        """A graph from ``(u, v)`` pairs of hashable labels, numbered in first-seen order.

        A ``set`` is refused: its order, hence the numbering, changes from run to run.
        """
        ordered(pairs, "pairs")
        index: dict[Any, int] = {}
        src_ids: list[int] = []
        dst_ids: list[int] = []
        for position, pair in enumerate(pairs):
            try:
                u, v = pair
                src_ids.append(index.setdefault(u, len(index)))
                dst_ids.append(index.setdefault(v, len(index)))
            except (TypeError, ValueError) as exc:
                raise GraphInputError(
                    f"pair {position} is {pair!r}; each edge must be a (u, v) pair "
                    f"of hashable labels"
                ) from exc
        labels = np.empty(len(index), dtype=object)
        for label, node in index.items():
            labels[node] = label
        src = np.asarray(src_ids, dtype=np.int64)
        dst = np.asarray(dst_ids, dtype=np.int64)
        built = _core.edges_to_csr(src, dst, len(index), False)
        return cls(built.indptr, built.indices, labels, index, (src, dst))

    @classmethod
    def from_sparse(cls, matrix: Any) -> Graph:
        """A graph from a square scipy sparse matrix or array; entry ``(i, j)`` is ``i -> j``.

        Stored entries count as edges whatever their value (explicit zeros
        included). CSR input is used as is (its stored order is the edge
        order); other formats go through COO coordinates in their stored order.
        """
        shape = matrix.shape
        if len(shape) != 2 or shape[0] != shape[1]:
            raise GraphInputError(f"an adjacency matrix must be square, got shape {shape}")
        n = int(shape[0])
        if matrix.format == "csr":
            indptr = _index_array(matrix.indptr, "indptr")
            indices = _index_array(matrix.indices, "indices", ids=True)
            return cls(indptr, _ids_for(indices, n))
        coo = matrix.tocoo()
        return cls.from_edges(coo.row, coo.col, n)


def as_graph(graph: Any, n: int | None = None) -> Graph:
    """Normalise any accepted graph form to a :class:`Graph`.

    Accepted: a ``Graph``; a scipy sparse matrix or array; a tuple
    ``(src, dst)`` of two 1-D columns (numpy arrays, pandas Series, pyarrow
    arrays: integer ids, or strings as labels); an ``(m, 2)`` numpy
    integer array; any other iterable of ``(u, v)`` pairs of hashable labels
    except a set (its order, hence the numbering, changes from run to run).
    ``n`` (node count) applies to the two edge-array forms.
    """
    if isinstance(graph, Graph):
        _check_n(n, graph.n, "a Graph")
        return graph
    if is_sparse(graph):
        built = Graph.from_sparse(graph)
        _check_n(n, built.n, "a sparse matrix")
        return built
    if isinstance(graph, np.ndarray):
        graph = np.asarray(graph)  # np.matrix: its rows would stay 2-D
        if graph.ndim != 2 or graph.shape[1] != 2:
            raise GraphInputError(
                f"a numpy edge array must have shape (m, 2), got {graph.shape}; for a dense "
                "adjacency matrix pass scipy.sparse.csr_array(matrix)"
            )
        return Graph.from_edges(graph[:, 0], graph[:, 1], n)
    if isinstance(graph, tuple) and len(graph) == 2 and any(map(_array_like, graph)):
        # (src, dst) columns: numpy arrays, pandas Series, pyarrow arrays, or
        # one numpy array and one list; never two (u, v) pairs
        src, dst = _column(graph[0], "src"), _column(graph[1], "dst")
        if src.dtype.kind in "OUS" or dst.dtype.kind in "OUS":  # label columns
            if n is not None:
                raise GraphInputError("n applies to integer edge arrays, not to labels")
            if src.shape != dst.shape or src.ndim != 1:
                raise GraphInputError(
                    f"src and dst must be 1-D and of one length, got shapes {src.shape} "
                    f"and {dst.shape}"
                )
            for name, column in (("src", src), ("dst", dst)):
                # a missing value (None, NaN) in a column is no node name
                missing = [k for k, x in enumerate(column.tolist()) if x is None or x != x]
                if missing:
                    raise GraphInputError(f"{name}[{missing[0]}] is missing (None or NaN)")
            return Graph.from_pairs(list(zip(src.tolist(), dst.tolist(), strict=True)))
        return Graph.from_edges(src, dst, n)
    if _is_frame(graph):
        raise GraphInputError(
            f"cannot read a graph from a {type(graph).__name__} directly: pass its two "
            "columns, e.g. (frame['src'].to_numpy(), frame['dst'].to_numpy())"
        )
    if isinstance(graph, (str, bytes, Mapping)) or not isinstance(graph, Iterable):
        raise GraphInputError(
            f"cannot read a graph from {type(graph).__name__}: pass a scipy sparse matrix, "
            "a (src, dst) tuple of numpy arrays, an (m, 2) numpy array, a sequence of "
            "(u, v) label pairs, or a toporank.Graph"
        )
    if n is not None:
        raise GraphInputError("n applies to integer edge arrays, not to labelled pairs")
    return Graph.from_pairs(graph)


def _array_like(obj: Any) -> bool:
    """A numpy array, or an object numpy reads as one (pandas, pyarrow, ...)."""
    return isinstance(obj, np.ndarray) or (
        hasattr(obj, "__array__") and not isinstance(obj, (str, bytes, list, tuple))
    )


def _column(values: Any, name: str) -> np.ndarray:
    """One edge column of a ``(src, dst)`` tuple as a numpy array."""
    try:
        return np.asarray(values)
    except (TypeError, ValueError) as exc:  # e.g. a pandas column with missing values
        raise GraphInputError(f"{name} cannot be read as an array of node ids: {exc}") from None


def _is_frame(obj: Any) -> bool:
    """A pandas or pyarrow table (iterating one yields column names, not edges)."""
    kind = type(obj)
    return kind.__name__ in ("DataFrame", "Table", "RecordBatch") and hasattr(obj, "columns")


def is_sparse(obj: Any) -> bool:
    if not hasattr(obj, "tocoo") or not hasattr(obj, "format"):
        return False
    import scipy.sparse

    return bool(scipy.sparse.issparse(obj))


def _check_n(n: int | None, actual: int, what: str) -> None:
    if n is not None and node_count(n) != actual:
        raise GraphInputError(f"n = {n} disagrees with {what} of {actual} nodes")


def _index_array(values: Any, name: str, ids: bool = False) -> np.ndarray:
    """``values`` as an index array the core reads, without a copy when it already is one.

    int32 and int64 are kept (and uint32 for node ids, ``ids=True``); any
    other integer dtype is widened to int64.
    """
    array = values if isinstance(values, np.ndarray) else np.asarray(values)
    kind = array.dtype.kind
    if kind == "b" or kind not in "iu":
        hint = "" if kind != "f" else "; node ids must be integers (cast with .astype(np.int64))"
        raise GraphInputError(f"{name} has dtype {array.dtype}, expected integers{hint}")
    if array.dtype in (np.int32, np.int64) or (ids and array.dtype == np.uint32):
        return np.ascontiguousarray(array)
    if array.dtype == np.uint64 and array.size and int(array.max()) > np.iinfo(np.int64).max:
        position = int(array.argmax())
        raise GraphInputError(f"{name}[{position}] = {int(array[position])} is too large a node id")
    return np.ascontiguousarray(array, dtype=np.int64)


def _ids_for(indices: np.ndarray, n: int) -> np.ndarray:
    """``indices`` as they are, or widened to int64 when ``n`` node ids do not fit their dtype."""
    if n > np.iinfo(indices.dtype).max:
        return indices.astype(np.int64)
    return indices


def _same_width(a: np.ndarray, b: np.ndarray, largest: int) -> tuple[np.ndarray, np.ndarray]:
    """Both arrays in one dtype, widening to int64 when needed or when they differ."""
    if a.dtype == b.dtype and (a.dtype == np.int64 or largest <= _INT32_LIMIT):
        return a, b
    return a.astype(np.int64, copy=False), b.astype(np.int64, copy=False)


def _node_count(src: np.ndarray, dst: np.ndarray, n: int | None) -> int:
    if n is not None:
        return node_count(n)
    if len(src) == 0:
        return 0
    low = min(int(src.min()), int(dst.min()))
    if low < 0:
        name, array = ("src", src) if int(src.min()) == low else ("dst", dst)
        position = int(np.argmin(array))
        raise GraphInputError(f"{name}[{position}] = {low} is not a node id; ids must be >= 0")
    return max(int(src.max()), int(dst.max())) + 1


def as_nodes(graph: Graph, ids: np.ndarray) -> np.ndarray:
    """Node ids as the caller knows them: labels for a labelled graph, ids otherwise."""
    if graph.labels is None:
        return ids
    return graph.labels[ids]
