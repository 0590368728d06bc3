"""The ``toporank`` command: order, levels, cycles, verify and compare graphs stored in files.

One module per subcommand (:mod:`.order`, :mod:`.levels`, :mod:`.cycles`,
:mod:`.verify`, :mod:`.compare`, :mod:`.pack`, :mod:`.mainpath`, :mod:`.demo`) over
:mod:`.options` (the option vocabulary, declared once as argparse parent parsers) and
:mod:`.output` (exit statuses, messages, writing).

Exit status: 0 success; 1 a cycle was found (``order``, ``levels`` and
``compare`` and ``mainpath`` with ``--on-cycle raise``, ``cycles``) or the order checked by
``verify`` is not topological; 2 bad input or usage (one line naming file,
line and offending text; nothing is written); 130 interrupted by Ctrl-C (no
partial output is left). Regular output files are written to a temporary
file in the target folder and renamed into place.
"""

from __future__ import annotations

import argparse
import contextlib
import os
import sys
import threading
import traceback
from collections.abc import Sequence

import toporank

from .._errors import CyclicGraphError, GraphInputError
from . import compare, cycles, demo, levels, mainpath, order, pack, verify
from .options import common_options, input_options, tie_options
from .output import (
    EXIT_BAD_INPUT,
    EXIT_BROKEN_PIPE,
    EXIT_FOUND,
    EXIT_INTERRUPTED,
    Unavailable,
    error,
)

__all__ = ["main"]


def parser() -> argparse.ArgumentParser:
    """The ``toporank`` argument parser."""
    top = argparse.ArgumentParser(
        prog="toporank",
        description="Put large directed graphs stored in files in topological order.",
        epilog="Start with `toporank demo`. Exit status: 0 ok, 1 cycle found or order invalid, "
        "2 bad input, 130 interrupted.",
    )
    top.add_argument("--version", action="version", version=f"toporank {toporank.__version__}")
    commands = top.add_subparsers(dest="command", required=True, metavar="COMMAND")
    common = common_options()
    reading = [common, input_options()]
    order.register(commands, [*reading, tie_options()])
    levels.register(commands, reading)
    cycles.register(commands, reading)
    verify.register(commands, reading)
    compare.register(commands, reading)
    pack.register(commands, reading)
    mainpath.register(commands, reading)
    demo.register(commands, [common])
    return top


def main(argv: Sequence[str] | None = None) -> int:
    """Return the exit status of the ``toporank`` command run with ``argv`` (default: sys.argv)."""
    args = parser().parse_args(argv)
    if getattr(args, "output", None) == "-" and args.command != "demo":
        args.output = None  # "-o -" is standard output, as "-" is standard input
    try:
        return int(args.run(args))
    except KeyboardInterrupt:
        # outputs in progress were removed as the interrupt unwound; leave
        # at once rather than wait for a reader thread still parsing
        error("interrupted; no output was written")
        with contextlib.suppress(Exception):
            sys.stderr.flush()
        if threading.active_count() > 1:
            os._exit(EXIT_INTERRUPTED)
        return EXIT_INTERRUPTED
    except BrokenPipeError:
        # the reader of stdout went away (e.g. `| head`): stop quietly
        with contextlib.suppress(OSError, AttributeError, ValueError):
            devnull = os.open(os.devnull, os.O_WRONLY)
            os.dup2(devnull, sys.stdout.fileno())
        return EXIT_BROKEN_PIPE
    except (GraphInputError, Unavailable) as exc:
        _debug(args)
        error(str(exc))
        return EXIT_BAD_INPUT
    except CyclicGraphError as exc:
        _debug(args)
        error(f"{args.file}: {exc}; see `toporank cycles {args.file}`")
        return EXIT_FOUND
    except OSError as exc:
        _debug(args)
        where = exc.filename or getattr(args, "file", "")
        error(f"{where}: {exc.strerror or exc}".lstrip(": "))
        return EXIT_BAD_INPUT


def _debug(args: argparse.Namespace) -> None:
    if getattr(args, "debug", False) and sys.stderr is not None:
        traceback.print_exc()
