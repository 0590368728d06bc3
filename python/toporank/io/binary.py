"""Binary and Matrix Market graph files: ``.npy`` edge arrays, ``.npz`` archives, ``.mtx``."""

from __future__ import annotations

import os
import re
import zipfile
from collections.abc import Iterator
from typing import Any

import numpy as np

from .._errors import GraphInputError
from .._graph import Graph
from .build import BATCH_EDGES, EdgeBatch, build_graph
from .common import GraphFileError, check_memory, check_path
from .options import ReadOptions
from .write import _bar

__all__ = ["read_matrix_market", "read_npy", "read_npz"]

_ENTRY = re.compile(r"\b(src|dst)\[(\d+)\]")


def _row_words(message: str, columns: tuple[str, str] = ("column 0", "column 1")) -> str:
    """A core message about ``src[k]``/``dst[k]`` in the file's words (row k, column c)."""

    def word(match: re.Match[str]) -> str:
        column = columns[0] if match.group(1) == "src" else columns[1]
        return f"row {match.group(2)}, {column}"

    return _ENTRY.sub(word, message)


def read_matrix_market(path: str) -> Graph:
    """A graph from a Matrix Market file: stored entry ``(i, j)`` is the edge ``i -> j``."""
    import scipy.io

    check_path(path)
    try:
        rows, cols, entries, layout, _field_kind, symmetry = scipy.io.mminfo(path)
    except (ValueError, OSError, IndexError) as exc:
        raise GraphFileError(path, f"not a Matrix Market file ({exc})") from None
    if rows != cols:
        raise GraphFileError(
            path, f"the header claims a {rows} x {cols} matrix; an adjacency matrix must be square"
        )
    mirrored = 2 if symmetry != "general" else 1
    if layout == "array":
        needed = rows * cols * 8
        claim = f"a dense {rows} x {cols} array"
    else:
        # row, column and value arrays, then the CSR the core uses
        needed = entries * mirrored * 40 + rows * 16
        claim = f"{entries} entries in a {rows} x {cols} matrix"
    check_memory(path, needed, claim)
    try:
        matrix = scipy.io.mmread(path)
    except (ValueError, OSError, IndexError, OverflowError) as exc:
        raise GraphFileError(path, f"cannot read Matrix Market data: {exc}") from None
    if not hasattr(matrix, "tocoo"):
        import scipy.sparse

        matrix = scipy.sparse.coo_array(matrix)
    return Graph.from_sparse(matrix)


def read_npz(path: str) -> Graph:
    """A graph from ``.npz``: a scipy sparse matrix (``save_npz``) or ``src``/``dst`` arrays.

    The second kind is what ``np.savez(path, src=..., dst=...)`` writes, with
    optional ``labels`` (one name per node) and ``n`` (the node count).
    """
    import scipy.sparse

    check_path(path)
    try:
        with zipfile.ZipFile(path) as archive:
            members = {info.filename: info.file_size for info in archive.infolist()}
            if {"src.npy", "dst.npy"} <= set(members):
                return _read_edge_arrays(path, archive)
            if "format.npy" not in members or "shape.npy" not in members:
                found = ", ".join(sorted(members)) or "nothing"
                raise GraphFileError(
                    path,
                    "holds neither a scipy sparse matrix (format, shape, ...) nor src and dst "
                    f"edge arrays; found {found}",
                )
            with archive.open("shape.npy") as f:
                shape_array = np.load(f, allow_pickle=False)
    except GraphFileError:
        raise
    except (zipfile.BadZipFile, ValueError, OSError, EOFError) as exc:
        raise GraphFileError(path, f"is not a readable .npz archive ({_reason(exc)})") from None
    if shape_array.ndim != 1 or shape_array.dtype.kind not in "iu":
        raise GraphFileError(
            path,
            f"its shape entry is a {shape_array.ndim}-D {shape_array.dtype} array; "
            "a sparse matrix's shape is two integers",
        )
    shape = tuple(int(x) for x in shape_array)
    if len(shape) != 2 or shape[0] != shape[1]:
        raise GraphFileError(
            path, f"the matrix has shape {shape}; an adjacency matrix must be square"
        )
    check_memory(
        path, sum(members.values()) * 2 + shape[0] * 16, f"a {shape[0]} x {shape[1]} matrix"
    )
    try:
        matrix = scipy.sparse.load_npz(path)
    except (ValueError, OSError, KeyError, TypeError) as exc:
        raise GraphFileError(path, f"cannot load the sparse matrix ({_reason(exc)})") from None
    return Graph.from_sparse(matrix)


def _reason(exc: BaseException) -> str:
    # the message without the path it may repeat
    return (
        str(exc).replace(str(getattr(exc, "filename", "") or "\0"), "").strip(" :'\"")
        or type(exc).__name__
    )


def _read_edge_arrays(path: str, archive: zipfile.ZipFile) -> Graph:
    arrays: dict[str, np.ndarray] = {}
    for name in ("src", "dst", "labels", "n"):
        if f"{name}.npy" in archive.namelist():
            with archive.open(f"{name}.npy") as f:
                try:
                    arrays[name] = np.load(f, allow_pickle=False)
                except ValueError as exc:
                    raise GraphFileError(path, f"its {name} array cannot be read ({exc})") from None
    src, dst = arrays["src"], arrays["dst"]
    for name, array in (("src", src), ("dst", dst)):
        if array.ndim != 1 or array.dtype.kind not in "iu":
            raise GraphFileError(
                path,
                f"its {name} array is a {array.ndim}-D {array.dtype} array; "
                "edge endpoints are one-dimensional integer ids",
            )
    if len(src) != len(dst):
        raise GraphFileError(path, f"src has {len(src)} entries but dst has {len(dst)}")
    n = None
    if "n" in arrays:
        value = arrays["n"]
        if value.ndim != 0 or value.dtype.kind not in "iu":
            raise GraphFileError(path, f"its n entry must be one integer, got {value!r}")
        n = int(value)
    labels = None
    if "labels" in arrays:
        labels = arrays["labels"]
        if labels.ndim != 1:
            raise GraphFileError(path, f"its labels array is {labels.ndim}-D; one name per node")
        labels = labels.astype(object)
        if len(set(labels.tolist())) != len(labels):
            values, counts = np.unique(labels.astype(str), return_counts=True)
            twice = str(values[counts > 1][0])
            raise GraphFileError(path, f"its labels name {twice!r} twice; one name per node")
    try:
        return build_graph([EdgeBatch(src, dst)], labels=labels, n=n)
    except GraphInputError as exc:
        raise GraphFileError(path, _row_words(str(exc), ("src", "dst"))) from None


def read_npy(path: str, options: ReadOptions | None = None) -> Graph:
    """A graph from an integer ``.npy`` array of shape ``(m, 2)``: one edge per row.

    The rows are read in batches straight from the file (never loaded or
    mapped whole) and grouped into CSR in bounded memory.
    """
    options = options or ReadOptions()
    check_path(path)
    try:
        with open(path, "rb") as f:
            version = np.lib.format.read_magic(f)
            if version == (1, 0):
                shape, fortran, dtype = np.lib.format.read_array_header_1_0(f)
            else:
                shape, fortran, dtype = np.lib.format.read_array_header_2_0(f)
            offset = f.tell()
    except (ValueError, OSError) as exc:
        raise GraphFileError(path, f"is not a readable .npy file ({exc})") from None
    if dtype.kind not in "iu":
        raise GraphFileError(path, f"holds dtype {dtype}; an edge array needs integer node ids")
    if len(shape) != 2 or shape[1] != 2:
        raise GraphFileError(
            path, f"holds an array of shape {shape}; an edge array has shape (m, 2)"
        )
    claimed = int(np.prod(shape)) * dtype.itemsize
    actual = os.path.getsize(path) - offset
    if claimed > actual:
        raise GraphFileError(
            path,
            f"the header claims shape {shape} ({claimed} bytes) but the file holds {actual} bytes",
        )
    m = int(shape[0])
    # the CSR: indices and, for input not grouped by source, input positions
    check_memory(path, m * 8, f"shape {shape}")
    try:
        return build_graph(
            _npy_batches(path, offset, m, dtype, fortran, options.progress),
            spill_dir=options.spill_dir,
            spill_limit_bytes=options.spool_limit_bytes,
            progress=options.progress,
            edge_positions=options.edge_positions,
        )
    except GraphInputError as exc:
        raise GraphFileError(path, _row_words(str(exc))) from None


def _npy_batches(
    path: str, offset: int, m: int, dtype: np.dtype[Any], fortran: bool, progress: bool
) -> Iterator[EdgeBatch]:
    """Row batches of an ``(m, 2)`` array stored at ``offset`` of ``path``."""
    size = dtype.itemsize
    with open(path, "rb") as f, _bar(m, "reading", path, progress, unit="edges") as bar:
        for start in range(0, m, BATCH_EDGES):
            count = min(BATCH_EDGES, m - start)
            if fortran:
                f.seek(offset + start * size)
                src = np.fromfile(f, dtype=dtype, count=count)
                f.seek(offset + (m + start) * size)
                dst = np.fromfile(f, dtype=dtype, count=count)
            else:
                f.seek(offset + 2 * start * size)
                pairs = np.fromfile(f, dtype=dtype, count=2 * count).reshape(-1, 2)
                src, dst = pairs[:, 0], pairs[:, 1]
            if len(src) != count or len(dst) != count:
                raise GraphFileError(path, "ended while being read (truncated or changed)")
            if not dtype.isnative:
                src, dst = src.astype(dtype.newbyteorder("=")), dst.astype(dtype.newbyteorder("="))
            yield EdgeBatch(np.ascontiguousarray(src), np.ascontiguousarray(dst))
            bar.update(count)
