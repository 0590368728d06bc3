"""Quality measures of a topological order: ready set, live set, edge spans, key agreement."""

from __future__ import annotations

from collections.abc import Iterator, Mapping
from typing import Any

import numpy as np

from . import _core
from ._graph import Graph, as_graph
from ._order import order_error
from ._validate import node_ids, reference_key

__all__ = ["OrderMetrics", "order_metrics"]

_KEY_FIELDS = ("key_pair_agreement", "key_step_agreement", "key_edge_agreement")
_FIELDS = (
    "ready_peak",
    "ready_mean",
    "live_peak",
    "live_mean",
    "span_total",
    "span_mean",
    "span_max",
)


class OrderMetrics(Mapping[str, Any]):
    """Measures of one topological order; a read-only mapping of name -> number.

    The mapping holds the scalar measures (also readable as attributes);
    the per-step curves are the attributes ``ready_sizes`` and ``live_sizes``.

    Attributes
    ----------
    ready_peak, ready_mean : int, float
        Largest and mean size of the ready set (nodes of remaining in-degree
        0 not yet emitted) just before each step, when Kahn's loop replays
        the order. Small values mean little parallel slack; large values
        mean many tasks available at once (and a large queue to hold).
    live_peak, live_mean : int, float
        Largest and mean size of the live set just after each step: emitted
        nodes with a successor not yet emitted, i.e. results that must be
        kept (memory or register pressure).
    span_total, span_mean, span_max : int, float, int
        Sum, mean and largest ``position(v) - position(u)`` over the stored
        edges ``u -> v`` (duplicates count): how far edges reach in the order.
    key_pair_agreement, key_step_agreement, key_edge_agreement : float
        Present only when a reference key was given. Share of node pairs
        (Kendall-style), of consecutive pairs ``(order[t], order[t + 1])``,
        and of edges, whose order agrees with the key (smaller key first);
        pairs with equal keys are left out, and a share is NaN when no pair
        has distinct keys. The edge share does not depend on the order (every
        valid order puts ``u`` before ``v``): it tells how far the key itself
        agrees with the graph, an upper bound in spirit for the other two.
    ready_sizes, live_sizes : numpy.ndarray
        ``ready_sizes[t]``: ready-set size before step ``t``;
        ``live_sizes[t]``: live-set size after step ``t``. Length ``n``.
    n, m : int
        Node and stored-edge counts.
    """

    def __init__(
        self,
        n: int,
        m: int,
        measured: _core.OrderMetrics,
    ) -> None:
        self.n, self.m = n, m
        self.ready_sizes: np.ndarray = measured.ready_sizes
        self.live_sizes: np.ndarray = measured.live_sizes
        self._values: dict[str, Any] = {
            "ready_peak": measured.ready_peak,
            "ready_mean": measured.ready_total / n if n else 0.0,
            "live_peak": measured.live_peak,
            "live_mean": measured.live_total / n if n else 0.0,
            "span_total": measured.span_total,
            "span_mean": measured.span_total / m if m else 0.0,
            "span_max": measured.span_max,
        }
        agreements = (measured.pairs, measured.steps, measured.edges)
        for name, agreement in zip(_KEY_FIELDS, agreements, strict=True):
            if agreement is not None:
                agree, disagree = agreement.agree, agreement.disagree
                decided = agree + disagree
                self._values[name] = agree / decided if decided else float("nan")

    def __getitem__(self, name: str) -> Any:
        return self._values[name]

    def __iter__(self) -> Iterator[str]:
        return iter(self._values)

    def __len__(self) -> int:
        return len(self._values)

    def __getattr__(self, name: str) -> Any:
        values = self.__dict__.get("_values", {})
        if name in values:
            return values[name]
        if name in _KEY_FIELDS:
            raise AttributeError(f"{name} needs a reference key: pass key=... to order_metrics")
        raise AttributeError(f"{type(self).__name__!r} object has no attribute {name!r}")

    def __repr__(self) -> str:
        body = ", ".join(
            f"{k}={v:.4g}" if isinstance(v, float) else f"{k}={v}" for k, v in self.items()
        )
        return f"OrderMetrics({body})"


def order_metrics(
    graph: Any,
    order: Any,
    *,
    key: Any = None,
    descending: bool = False,
    n: int | None = None,
) -> OrderMetrics:
    """Return the quality measures of a topological ``order`` of ``graph``.

    Every tie-break gives a valid order, but not an equally good one: this
    measures how many nodes are ready at once (parallel slack), how many
    results stay live (memory pressure), how far edges reach (locality),
    and, given a reference ``key``, how close the order stays to it.

    Parameters
    ----------
    graph
        Any graph form :func:`toporank.order` accepts.
    order
        A topological order of ``graph``: node ids (labels for a labelled
        graph), each node once, every edge going forward.
    key
        Optional reference key, one number per node (or a mapping label ->
        number for a labelled graph), e.g. a publication year: the preferred
        order puts smaller keys first. Adds the ``key_*_agreement`` measures.
    descending
        Larger keys are preferred first.
    n
        Node count for the edge-array forms, as in :func:`toporank.order`.

    Returns
    -------
    OrderMetrics
        A read-only mapping of the scalar measures (``ready_peak``,
        ``ready_mean``, ``live_peak``, ``live_mean``, ``span_total``,
        ``span_mean``, ``span_max`` and, with ``key``, the three
        agreements), with the per-step curves ``ready_sizes`` and
        ``live_sizes`` as attributes. Means over zero steps or edges are 0.0.

    Raises
    ------
    InvalidOrderError
        ``order`` is not a topological order of ``graph`` (the message names
        the backward edge, or the duplicated, missing or unknown node).
    GraphInputError
        Malformed graph or key.

    Notes
    -----
    The ready set before step ``t`` holds the nodes whose predecessors all
    lie before position ``t`` and which sit at position ``t`` or later (so it
    is never empty and holds ``order[t]``). The live set after step ``t``
    holds the nodes at position ``t`` or earlier with a successor after it;
    the notion follows Kayaaslan, Lambert, Marchal & Uçar (Theoretical
    Computer Science 707, 2018). Cost: O(V + E) for the measures, plus
    O(V log V) for the key agreements (a sort and a merge-sort inversion
    count); the GIL is released while the core runs.

    Examples
    --------
    >>> import numpy as np, toporank
    >>> src, dst = np.array([0, 0, 1, 2]), np.array([1, 2, 3, 3])
    >>> m = toporank.order_metrics((src, dst), np.array([0, 1, 2, 3]))
    >>> m["ready_peak"], m["live_peak"], m["span_max"]
    (2, 2, 2)
    >>> m.ready_sizes
    array([1, 2, 1, 1])
    >>> year = np.array([1990, 2001, 1995, 2010])
    >>> round(toporank.order_metrics((src, dst), np.array([0, 1, 2, 3]), key=year)
    ...       .key_pair_agreement, 3)
    0.833
    """
    g = as_graph(graph, n)
    ids, given = node_ids(g, order, "order")
    key_array = reference_key(g, key, descending)
    rank = None if key_array is None else dense_rank(key_array, descending)
    return measure(g, ids, rank, given)


def measure(g: Graph, ids: np.ndarray, rank: np.ndarray | None, given: Any) -> OrderMetrics:
    """The measures of an id order (int64), raising InvalidOrderError naming ``given``."""
    found = _core.order_metrics(g.indptr, g.indices, ids, rank)
    if found is None:
        violation = _core.verify_order(g.indptr, g.indices, ids)
        if violation is None:
            raise RuntimeError(
                "toporank internal error (please report): measures and checker disagree"
            )
        raise order_error(g, violation, ids, given)
    return OrderMetrics(g.n, g.m, found)


def dense_rank(key: np.ndarray, descending: bool = False) -> np.ndarray:
    """Ranks ``0..r-1`` (int64) ordering like ``key``, equal keys sharing a rank."""
    if len(key) == 0:
        return np.zeros(0, dtype=np.int64)
    _, rank = np.unique(key, return_inverse=True)
    rank = rank.astype(np.int64, copy=False).reshape(-1)
    if descending:
        rank = rank.max() - rank
    return np.ascontiguousarray(rank)
