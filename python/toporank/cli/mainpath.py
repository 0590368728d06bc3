"""``toporank mainpath``: the main path of a citation graph (main path analysis)."""

from __future__ import annotations

import argparse
import contextlib
import importlib.util
import json
import os
from typing import Any

import toporank

from .._errors import CyclicGraphError, GraphInputError
from .._mainpath import MAIN_PATH_ON_CYCLE
from .._report import shown_cycle
from ..io import read_key
from ..io.write import write_table
from .options import on_cycle_options, output_options, read_input
from .output import EXIT_FOUND, EXIT_OK, Unavailable, error, note, output_format, outputs, write


def register(commands: Any, common: list[argparse.ArgumentParser]) -> None:
    """Add the ``mainpath`` subcommand."""
    p = commands.add_parser(
        "mainpath",
        parents=[
            *common,
            on_cycle_options(
                "main path of",
                MAIN_PATH_ON_CYCLE,
                "preprint (Batagelj's preprint transformation: each paper of a citation loop "
                "gets a copy, results name the original papers)",
            ),
            output_options(
                "csv (source,target,edge_index,weight; default) or json", ("csv", "json")
            ),
        ],
        help="write the main path of a citation graph (SPC, SPLC or SPNP weights)",
        description="Weight each edge by the search paths through it and write the main path: "
        "the heaviest source-to-sink path (global), the greedy forward or backward path, or "
        "the key routes extended both ways.",
    )
    p.add_argument("--weight", choices=("spc", "splc", "spnp"), default="spc")
    p.add_argument(
        "--method", choices=("global", "forward", "backward", "key-route"), default="global"
    )
    p.add_argument("--routes", type=int, default=None, help="key routes (--method key-route)")
    p.add_argument(
        "--extend",
        choices=("local", "global"),
        default=None,
        help="how key routes are extended (default local)",
    )
    p.add_argument(
        "--all-ties", action="store_true", help="follow every tied edge (a union of paths)"
    )
    p.add_argument("--plot", metavar="PNG", help="also draw the main path here (needs matplotlib)")
    p.add_argument(
        "--plot-key",
        metavar="FILE",
        help="two columns (node, number), e.g. each paper's year: the plot's x axis",
    )
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Run ``toporank mainpath``."""
    if args.plot:
        if not args.plot.lower().endswith(".png"):
            raise GraphInputError(f"--plot {args.plot}: the plot is a PNG; name it *.png")
        if importlib.util.find_spec("matplotlib") is None:
            raise Unavailable("--plot needs matplotlib (pip install 'toporank[plot]')")
    if args.method != "key-route" and (args.routes is not None or args.extend is not None):
        raise GraphInputError("--routes and --extend apply to --method key-route")
    if args.plot_key and not args.plot:
        raise GraphInputError("--plot-key applies to --plot; give --plot FILE.png too")
    outputs(args, "plot", "output")
    g = read_input(args)
    key = read_key(args.plot_key, g, progress=not args.quiet) if args.plot_key else None
    options: dict[str, Any] = {}
    if args.method == "key-route":
        routes = 1 if args.routes is None else args.routes
        options = {"routes": routes, "extend": args.extend or "local"}
    try:
        found = toporank.main_path(
            g,
            weight=args.weight,
            method=args.method,
            ties="all" if args.all_ties else "first",
            on_cycle=args.on_cycle,
            **options,
        )
    except CyclicGraphError as exc:
        error(
            f"{args.file}: has a cycle: {shown_cycle(_plain_values(exc.cycle))}; main paths need a "
            "graph without cycles. Nothing was written; pass --on-cycle preprint, condense or cut"
        )
        return EXIT_FOUND
    rows = found.records()
    if output_format(args, "csv") == "json":
        content = {
            "method": args.method,
            "weight": args.weight,
            "total_weight": found.weight,
            "single_path": found.single,
            "nodes": [str(v) for v in found.nodes.tolist()],
            "edges": [
                {**row, "source": str(row["source"]), "target": str(row["target"])} for row in rows
            ],
        }
        write(args.output, lambda f: f.write(json.dumps(content, indent=2) + "\n"))
    else:
        columns = [
            [str(r["source"]) for r in rows],
            [str(r["target"]) for r in rows],
            [r["edge_index"] for r in rows],
            [r["weight"] for r in rows],
        ]
        header = ["source", "target", "edge_index", "weight"]
        write(args.output, lambda f: write_table(f, header, columns, progress=False))
    if args.output:
        note(args, f"wrote {args.output}: {len(found)} edges, total weight {found.weight:.6g}")
    if args.plot:
        by_node = None
        if key is not None:
            labels = g.labels if g.labels is not None else range(g.n)
            by_node = dict(zip(labels, key.tolist(), strict=True))
        _plot(found, args.plot, by_node, os.path.basename(args.file))
        note(args, f"wrote {args.plot}")
    return EXIT_OK


def _plain_values(values: Any) -> list[Any]:
    return [v.item() if hasattr(v, "item") else v for v in values]


def _plot(found: Any, path: str, key: Any, source: str) -> None:
    root, ending = os.path.splitext(path)
    temporary = f"{root}.partial{os.getpid()}{ending}"
    try:
        try:
            found.plot(temporary, key=key, title=f"{source}: main path ({len(found)} edges)")
        except ImportError as exc:
            raise Unavailable(f"--plot: {exc}") from None
        os.replace(temporary, path)
    finally:
        with contextlib.suppress(OSError):
            os.unlink(temporary)
