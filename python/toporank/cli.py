"""The ``toporank`` command: order, levels, cycles, verify and compare graphs stored in files.

Exit status: 0 success; 1 the graph has a cycle (``order --on-cycle raise``)
or the order checked by ``verify`` is not topological; 2 bad input or usage
(the message names file, line and offending text; nothing is written);
130 interrupted by Ctrl-C (no partial output is left). Results are written
to a temporary file in the target folder and renamed into place.

While the compiled core computes (Kahn's loop, grouping edges into CSR) it
runs without the GIL and Python's Ctrl-C handler waits for it to return; on
a 10-million-edge graph that is well under a second.
"""

from __future__ import annotations

import argparse
import contextlib
import json
import os
import resource
import sys
import threading
import time
from collections.abc import Callable, Sequence
from typing import Any

import numpy as np

import toporank

from ._errors import CyclicGraphError, GraphInputError, InvalidOrderError
from ._graph import Graph
from ._io import (
    FILE_FORMATS,
    atomic_output,
    check_writable,
    node_strings,
    read_graph,
    read_key,
    read_nodes,
    write_lines,
    write_table,
)

EXIT_OK, EXIT_FOUND, EXIT_BAD_INPUT, EXIT_BROKEN_PIPE, EXIT_INTERRUPTED = 0, 1, 2, 141, 130
ON_CYCLE = ("raise", "partial", "condense", "cut")
OUTPUT_FORMATS = ("lines", "csv", "npy")
_SHOWN_NODES = 12


class Unavailable(Exception):
    """An option needs something this installation lacks (matplotlib for --plot)."""


def main(argv: Sequence[str] | None = None) -> int:
    """Return the exit status of the ``toporank`` command run with ``argv`` (default: sys.argv)."""
    parser = _parser()
    args = parser.parse_args(argv)
    if getattr(args, "output", None) == "-":
        args.output = None  # "-o -" is standard output, as "-" is standard input
    try:
        return int(args.run(args))
    except KeyboardInterrupt:
        # outputs in progress were removed as the interrupt unwound; leave
        # at once rather than wait for a reader thread still parsing
        print("toporank: interrupted; no output was written", file=sys.stderr)
        sys.stderr.flush()
        if threading.active_count() > 1:
            os._exit(EXIT_INTERRUPTED)
        return EXIT_INTERRUPTED
    except (GraphInputError, Unavailable) as exc:
        _error(str(exc))
        return EXIT_BAD_INPUT
    except CyclicGraphError as exc:
        # from a step that needs a DAG (levels, a comparison): a finding, not bad input
        _error(f"{args.file}: {exc}; see `toporank cycles {args.file}`")
        return EXIT_FOUND
    except BrokenPipeError:
        # the reader of stdout went away (e.g. `| head`): stop quietly
        with contextlib.suppress(OSError):
            devnull = os.open(os.devnull, os.O_WRONLY)
            os.dup2(devnull, sys.stdout.fileno())
        return EXIT_BROKEN_PIPE
    except OSError as exc:
        _error(f"{exc.filename or ''}: {exc.strerror or exc}".lstrip(": "))
        return EXIT_BAD_INPUT


def _error(message: str) -> None:
    print(f"toporank: error: {' '.join(message.split())}", file=sys.stderr)


def _note(args: argparse.Namespace, message: str) -> None:
    if not getattr(args, "quiet", False):
        print(f"toporank: {message}", file=sys.stderr)


# ---------------------------------------------------------------------------
# argument parsing


def _parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="toporank",
        description="Put large directed graphs stored in files in topological order.",
        epilog="Start with `toporank demo`. Exit status: 0 ok, 1 cycle found or order invalid, "
        "2 bad input, 130 interrupted.",
    )
    parser.add_argument("--version", action="version", version=f"toporank {toporank.__version__}")
    commands = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")

    order = commands.add_parser("order", help="write a topological order of a graph file")
    _input_options(order)
    _tie_options(order)
    order.add_argument(
        "--on-cycle",
        choices=ON_CYCLE,
        default="raise",
        help="what to do with a cycle: raise (report it, exit 1; default), partial (the nodes "
        "ordered before the cycles), condense (keep each strongly connected component "
        "together), cut (drop a feedback arc set first)",
    )
    _output_options(
        order, "the order: one node per line (default), csv (node,position,level) or npy"
    )
    order.add_argument(
        "--summary",
        metavar="JSON",
        help="also write a JSON summary (counts, times, cycle report) here",
    )
    order.set_defaults(run=run_order)

    levels = commands.add_parser(
        "levels", help="write each node's level (longest path from a source)"
    )
    _input_options(levels)
    _output_options(levels, "csv (node,level; default) or npy")
    levels.set_defaults(run=run_levels)

    cycles = commands.add_parser(
        "cycles", help="report the strongly connected components with cycles"
    )
    _input_options(cycles)
    cycles.add_argument(
        "--cut", action="store_true", help="also list edges whose removal leaves a DAG"
    )
    cycles.add_argument(
        "--limit",
        type=int,
        default=20,
        metavar="K",
        help="components (and cut edges) listed in the text report (default 20)",
    )
    cycles.add_argument("--json", metavar="JSON", help="write the full report as JSON here")
    cycles.add_argument(
        "-o",
        "--output",
        metavar="CSV",
        help="with --cut: write all cut edges (source,target,edge) here",
    )
    cycles.set_defaults(run=run_cycles)

    verify = commands.add_parser("verify", help="check that a file holds a topological order")
    _input_options(verify)
    verify.add_argument(
        "order_file",
        metavar="ORDER_FILE",
        help="one node per line, a CSV with a node column, or .npy",
    )
    verify.set_defaults(run=run_verify)

    compare = commands.add_parser("compare", help="compare the orders of the tie-break policies")
    _input_options(compare)
    compare.add_argument(
        "--ties",
        metavar="LIST",
        help="comma-separated policies (default: all that toporank.compare knows)",
    )
    compare.add_argument("--key", metavar="FILE", help="node,value file for the priority policy")
    compare.add_argument("--descending", action="store_true", help="larger keys first (with --key)")
    compare.add_argument(
        "--workers", type=int, metavar="N", help="also schedule each order on N workers"
    )
    compare.add_argument("--plot", metavar="PNG", help="also draw the comparison here")
    compare.add_argument(
        "--on-cycle",
        choices=("raise", "cut"),
        default="raise",
        help="a graph with cycles: stop (raise, the default) or compare on the graph "
        "left after cut_cycles removes a minimal set of edges (cut)",
    )
    compare.set_defaults(run=run_compare)

    demo = commands.add_parser("demo", help="run on bundled invented data and write the results")
    demo.add_argument(
        "--out",
        default="toporank-demo",
        metavar="DIR",
        help="folder for the data and results (default ./toporank-demo)",
    )
    demo.add_argument("-q", "--quiet", action="store_true", help="no progress bars")
    demo.set_defaults(run=run_demo)
    return parser


def _input_options(p: argparse.ArgumentParser) -> None:
    p.add_argument(
        "file",
        metavar="FILE",
        help="edge list (tab/comma/whitespace text, .gz "
        "allowed), Matrix Market .mtx, scipy .npz, (m, 2) .npy, or - for stdin",
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
        help="the first line names the columns",
    )
    header.add_argument("--no-header", dest="header", action="store_false")
    p.add_argument(
        "--columns",
        metavar="SRC,DST",
        default="0,1",
        help="source and target "
        "columns: 0-based positions or header names (default 0,1; an edge runs "
        "from source to target, so the source comes first)",
    )
    kind = p.add_mutually_exclusive_group()
    kind.add_argument(
        "--labels",
        dest="labels",
        action="store_true",
        default=None,
        help="read nodes as string labels (default: detected)",
    )
    kind.add_argument(
        "--ids", dest="labels", action="store_false", help="read nodes as non-negative integer ids"
    )
    p.add_argument("-q", "--quiet", action="store_true", help="no progress bars or notes")


def _tie_options(p: argparse.ArgumentParser) -> None:
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
        help="for --tie priority: a node,value file "
        "giving every node a number (default: the node id)",
    )
    p.add_argument(
        "--descending", action="store_true", help="for --tie priority: largest key first"
    )
    p.add_argument("--seed", type=int, help="for --tie random: seed for a repeatable order")


def _output_options(p: argparse.ArgumentParser, what: str) -> None:
    p.add_argument("-o", "--output", metavar="PATH", help="where to write (default: stdout)")
    p.add_argument(
        "--output-format",
        choices=OUTPUT_FORMATS,
        help=f"{what}; default from the output name (.csv, .npy)",
    )


def _columns(text: str) -> tuple[int | str, int | str]:
    parts = [part.strip() for part in text.split(",")]
    if len(parts) != 2 or not all(parts):
        raise GraphInputError(f"--columns takes two columns as SRC,DST, got {text!r}")
    return tuple(int(p) if p.isdigit() else p for p in parts)  # type: ignore[return-value]


def _read_input(args: argparse.Namespace) -> Graph:
    return read_graph(
        args.file,
        format=args.format,
        delimiter=args.delimiter,
        header=args.header,
        columns=_columns(args.columns),
        labels=args.labels,
        progress=not args.quiet,
    )


def _outputs(args: argparse.Namespace, *names: str) -> list[str]:
    """The output paths given, checked before any work is done."""
    inputs = [args.file] + [
        getattr(args, n) for n in ("key", "order_file") if getattr(args, n, None)
    ]
    paths = [getattr(args, name) for name in names if getattr(args, name, None)]
    for path in paths:
        check_writable(path, inputs)
    if len(set(map(os.path.realpath, paths))) != len(paths):
        raise GraphInputError(f"two outputs share one path: {paths}")
    return paths


def _output_format(args: argparse.Namespace, default: str) -> str:
    if args.output_format:
        return str(args.output_format)
    path = (args.output or "").lower()
    return "csv" if path.endswith(".csv") else "npy" if path.endswith(".npy") else default


def _plain(g: Graph) -> Graph:
    """The same graph without labels, so the core's answers stay node ids."""
    return g if g.labels is None else Graph(g.indptr, g.indices, None, None, g._edges)


def _named(g: Graph, ids: Any) -> list[Any]:
    ids = np.asarray(ids, dtype=np.int64)
    values = ids if g.labels is None else g.labels[ids]
    return [v.item() if isinstance(v, np.generic) else v for v in values]


# ---------------------------------------------------------------------------
# order


def ordered(
    g: Graph, args: argparse.Namespace, key: Any, on_cycle: str
) -> tuple[np.ndarray | None, dict[str, Any]]:
    """Node ids in topological order (``None`` if a cycle stops it) and a cycle report."""
    plain = _plain(g)
    tie_args: dict[str, Any] = {"tie": args.tie}
    if key is not None:
        tie_args["key"] = key
    if args.descending:
        tie_args["descending"] = True
    if args.seed is not None:
        tie_args["seed"] = args.seed
    report: dict[str, Any] = {"is_dag": True}
    try:
        ids = np.asarray(toporank.order(plain, **tie_args))
    except CyclicGraphError as exc:
        report = {
            "is_dag": False,
            "witness_cycle": _named(g, exc.cycle),
            "ordered_before_cycles": len(exc.order),
            "blocked_behind_cycles": len(exc.blocked),
        }
        report.update(_components_report(g, with_witnesses=False))
        if on_cycle == "raise":
            return None, report
        if on_cycle == "partial":
            ids = np.asarray(exc.order)
        else:
            if on_cycle == "cut":
                report["cut_edges"] = _cut_report(g)["count"]
            tie_args["on_cycle"] = on_cycle
            ids = np.asarray(toporank.order(plain, **tie_args))
    return ids, report


def _node_levels(g: Graph, args: argparse.Namespace, report: dict[str, Any]) -> np.ndarray | None:
    if not report["is_dag"]:
        _note(args, "level column left out: levels need a graph without cycles")
        return None
    return np.asarray(toporank.levels(_plain(g)))


def run_order(args: argparse.Namespace) -> int:
    started = time.perf_counter()
    _outputs(args, "output", "summary")
    g = _read_input(args)
    key = read_key(args.key, g, progress=not args.quiet) if args.key else None
    read_done = time.perf_counter()
    ids, report = ordered(g, args, key, args.on_cycle)
    order_done = time.perf_counter()
    kind = _output_format(args, "lines")
    if ids is not None:
        _write_order(g, ids, kind, args, report)
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
        cycle = report["witness_cycle"]
        shown = " -> ".join(map(str, cycle[:_SHOWN_NODES] + cycle[:1]))
        _error(
            f"{args.file} has a cycle: {shown}; {report['blocked_behind_cycles']} of {g.n} nodes "
            "are blocked behind cycles. Nothing was written; see `toporank cycles`, or pass "
            "--on-cycle partial, condense or cut"
        )
        return EXIT_FOUND
    if args.output:
        _note(args, f"wrote {len(ids)} of {g.n} nodes to {args.output}")
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


def _write_order(
    g: Graph, ids: np.ndarray, kind: str, args: argparse.Namespace, report: dict[str, Any]
) -> None:
    progress = not args.quiet
    if kind == "npy":
        array = ids if g.labels is None else np.asarray(node_strings(g, ids), dtype=str)
        _write(args.output, lambda f: np.save(f, array, allow_pickle=False), binary=True)
        return
    if kind == "lines":
        _write(args.output, lambda f: write_lines(f, node_strings(g, ids), progress=progress))
        return
    header = ["node", "position"]
    columns: list[Any] = [node_strings(g, ids), np.arange(len(ids))]
    levels = _node_levels(g, args, report)
    if levels is not None:
        header.append("level")
        columns.append(levels[ids])
    _write(args.output, lambda f: write_table(f, header, columns, progress=progress))


def _write(path: str | None, fill: Callable[[Any], None], binary: bool = False) -> None:
    if path is None:
        if binary:
            raise GraphInputError("binary output (npy) needs a file; pass -o PATH")
        fill(sys.stdout)
        sys.stdout.flush()
        return
    with atomic_output(path, binary=binary) as f:
        fill(f)


def write_json(path: str, content: dict[str, Any]) -> None:
    """Write ``content`` as indented JSON, atomically."""
    with atomic_output(path) as f:
        json.dump(content, f, indent=2, default=_json_value)
        f.write("\n")


def _json_value(value: Any) -> Any:
    if isinstance(value, np.generic):
        return value.item()
    if isinstance(value, np.ndarray):
        return value.tolist()
    return str(value)


# ---------------------------------------------------------------------------
# levels, cycles, verify, compare


def run_levels(args: argparse.Namespace) -> int:
    _outputs(args, "output")
    g = _read_input(args)
    values = np.asarray(toporank.levels(_plain(g)))
    kind = _output_format(args, "csv")
    if kind == "npy":
        _write(args.output, lambda f: np.save(f, values, allow_pickle=False), binary=True)
    elif kind == "lines":
        _write(args.output, lambda f: write_lines(f, values, progress=not args.quiet))
    else:
        nodes = node_strings(g, np.arange(g.n))
        _write(
            args.output,
            lambda f: write_table(f, ["node", "level"], [nodes, values], progress=not args.quiet),
        )
    return EXIT_OK


def _components_report(g: Graph, with_witnesses: bool, limit: int | None = None) -> dict[str, Any]:
    """Sizes of the strongly connected components with cycles, and a witness cycle for each."""
    plain = _plain(g)
    labels = np.asarray(toporank.components(plain), dtype=np.int64)
    sizes = np.bincount(labels, minlength=int(labels.max()) + 1 if len(labels) else 0)
    rows = np.repeat(np.arange(g.n, dtype=np.int64), np.diff(g.indptr))
    looped = np.zeros(len(sizes), dtype=bool)
    looped[labels[rows[rows == g.indices]]] = True
    cyclic = np.flatnonzero((sizes > 1) | looped)
    cyclic = cyclic[np.argsort(-sizes[cyclic], kind="stable")]
    report: dict[str, Any] = {
        "cyclic_components": len(cyclic),
        "nodes_in_cycles": int(sizes[cyclic].sum()),
        "component_sizes": sizes[cyclic].tolist(),
    }
    if not with_witnesses:
        return report
    first_node = np.full(len(sizes), -1, dtype=np.int64)
    present, first_seen = np.unique(labels, return_index=True)
    first_node[present] = first_seen
    listed = []
    for component in cyclic[:limit]:
        cycle = toporank.cycle_witness(plain, through=int(first_node[component]))
        if cycle is None:
            cycle = np.zeros(0, dtype=np.int64)
        listed.append(
            {
                "component": int(component),
                "size": int(sizes[component]),
                "cycle": _named(g, np.asarray(cycle)),
            }
        )
    report["components"] = listed
    return report


def _cut_report(g: Graph) -> dict[str, Any]:
    cut = toporank.cut_cycles(_plain(g))
    return {
        "count": len(cut),
        "source": _named(g, np.asarray(cut.sources, dtype=np.int64)),
        "target": _named(g, np.asarray(cut.targets, dtype=np.int64)),
        "edge": np.asarray(cut.edge_index).tolist(),
    }


def run_cycles(args: argparse.Namespace) -> int:
    if args.output and not args.cut:
        raise GraphInputError("-o writes the cut edges; add --cut")
    if args.limit < 0:
        raise GraphInputError(f"--limit must be >= 0, got {args.limit}")
    _outputs(args, "json", "output")
    g = _read_input(args)
    report: dict[str, Any] = {"input": args.file, "nodes": g.n, "edges": g.m}
    report.update(
        _components_report(g, with_witnesses=True, limit=None if args.json else args.limit)
    )
    report["is_dag"] = report["cyclic_components"] == 0
    if args.cut:
        report["cut"] = _cut_report(g)
    print(render_cycles(report, args.limit))
    if args.json:
        write_json(args.json, report)
    if args.output:
        cut = report["cut"]
        columns = [cut["source"], cut["target"]] + (
            [cut["edge"]] if cut["edge"] is not None else []
        )
        header = ["source", "target", "edge"][: len(columns)]
        _write(args.output, lambda f: write_table(f, header, columns))
    return EXIT_OK


def render_cycles(report: dict[str, Any], limit: int) -> str:
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
            cycle = item["cycle"]
            lines.append(f"  size {item['size']}: {_cycle(cycle)}")
        if len(report["components"]) > limit or len(sizes) > limit:
            lines.append(f"  ... {len(sizes) - limit} more (see --json)")
    cut = report.get("cut")
    if cut is not None:
        lines.append(f"{cut['count']} edge(s) to cut for a DAG:")
        for u, v in list(zip(cut["source"], cut["target"], strict=True))[:limit]:
            lines.append(f"  {u} -> {v}")
        if cut["count"] > limit:
            lines.append(f"  ... {cut['count'] - limit} more (see -o or --json)")
    return "\n".join(lines)


def _list(values: Sequence[Any], limit: int) -> str:
    shown = ", ".join(map(str, values[:limit]))
    return shown + (f", ... ({len(values) - limit} more)" if len(values) > limit else "")


def _cycle(cycle: Sequence[Any]) -> str:
    if not cycle:
        return "(none)"
    shown = list(cycle[:_SHOWN_NODES])
    more = f" -> ... ({len(cycle) - _SHOWN_NODES} more)" if len(cycle) > _SHOWN_NODES else ""
    return " -> ".join(map(str, shown)) + more + f" -> {cycle[0]}"


def run_verify(args: argparse.Namespace) -> int:
    g = _read_input(args)
    nodes = read_nodes(args.order_file, g, progress=not args.quiet)
    try:
        toporank.verify_order(g, nodes)
    except InvalidOrderError as exc:
        print(
            f"toporank: {args.order_file} is not a topological order of {args.file}: {exc}",
            file=sys.stderr,
        )
        return EXIT_FOUND
    print(f"ok: {args.order_file} is a topological order of {args.file} ({g.n} nodes, {g.m} edges)")
    return EXIT_OK


def _without_edges(g: Graph, input_positions: np.ndarray) -> Graph:
    """``g`` less the edges at these input positions; labels and edge order kept."""
    stored = g.edge_input_positions()
    drop = np.isin(stored if stored is not None else np.arange(g.m), input_positions)
    rows = np.repeat(np.arange(g.n, dtype=g.indices.dtype), np.diff(g.indptr))[~drop]
    targets = g.indices[~drop]
    if g.labels is None:
        return Graph.from_edges(rows, targets, g.n)
    return Graph.from_labelled_edges(rows, targets, g.labels)


def run_compare(args: argparse.Namespace) -> int:
    _outputs(args, "plot")
    g = _read_input(args)
    options: dict[str, Any] = {}
    if args.ties:
        options["ties"] = tuple(t.strip() for t in args.ties.split(",") if t.strip())
    if args.key:
        options["key"] = read_key(args.key, g, progress=not args.quiet)
    if args.descending:
        options["descending"] = True
    if args.workers is not None:
        options["workers"] = args.workers
    if args.on_cycle == "cut":
        cut = toporank.cut_cycles(g)
        if len(cut):
            _note(args, f"comparing without the {len(cut)} edges cut_cycles removed")
            g = _without_edges(g, np.asarray(cut.edge_index, dtype=np.int64))
    result = toporank.compare(g, **options)
    print(str(result))
    if args.plot:
        plot = getattr(result, "plot", None)
        if plot is None:
            raise Unavailable("--plot needs matplotlib (pip install 'toporank[plot]')")
        root, ending = os.path.splitext(args.plot)
        temporary = f"{root}.partial{os.getpid()}{ending}"
        try:
            try:
                plot(temporary)
            except ImportError as exc:
                raise Unavailable(f"--plot: {exc}") from None
            os.replace(temporary, args.plot)
        finally:
            with contextlib.suppress(OSError):
                os.unlink(temporary)
        _note(args, f"wrote {args.plot}")
    return EXIT_OK


def run_demo(args: argparse.Namespace) -> int:
    from ._demo import run

    return run(args.out, progress=not args.quiet)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
