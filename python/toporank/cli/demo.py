"""``toporank demo``: write invented data sets, order them, and suggest commands to try."""

from __future__ import annotations

import argparse
from typing import Any


def register(commands: Any, common: list[argparse.ArgumentParser]) -> None:
    """Add the ``demo`` subcommand."""
    p = commands.add_parser(
        "demo",
        parents=common,
        help="run on bundled invented data and write the results",
        description="Write two invented data sets to a folder, order them, report their "
        "cycles and print commands to try next.",
    )
    p.add_argument(
        "-o",
        "--output",
        default="toporank-demo",
        metavar="DIR",
        help="folder for the data and results (default ./toporank-demo)",
    )
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Run ``toporank demo``."""
    from .._demo import run as demo

    return demo(args.output, progress=not args.quiet)
