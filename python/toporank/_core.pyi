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
def strong_components(indptr: np.ndarray, indices: np.ndarray) -> tuple[np.ndarray, int]: ...
def condensation(
    indptr: np.ndarray, indices: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray]: ...
def condensed_order(
    indptr: np.ndarray,
    indices: np.ndarray,
    tie: str,
    key: np.ndarray | None = None,
    descending: bool = False,
    seed: int = 0,
) -> np.ndarray: ...
def cut_order(
    indptr: np.ndarray,
    indices: np.ndarray,
    tie: str,
    key: np.ndarray | None = None,
    descending: bool = False,
    seed: int = 0,
) -> np.ndarray: ...
def cycle_witness(
    indptr: np.ndarray, indices: np.ndarray, through: int | None = None
) -> np.ndarray | None: ...
def cut_cycles(indptr: np.ndarray, indices: np.ndarray) -> tuple[np.ndarray, np.ndarray]: ...
