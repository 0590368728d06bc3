"""Seeded synthetic graphs for benchmarks, demos and tests.

Invented data only: a growing "citation-like" DAG in which each new paper
cites ``k`` older ones with a bias toward the oldest, and node ids shuffled
so that id order is not a topological order.
"""

from __future__ import annotations

import numpy as np

__all__ = ["citation_dag", "with_back_edges"]


def citation_dag(
    n: int,
    k: int = 10,
    *,
    seed: int = 0,
    bias: float = 2.0,
    first_year: int = 1950,
    years: int = 75,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Return ``(src, dst, year)`` of a growing citation-like DAG.

    Paper ``t`` (in creation order, ``t >= 1``) cites ``k`` papers drawn as
    ``floor(t * u**bias)`` with ``u`` uniform on [0, 1), so older papers are
    cited more. An edge runs from the cited paper to the citing one (the
    cited paper comes first). Ids are then shuffled. ``year`` grows with
    creation order, so it is a valid priority key for a chronological order.
    Duplicate citations can occur, as in real data; there are no self-loops.
    """
    rng = np.random.default_rng(seed)
    citing = np.repeat(np.arange(1, n, dtype=np.int64), k)
    cited = (citing * rng.random(len(citing)) ** bias).astype(np.int64)
    shuffle = rng.permutation(n).astype(np.int64)
    year = np.empty(n, dtype=np.int64)
    year[shuffle] = first_year + (np.arange(n, dtype=np.int64) * years) // max(n, 1)
    return shuffle[cited], shuffle[citing], year


def with_back_edges(
    src: np.ndarray, dst: np.ndarray, count: int, *, seed: int = 0
) -> tuple[np.ndarray, np.ndarray]:
    """The edge list plus ``count`` reversed copies of randomly chosen edges (creating cycles)."""
    rng = np.random.default_rng(seed)
    pick = rng.choice(len(src), size=count, replace=False)
    return np.concatenate([src, dst[pick]]), np.concatenate([dst, src[pick]])
