"""Writing results: regular files atomically, everything else as a stream.

A regular file (or a symlink to one, which is followed) is written to a
hidden temporary file in the target's folder, flushed, synced and renamed
into place, keeping the permission bits of the file it replaces: a crash or
Ctrl-C leaves either the old file or the complete new one. A FIFO, a
character device (``/dev/stdout``, ``/dev/null``) or a socket is opened and
written in place, since replacing it would destroy it. A full disk is
reported as "no space left".
"""

from __future__ import annotations

import contextlib
import csv
import errno
import json
import os
import stat
import sys
import tempfile
from collections.abc import Iterator, Sequence
from typing import IO, Any

import numpy as np

from .._errors import GraphInputError
from .._graph import Graph

__all__ = [
    "OutputError",
    "atomic_output",
    "check_writable",
    "node_strings",
    "write_json",
    "write_lines",
    "write_table",
]


class OutputError(GraphInputError):
    """A result cannot be written (no space left, permission denied, ...); names the path."""


def _write_error(path: str, exc: OSError) -> OutputError:
    reasons = {
        errno.ENOSPC: "no space left on the device",
        errno.EDQUOT: "disk quota exceeded",
        errno.EACCES: "permission denied",
        errno.EPERM: "permission denied",
        errno.EROFS: "read-only file system",
        errno.EISDIR: "is a folder",
        errno.ENOENT: "its folder does not exist",
    }
    reason = reasons.get(exc.errno or 0, exc.strerror or str(exc))
    return OutputError(f"cannot write {path}: {reason}")


def _existing_mode(path: str) -> int | None:
    with contextlib.suppress(OSError):
        return os.stat(path).st_mode
    return None


@contextlib.contextmanager
def atomic_output(path: str, binary: bool = False) -> Iterator[IO[Any]]:
    """A file object whose content lands at ``path`` only once the block completes.

    Regular files (symlinks followed) are replaced atomically, keeping their
    permission bits (new files get ``0o666`` less the umask); FIFOs and
    character devices are written directly as streams. Write errors raise
    :class:`OutputError` naming the path; on any exception the temporary file
    is removed, so ``path`` is either untouched or complete.
    """
    target = os.path.realpath(path)
    mode = _existing_mode(path)  # follows symlinks, /dev/stdout included
    try:
        if mode is not None and not stat.S_ISREG(mode):
            with _stream(path, binary) as f:
                yield f
            return
        with _replacing(target, binary, mode) as f:
            yield f
    except OSError as exc:
        if isinstance(exc, BrokenPipeError):
            raise
        raise _write_error(path, exc) from None


@contextlib.contextmanager
def _stream(target: str, binary: bool) -> Iterator[IO[Any]]:
    with open(target, "wb" if binary else "w", encoding=None if binary else "utf-8") as f:
        yield f
        f.flush()


@contextlib.contextmanager
def _replacing(target: str, binary: bool, mode: int | None) -> Iterator[IO[Any]]:
    folder = os.path.dirname(target)
    fd, temporary = tempfile.mkstemp(
        prefix=f".{os.path.basename(target)}.", suffix=".partial", dir=folder
    )
    try:
        with os.fdopen(fd, "wb" if binary else "w", encoding=None if binary else "utf-8") as f:
            yield f
            f.flush()
            os.fsync(f.fileno())
        if mode is None:
            umask = os.umask(0)
            os.umask(umask)
            os.chmod(temporary, 0o666 & ~umask)
        else:
            os.chmod(temporary, stat.S_IMODE(mode))
        os.replace(temporary, target)
    except BaseException:
        with contextlib.suppress(OSError):
            os.unlink(temporary)
        raise


def check_writable(path: str, inputs: Sequence[str]) -> None:
    """Refuse, before any work, an output that would overwrite an input or cannot be written."""
    target = os.path.realpath(path)
    mode = _existing_mode(path)
    for source in inputs:
        if source != "-" and os.path.realpath(source) == target:
            if mode is None or stat.S_ISREG(mode):
                raise GraphInputError(
                    f"output {path} is the input file {source}; refusing to overwrite it"
                )
    if mode is not None and stat.S_ISDIR(mode):
        raise GraphInputError(f"cannot write {path}: it is a folder")
    if mode is not None and not stat.S_ISREG(mode):
        if not os.access(path, os.W_OK):
            raise GraphInputError(f"cannot write {path}: permission denied")
        return
    folder = os.path.dirname(target)
    if not os.path.isdir(folder):
        raise GraphInputError(
            f"cannot write {path}: folder {os.path.dirname(path) or '.'} does not exist"
        )
    if not os.access(folder, os.W_OK):
        raise GraphInputError(f"cannot write {path}: folder {folder} is not writable")


def write_json(path: str, content: dict[str, Any]) -> None:
    """Write ``content`` as indented JSON, atomically."""
    with atomic_output(path) as f:
        json.dump(content, f, indent=2, default=_json_value)
        f.write("\n")


def _json_value(value: Any) -> Any:
    if isinstance(value, np.generic):
        return value.item()
    if isinstance(value, np.ndarray):
        return value.tolist()
    return str(value)


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
    chunk = 1 << 16  # lines turned to text at a time: a few MiB, whatever the order's length
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
    chunk = 1 << 16
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
