"""Reading graphs from files, and writing results so that no partial file is ever left.

Delimited text goes through ``pyarrow.csv`` (multithreaded, streamed in
blocks); when that fast path fails, the file is scanned again line by line
with the standard ``csv`` module, which either finds what pyarrow could not
take (a comment line in the middle, runs of spaces) or names the offending
line. Matrix Market goes through ``scipy.io``; ``.npz`` through
``scipy.sparse``; ``.npy`` through numpy with the header checked first.
"""

from __future__ import annotations

import contextlib
import csv
import gzip
import io
import os
import re
import shutil
import sys
import tempfile
import threading
import zipfile
from collections.abc import Callable, Iterator, Sequence
from dataclasses import dataclass
from typing import IO, Any

import numpy as np

from ._errors import GraphInputError
from ._graph import Graph

__all__ = ["GraphFileError", "read_graph"]

FILE_FORMATS = ("text", "mtx", "npz", "npy")
DELIMITERS = {"tab": "\t", "\\t": "\t", "comma": ",", "space": " ", "whitespace": None}

_SNIFF_LINES = 200
_INTEGER = re.compile(r"[+-]?[0-9]+\Z")
_SHOW_CHARS = 80


class GraphFileError(GraphInputError):
    """A graph file (or an order or key file) cannot be read.

    Attributes
    ----------
    path : str
        The file, or ``"<stdin>"``.
    line : int or None
        1-based line number of the offending line, when the problem is one line.
    text : str or None
        The offending text (the line, or the field within it).
    """

    def __init__(self, path: str, message: str, line: int | None = None, text: str | None = None):
        self.path = path
        self.line = line
        self.text = text
        where = f"{path}:{line}" if line is not None else path
        shown = "" if text is None else f": {_shorten(text)!r}"
        super().__init__(f"{where}: {message}{shown}")

    def __reduce__(self) -> tuple[Any, ...]:
        return (_rebuild_file_error, (self.path, self.args[0], self.line, self.text))


def _rebuild_file_error(path: str, full: str, line: int | None, text: str | None) -> GraphFileError:
    error = GraphFileError(path, "", line, text)
    error.args = (full,)
    return error


def _shorten(text: str) -> str:
    text = text.rstrip("\r\n")
    return text if len(text) <= _SHOW_CHARS else text[: _SHOW_CHARS - 3] + "..."


def read_graph(
    source: str | os.PathLike[str],
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
        A path, or ``"-"`` for standard input (delimited text only).
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
        ``None`` detects one when it is not numeric but the lines after it
        are; a header of labels can't be told from an edge, so pass ``True``.
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
        Malformed input; the message names the file, the line number and the
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
    kind = _file_format(name, format)
    if kind != "text" and name == "-":
        raise GraphFileError("<stdin>", f"standard input can only carry delimited text, not {kind}")
    if kind == "mtx":
        return _read_matrix_market(name)
    if kind == "npz":
        return _read_npz(name)
    if kind == "npy":
        return _read_npy(name)
    with _local_copy(name) as (path, shown):
        table = _read_text(
            path, shown, delimiter, header, columns, ("node", "node"), labels, progress
        )
    return _graph_from_columns(table)


def _file_format(name: str, format: str | None) -> str:
    if format is not None:
        if format not in FILE_FORMATS:
            raise GraphInputError(f"format must be one of {FILE_FORMATS}, got {format!r}")
        return format
    lower = name.lower().removesuffix(".gz")
    if lower.endswith((".mtx", ".mm")):
        return "mtx"
    if lower.endswith(".npz"):
        return "npz"
    if lower.endswith(".npy"):
        return "npy"
    return "text"


# ---------------------------------------------------------------------------
# delimited text


@dataclass
class _Layout:
    delimiter: str | None  # None: runs of whitespace
    skip: int  # physical lines before the first data line (comments, blanks, header)
    first_line: int  # 1-based number of the first data line
    columns: tuple[int, ...]
    kinds: tuple[str, ...]  # per column: "id", "label" or "number"
    width: int  # fields on the first data line
    line_bytes: float  # mean length of the sampled data lines, for the progress bar


@dataclass
class _Table:
    """Parsed columns: ``values[k]`` is a numpy array (ids, numbers) or a pyarrow array (labels)."""

    values: list[Any]
    kinds: tuple[str, ...]
    path: str
    first_line: int


@contextlib.contextmanager
def _local_copy(name: str) -> Iterator[tuple[str, str]]:
    """A seekable path for ``name``: standard input is spooled to a temporary file first."""
    if name != "-":
        if not os.path.exists(name):
            raise GraphFileError(name, "no such file")
        if os.path.isdir(name):
            raise GraphFileError(name, "is a folder, not a file")
        yield name, name
        return
    fd, path = tempfile.mkstemp(prefix="toporank-stdin-", suffix=".txt")
    try:
        with os.fdopen(fd, "wb") as spool:
            shutil.copyfileobj(sys.stdin.buffer, spool, 1 << 20)
        yield path, "<stdin>"
    finally:
        with contextlib.suppress(OSError):
            os.unlink(path)


def _open_text(path: str) -> IO[str]:
    if path.endswith(".gz"):
        return io.TextIOWrapper(gzip.open(path, "rb"), encoding="utf-8-sig", newline="")
    return open(path, encoding="utf-8-sig", newline="")


def _split(line: str, delimiter: str | None) -> list[str]:
    """Fields of one line, with the same quoting rules as the fast path."""
    line = line.rstrip("\r\n")
    if delimiter is None:
        return line.split()
    if delimiter == ",":
        return next(csv.reader([line]), [])
    return line.split(delimiter)


def _is_skipped(line: str) -> bool:
    stripped = line.strip()
    return not stripped or stripped.startswith("#")


def _read_text(
    path: str,
    shown: str,
    delimiter: str | None,
    header: bool | None,
    columns: Sequence[int | str],
    roles: tuple[str, ...],
    labels: bool | None,
    progress: bool,
) -> _Table:
    layout = _sniff(path, shown, delimiter, header, columns, roles, labels)
    try:
        # ids parse faster, and the CSR takes half the memory, as int32;
        # ids beyond its range fail that read, and int64 is tried next
        try:
            values = _read_fast(path, layout, progress, narrow=True)
        except _NeedsCarefulRead:
            if "id" not in layout.kinds:
                raise
            values = _read_fast(path, layout, progress, narrow=False)
    except _NeedsCarefulRead:
        values = _read_careful(path, shown, layout)
    return _Table(values, layout.kinds, shown, layout.first_line)


def _sniff(
    path: str,
    shown: str,
    delimiter: str | None,
    header: bool | None,
    columns: Sequence[int | str],
    roles: tuple[str, ...],
    labels: bool | None,
) -> _Layout:
    delimiter = DELIMITERS.get(delimiter, delimiter) if delimiter is not None else None
    if delimiter is not None and len(delimiter) != 1:
        raise GraphInputError(
            f"delimiter must be one character or {tuple(DELIMITERS)}, got {delimiter!r}"
        )
    if len(columns) != len(roles):
        raise GraphInputError(f"columns must name {len(roles)} columns, got {list(columns)!r}")
    skipped = 0
    sample: list[tuple[int, str]] = []
    try:
        with _open_text(path) as f:
            for number, line in enumerate(f, start=1):
                if _is_skipped(line):
                    if not sample:
                        skipped += 1
                    continue
                sample.append((number, line))
                if len(sample) >= _SNIFF_LINES:
                    break
    except UnicodeDecodeError as exc:
        raise GraphFileError(
            shown, f"is not UTF-8 text ({exc.reason} at byte {exc.start})"
        ) from None
    if not sample:
        raise GraphFileError(shown, "holds no edges (only blank or # comment lines)")
    if delimiter is None and "\t" in sample[0][1]:
        delimiter = "\t"
    elif delimiter is None and "," in sample[0][1]:
        delimiter = ","
    rows = [(number, line, _split(line, delimiter)) for number, line in sample]
    named = any(isinstance(c, str) for c in columns)
    if header is None:
        # a column can tell a header only if it is numeric below it: not labels
        telling = [c for c, r in zip(columns, roles, strict=True) if r == "number" or not labels]
        header = named or _looks_like_header(rows, telling)
    if named and not header:
        raise GraphInputError(f"columns {list(columns)!r} name header columns, but header=False")
    positions: list[int] = []
    names = rows[0][2] if header else []
    for column in columns:
        if isinstance(column, str):
            if column not in names:
                raise GraphFileError(
                    shown,
                    f"no column named {column!r}; the header has {names}",
                    rows[0][0],
                    rows[0][1],
                )
            positions.append(names.index(column))
        elif isinstance(column, (int, np.integer)) and not isinstance(column, bool) and column >= 0:
            positions.append(int(column))
        else:
            raise GraphInputError(
                f"columns must be 0-based positions or header names, got {column!r}"
            )
    data = rows[1:] if header else rows
    if header:
        skipped = rows[0][0]
    if not data:
        raise GraphFileError(shown, "holds a header but no edges")
    for number, line, fields in data:
        if len(fields) <= max(positions):
            raise _missing_column(shown, number, line, fields, max(positions))
    kinds = tuple(
        _kind(role, labels, data, position) for role, position in zip(roles, positions, strict=True)
    )
    line_bytes = sum(len(line.encode()) for _, line, _ in data) / len(data)
    return _Layout(
        delimiter, skipped, data[0][0], tuple(positions), kinds, len(data[0][2]), line_bytes
    )


def _looks_like_header(
    rows: list[tuple[int, str, list[str]]], columns: Sequence[int | str]
) -> bool:
    if len(rows) < 2:
        return False
    # a header is told apart by a column that is numeric on every line but the first
    for column in (c for c in columns if isinstance(c, int)):
        if not _numeric(rows[0][2], column) and all(_numeric(f, column) for _, _, f in rows[1:]):
            return True
    return False


def _numeric(fields: list[str], column: int) -> bool:
    if column >= len(fields):
        return False
    try:
        float(fields[column])
    except ValueError:
        return False
    return True


def _kind(
    role: str, labels: bool | None, data: list[tuple[int, str, list[str]]], position: int
) -> str:
    if role == "number":
        return "number"
    if labels is None:
        labels = not all(_INTEGER.match(fields[position].strip()) for _, _, fields in data)
    return "label" if labels else "id"


def _missing_column(
    path: str, number: int, line: str, fields: list[str], needed: int
) -> GraphFileError:
    return GraphFileError(
        path, f"needs at least {needed + 1} columns, found {len(fields)}", number, line
    )


class _NeedsCarefulRead(Exception):
    """The fast path met something it does not handle; the careful path decides."""


def _read_fast(path: str, layout: _Layout, progress: bool, narrow: bool) -> list[Any]:
    import pyarrow as pa
    import pyarrow.compute as pc
    import pyarrow.csv as pacsv

    names = [f"f{c}" for c in layout.columns]
    types = {
        "id": pa.int32() if narrow else pa.int64(),
        "label": pa.string(),
        "number": pa.float64(),
    }
    read_options = pacsv.ReadOptions(skip_rows=layout.skip, autogenerate_column_names=True)
    parse_options = pacsv.ParseOptions(
        delimiter=layout.delimiter or " ",
        quote_char='"' if layout.delimiter == "," else False,
        invalid_row_handler=_skip_comment_rows,
    )
    convert_options = pacsv.ConvertOptions(
        include_columns=names,
        column_types={name: types[kind] for name, kind in zip(names, layout.kinds, strict=True)},
        strings_can_be_null=False,
        quoted_strings_can_be_null=False,
    )
    if layout.width <= max(layout.columns):
        raise _NeedsCarefulRead
    if _bar_shown(progress):
        options = (read_options, parse_options, convert_options)
        chunks = _read_streamed(path, names, options, layout.line_bytes)
    else:
        table = _in_background(
            lambda: pacsv.read_csv(path, read_options, parse_options, convert_options)
        )
        if isinstance(table, (pa.ArrowInvalid, pa.ArrowNotImplementedError)):
            raise _NeedsCarefulRead
        if isinstance(table, BaseException):
            raise table
        chunks = [table.column(name).chunks for name in names]
    values: list[Any] = []
    for kind, pieces in zip(layout.kinds, chunks, strict=True):
        column = pa.chunked_array(pieces, type=types[kind])
        if column.null_count:
            raise _NeedsCarefulRead
        if kind == "label":
            if column.nbytes >= 2**31 - 2**24:
                # one array of more than 2 GiB of labels needs 64-bit offsets
                column = column.cast(pa.large_string())
            array = column.combine_chunks()
            if len(array) and pc.min(pc.utf8_length(array)).as_py() == 0:
                raise _NeedsCarefulRead
            values.append(array)
            continue
        flat = column.to_numpy() if column.num_chunks != 1 else column.chunk(0).to_numpy()
        if kind == "id" and len(flat) and int(flat.min()) < 0:
            raise _NeedsCarefulRead
        if kind == "number" and np.isnan(flat).any():
            raise _NeedsCarefulRead
        values.append(flat)
    return values


def _read_streamed(
    path: str, names: list[str], options: tuple[Any, ...], line_bytes: float
) -> list[list[Any]]:
    """Columns read block by block, moving the progress bar (used when it is on screen).

    The bar counts bytes as rows parsed times the sampled mean line length:
    the stream's own position runs ahead, read by a prefetching thread.
    """
    import pyarrow as pa
    import pyarrow.csv as pacsv

    chunks: list[list[Any]] = [[] for _ in names]
    # the uncompressed size of a .gz is unknown: count bytes without a total
    total = None if path.endswith(".gz") else os.path.getsize(path)
    try:
        with (
            pa.input_stream(path, compression="detect") as stream,
            _bar(total, "reading", path, True) as bar,
        ):
            rows = 0
            for batch in pacsv.open_csv(stream, *options):
                for k, name in enumerate(names):
                    chunks[k].append(batch.column(name))
                rows += batch.num_rows
                done = int(rows * line_bytes)
                bar.update((done if total is None else min(done, total)) - bar.n)
            if total is not None:
                bar.update(total - bar.n)
    except (pa.ArrowInvalid, pa.ArrowNotImplementedError, StopIteration):
        raise _NeedsCarefulRead from None
    return chunks


def _in_background(work: Callable[[], Any]) -> Any:
    """``work()``'s result (or the exception it raised), computed on a helper thread.

    pyarrow's multithreaded reader does not answer Ctrl-C while it parses;
    waiting on a thread in short steps keeps this (main) thread able to
    raise KeyboardInterrupt within a tenth of a second.
    """
    outcome: list[Any] = []

    def run() -> None:
        try:
            outcome.append(work())
        except BaseException as exc:  # handed to the caller
            outcome.append(exc)

    worker = threading.Thread(target=run, name="toporank-reader", daemon=True)
    worker.start()
    while worker.is_alive():
        worker.join(0.1)
    return outcome[0]


def _skip_comment_rows(row: Any) -> str:
    return "skip" if row.text.lstrip().startswith("#") else "error"


def _read_careful(path: str, shown: str, layout: _Layout) -> list[Any]:
    """Line-by-line read with the standard library; names the first bad line."""
    import pyarrow as pa

    collected: list[list[Any]] = [[] for _ in layout.columns]
    needed = max(layout.columns)
    with _open_text(path) as f:
        lines = enumerate(f, start=1)
        for number, line in lines:
            if number < layout.first_line or _is_skipped(line):
                continue
            fields = _split(line, layout.delimiter)
            if len(fields) <= needed:
                raise _missing_column(shown, number, line, fields, needed)
            for k, (column, kind) in enumerate(zip(layout.columns, layout.kinds, strict=True)):
                collected[k].append(_field(shown, number, line, fields[column], kind))
    values: list[Any] = []
    for kind, items in zip(layout.kinds, collected, strict=True):
        if kind == "label":
            values.append(pa.array(items, type=pa.string()))
        else:
            values.append(np.asarray(items, dtype=np.int64 if kind == "id" else np.float64))
    return values


def _field(path: str, number: int, line: str, text: str, kind: str) -> Any:
    token = text.strip()
    if kind == "label":
        if not token:
            raise GraphFileError(path, "empty node label", number, line)
        return text
    if kind == "id":
        if not _INTEGER.match(token):
            hint = " (pass labels=True, or --labels, to read nodes as string labels)"
            raise GraphFileError(path, f"{token!r} is not an integer node id{hint}", number, line)
        value = int(token)
        if value < 0:
            raise GraphFileError(path, f"{value} is not a node id; ids must be >= 0", number, line)
        if value >= 2**63:
            raise GraphFileError(path, f"{value} is too large a node id", number, line)
        return value
    try:
        number_value = float(token)
    except ValueError:
        raise GraphFileError(path, f"{token!r} is not a number", number, line) from None
    if np.isnan(number_value):
        raise GraphFileError(path, "NaN is not a usable key value", number, line)
    return number_value


def _graph_from_columns(table: _Table) -> Graph:
    src, dst = table.values
    if table.kinds[0] != table.kinds[1]:
        raise GraphInputError("source and target columns must both be ids or both be labels")
    if table.kinds[0] == "id":
        return Graph.from_edges(src, dst)
    src_ids, dst_ids, labels = _intern(src, dst)
    return Graph.from_labelled_edges(src_ids, dst_ids, labels)


def _intern(src: Any, dst: Any) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Ids of string labels numbered in first-seen order, row by row, source before target."""
    import pyarrow as pa
    import pyarrow.compute as pc

    m = len(src)
    if src.type != dst.type:
        src, dst = src.cast(pa.large_string()), dst.cast(pa.large_string())
    # One hash pass over both columns gives a shared dictionary numbered by
    # first appearance in "all sources, then all targets"; renumber it to
    # the row-by-row order (source, target, source, ...) of Graph.from_pairs.
    encoded = pc.dictionary_encode(pa.chunked_array([src, dst]))
    src_codes = encoded.chunk(0).indices.to_numpy()
    dst_codes = encoded.chunk(1).indices.to_numpy()
    dictionary = encoded.chunk(1).dictionary
    count = len(dictionary)
    first_seen = np.full(count, 2 * m, dtype=np.int64)
    np.minimum.at(first_seen, src_codes, np.arange(0, 2 * m, 2, dtype=np.int64))
    np.minimum.at(first_seen, dst_codes, np.arange(1, 2 * m, 2, dtype=np.int64))
    old_of_new = np.argsort(first_seen, kind="stable")
    width = np.int32 if count <= np.iinfo(np.int32).max else np.int64
    new_of_old = np.empty(count, dtype=width)
    new_of_old[old_of_new] = np.arange(count, dtype=width)
    labels = dictionary.take(pa.array(old_of_new)).to_numpy(zero_copy_only=False)
    return new_of_old[src_codes], new_of_old[dst_codes], labels.astype(object, copy=False)


# ---------------------------------------------------------------------------
# binary and Matrix Market formats


def available_memory() -> int:
    """Bytes of memory available to a new allocation (MemAvailable on Linux)."""
    with contextlib.suppress(OSError, ValueError):
        with open("/proc/meminfo") as f:
            for line in f:
                if line.startswith("MemAvailable:"):
                    return int(line.split()[1]) * 1024
    with contextlib.suppress(AttributeError, ValueError, OSError):
        return os.sysconf("SC_AVPHYS_PAGES") * os.sysconf("SC_PAGE_SIZE")
    return 2**62


def _check_memory(path: str, needed: int, claim: str) -> None:
    available = available_memory()
    if needed > available:
        raise GraphFileError(
            path,
            f"the header claims {claim}, about {needed / 2**30:.1f} GiB to load, but only "
            f"{available / 2**30:.1f} GiB of memory is available; refusing before allocating",
        )


def _read_matrix_market(path: str) -> Graph:
    import scipy.io

    if not os.path.isfile(path):
        raise GraphFileError(path, "no such file")
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
    _check_memory(path, needed, claim)
    try:
        matrix = scipy.io.mmread(path)
    except (ValueError, OSError, IndexError, OverflowError) as exc:
        raise GraphFileError(path, f"cannot read Matrix Market data: {exc}") from None
    if not hasattr(matrix, "tocoo"):
        import scipy.sparse

        matrix = scipy.sparse.coo_array(matrix)
    return Graph.from_sparse(matrix)


def _read_npz(path: str) -> Graph:
    import scipy.sparse

    if not os.path.isfile(path):
        raise GraphFileError(path, "no such file")
    try:
        with zipfile.ZipFile(path) as archive:
            members = {info.filename: info.file_size for info in archive.infolist()}
            if "format.npy" not in members or "shape.npy" not in members:
                found = ", ".join(sorted(members)) or "nothing"
                raise GraphFileError(
                    path,
                    f"is not a scipy sparse .npz (save_npz writes format and shape; found {found})",
                )
            with archive.open("shape.npy") as f:
                shape = tuple(int(x) for x in np.load(f))
    except (zipfile.BadZipFile, ValueError, OSError) as exc:
        raise GraphFileError(path, f"is not a readable .npz archive ({exc})") from None
    if len(shape) != 2 or shape[0] != shape[1]:
        raise GraphFileError(
            path, f"the matrix has shape {shape}; an adjacency matrix must be square"
        )
    _check_memory(
        path, sum(members.values()) * 2 + shape[0] * 16, f"a {shape[0]} x {shape[1]} matrix"
    )
    try:
        matrix = scipy.sparse.load_npz(path)
    except (ValueError, OSError, KeyError) as exc:
        raise GraphFileError(path, f"cannot load the sparse matrix ({exc})") from None
    return Graph.from_sparse(matrix)


def _read_npy(path: str) -> Graph:
    if not os.path.isfile(path):
        raise GraphFileError(path, "no such file")
    try:
        with open(path, "rb") as f:
            version = np.lib.format.read_magic(f)
            if version == (1, 0):
                shape, _, dtype = np.lib.format.read_array_header_1_0(f)
            else:
                shape, _, dtype = np.lib.format.read_array_header_2_0(f)
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
    _check_memory(path, claimed * 3, f"shape {shape}")
    edges = np.load(path, mmap_mode="r")
    try:
        return Graph.from_edges(
            np.ascontiguousarray(edges[:, 0]), np.ascontiguousarray(edges[:, 1])
        )
    except GraphInputError as exc:
        raise GraphFileError(
            path, str(exc).replace("src[", "row ").replace("dst[", "row ")
        ) from None


# ---------------------------------------------------------------------------
# node-aligned side files: orders and keys


def read_nodes(path: str, graph: Graph, *, progress: bool = False) -> np.ndarray:
    """Nodes listed in a file: one per line, a CSV's ``node`` column, or ``.npy``."""
    if path.endswith(".npy"):
        try:
            return np.load(path, allow_pickle=False)
        except (ValueError, OSError) as exc:
            raise GraphFileError(path, f"is not a readable .npy file ({exc})") from None
    labelled = graph.labels is not None
    with _local_copy(path) as (local, shown):
        columns: tuple[int | str, ...] = (0,)
        header: bool | None = False
        delimiter: str | None = "\t"
        with _open_text(local) as f:
            first = next((line for line in f if not _is_skipped(line)), "")
        if path.endswith(".csv") or first.rstrip("\r\n").split(",")[0] == "node":
            delimiter = ","
            if first.rstrip("\r\n").split(",")[0] == "node":
                columns, header = ("node",), True
        table = _read_text(local, shown, delimiter, header, columns, ("node",), labelled, progress)
    values = table.values[0]
    if labelled:
        return np.asarray(values.to_numpy(zero_copy_only=False), dtype=object)
    return values


def read_key(path: str, graph: Graph, *, progress: bool = False) -> np.ndarray:
    """A per-node key read from a two-column file (node, value); every node needs a value."""
    labelled = graph.labels is not None
    with _local_copy(path) as (local, shown):
        table = _read_text(local, shown, None, None, (0, 1), ("node", "number"), labelled, progress)
    nodes, values = table.values
    if labelled:
        index = graph.label_index
        names = nodes.to_numpy(zero_copy_only=False)
        ids = np.fromiter((index.get(x, -1) for x in names), dtype=np.int64, count=len(names))
    else:
        ids = np.asarray(nodes, dtype=np.int64)
        names = ids
    unknown = np.flatnonzero((ids < 0) | (ids >= graph.n))
    if len(unknown):
        raise GraphFileError(shown, f"names node {names[unknown[0]]!r}, which is not in the graph")
    key = np.full(graph.n, np.nan)
    key[ids] = values
    missing = np.flatnonzero(np.isnan(key))
    if len(missing):
        node = missing[0] if graph.labels is None else graph.labels[missing[0]]
        raise GraphFileError(shown, f"has no value for node {node!r}; every node needs one")
    if np.all(key == np.round(key)) and np.all(np.abs(key) < 2**53):
        return key.astype(np.int64)
    return key


# ---------------------------------------------------------------------------
# writing


@contextlib.contextmanager
def atomic_output(path: str, binary: bool = False) -> Iterator[IO[Any]]:
    """A file object whose content replaces ``path`` only once the block completes.

    The data go to a hidden temporary file in the same folder, which is
    flushed, synced and renamed into place; on any exception (Ctrl-C
    included) it is deleted, so ``path`` is either untouched or complete.
    """
    folder = os.path.dirname(os.path.abspath(path))
    fd, temporary = tempfile.mkstemp(
        prefix=f".{os.path.basename(path)}.", suffix=".partial", dir=folder
    )
    try:
        with os.fdopen(fd, "wb" if binary else "w", encoding=None if binary else "utf-8") as f:
            yield f
            f.flush()
            os.fsync(f.fileno())
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(temporary, 0o666 & ~umask)
        os.replace(temporary, path)
    except BaseException:
        with contextlib.suppress(OSError):
            os.unlink(temporary)
        raise


def check_writable(path: str, inputs: Sequence[str]) -> None:
    """Refuse, before any work, an output that would overwrite an input or cannot be written."""
    target = os.path.realpath(path)
    for source in inputs:
        if source != "-" and os.path.realpath(source) == target:
            raise GraphInputError(
                f"output {path} is the input file {source}; refusing to overwrite it"
            )
    folder = os.path.dirname(target)
    if not os.path.isdir(folder):
        raise GraphInputError(
            f"cannot write {path}: folder {os.path.dirname(path) or '.'} does not exist"
        )
    if not os.access(folder, os.W_OK):
        raise GraphInputError(f"cannot write {path}: folder {folder} is not writable")
    if os.path.isdir(target):
        raise GraphInputError(f"cannot write {path}: it is a folder")


def _bar_shown(enabled: bool) -> bool:
    return enabled and sys.stderr.isatty()


@contextlib.contextmanager
def _bar(total: int | None, verb: str, path: str, enabled: bool, unit: str = "B") -> Iterator[Any]:
    from tqdm import tqdm

    show = _bar_shown(enabled)
    with tqdm(
        total=total,
        desc=f"{verb} {os.path.basename(path)}",
        unit=unit,
        unit_scale=True,
        delay=1.0,
        disable=not show,
        file=sys.stderr,
        leave=False,
    ) as bar:
        yield bar


def node_strings(graph: Graph, ids: np.ndarray) -> list[str]:
    """Nodes as text: labels for a labelled graph, decimal ids otherwise."""
    if graph.labels is None:
        return [str(x) for x in np.asarray(ids).tolist()]
    return [str(x) for x in graph.labels[ids]]


def write_lines(f: IO[str], items: Any, *, progress: bool = False, what: str = "output") -> None:
    """Write ``items`` one per line, in chunks, with a progress bar for long writes."""
    chunk = 1 << 20
    with _bar(len(items), "writing", what, progress, unit="lines") as bar:
        for start in range(0, len(items), chunk):
            part = items[start : start + chunk]
            values = part.tolist() if isinstance(part, np.ndarray) else list(part)
            f.write("\n".join(map(str, values)))
            f.write("\n")
            bar.update(len(values))


def write_table(
    f: IO[str],
    header: Sequence[str],
    columns: Sequence[Any],
    *,
    progress: bool = False,
    what: str = "output",
) -> None:
    """Write parallel columns as CSV (fields quoted when they need it), in chunks."""
    writer = csv.writer(f, lineterminator="\n")
    writer.writerow(header)
    total = len(columns[0]) if columns else 0
    chunk = 1 << 18
    with _bar(total, "writing", what, progress, unit="rows") as bar:
        for start in range(0, total, chunk):
            parts = [
                c[start : start + chunk].tolist()
                if isinstance(c, np.ndarray)
                else list(c[start : start + chunk])
                for c in columns
            ]
            writer.writerows(zip(*parts, strict=True))
            bar.update(len(parts[0]))
