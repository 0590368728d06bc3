"""The compiled core releases the GIL while it computes."""

from __future__ import annotations

import threading
import time

import toporank
from toporank import _core
from toporank._synthetic import citation_dag


def test_other_python_threads_run_during_a_core_call():
    n = 300_000
    src, dst, _ = citation_dag(n, 10, seed=3)
    g = toporank.Graph.from_edges(src, dst, n)
    windows: list[tuple[float, float]] = []

    def work():
        for _ in range(5):
            start = time.perf_counter()
            _core.kahn_order(g.indptr, g.indices, "queue")
            windows.append((start, time.perf_counter()))

    ticks: list[float] = []
    worker = threading.Thread(target=work)
    worker.start()
    while worker.is_alive():
        ticks.append(time.perf_counter())
    worker.join()
    # With the GIL held for the whole call, this thread could not tick inside
    # any window (beyond the interpreter's switch at its edges).
    inside = sum(1 for t in ticks for a, b in windows if a + 0.002 < t < b - 0.002)
    assert inside > 100, (inside, windows)
