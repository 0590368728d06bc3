"""``toporank order``: write a topological order of a graph file."""

from __future__ import annotations

import argparse
import contextlib
import resource
import time
from typing import Any

import numpy as np

import toporank

from .._graph import Graph
from .._report import order_with_report, plain, shown_cycle
from ..io import read_key, write_json
from ..io.write import node_strings, write_lines, write_table
from .options import check_tie, on_cycle_options, output_options, read_input, tie_arguments
from .output import EXIT_FOUND, EXIT_OK, error, note, output_format, outputs, working, write


def register(commands: Any, common: list[argparse.ArgumentParser]) -> None:
    """Add the ``order`` subcommand."""
    p = commands.add_parser(
        "order",
        parents=[
            *common,
            on_cycle_options("write"),
            output_options(
                "the order: lines (one node per line; default), csv (node,position,level) or npy",
                ("lines", "csv", "npy"),
            ),
        ],
        help="write a topological order of a graph file",
        description="Write a topological order of FILE (Kahn's algorithm).",
    )
    p.add_argument(
        "--summary", metavar="JSON", help="also write a JSON summary (counts, times, cycle report)"
    )
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Run ``toporank order``."""
    check_tie(args)
    started = time.perf_counter()
    outputs(args, "output", "summary")
    g = read_input(args)
    key = read_key(args.key, g, progress=not args.quiet) if args.key else None
    read_done = time.perf_counter()
    with working(args, "ordering"):
        ids, report = order_with_report(g, args.on_cycle, **tie_arguments(args, key))
    order_done = time.perf_counter()
    kind = output_format(args, "lines")
    if ids is not None:
        write_order(g, ids, kind, args, report)
    finished = time.perf_counter()
    summary = {
        "input": args.file,
        "nodes": g.n,
        "edges": g.m,
        "labelled": g.labels is not None,
        "tie": args.tie,
        "on_cycle": args.on_cycle,
        "ordered": None if ids is None else len(ids),
        "cycles": report,
        "output": args.output or "<stdout>",
        "seconds": {
            "read": round(read_done - started, 4),
            "order": round(order_done - read_done, 4),
            "write": round(finished - order_done, 4),
            "total": round(finished - started, 4),
        },
        "peak_memory_mib": peak_memory_mib(),
    }
    if args.summary:
        write_json(args.summary, summary)
    if ids is None:
        written = (
            f"Only the summary was written to {args.summary}"
            if args.summary
            else ("Nothing was written")
        )
        error(
            f"{args.file}: has a cycle: {shown_cycle(report['witness_cycle'])}; "
            f"{report['blocked_behind_cycles']} of {g.n} nodes are blocked behind cycles. "
            f"{written}; see `toporank cycles`, or pass --on-cycle partial, condense or cut"
        )
        return EXIT_FOUND
    where = args.output or "standard output"
    if len(ids) < g.n:
        note(
            args,
            f"wrote {len(ids)} of {g.n} nodes to {where}: {g.n - len(ids)} are on or behind "
            "cycles and left out (--on-cycle partial)",
        )
    elif args.output:
        note(args, f"wrote {len(ids)} of {g.n} nodes to {args.output}")
    return EXIT_OK


def peak_memory_mib() -> float:
    """This process's peak resident memory in MiB."""
    # VmHWM starts afresh at exec; ru_maxrss keeps the high-water mark of
    # the parent that forked us (e.g. a large test or benchmark process)
    with contextlib.suppress(OSError, ValueError, IndexError):
        with open("/proc/self/status") as f:
            for line in f:
                if line.startswith("VmHWM:"):
                    return round(int(line.split()[1]) / 1024, 1)
    return round(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024, 1)


def write_order(
    g: Graph, ids: np.ndarray, kind: str, args: argparse.Namespace, report: dict[str, Any]
) -> None:
    """Write the order as lines, CSV (node,position[,level]) or ``.npy``."""
    progress = not args.quiet
    if kind == "npy":
        array = ids if g.labels is None else np.asarray(node_strings(g, ids), dtype=str)
        write(args.output, lambda f: np.save(f, array, allow_pickle=False), binary=True)
        return
    if kind == "lines":
        # ids (or labels) turned to text chunk by chunk, not a string per node at once
        nodes = ids if g.labels is None else g.labels[ids]
        write(args.output, lambda f: write_lines(f, nodes, progress=progress))
        return
    header = ["node", "position"]
    columns: list[Any] = [node_strings(g, ids), np.arange(len(ids))]
    if report["is_dag"]:
        header.append("level")
        columns.append(np.asarray(toporank.levels(plain(g)))[ids])
    else:
        note(args, "level column left out: levels need a graph without cycles")
    write(args.output, lambda f: write_table(f, header, columns, progress=progress))
