"""What every subcommand shares on the way out: exit statuses, messages, writing results."""

from __future__ import annotations

import argparse
import contextlib
import os
import sys
import threading
from collections.abc import Callable, Iterator
from typing import IO, Any

from .._errors import GraphInputError
from ..io import atomic_output, check_writable

EXIT_OK, EXIT_FOUND, EXIT_BAD_INPUT, EXIT_BROKEN_PIPE, EXIT_INTERRUPTED = 0, 1, 2, 141, 130


class Unavailable(Exception):
    """An option needs something this installation lacks (matplotlib for --plot)."""


def error(message: str) -> None:
    """One line on standard error: ``toporank: FILE:LINE: reason: 'text'``."""
    if sys.stderr is not None:
        print(f"toporank: {' '.join(message.split())}", file=sys.stderr)


def note(args: argparse.Namespace, message: str) -> None:
    """A one-line note on standard error, unless ``-q``."""
    if not getattr(args, "quiet", False) and sys.stderr is not None:
        print(f"toporank: {message}", file=sys.stderr)


def stdout() -> IO[str]:
    """Standard output, or an error saying it is closed."""
    if sys.stdout is None:
        raise GraphInputError("standard output is closed; pass -o FILE to write the result")
    return sys.stdout


def say(text: str) -> None:
    """Print a report line on standard output."""
    out = stdout()
    out.write(text + "\n")
    out.flush()


def outputs(args: argparse.Namespace, *names: str) -> list[str]:
    """The output paths given, checked before any work is done."""
    inputs = [args.file] + [
        getattr(args, n) for n in ("key", "order_file") if getattr(args, n, None)
    ]
    paths = [getattr(args, name) for name in names if getattr(args, name, None)]
    for path in paths:
        check_writable(path, inputs)
    if len(set(map(os.path.realpath, paths))) != len(paths):
        raise GraphInputError(f"two outputs share one path: {paths}")
    if "output" in names and not getattr(args, "output", None):
        stdout()
    return paths


def output_format(args: argparse.Namespace, default: str) -> str:
    """``--output-format``, else the output name's ending (.csv, .npy, .json), else ``default``."""
    if getattr(args, "output_format", None):
        return str(args.output_format)
    path = (getattr(args, "output", None) or "").lower()
    for ending in ("csv", "npy", "json"):
        if path.endswith(f".{ending}"):
            return ending
    return default


def write(path: str | None, fill: Callable[[Any], None], binary: bool = False) -> None:
    """Fill standard output (``path`` None) or ``path`` (atomically for a regular file)."""
    if path is None:
        if binary:
            raise GraphInputError("binary output (npy) needs a file; pass -o PATH")
        out = stdout()
        fill(out)
        out.flush()
        return
    with atomic_output(path, binary=binary) as f:
        fill(f)


@contextlib.contextmanager
def working(args: argparse.Namespace, what: str) -> Iterator[None]:
    """A spinner with the elapsed time on a terminal's standard error while ``what`` runs.

    The compiled core releases the GIL while it works, so a helper thread
    can redraw; nothing shows for work under a second, with ``-q``, or when
    standard error is not a terminal.
    """
    stream = sys.stderr
    if getattr(args, "quiet", False) or stream is None or not stream.isatty():
        yield
        return
    from tqdm import tqdm

    done = threading.Event()

    def spin() -> None:
        with tqdm(
            desc=what,
            total=None,
            delay=1.0,
            file=stream,
            leave=False,
            bar_format="{desc} {elapsed}",
        ) as bar:
            while not done.wait(0.2):
                bar.refresh()

    spinner = threading.Thread(target=spin, name="toporank-spinner", daemon=True)
    spinner.start()
    try:
        yield
    finally:
        done.set()
        spinner.join(1.0)


def spill_folder(args: argparse.Namespace) -> str | None:
    """Where a streamed build spills its edges: beside a regular output file, else ``TMPDIR``."""
    output = getattr(args, "output", None)
    if not output:
        return None
    path = os.path.abspath(output)
    with contextlib.suppress(OSError):
        if os.path.lexists(path) and not os.path.isfile(path) and not os.path.isdir(path):
            return None  # a FIFO or device: its folder may be /dev
    parent = os.path.dirname(path)
    return parent if os.path.isdir(parent) and os.access(parent, os.W_OK | os.X_OK) else None
