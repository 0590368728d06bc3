"""``toporank verify``: check that a file holds a topological order of a graph file."""

from __future__ import annotations

import argparse
from typing import Any

import toporank

from .._errors import InvalidOrderError
from ..io import read_nodes
from .options import read_input
from .output import EXIT_FOUND, EXIT_OK, error, say, working


def register(commands: Any, common: list[argparse.ArgumentParser]) -> None:
    """Add the ``verify`` subcommand."""
    p = commands.add_parser(
        "verify",
        parents=common,
        help="check that a file holds a topological order (exit 1 if not)",
        description="Check that ORDER_FILE lists every node of FILE once, each after all its "
        "predecessors. Exit status 0: it does; 1: it does not.",
    )
    p.add_argument(
        "order_file",
        metavar="ORDER_FILE",
        help="one node per line, a CSV whose first (or node) column lists them, or .npy",
    )
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Run ``toporank verify``."""
    g = read_input(args)
    nodes = read_nodes(args.order_file, g, progress=not args.quiet)
    try:
        with working(args, "verifying"):
            toporank.verify_order(g, nodes)
    except InvalidOrderError as exc:
        error(f"{args.order_file}: is not a topological order of {args.file}: {exc}")
        return EXIT_FOUND
    say(f"ok: {args.order_file} is a topological order of {args.file} ({g.n} nodes, {g.m} edges)")
    return EXIT_OK
