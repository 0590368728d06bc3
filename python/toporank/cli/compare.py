"""``toporank compare``: how the tie-break policies' orders differ on one graph."""

from __future__ import annotations

import argparse
import contextlib
import importlib.util
import os
from typing import Any

import numpy as np

import toporank

from .._errors import CyclicGraphError, GraphInputError
from .._graph import Graph
from .._report import cut_report, induced, named, plain, shown_cycle, without_edges
from ..io import atomic_output, read_key
from .options import on_cycle_options, output_options, read_input
from .output import (
    EXIT_FOUND,
    EXIT_OK,
    Unavailable,
    error,
    note,
    output_format,
    outputs,
    say,
    working,
)


def register(commands: Any, common: list[argparse.ArgumentParser]) -> None:
    """Add the ``compare`` subcommand."""
    p = commands.add_parser(
        "compare",
        parents=[
            *common,
            on_cycle_options("compare orders of"),
            output_options("the table as text (default), csv or json", ("text", "csv", "json")),
        ],
        help="compare the orders of the tie-break policies",
        description="Compare the orders of the tie-break policies: ready and live sets, edge "
        "spans, key agreement, and optionally the makespan of a list schedule.",
    )
    p.add_argument(
        "--ties", metavar="LIST", help="comma-separated policies (default: all compare knows)"
    )
    p.add_argument("--key", metavar="FILE", help="node,value file for the priority policy")
    p.add_argument("--descending", action="store_true", help="larger keys first (with --key)")
    p.add_argument("--workers", type=int, metavar="N", help="also schedule each order on N workers")
    p.add_argument("--plot", metavar="PNG", help="also draw the comparison here (needs matplotlib)")
    p.add_argument(
        "--plot-scale",
        choices=("auto", "linear", "log"),
        default="auto",
        help="y scale of the plot's ready-set curves (default auto: log when peaks differ "
        "more than 50-fold)",
    )
    p.set_defaults(run=run)


def _without_cycles(
    g: Graph, key: np.ndarray | None, args: argparse.Namespace
) -> tuple[Any, np.ndarray | None]:
    try:
        toporank.order(plain(g))
        return g, key
    except CyclicGraphError as exc:
        if args.on_cycle == "raise":
            raise
        if args.on_cycle == "partial":
            kept = np.asarray(exc.order, dtype=np.int64)
            note(
                args,
                f"comparing on the {len(kept)} of {g.n} nodes not on or behind a cycle "
                "(--on-cycle partial)",
            )
            return induced(g, kept), None if key is None else key[kept]
        if args.on_cycle == "cut":
            cut = cut_report(g)
            note(args, f"comparing without the {cut['count']} edges cut_cycles removed")
            return without_edges(g, cut["edge"]), key
        condensed = toporank.condense(plain(g))
        note(args, f"comparing on the {condensed.count} strongly connected components")
        if key is not None:
            smallest = np.full(condensed.count, np.inf)
            np.minimum.at(smallest, np.asarray(condensed.labels), key.astype(float))
            key = smallest
        return condensed.dag, key


def run(args: argparse.Namespace) -> int:
    """Run ``toporank compare``."""
    if args.plot:
        if not args.plot.lower().endswith(".png"):
            raise GraphInputError(f"--plot {args.plot}: the plot is a PNG; name it *.png")
        if not _has_matplotlib():
            raise Unavailable("--plot needs matplotlib (pip install 'toporank[plot]')")
    if args.descending and not args.key:
        raise GraphInputError("--descending applies to --key; give --key FILE too")
    outputs(args, "plot", "output")
    g = read_input(args)
    key = read_key(args.key, g, progress=not args.quiet) if args.key else None
    try:
        subject, key = _without_cycles(g, key, args)
    except CyclicGraphError as exc:
        error(
            f"{args.file}: has a cycle: {shown_cycle(named(g, exc.cycle))}; policies are "
            "compared on a graph without cycles. Nothing was written; pass --on-cycle "
            "partial, condense or cut"
        )
        return EXIT_FOUND
    options: dict[str, Any] = {}
    if args.ties:
        options["ties"] = tuple(t.strip() for t in args.ties.split(",") if t.strip())
    if key is not None:
        options["key"] = key
    if args.descending:
        options["descending"] = True
    if args.workers is not None:
        options["workers"] = args.workers
    with working(args, "comparing"):
        result = toporank.compare(subject, **options)
    kind = output_format(args, "text")
    text = {"csv": result.to_csv, "json": result.to_json}.get(kind, result.table)()
    if args.output:
        with atomic_output(args.output) as f:
            f.write(text if text.endswith("\n") else text + "\n")
        note(args, f"wrote {args.output}")
    else:
        say(text.rstrip("\n"))
    if args.plot:
        _plot(result, args.plot, args.file, args.plot_scale)
        note(args, f"wrote {args.plot}")
    return EXIT_OK


def _has_matplotlib() -> bool:
    try:
        return importlib.util.find_spec("matplotlib") is not None
    except (ImportError, ValueError):  # a broken or blocked install
        return False


def _plot(result: Any, path: str, source: str, scale: str) -> None:
    root, ending = os.path.splitext(path)
    temporary = f"{root}.partial{os.getpid()}{ending}"
    try:
        try:
            log = {"auto": None, "log": True, "linear": False}[scale]
            result.plot(temporary, source=os.path.basename(source), log=log)
        except ImportError as exc:
            raise Unavailable(f"--plot: {exc}") from None
        os.replace(temporary, path)
    finally:
        with contextlib.suppress(OSError):
            os.unlink(temporary)
