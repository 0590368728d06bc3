"""Reading graph files into a :class:`~toporank.Graph`, and writing results.

Layout: :mod:`.options` (``ReadOptions``), :mod:`.text` (delimited text,
gzip), :mod:`.binary` (``.npy``, ``.npz``, ``.mtx``), :mod:`.parquet`
(Parquet files and datasets), :mod:`.saved` (saved-graph folders),
:mod:`.nodes` (order and key files), :mod:`.write` (atomic files, streams).
Every edge-list reader yields :class:`~.build.EdgeBatch` runs that
:func:`~.build.build_graph` turns into one Graph in bounded memory.
"""

from __future__ import annotations

import dataclasses
import os
from collections.abc import Sequence
from typing import Any

import numpy as np

from .._graph import Graph
from .binary import read_matrix_market, read_npy, read_npz
from .build import EdgeBatch, LabelIndex, build_graph
from .common import GraphFileError, check_path
from .nodes import read_key, read_nodes
from .options import DELIMITERS, FILE_FORMATS, ReadOptions, file_format
from .parquet import ParquetEdges
from .saved import read_saved, save_graph
from .text import TextEdges
from .write import OutputError, atomic_output, check_writable, write_json

__all__ = [
    "DELIMITERS",
    "FILE_FORMATS",
    "EdgeBatch",
    "GraphFileError",
    "LabelIndex",
    "OutputError",
    "ReadOptions",
    "atomic_output",
    "build_graph",
    "check_writable",
    "read_graph",
    "read_key",
    "read_nodes",
    "save_graph",
    "write_json",
]


def read_graph(
    source: str | os.PathLike[str],
    options: ReadOptions | None = None,
    *,
    format: str | None = None,
    delimiter: str | None = None,
    header: bool | None = None,
    columns: Sequence[int | str] = (0, 1),
    labels: bool | None = None,
    progress: bool = False,
) -> Graph:
    """Return the graph stored in a file, as a :class:`Graph`.

    Parameters
    ----------
    source
        A path, or ``"-"`` for standard input (delimited text only). Pipes,
        FIFOs and ``/dev/fd/N`` (process substitution) are read once. A
        folder is a saved graph (written by :func:`save_graph` or ``toporank
        pack``; opened memory-mapped) when it holds ``graph.json``, else a
        Parquet dataset.
    options
        A :class:`ReadOptions` holding the fields below (and a few more:
        ``comment``, ``note``, line and spool limits); keywords given
        explicitly override its fields.
    format
        ``"text"`` (delimited edge list, one edge per line: source then
        target), ``"mtx"`` (Matrix Market; stored entry ``(i, j)`` is the edge
        ``i -> j``), ``"npz"`` (a scipy sparse matrix saved with
        ``scipy.sparse.save_npz``), ``"npy"`` (an integer array of shape
        ``(m, 2)``), ``"parquet"`` (a file or a folder of files; two integer
        or two string columns) or ``"saved"`` (a saved-graph folder).
        ``None`` picks by the file name's ending (``.mtx``, ``.mm``,
        ``.npz``, ``.npy``, ``.parquet``, ``.pq``; a folder as above;
        anything else is text).
    delimiter
        For text: ``"\\t"``, ``","``, ``" "``, or ``None`` to detect tab,
        then comma, else runs of whitespace. The words ``"tab"``,
        ``"comma"``, ``"space"`` and ``"whitespace"`` are accepted too.
    header
        For text: whether the first non-comment line names the columns.
        ``None`` (the default) detects one: a first line whose fields are
        not integers while the lines after it are, or whose fields are
        named in ``columns``, or, in a file of labels, a first line of two
        plain words (letters and ``_``, no digits) that never occur again as nodes.
    columns
        For text and Parquet: the source and target columns, as 0-based
        positions or as header (column) names (names imply ``header=True``
        for text). Other columns are ignored.
    labels
        For text: ``True`` reads node fields as string labels, interned to
        ids in first-seen order (row by row, source before target, as
        :meth:`Graph.from_pairs` does); ``False`` reads non-negative integer
        ids; ``None`` decides from the first lines.
    progress
        Show a progress bar on standard error when reading takes more than a
        second and standard error is a terminal.

    Returns
    -------
    Graph
        Integer ids as given (``n`` is the largest id plus one), or labels.

    Raises
    ------
    GraphFileError
        A file that is missing, unreadable (permission denied, a folder),
        or malformed input; the message names the file, the line number and the
        offending text. Also raised, before anything is allocated, when a
        header claims more memory than is available.

    Notes
    -----
    Text, ``.npy`` and Parquet edge lists are read in batches and grouped
    into CSR in bounded memory: the CSR itself (4 bytes per edge while ids
    and the edge count fit int32) plus about 16 bytes per node and one batch;
    the batches wait in a temporary spill file (``ReadOptions.spill_dir``).
    Rows keep the input order of their edges.

    Lines starting with ``#`` are comments and blank lines are skipped.
    Comma-separated fields may be quoted (``"a,b"``); tab-separated ones are
    taken literally.

    Examples
    --------
    >>> import os, tempfile, toporank
    >>> folder = tempfile.mkdtemp()
    >>> path = os.path.join(folder, "modules.tsv")
    >>> with open(path, "w") as f:
    ...     _ = f.write("# module\\tdepends on it\\nlog\\tcore\\ncore\\tapp\\nlog\\tapp\\n")
    >>> g = toporank.read_graph(path)
    >>> g.labels
    array(['log', 'core', 'app'], dtype=object)
    >>> toporank.order(g)
    array(['log', 'core', 'app'], dtype=object)
    """
    name = os.fspath(source)
    given: dict[str, Any] = {
        "format": format,
        "delimiter": delimiter,
        "header": header,
        "labels": labels,
        "progress": None if progress is False else progress,
    }
    chosen = {k: v for k, v in given.items() if v is not None}
    sequence = isinstance(columns, (list, tuple, np.ndarray))
    flags = sequence and any(isinstance(c, (bool, np.bool_)) for c in columns)  # True == 1
    if not sequence or flags or tuple(columns) != (0, 1):
        # ReadOptions refuses what is no sequence of positions or names
        chosen["columns"] = tuple(columns) if sequence else columns
    options = dataclasses.replace(options or ReadOptions(), **chosen)
    kind = file_format(name, options.format)
    if kind != "text" and name == "-":
        raise GraphFileError("<stdin>", f"standard input can only carry delimited text, not {kind}")
    if kind == "saved":
        if not os.path.isdir(name):
            check_path(name)
            raise GraphFileError(name, "is a file; a saved graph is a folder")
        return read_saved(name)
    if kind == "parquet":
        if not os.path.isdir(name):
            check_path(name)
        parquet = ParquetEdges(name, options)
        return _built(parquet, parquet, options)
    if kind != "text":
        check_path(name)
    if kind == "mtx":
        return read_matrix_market(name)
    if kind == "npz":
        return read_npz(name)
    if kind == "npy":
        return read_npy(name, options)
    text = TextEdges(name, options)
    return _built(text, text, options)


def _built(batches: Any, labels: Any, options: ReadOptions) -> Graph:
    return build_graph(
        iter(batches),
        labels=labels,
        spill_dir=options.spill_dir,
        spill_limit_bytes=options.spool_limit_bytes,
        progress=options.progress,
        edge_positions=options.edge_positions,
    )
