"""Main path analysis: the backbone of a citation DAG under a traversal weight.

Main path analysis (Hummon & Doreian, "Connectivity in a citation network:
the development of DNA theory", Social Networks 11(1), 1989) weights each
edge by the search paths through it and follows the heaviest ones.
Batagelj ("Efficient algorithms for citation network analysis", arXiv
cs/0309023, 2003) gave the linear-time search path counts and the preprint
transformation for cyclic networks; Liu & Lu ("An integrated approach for
main path analysis: development of the Hirsch index as an example", JASIST
63(3), 2012) the key-route main paths. Journal details are from memory.
"""

from __future__ import annotations

import operator
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from . import _core
from ._errors import GraphInputError
from ._graph import Graph, as_graph, as_nodes
from ._validate import COUNT_KINDS, choice, edge_values, raise_cycle, show, sweep_threads

__all__ = ["MainPath", "Preprint", "main_path", "preprint_transform"]

METHODS = ("global", "forward", "backward", "key-route")
EXTENDS = ("local", "global")
TIE_RULES = ("first", "all")
MAIN_PATH_ON_CYCLE = ("raise", "condense", "cut", "preprint")


@dataclass(frozen=True, eq=False)
class Preprint:
    """A cyclic graph made acyclic by the preprint transformation.

    Attributes
    ----------
    graph : Graph
        The transformed graph (integer ids): nodes ``0 .. n-1`` are the
        original nodes, nodes ``n ..`` the preprint copies.
    node_of : numpy.ndarray
        Per transformed node: the original node id it stands for (int64).
    edge_of : numpy.ndarray
        Per transformed edge, in its stored order: the original edge's
        position in the input's edge order (int64).
    """

    graph: Graph
    node_of: np.ndarray
    edge_of: np.ndarray


def _stored_sources(g: Graph) -> np.ndarray:
    return np.repeat(np.arange(g.n, dtype=np.int64), np.diff(g.indptr))


def _input_positions(g: Graph, stored: np.ndarray) -> np.ndarray:
    positions = g.edge_input_positions()
    stored = stored.astype(np.int64, copy=False)
    return stored if positions is None else positions[stored].astype(np.int64)


def preprint_transform(graph: Any, *, n: int | None = None) -> Preprint:
    """Return the graph made acyclic by Batagelj's preprint transformation.

    Every node ``v`` of a non-trivial strongly connected component (two or
    more nodes, or one with a self-loop) gets a copy ``v'``, its preprint.
    An edge ``u -> v`` inside such a component becomes ``u -> v'``; every
    edge that leaves a component ``u -> w`` is kept and also given to the
    preprint, ``u' -> w``, so a path entering the component can leave it
    again. Edges entering a component and edges between other nodes are kept
    as they are. Inside a component edges now run from originals to copies
    only, and copies have no edge back into their component, so the result
    is a DAG; on a DAG it is the graph itself. (Batagelj, arXiv cs/0309023,
    2003; the exact wiring here is ours, details from memory.)

    Parameters
    ----------
    graph
        Any graph form :func:`toporank.order` accepts.
    n
        Node count for the edge-array forms.

    Returns
    -------
    Preprint
        The transformed ``graph``, and ``node_of`` / ``edge_of`` mapping its
        nodes and edges back to the input's. Every sweep of the package
        accepts ``Preprint.graph``.

    Examples
    --------
    Two invented papers of one issue cite each other; a third cites one:

    >>> import toporank
    >>> t = toporank.preprint_transform([("a", "b"), ("b", "a"), ("b", "c")])
    >>> t.graph.n, t.graph.m
    (5, 4)
    >>> t.node_of
    array([0, 1, 2, 0, 1])
    >>> toporank.order(t.graph)
    array([0, 1, 4, 3, 2])
    """
    g = as_graph(graph, n)
    labels = _core.strong_components(g.indptr, g.indices).labels
    src = _stored_sources(g)
    dst = g.indices.astype(np.int64)
    comp = np.asarray(labels, dtype=np.int64)
    sizes = np.bincount(comp, minlength=int(comp.max(initial=-1)) + 1)
    cyclic = sizes >= 2
    loops = src == dst
    cyclic[comp[src[loops]]] = True
    in_cyclic = cyclic[comp] if g.n else np.zeros(0, dtype=bool)
    copies = np.flatnonzero(in_cyclic)
    copy_of = np.full(g.n, -1, dtype=np.int64)
    copy_of[copies] = g.n + np.arange(len(copies))
    inside = (comp[src] == comp[dst]) & in_cyclic[src]
    leaving = (comp[src] != comp[dst]) & in_cyclic[src]
    stored = np.arange(g.m, dtype=np.int64)
    new_src = np.concatenate([src, copy_of[src[leaving]]])
    new_dst = np.concatenate([np.where(inside, copy_of[dst], dst), dst[leaving]])
    origin = np.concatenate([stored, stored[leaving]])
    total = g.n + len(copies)
    order = np.argsort(new_src, kind="stable")
    transformed = Graph.from_edges(new_src[order], new_dst[order], total)
    return Preprint(
        graph=transformed,
        node_of=np.concatenate([np.arange(g.n, dtype=np.int64), copies.astype(np.int64)]),
        edge_of=_input_positions(g, origin[order]),
    )


@dataclass(frozen=True, eq=False)
class MainPath:
    """A main path, or the union of several (see :func:`main_path`).

    Attributes
    ----------
    sources, targets : numpy.ndarray
        The main path's edges ``sources[k] -> targets[k]`` (labels for a
        labelled graph), in the input's edge order.
    edge_index : numpy.ndarray
        Each edge's position in the input's edge order (int64), as in
        :func:`toporank.cut_cycles`.
    edge_weight : numpy.ndarray
        Each edge's weight (float64).
    nodes : numpy.ndarray
        For a single path: its nodes, source first. For a union (several
        routes, or ``ties="all"``): the nodes it touches, ascending id. Under
        ``on_cycle="condense"`` the nodes are component numbers.
    weight : float
        The total weight of the edges (of the union).
    single : bool
        Whether the edges form one path (``nodes`` in path order).
    log_weights : bool
        The counts overflowed float64, so their natural logarithms served as
        weights.
    """

    sources: np.ndarray
    targets: np.ndarray
    edge_index: np.ndarray
    edge_weight: np.ndarray
    nodes: np.ndarray
    weight: float
    single: bool
    log_weights: bool

    def __len__(self) -> int:
        return len(self.edge_index)

    def subgraph(self) -> Graph:
        """Return the main path (union) as a graph of its own, over labels or ids."""
        pairs = list(zip(self.sources.tolist(), self.targets.tolist(), strict=True))
        return Graph.from_pairs(pairs) if pairs else Graph.from_edges([], [], 0)

    def records(self) -> list[dict[str, Any]]:
        """One row per edge: ``source``, ``target``, ``edge_index``, ``weight``."""
        return [
            {"source": s, "target": t, "edge_index": int(e), "weight": float(w)}
            for s, t, e, w in zip(
                self.sources.tolist(),
                self.targets.tolist(),
                self.edge_index,
                self.edge_weight,
                strict=True,
            )
        ]

    def plot(
        self,
        path: str | Path,
        *,
        key: Any = None,
        title: str | None = None,
        dpi: int = 150,
    ) -> Path:
        """Draw the main path left to right and save it as a PNG; return its path.

        Nodes sit in columns by their level inside the main path (longest
        path from its first nodes), or by ``key`` (a mapping from node to a
        number, such as a paper's year). Edge width grows with the weight;
        nodes carry their labels (ids for unlabelled graphs). Needs
        matplotlib (``pip install 'toporank[plot]'``); uses the Agg canvas.
        """
        try:
            from matplotlib.figure import Figure
        except ImportError as exc:
            raise ImportError(
                "MainPath.plot needs matplotlib; install it with pip install 'toporank[plot]'"
            ) from exc
        sub = self.subgraph()
        names = list(sub.labels) if sub.labels is not None else list(range(sub.n))
        if key is None:
            # mapped back from a transformed graph the union may loop: condense then
            from ._sweeps import levels

            x = np.asarray(levels(sub, on_cycle="condense"), dtype=float)
        else:
            try:
                x = np.array([float(key[name]) for name in names])
            except (KeyError, TypeError, ValueError) as exc:
                raise GraphInputError(f"key gives no number for a main path node: {exc}") from exc
        y = np.zeros(sub.n)
        for column in np.unique(x):
            members = np.flatnonzero(x == column)
            y[members] = np.arange(len(members)) - (len(members) - 1) / 2
        columns = max(len(np.unique(x)), 1)
        rows = max(int(np.max(np.unique(x, return_counts=True)[1], initial=1)), 1)
        fig = Figure(figsize=(max(6.0, 2.0 * columns), max(3.0, 1.1 * rows + 1.5)))
        ax = fig.subplots()
        w = self.edge_weight
        span = float(w.max() - w.min()) if len(w) else 0.0
        widths = 1.0 + (5.0 * (w - w.min()) / span if span > 0 else np.full(len(w), 2.0))

        def at(node: Any) -> int:
            return sub.label_index[node] if sub.labels is not None else int(node)

        for k, (s, t) in enumerate(zip(self.sources.tolist(), self.targets.tolist(), strict=True)):
            a, b = at(s), at(t)
            ax.annotate(
                "",
                xy=(x[b], y[b]),
                xytext=(x[a], y[a]),
                arrowprops={
                    "arrowstyle": "-|>",
                    "linewidth": float(widths[k]),
                    "color": "#3b6ea5",
                    "shrinkA": 12,
                    "shrinkB": 12,
                    "mutation_scale": 12,
                },
            )
            ax.annotate(
                f"{w[k]:.4g}",
                ((x[a] + x[b]) / 2, (y[a] + y[b]) / 2),
                fontsize=7,
                color="#444444",
                ha="center",
                va="center",
                zorder=5,
                bbox={"boxstyle": "round,pad=0.15", "fc": "white", "ec": "none", "alpha": 0.85},
            )
        ax.scatter(x, y, s=1, alpha=0)  # sets the data limits; the boxes are the nodes
        for k, name in enumerate(names):
            ax.annotate(
                str(name),
                (x[k], y[k]),
                ha="center",
                va="center",
                fontsize=8,
                zorder=4,
                bbox={"boxstyle": "round,pad=0.35", "fc": "#f3e3b5", "ec": "#7a6a3a"},
            )
        ax.set_yticks([])
        ax.set_xlabel("year" if key is not None else "level in the main path")
        ax.margins(x=0.1, y=0.2)
        if key is not None:
            ax.set_xticks(np.unique(x), [f"{v:g}" for v in np.unique(x)])
        for side in ("top", "right", "left"):
            ax.spines[side].set_visible(False)
        ax.set_title(title or f"main path: {len(self)} edges, total weight {self.weight:.4g}")
        fig.tight_layout()
        target = Path(path)
        fig.savefig(target, format="png", dpi=dpi)
        return target


def _acyclic(
    g: Graph, on_cycle: str, threads: int
) -> tuple[Graph, np.ndarray | None, np.ndarray | None]:
    """The DAG the main path is found on, the input edge position of each of
    its stored edges (``None``: its stored order is the input order), and the
    node each of its nodes stands for (``None``: itself)."""
    stored_order = g.edge_input_positions()
    if on_cycle == "raise":
        return g, stored_order, None
    found = _core.levels(g.indptr, g.indices, threads, False)
    if not isinstance(found, _core.Cyclic):
        return g, stored_order, None
    everything = _input_positions(g, np.arange(g.m))
    src = _stored_sources(g)
    if on_cycle == "preprint":
        t = preprint_transform(g)
        return t.graph, t.edge_of, t.node_of
    if on_cycle == "cut":
        keep = np.ones(g.m, dtype=bool)
        keep[_core.cut_cycles(g.indptr, g.indices).removed] = False
        kept = np.flatnonzero(keep)
        return Graph.from_edges(src[keep], g.indices[keep], g.n), everything[kept], None
    comp = np.asarray(_core.strong_components(g.indptr, g.indices).labels, dtype=np.int64)
    dst = g.indices.astype(np.int64)
    between = np.flatnonzero(comp[src] != comp[dst])
    count = int(comp.max(initial=-1)) + 1
    dag = Graph.from_edges(comp[src[between]], comp[dst[between]], count)
    positions = dag.edge_input_positions()
    kept = between if positions is None else between[positions]
    return dag, everything[kept], np.arange(count, dtype=np.int64)


def main_path(
    graph: Any,
    *,
    weight: Any = "spc",
    method: str = "global",
    routes: int = 1,
    extend: str = "local",
    ties: str = "first",
    on_cycle: str = "raise",
    threads: int | None = None,
    n: int | None = None,
) -> MainPath:
    """Return the main path of a citation DAG (or the union of several).

    Parameters
    ----------
    graph
        Any graph form :func:`toporank.order` accepts; an edge ``u -> v``
        means knowledge flows from ``u`` to ``v`` (cited to citing, or the
        reverse: the methods only need one direction throughout).
    weight
        ``"spc"``, ``"splc"`` or ``"spnp"`` (see :func:`path_counts`), or
        one finite, non-negative number per edge in the package's edge order.
    method
        ``"global"``: the source-to-sink path of largest total weight.
        ``"forward"``: from the heaviest edge leaving a source, the heaviest
        edge out of each node reached, to a sink. ``"backward"``: from the
        heaviest edge entering a sink, the heaviest edge into each node
        reached, back to a source. ``"key-route"``: the ``routes`` heaviest
        edges, each extended to a sink and back to a source, the union.
    routes
        The number of key routes (``method="key-route"``).
    extend
        How key routes are extended: ``"local"`` (the heaviest edge at each
        step) or ``"global"`` (the heaviest path to a sink and from a source).
    ties
        ``"first"``: among tied edges the one first in the stored CSR order
        (for a CSR input its stored order; for an edge list the edges grouped
        by source, input order within a source), among tied start nodes of
        the global path the lowest id, so results are deterministic.
        ``"all"``: follow every tied edge (several main paths, one union).
    on_cycle
        ``"raise"`` (default): a cycle raises :class:`CyclicGraphError`.
        ``"cut"``: drop the edges :func:`toporank.cut_cycles` removes.
        ``"condense"``: work on the component DAG (the edges between
        components; ``nodes`` are component numbers). ``"preprint"``: work on
        :func:`preprint_transform`'s graph, mapped back to the input's nodes
        and edges.
    threads, n
        As in :func:`path_counts`.

    Returns
    -------
    MainPath
        The edges, their weights and total, the nodes, and ``plot``.

    Raises
    ------
    CyclicGraphError
        The graph has a cycle and ``on_cycle="raise"``.

    Notes
    -----
    One path-count programme (forward and backward pass) for the weights,
    then one or two linear passes along the same topological order: O(V + E)
    for every method (key routes add an O(E) selection). When the counts
    overflow float64, their logarithms are the weights (``log_weights``).

    Examples
    --------
    An invented journal: paper ``A`` is cited by ``B`` and ``C``, both cited
    by ``D``, and ``C`` alone is cited by ``E``:

    >>> import toporank
    >>> papers = [("A", "B"), ("A", "C"), ("B", "D"), ("C", "D"), ("C", "E")]
    >>> mp = toporank.main_path(papers)
    >>> mp.nodes, mp.weight
    (array(['A', 'C', 'D'], dtype=object), 3.0)
    >>> toporank.main_path(papers, method="key-route", routes=2).nodes
    array(['A', 'B', 'C', 'D'], dtype=object)
    """
    g = as_graph(graph, n)
    method = choice(method, "method", METHODS)
    extend = choice(extend, "extend", EXTENDS)
    ties = choice(ties, "ties", TIE_RULES)
    on_cycle = choice(on_cycle, "on_cycle", MAIN_PATH_ON_CYCLE)
    if (
        isinstance(routes, bool)
        or not isinstance(routes, (int, np.integer))
        or not 1 <= routes <= 2**63 - 1
    ):
        raise GraphInputError(f"routes must be a positive integer below 2**63, got {show(routes)}")
    if method != "key-route" and (routes != 1 or extend != "local"):
        raise GraphInputError("routes and extend apply to method='key-route' only")
    kind = "spc"
    user = None
    if isinstance(weight, str):
        kind = choice(weight, "weight", COUNT_KINDS)
    else:
        user = edge_values(g, weight, "weight")
    threads_used = sweep_threads(threads)
    dag, edge_input, node_of = _acyclic(g, on_cycle, threads_used)
    if user is not None and dag is not g:
        assert edge_input is not None  # a new DAG lists its edges' input positions
        inverse = np.empty(g.m, dtype=np.int64)
        inverse[_input_positions(g, np.arange(g.m))] = np.arange(g.m)
        user = np.ascontiguousarray(user[inverse[edge_input]])
    core_method = "key-route-global" if method == "key-route" and extend == "global" else method
    found = _core.main_path(
        dag.indptr,
        dag.indices,
        kind,
        user,
        core_method,
        operator.index(routes),
        ties == "all",
        threads_used,
    )
    if isinstance(found, _core.Cyclic):
        raise_cycle(dag, found)
    stored = found.edges
    tails = np.searchsorted(dag.indptr, stored, side="right") - 1
    heads = dag.indices[stored].astype(np.int64)
    if not len(stored):
        positions = np.zeros(0, dtype=np.int64)
    elif edge_input is None:
        positions = np.asarray(stored, dtype=np.int64)
    else:
        positions = edge_input[stored].astype(np.int64, copy=False)
    by_input = np.argsort(positions, kind="stable")
    weights = np.asarray(found.edge_weight, dtype=np.float64)[by_input]
    path = found.path
    single = path is not None

    def back(ids: np.ndarray) -> np.ndarray:
        ids = np.asarray(ids, dtype=np.int64)
        if on_cycle == "condense" and node_of is not None and dag is not g:
            return ids
        if node_of is not None:
            ids = node_of[ids]
        return as_nodes(g, ids.astype(g.indptr.dtype))

    if path is not None:
        nodes = back(path)
    else:
        nodes = back(np.unique(np.concatenate([tails, heads])))
    if on_cycle == "condense" and dag is not g:
        src = _stored_sources(g)
        inverse = np.empty(g.m, dtype=np.int64)
        inverse[_input_positions(g, np.arange(g.m))] = np.arange(g.m)
        at = inverse[positions[by_input]]
        sources, targets = as_nodes(g, src[at]), as_nodes(g, g.indices[at])
    else:
        sources, targets = back(tails[by_input]), back(heads[by_input])
    return MainPath(
        sources=sources,
        targets=targets,
        edge_index=positions[by_input],
        edge_weight=weights,
        nodes=nodes,
        weight=float(weights.sum()),
        single=single,
        log_weights=bool(found.log_weights),
    )
