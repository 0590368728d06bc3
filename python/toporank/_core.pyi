"""Type stubs of the compiled core. Private: call the functions of ``toporank``.

Every entry point returns a frozen result object (or a plain array); one
that meets a cycle returns a :class:`Cyclic` instead.
"""

from typing import final

import numpy as np

__all__ = [
    "Agreement",
    "BuiltCsr",
    "Components",
    "Condensation",
    "CriticalPath",
    "CsrArrays",
    "CsrBuilder",
    "Cut",
    "Cyclic",
    "EdgeIds",
    "ExactCounts",
    "LabelBytes",
    "LabelInterner",
    "Levels",
    "LogCounts",
    "OrderMetrics",
    "PathCounts",
    "Schedule",
    "Violation",
    "_raise_error_kind",
    "bottom_levels",
    "check_csr",
    "condensation",
    "critical_path",
    "cut_cycles",
    "cycle_witness",
    "edges_to_csr",
    "heights",
    "kahn_order",
    "levels",
    "list_schedule",
    "order_despite_cycles",
    "order_metrics",
    "path_counts",
    "positions",
    "strong_components",
    "verify_order",
]

@final
class Cyclic:
    """Kahn's loop ran dry: what it emitted, the nodes never reached, one cycle."""
    @property
    def order(self) -> np.ndarray: ...
    @property
    def blocked(self) -> np.ndarray: ...
    @property
    def cycle(self) -> np.ndarray: ...

def _raise_error_kind(kind: str) -> None: ...

# order, edge lists, order checks
@final
class CsrArrays:
    @property
    def indptr(self) -> np.ndarray: ...
    @property
    def indices(self) -> np.ndarray: ...
    @property
    def edge_ids(self) -> np.ndarray | None: ...

@final
class Violation:
    @property
    def kind(self) -> str: ...
    @property
    def node(self) -> int | None: ...
    @property
    def edge(self) -> int | None: ...
    @property
    def source(self) -> int | None: ...
    @property
    def target(self) -> int | None: ...
    @property
    def first(self) -> int | None: ...
    @property
    def second(self) -> int | None: ...
    @property
    def position(self) -> int | None: ...
    @property
    def value(self) -> int | None: ...

def kahn_order(
    indptr: np.ndarray,
    indices: np.ndarray,
    tie: str,
    key: np.ndarray | None = None,
    descending: bool = False,
    seed: int = 0,
    threads: int = 1,
) -> np.ndarray | Cyclic: ...
def edges_to_csr(
    src: np.ndarray, dst: np.ndarray, n: int, with_edge_ids: bool = False
) -> CsrArrays: ...
def verify_order(
    indptr: np.ndarray, indices: np.ndarray, order: np.ndarray
) -> Violation | None: ...
def positions(order: np.ndarray, n: int) -> np.ndarray | Violation: ...

# order measures, schedules
@final
class Agreement:
    @property
    def agree(self) -> int: ...
    @property
    def disagree(self) -> int: ...
    @property
    def tied(self) -> int: ...

@final
class OrderMetrics:
    @property
    def ready_sizes(self) -> np.ndarray: ...
    @property
    def live_sizes(self) -> np.ndarray: ...
    @property
    def ready_peak(self) -> int: ...
    @property
    def ready_total(self) -> int: ...
    @property
    def live_peak(self) -> int: ...
    @property
    def live_total(self) -> int: ...
    @property
    def span_total(self) -> int: ...
    @property
    def span_max(self) -> int: ...
    @property
    def pairs(self) -> Agreement | None: ...
    @property
    def steps(self) -> Agreement | None: ...
    @property
    def edges(self) -> Agreement | None: ...

@final
class Schedule:
    @property
    def start(self) -> np.ndarray: ...
    @property
    def worker(self) -> np.ndarray: ...
    @property
    def order(self) -> np.ndarray: ...
    @property
    def makespan(self) -> int | float: ...
    @property
    def critical_path(self) -> int | float: ...
    @property
    def total_work(self) -> int | float: ...

def order_metrics(
    indptr: np.ndarray, indices: np.ndarray, order: np.ndarray, rank: np.ndarray | None = None
) -> OrderMetrics | None: ...
def list_schedule(
    indptr: np.ndarray,
    indices: np.ndarray,
    durations: np.ndarray,
    workers: int,
    policy: str,
    rank: np.ndarray | None = None,
    seed: int = 0,
) -> Schedule | Cyclic: ...
def bottom_levels(
    indptr: np.ndarray, indices: np.ndarray, durations: np.ndarray
) -> np.ndarray | Cyclic: ...

# sweeps
@final
class Levels:
    @property
    def level(self) -> np.ndarray: ...
    @property
    def nodes(self) -> np.ndarray | None: ...
    @property
    def offsets(self) -> np.ndarray | None: ...

@final
class CriticalPath:
    @property
    def length(self) -> float: ...
    @property
    def path(self) -> np.ndarray: ...
    @property
    def earliest_start(self) -> np.ndarray: ...
    @property
    def latest_start(self) -> np.ndarray: ...

@final
class ExactCounts:
    @property
    def from_sources(self) -> np.ndarray: ...
    @property
    def to_sinks(self) -> np.ndarray: ...
    @property
    def through_edge(self) -> np.ndarray: ...
    @property
    def total(self) -> int: ...

@final
class LogCounts:
    @property
    def from_sources(self) -> np.ndarray: ...
    @property
    def to_sinks(self) -> np.ndarray: ...
    @property
    def through_edge(self) -> np.ndarray: ...
    @property
    def total(self) -> float: ...

@final
class PathCounts:
    @property
    def from_sources(self) -> np.ndarray: ...
    @property
    def to_sinks(self) -> np.ndarray: ...
    @property
    def through_edge(self) -> np.ndarray: ...
    @property
    def total(self) -> float: ...
    @property
    def exact(self) -> ExactCounts | None: ...
    @property
    def log(self) -> LogCounts | None: ...

def levels(
    indptr: np.ndarray, indices: np.ndarray, threads: int = 1, grouped: bool = False
) -> Levels | Cyclic: ...
def heights(indptr: np.ndarray, indices: np.ndarray, threads: int = 1) -> np.ndarray | Cyclic: ...
def critical_path(
    indptr: np.ndarray,
    indices: np.ndarray,
    node_weight: np.ndarray | None = None,
    edge_weight: np.ndarray | None = None,
    default_edge_weight: float = 1.0,
    threads: int = 1,
) -> CriticalPath | Cyclic: ...
def path_counts(
    indptr: np.ndarray, indices: np.ndarray, threads: int = 1
) -> PathCounts | Cyclic: ...

# graphs with cycles
@final
class Components:
    @property
    def labels(self) -> np.ndarray: ...
    @property
    def count(self) -> int: ...

@final
class Condensation:
    @property
    def labels(self) -> np.ndarray: ...
    @property
    def sizes(self) -> np.ndarray: ...
    @property
    def indptr(self) -> np.ndarray: ...
    @property
    def indices(self) -> np.ndarray: ...
    @property
    def weights(self) -> np.ndarray: ...

@final
class Cut:
    @property
    def removed(self) -> np.ndarray: ...
    @property
    def order(self) -> np.ndarray: ...

def strong_components(indptr: np.ndarray, indices: np.ndarray) -> Components: ...
def condensation(indptr: np.ndarray, indices: np.ndarray) -> Condensation: ...
def order_despite_cycles(
    indptr: np.ndarray,
    indices: np.ndarray,
    on_cycle: str,
    tie: str,
    key: np.ndarray | None = None,
    descending: bool = False,
    seed: int = 0,
) -> np.ndarray: ...
def cycle_witness(
    indptr: np.ndarray, indices: np.ndarray, through: int | None = None
) -> np.ndarray | None: ...
def cut_cycles(indptr: np.ndarray, indices: np.ndarray) -> Cut: ...

# edge batches to CSR in bounded memory; checks of saved arrays
@final
class BuiltCsr:
    @property
    def indptr(self) -> np.ndarray: ...
    @property
    def indices(self) -> np.ndarray: ...
    @property
    def positions(self) -> np.ndarray | None: ...

@final
class CsrBuilder:
    """Two passes: ``count`` every batch, ``start``, ``place`` the same batches, ``finish``."""
    def __new__(cls) -> CsrBuilder: ...
    def count(self, src: np.ndarray, dst: np.ndarray) -> None: ...
    @property
    def edges(self) -> int: ...
    @property
    def nodes(self) -> int: ...
    @property
    def grouped(self) -> bool: ...
    def start(self, n: int, positions: bool = False) -> None: ...
    def place(self, src: np.ndarray, dst: np.ndarray) -> None: ...
    def finish(self) -> BuiltCsr: ...

def check_csr(indptr: np.ndarray, indices: np.ndarray) -> None: ...

@final
class EdgeIds:
    @property
    def src(self) -> np.ndarray: ...
    @property
    def dst(self) -> np.ndarray: ...

@final
class LabelBytes:
    @property
    def offsets(self) -> np.ndarray: ...
    @property
    def data(self) -> np.ndarray: ...

@final
class LabelInterner:
    """Labels numbered in first-seen order, row by row, source before target."""
    def __new__(cls) -> LabelInterner: ...
    def __len__(self) -> int: ...
    def intern(
        self,
        src_offsets: np.ndarray,
        src_data: np.ndarray,
        dst_offsets: np.ndarray,
        dst_data: np.ndarray,
    ) -> EdgeIds: ...
    def labels(self) -> LabelBytes: ...
