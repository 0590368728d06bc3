"""Side-by-side comparison of tie-break policies on one graph."""

from __future__ import annotations

import csv
import io
import json
import math
import operator
import os
import statistics
import time
from collections.abc import Callable, Iterable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from . import _core
from ._errors import GraphInputError
from ._graph import Graph, as_graph, as_nodes
from ._metrics import OrderMetrics, dense_rank, measure
from ._schedule import (
    Schedule,
    run_schedule,
)
from ._validate import (
    SCHEDULE_TIES,
    raise_cycle,
    random_seed,
    reference_key,
    repeat_count,
    tie_list,
    worker_count,
)
from ._validate import (
    durations as task_durations,
)

__all__ = ["Comparison", "compare"]

# (record field, table header, format, which value is best)
_COLUMNS: tuple[tuple[str, str, Callable[[Any], str], str], ...] = (
    ("seconds", "time ms", lambda v: f"{v * 1e3:.2f}", "min"),
    ("ready_peak", "ready peak", str, "min"),
    ("ready_mean", "ready mean", lambda v: f"{v:.1f}", "min"),
    ("live_peak", "live peak", str, "min"),
    ("live_mean", "live mean", lambda v: f"{v:.1f}", "min"),
    ("span_mean", "span mean", lambda v: f"{v:.1f}", "min"),
    ("span_max", "span max", str, "min"),
    ("key_pair_agreement", "key pairs", lambda v: f"{v:.3f}", "max"),
    ("key_step_agreement", "key steps", lambda v: f"{v:.3f}", "max"),
    ("makespan", "makespan", lambda v: f"{v:g}" if isinstance(v, float) else str(v), "min"),
    ("makespan_ratio", "/ bound", lambda v: f"{v:.3f}", "min"),
)
# The measures drawn as bar charts, one panel each.
_BARS = (  # (record field, panel title, y-axis label with its unit)
    ("ready_peak", "ready peak", "nodes ready at once"),
    ("live_peak", "live peak", "nodes kept in memory"),
    ("span_mean", "span mean", "positions between edge ends"),
    ("makespan", "makespan", "time (sum of node weights)"),
)


@dataclass(frozen=True, eq=False)
class Comparison:
    """Tie-break policies measured side by side on one graph.

    ``str(comparison)`` is a text table; :meth:`records`, :meth:`to_csv` and
    :meth:`to_json` give the numbers; :meth:`plot` draws them;
    :meth:`best` names the winner of a column.

    Attributes
    ----------
    ties : tuple of str
        The policies compared, in the order given.
    seconds : dict
        Policy -> median wall time of computing its order.
    metrics : dict
        Policy -> :class:`OrderMetrics` of its order.
    orders : dict
        Policy -> the order itself (labels for a labelled graph).
    schedules : dict or None
        Policy -> :class:`Schedule` on ``workers`` workers, when asked for.
    workers : int or None
    n, m : int
        Node and stored-edge counts of the graph.
    repeat : int
        Timed runs per policy.
    """

    ties: tuple[str, ...]
    seconds: dict[str, float]
    metrics: dict[str, OrderMetrics]
    orders: dict[str, np.ndarray]
    schedules: dict[str, Schedule] | None
    workers: int | None
    n: int
    m: int
    repeat: int

    def records(self) -> list[dict[str, Any]]:
        """One dict per policy: ``tie``, ``seconds``, every measure, and schedule results."""
        rows = []
        for tie in self.ties:
            row: dict[str, Any] = {"tie": tie, "seconds": self.seconds[tie]}
            row.update(self.metrics[tie])
            if self.schedules is not None:
                s = self.schedules[tie]
                row.update(
                    workers=s.workers,
                    makespan=s.makespan,
                    lower_bound=s.lower_bound,
                    makespan_ratio=s.ratio,
                )
            rows.append(row)
        return rows

    def best(self, column: str) -> str:
        """Return the policy with the best value of ``column``.

        Smallest wins, except for the key agreements, where largest wins;
        ties go to the policy listed first.
        """
        rows = self.records()
        if not rows or column not in rows[0] or column == "tie":
            known = [c for c in (rows[0] if rows else {}) if c != "tie"]
            raise GraphInputError(f"no column {column!r}; the columns are {known}")
        sign = -1.0 if column.startswith("key_") else 1.0
        values = [sign * float(row[column]) for row in rows]
        values = [math.inf if math.isnan(v) else v for v in values]
        return str(rows[int(np.argmin(values))]["tie"])

    def table(self) -> str:
        """The comparison as aligned text; ``*`` marks the best value of each column."""
        rows = self.records()
        columns = [c for c in _COLUMNS if rows and c[0] in rows[0]]
        header = ["policy"] + [title for _, title, _, _ in columns]
        body = [[str(row["tie"])] for row in rows]
        for name, _, fmt, best in columns:
            values = [row[name] for row in rows]
            finite = [v for v in values if not (isinstance(v, float) and math.isnan(v))]
            target = (max if best == "max" else min)(finite) if finite else None
            for cells, value in zip(body, values, strict=True):
                mark = "*" if len(rows) > 1 and value == target else " "
                cells.append(fmt(value) + mark)
        widths = [max(len(r[k]) for r in [header, *body]) for k in range(len(header))]
        lines = [
            "  ".join(
                cell.ljust(w) if k == 0 else cell.rjust(w)
                for k, (cell, w) in enumerate(zip(line, widths, strict=True))
            ).rstrip()
            for line in [header, *body]
        ]
        notes = [
            f"{self.n} nodes, {self.m} edges; time: median of {self.repeat} run(s); "
            "* best in column (largest key agreement, smallest otherwise)"
        ]
        if self.workers is not None:
            notes.append(
                f"makespan: list schedule on {self.workers} worker(s); "
                "/ bound: makespan / max(critical path, total work / workers)"
            )
        return "\n".join([*lines, *notes])

    def __str__(self) -> str:
        return self.table()

    def __repr__(self) -> str:
        scheduled = "" if self.workers is None else f", workers={self.workers}"
        return f"Comparison(ties={self.ties}, n={self.n}, m={self.m}{scheduled})"

    def to_csv(self, path: str | os.PathLike[str] | None = None) -> str:
        """The records as CSV text (header row first); also written to ``path`` if given."""
        rows = self.records()
        out = io.StringIO()
        if rows:
            writer = csv.DictWriter(out, fieldnames=list(rows[0]), lineterminator="\n")
            writer.writeheader()
            writer.writerows(rows)
        text = out.getvalue()
        if path is not None:
            Path(path).write_text(text, encoding="utf-8")
        return text

    def to_json(self, path: str | os.PathLike[str] | None = None, *, indent: int = 2) -> str:
        """The records as a JSON array (NaN written as ``null``); also written to ``path``."""
        rows = [
            {k: None if isinstance(v, float) and math.isnan(v) else v for k, v in row.items()}
            for row in self.records()
        ]
        text = json.dumps(rows, indent=indent, allow_nan=False)
        if path is not None:
            Path(path).write_text(text, encoding="utf-8")
        return text

    def plot(
        self,
        path: str | os.PathLike[str],
        *,
        points: int = 2000,
        log: bool | None = None,
        dpi: int = 120,
        source: str | None = None,
    ) -> Path:
        """Draw the comparison to a PNG file and return its path.

        Left: the ready-set size over the run for each policy (x: share of
        steps done; each of at most ``points`` bins shows its largest value,
        so peaks survive). Right: one small bar chart per headline measure
        (ready peak, live peak, mean span, and makespan when scheduled),
        the best policy labelled. ``log`` puts the left plot on a log
        scale; by default it does when the peaks differ more than 50-fold.
        Bars start near the smallest value, not at 0, so that small
        differences show; each bar is labelled with its value. ``source``
        (e.g. the input file's name) is named in the title.
        Needs matplotlib (``pip install 'toporank[plot]'``); draws with the
        Agg canvas, so no display is needed and pyplot's state is untouched.
        """
        try:
            from matplotlib.figure import Figure
        except ImportError as exc:
            raise ImportError(
                "Comparison.plot needs matplotlib; install it with pip install 'toporank[plot]'"
            ) from exc
        if isinstance(points, bool) or operator.index(points) < 1:
            raise GraphInputError(f"points must be a positive integer, got {points!r}")
        fig = Figure(figsize=(13, 5), layout="constrained")
        halves: Any = fig.subfigures(1, 2, width_ratios=[3, 2])
        curves, panels = halves
        left = curves.subplots()
        colors = _colors(len(self.ties))
        peaks = []
        for tie, color in zip(self.ties, colors, strict=True):
            sizes = self.metrics[tie].ready_sizes
            x, y = _binned_max(sizes, operator.index(points))
            left.step(x, y, where="post", label=tie, color=color, linewidth=1.2)
            peaks.append(int(sizes.max()) if len(sizes) else 0)
        positive = [p for p in peaks if p > 0]
        if log is None:
            log = bool(positive) and max(positive) > 50 * min(positive)
        if log:
            left.set_yscale("log")
        left.set_xlabel("share of steps done")
        left.set_ylabel("nodes ready at once (peak within each stretch of the run)")
        named = f"{source}: " if source else ""
        left.set_title(f"{named}ready set over the run ({self.n} nodes, {self.m} edges)")
        left.legend(title="policy")
        left.grid(alpha=0.3)

        rows = self.records()
        bars = [(name, title, unit) for name, title, unit in _BARS if rows and name in rows[0]]
        axes = panels.subplots(2, 2).ravel()
        for ax, (name, title, unit) in zip(axes, bars, strict=False):
            values = [float(row[name]) for row in rows]
            ax.bar(range(len(rows)), values, color=colors)
            ax.set_ylabel(unit, fontsize=8)
            low, high = min(values), max(values)
            if high > low:
                # start near the smallest bar: from 0, close values look equal
                ax.set_ylim(max(0.0, low - 0.25 * (high - low)), high + 0.25 * (high - low))
            best = min(values)
            for k, value in enumerate(values):
                text = f"{value:.4g}" + (" best" if value == best else "")
                ax.annotate(text, (k, value), ha="center", va="bottom", fontsize=7)
            ax.set_xticks(range(len(rows)), list(self.ties), rotation=30, fontsize=8)
            if name == "makespan" and self.workers is not None:
                title += f" ({self.workers} workers)"
            ax.set_title(title, fontsize=10)
            ax.margins(y=0.15)
            ax.grid(axis="y", alpha=0.3)
        for ax in axes[len(bars) :]:
            ax.set_visible(False)
        panels.suptitle("Headline measures (smaller is better)")
        target = Path(path)
        fig.savefig(target, format="png", dpi=dpi)
        return target


def _binned_max(sizes: np.ndarray, points: int) -> tuple[np.ndarray, np.ndarray]:
    """``(x, y)``: bin starts as a share of steps, and each bin's largest value."""
    n = len(sizes)
    if n == 0:
        return np.zeros(1), np.zeros(1)
    starts = np.unique(np.linspace(0, n, min(points, n), endpoint=False).astype(np.int64))
    y = np.maximum.reduceat(sizes, starts)
    # Repeat the last bin at the end so the step line reaches x = 1.
    return np.append(starts / n, 1.0), np.append(y, y[-1])


def _colors(count: int) -> list[Any]:
    """``count`` colours from matplotlib's default cycle, repeating if needed."""
    from matplotlib import rcParams

    cycle = rcParams["axes.prop_cycle"].by_key().get("color", ["C0"])
    return [cycle[k % len(cycle)] for k in range(count)]


def compare(
    graph: Any,
    ties: Iterable[str] = SCHEDULE_TIES,
    *,
    key: Any = None,
    descending: bool = False,
    workers: int | None = None,
    duration: Any = None,
    repeat: int = 3,
    seed: int = 0,
    n: int | None = None,
) -> Comparison:
    """Return a side-by-side comparison of tie-break policies on ``graph``.

    For each policy: the time to compute its order (median of ``repeat``
    runs), the :func:`order_metrics` of that order, and, with ``workers``,
    the makespan of its :func:`schedule`. Print the result for a table.

    Parameters
    ----------
    graph
        Any graph form :func:`toporank.order` accepts.
    ties
        Policies to compare, any of :data:`SCHEDULE_TIES`: ``"queue"``,
        ``"stack"``, ``"priority"`` (by ``key``, or node id without it),
        ``"random"`` (from ``seed``) and ``"critical"`` (largest bottom
        level first: the longest remaining duration-weighted path).
    key
        Optional reference key (one number per node, or a mapping label ->
        number), e.g. a publication year: drives ``"priority"`` and adds the
        key-agreement measures.
    descending
        Larger keys first, for ``"priority"`` and the agreements.
    workers
        Also list-schedule each policy on this many workers and report the
        makespan and its ratio to the lower bound.
    duration
        Task durations for the schedules and the ``"critical"`` priority
        (default: every task takes 1).
    repeat
        Timed runs per policy, from 1 to 1,000.
    seed
        Seed of the ``"random"`` policy; fixed by default so a comparison is
        reproducible (only the timings vary between runs).
    n
        Node count for the edge-array forms.

    Returns
    -------
    Comparison
        ``str()`` gives the table; also ``records()``, ``to_csv()``,
        ``to_json()``, ``plot(path)`` and ``best(column)``.

    Raises
    ------
    CyclicGraphError
        The graph has a cycle.
    GraphInputError
        An unknown or repeated policy, or a malformed graph, key, duration,
        ``workers`` or ``repeat``.

    Notes
    -----
    Times cover computing the order only (for ``"critical"`` that includes
    the bottom levels), not label conversion or the measures. Everything
    else is deterministic. Cost per policy: ``repeat`` orders plus one
    measure pass (O(V + E), O(V log V) with a key) and one schedule.

    Examples
    --------
    >>> import toporank
    >>> pairs = [("src", "parse"), ("parse", "check"), ("check", "emit"),
    ...          ("src", "docs"), ("src", "lint"), ("src", "fmt")]
    >>> c = toporank.compare(pairs, ("queue", "stack", "critical"), workers=2, repeat=1)
    >>> [(r["tie"], r["ready_peak"], r["live_peak"], r["makespan"]) for r in c.records()]
    [('queue', 4, 2, 5), ('stack', 4, 1, 5), ('critical', 4, 2, 4)]
    >>> c.best("live_peak"), c.best("makespan")
    ('stack', 'critical')
    >>> c.orders["stack"]
    array(['src', 'fmt', 'lint', 'docs', 'parse', 'check', 'emit'], dtype=object)
    """
    g = as_graph(graph, n)
    chosen = tie_list(ties)
    runs = repeat_count(repeat)
    count = None if workers is None else worker_count(workers)
    key_array = reference_key(g, key, descending)
    rank = None if key_array is None else dense_rank(key_array, descending)
    seed_value = random_seed(seed)
    durations = task_durations(g, duration)

    seconds: dict[str, float] = {}
    metrics: dict[str, OrderMetrics] = {}
    orders: dict[str, np.ndarray] = {}
    schedules: dict[str, Schedule] | None = None if count is None else {}
    for tie in chosen:
        compute = _order_function(g, tie, key_array, descending, seed_value, durations)
        times = []
        for _ in range(runs):
            begin = time.perf_counter()
            ids = compute()
            times.append(time.perf_counter() - begin)
        seconds[tie] = statistics.median(times)
        ids = ids.astype(np.int64, copy=False)
        metrics[tie] = measure(g, ids, rank, ids)
        orders[tie] = as_nodes(g, ids)
        if schedules is not None:
            schedules[tie] = run_schedule(
                g,
                count,
                tie,
                key_array if tie == "priority" else None,
                descending and tie == "priority" and key_array is not None,
                seed_value if tie == "random" else None,
                durations,
            )
    return Comparison(
        ties=chosen,
        seconds=seconds,
        metrics=metrics,
        orders=orders,
        schedules=schedules,
        workers=count,
        n=g.n,
        m=g.m,
        repeat=runs,
    )


def _order_function(
    g: Graph,
    tie: str,
    key: np.ndarray | None,
    descending: bool,
    seed: int,
    durations: np.ndarray,
) -> Callable[[], np.ndarray]:
    """A call computing the id order of ``tie``, raising CyclicGraphError on a cycle."""

    def kahn(policy: str, key_values: np.ndarray | None, desc: bool, seed_value: int) -> np.ndarray:
        found = _core.kahn_order(g.indptr, g.indices, policy, key_values, desc, seed_value)
        if isinstance(found, _core.Cyclic):
            raise_cycle(g, found)
        return found

    if tie == "critical":

        def critical() -> np.ndarray:
            levels = _core.bottom_levels(g.indptr, g.indices, durations)
            if isinstance(levels, _core.Cyclic):
                raise_cycle(g, levels)
            return kahn("priority", levels, True, 0)

        return critical
    if tie == "priority":
        return lambda: kahn("priority", key, descending and key is not None, 0)
    return lambda: kahn(tie, None, False, seed if tie == "random" else 0)
