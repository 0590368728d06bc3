"""toporank: topological ordering of large directed graphs.

Kahn's algorithm over CSR arrays with selectable tie-breaks, run by a
compiled core with the GIL released. Start with :func:`order`.
"""

from ._compare import Comparison, compare
from ._cycles import Condensation, CycleCut, components, condense, cut_cycles, cycle_witness
from ._dynamic import DynamicOrder
from ._errors import CyclicGraphError, GraphInputError, InvalidOrderError
from ._graph import Graph, as_graph
from ._io import GraphFileError, read_graph
from ._metrics import OrderMetrics, order_metrics
from ._order import TIES, order, positions, verify_order
from ._schedule import SCHEDULE_TIES, Schedule, schedule
from ._sweeps import CriticalPath, PathCounts, critical_path, heights, levels, path_counts

__all__ = [
    "SCHEDULE_TIES",
    "TIES",
    "Comparison",
    "Condensation",
    "CriticalPath",
    "CycleCut",
    "CyclicGraphError",
    "DynamicOrder",
    "Graph",
    "GraphFileError",
    "GraphInputError",
    "InvalidOrderError",
    "OrderMetrics",
    "PathCounts",
    "Schedule",
    "as_graph",
    "compare",
    "components",
    "condense",
    "critical_path",
    "cut_cycles",
    "cycle_witness",
    "heights",
    "levels",
    "order",
    "order_metrics",
    "path_counts",
    "positions",
    "read_graph",
    "schedule",
    "verify_order",
]

__version__ = "0.1.0"
