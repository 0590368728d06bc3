"""The one option vocabulary of every subcommand, declared once as argparse parent parsers.

Subcommands that read a graph take :func:`input_options`; those a cycle can
stop take :func:`on_cycle_options`; those that write take
:func:`output_options`; all take :func:`common_options` (``-q``, ``--debug``).
"""

from __future__ import annotations

import argparse
import re
import sys

import toporank

from .._errors import GraphInputError
from .._graph import Graph
from .._report import ON_CYCLE
from ..io import FILE_FORMATS, ReadOptions, read_graph
from .output import note, spill_folder

_POSITION = re.compile(r"[+-]?[0-9]+\Z")


def _parent() -> argparse.ArgumentParser:
    return argparse.ArgumentParser(add_help=False)


def common_options() -> argparse.ArgumentParser:
    """``-q/--quiet`` and ``--debug``."""
    p = _parent()
    p.add_argument("-q", "--quiet", action="store_true", help="no progress bars or notes")
    p.add_argument(
        "--debug", action="store_true", help="show a traceback on errors (for bug reports)"
    )
    return p


def input_options() -> argparse.ArgumentParser:
    """The graph file and how to read it."""
    p = _parent()
    p.add_argument(
        "file",
        metavar="FILE",
        help="edge list (tab/comma/whitespace text, .gz allowed), Matrix Market .mtx, .npz "
        "(scipy sparse, or src/dst arrays), (m, 2) .npy, Parquet file or dataset folder, a "
        "folder written by `toporank pack`, or - for stdin; pipes and <(...) work too",
    )
    p.add_argument(
        "--format",
        choices=FILE_FORMATS,
        help="input format (default: from the file name; text otherwise)",
    )
    p.add_argument(
        "--delimiter",
        metavar="D",
        help="tab, comma, space, whitespace or one character (default: detected)",
    )
    header = p.add_mutually_exclusive_group()
    header.add_argument(
        "--header",
        dest="header",
        action="store_true",
        default=None,
        help="the first line names the columns (default: detected: a first line that is not "
        "ids above lines that are, names given in --columns, or two plain words never "
        "seen again as nodes; a note says so)",
    )
    header.add_argument(
        "--no-header", dest="header", action="store_false", help="the first line is an edge"
    )
    p.add_argument(
        "--columns",
        metavar="SRC,DST",
        default="0,1",
        help="source and target columns: 0-based positions or header (Parquet column) names "
        "(default 0,1; an edge runs from source to target, so the source comes first)",
    )
    kind = p.add_mutually_exclusive_group()
    kind.add_argument(
        "--labels",
        dest="labels",
        action="store_true",
        default=None,
        help="read nodes as string labels (default: labels unless every node is an integer)",
    )
    kind.add_argument(
        "--ids", dest="labels", action="store_false", help="read nodes as non-negative integer ids"
    )
    return p


def on_cycle_options(
    what: str, choices: tuple[str, ...] = ON_CYCLE, more: str = ""
) -> argparse.ArgumentParser:
    """``--on-cycle`` with the same choices everywhere a cycle can stop the work
    (``choices``/``more``: a command's own set and the help for its extra ones)."""
    p = _parent()
    told = {
        "raise": "raise (report a cycle, exit 1; default)",
        "partial": f"partial ({what} only the nodes not behind a cycle; a note says how many "
        "are left out)",
        "condense": "condense (each strongly connected component kept together as one)",
        "cut": "cut (drop the edges cut_cycles picks first)",
    }
    parts = [told[c] for c in choices if c in told]
    p.add_argument(
        "--on-cycle",
        choices=choices,
        default="raise",
        help="a graph with cycles: " + ", ".join(parts) + (f", {more}" if more else ""),
    )
    return p


def output_options(what: str, formats: tuple[str, ...]) -> argparse.ArgumentParser:
    """``-o/--output`` and ``--output-format`` (default from the output name's ending)."""
    p = _parent()
    p.add_argument(
        "-o",
        "--output",
        metavar="PATH",
        help="where to write (default: stdout); regular files are replaced atomically, FIFOs "
        "and devices written as streams",
    )
    p.add_argument(
        "--output-format",
        choices=formats,
        help=f"{what}; default from the output name ({', '.join('.' + f for f in formats[1:])})",
    )
    return p


def tie_options() -> argparse.ArgumentParser:
    """``--tie`` and what goes with it."""
    p = _parent()
    p.add_argument(
        "--tie",
        choices=toporank.TIES,
        default="queue",
        help="which ready node goes next: queue (FIFO, default), stack (LIFO), "
        "priority (smallest key), random",
    )
    p.add_argument(
        "--key",
        metavar="FILE",
        help="for --tie priority: a node,value file giving every node a number (default: the "
        "node id)",
    )
    p.add_argument(
        "--descending", action="store_true", help="for --tie priority: largest key first"
    )
    p.add_argument("--seed", type=int, help="for --tie random: seed for a repeatable order")
    return p


def check_tie(args: argparse.Namespace) -> None:
    """Refuse tie options that the chosen ``--tie`` ignores, in the words typed."""
    if args.tie != "priority":
        for flag, given in (("--key", args.key), ("--descending", args.descending)):
            if given:
                raise GraphInputError(f"{flag} applies to --tie priority, not --tie {args.tie}")
    if args.tie != "random" and args.seed is not None:
        raise GraphInputError(f"--seed applies to --tie random, not --tie {args.tie}")


def tie_arguments(args: argparse.Namespace, key: object) -> dict[str, object]:
    """Keywords for :func:`toporank.order` from the tie options."""
    tie: dict[str, object] = {"tie": args.tie}
    if key is not None:
        tie["key"] = key
    if args.descending:
        tie["descending"] = True
    if args.seed is not None:
        tie["seed"] = args.seed
    return tie


def columns(text: str) -> tuple[int | str, int | str]:
    """``--columns SRC,DST`` as positions (integers) or header names."""
    parts = [part.strip() for part in text.split(",")]
    if len(parts) != 2 or not all(parts):
        raise GraphInputError(f"--columns takes two columns as SRC,DST, got {text!r}")
    chosen: list[int | str] = []
    for part in parts:
        if _POSITION.match(part):
            if int(part) < 0:
                raise GraphInputError(
                    f"--columns {text}: {part} is not a column; positions count from 0"
                )
            chosen.append(int(part))
        else:
            chosen.append(part)
    if chosen[0] == chosen[1]:
        raise GraphInputError(
            f"--columns {text} names one column twice; give the source column, then a "
            "different target column"
        )
    return chosen[0], chosen[1]


def read_input(args: argparse.Namespace) -> Graph:
    """The graph FILE, read as the input options say."""
    options = ReadOptions(
        format=args.format,
        delimiter=args.delimiter,
        header=args.header,
        columns=columns(args.columns),
        labels=args.labels,
        progress=not args.quiet and sys.stderr is not None,
        note=lambda message: note(args, message),
        spill_dir=spill_folder(args),
        # edges are named by input position only when cut or reported by edge
        # (main paths): elsewhere save the memory
        edge_positions=getattr(args, "on_cycle", None) == "cut"
        or bool(getattr(args, "cut", False))
        or args.command in ("pack", "mainpath"),
    )
    return read_graph(args.file, options)
