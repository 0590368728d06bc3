"""``toporank levels``: each node's level (longest path, in edges, from a source)."""

from __future__ import annotations

import argparse
from typing import Any

import numpy as np

import toporank

from .._errors import CyclicGraphError
from .._graph import Graph
from .._report import cut_report, named, plain, shown_cycle, without_edges
from ..io.write import node_strings, write_table
from .options import on_cycle_options, output_options, read_input
from .output import EXIT_FOUND, EXIT_OK, error, note, output_format, outputs, working, write


def register(commands: Any, common: list[argparse.ArgumentParser]) -> None:
    """Add the ``levels`` subcommand."""
    p = commands.add_parser(
        "levels",
        parents=[
            *common,
            on_cycle_options("levels of"),
            output_options(
                "lines (node level), csv (node,level; default) or npy (levels by node id)",
                ("csv", "lines", "npy"),
            ),
        ],
        help="write each node's level (longest path from a source)",
        description="Write each node's level: 0 for sources, else 1 + the largest level of "
        "its predecessors.",
    )
    p.set_defaults(run=run)


def node_levels(g: Graph, on_cycle: str, args: argparse.Namespace) -> tuple[np.ndarray, np.ndarray]:
    """Node ids and their levels, as ``on_cycle`` says for a graph with cycles."""
    bare = plain(g)
    everyone = np.arange(g.n)
    try:
        return everyone, np.asarray(toporank.levels(bare))
    except CyclicGraphError as exc:
        if on_cycle == "raise":
            raise
        if on_cycle == "partial":
            kept = np.sort(np.asarray(exc.order, dtype=np.int64))
            mask = np.zeros(g.n, dtype=bool)
            mask[kept] = True
            rows = np.repeat(np.arange(g.n), np.diff(g.indptr))
            keep = mask[rows] & mask[np.asarray(g.indices)]
            sub = toporank.Graph.from_edges(rows[keep], np.asarray(g.indices)[keep], g.n)
            values = np.asarray(toporank.levels(sub))[kept]
            note(
                args,
                f"levels of {len(kept)} of {g.n} nodes: {g.n - len(kept)} are on or behind "
                "cycles and left out (--on-cycle partial)",
            )
            return kept, values
        if on_cycle == "cut":
            cut = cut_report(g)
            note(args, f"levels after removing the {cut['count']} edges cut_cycles picks")
            return everyone, np.asarray(toporank.levels(plain(without_edges(g, cut["edge"]))))
        condensed = toporank.condense(bare)
        component_levels = np.asarray(toporank.levels(condensed.dag))
        note(args, "each strongly connected component takes one level (--on-cycle condense)")
        return everyone, component_levels[np.asarray(condensed.labels)]


def run(args: argparse.Namespace) -> int:
    """Run ``toporank levels``."""
    outputs(args, "output")
    g = read_input(args)
    try:
        with working(args, "levels"):
            ids, values = node_levels(g, args.on_cycle, args)
    except CyclicGraphError as exc:
        error(
            f"{args.file}: has a cycle: {shown_cycle(named(g, exc.cycle))}; levels need a "
            "graph without cycles. Nothing was written; see `toporank cycles`, or pass "
            "--on-cycle partial, condense or cut"
        )
        return EXIT_FOUND
    kind = output_format(args, "csv")
    nodes = node_strings(g, ids)
    progress = not args.quiet
    if kind == "npy":
        if len(ids) != g.n:
            full = np.full(g.n, -1, dtype=np.int64)
            full[ids] = values
            values = full
        write(args.output, lambda f: np.save(f, values, allow_pickle=False), binary=True)
    elif kind == "lines":
        write(
            args.output,
            lambda f: f.writelines(
                f"{u} {v}\n" for u, v in zip(nodes, values.tolist(), strict=True)
            ),
        )
    else:
        write(
            args.output,
            lambda f: write_table(f, ["node", "level"], [nodes, values], progress=progress),
        )
    return EXIT_OK
