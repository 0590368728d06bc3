"""What every reader shares: the file error, opening a source once, bounded lines, memory checks."""

from __future__ import annotations

import contextlib
import errno
import gzip
import io
import os
import stat
import sys
import tempfile
import zlib
from collections.abc import Iterator
from typing import IO, Any

from .._errors import GraphInputError
from .options import ReadOptions

__all__ = ["GraphFileError", "check_memory", "local_copy", "open_text", "read_lines"]

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


def os_error(path: str, exc: OSError) -> GraphFileError:
    """An OSError met while reading ``path``, in the reader's words."""
    reasons = {
        errno.ENOENT: "no such file",
        errno.EACCES: "permission denied",
        errno.EPERM: "permission denied",
        errno.EISDIR: "is a folder, not a file",
        errno.ENOSPC: "no space left on the device",
    }
    return GraphFileError(path, reasons.get(exc.errno or 0, exc.strerror or str(exc)))


def check_path(path: str) -> os.stat_result:
    """``stat`` of an input path, or an error saying why it cannot be read."""
    try:
        info = os.stat(path)
    except OSError as exc:
        raise os_error(path, exc) from None
    if stat.S_ISDIR(info.st_mode):
        raise GraphFileError(path, "is a folder, not a file")
    if not os.access(path, os.R_OK):
        raise GraphFileError(path, "permission denied")
    return info


def is_regular(path: str) -> bool:
    """Whether ``path`` is a regular file (seekable, may be read twice)."""
    return stat.S_ISREG(check_path(path).st_mode)


@contextlib.contextmanager
def local_copy(name: str, options: ReadOptions) -> Iterator[tuple[str, str]]:
    """A regular-file path holding ``name``'s bytes, and the name to show in messages.

    Regular files are used in place. Standard input (``"-"``), FIFOs, process
    substitution (``/dev/fd/N``) and devices can be read only once, so they are
    copied in one pass to a temporary file, which is removed afterwards. The
    copy stops with an error past ``options.spool_limit_bytes``, and, for
    uncompressed text, at a line longer than ``options.max_line_bytes`` (so
    ``/dev/zero`` ends at once).
    """
    if name != "-" and is_regular(name):
        yield name, name
        return
    shown = "<stdin>" if name == "-" else name
    suffix = ".gz" if name.lower().endswith(".gz") else ".txt"
    fd, spool = tempfile.mkstemp(prefix="toporank-spool-", suffix=suffix)
    try:
        with os.fdopen(fd, "wb") as out:
            if name == "-":
                _copy(sys.stdin.buffer, out, shown, options, suffix == ".gz")
            else:
                try:
                    source = open(name, "rb")
                except OSError as exc:
                    raise os_error(name, exc) from None
                with source:
                    _copy(source, out, shown, options, suffix == ".gz")
        yield spool, shown
    finally:
        with contextlib.suppress(OSError):
            os.unlink(spool)


def _copy(
    source: IO[bytes], out: IO[bytes], shown: str, options: ReadOptions, packed: bool
) -> None:
    limit, longest = options.spool_limit_bytes, options.max_line_bytes
    # chunks no longer than the longest line allowed: a line that ends inside
    # one chunk is short enough, so only the line carried across chunks is measured
    size = min(1 << 20, longest)
    total, line, run = 0, 1, 0  # bytes so far, current line number, its bytes so far
    while True:
        chunk = source.read(size)
        if not chunk:
            return
        total += len(chunk)
        if total > limit:
            raise GraphFileError(
                shown,
                f"more than {limit} bytes; input that cannot be read twice is copied to a "
                "temporary file, and this is the limit (set TOPORANK_SPOOL_LIMIT to raise it)",
            )
        if not packed:
            first = chunk.find(b"\n")
            if first < 0:
                run += len(chunk)
            else:
                if run + first > longest:
                    raise _long_line(shown, line, longest)
                line += chunk.count(b"\n")
                run = len(chunk) - chunk.rfind(b"\n") - 1
            if run > longest:
                raise _long_line(shown, line, longest)
        out.write(chunk)


def _long_line(shown: str, line: int, longest: int) -> GraphFileError:
    return GraphFileError(
        shown,
        f"a line longer than {longest} bytes; is this a text file? "
        "(set TOPORANK_MAX_LINE_BYTES to allow longer lines)",
        line,
    )


def open_text(path: str) -> IO[str]:
    """``path`` as UTF-8 text (a byte-order mark dropped), gunzipped when it ends in ``.gz``."""
    if path.endswith(".gz"):
        return io.TextIOWrapper(gzip.open(path, "rb"), encoding="utf-8-sig", newline="")
    return open(path, encoding="utf-8-sig", newline="")


def read_lines(path: str, shown: str, options: ReadOptions) -> Iterator[tuple[int, str]]:
    """``(line number, line)`` pairs of a text file, each line at most ``max_line_bytes`` long.

    Decoding and decompression errors become :class:`GraphFileError` naming the file.
    """
    longest = options.max_line_bytes
    number = 0
    try:
        with open_text(path) as f:
            while True:
                line = f.readline(longest + 1)
                if not line:
                    return
                number += 1
                if len(line) > longest and not line.endswith("\n"):
                    raise _long_line(shown, number, longest)
                yield number, line
    except UnicodeDecodeError as exc:
        raise GraphFileError(
            shown, f"is not UTF-8 text ({exc.reason} at byte {exc.start})", number + 1
        ) from None
    except (gzip.BadGzipFile, EOFError, zlib.error) as exc:
        raise gzip_error(shown, exc) from None


def gzip_error(shown: str, exc: BaseException) -> GraphFileError:
    """A damaged ``.gz`` file, in plain words."""
    if isinstance(exc, EOFError):
        return GraphFileError(shown, "is a truncated .gz file (it ends before its last block)")
    if isinstance(exc, gzip.BadGzipFile):
        return GraphFileError(shown, "ends in .gz but is not a gzip file")
    return GraphFileError(shown, f"is a damaged .gz file ({exc})")


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


def check_memory(path: str, needed: int, claim: str) -> None:
    """Refuse, before allocating, a load the header says needs more memory than is available."""
    available = available_memory()
    if needed > available:
        raise GraphFileError(
            path,
            f"the header claims {claim}, about {needed / 2**30:.1f} GiB to load, but only "
            f"{available / 2**30:.1f} GiB of memory is available; refusing before allocating",
        )
