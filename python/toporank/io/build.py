"""One builder turns the edge batches every reader produces into a Graph."""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

import numpy as np

from .._graph import Graph

__all__ = ["EdgeBatch", "build_graph"]


@dataclass(frozen=True)
class EdgeBatch:
    """A run of edges ``src[k] -> dst[k]`` as non-negative integer ids (labels already interned)."""

    src: np.ndarray
    dst: np.ndarray


def build_graph(
    batches: Iterable[EdgeBatch], *, labels: np.ndarray | None = None, n: int | None = None
) -> Graph:
    """The Graph of all ``batches`` in order; ``labels[i]`` names id ``i`` when given.

    Every reader ends here, so a bounded-memory CSR builder can replace the
    concatenation below without touching the readers.
    """
    parts = list(batches)
    if len(parts) == 1:
        src, dst = parts[0].src, parts[0].dst
    else:
        src = np.concatenate([b.src for b in parts]) if parts else np.zeros(0, np.int32)
        dst = np.concatenate([b.dst for b in parts]) if parts else np.zeros(0, np.int32)
    if labels is not None:
        return Graph.from_labelled_edges(src, dst, labels)
    return Graph.from_edges(src, dst, n)
