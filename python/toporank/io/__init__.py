"""Reading graph files into a :class:`~toporank.Graph`, and writing results.

Layout: :mod:`.options` (``ReadOptions``), :mod:`.text` (delimited text,
gzip), :mod:`.binary` (``.npy``, ``.npz``, ``.mtx``), :mod:`.nodes` (order
and key files), :mod:`.write` (atomic files, streams). Every reader yields
:class:`~.build.EdgeBatch` runs that :func:`~.build.build_graph` turns into
one Graph, so other readers and builders plug in behind :func:`read_graph`.
"""

from __future__ import annotations

import dataclasses
import os
from collections.abc import Sequence
from typing import Any

from .._graph import Graph
from .binary import read_matrix_market, read_npy, read_npz
from .build import EdgeBatch, build_graph
from .common import GraphFileError, check_path
from .nodes import read_key, read_nodes
from .options import DELIMITERS, FILE_FORMATS, ReadOptions, file_format
from .text import read_text_edges
from .write import OutputError, atomic_output, check_writable, write_json

__all__ = [
    "DELIMITERS",
    "FILE_FORMATS",
    "EdgeBatch",
    "GraphFileError",
    "OutputError",
    "ReadOptions",
    "atomic_output",
    "build_graph",
    "check_writable",
    "read_graph",
    "read_key",
    "read_nodes",
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
        FIFOs and ``/dev/fd/N`` (process substitution) are read once.
    options
        A :class:`ReadOptions` holding the fields below (and a few more:
        ``comment``, ``note``, line and spool limits); keywords given
        explicitly override its fields.
    format
        ``"text"`` (delimited edge list, one edge per line: source then
        target), ``"mtx"`` (Matrix Market; stored entry ``(i, j)`` is the edge
        ``i -> j``), ``"npz"`` (a scipy sparse matrix saved with
        ``scipy.sparse.save_npz``) or ``"npy"`` (an integer array of shape
        ``(m, 2)``). ``None`` picks by the file name's ending (``.mtx``,
        ``.mm``, ``.npz``, ``.npy``; anything else is text).
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
        For text: the source and target columns, as 0-based positions or as
        header names (names imply ``header=True``). Other columns are ignored.
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
        "progress": progress or None,
    }
    chosen = {k: v for k, v in given.items() if v is not None}
    if tuple(columns) != (0, 1):
        chosen["columns"] = tuple(columns)
    options = dataclasses.replace(options or ReadOptions(), **chosen)
    kind = file_format(name, options.format)
    if kind != "text" and name == "-":
        raise GraphFileError("<stdin>", f"standard input can only carry delimited text, not {kind}")
    if kind != "text":
        check_path(name)
    if kind == "mtx":
        return read_matrix_market(name)
    if kind == "npz":
        return read_npz(name)
    if kind == "npy":
        return read_npy(name)
    batches, names = read_text_edges(name, options)
    return build_graph(batches, labels=names)
