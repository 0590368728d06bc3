"""toporank.distributed on a real two-process Dask cluster, checked against networkx."""

from __future__ import annotations

import logging

import networkx as nx
import numpy as np
import pytest

import toporank
from toporank._synthetic import citation_dag, with_back_edges

pytest.importorskip("dask", reason="the 'dask' extra is not installed: pip install '.[dask]'")
pytest.importorskip(
    "distributed", reason="the 'dask' extra is not installed: pip install '.[dask]'"
)

import dask.dataframe as dd
import pandas as pd
from distributed import Client

import toporank.distributed as td


@pytest.fixture(scope="session")
def client():
    # Loopback only and no dashboard: nothing listens beyond this machine.
    cluster = td._loopback_cluster(n_workers=2, threads_per_worker=1)
    c = Client(cluster)
    yield c
    c.close()
    cluster.close()


def frame(src, dst, npartitions=3, names=("src", "dst")):
    data = pd.DataFrame({names[0]: np.asarray(src), names[1]: np.asarray(dst)})
    return dd.from_pandas(data, npartitions=npartitions, sort=False)


def nx_levels(n, src, dst):
    """Level per node from networkx topological_generations."""
    g = nx.DiGraph()
    g.add_nodes_from(range(n))
    g.add_edges_from(zip(src.tolist(), dst.tolist()))
    level = np.full(n, -1)
    for k, generation in enumerate(nx.topological_generations(g)):
        level[list(generation)] = k
    return level


def levels_of(result):
    got = result.compute()
    assert got["node"].tolist() == list(range(len(got)))
    return got["level"].to_numpy()


@pytest.mark.parametrize("partitions", [1, 2, 3, 5])
def test_levels_match_networkx_and_single_machine(client, partitions):
    src, dst, _ = citation_dag(300, 4, seed=partitions)
    got = levels_of(td.levels(frame(src, dst), client=client, partitions=partitions))
    # Reference: networkx topological_generations, and toporank.levels on one machine.
    np.testing.assert_array_equal(got, nx_levels(300, src, dst))
    np.testing.assert_array_equal(got, toporank.levels((src, dst), n=300))


def test_long_chain_split_across_shards(client):
    n = 400
    path = np.arange(n)
    edges = frame(path[:-1], path[1:], npartitions=2)
    run = td.peel(edges, client=client, partitions=4)
    np.testing.assert_array_equal(levels_of(run.levels), np.arange(n))  # from memory: a path
    # Each of the three shard crossings costs a round; the last shard sends nothing.
    assert run.rounds == 4 and run.shards == 4
    # Reversed ids: the chain runs from the last shard to the first.
    back = td.peel(frame(path[1:][::-1], path[:-1][::-1]), client=client, partitions=4)
    np.testing.assert_array_equal(levels_of(back.levels), np.arange(n)[::-1])
    assert back.rounds == 4
    # Shuffled ids: a crossing at almost every edge, still exact.
    rng = np.random.default_rng(3)
    ids = rng.permutation(60)
    shuffled = td.peel(frame(ids[:-1], ids[1:]), client=client, partitions=3)
    expected = np.empty(60, dtype=np.int64)
    expected[ids] = np.arange(60)
    np.testing.assert_array_equal(levels_of(shuffled.levels), expected)


def test_isolated_nodes_have_level_zero(client):
    src, dst = np.array([0, 2, 2, 7]), np.array([2, 5, 7, 5])
    for partitions in (1, 3, 6):
        got = levels_of(td.levels(frame(src, dst, 2), client=client, partitions=partitions, n=12))
        np.testing.assert_array_equal(got, nx_levels(12, src, dst))  # networkx
        assert got.tolist() == [0, 0, 1, 0, 0, 3, 0, 2, 0, 0, 0, 0]


def test_cyclic_graph_reports_unlevelled_nodes(client):
    src, dst, _ = citation_dag(200, 3, seed=5)
    src, dst = with_back_edges(src, dst, 3, seed=5)
    g = nx.DiGraph(list(zip(src.tolist(), dst.tolist())))
    g.add_nodes_from(range(200))
    # Reference (networkx): a node is unlevelled iff a cycle reaches it.
    on_cycle = {v for c in nx.strongly_connected_components(g) if len(c) > 1 for v in c}
    stuck = set(on_cycle)
    for v in on_cycle:
        stuck |= nx.descendants(g, v)
    assert stuck, "the back edges must create a cycle"
    for partitions in (1, 4):
        with pytest.raises(td.UnlevelledNodesError) as caught:
            td.levels(frame(src, dst), client=client, partitions=partitions)
        assert caught.value.count == len(stuck)
        assert caught.value.sample.tolist() == sorted(stuck)[:10]
        assert isinstance(caught.value, ValueError)
        marked = levels_of(
            td.levels(frame(src, dst), client=client, partitions=partitions, on_cycle="mark")
        )
        assert set(np.flatnonzero(marked == -1).tolist()) == stuck
        rest = g.subgraph(set(range(200)) - stuck)
        for k, generation in enumerate(nx.topological_generations(rest)):
            assert (marked[list(generation)] == k).all()
        # The order leaves them out and puts every other edge forward.
        got = td.order(frame(src, dst), client=client, partitions=partitions, on_cycle="mark")
        node = got.compute()["node"].tolist()
        assert sorted(node) == sorted(rest.nodes)
        rank = {v: k for k, v in enumerate(node)}
        assert all(rank[u] < rank[v] for u, v in rest.edges)


def check_order(got, n, src, dst):
    node = got["node"].to_numpy()
    level = got["level"].to_numpy()
    assert got["position"].tolist() == list(range(n))
    assert sorted(node.tolist()) == list(range(n))
    position = np.empty(n, dtype=np.int64)
    position[node] = np.arange(n)
    assert (position[src] < position[dst]).all()  # every edge points forward
    # Level-major, ids ascending inside a level.
    assert (np.lexsort((node, level)) == np.arange(n)).all()
    return node


def test_order_is_a_topological_order_for_every_partitioning(client, tmp_path):
    src, dst, _ = citation_dag(250, 5, seed=9)
    reference = nx_levels(250, src, dst)
    orders = []
    for partitions in (1, 2, 5):
        got = td.order(frame(src, dst, 4), client=client, partitions=partitions).compute()
        node = check_order(got, 250, src, dst)
        np.testing.assert_array_equal(got["level"].to_numpy(), reference[node])  # networkx
        orders.append(node.tolist())
    assert orders[0] == orders[1] == orders[2]
    # networkx agrees that it is a topological order.
    g = nx.DiGraph(list(zip(src.tolist(), dst.tolist())))
    assert nx.is_directed_acyclic_graph(g)
    rank = {v: k for k, v in enumerate(orders[0])}
    assert all(rank[u] < rank[v] for u, v in g.edges)

    out = td.order(frame(src, dst), client=client, to=str(tmp_path / "order"))
    written = pd.read_parquet(out).sort_values("position")
    assert written["node"].tolist() == orders[0]


def test_parquet_dataset_folder_and_glob(client, tmp_path):
    src, dst, _ = citation_dag(150, 3, seed=2)
    folder = tmp_path / "edges"
    folder.mkdir()
    pieces = np.array_split(np.arange(len(src)), 4)
    for k, rows in enumerate(pieces):
        pd.DataFrame({"cited": src[rows], "citing": dst[rows]}).to_parquet(
            folder / f"part-{k}.parquet"
        )
    expected = toporank.levels((src, dst), n=150)
    for path in (folder, str(folder / "*.parquet")):
        got = td.levels(path, client=client, source="cited", target="citing")
        np.testing.assert_array_equal(levels_of(got), expected)


def test_bad_input_is_a_graph_input_error(client):
    good = frame([0, 1], [1, 2])
    with pytest.raises(toporank.GraphInputError, match="no column 'from'"):
        td.levels(good, client=client, source="from")
    with pytest.raises(toporank.GraphInputError, match="integers"):
        td.levels(frame([0.5, 1.0], [1.0, 2.0]), client=client)
    with pytest.raises(toporank.GraphInputError, match=">= 0"):
        td.levels(frame([0, -3], [1, 2]), client=client)
    with pytest.raises(toporank.GraphInputError, match="n = 2"):
        td.levels(good, client=client, n=2)
    with pytest.raises(toporank.GraphInputError, match="on_cycle"):
        td.levels(good, client=client, on_cycle="ignore")
    with pytest.raises(toporank.GraphInputError, match="Parquet"):
        td.levels([(0, 1)], client=client)


def test_ids_counts_and_dtypes_beyond_what_fits_are_named(client):
    # An id of 2**64 - 1 used to overflow inside a worker's task.
    big = frame(np.array([0, 2**64 - 1], dtype=np.uint64), np.array([1, 2], dtype=np.uint64))
    with pytest.raises(toporank.GraphInputError, match="node id 18446744073709551615, too large"):
        td.levels(big, client=client)
    with pytest.raises(toporank.GraphInputError, match="node id 9223372036854775807, too large"):
        td.levels(frame([0, 2**63 - 1], [1, 2]), client=client)
    good = frame([0, 1], [1, 2])
    with pytest.raises(toporank.GraphInputError, match="n = 18446744073709551616 is not a node"):
        td.levels(good, client=client, n=2**64)
    with pytest.raises(toporank.GraphInputError, match="n must be a non-negative integer"):
        td.levels(good, client=client, n="3")
    with pytest.raises(toporank.GraphInputError, match=r"partitions must be an integer, got 1\.5"):
        td.levels(good, client=client, partitions=1.5)
    with pytest.raises(toporank.GraphInputError, match="partitions must be >= 1, got 0"):
        td.levels(good, client=client, partitions=0)
    nullable = pd.DataFrame(
        {"src": pd.array([0, None], dtype="Int64"), "dst": pd.array([1, 2], dtype="Int64")}
    )
    with pytest.raises(toporank.GraphInputError, match="nullable dtype Int64"):
        td.levels(dd.from_pandas(nullable, npartitions=1), client=client)


def test_rounds_are_logged(client, caplog):
    with caplog.at_level(logging.INFO, logger="toporank.distributed"):
        run = td.peel(frame([0, 1, 2], [1, 2, 3]), client=client, partitions=2)
    rounds = [r for r in caplog.records if r.getMessage().startswith("round ")]
    assert len(rounds) == run.rounds == 2
    assert "4 of 4" in rounds[-1].getMessage()


@pytest.mark.parametrize("dtype", [np.int32, np.int64])
def test_kernel_widths_agree_and_reject_bad_messages(dtype):
    def a(*values):
        return np.array(values, dtype=dtype)

    # One shard of two own nodes (0 -> 1) and one outside slot owned by group 1.
    remaining, level = a(0, 1), a(0, 0)
    step = toporank._core.peel_shard(
        a(0, 2, 2), a(1, 2), a(1), 2, remaining, level, a(), a(), a(), True
    )
    peeled, slots, counts, levels, offsets = (
        step.peeled,
        step.slots,
        step.counts,
        step.levels,
        step.offsets,
    )
    assert (peeled, level.tolist(), remaining.tolist()) == (2, [0, 1], [0, 0])
    assert (slots.tolist(), counts.tolist(), levels.tolist()) == ([0], [1], [1])
    assert offsets.tolist() == [0, 0, 1]
    with pytest.raises(toporank.GraphInputError, match="inbox nodes"):
        toporank._core.peel_shard(
            a(0, 2, 2), a(1, 2), a(1), 2, a(0, 1), a(0, 0), a(7), a(1), a(1), False
        )


def test_progress_bar_counts_levelled_nodes(client, capsys):
    td.levels(frame([0, 1, 2], [1, 2, 3]), client=client, partitions=2, progress=True)
    err = capsys.readouterr().err
    assert "levelled" in err and "4/4" in err


@pytest.mark.parametrize("partitions", [1, 3])
def test_order_breaks_ties_by_a_user_column(client, partitions):
    n = 240
    src, dst, _ = citation_dag(n, 4, seed=13)
    rng = np.random.default_rng(partitions)
    listed = rng.permutation(n)[: n - 30]  # 30 nodes have no row: they come last in their level
    year = rng.integers(1990, 1995, len(listed)).astype(float)
    year[:10] = np.nan  # missing values come last too
    nodes = dd.from_pandas(
        pd.DataFrame({"node": np.append(listed, [n + 5]), "year": np.append(year, [0.0])}),
        npartitions=3,
    )
    got = td.order(
        frame(src, dst), client=client, partitions=partitions, tie="year", nodes=nodes
    ).compute()
    # Reference: networkx levels, then (level, year with missing last, id) sorted by pandas.
    level = nx_levels(n, src, dst)
    key = pd.Series(year, index=listed).reindex(np.arange(n)).to_numpy()
    expected = (
        pd.DataFrame({"node": np.arange(n), "level": level, "key": key})
        .sort_values(["level", "key", "node"], na_position="last", kind="mergesort")["node"]
        .tolist()
    )
    assert got["node"].tolist() == expected
    assert got["position"].tolist() == list(range(n))
    np.testing.assert_array_equal(got["level"].to_numpy(), level[got["node"].to_numpy()])
    g = nx.DiGraph(list(zip(src.tolist(), dst.tolist())))
    rank = {v: k for k, v in enumerate(expected)}
    assert all(rank[u] < rank[v] for u, v in g.edges)  # still a topological order (networkx)


def test_tie_arguments_are_checked(client):
    good = frame([0, 1], [1, 2])
    nodes = dd.from_pandas(pd.DataFrame({"node": [0, 1, 2], "rank": [3, 2, 1]}), npartitions=1)
    with pytest.raises(toporank.GraphInputError, match="needs nodes="):
        td.order(good, client=client, tie="rank")
    with pytest.raises(toporank.GraphInputError, match="name the column with tie="):
        td.order(good, client=client, nodes=nodes)
    with pytest.raises(toporank.GraphInputError, match="no column 'year'"):
        td.order(good, client=client, tie="year", nodes=nodes)
    twice = dd.from_pandas(pd.DataFrame({"node": [0, 0], "rank": [1, 2]}), npartitions=1)
    with pytest.raises(toporank.GraphInputError, match="more than once"):
        td.order(good, client=client, tie="rank", nodes=twice).compute()
    # A key column reverses the id order inside a level (from memory: 1 and 2 share level 1).
    wide = frame([0, 0], [1, 2])
    rank = dd.from_pandas(pd.DataFrame({"node": [1, 2], "rank": [9, 4]}), npartitions=1)
    got = td.order(wide, client=client, tie="rank", nodes=rank).compute()
    assert got["node"].tolist() == [0, 2, 1]


def test_report_hands_the_unlevelled_part_to_the_cycle_tools(client):
    src, dst, _ = citation_dag(200, 3, seed=7)
    src, dst = with_back_edges(src, dst, 4, seed=7)
    g = nx.DiGraph(list(zip(src.tolist(), dst.tolist())))
    g.add_nodes_from(range(200))
    cyclic = [sorted(c) for c in nx.strongly_connected_components(g) if len(c) > 1]
    assert cyclic, "the back edges must create a cycle"
    for call in (td.levels, td.order):
        with pytest.raises(td.UnlevelledNodesError) as caught:
            call(frame(src, dst), client=client, partitions=3, on_cycle="report")
        cycles = caught.value.cycles
        assert cycles is not None and len(cycles) == len(cyclic)  # networkx components
        starts = set()
        for cycle in cycles:
            members = next(c for c in cyclic if cycle[0] in c)
            assert cycle[0] == members[0] and set(cycle.tolist()) <= set(members)
            for k, u in enumerate(cycle.tolist()):
                assert g.has_edge(u, int(cycle[(k + 1) % len(cycle)]))  # a real cycle
            # networkx BFS: shortest cycle through the component's smallest node.
            inside = g.subgraph(members)
            lengths = nx.single_source_shortest_path_length(inside, members[0])
            assert len(cycle) == min(lengths[u] + 1 for u in inside.predecessors(members[0]))
            starts.add(members[0])
        assert len(starts) == len(cyclic)
        assert "cycle(s) found among them" in str(caught.value)
    # Above the limit nothing is gathered, and the message says why.
    with pytest.raises(td.UnlevelledNodesError, match="gather_limit = 3") as caught:
        td.levels(frame(src, dst), client=client, on_cycle="report", gather_limit=3)
    assert caught.value.cycles is None
    with pytest.raises(toporank.GraphInputError, match="gather_limit must be at least 1"):
        td.levels(frame(src, dst), client=client, on_cycle="report", gather_limit=0)
