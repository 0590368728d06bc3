"""A saved graph: a folder of CSR ``.npy`` arrays and a JSON description, opened memory-mapped.

Layout of the folder::

    graph.json      the description (below)
    indptr.npy      n + 1 offsets, int32 or int64
    indices.npy     m node ids, int32 or int64
    positions.npy   (optional) input position of each stored edge, when the
                    input was not grouped by source
    labels.arrow    (optional) one string per node, an Arrow IPC file with
                    one column ``label``

``graph.json`` holds ``{"format": "toporank saved graph", "version": 1,
"nodes": n, "edges": m, "indptr": dtype, "indices": dtype, "positions":
bool, "labels": bool, "source": {...}}``, where ``source`` says where the
graph was read from (path, format, size in bytes, modification time).

Opening maps the arrays without reading them, then checks them against
the description in one compiled pass (offsets start at 0, never decrease,
end at m; every id below n). Writing is atomic: the folder is written
under a temporary name beside the target and renamed into place.
"""

from __future__ import annotations

import contextlib
import json
import os
import shutil
import tempfile
from typing import Any

import numpy as np

from .. import _core
from .._errors import GraphInputError
from .._graph import Graph, as_graph
from .common import GraphFileError
from .options import SAVED_DESCRIPTION

__all__ = ["read_saved", "save_graph"]

FORMAT = "toporank saved graph"
VERSION = 1
_WIDTHS = {"indptr": ("int32", "int64"), "indices": ("int32", "int64", "uint32")}
_DESCRIPTION_BYTES = 1 << 20


def save_graph(
    graph: Any, folder: str | os.PathLike[str], source: dict[str, Any] | None = None
) -> None:
    """Write ``graph`` as a saved-graph folder at ``folder``, atomically; return None.

    The folder holds the CSR arrays as ``.npy`` files and a JSON
    description (see :mod:`toporank.io.saved`); :func:`read_graph` opens it
    memory-mapped in well under a second whatever its size. Labels are saved
    as text. An existing saved graph at ``folder`` is replaced; any other
    existing file or folder there is refused.

    Parameters
    ----------
    graph
        The graph to save, in any form :func:`toporank.order` accepts.
    folder : str
        The folder to write (its parent must exist).
    source : dict, optional
        Where the graph came from (path, format, ...), kept in the description.

    Raises
    ------
    GraphFileError
        ``folder`` exists and is not a saved graph, or cannot be written.

    Examples
    --------
    >>> import os, tempfile, toporank
    >>> folder = os.path.join(tempfile.mkdtemp(), "modules.graph")
    >>> g = toporank.Graph.from_pairs([("core", "app"), ("log", "core")])
    >>> toporank.save_graph(g, folder)
    >>> sorted(os.listdir(folder))
    ['graph.json', 'indices.npy', 'indptr.npy', 'labels.arrow', 'positions.npy']
    >>> g = toporank.read_graph(folder)
    >>> toporank.order(g)
    array(['log', 'core', 'app'], dtype=object)
    """
    graph = as_graph(graph)
    folder = os.path.abspath(os.fspath(folder))
    if os.path.lexists(folder) and not os.path.exists(os.path.join(folder, SAVED_DESCRIPTION)):
        raise GraphFileError(
            folder, "exists and is not a saved graph; refusing to replace it (remove it first)"
        )
    parent = os.path.dirname(folder)
    try:
        work = tempfile.mkdtemp(prefix=f".{os.path.basename(folder)}.", dir=parent)
    except OSError as exc:
        raise GraphFileError(parent, f"cannot write here: {exc.strerror or exc}") from None
    try:
        positions = graph.edge_input_positions()
        np.save(os.path.join(work, "indptr.npy"), np.asarray(graph.indptr))
        np.save(os.path.join(work, "indices.npy"), np.asarray(graph.indices))
        if positions is not None:
            np.save(os.path.join(work, "positions.npy"), np.asarray(positions))
        if graph.labels is not None:
            _write_labels(os.path.join(work, "labels.arrow"), graph.labels)
        description = {
            "format": FORMAT,
            "version": VERSION,
            "nodes": graph.n,
            "edges": graph.m,
            "indptr": str(graph.indptr.dtype),
            "indices": str(graph.indices.dtype),
            "positions": positions is not None,
            "labels": graph.labels is not None,
            "source": source or {},
        }
        with open(os.path.join(work, SAVED_DESCRIPTION), "w") as f:
            json.dump(description, f, indent=2)
            f.write("\n")
        os.chmod(work, 0o777 & ~_umask())
        _replace(work, folder)
    except OSError as exc:
        shutil.rmtree(work, ignore_errors=True)
        raise GraphFileError(
            folder, f"cannot write the saved graph: {exc.strerror or exc}"
        ) from None
    except BaseException:
        shutil.rmtree(work, ignore_errors=True)
        raise


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def _replace(work: str, folder: str) -> None:
    """Rename ``work`` to ``folder``; an old saved graph there is moved aside, then removed."""
    if not os.path.lexists(folder):
        os.rename(work, folder)
        return
    old = tempfile.mkdtemp(prefix=f".{os.path.basename(folder)}.old.", dir=os.path.dirname(folder))
    os.rmdir(old)
    os.rename(folder, old)
    try:
        os.rename(work, folder)
    except OSError:
        os.rename(old, folder)
        raise
    shutil.rmtree(old, ignore_errors=True)


def _write_labels(path: str, labels: np.ndarray) -> None:
    import pyarrow as pa

    values = pa.array([str(x) for x in labels.tolist()], type=pa.large_string())
    table = pa.table({"label": values})
    with pa.OSFile(path, "wb") as sink, pa.ipc.new_file(sink, table.schema) as writer:
        writer.write_table(table, max_chunksize=1 << 20)


def read_saved(folder: str) -> Graph:
    """The graph saved at ``folder``, its arrays memory-mapped, checked against the description."""
    description = _description(folder)
    n, m = description["nodes"], description["edges"]
    indptr = _array(folder, "indptr.npy", description["indptr"], n + 1)
    indices = _array(folder, "indices.npy", description["indices"], m)
    try:
        _core.check_csr(indptr, indices)
    except GraphInputError as exc:
        raise GraphFileError(folder, f"its arrays are not a valid graph: {exc}") from None
    positions = None
    if description["positions"]:
        positions = _array(folder, "positions.npy", description["indptr"], m)
    labels = _read_labels(folder, n) if description["labels"] else None
    return Graph(indptr, indices, labels, None, None, positions)


def _description(folder: str) -> dict[str, Any]:
    path = os.path.join(folder, SAVED_DESCRIPTION)
    try:
        with open(path, "rb") as f:
            text = f.read(_DESCRIPTION_BYTES + 1)
    except OSError as exc:
        raise GraphFileError(folder, f"cannot read {SAVED_DESCRIPTION}: {exc.strerror}") from None
    if len(text) > _DESCRIPTION_BYTES:
        raise GraphFileError(folder, f"{SAVED_DESCRIPTION} is too long to be a description")
    try:
        description = json.loads(text)
    except (ValueError, UnicodeDecodeError) as exc:
        raise GraphFileError(folder, f"{SAVED_DESCRIPTION} is not valid JSON ({exc})") from None
    if not isinstance(description, dict) or description.get("format") != FORMAT:
        raise GraphFileError(folder, f"{SAVED_DESCRIPTION} does not describe a saved graph")
    if description.get("version") != VERSION:
        raise GraphFileError(
            folder,
            f"saved graph version {description.get('version')!r}; this toporank reads "
            f"version {VERSION}",
        )
    for key in ("nodes", "edges"):
        value = description.get(key)
        if isinstance(value, bool) or not isinstance(value, int) or value < 0:
            raise GraphFileError(
                folder, f"{SAVED_DESCRIPTION}: {key} must be a count >= 0, got {value!r}"
            )
    for key in ("indptr", "indices"):
        if description.get(key) not in _WIDTHS[key]:
            raise GraphFileError(
                folder,
                f"{SAVED_DESCRIPTION}: {key} must be one of {_WIDTHS[key]}, "
                f"got {description.get(key)!r}",
            )
    for key in ("positions", "labels"):
        if not isinstance(description.get(key), bool):
            raise GraphFileError(
                folder,
                f"{SAVED_DESCRIPTION}: {key} must be true or false, got {description.get(key)!r}",
            )
    return description


def _array(folder: str, name: str, dtype: str, length: int) -> np.ndarray:
    path = os.path.join(folder, name)
    try:
        array = np.load(path, mmap_mode="r", allow_pickle=False)
    except FileNotFoundError:
        raise GraphFileError(folder, f"{name} is missing") from None
    except (OSError, ValueError, EOFError) as exc:
        raise GraphFileError(folder, f"{name} is not a readable .npy array ({exc})") from None
    if array.ndim != 1 or str(array.dtype) != dtype or not array.dtype.isnative:
        raise GraphFileError(
            folder,
            f"{name} holds a {array.ndim}-D {array.dtype} array; the description says 1-D {dtype}",
        )
    if len(array) != length:
        raise GraphFileError(
            folder, f"{name} holds {len(array)} entries; the description says {length}"
        )
    return array.view(np.ndarray)


def _read_labels(folder: str, n: int) -> np.ndarray:
    import pyarrow as pa
    import pyarrow.compute as pc

    path = os.path.join(folder, "labels.arrow")
    try:
        with pa.memory_map(path) as source:
            table = pa.ipc.open_file(source).read_all()
    except FileNotFoundError:
        raise GraphFileError(folder, "labels.arrow is missing") from None
    except (OSError, pa.ArrowInvalid) as exc:
        raise GraphFileError(folder, f"labels.arrow is not a readable Arrow file ({exc})") from None
    if table.column_names != ["label"] or not (
        pa.types.is_string(table.schema.field("label").type)
        or pa.types.is_large_string(table.schema.field("label").type)
    ):
        raise GraphFileError(folder, "labels.arrow must hold one string column, label")
    column = table.column("label")
    if len(column) != n:
        raise GraphFileError(
            folder, f"labels.arrow holds {len(column)} labels; the description says {n} nodes"
        )
    if column.null_count or pc.count_distinct(column).as_py() != n:
        raise GraphFileError(folder, "labels.arrow names a node twice or not at all")
    with contextlib.suppress(AttributeError):
        column = column.combine_chunks()
    labels: np.ndarray = np.asarray(column.to_numpy(zero_copy_only=False), dtype=object)
    return labels
