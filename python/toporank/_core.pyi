"""Type stubs of the compiled core. Private: call the functions of ``toporank``."""

from typing import Any, final

import numpy as np

__all__ = ["edges_to_csr", "kahn_order", "positions", "verify_order"]

def kahn_order(
    indptr: np.ndarray,
    indices: np.ndarray,
    tie: str,
    key: np.ndarray | None = None,
    descending: bool = False,
    seed: int = 0,
    threads: int = 1,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]: ...
def edges_to_csr(
    src: np.ndarray, dst: np.ndarray, n: int, with_edge_ids: bool = False
) -> tuple[np.ndarray, np.ndarray, np.ndarray | None]: ...
def verify_order(
    indptr: np.ndarray, indices: np.ndarray, order: np.ndarray
) -> tuple[object, ...] | None: ...
def positions(order: np.ndarray, n: int) -> np.ndarray | tuple[object, ...]: ...

__all__ += ["bottom_levels", "list_schedule", "order_metrics"]

def order_metrics(
    indptr: np.ndarray, indices: np.ndarray, order: np.ndarray, rank: np.ndarray | None = None
) -> tuple[Any, ...] | None: ...
def list_schedule(
    indptr: np.ndarray,
    indices: np.ndarray,
    durations: np.ndarray,
    workers: int,
    policy: str,
    rank: np.ndarray | None = None,
    seed: int = 0,
) -> tuple[Any, Any]: ...
def bottom_levels(
    indptr: np.ndarray, indices: np.ndarray, durations: np.ndarray
) -> tuple[Any, Any]: ...

__all__ += ["critical_path", "heights", "levels", "path_counts"]

_Cyclic = tuple[np.ndarray, np.ndarray, np.ndarray] | None

def levels(
    indptr: np.ndarray, indices: np.ndarray, threads: int = 1, grouped: bool = False
) -> tuple[_Cyclic, np.ndarray, np.ndarray | None, np.ndarray | None]: ...
def heights(
    indptr: np.ndarray, indices: np.ndarray, threads: int = 1
) -> tuple[_Cyclic, np.ndarray]: ...
def critical_path(
    indptr: np.ndarray,
    indices: np.ndarray,
    node_weight: np.ndarray | None = None,
    edge_weight: np.ndarray | None = None,
    default_edge_weight: float = 1.0,
    threads: int = 1,
) -> tuple[_Cyclic, float, np.ndarray, np.ndarray, np.ndarray]: ...
def path_counts(
    indptr: np.ndarray, indices: np.ndarray, threads: int = 1
) -> tuple[
    _Cyclic,
    np.ndarray,
    np.ndarray,
    np.ndarray,
    float,
    tuple[np.ndarray, np.ndarray, np.ndarray, int] | None,
    tuple[np.ndarray, np.ndarray, np.ndarray, float] | None,
]: ...

__all__ += [
    "condensation",
    "cut_cycles",
    "cycle_witness",
    "order_despite_cycles",
    "strong_components",
]

def strong_components(indptr: np.ndarray, indices: np.ndarray) -> tuple[np.ndarray, int]: ...
def condensation(
    indptr: np.ndarray, indices: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray]: ...
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
def cut_cycles(indptr: np.ndarray, indices: np.ndarray) -> tuple[np.ndarray, np.ndarray]: ...

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
    def to_csr(self) -> tuple[np.ndarray, np.ndarray]: ...
