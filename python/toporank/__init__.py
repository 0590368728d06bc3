"""toporank: topological ordering of large directed graphs.

Kahn's algorithm over CSR arrays with selectable tie-breaks, run by a
compiled core with the GIL released. Start with :func:`order`.
"""

from ._errors import CyclicGraphError, GraphInputError, InvalidOrderError
from ._graph import Graph, as_graph
from ._order import TIES, order, positions, verify_order
from ._sweeps import CriticalPath, PathCounts, critical_path, heights, levels, path_counts

__all__ = [
    "TIES",
    "CriticalPath",
    "CyclicGraphError",
    "Graph",
    "GraphInputError",
    "InvalidOrderError",
    "PathCounts",
    "as_graph",
    "critical_path",
    "heights",
    "levels",
    "order",
    "path_counts",
    "positions",
    "verify_order",
]

__version__ = "0.1.0"
