"""Hypothesis strategies and small graph helpers shared by the test suites."""

from __future__ import annotations

import numpy as np
from hypothesis import strategies as st


@st.composite
def edge_lists(draw, max_nodes=12, max_edges=40, acyclic=None, self_loops=True):
    """``(src, dst, n)``: int64 edge arrays over ``n`` nodes, duplicates allowed.

    ``acyclic=True`` keeps only edges that go forward in a hidden random
    permutation (so ids are not already topological); ``None`` draws both.
    """
    n = draw(st.integers(0, max_nodes))
    if acyclic is None:
        acyclic = draw(st.booleans())
    if n == 0:
        return np.zeros(0, np.int64), np.zeros(0, np.int64), 0
    pairs = draw(
        st.lists(st.tuples(st.integers(0, n - 1), st.integers(0, n - 1)), max_size=max_edges)
    )
    if acyclic:
        rank = draw(st.permutations(range(n)))
        pairs = [(u, v) if rank[u] < rank[v] else (v, u) for u, v in pairs if u != v]
    elif not self_loops:
        pairs = [(u, v) for u, v in pairs if u != v]
    src = np.array([p[0] for p in pairs], dtype=np.int64)
    dst = np.array([p[1] for p in pairs], dtype=np.int64)
    return src, dst, n


def to_networkx(src, dst, n):
    """The same graph as a networkx DiGraph (parallel edges collapse)."""
    import networkx as nx

    g = nx.DiGraph()
    g.add_nodes_from(range(n))
    g.add_edges_from(zip(src.tolist(), dst.tolist()))
    return g


def check_topological(src, dst, n, order):
    """Plain numpy check: a permutation of 0..n-1 with every edge going forward."""
    order = np.asarray(order)
    assert sorted(order.tolist()) == list(range(n))
    position = np.empty(n, dtype=np.int64)
    position[order] = np.arange(n)
    assert np.all(position[src] < position[dst])


def ticks_inside(run, repeat):
    """How often this thread ran while another thread was inside ``run()``.

    Common practice: a call that holds the GIL throughout lets no other
    Python thread run inside it (beyond the interpreter's switches at its
    edges, which the 2 ms margins exclude), so a count well above zero shows
    the GIL was released.
    """
    import threading
    import time

    windows: list[tuple[float, float]] = []

    def work():
        for _ in range(repeat):
            start = time.perf_counter()
            run()
            windows.append((start, time.perf_counter()))

    ticks: list[float] = []
    worker = threading.Thread(target=work)
    worker.start()
    while worker.is_alive():
        ticks.append(time.perf_counter())
    worker.join()
    return sum(1 for t in ticks for a, b in windows if a + 0.002 < t < b - 0.002)
