"""Reports the command line and the demo share: cycles found, edges cut, graphs less some edges.

They speak node labels for labelled graphs (plain Python values, ready for
JSON) and call the public functions on an unlabelled view, so the answers
stay integer ids while they work.
"""

from __future__ import annotations

import dataclasses
from typing import Any

import numpy as np

import toporank

from . import _core
from ._errors import CyclicGraphError
from ._graph import Graph

__all__ = [
    "ON_CYCLE",
    "cut_report",
    "cycle_report",
    "named",
    "order_with_report",
    "plain",
    "shown_cycle",
    "without_edges",
]

ON_CYCLE = ("raise", "partial", "condense", "cut")
SHOWN_NODES = 12


def plain(g: Graph) -> Graph:
    """The same graph without labels, so the core's answers stay node ids."""
    return g if g.labels is None else dataclasses.replace(g, labels=None, _label_index=None)


def named(g: Graph, ids: Any) -> list[Any]:
    """Nodes as plain Python values: labels for a labelled graph, ints otherwise."""
    ids = np.asarray(ids, dtype=np.int64)
    values = ids if g.labels is None else g.labels[ids]
    return [v.item() if isinstance(v, np.generic) else v for v in values]


def shown_cycle(cycle: list[Any]) -> str:
    """``a -> b -> c -> a``, shortened after a dozen nodes."""
    if not cycle:
        return "(none)"
    shown = list(cycle[:SHOWN_NODES])
    more = f" -> ... ({len(cycle) - SHOWN_NODES} more)" if len(cycle) > SHOWN_NODES else ""
    return " -> ".join(map(str, shown)) + more + f" -> {cycle[0]}"


def cycle_report(g: Graph, *, witnesses: bool, limit: int | None = None) -> dict[str, Any]:
    """Sizes of the strongly connected components with cycles, and a witness cycle for each.

    Components are listed largest first; ``limit`` caps how many get a witness.
    """
    found = _core.cycle_witnesses(g.indptr, g.indices)
    sizes = np.bincount(np.asarray(found.labels, dtype=np.int64), minlength=found.count)
    # The components holding a cycle (several nodes, or one with a self-loop).
    cyclic = np.asarray(found.components, dtype=np.int64)
    order = np.argsort(-sizes[cyclic], kind="stable")
    report: dict[str, Any] = {
        "cyclic_components": len(cyclic),
        "nodes_in_cycles": int(sizes[cyclic].sum()),
        "component_sizes": sizes[cyclic[order]].tolist(),
    }
    if not witnesses:
        return report
    # One core call found a shortest cycle through the smallest node of
    # every such component, in O(V + E) over all of them.
    offsets = np.asarray(found.offsets)
    nodes = np.asarray(found.nodes, dtype=np.int64)
    listed = []
    for k in order[:limit]:
        component = int(cyclic[k])
        listed.append(
            {
                "component": component,
                "size": int(sizes[component]),
                "cycle": named(g, nodes[offsets[k] : offsets[k + 1]]),
            }
        )
    report["components"] = listed
    return report


def cut_report(g: Graph) -> dict[str, Any]:
    """The edges ``cut_cycles`` removes: sources, targets (as nodes) and input positions.

    ``untested`` counts the cut edges whose put-back test ran out of budget;
    the cut is minimal when it is 0.
    """
    cut = toporank.cut_cycles(plain(g))
    return {
        "count": len(cut),
        "untested": cut.untested,
        "source": named(g, np.asarray(cut.sources, dtype=np.int64)),
        "target": named(g, np.asarray(cut.targets, dtype=np.int64)),
        "edge": np.asarray(cut.edge_index).tolist(),
    }


def without_edges(g: Graph, input_positions: Any) -> Graph:
    """``g`` less the edges at these input positions; labels and edge order kept."""
    stored = g.edge_input_positions()
    drop = np.isin(stored if stored is not None else np.arange(g.m), input_positions)
    rows = np.repeat(np.arange(g.n, dtype=g.indices.dtype), np.diff(g.indptr))[~drop]
    targets = g.indices[~drop]
    if g.labels is None:
        return Graph.from_edges(rows, targets, g.n)
    return Graph.from_labelled_edges(rows, targets, g.labels)


def induced(g: Graph, ids: Any) -> Graph:
    """The subgraph on the nodes ``ids`` (in that order), labels kept; unlabelled ids renumbered."""
    ids = np.asarray(ids, dtype=np.int64)
    new = np.full(g.n, -1, dtype=np.int64)
    new[ids] = np.arange(len(ids))
    rows = np.repeat(np.arange(g.n, dtype=np.int64), np.diff(g.indptr))
    cols = np.asarray(g.indices, dtype=np.int64)
    keep = (new[rows] >= 0) & (new[cols] >= 0)
    src, dst = new[rows[keep]], new[cols[keep]]
    labels = g.labels[ids] if g.labels is not None else ids.astype(object)
    return (
        Graph.from_labelled_edges(src, dst, labels) if len(ids) else Graph.from_edges(src, dst, 0)
    )


def order_with_report(
    g: Graph, on_cycle: str, **tie_args: Any
) -> tuple[np.ndarray | None, dict[str, Any]]:
    """Node ids in topological order (None when a cycle stops it) and a cycle report.

    ``on_cycle`` is one of :data:`ON_CYCLE`; ``tie_args`` go to :func:`toporank.order`.
    With ``"partial"`` the ids are the nodes ordered before the cycles; the
    report then says how many are left out.
    """
    bare = plain(g)
    report: dict[str, Any] = {"is_dag": True}
    try:
        return np.asarray(toporank.order(bare, **tie_args)), report
    except CyclicGraphError as exc:
        report = {
            "is_dag": False,
            "witness_cycle": named(g, exc.cycle),
            "ordered_before_cycles": len(exc.order),
            "blocked_behind_cycles": len(exc.blocked),
        }
        report.update(cycle_report(g, witnesses=False))
        if on_cycle == "raise":
            return None, report
        if on_cycle == "partial":
            return np.asarray(exc.order), report
        if on_cycle == "cut":
            report["cut_edges"] = cut_report(g)["count"]
        chosen: Any = on_cycle
        return np.asarray(toporank.order(bare, on_cycle=chosen, **tie_args)), report
