"""``toporank cycles``: the strongly connected components with cycles, and edges to cut."""

from __future__ import annotations

import argparse
from collections.abc import Sequence
from typing import Any

from .._errors import GraphInputError
from .._report import cut_report, cycle_report, shown_cycle
from ..io import write_json
from ..io.write import write_table
from .options import read_input
from .output import EXIT_FOUND, EXIT_OK, outputs, say, working, write


def register(commands: Any, common: list[argparse.ArgumentParser]) -> None:
    """Add the ``cycles`` subcommand."""
    p = commands.add_parser(
        "cycles",
        parents=common,
        help="report the strongly connected components with cycles (exit 1 if any)",
        description="Report the strongly connected components with cycles, a shortest cycle "
        "through each, and optionally edges whose removal leaves a DAG. Exit status 0: no "
        "cycles; 1: cycles found.",
    )
    p.add_argument("--cut", action="store_true", help="also list edges whose removal leaves a DAG")
    p.add_argument(
        "--limit",
        type=int,
        default=20,
        metavar="K",
        help="components (and cut edges) listed in the text report (default 20)",
    )
    p.add_argument("--json", metavar="JSON", help="write the full report as JSON here")
    p.add_argument(
        "-o", "--output", metavar="CSV", help="with --cut: write all cut edges (source,target,edge)"
    )
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Run ``toporank cycles``."""
    if args.output and not args.cut:
        raise GraphInputError("-o writes the cut edges; add --cut")
    if args.limit < 0:
        raise GraphInputError(f"--limit must be >= 0, got {args.limit}")
    outputs(args, "json", "output")
    g = read_input(args)
    report: dict[str, Any] = {"input": args.file, "nodes": g.n, "edges": g.m}
    with working(args, "finding cycles"):
        report.update(cycle_report(g, witnesses=True, limit=None if args.json else args.limit))
        report["is_dag"] = report["cyclic_components"] == 0
        if args.cut:
            report["cut"] = cut_report(g)
    say(render(report, args.limit))
    if args.json:
        write_json(args.json, report)
    if args.output:
        cut = report["cut"]
        columns = [cut["source"], cut["target"], cut["edge"]]
        write(args.output, lambda f: write_table(f, ["source", "target", "edge"], columns))
    return EXIT_OK if report["is_dag"] else EXIT_FOUND


def render(report: dict[str, Any], limit: int) -> str:
    """The text form of a cycles report."""
    lines = [f"{report['input']}: {report['nodes']} nodes, {report['edges']} edges"]
    if report["is_dag"]:
        lines.append("no cycles: the graph is a DAG")
    else:
        sizes = report["component_sizes"]
        lines.append(
            f"{report['cyclic_components']} strongly connected component(s) with cycles, "
            f"holding {report['nodes_in_cycles']} nodes; sizes: {_list(sizes, limit)}"
        )
        for item in report["components"][:limit]:
            lines.append(f"  size {item['size']}: {shown_cycle(item['cycle'])}")
        if len(sizes) > limit:
            lines.append(f"  ... {len(sizes) - limit} more (see --json)")
    cut = report.get("cut")
    if cut is not None and cut["count"] == 0:
        lines.append("no edges to cut: the graph is a DAG")
    elif cut is not None:
        untested = cut.get("untested", 0)
        minimal = (
            "minimal: putting back any one closes a cycle"
            if untested == 0
            else f"{untested} left untested, so it may not be minimal"
        )
        lines.append(f"{cut['count']} edge(s) to cut for a DAG ({minimal}):")
        for u, v in list(zip(cut["source"], cut["target"], strict=True))[:limit]:
            lines.append(f"  {u} -> {v}")
        if cut["count"] > limit:
            lines.append(f"  ... {cut['count'] - limit} more (see -o or --json)")
    return "\n".join(lines)


def _list(values: Sequence[Any], limit: int) -> str:
    shown = ", ".join(map(str, values[:limit]))
    return shown + (f", ... ({len(values) - limit} more)" if len(values) > limit else "")
