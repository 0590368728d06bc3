"""Memory of ``order`` on a memory-mapped CSR graph: bytes allocated per node and per edge.

Opt-in: set ``TOPORANK_BENCH_MEMORY=1`` (and optionally ``TOPORANK_BENCH_MEMORY_NODES``,
default 3,000,000 nodes at 10 edges each). The graph is written as int64
``indptr`` and int32 ``indices`` ``.npy`` files and reopened with
``np.load(mmap_mode="r")`` in a fresh interpreter, which samples its own
anonymous resident memory (``RssAnon``: the file pages of the mapping are not
counted) while the Graph is built and ``order`` runs. Target: at most 40
bytes per node, nothing per edge.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import tempfile

import numpy as np
import pytest
from conftest import SMALL, scaled

import toporank
from toporank._synthetic import citation_dag

ENABLED = os.environ.get("TOPORANK_BENCH_MEMORY") == "1" or SMALL

CHILD = r"""
import json, sys, threading, time
import numpy as np
import toporank

def anon():
    with open("/proc/self/status") as f:
        for line in f:
            if line.startswith("RssAnon:"):
                return int(line.split()[1]) * 1024
    return 0

folder, indices_dtype, threads = sys.argv[1], sys.argv[2], int(sys.argv[3])
indptr = np.load(folder + "/indptr.npy", mmap_mode="r")
indices = np.load(folder + "/indices_" + indices_dtype + ".npy", mmap_mode="r")
toporank.order(toporank.Graph.from_csr(indptr[:2] * 0, indices[:0]))  # load the core
peak = base = anon()
done = False
def sample():
    global peak
    while not done:
        peak = max(peak, anon())
        time.sleep(0.0005)
watcher = threading.Thread(target=sample)
watcher.start()
# Charged too: what building the Graph costs (a copy of the ids would show here).
graph = toporank.Graph.from_csr(indptr, indices)
order = toporank.order(graph, threads=threads)
done = True
watcher.join()
peak = max(peak, anon())
print(json.dumps({"n": graph.n, "m": graph.m, "bytes": peak - base, "copied": not (
    np.shares_memory(graph.indices, indices))}))
"""


def _measure(folder: str, ids: str, threads: int) -> dict:
    out = subprocess.run(
        [sys.executable, "-c", CHILD, folder, ids, str(threads)],
        check=True,
        capture_output=True,
        text=True,
    )
    return json.loads(out.stdout.strip().splitlines()[-1])


@pytest.mark.skipif(not ENABLED, reason="set TOPORANK_BENCH_MEMORY=1 to measure memory")
def test_order_memory_on_a_memory_mapped_graph(ratio_table):
    n = scaled(int(os.environ.get("TOPORANK_BENCH_MEMORY_NODES", 3_000_000)), 2_000)
    src, dst, _ = citation_dag(n, 10, seed=8)
    g = toporank.Graph.from_edges(src, dst, n)
    del src, dst
    with tempfile.TemporaryDirectory() as folder:
        np.save(os.path.join(folder, "indptr.npy"), g.indptr.astype(np.int64))
        for ids in ("int32", "int64"):
            np.save(os.path.join(folder, f"indices_{ids}.npy"), g.indices.astype(ids))
        m = g.m
        del g
        for ids in ("int32", "int64"):
            for threads in (1, 2):
                found = _measure(folder, ids, threads)
                assert not found["copied"]
                per_node = found["bytes"] / n
                ratio_table(
                    f"order mmap int64/{ids} threads={threads}: bytes/node",
                    per_node,
                    "<= 40 (edges=0)",
                )
                # Everything charged to the edges instead: a copy of indices would show
                # here as 4-8 bytes per edge.
                ratio_table(
                    f"order mmap int64/{ids} threads={threads}: bytes/edge if all per edge",
                    found["bytes"] / m,
                    "",
                )
