"""Type stubs of the compiled core. Private: call the functions of ``toporank``.

Every entry point returns a frozen result object (or a plain array); one
that meets a cycle returns a :class:`Cyclic` instead.
"""

from typing import final

import numpy as np

__all__ = [
    "Agreement",
    "Components",
    "Condensation",
    "CriticalPath",
    "CsrArrays",
    "Cut",
    "Cyclic",
    "ExactCounts",
    "Levels",
    "LogCounts",
    "MainPath",
    "OrderMetrics",
    "PathCounts",
    "Schedule",
    "Violation",
    "_raise_error_kind",
    "bottom_levels",
    "condensation",
    "critical_path",
    "cut_cycles",
    "cycle_witness",
    "edges_to_csr",
    "heights",
    "kahn_order",
    "levels",
    "list_schedule",
    "main_path",
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
    indptr: np.ndarray, indices: np.ndarray, threads: int = 1, kind: str = "spc"
) -> PathCounts | Cyclic: ...

@final
class MainPath:
    @property
    def edges(self) -> np.ndarray: ...
    @property
    def path(self) -> np.ndarray | None: ...
    @property
    def edge_weight(self) -> np.ndarray: ...
    @property
    def log_weights(self) -> bool: ...

def main_path(
    indptr: np.ndarray,
    indices: np.ndarray,
    kind: str = "spc",
    edge_weight: np.ndarray | None = None,
    method: str = "global",
    routes: int = 1,
    all_ties: bool = False,
    threads: int = 1,
) -> MainPath | Cyclic: ...

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

__all__ += ["PeelStep", "peel_shard"]

def peel_shard(
    indptr: np.ndarray,
    targets: np.ndarray,
    slot_group: np.ndarray,
    groups: int,
    remaining: np.ndarray,
    level: np.ndarray,
    inbox_nodes: np.ndarray,
    inbox_counts: np.ndarray,
    inbox_levels: np.ndarray,
    seed_zero: bool,
) -> PeelStep: ...

@final
class PeelStep:
    @property
    def peeled(self) -> int: ...
    @property
    def slots(self) -> np.ndarray: ...
    @property
    def counts(self) -> np.ndarray: ...
    @property
    def levels(self) -> np.ndarray: ...
    @property
    def offsets(self) -> np.ndarray: ...

__all__ += ["DynamicCore", "Refusal"]

@final
class Refusal:
    @property
    def index(self) -> int: ...
    @property
    def cycle(self) -> np.ndarray: ...

@final
class DynamicCore:
    def __new__(cls, n: int) -> DynamicCore: ...
    @staticmethod
    def from_csr(indptr: np.ndarray, indices: np.ndarray) -> DynamicCore | np.ndarray: ...
    @property
    def n(self) -> int: ...
    @property
    def m(self) -> int: ...
    @property
    def affected_total(self) -> int: ...
    def add_nodes(self, count: int) -> None: ...
    def add_edge(self, u: int, v: int) -> Refusal | None: ...
    def add_edges(self, src: np.ndarray, dst: np.ndarray) -> Refusal | None: ...
    def remove_edge(self, u: int, v: int) -> bool: ...
    def remove_edges(self, src: np.ndarray, dst: np.ndarray) -> int | None: ...
    def order(self) -> np.ndarray: ...
    def positions(self) -> np.ndarray: ...
    def position(self, v: int) -> int: ...
    def precedes(self, u: int, v: int) -> bool: ...
    def to_csr(self) -> CsrArrays: ...
