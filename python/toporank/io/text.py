"""Delimited text edge lists (tab, comma, whitespace; gzip allowed).

Text goes through ``pyarrow.csv`` (multithreaded, streamed in blocks); when
that fast path fails, the file is scanned again line by line, which either
finds what pyarrow could not take (a comment line in the middle, runs of
spaces) or names the offending line. Lines are never longer than
``ReadOptions.max_line_bytes``: the sniffer reads a bounded prefix.
"""

from __future__ import annotations

import csv
import os
import re
import threading
from collections.abc import Callable, Iterator, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from .._errors import GraphInputError
from .build import BATCH_EDGES, EdgeBatch, LabelIndex
from .common import GraphFileError, local_copy, read_lines
from .options import DELIMITERS, ReadOptions
from .write import _bar, _bar_shown

__all__ = ["Table", "TextEdges", "read_text_columns"]

_SNIFF_LINES = 200
_BLOCK_BYTES = (
    1 << 20
)  # text per streamed block (~70k edges); larger blocks raise the peak, not the speed
_HEADER_LINES = 2000  # lines searched for a labelled header's words reappearing as nodes
_INTEGER = re.compile(r"[+-]?[0-9]+\Z")
_WORD = re.compile(r"[A-Za-z_][A-Za-z_ ]*\Z")  # no digits: "n17" is more likely a node


@dataclass
class _Layout:
    delimiter: str | None  # None: runs of whitespace
    skip: int  # physical lines before the first data line (comments, blanks, header)
    first_line: int  # 1-based number of the first data line
    columns: tuple[int, ...]
    kinds: tuple[str, ...]  # per column: "id", "label" or "number"
    width: int  # fields on the first data line
    line_bytes: float  # mean length of the sampled data lines, for the progress bar
    comment: str = "#"  # a line starting with it (after blanks) is a comment; "": none

    def guard(self) -> str | None:
        """The column read as text to catch comment lines, if one must be added.

        pyarrow's reader knows no comments: a comment line with as many fields
        as an edge line parses as an edge unless its first field fails to parse.
        ``None`` when there are no comments or column 0 is read anyway.
        """
        return None if not self.comment or 0 in self.columns else "f0"

    def skip_row(self, row: Any) -> str:
        """pyarrow's verdict on a line of the wrong width: skip comments, fail on the rest."""
        comment = self.comment and row.text.strip().startswith(self.comment)
        return "skip" if comment else "error"

    def commented(self, columns: dict[str, Any]) -> bool:
        """Whether a parsed block holds a comment line (the careful path must read it)."""
        import pyarrow as pa
        import pyarrow.compute as pc

        first = columns.get("f0")
        if not self.comment or first is None or not pa.types.is_string(first.type):
            return False  # ids and numbers: a comment already failed to parse
        mark = self.comment.encode()[0]
        for chunk in first.chunks if isinstance(first, pa.ChunkedArray) else [first]:
            text = chunk.buffers()[2]
            # a scan of the raw bytes first: about 7 times cheaper than the trimmed test
            if text is None or not np.any(np.frombuffer(text, dtype=np.uint8) == mark):
                continue
            starts = pc.starts_with(pc.utf8_ltrim_whitespace(chunk), pattern=self.comment)
            if pc.any(starts).as_py():
                return True
        return False


@dataclass
class Table:
    """Parsed columns: ``values[k]`` is a numpy array (ids, numbers) or a pyarrow array (labels)."""

    values: list[Any]
    kinds: tuple[str, ...]
    path: str
    first_line: int


class TextEdges:
    """The edges of a delimited text file as an iterator of batches, read once, in bounded memory.

    Iterating opens the file (spooling a pipe or FIFO first), detects its
    layout and yields :class:`EdgeBatch` runs of about ``BATCH_EDGES`` edges
    through pyarrow's streaming CSV reader; when that reader meets something
    it does not take, the rest of the file is read line by line, which names
    a bad line. Labelled files are interned batch by batch into one
    :class:`LabelIndex`; :meth:`labels` gives the names once the batches are spent.
    """

    def __init__(self, name: str, options: ReadOptions) -> None:
        self.name = name
        self.options = options
        self.index: LabelIndex | None = None

    def labels(self) -> np.ndarray | None:
        """Node names (labelled files), or None for integer ids."""
        return None if self.index is None else self.index.labels()

    def __iter__(self) -> Iterator[EdgeBatch]:
        with local_copy(self.name, self.options) as (path, shown):
            layout = _sniff(path, shown, self.options, ("node", "node"))
            if layout.kinds[0] != layout.kinds[1]:
                raise GraphInputError(
                    "source and target columns must both be ids or both be labels"
                )
            if layout.kinds[0] == "label":
                self.index = LabelIndex()
            done = 0
            try:
                for src, dst in _fast_batches(path, layout, self.options.progress):
                    batch = self._batch(src, dst)
                    done += len(batch.src)
                    yield batch
            except _NeedsCarefulRead:
                for src, dst in _careful_batches(path, shown, layout, self.options, done):
                    yield self._batch(src, dst)

    def _batch(self, src: Any, dst: Any) -> EdgeBatch:
        if self.index is not None:
            return self.index.intern(src, dst)
        return EdgeBatch(src, dst)


def _split(line: str, delimiter: str | None) -> list[str]:
    """Fields of one line, with the same quoting rules as the fast path."""
    line = line.rstrip("\r\n")
    if delimiter is None:
        return line.split()
    if delimiter == ",":
        return next(csv.reader([line]), [])
    return line.split(delimiter)


def _skipper(comment: str) -> Callable[[str], bool]:
    def skipped(line: str) -> bool:
        stripped = line.strip()
        return not stripped or (bool(comment) and stripped.startswith(comment))

    return skipped


def read_text_columns(path: str, shown: str, options: ReadOptions, roles: tuple[str, ...]) -> Table:
    """The columns ``options.columns`` of a local text file, parsed as ``roles`` say.

    ``roles`` holds ``"node"`` (id or label, as ``options.labels`` says or the
    file shows) or ``"number"`` per column.
    """
    layout = _sniff(path, shown, options, roles)
    try:
        # ids parse faster, and the CSR takes half the memory, as int32;
        # ids beyond its range fail that read, and int64 is tried next
        try:
            values = _read_fast(path, layout, options.progress, narrow=True)
        except _NeedsCarefulRead:
            if "id" not in layout.kinds:
                raise
            values = _read_fast(path, layout, options.progress, narrow=False)
    except _NeedsCarefulRead:
        values = _read_careful(path, shown, layout, options)
    return Table(values, layout.kinds, shown, layout.first_line)


def _sniff(path: str, shown: str, options: ReadOptions, roles: tuple[str, ...]) -> _Layout:
    delimiter, header, columns, labels = (
        options.delimiter,
        options.header,
        tuple(options.columns),
        options.labels,
    )
    delimiter = DELIMITERS.get(delimiter, delimiter) if delimiter is not None else None
    if delimiter is not None and len(delimiter) != 1:
        raise GraphInputError(
            f"delimiter must be one character or {tuple(DELIMITERS)}, got {delimiter!r}"
        )
    if len(columns) != len(roles):
        raise GraphInputError(f"columns must name {len(roles)} columns, got {list(columns)!r}")
    for column in columns:
        if (
            isinstance(column, bool)
            or not isinstance(column, (int, np.integer, str))
            or (not isinstance(column, str) and column < 0)
        ):
            raise GraphInputError(
                f"columns must be 0-based positions or header names, got {column!r}"
            )
    if len(set(columns)) != len(columns):
        raise GraphInputError(
            f"columns {','.join(map(str, columns))} name the same column twice; "
            "give the source column, then a different target column"
        )
    skipped_line = _skipper(options.comment)
    leading = 0
    sample: list[tuple[int, str]] = []
    later: list[tuple[int, str]] = []
    for number, line in read_lines(path, shown, options):
        if skipped_line(line):
            if not sample:
                leading += 1
            continue
        if len(sample) < _SNIFF_LINES:
            sample.append((number, line))
        elif labels is not False and header is None:
            later.append((number, line))
        if len(sample) >= _SNIFF_LINES and (
            labels is False or header is not None or len(later) >= _HEADER_LINES
        ):
            break
    if not sample:
        what = "edges" if roles == ("node", "node") else "entries"
        raise GraphFileError(shown, f"holds no {what} (only blank or comment lines)")
    if delimiter is None and "\t" in sample[0][1]:
        delimiter = "\t"
    elif delimiter is None and "," in sample[0][1]:
        delimiter = ","
    rows = [(number, line, _split(line, delimiter)) for number, line in sample]
    named = any(isinstance(c, str) for c in columns)
    guessed = False
    if header is None:
        header = named or _numeric_header(rows, columns, roles, labels)
        if not header and labels is not False and roles == ("node", "node"):
            rest = rows + [(n, line, _split(line, delimiter)) for n, line in later]
            header = guessed = _word_header(rest, columns, roles)
    if named and not header:
        raise GraphInputError(f"columns {list(columns)!r} name header columns, but header=False")
    positions: list[int] = []
    names = [name.strip() for name in rows[0][2]] if header else []
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
        else:
            positions.append(int(column))
    if len(set(positions)) != len(positions):
        raise GraphInputError(
            f"columns {','.join(map(str, columns))} name the same column twice; "
            "give the source column, then a different target column"
        )
    data = rows[1:] if header else rows
    skip = rows[0][0] if header else leading
    if not data:
        what = "edges" if roles == ("node", "node") else "entries"
        raise GraphFileError(shown, f"holds a header but no {what}")
    if guessed and options.note is not None:
        options.note(
            f"{shown}:{rows[0][0]}: read as a header ({', '.join(names)}); "
            "pass --no-header (header=False) if it is an edge"
        )
    for number, line, fields in data:
        if len(fields) <= max(positions):
            raise _missing_column(shown, number, line, fields, max(positions))
    width = len(data[0][2])
    if options.note is not None and width > len(positions) and not named:
        options.note(
            f"{shown}: {width} columns; reading columns {' and '.join(map(str, positions))}, "
            "the others are ignored (choose with --columns)"
        )
    kinds = tuple(
        _kind(role, labels, data, position) for role, position in zip(roles, positions, strict=True)
    )
    line_bytes = sum(len(line.encode()) for _, line, _ in data) / len(data)
    return _Layout(
        delimiter,
        skip,
        data[0][0],
        tuple(positions),
        kinds,
        len(data[0][2]),
        line_bytes,
        options.comment,
    )


def _numeric_header(
    rows: list[tuple[int, str, list[str]]],
    columns: Sequence[int | str],
    roles: tuple[str, ...],
    labels: bool | None,
) -> bool:
    """A first line not numeric in a column that is numeric on most later lines."""
    if len(rows) < 2:
        return False
    for column, role in zip(columns, roles, strict=True):
        if not isinstance(column, int) or (role == "node" and labels):
            continue
        check = _is_integer if role == "node" else _is_number
        # most later lines (not all: a bad value further down is reported at its own line)
        later = sum(check(f, column) for _, _, f in rows[1:])
        if not check(rows[0][2], column) and 2 * later > len(rows) - 1:
            return True
    return False


def _word_header(
    rows: list[tuple[int, str, list[str]]], columns: Sequence[int | str], roles: tuple[str, ...]
) -> bool:
    """A labelled file's first line of plain distinct words that never occur again as nodes."""
    if len(rows) < 2:
        return False
    positions = [
        c for c, r in zip(columns, roles, strict=True) if r == "node" and isinstance(c, int)
    ]
    first = rows[0][2]
    if not positions or max(positions) >= len(first):
        return False
    words = [first[c].strip() for c in positions]
    if not all(_WORD.match(w) for w in words) or len(set(words)) != len(words):
        return False
    for _, _, fields in rows[1:]:
        if any(c < len(fields) and fields[c].strip() in words for c in positions):
            return False
    return True


def _is_integer(fields: list[str], column: int) -> bool:
    return column < len(fields) and bool(_INTEGER.match(fields[column].strip()))


def _is_number(fields: list[str], column: int) -> bool:
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
    guard = layout.guard()
    types = {
        "id": pa.int32() if narrow else pa.int64(),
        "label": pa.string(),
        "number": pa.float64(),
    }
    column_types = {name: types[kind] for name, kind in zip(names, layout.kinds, strict=True)}
    if guard is not None:
        column_types[guard] = pa.string()
    read_options = pacsv.ReadOptions(skip_rows=layout.skip, autogenerate_column_names=True)
    parse_options = pacsv.ParseOptions(
        delimiter=layout.delimiter or " ",
        quote_char='"' if layout.delimiter == "," else False,
        invalid_row_handler=layout.skip_row,
    )
    convert_options = pacsv.ConvertOptions(
        include_columns=list(column_types),
        column_types=column_types,
        strings_can_be_null=False,
        quoted_strings_can_be_null=False,
    )
    if layout.width <= max(layout.columns):
        raise _NeedsCarefulRead
    if _bar_shown(progress):
        options = (read_options, parse_options, convert_options)
        chunks = _read_streamed(path, list(column_types), options, layout.line_bytes)
    else:
        table = _in_background(
            lambda: pacsv.read_csv(path, read_options, parse_options, convert_options)
        )
        if isinstance(table, (pa.ArrowInvalid, pa.ArrowNotImplementedError, OSError)):
            raise _NeedsCarefulRead
        if isinstance(table, BaseException):
            raise table
        chunks = [table.column(name).chunks for name in column_types]
    read = {
        name: pa.chunked_array(pieces, type=column_types[name])
        for name, pieces in zip(column_types, chunks, strict=True)
    }
    if layout.commented(read):
        raise _NeedsCarefulRead
    values: list[Any] = []
    for kind, name in zip(layout.kinds, names, strict=True):
        column = read[name]
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
    except (pa.ArrowInvalid, pa.ArrowNotImplementedError, StopIteration, OSError):
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


def _fast_batches(path: str, layout: _Layout, progress: bool) -> Iterator[tuple[Any, Any]]:
    """Source and target columns of a local text file, block by block (pyarrow's streaming reader).

    Ids come as int64 numpy arrays, labels as pyarrow string arrays. Raises
    :class:`_NeedsCarefulRead` at a block pyarrow cannot take or that holds
    what the careful path must judge (negative ids, empty labels).
    """
    import pyarrow as pa
    import pyarrow.compute as pc
    import pyarrow.csv as pacsv

    if layout.width <= max(layout.columns):
        raise _NeedsCarefulRead
    names = [f"f{c}" for c in layout.columns]
    types = {"id": pa.int64(), "label": pa.string()}
    column_types = {n: types[k] for n, k in zip(names, layout.kinds, strict=True)}
    guard = layout.guard()
    if guard is not None:
        column_types[guard] = pa.string()
    options = (
        pacsv.ReadOptions(
            skip_rows=layout.skip, autogenerate_column_names=True, block_size=_BLOCK_BYTES
        ),
        pacsv.ParseOptions(
            delimiter=layout.delimiter or " ",
            quote_char='"' if layout.delimiter == "," else False,
            invalid_row_handler=layout.skip_row,
        ),
        pacsv.ConvertOptions(
            include_columns=list(column_types),
            column_types=column_types,
            strings_can_be_null=False,
            quoted_strings_can_be_null=False,
        ),
    )
    # the uncompressed size of a .gz is unknown: count bytes without a total
    total = None if path.endswith(".gz") else os.path.getsize(path)
    failures = (pa.ArrowInvalid, pa.ArrowNotImplementedError, OSError)
    with (
        pa.input_stream(path, compression="detect") as stream,
        _bar(total, "reading", path, progress) as bar,
    ):
        try:
            reader = pacsv.open_csv(stream, *options)
        except failures:
            raise _NeedsCarefulRead from None
        rows = 0
        while True:
            try:
                batch = reader.read_next_batch()
            except StopIteration:
                break
            except failures:
                raise _NeedsCarefulRead from None
            if layout.commented({name: batch.column(name) for name in column_types}):
                raise _NeedsCarefulRead
            columns = []
            for kind, name in zip(layout.kinds, names, strict=True):
                column = batch.column(name)
                if column.null_count:
                    raise _NeedsCarefulRead
                if kind == "label":
                    if len(column) and pc.min(pc.utf8_length(column)).as_py() == 0:
                        raise _NeedsCarefulRead
                    columns.append(column)
                    continue
                values = column.to_numpy()
                if len(values) and int(values.min()) < 0:
                    raise _NeedsCarefulRead
                columns.append(values)
            rows += batch.num_rows
            done = int(rows * layout.line_bytes)
            bar.update((done if total is None else min(done, total)) - bar.n)
            yield columns[0], columns[1]


def _careful_batches(
    path: str, shown: str, layout: _Layout, options: ReadOptions, skip: int
) -> Iterator[tuple[Any, Any]]:
    """Line-by-line batches past the first ``skip`` data lines; names the first bad line."""
    import pyarrow as pa

    needed = max(layout.columns)
    skipped_line = _skipper(options.comment)
    ragged, first_ragged = 0, 0
    collected: list[list[Any]] = [[] for _ in layout.columns]
    data = 0

    def flush() -> tuple[Any, Any]:
        values = [
            pa.array(items, type=pa.string())
            if kind == "label"
            else np.asarray(items, dtype=np.int64)
            for kind, items in zip(layout.kinds, collected, strict=True)
        ]
        for items in collected:
            items.clear()
        return values[0], values[1]

    for number, line in read_lines(path, shown, options):
        if number < layout.first_line or skipped_line(line):
            continue
        data += 1
        if data <= skip:
            continue
        fields = _split(line, layout.delimiter)
        if len(fields) <= needed:
            raise _missing_column(shown, number, line, fields, needed)
        if len(fields) != layout.width:
            ragged += 1
            first_ragged = first_ragged or number
        for k, (column, kind) in enumerate(zip(layout.columns, layout.kinds, strict=True)):
            collected[k].append(_field(shown, number, line, fields[column], kind, options))
        if len(collected[0]) >= BATCH_EDGES:
            yield flush()
    if collected[0]:
        yield flush()
    if ragged and options.note is not None:
        options.note(
            f"{shown}:{first_ragged}: {ragged} line(s) have a different number of fields than "
            f"line {layout.first_line} ({layout.width}); only the chosen columns are read"
        )


def _read_careful(path: str, shown: str, layout: _Layout, options: ReadOptions) -> list[Any]:
    """Line-by-line read with the standard library; names the first bad line."""
    import pyarrow as pa

    collected: list[list[Any]] = [[] for _ in layout.columns]
    needed = max(layout.columns)
    skipped_line = _skipper(options.comment)
    ragged, first_ragged = 0, 0
    for number, line in read_lines(path, shown, options):
        if number < layout.first_line or skipped_line(line):
            continue
        fields = _split(line, layout.delimiter)
        if len(fields) <= needed:
            raise _missing_column(shown, number, line, fields, needed)
        if len(fields) != layout.width:
            ragged += 1
            first_ragged = first_ragged or number
        for k, (column, kind) in enumerate(zip(layout.columns, layout.kinds, strict=True)):
            collected[k].append(_field(shown, number, line, fields[column], kind, options))
    if ragged and options.note is not None:
        options.note(
            f"{shown}:{first_ragged}: {ragged} line(s) have a different number of fields than "
            f"line {layout.first_line} ({layout.width}); only the chosen columns are read"
        )
    values: list[Any] = []
    for kind, items in zip(layout.kinds, collected, strict=True):
        if kind == "label":
            values.append(pa.array(items, type=pa.string()))
        else:
            values.append(np.asarray(items, dtype=np.int64 if kind == "id" else np.float64))
    return values


def _field(path: str, number: int, line: str, text: str, kind: str, options: ReadOptions) -> Any:
    token = text.strip()
    if kind == "label":
        if not token:
            raise GraphFileError(path, "empty node label", number, line)
        return text
    if kind == "id":
        if not _INTEGER.match(token):
            hint = (
                " (the first lines held integer ids; read nodes as string labels with "
                "--labels, or labels=True in Python)"
                if options.labels is None
                else ""
            )
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
