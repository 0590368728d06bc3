"""The options every graph reader takes, gathered in one small object."""

from __future__ import annotations

import os
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field

import numpy as np

from .._errors import GraphInputError

__all__ = ["DELIMITERS", "FILE_FORMATS", "ReadOptions", "file_format"]

FILE_FORMATS = ("text", "mtx", "npz", "npy", "parquet", "saved")
#: the description file that marks a saved graph folder
SAVED_DESCRIPTION = "graph.json"
DELIMITERS = {"tab": "\t", "\\t": "\t", "comma": ",", "space": " ", "whitespace": None}

#: longest line a text reader accepts (bytes); longer lines are refused, naming the line
MAX_LINE_BYTES = 1 << 20
#: most bytes spooled from a pipe, FIFO or device to a temporary file for a second pass
SPOOL_LIMIT_BYTES = 64 << 30


def _env_bytes(name: str, default: int) -> int:
    text = os.environ.get(name)
    if text is None:
        return default
    try:
        value = int(text)
    except ValueError:
        raise GraphInputError(f"{name} must be a whole number of bytes, got {text!r}") from None
    if value <= 0:
        raise GraphInputError(f"{name} must be > 0, got {value}")
    return value


@dataclass(frozen=True)
class ReadOptions:
    """How to read a graph file; every field has the default ``read_graph`` documents.

    Attributes
    ----------
    format : {"text", "mtx", "npz", "npy", "parquet", "saved"} or None
        None picks by the file name's ending; a folder is a saved graph
        when it holds ``graph.json``, else a Parquet dataset.
    delimiter : str or None
        Text only: one character, a word of ``DELIMITERS``, or None to detect.
    header : bool or None
        Text only: the first line names the columns; None detects.
    columns : sequence of int or str
        Text and Parquet: source and target columns (0-based positions, or
        header or column names).
    labels : bool or None
        Text only: nodes are string labels (True), integer ids (False), or detect (None).
    comment : str
        Text only: lines starting with this are skipped.
    progress : bool
        Show a progress bar on a terminal for long reads.
    note : callable or None
        Called with a one-line message when the reader guesses (a first line
        taken as a header); None says nothing.
    max_line_bytes : int
        Longest line accepted (``TOPORANK_MAX_LINE_BYTES``, default 1 MiB).
    spool_limit_bytes : int
        Most bytes copied from a pipe or device for a second pass
        (``TOPORANK_SPOOL_LIMIT``, default 64 GiB), and most bytes of
        edges spilled to a temporary file while a graph is built.
    edge_positions : bool
        Keep the input position of every stored edge when the input is not
        grouped by source (4 bytes per edge while the edge count fits int32),
        so that edges can be named by input position
        (:meth:`Graph.edge_input_positions`: cut edges, per-edge weights
        given in input order). False saves that memory; such a graph
        refuses to name edges by input position.
    spill_dir : str or None
        Folder for the temporary edge spill of a streamed build (default:
        the system's temporary folder, ``TMPDIR``).

    Examples
    --------
    >>> import os, tempfile, toporank
    >>> path = os.path.join(tempfile.mkdtemp(), "modules.csv")
    >>> with open(path, "w") as f:
    ...     _ = f.write("module;needs\\ncore;app\\nlog;core\\n")
    >>> options = toporank.ReadOptions(delimiter=";", columns=("needs", "module"))
    >>> toporank.order(toporank.read_graph(path, options))
    array(['app', 'core', 'log'], dtype=object)
    """

    format: str | None = None
    delimiter: str | None = None
    header: bool | None = None
    columns: Sequence[int | str] = (0, 1)
    labels: bool | None = None
    comment: str = "#"
    progress: bool = False
    note: Callable[[str], None] | None = None
    max_line_bytes: int = field(
        default_factory=lambda: _env_bytes("TOPORANK_MAX_LINE_BYTES", MAX_LINE_BYTES)
    )
    spool_limit_bytes: int = field(
        default_factory=lambda: _env_bytes("TOPORANK_SPOOL_LIMIT", SPOOL_LIMIT_BYTES)
    )
    spill_dir: str | None = None
    edge_positions: bool = True

    def __post_init__(self) -> None:
        """Refuse a field of the wrong type at once, naming it (not deep inside a reader)."""
        maybe_flag = (bool, np.bool_, type(None))
        checks: list[tuple[str, bool, str]] = [
            (
                "format",
                isinstance(self.format, (str, type(None))),
                f"one of {FILE_FORMATS} or None",
            ),
            ("delimiter", isinstance(self.delimiter, (str, type(None))), "a string or None"),
            ("header", isinstance(self.header, maybe_flag), "True, False or None"),
            ("labels", isinstance(self.labels, maybe_flag), "True, False or None"),
            ("comment", isinstance(self.comment, str), "a string"),
            ("progress", isinstance(self.progress, (bool, np.bool_)), "True or False"),
            ("edge_positions", isinstance(self.edge_positions, (bool, np.bool_)), "True or False"),
            ("note", self.note is None or callable(self.note), "a callable or None"),
            (
                "spill_dir",
                isinstance(self.spill_dir, (str, os.PathLike, type(None))),
                "a folder or None",
            ),
            (
                "columns",
                isinstance(self.columns, (list, tuple, np.ndarray))
                and all(
                    isinstance(c, (int, np.integer, str)) and not isinstance(c, (bool, np.bool_))
                    for c in self.columns
                ),
                "a list or tuple of column positions or names",
            ),
        ]
        for name, fine, wanted in checks:
            if not fine:
                raise GraphInputError(f"{name} must be {wanted}, got {getattr(self, name)!r}")
        for name in ("max_line_bytes", "spool_limit_bytes"):
            value = getattr(self, name)
            if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value <= 0:
                raise GraphInputError(f"{name} must be a positive number of bytes, got {value!r}")


def file_format(name: str, format: str | None) -> str:
    """The format to read ``name`` as: ``format`` if given, else from the file name's ending."""
    if format is not None:
        if format not in FILE_FORMATS:
            raise GraphInputError(f"format must be one of {FILE_FORMATS}, got {format!r}")
        return format
    lower = name.lower().removesuffix(".gz")
    if lower.endswith((".parquet", ".pq")):
        return "parquet"
    if lower.endswith((".mtx", ".mm")):
        return "mtx"
    if lower.endswith(".npz"):
        return "npz"
    if lower.endswith(".npy"):
        return "npy"
    if os.path.isdir(name):
        return "saved" if os.path.exists(os.path.join(name, SAVED_DESCRIPTION)) else "parquet"
    return "text"
