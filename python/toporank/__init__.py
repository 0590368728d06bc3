"""toporank: topological ordering of large directed graphs.

Kahn's algorithm over CSR arrays with selectable tie-breaks, run by a
compiled core with the GIL released. Start with :func:`order`.
"""

import os as _os
import sys as _sys


def _run_as_command() -> bool:
    """Whether this import is the start of the ``toporank`` command (script or ``-m``)."""
    argv = list(getattr(_sys, "orig_argv", _sys.argv))
    if _os.path.basename(_sys.argv[0] if _sys.argv else "") == "toporank":
        return True
    return "-m" in argv and argv[argv.index("-m") + 1 : argv.index("-m") + 2] == ["toporank"]


try:
    from ._compare import Comparison, compare
    from ._cycles import Condensation, CycleCut, components, condense, cut_cycles, cycle_witness
    from ._dynamic import DynamicOrder
    from ._errors import CyclicGraphError, GraphInputError, InvalidOrderError, TaskStateError
    from ._frontier import Frontier
    from ._graph import Graph, as_graph
    from ._mainpath import MainPath, Preprint, main_path, preprint_transform
    from ._metrics import OrderMetrics, order_metrics
    from ._order import TIES, order, positions, verify_order
    from ._schedule import SCHEDULE_TIES, Schedule, schedule
    from ._sweeps import CriticalPath, PathCounts, critical_path, heights, levels, path_counts
    from .io import GraphFileError, ReadOptions, read_graph, save_graph
except KeyboardInterrupt:
    # Ctrl-C while the command starts (numpy and the core load): no traceback
    if _run_as_command():
        _sys.stderr.write("toporank: interrupted; no output was written\n")
        raise SystemExit(130) from None
    raise

__all__ = [
    "SCHEDULE_TIES",
    "TIES",
    "Comparison",
    "Condensation",
    "CriticalPath",
    "CycleCut",
    "CyclicGraphError",
    "DynamicOrder",
    "Frontier",
    "Graph",
    "GraphFileError",
    "GraphInputError",
    "InvalidOrderError",
    "MainPath",
    "OrderMetrics",
    "PathCounts",
    "Preprint",
    "ReadOptions",
    "Schedule",
    "TaskStateError",
    "as_graph",
    "compare",
    "components",
    "condense",
    "critical_path",
    "cut_cycles",
    "cycle_witness",
    "heights",
    "levels",
    "main_path",
    "order",
    "order_metrics",
    "path_counts",
    "positions",
    "preprint_transform",
    "read_graph",
    "save_graph",
    "schedule",
    "verify_order",
]

__version__ = "0.1.0"
