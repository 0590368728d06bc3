"""toporank: topological ordering of large directed graphs.

Kahn's algorithm over CSR arrays with selectable tie-breaks, run by a
compiled core with the GIL released. Start with :func:`order`.
"""

from ._cycles import Condensation, CycleCut, components, condense, cut_cycles, cycle_witness
from ._errors import CyclicGraphError, GraphInputError, InvalidOrderError
from ._graph import Graph, as_graph
from ._order import TIES, order, positions, verify_order

__all__ = [
    "TIES",
    "Condensation",
    "CycleCut",
    "CyclicGraphError",
    "Graph",
    "GraphInputError",
    "InvalidOrderError",
    "as_graph",
    "components",
    "condense",
    "cut_cycles",
    "cycle_witness",
    "order",
    "positions",
    "verify_order",
]

__version__ = "0.1.0"
