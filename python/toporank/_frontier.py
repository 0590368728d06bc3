"""The ready set of a DAG handed to an executor, task by task or batch by batch."""

from __future__ import annotations

from collections.abc import Hashable
from typing import Any, NoReturn

import numpy as np

from . import _core
from ._errors import GraphInputError, TaskStateError
from ._graph import as_graph
from ._schedule import ScheduleTie, priority_rank
from ._validate import (
    SCHEDULE_TIES,
    durations,
    node_ids,
    policy,
    raise_cycle,
    show,
    whole_number,
)

__all__ = ["Frontier"]

_INT64_MAX = 2**63 - 1
_ID_TYPES = frozenset(
    {int, np.int64, np.int32, np.int16, np.int8, np.uint64, np.uint32, np.uint16, np.uint8}
)


class Frontier:
    """The ready tasks of a DAG, handed out to workers as their predecessors finish.

    Each node is a task; an edge ``u -> v`` means ``v`` may start only when
    ``u`` is finished. :meth:`take` hands out ready tasks (every predecessor
    finished) in the order of ``tie`` and marks them running;
    :meth:`finish` marks running tasks done, which releases the successors
    whose last predecessor they were; :meth:`fail` marks running tasks failed
    and skips every task reachable from them (a skipped task is never handed
    out). Several threads may share one frontier: every call takes one
    internal lock, so no task is lost or handed out twice.

    Parameters
    ----------
    graph
        Any graph form :func:`toporank.order` accepts; it must be a DAG. A
        labelled graph makes every method speak labels.
    tie
        Which ready task is handed out first: ``"queue"`` (ready longest,
        FIFO), ``"stack"`` (ready last, LIFO), ``"priority"`` (smallest
        ``key``, ties to the smaller id; the node id without ``key``),
        ``"random"`` (drawn from ``seed``) or ``"critical"`` (the longest
        remaining path first: the largest bottom level, duration plus the
        longest duration-weighted path below, as in :func:`toporank.schedule`;
        ties to the smaller id).
    key, descending
        For ``tie="priority"``, as in :func:`toporank.order`.
    seed
        For ``tie="random"``, as in :func:`toporank.order`.
    duration
        For ``tie="critical"``: task durations, one finite non-negative number
        per node (a mapping label -> number for a labelled graph); default 1.
    n
        Node count for the edge-array forms.

    Raises
    ------
    CyclicGraphError
        The graph has a cycle.
    GraphInputError
        Malformed graph or arguments; the message names the offending value.

    Notes
    -----
    The tasks without predecessors become ready in ascending id; a finished
    task releases its successors in stored row order. So one worker taking
    and finishing one task at a time gets exactly :func:`toporank.order`
    under the same ``tie``. Misuse raises :class:`TaskStateError` naming the
    task, and a refused batch changes nothing. Node ids come back as int64
    arrays (labels for a labelled graph). A batch releases the GIL while it
    waits for the lock and works; building costs O(V + E) (plus
    O(V log V) for a keyed or critical order), and handing out all tasks
    O(V + E), plus a log factor for the heap policies.

    Examples
    --------
    >>> import toporank
    >>> build = toporank.Frontier([("parse", "check"), ("parse", "docs"), ("check", "link")])
    >>> build.take()
    array(['parse'], dtype=object)
    >>> build.finish("parse")
    >>> build.take()
    array(['check', 'docs'], dtype=object)
    >>> build.fail(["check"])
    array(['link'], dtype=object)
    >>> build.finish("docs")
    >>> build.is_done, build.finished, build.skipped
    (True, array(['parse', 'docs'], dtype=object), array(['link'], dtype=object))
    """

    def __init__(
        self,
        graph: Any,
        *,
        tie: ScheduleTie = "queue",
        key: Any = None,
        descending: bool = False,
        seed: int | None = None,
        duration: Any = None,
        n: int | None = None,
    ) -> None:
        g = as_graph(graph, n)
        key_array, seed_value = policy(g, tie, key, descending, seed, SCHEDULE_TIES)
        if duration is not None and tie != "critical":
            raise GraphInputError(f"duration applies to tie='critical', not to tie={tie!r}")
        rank = priority_rank(g, key_array, bool(descending)) if tie == "priority" else None
        times = durations(g, duration) if tie == "critical" else None
        built = _core.FrontierCore.build(g.indptr, g.indices, tie, rank, seed_value, times)
        if isinstance(built, _core.Cyclic):
            raise_cycle(g, built)
        self._core: _core.FrontierCore = built
        self._graph = g
        self._labels = g.labels
        self._n = g.n

    def __copy__(self) -> NoReturn:
        # a shallow copy would share the state: a change through one would
        # show in the other
        raise TypeError("a Frontier cannot be copied or pickled; build another from the same graph")

    def __reduce_ex__(self, protocol: Any) -> NoReturn:
        self.__copy__()

    def __repr__(self) -> str:
        return (
            f"<toporank.Frontier: {self._n} tasks, {self.ready_count} ready, "
            f"{self._core.running_count} running, {self.remaining} remaining>"
        )

    @property
    def n(self) -> int:
        """Number of tasks."""
        return self._n

    @property
    def ready_count(self) -> int:
        """Number of tasks ready to be taken."""
        return int(self._core.ready_count)

    @property
    def running(self) -> np.ndarray:
        """The tasks taken and not yet finished or failed, ascending id."""
        return self._nodes(self._core.running())

    @property
    def remaining(self) -> int:
        """Number of tasks neither finished, failed nor skipped (waiting, ready or running)."""
        return int(self._core.remaining)

    @property
    def finished(self) -> np.ndarray:
        """The finished tasks, in the order they were reported."""
        return self._nodes(self._core.settled("done"))

    @property
    def failed(self) -> np.ndarray:
        """The failed tasks, in the order they were reported."""
        return self._nodes(self._core.settled("failed"))

    @property
    def skipped(self) -> np.ndarray:
        """The skipped tasks (descendants of failed ones), in the order they were skipped."""
        return self._nodes(self._core.settled("skipped"))

    @property
    def is_done(self) -> bool:
        """Whether every task is finished, failed or skipped."""
        return bool(self._core.is_done)

    def take(self, k: int | None = None) -> np.ndarray:
        """Hand out up to ``k`` ready tasks (every ready task when ``None``), now running.

        Returns fewer (possibly none) when fewer are ready: the rest wait for
        running tasks to finish.

        Raises
        ------
        TaskStateError
            Every task is already finished, failed or skipped.

        Examples
        --------
        >>> import numpy as np, toporank
        >>> f = toporank.Frontier((np.array([0, 1]), np.array([2, 2])), tie="stack")
        >>> f.take(1), f.take(5), f.take()
        (array([1]), array([0]), array([], dtype=int64))
        """
        if k is not None and (type(k) is not int or not 0 <= k <= _INT64_MAX):
            k = whole_number(k, "k")
            if not 0 <= k <= _INT64_MAX:
                raise GraphInputError(f"k must be None or a count in 0..2**63 - 1, got {k}")
        taken = self._core.take(k)
        if not len(taken) and self._core.is_done:
            raise TaskStateError("nothing left to take: every task is finished, failed or skipped")
        return taken if self._labels is None else self._labels[taken]

    def finish(self, tasks: Any) -> None:
        """Mark running ``tasks`` finished, releasing their successors.

        Parameters
        ----------
        tasks
            One task (an id, or a label of a labelled graph) or a sequence
            of them, all running. The batch is checked whole: if any task is
            not running, nothing changes.

        Raises
        ------
        TaskStateError
            A task was never taken, is already finished, failed or skipped,
            or is listed twice.
        GraphInputError
            A task is not a node of the graph.

        Examples
        --------
        >>> import numpy as np, toporank
        >>> f = toporank.Frontier((np.array([0]), np.array([1])))
        >>> f.finish(f.take())
        >>> f.take()
        array([1])
        >>> try:
        ...     f.finish([0])
        ... except toporank.TaskStateError as misuse:
        ...     print(misuse)
        cannot finish task 0: it is already finished
        """
        if type(tasks) in _ID_TYPES and self._labels is None:
            # one integer id: the executor's hot path (the core checks the range)
            try:
                refused = self._core.finish_one(tasks)
            except OverflowError:
                raise GraphInputError(f"tasks = {tasks} is not a node of the graph") from None
            if refused is not None:
                raise self._refused(refused, [tasks])
            return
        ids, given = self._ids(tasks)
        done = self._core.finish(ids)
        if isinstance(done, _core.Refused):
            raise self._refused(done, given)

    def fail(self, tasks: Any) -> np.ndarray:
        """Mark running ``tasks`` failed and every task reachable from them skipped.

        Parameters
        ----------
        tasks
            One task or a sequence of them, all running (checked whole, as
            in :meth:`finish`).

        Returns
        -------
        numpy.ndarray
            The tasks newly skipped (depth-first from each failed task). A
            skipped task is never handed out.

        Raises
        ------
        TaskStateError
            A task is not running, or is listed twice.
        GraphInputError
            A task is not a node of the graph.

        Examples
        --------
        >>> import numpy as np, toporank
        >>> f = toporank.Frontier((np.array([0, 1, 3]), np.array([1, 2, 2])))
        >>> f.fail(f.take(1))
        array([1, 2])
        >>> f.take(), f.remaining
        (array([3]), 1)
        """
        ids, given = self._ids(tasks)
        skipped = self._core.fail(ids)
        if isinstance(skipped, _core.Refused):
            raise self._refused(skipped, given)
        return self._nodes(skipped)

    def _nodes(self, ids: np.ndarray) -> np.ndarray:
        return ids if self._labels is None else self._labels[ids]

    def _ids(self, tasks: Any) -> tuple[np.ndarray, Any]:
        """``tasks`` (one node or a sequence) as an int64 id array, checked to be nodes."""
        single = False
        if self._labels is not None:
            try:
                single = isinstance(tasks, Hashable) and tasks in self._graph.label_index
            except TypeError:
                single = False
            if not single and isinstance(tasks, (str, bytes)):
                raise GraphInputError(f"task {show(tasks)} is not a node of the graph")
        elif isinstance(tasks, (int, np.integer)) and not isinstance(tasks, (bool, np.bool_)):
            single = True
        ids, given = node_ids(self._graph, [tasks] if single else tasks, "tasks")
        bad = np.flatnonzero((ids < 0) | (ids >= self._n))
        if len(bad):
            at = int(bad[0])
            raise GraphInputError(f"tasks[{at}] = {show(given[at])} is not a node of the graph")
        return ids, given

    def _refused(self, refused: _core.Refused, given: Any) -> TaskStateError:
        task = given[refused.position]
        if refused.state in ("waiting", "ready"):
            why = f"it was never taken (it is {refused.state})"
        elif refused.state == "listed twice":
            why = "the batch lists it twice"
        else:
            word = "finished" if refused.state == "done" else refused.state
            why = f"it is already {word}"
        return TaskStateError(
            f"cannot {refused.action} task {show(task)}: {why}", task, refused.state
        )
