"""Graphs with cycles: components, condense-mode order and cycle cuts, timed
against baselines measured in the same run.

A citation-like DAG of ``N`` papers citing ``K`` older ones each (10M edges by
default) gets ``BACK`` reversed copies of random edges, which creates many
non-trivial strongly connected components. Both sides of each ratio read the
same int32 CSR (duplicates merged, since scipy's strong components do not
return on a row holding a duplicate entry).

Ratios (ours / baseline; the targets come from the feature's request):
* ``components`` / ``scipy.sparse.csgraph.connected_components(strong)``, target <= 1;
* ``order(on_cycle="condense")`` on the cyclic graph / FIFO ``order`` on the DAG, target <= 3;
* ``cut_cycles`` / FIFO ``order`` on the DAG, reported with the cut size;
* ``cut_cycles`` on two hostile shapes / FIFO ``order`` on the graph left by
  the cut, target <= 20, timed in turns: a local DAG (edges ``u -> u + 1..20``)
  plus the one back edge ``n-1 -> 0``, and a uniform random graph. Both have
  ``CUT_EDGES`` edges (``TOPORANK_BENCH_CUT_EDGES``, default 1,500,000) and
  ``CUT_EDGES / CUT_DEGREE`` nodes (``TOPORANK_BENCH_CUT_DEGREE``, default 10).

Run: ``pytest benches/bench_cycles.py --benchmark-enable -p no:cacheprovider``.
``TOPORANK_BENCH_SMALL=1`` shrinks the graph for a quick smoke run.
"""

from __future__ import annotations

import os
import time

import numpy as np
import pytest
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components

import toporank
from toporank._synthetic import citation_dag, with_back_edges

SMALL = os.environ.get("TOPORANK_BENCH_SMALL") == "1"
N = 2_000 if SMALL else 1_000_000
K = 10
BACK = 20 if SMALL else 5_000
ROUNDS = 1 if SMALL else 3
CUT_EDGES = 20_000 if SMALL else int(os.environ.get("TOPORANK_BENCH_CUT_EDGES", 1_500_000))
CUT_DEGREE = int(os.environ.get("TOPORANK_BENCH_CUT_DEGREE", 10))

RESULTS: list[tuple[str, float, float, float | None, str]] = []


def canonical_csr(src: np.ndarray, dst: np.ndarray, n: int) -> sp.csr_array:
    matrix = sp.csr_array((np.ones(len(src)), (src, dst)), shape=(n, n))
    matrix.sum_duplicates()
    matrix.indptr = matrix.indptr.astype(np.int32)
    matrix.indices = matrix.indices.astype(np.int32)
    return matrix


@pytest.fixture(scope="module")
def graphs():
    src, dst, _ = citation_dag(N, K, seed=1)
    back_src, back_dst = with_back_edges(src, dst, BACK, seed=2)
    return canonical_csr(src, dst, N), canonical_csr(back_src, back_dst, N)


@pytest.fixture(scope="module", autouse=True)
def table(request):
    yield
    reporter = request.config.pluginmanager.get_plugin("terminalreporter")
    lines = [
        "",
        f"bench_cycles: {N:,} nodes, {N * K:,} citation edges + {BACK:,} back-edges, "
        f"best of {ROUNDS}",
        f"{'measure':<48} {'ours s':>8} {'base s':>8} {'ratio':>6} {'target':>7}  note",
    ]
    for name, ours, base, target, note in RESULTS:
        goal = "" if target is None else f"<= {target:g}"
        lines.append(f"{name:<48} {ours:8.4f} {base:8.4f} {ours / base:6.2f} {goal:>7}  {note}")
    capture = request.config.pluginmanager.get_plugin("capturemanager")
    with capture.global_and_fixture_disabled():
        for line in lines:
            reporter.write_line(line)


def best_of(run, rounds: int = ROUNDS) -> float:
    best = float("inf")
    for _ in range(rounds):
        start = time.perf_counter()
        run()
        best = min(best, time.perf_counter() - start)
    return best


def timed(benchmark, run):
    """Run ``run`` under pytest-benchmark; return (result, best seconds)."""
    result = benchmark.pedantic(run, rounds=ROUNDS, iterations=1)
    stats = getattr(benchmark, "stats", None)
    if stats is not None and not getattr(benchmark, "disabled", True):
        return result, stats.stats.min
    return result, best_of(run, 1)


def record(benchmark, name, ours, base, target=None, note=""):
    benchmark.extra_info.update(
        ours_s=ours, baseline_s=base, ratio=ours / base, target=target, nodes=N, back_edges=BACK
    )
    RESULTS.append((name, ours, base, target, note))


def test_components_vs_scipy(benchmark, graphs):
    _, cyclic = graphs
    labels, ours = timed(benchmark, lambda: toporank.components(cyclic))
    count, _ = connected_components(cyclic, directed=True, connection="strong")
    base = best_of(lambda: connected_components(cyclic, directed=True, connection="strong"))
    assert labels.max() + 1 == count
    sizes = np.bincount(labels)
    note = f"{count:,} components, {np.sum(sizes > 1):,} non-trivial, largest {sizes.max():,}"
    record(benchmark, "components / scipy strong components", ours, base, 1.0, note)


def test_condense_order_vs_fifo_on_dag(benchmark, graphs):
    dag, cyclic = graphs
    order, ours = timed(benchmark, lambda: toporank.order(cyclic, on_cycle="condense"))
    base = best_of(lambda: toporank.order(dag))
    assert len(order) == N
    record(benchmark, 'order(on_cycle="condense") / FIFO order on DAG', ours, base, 3.0)


def test_cut_cycles(benchmark, graphs):
    dag, cyclic = graphs
    cut, ours = timed(benchmark, lambda: toporank.cut_cycles(cyclic))
    base = best_of(lambda: toporank.order(dag))
    assert len(cut.order) == N
    note = (
        f"cut {len(cut):,} edges of {cyclic.nnz:,} ({BACK:,} back-edges were added), "
        f"{cut.untested:,} untested"
    )
    record(benchmark, "cut_cycles / FIFO order on DAG", ours, base, None, note)


def local_dag_with_back_edge(n: int, m: int, seed: int = 5) -> tuple[np.ndarray, np.ndarray]:
    """Edges ``u -> u + 1..20`` (clipped at ``n - 1``) plus ``n - 1 -> 0``.

    Every cycle passes through the last edge, so one edge cuts them all.
    """
    rng = np.random.default_rng(seed)
    src = rng.integers(0, n - 1, m - 1)
    dst = np.minimum(src + rng.integers(1, 21, m - 1), n - 1)
    return np.append(src, n - 1), np.append(dst, 0)


def uniform_random_graph(n: int, m: int, seed: int = 6) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    return rng.integers(0, n, m), rng.integers(0, n, m)


@pytest.mark.parametrize("shape", ["local DAG + back edge", "uniform random"])
def test_cut_cycles_on_hostile_shapes(benchmark, shape):
    n = max(CUT_EDGES // CUT_DEGREE, 2)
    build = local_dag_with_back_edge if shape.startswith("local") else uniform_random_graph
    src, dst = build(n, CUT_EDGES)
    graph = toporank.Graph.from_edges(src, dst, n=n)
    cut = benchmark.pedantic(lambda: toporank.cut_cycles(graph), rounds=1, iterations=1)
    keep = np.ones(len(src), dtype=bool)
    keep[cut.edge_index] = False
    rest = toporank.Graph.from_edges(src[keep], dst[keep], n=n)
    # Timed in turns so that load on the machine affects both alike.
    ours, base = float("inf"), float("inf")
    for _ in range(ROUNDS):
        ours = min(ours, best_of(lambda: toporank.cut_cycles(graph), 1))
        base = min(base, best_of(lambda: toporank.order(rest), 1))
    if shape.startswith("local"):
        assert len(cut) >= 1
    note = f"n = {n:,}, m = {CUT_EDGES:,}, cut {len(cut):,} edges"
    record(benchmark, f"cut_cycles, {shape} / FIFO on the rest", ours, base, 20.0, note)
