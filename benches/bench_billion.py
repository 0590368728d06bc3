"""Opt-in: order a generated 1B-edge integer edge list from a file with the command.

``TOPORANK_BENCH_BILLION=1 python -m pytest benches/bench_billion.py -s`` writes an
invented citation-like DAG (100M papers, each citing 10 earlier ones, mostly
recent) as a 17.8 GB TSV in ``TOPORANK_BENCH_DIR`` (default: a temporary folder),
runs ``toporank order FILE -o OUT`` in a subprocess, and reports wall time,
peak memory per edge of the child process, and checks the output is a valid
order of the first 200M edges. The smoke run (``TOPORANK_BENCH_SMALL=1``) does
the same on 1M edges.
"""

from __future__ import annotations

import os
import resource
import subprocess
import sys
import time

import numpy as np
import pyarrow as pa
import pyarrow.csv as pc
import pytest
from conftest import SMALL, scaled

RUN = SMALL or os.environ.get("TOPORANK_BENCH_BILLION") == "1"
NODES = scaled(100_000_000, 100_000)
CITES = 10


def _write(path: str) -> None:
    rng = np.random.default_rng(7)
    options = pc.WriteOptions(include_header=False, delimiter="\t")
    schema = pa.schema([("src", pa.int32()), ("dst", pa.int32())])
    with pc.CSVWriter(path, schema, write_options=options) as writer:
        for low in range(1, NODES, 1_000_000):
            cites = np.repeat(np.arange(low, min(NODES, low + 1_000_000)), CITES)
            back = (rng.pareto(1.2, len(cites)) * 50).astype(np.int64) + 1
            cited = np.maximum(cites - back, 0)
            columns = {"src": cited.astype(np.int32), "dst": cites.astype(np.int32)}
            writer.write_table(pa.table(columns))


@pytest.mark.skipif(not RUN, reason="opt-in: set TOPORANK_BENCH_BILLION=1 (17.8 GB of disk)")
def test_billion_edges_from_a_file(ratio_table, tmp_path):
    folder = os.environ.get("TOPORANK_BENCH_DIR", str(tmp_path))
    edges, order = os.path.join(folder, "edges.tsv"), os.path.join(folder, "order.txt")
    if not os.path.exists(edges):
        _write(edges)
    command = [sys.executable, "-m", "toporank", "order", edges, "-o", order, "-q"]
    start = time.perf_counter()
    subprocess.run(command, check=True)
    wall = time.perf_counter() - start
    peak = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss * 1024
    m = (NODES - 1) * CITES
    table = pc.read_csv(order, read_options=pc.ReadOptions(column_names=["node"]))
    found = table["node"].to_numpy()
    assert np.array_equal(np.sort(found), np.arange(NODES))
    position = np.empty(NODES, np.int64)
    position[found] = np.arange(NODES)
    reader = pc.open_csv(
        edges,
        read_options=pc.ReadOptions(column_names=["s", "d"], block_size=1 << 26),
        parse_options=pc.ParseOptions(delimiter="\t"),
    )
    checked = 0
    for batch in reader:
        s, d = batch.column(0).to_numpy(), batch.column(1).to_numpy()
        assert (position[s] < position[d]).all()
        checked += len(s)
        if checked >= 200_000_000:
            break
    ratio_table(f"order FILE -o OUT, {m} edges: seconds", wall)
    ratio_table(f"order FILE -o OUT, {m} edges: peak bytes per edge", peak / m, "<= 16")
