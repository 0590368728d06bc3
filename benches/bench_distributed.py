"""toporank.distributed on a two-worker local cluster, against single-machine ``levels``.

The invented citation-like DAG of ``toporank._synthetic`` (1M papers citing
10 older ones each: about 10M edges) written as a 16-file Parquet dataset,
levelled by a ``LocalCluster`` of two worker processes (one thread each),
one shard per worker (the default) and one shard per file. Reported: rounds, the time to
read and build the shards, the median and total round time, and the ratio of
the whole distributed run to single-machine ``toporank.levels`` on the same
edges (read from the same files, and from arrays already in memory). On one
machine the point is correctness and the fixed cost per round, not speed.

Run ``python -m pytest benches/bench_distributed.py --benchmark-enable -s``
for the table; ``TOPORANK_BENCH_SMALL=1`` shrinks the graph to a smoke test.
"""

from __future__ import annotations

import statistics
import time

import numpy as np
import pytest
from conftest import scaled

import toporank
from toporank._synthetic import citation_dag

pytest.importorskip("dask", reason="the 'dask' extra is not installed: pip install '.[dask]'")
pytest.importorskip(
    "distributed", reason="the 'dask' extra is not installed: pip install '.[dask]'"
)

import pandas as pd
import pyarrow.parquet as pq
from distributed import Client

import toporank.distributed as td

PAPERS = scaled(1_000_000, 2_000)
CITATIONS = scaled(10, 3)
FILES = 16


@pytest.fixture(scope="module")
def dataset(tmp_path_factory):
    src, dst, _ = citation_dag(PAPERS, CITATIONS, seed=0)
    folder = tmp_path_factory.mktemp("citations")
    for k, rows in enumerate(np.array_split(np.arange(len(src)), FILES)):
        pd.DataFrame({"src": src[rows], "dst": dst[rows]}).to_parquet(
            folder / f"part-{k:02d}.parquet", index=False
        )
    return folder, src, dst


@pytest.fixture(scope="module")
def client():
    cluster = td._loopback_cluster(n_workers=2, threads_per_worker=1)
    c = Client(cluster)
    yield c
    c.close()
    cluster.close()


def _single(folder):
    table = pq.read_table(folder, columns=["src", "dst"])
    src = table.column("src").to_numpy()
    dst = table.column("dst").to_numpy()
    return toporank.levels((src, dst), n=PAPERS, threads=1)


@pytest.mark.parametrize("shards", [None, scaled(FILES, 4)])
def test_distributed_levels(dataset, client, ratio_table, shards):
    folder, src, dst = dataset
    start = time.perf_counter()
    expected = toporank.levels((src, dst), n=PAPERS, threads=1)
    in_memory = time.perf_counter() - start
    start = time.perf_counter()
    from_files = _single(folder)
    read_and_level = time.perf_counter() - start
    np.testing.assert_array_equal(from_files, expected)

    start = time.perf_counter()
    run = td.peel(folder, client=client, partitions=shards)
    total = time.perf_counter() - start

    got = run.levels.compute()
    np.testing.assert_array_equal(got["level"].to_numpy(), expected)  # single machine
    assert run.unlevelled == 0

    name = f"distributed {run.shards} shards"
    ratio_table(f"{name}: rounds", run.rounds, f"depth {int(expected.max())} + 1 at most")
    ratio_table(f"{name}: read + build shards (s)", run.build_seconds)
    ratio_table(f"{name}: median round (s)", statistics.median(run.round_seconds))
    ratio_table(f"{name}: all rounds (s)", sum(run.round_seconds))
    ratio_table(f"{name}: total / (read + levels)", total / read_and_level, "record only")
    ratio_table(f"{name}: total / levels in memory", total / in_memory, "record only")
