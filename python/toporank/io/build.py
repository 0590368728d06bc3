"""One builder turns the edge batches every reader produces into a Graph.

Batches given as a list are already in memory and are grouped at once.
Batches given as an iterator are streamed: each is counted (out-degrees,
largest id) by the compiled core and appended to a spill file in a
temporary folder; the spill is then read back in chunks and every edge is
placed in its row. Peak memory is the CSR itself (int32 indices whenever the
ids fit), a few bytes per node, and one batch. The spill is removed however
the build ends (errors and Ctrl-C included).
"""

from __future__ import annotations

import contextlib
import os
import shutil
import tempfile
from collections.abc import Iterable, Iterator
from dataclasses import dataclass
from typing import IO, Any

import numpy as np

from .. import _core
from .._errors import GraphInputError
from .._graph import Graph
from .options import SPOOL_LIMIT_BYTES
from .write import _bar

__all__ = ["BATCH_EDGES", "EdgeBatch", "LabelIndex", "build_graph"]

#: edges per batch the readers aim for (a batch costs about 16 bytes per edge while it lives)
BATCH_EDGES = 1 << 20
_INT32_MAX = 2**31 - 1


@dataclass(frozen=True)
class EdgeBatch:
    """A run of edges ``src[k] -> dst[k]`` as non-negative integer ids (labels already interned)."""

    src: np.ndarray
    dst: np.ndarray


class LabelIndex:
    """String labels numbered in first-seen order (row by row, source before target).

    The compiled core keeps one entry per distinct label, never one per edge
    and never a Python object per label while reading: each batch's pyarrow
    string buffers are handed over as they are and ids come back.
    """

    def __init__(self) -> None:
        self._interner = _core.LabelInterner()

    def __len__(self) -> int:
        return len(self._interner)

    def intern(self, src: Any, dst: Any) -> EdgeBatch:
        """Ids of one batch of labels (pyarrow string arrays of equal length, no nulls)."""
        src_offsets, src_data = _string_buffers(src)
        dst_offsets, dst_data = _string_buffers(dst)
        if src_offsets.dtype != dst_offsets.dtype:
            src_offsets, dst_offsets = src_offsets.astype(np.int64), dst_offsets.astype(np.int64)
        ids = self._interner.intern(src_offsets, src_data, dst_offsets, dst_data)
        return EdgeBatch(ids.src, ids.dst)

    def labels(self) -> np.ndarray:
        """``labels[i]`` names id ``i`` (an object array of str)."""
        import pyarrow as pa

        found = self._interner.labels()
        column = pa.LargeStringArray.from_buffers(
            len(found.offsets) - 1, pa.py_buffer(found.offsets), pa.py_buffer(found.data)
        )
        return np.asarray(column.to_numpy(zero_copy_only=False), dtype=object)


def _string_buffers(column: Any) -> tuple[np.ndarray, np.ndarray]:
    """Offsets (int32 or int64) and UTF-8 bytes of a pyarrow string array, without a copy."""
    import pyarrow as pa

    if isinstance(column, pa.ChunkedArray):
        column = column.combine_chunks()
    if not (pa.types.is_string(column.type) or pa.types.is_large_string(column.type)):
        column = column.cast(pa.large_string())
    width = np.int64 if pa.types.is_large_string(column.type) else np.int32
    _, offsets, data = column.buffers()
    positions = np.frombuffer(offsets, dtype=width)[column.offset : column.offset + len(column) + 1]
    if len(positions) == 0:
        positions = np.zeros(1, dtype=width)
    values = np.frombuffer(data, dtype=np.uint8) if data is not None else np.zeros(0, np.uint8)
    return np.ascontiguousarray(positions), values


def build_graph(
    batches: Iterable[EdgeBatch],
    *,
    labels: Any = None,
    n: int | None = None,
    spill_dir: str | None = None,
    spill_limit_bytes: int = SPOOL_LIMIT_BYTES,
    progress: bool = False,
    edge_positions: bool = True,
) -> Graph:
    """The Graph of all ``batches`` in order; ``labels`` names the ids when given.

    Parameters
    ----------
    batches
        A list (grouped in memory at once) or any other iterable of
        :class:`EdgeBatch` (streamed through a spill file, in bounded memory).
    labels
        Node names: an array (``labels[i]`` names id ``i``), or an object
        whose ``labels()`` method returns one (or None) once the batches are
        spent (a :class:`LabelIndex`, or the reader that filled one).
    n
        Node count (default: the largest id plus one).
    spill_dir
        Folder for the temporary spill (default: ``TMPDIR``).
    spill_limit_bytes
        Most bytes spilled; more is an error naming ``TOPORANK_SPOOL_LIMIT``.
    progress
        Show a progress bar of the placing pass on a terminal (the reader
        shows its own while the batches are read).
    edge_positions
        Keep each stored edge's input position when the input is not
        grouped by source (see :meth:`Graph.edge_input_positions`).

    Rows keep the input order of their edges.
    """
    if isinstance(batches, (list, tuple)):
        return _in_memory(list(batches), labels, n)
    return _streamed(
        iter(batches), labels, n, spill_dir, spill_limit_bytes, progress, edge_positions
    )


def _label_array(labels: Any) -> np.ndarray | None:
    named = getattr(labels, "labels", None)
    return named() if callable(named) else labels


def _in_memory(parts: list[EdgeBatch], labels: Any, n: int | None) -> Graph:
    if len(parts) == 1:
        src, dst = parts[0].src, parts[0].dst
    else:
        src = np.concatenate([b.src for b in parts]) if parts else np.zeros(0, np.int32)
        dst = np.concatenate([b.dst for b in parts]) if parts else np.zeros(0, np.int32)
    names = _label_array(labels)
    if names is not None:
        return Graph.from_labelled_edges(src, dst, names)
    return Graph.from_edges(src, dst, n)


def _narrowest(values: np.ndarray) -> np.ndarray:
    """``values`` as int32 when they fit (halving the spill), else int64."""
    if values.dtype == np.int32:
        return values
    if values.dtype == np.int64 and (len(values) == 0 or int(values.max()) <= _INT32_MAX):
        return values.astype(np.int32)
    return np.ascontiguousarray(values, dtype=np.int64)


def _checked(batch: EdgeBatch, first: int) -> tuple[np.ndarray, np.ndarray]:
    src, dst = np.asarray(batch.src), np.asarray(batch.dst)
    if src.ndim != 1 or dst.ndim != 1 or len(src) != len(dst):
        raise GraphInputError(
            f"an edge batch needs two 1-D arrays of one length, got shapes {src.shape} and "
            f"{dst.shape}"
        )
    for name, values in (("src", src), ("dst", dst)):
        if values.dtype.kind not in "iu":
            raise GraphInputError(f"{name} has dtype {values.dtype}, expected integers")
        if len(values) and values.dtype.kind == "i" and int(values.min()) < 0:
            position = int(np.argmin(values))
            raise GraphInputError(
                f"{name}[{first + position}] = {int(values[position])} is not a node id; "
                "ids must be >= 0"
            )
        if len(values) and values.dtype.kind == "u" and int(values.max()) > 2**63 - 1:
            position = int(np.argmax(values))
            raise GraphInputError(
                f"{name}[{first + position}] = {int(values[position])} is too large a node id"
            )
    src, dst = _narrowest(src), _narrowest(dst)
    if src.dtype != dst.dtype:
        src, dst = src.astype(np.int64), dst.astype(np.int64)
    return src, dst


class _Spill:
    """Edge batches appended to one temporary file, read back batch by batch."""

    def __init__(self, folder: str, limit: int) -> None:
        self.folder = folder
        self.path = os.path.join(folder, "edges.bin")
        self.limit = limit
        self.sizes: list[tuple[int, np.dtype[Any]]] = []
        self.bytes = 0
        self._out: IO[bytes] | None = open(self.path, "wb")

    def append(self, src: np.ndarray, dst: np.ndarray) -> None:
        self.bytes += src.nbytes + dst.nbytes
        if self.bytes > self.limit:
            raise GraphInputError(
                f"the edge spill grew past {self.limit} bytes, the spool limit "
                "(set TOPORANK_SPOOL_LIMIT to raise it)"
            )
        assert self._out is not None
        try:
            src.tofile(self._out)
            dst.tofile(self._out)
        except OSError as exc:
            raise GraphInputError(
                f"cannot write the temporary edge spill in {self.folder}: "
                f"{exc.strerror or exc}; set TMPDIR to a folder with room"
            ) from None
        self.sizes.append((len(src), src.dtype))

    def batches(self) -> Iterator[tuple[np.ndarray, np.ndarray]]:
        if self._out is not None:
            self._out.close()
            self._out = None
        with open(self.path, "rb") as f:
            for count, dtype in self.sizes:
                src = np.fromfile(f, dtype=dtype, count=count)
                dst = np.fromfile(f, dtype=dtype, count=count)
                if len(src) != count or len(dst) != count:
                    raise GraphInputError(f"the temporary edge spill {self.path} was truncated")
                yield src, dst

    def close(self) -> None:
        if self._out is not None:
            with contextlib.suppress(OSError):
                self._out.close()
            self._out = None


@contextlib.contextmanager
def spill_folder(spill_dir: str | None) -> Iterator[str]:
    """A private temporary folder, removed on the way out whatever happens."""
    try:
        folder = tempfile.mkdtemp(prefix="toporank-spill-", dir=spill_dir)
    except OSError as exc:
        where = spill_dir or tempfile.gettempdir()
        raise GraphInputError(
            f"cannot create a temporary folder for the edge spill in {where}: "
            f"{exc.strerror or exc}; set TMPDIR to a writable folder with room"
        ) from None
    try:
        yield folder
    finally:
        shutil.rmtree(folder, ignore_errors=True)


def _streamed(
    batches: Iterator[EdgeBatch],
    labels: Any,
    n: int | None,
    spill_dir: str | None,
    limit: int,
    progress: bool,
    edge_positions: bool,
) -> Graph:
    builder = _core.CsrBuilder()
    with spill_folder(spill_dir) as folder:
        spill = _Spill(folder, limit)
        try:
            for batch in batches:
                src, dst = _checked(batch, builder.edges)
                builder.count(src, dst)
                spill.append(src, dst)
        finally:
            spill.close()
        names = _label_array(labels)
        nodes = builder.nodes
        if names is not None:
            nodes = max(nodes, len(names))
        if n is not None:
            if n < builder.nodes:
                raise GraphInputError(
                    f"n = {n} but the edges reach node id {builder.nodes - 1}; ids must lie in "
                    f"0..{n}"
                )
            nodes = n
        grouped = builder.grouped
        builder.start(nodes, edge_positions and not grouped)
        with _bar(builder.edges, "building", "graph", progress, unit="edges") as bar:
            for src, dst in spill.batches():
                builder.place(src, dst)
                bar.update(len(src))
        built = builder.finish()
    if grouped or edge_positions:
        return Graph(built.indptr, built.indices, names, None, None, built.positions)
    return Graph(built.indptr, built.indices, names, None, None, None, _positions_dropped=True)
