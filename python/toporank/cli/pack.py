"""``toporank pack``: save a graph file as a folder that every later command opens at once."""

from __future__ import annotations

import argparse
import os
from typing import Any

from .._errors import GraphInputError
from ..io import save_graph
from ..io.options import file_format
from .options import read_input
from .output import EXIT_OK, note, working


def register(commands: Any, common: list[argparse.ArgumentParser]) -> None:
    """Add the ``pack`` subcommand."""
    p = commands.add_parser(
        "pack",
        parents=common,
        help="save a graph file as a folder that later commands open at once",
        description="Read FILE once and save it as a folder of CSR arrays (.npy) with a JSON "
        "description (graph.json) and, for labelled graphs, the labels (Arrow). Every "
        "command (and toporank.read_graph) opens the folder memory-mapped in well under a "
        "second. An older saved graph at FOLDER is replaced; the folder appears whole or not "
        "at all.",
    )
    p.add_argument("-o", "--output", metavar="FOLDER", required=True, help="the folder to write")
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Run ``toporank pack``."""
    target = os.path.abspath(args.output)
    if args.file != "-" and os.path.abspath(args.file) == target:
        raise GraphInputError(f"-o {args.output} is the input; choose another folder")
    g = read_input(args)
    source: dict[str, Any] = {"path": args.file, "format": _format(args)}
    if args.file != "-" and os.path.isfile(args.file):
        info = os.stat(args.file)
        source.update(bytes=info.st_size, modified=int(info.st_mtime))
    with working(args, "writing"):
        save_graph(g, args.output, source)
    note(args, f"saved {g.n} nodes and {g.m} edges to {args.output}")
    return EXIT_OK


def _format(args: argparse.Namespace) -> str:
    try:
        return file_format(args.file, args.format)
    except GraphInputError:
        return str(args.format)
