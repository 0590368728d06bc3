"""Type stubs of the compiled core. Private: call the functions of ``toporank``."""

import numpy as np

def kahn_order(
    indptr: np.ndarray,
    indices: np.ndarray,
    tie: str,
    key: np.ndarray | None = None,
    descending: bool = False,
    seed: int = 0,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]: ...
def edges_to_csr(
    src: np.ndarray, dst: np.ndarray, n: int, with_edge_ids: bool = False
) -> tuple[np.ndarray, np.ndarray, np.ndarray | None]: ...
def verify_order(
    indptr: np.ndarray, indices: np.ndarray, order: np.ndarray
) -> tuple[object, ...] | None: ...
def positions(order: np.ndarray, n: int) -> np.ndarray | tuple[object, ...]: ...

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
