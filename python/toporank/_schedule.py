"""List scheduling of a task DAG on identical workers (Graham's algorithm)."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Literal

import numpy as np

from . import _core
from ._graph import Graph, as_graph, as_nodes
from ._metrics import dense_rank
from ._validate import SCHEDULE_TIES, policy, raise_cycle, worker_count
from ._validate import durations as task_durations

__all__ = ["SCHEDULE_TIES", "Schedule", "schedule"]

ScheduleTie = Literal["queue", "stack", "priority", "random", "critical"]


@dataclass(frozen=True, eq=False)
class Schedule:
    """A list schedule: when and where each task runs.

    Attributes
    ----------
    start, finish : numpy.ndarray
        Start and finish time of each task, indexed by node id (int64 for
        integer durations, float64 for float ones). For a labelled graph,
        entry ``i`` belongs to ``labels[i]``.
    worker : numpy.ndarray
        The worker (``0 .. workers - 1``) that runs each task, by node id.
    order : numpy.ndarray
        The tasks in the order they started (a topological order); labels for
        a labelled graph.
    makespan : int or float
        When the last task finishes.
    critical_path : int or float
        The longest duration-weighted path: the makespan with unlimited workers.
    total_work : int or float
        The sum of all durations.
    workers : int
        The number of workers.
    tie : str
        The policy that chose among ready tasks.
    labels : numpy.ndarray or None
        Node labels for a labelled graph, else ``None``.
    """

    start: np.ndarray
    finish: np.ndarray
    worker: np.ndarray
    order: np.ndarray
    makespan: int | float
    critical_path: int | float
    total_work: int | float
    workers: int
    tie: str
    labels: np.ndarray | None = None
    started_ids: np.ndarray = field(default_factory=lambda: np.zeros(0, np.int64), repr=False)
    """Node ids in start order (``order`` as ids, also for a labelled graph)."""

    @property
    def lower_bound(self) -> float:
        """``max(critical_path, total_work / workers)``: no schedule can finish sooner."""
        return max(float(self.critical_path), self.total_work / self.workers)

    @property
    def ratio(self) -> float:
        """``makespan / lower_bound`` (1.0 when both are 0); at most ``2 - 1/workers``."""
        bound = self.lower_bound
        return self.makespan / bound if bound else 1.0

    @property
    def utilization(self) -> float:
        """Share of worker time spent on tasks: ``total_work / (workers * makespan)``."""
        return self.total_work / (self.workers * self.makespan) if self.makespan else 1.0

    def records(self) -> list[dict[str, Any]]:
        """One dict per task (``node``, ``start``, ``finish``, ``worker``), in start order."""
        nodes = self.order.tolist()
        return [
            {
                "node": node,
                "start": self.start[i].item(),
                "finish": self.finish[i].item(),
                "worker": int(self.worker[i]),
            }
            for node, i in zip(nodes, self.started_ids.tolist(), strict=True)
        ]

    def __repr__(self) -> str:
        return (
            f"Schedule(tie={self.tie!r}, workers={self.workers}, tasks={len(self.start)}, "
            f"makespan={self.makespan}, lower_bound={self.lower_bound:.6g}, "
            f"ratio={self.ratio:.4f})"
        )


def schedule(
    graph: Any,
    *,
    workers: int,
    tie: ScheduleTie = "queue",
    key: Any = None,
    descending: bool = False,
    seed: int | None = None,
    duration: Any = None,
    n: int | None = None,
) -> Schedule:
    """Return a list schedule of the tasks of ``graph`` on ``workers`` identical workers.

    Each node is a task; an edge ``u -> v`` means ``v`` starts only after
    ``u`` finishes. Whenever a worker is free and a task is ready, the best
    ready task (by ``tie``) starts at once on the lowest-numbered free worker
    (Graham's list scheduling, Bell System Technical Journal 45, 1966).

    Parameters
    ----------
    graph
        Any graph form :func:`toporank.order` accepts.
    workers
        Number of identical workers, at least 1.
    tie
        Which ready task starts first: ``"queue"`` (the one ready longest),
        ``"stack"`` (the one ready last), ``"priority"`` (smallest ``key``,
        ties to the smaller id; the node id without ``key``), ``"random"``
        (drawn from ``seed``) or ``"critical"`` (the largest bottom level:
        duration plus the longest duration-weighted path to the end, ties to
        the smaller id).
    key, descending
        For ``tie="priority"``, as in :func:`toporank.order`. Graham's list
        ``L`` is ``key = position of each task in L``.
    seed
        For ``tie="random"``: the same seed gives the same schedule; ``None``
        draws fresh entropy.
    duration
        Task durations, one non-negative finite number per node (or a mapping
        label -> number for a labelled graph). Integers give integer times;
        floats give float times. Default: every task takes 1.
    n
        Node count for the edge-array forms.

    Returns
    -------
    Schedule
        Start and finish times and worker of every task, the start order,
        ``makespan``, ``critical_path``, ``total_work``, and the derived
        ``lower_bound = max(critical_path, total_work / workers)`` and
        ``ratio = makespan / lower_bound``.

    Raises
    ------
    CyclicGraphError
        The graph has a cycle.
    GraphInputError
        Malformed graph, key or durations (naming the offending node), or
        ``workers`` below 1.

    Notes
    -----
    At time 0 the tasks without predecessors become ready in ascending id.
    At each event time every task finishing then completes (in ascending
    worker number) and releases its successors in stored row order, before
    free workers pick new tasks; with one worker the start order is exactly
    :func:`toporank.order` under the same policy. The schedule never idles a
    worker while a task is ready, so ``makespan <= (2 - 1/workers) *
    lower_bound`` (Graham's bound, SIAM J. Appl. Math. 17(2), 1969). Being
    greedy, it shows Graham's anomalies: more workers, shorter tasks or fewer
    edges can lengthen it. Cost: O(V + E + V log workers), plus O(V log V)
    for ``"priority"`` and ``"critical"``; the GIL is released meanwhile.

    Examples
    --------
    >>> import numpy as np, toporank
    >>> pairs = [("fetch", "parse"), ("parse", "index"), ("fetch", "thumbs"),
    ...          ("index", "publish"), ("thumbs", "publish"), ("fetch", "log")]
    >>> duration = {"fetch": 2, "parse": 3, "index": 4, "thumbs": 1, "log": 5, "publish": 1}
    >>> s = toporank.schedule(pairs, workers=2, tie="critical", duration=duration)
    >>> s.makespan, s.critical_path, s.lower_bound
    (10, 10, 10.0)
    >>> s.order
    array(['fetch', 'parse', 'log', 'index', 'thumbs', 'publish'], dtype=object)
    >>> toporank.schedule(pairs, workers=2, tie="stack", duration=duration).makespan
    11
    """
    g = as_graph(graph, n)
    return run_schedule(g, workers, tie, key, descending, seed, duration)


def run_schedule(
    g: Graph,
    workers: Any,
    tie: str,
    key: Any,
    descending: bool,
    seed: int | None,
    duration: Any,
) -> Schedule:
    """:func:`schedule` on a normalised graph."""
    count = worker_count(workers)
    key_array, seed_value = policy(g, tie, key, descending, seed, SCHEDULE_TIES)
    rank = priority_rank(g, key_array, descending) if tie == "priority" else None
    durations = task_durations(g, duration)
    # Workers beyond the task count stay idle; capping keeps huge counts in range.
    slots = min(count, max(g.n, 1))
    done = _core.list_schedule(g.indptr, g.indices, durations, slots, tie, rank, seed_value)
    if isinstance(done, _core.Cyclic):
        raise_cycle(g, done)
    started = done.order
    return Schedule(
        start=done.start,
        finish=done.start + durations,
        worker=done.worker,
        order=as_nodes(g, started),
        makespan=done.makespan,
        critical_path=done.critical_path,
        total_work=done.total_work,
        workers=count,
        tie=tie,
        labels=g.labels,
        started_ids=started,
    )


def priority_rank(g: Graph, key: np.ndarray | None, descending: bool) -> np.ndarray | None:
    """The scheduler's rank (uint64, smallest first) for ``tie="priority"``."""
    if key is None:
        if not descending:
            return None
        return np.arange(g.n - 1, -1, -1, dtype=np.uint64)
    return dense_rank(key, descending).astype(np.uint64)


def _label(g: Graph, node: int) -> str:
    return "" if g.labels is None else f" (node {g.labels[node]!r})"
