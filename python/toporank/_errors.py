"""Exception classes of toporank.

Every error that input can cause is one of these; all subclass ``ValueError``
so ``except ValueError`` catches them, and each message names the offending
value (node id or label, edge, position, dtype or shape).
"""

from __future__ import annotations

from typing import Any

import numpy as np

__all__ = ["CyclicGraphError", "GraphInputError", "InvalidOrderError", "TaskStateError"]


class GraphInputError(ValueError):
    """The graph, a key or another argument is malformed (dtype, shape, id, length)."""


class TaskStateError(RuntimeError):
    """A :class:`toporank.Frontier` was asked for what its state does not allow.

    Finishing or failing a task that is not running (never taken, already
    done, failed or skipped, or listed twice in one batch), or taking a task
    after every task is settled. ``task`` is the offending task (``None`` when
    none is to blame) and ``state`` where it stands; the frontier is unchanged.
    """

    def __init__(self, message: str, task: Any = None, state: str | None = None) -> None:
        super().__init__(message)
        self.task = task
        self.state = state

    def __reduce__(self) -> tuple[Any, ...]:
        return (TaskStateError, (str(self), self.task, self.state))


def _show(nodes: Any, limit: int = 12) -> str:
    items = [str(x) for x in list(nodes[:limit])]
    if len(nodes) > limit:
        items.append(f"... ({len(nodes) - limit} more)")
    return " -> ".join(items)


class CyclicGraphError(ValueError):
    """The graph has a directed cycle, so no topological order exists.

    Attributes
    ----------
    cycle : numpy.ndarray
        One directed cycle, in order: ``cycle[k] -> cycle[k + 1]`` and
        ``cycle[-1] -> cycle[0]`` are edges of the graph (a self-loop gives a
        one-node cycle). Node ids, or labels for a labelled graph.
    order : numpy.ndarray
        The nodes Kahn's loop emitted before the ready set ran dry.
    blocked : numpy.ndarray
        The nodes never emitted (each lies on or after a cycle), ascending id.
    """

    def __init__(self, cycle: np.ndarray, order: np.ndarray, blocked: np.ndarray) -> None:
        self.cycle = cycle
        self.order = order
        self.blocked = blocked
        total = len(order) + len(blocked)
        closing = f" -> {cycle[0]}" if len(cycle) else ""
        super().__init__(
            f"the graph has a cycle: {_show(cycle)}{closing}; {len(blocked)} of {total} nodes "
            f"are blocked behind cycles ({len(order)} were ordered before the ready set ran dry)"
        )

    def __reduce__(self) -> tuple[Any, ...]:
        return (type(self), (self.cycle, self.order, self.blocked))


class InvalidOrderError(ValueError):
    """A proposed sequence is not a topological order of the graph.

    Attributes
    ----------
    reason : str
        ``"edge"`` (an edge goes backwards), ``"duplicate"``, ``"missing"`` or
        ``"unknown"`` (an entry that is not a node of the graph).
    edge : tuple or None
        For ``"edge"``: the violated edge ``(u, v)``.
    edge_index : int or None
        For ``"edge"``: its position among the graph's stored edges.
    positions : tuple or None
        For ``"edge"``: ``(position of u, position of v)`` in the order; for
        ``"duplicate"``: the two positions holding the node.
    node : object or None
        For ``"duplicate"``, ``"missing"`` and ``"unknown"``: the node concerned.
    """

    def __init__(
        self,
        message: str,
        *,
        reason: str,
        edge: tuple[Any, Any] | None = None,
        edge_index: int | None = None,
        positions: tuple[int, int] | None = None,
        node: Any = None,
    ) -> None:
        super().__init__(message)
        self.reason = reason
        self.edge = edge
        self.edge_index = edge_index
        self.positions = positions
        self.node = node

    def __reduce__(self) -> tuple[Any, ...]:
        return (_rebuild_invalid_order, (self.args[0], self.__dict__))


def _rebuild_invalid_order(message: str, state: dict[str, Any]) -> InvalidOrderError:
    return InvalidOrderError(message, **state)
