"""Main path analysis timed against FIFO ``order`` on the same graph in the same run.

The graph is the invented citation-like DAG of ``toporank._synthetic`` (1M
papers citing 10 older ones each: about 10M edges), given as CSR so no input
conversion is timed. Targets: each traversal weight (``path_counts`` with
kind spc, splc, spnp) at most 2x FIFO order; a global main path, weights
included, at most 3x; key-route main paths with 10 routes at most 4x.

Run ``python -m pytest benches/bench_mainpath.py --benchmark-enable -s`` for
the ratio table; ``TOPORANK_BENCH_SMALL=1`` shrinks the graph to a smoke test.
"""

from __future__ import annotations

import pytest
from conftest import interleaved, scaled

import toporank
from toporank._synthetic import citation_dag

PAPERS = scaled(1_000_000, 20_000)
CITATIONS = 10

CASES = {
    "path_counts spc": (lambda g: toporank.path_counts(g, kind="spc"), 2),
    "path_counts splc": (lambda g: toporank.path_counts(g, kind="splc"), 2),
    "path_counts spnp": (lambda g: toporank.path_counts(g, kind="spnp"), 2),
    "main_path global (spc)": (lambda g: toporank.main_path(g), 3),
    "main_path global (spnp)": (lambda g: toporank.main_path(g, weight="spnp"), 3),
    "main_path forward (spc)": (lambda g: toporank.main_path(g, method="forward"), 3),
    "main_path key-route k=10": (
        lambda g: toporank.main_path(g, method="key-route", routes=10),
        4,
    ),
    "main_path key-route k=10 global": (
        lambda g: toporank.main_path(g, method="key-route", routes=10, extend="global"),
        4,
    ),
}


@pytest.fixture(scope="module")
def graph():
    src, dst, _ = citation_dag(PAPERS, CITATIONS, seed=0)
    built = toporank.Graph.from_edges(src, dst, n=PAPERS)
    return toporank.Graph.from_csr(built.indptr, built.indices)


@pytest.mark.parametrize("case", list(CASES))
def test_ratio_to_fifo_order(benchmark, graph, ratio_table, case):
    work, target = CASES[case]
    benchmark.pedantic(lambda: work(graph), rounds=1, iterations=1)
    times = interleaved(
        {"fifo": lambda: toporank.order(graph, tie="queue"), "case": lambda: work(graph)},
        repeat=3,
    )
    ratio = times["case"] / times["fifo"]
    benchmark.extra_info.update(case=case, ratio_to_fifo_order=round(ratio, 3))
    ratio_table(f"{case} / FIFO order ({graph.m:,} edges)", ratio, f"target <= {target}")
    found = work(graph)
    if isinstance(found, toporank.MainPath):
        assert len(found) > 0
