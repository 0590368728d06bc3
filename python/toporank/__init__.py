"""toporank: topological ordering of large directed graphs.

Kahn's algorithm over CSR arrays with selectable tie-breaks, run by a
compiled core with the GIL released. Start with :func:`order`.
"""

from ._errors import CyclicGraphError, GraphInputError, InvalidOrderError
from ._graph import Graph, as_graph
from ._io import GraphFileError, read_graph
from ._order import TIES, order, positions, verify_order

__all__ = [
    "TIES",
    "CyclicGraphError",
    "Graph",
    "GraphFileError",
    "GraphInputError",
    "InvalidOrderError",
    "as_graph",
    "order",
    "positions",
    "read_graph",
    "verify_order",
]

__version__ = "0.1.0"
