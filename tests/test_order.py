"""order / positions / verify_order: semantics, cross-checks and input handling."""

from __future__ import annotations

import pickle

import networkx as nx
import numpy as np
import pytest
import scipy.sparse as sp
from hypothesis import given
from hypothesis import strategies as st

import toporank
from graphs import check_topological, edge_lists, to_networkx
from toporank import CyclicGraphError, GraphInputError, InvalidOrderError


def reference_order(src, dst, n, pick):
    """The documented semantics, plainly: sources enter in ascending id,
    successors in input (row) order; ``pick(ready)`` is the index emitted next."""
    succ = [[] for _ in range(n)]
    indegree = [0] * n
    for u, v in zip(src.tolist(), dst.tolist()):
        succ[u].append(v)
        indegree[v] += 1
    ready = [v for v in range(n) if indegree[v] == 0]
    out = []
    while ready:
        u = ready.pop(pick(ready))
        out.append(u)
        for v in succ[u]:
            indegree[v] -= 1
            if indegree[v] == 0:
                ready.append(v)
    return out


def assert_real_cycle(src, dst, cycle):
    edges = set(zip(src.tolist(), dst.tolist()))
    cycle = list(cycle)
    assert len(cycle) >= 1 and len(set(cycle)) == len(cycle)
    for a, b in zip(cycle, cycle[1:] + cycle[:1]):
        assert (a, b) in edges, f"{a} -> {b} is not an edge"


# --- cross-checks against networkx -------------------------------------------


@given(edge_lists(acyclic=True))
def test_priority_without_key_is_networkx_lexicographical_order(graph):
    src, dst, n = graph
    ours = toporank.order((src, dst), tie="priority", n=n).tolist()
    # networkx: lexicographical_topological_sort is the smallest-id-first order.
    assert ours == list(nx.lexicographical_topological_sort(to_networkx(src, dst, n)))


@given(edge_lists(acyclic=True), st.data())
def test_priority_with_integer_key_matches_networkx(graph, data):
    src, dst, n = graph
    key = np.array(data.draw(st.lists(st.integers(-5, 5), min_size=n, max_size=n)), dtype=np.int64)
    ours = toporank.order((src, dst), tie="priority", key=key, n=n).tolist()
    g = to_networkx(src, dst, n)
    expected = list(nx.lexicographical_topological_sort(g, key=lambda v: (key[v], v)))
    assert ours == expected
    down = toporank.order((src, dst), tie="priority", key=key, descending=True, n=n).tolist()
    assert down == list(nx.lexicographical_topological_sort(g, key=lambda v: (-key[v], v)))


@given(edge_lists())
def test_cycle_detection_agrees_with_networkx(graph):
    src, dst, n = graph
    is_dag = nx.is_directed_acyclic_graph(to_networkx(src, dst, n))
    try:
        result = toporank.order((src, dst), n=n)
    except CyclicGraphError as err:
        assert not is_dag
        assert_real_cycle(src, dst, err.cycle)
        assert len(err.order) + len(err.blocked) == n
        assert set(err.cycle.tolist()) <= set(err.blocked.tolist())
        partial = toporank.order((src, dst), n=n, on_cycle="partial")
        assert partial.tolist() == err.order.tolist()
    else:
        assert is_dag
        check_topological(src, dst, n, result)


# --- the documented semantics -------------------------------------------------


@given(edge_lists(acyclic=True))
def test_every_policy_gives_a_valid_order(graph):
    src, dst, n = graph
    for tie, extra in [("queue", {}), ("stack", {}), ("priority", {}), ("random", {"seed": 5})]:
        result = toporank.order((src, dst), tie=tie, n=n, **extra)
        check_topological(src, dst, n, result)
        toporank.verify_order((src, dst), result, n=n)


@given(edge_lists())
def test_queue_and_stack_follow_the_reference(graph):
    src, dst, n = graph
    for tie, pick in [("queue", lambda r: 0), ("stack", lambda r: len(r) - 1)]:
        expected = reference_order(src, dst, n, pick)
        got = toporank.order((src, dst), tie=tie, n=n, on_cycle="partial").tolist()
        assert got == expected


def test_sources_enter_in_ascending_id():
    # Four isolated nodes: the queue emits the smallest id first, the stack the largest.
    assert toporank.order((np.array([], int), np.array([], int)), n=4).tolist() == [0, 1, 2, 3]
    empty = (np.array([], int), np.array([], int))
    assert toporank.order(empty, n=4, tie="stack").tolist() == [3, 2, 1, 0]


def test_successors_enter_in_stored_row_order():
    # 0 -> 3, 0 -> 1, 0 -> 2 stored in that order: the queue keeps it.
    edges = np.array([[0, 3], [0, 1], [0, 2]])
    assert toporank.order(edges).tolist() == [0, 3, 1, 2]
    assert toporank.order(edges, tie="stack").tolist() == [0, 2, 1, 3]


def test_empty_and_single_node_graphs():
    assert toporank.order(np.zeros((0, 2), dtype=np.int64)).tolist() == []
    assert toporank.order(sp.csr_array((1, 1))).tolist() == [0]
    assert toporank.order([]).tolist() == []
    with pytest.raises(CyclicGraphError) as info:
        toporank.order(np.array([[0, 0]]))
    assert info.value.cycle.tolist() == [0]


def test_random_is_reproducible_and_covers_the_ready_set():
    n = 6
    empty = (np.array([], int), np.array([], int))
    first = toporank.order(empty, n=n, tie="random", seed=123)
    assert first.tolist() == toporank.order(empty, n=n, tie="random", seed=123).tolist()
    # Uniform pick: across seeds every node comes first about 1/n of the time.
    counts = np.bincount([toporank.order(empty, n=n, tie="random", seed=s)[0] for s in range(3000)])
    assert counts.min() > 3000 / n * 0.75 and counts.max() < 3000 / n * 1.25
    # Unseeded runs draw fresh entropy.
    unseeded = {tuple(toporank.order(empty, n=n, tie="random").tolist()) for _ in range(20)}
    assert len(unseeded) > 1


def test_float_key_priority_and_descending():
    # Invented papers with publication years; cited paper comes first.
    year = np.array([2001.0, 1999.5, 2003.0, 1999.5])
    edges = np.array([[1, 2], [0, 2]])
    assert toporank.order(edges, tie="priority", key=year, n=4).tolist() == [1, 3, 0, 2]
    # Descending: 2003 becomes ready once 0 and 1 are out, and beats 1999.5.
    assert toporank.order(edges, tie="priority", key=year, descending=True, n=4).tolist() == [
        0,
        1,
        2,
        3,
    ]


def test_published_example_dressing_dag():
    # Source: Cormen, Leiserson, Rivest & Stein, Introduction to Algorithms
    # (3rd ed.), Figure 22.7 (edges from memory). The order the book prints
    # after its DFS-based sort is a valid order; Kahn's queue order is too.
    edges = [
        ("undershorts", "pants"),
        ("undershorts", "shoes"),
        ("pants", "belt"),
        ("pants", "shoes"),
        ("belt", "jacket"),
        ("shirt", "belt"),
        ("shirt", "tie"),
        ("tie", "jacket"),
        ("socks", "shoes"),
    ]
    pairs = edges  # the watch has no edges, so no pair names it
    book = ["socks", "undershorts", "pants", "shoes", "watch", "shirt", "belt", "tie", "jacket"]
    g = toporank.Graph.from_pairs(pairs)
    toporank.verify_order(g, [label for label in book if label != "watch"])
    got = toporank.order(g).tolist()
    assert got == ["undershorts", "shirt", "socks", "pants", "tie", "belt", "shoes", "jacket"]


# --- input forms ----------------------------------------------------------------


def _sample():
    src = np.array([4, 0, 0, 2, 1, 4])
    dst = np.array([2, 3, 1, 3, 3, 0])
    return src, dst, 6


@pytest.mark.parametrize("fmt", ["csr", "csc", "coo", "lil", "dok", "bsr"])
def test_every_sparse_format_gives_the_same_order(fmt):
    src, dst, n = _sample()
    matrix = sp.coo_array((np.ones(len(src)), (src, dst)), shape=(n, n)).asformat(fmt)
    if fmt == "coo":
        # COO keeps its stored (input) order, like an edge list.
        expected = toporank.order((src, dst), n=n)
    else:
        # The other formats store each row's entries by column, as scipy's CSR does.
        expected = toporank.order(
            sp.coo_array((np.ones(len(src)), (src, dst)), shape=(n, n)).tocsr()
        )
    assert toporank.order(matrix).tolist() == expected.tolist()
    check_topological(src, dst, n, expected)


def test_scipy_sparse_matrix_class_and_explicit_zeros_count():
    matrix = sp.csr_matrix(
        (np.array([0.0, 5.0]), (np.array([1, 0]), np.array([0, 2]))), shape=(3, 3)
    )
    assert toporank.order(matrix).tolist() == [1, 0, 2]


def test_edge_forms_agree():
    src, dst, n = _sample()
    by_tuple = toporank.order((src, dst), n=n)
    by_array = toporank.order(np.column_stack([src, dst]), n=n)
    assert by_tuple.tolist() == by_array.tolist()
    for dtype in (np.int8, np.uint16, np.int32, np.uint64):
        assert (
            toporank.order((src.astype(dtype), dst.astype(dtype)), n=n).tolist()
            == by_tuple.tolist()
        )


def test_labels_are_numbered_first_seen_and_returned():
    pairs = [("lib-core", "lib-io"), ("lib-io", "app"), ("lib-core", "app"), ("docs", "app")]
    result = toporank.order(pairs)
    assert result.dtype == object
    assert result.tolist() == ["lib-core", "docs", "lib-io", "app"]
    g = toporank.Graph.from_pairs(pairs)
    assert g.labels.tolist() == ["lib-core", "lib-io", "app", "docs"]
    key = {"lib-core": 3, "lib-io": 1, "app": 0, "docs": 2}
    assert toporank.order(pairs, tie="priority", key=key).tolist() == [
        "docs",
        "lib-core",
        "lib-io",
        "app",
    ]


def test_labelled_cycle_error_speaks_labels():
    pairs = [("a", "b"), ("b", "c"), ("c", "b"), ("x", "a")]
    with pytest.raises(CyclicGraphError) as info:
        toporank.order(pairs)
    err = info.value
    assert sorted(err.cycle.tolist()) == ["b", "c"]
    assert err.order.tolist() == ["x", "a"] and err.blocked.tolist() == ["b", "c"]
    assert "b -> c -> b" in str(err)
    clone = pickle.loads(pickle.dumps(err))
    assert clone.cycle.tolist() == err.cycle.tolist() and str(clone) == str(err)


def test_tuple_labels_stay_whole():
    pairs = [((1, "a"), (2, "b"))]
    assert toporank.order(pairs).tolist() == [(1, "a"), (2, "b")]


# --- bad input: type and a message naming the value -------------------------


@pytest.mark.parametrize(
    ("graph", "kwargs", "needle"),
    [
        ((np.array([0.0, 1.0]), np.array([1.0, 2.0])), {}, "float64"),
        ((np.array([True]), np.array([False])), {}, "bool"),
        ((np.array([0, -3]), np.array([1, 1])), {}, "-3"),
        ((np.array([0, 1]), np.array([1, 9])), {"n": 4}, "dst[1] = 9"),
        ((np.array([0, 7]), np.array([1, 1])), {"n": 4}, "src[1] = 7"),
        (np.array([[0, 1, 2]]), {}, "(1, 3)"),
        (sp.csr_array((2, 3)), {}, "(2, 3)"),
        ("edges.tsv", {}, "str"),
        ([(1, 2, 3)], {}, "(1, 2, 3)"),
        ([(1, 2)], {"n": 3}, "labelled"),
        ((np.array([0, 1]), np.array([1, 2])), {"n": -1}, "-1"),
        ((np.array([0, 1]), np.array([1, 2])), {"tie": "fifo"}, "'fifo'"),
        ((np.array([0, 1]), np.array([1, 2])), {"on_cycle": "ignore"}, "'ignore'"),
        ((np.array([0, 1]), np.array([1, 2])), {"tie": "queue", "key": [1, 2, 3]}, "priority"),
        ((np.array([0, 1]), np.array([1, 2])), {"seed": 3}, "random"),
        ((np.array([0, 1]), np.array([1, 2])), {"tie": "random", "seed": -1}, "-1"),
        ((np.array([0, 1]), np.array([1, 2])), {"tie": "priority", "key": [1, 2]}, "(2,)"),
        (
            (np.array([0, 1]), np.array([1, 2])),
            {"tie": "priority", "key": [1.0, np.nan, 2.0]},
            "key[1]",
        ),
        (
            (np.array([0, 1]), np.array([1, 2])),
            {"tie": "priority", "key": [True, False, True]},
            "bool",
        ),
        ((np.array([0, 1]), np.array([1, 2])), {"tie": "priority", "key": {"a": 1}}, "mapping"),
        ([("a", "b")], {"tie": "priority", "key": {"a": 1}}, "'b'"),
        ((np.array([0], np.uint64), np.array([2**63 + 5], np.uint64)), {}, str(2**63 + 5)),
    ],
)
def test_bad_input_raises_naming_the_value(graph, kwargs, needle):
    with pytest.raises(GraphInputError) as info:
        toporank.order(graph, **kwargs)
    assert needle in str(info.value)
    assert isinstance(info.value, ValueError)


def test_malformed_csr_is_refused_by_the_core():
    bad_index = sp.csr_array((np.ones(1), np.array([5]), np.array([0, 1, 1])), shape=(2, 2))
    with pytest.raises(GraphInputError, match=r"indices\[0\] = 5"):
        toporank.order(toporank.Graph.from_csr(bad_index.indptr, bad_index.indices))
    with pytest.raises(GraphInputError, match="indptr decreases at row 1"):
        toporank.order(toporank.Graph.from_csr(np.array([0, 2, 1, 2]), np.array([1, 2])))
    with pytest.raises(GraphInputError, match=r"indptr\[-1\] is 1"):
        toporank.order(toporank.Graph.from_csr(np.array([0, 1]), np.array([0, 0])))
    with pytest.raises(GraphInputError, match="empty"):
        toporank.Graph.from_csr(np.array([], np.int64), np.array([], np.int64))


# --- positions and verify_order ---------------------------------------------


@given(st.permutations(list(range(7))))
def test_positions_is_the_inverse_permutation(perm):
    pos = toporank.positions(np.array(perm))
    assert np.array_equal(np.array(perm)[pos], np.arange(7))
    assert np.array_equal(pos, np.argsort(perm))  # numpy as the outside reference


@pytest.mark.parametrize(
    ("order", "reason", "needle"),
    [
        ([2, 0, 2], "duplicate", "node 2 appears twice, at positions 0 and 2"),
        ([0, 5, 1], "unknown", "order[1] = 5"),
        ([0, 1, 3], "unknown", "order[2] = 3"),
    ],
)
def test_positions_refuses_non_permutations(order, reason, needle):
    with pytest.raises(InvalidOrderError) as info:
        toporank.positions(np.array(order))
    assert info.value.reason == reason and needle in str(info.value)


def test_verify_order_names_the_first_violated_edge():
    edges = np.array([[0, 1], [1, 2], [0, 2]])
    assert toporank.verify_order(edges, [0, 1, 2]) is None
    with pytest.raises(InvalidOrderError) as info:
        toporank.verify_order(edges, [2, 0, 1])
    err = info.value
    assert err.reason == "edge" and err.edge == (0, 2) and err.positions == (1, 0)
    assert "edge 0 -> 2 goes backwards: 0 is at position 1, 2 at position 0" in str(err)
    with pytest.raises(InvalidOrderError, match="node 1 is missing"):
        toporank.verify_order(edges, [0, 2])
    with pytest.raises(InvalidOrderError, match="appears twice"):
        toporank.verify_order(edges, [0, 1, 2, 0])
    with pytest.raises(InvalidOrderError, match="self-loop"):
        toporank.verify_order(np.array([[0, 0]]), [0])
    clone = pickle.loads(pickle.dumps(err))
    assert clone.edge == err.edge and str(clone) == str(err)


def test_verify_order_with_labels():
    pairs = [("core", "io"), ("io", "app")]
    toporank.verify_order(pairs, ["core", "io", "app"])
    with pytest.raises(InvalidOrderError) as info:
        toporank.verify_order(pairs, ["io", "core", "app"])
    assert info.value.edge == ("core", "io")
    with pytest.raises(InvalidOrderError, match="'web'"):
        toporank.verify_order(pairs, ["core", "io", "web"])


@given(edge_lists(acyclic=True), st.randoms(use_true_random=False))
def test_verify_order_agrees_with_a_plain_check(graph, rnd):
    src, dst, n = graph
    candidate = list(range(n))
    rnd.shuffle(candidate)
    position = np.empty(n, dtype=np.int64)
    position[candidate] = np.arange(n)
    valid = bool(np.all(position[src] < position[dst]))
    try:
        toporank.verify_order((src, dst), np.array(candidate, dtype=np.int64), n=n)
    except InvalidOrderError as err:
        assert not valid and err.reason == "edge"
        u, v = err.edge
        assert position[u] >= position[v]
    else:
        assert valid


def test_dates_are_priority_keys_and_missing_dates_are_named():
    # An invented journal's papers keyed by publication date: a datetime64
    # key orders as the dates do (common practice: numpy datetime64 values
    # compare chronologically), the same as the years as integers.
    papers = [("survey", "method"), ("survey", "dataset"), ("dataset", "benchmark")]
    dates = {
        "survey": np.datetime64("2019-03-01"),
        "method": np.datetime64("2021-07-15"),
        "dataset": np.datetime64("2020-11-30"),
        "benchmark": np.datetime64("2020-12-01"),
    }
    by_date = toporank.order(papers, tie="priority", key=dates)
    days = {name: int(d.astype("datetime64[D]").astype(np.int64)) for name, d in dates.items()}
    assert by_date.tolist() == toporank.order(papers, tie="priority", key=days).tolist()
    assert by_date.tolist() == ["survey", "dataset", "benchmark", "method"]
    ids = (np.array([0, 0]), np.array([1, 2]))
    stamps = np.array(["2001-01-01", "2003-01-01", "2002-01-01"], dtype="datetime64[s]")
    assert toporank.order(ids, tie="priority", key=stamps).tolist() == [0, 2, 1]
    with pytest.raises(toporank.GraphInputError, match=r"key\[1\] is NaT"):
        toporank.order(ids, tie="priority", key=np.array(["2001", "NaT", "2002"], "datetime64[Y]"))


@pytest.mark.filterwarnings("ignore::PendingDeprecationWarning")  # numpy on np.matrix itself
def test_a_numpy_matrix_of_edges_reads_like_an_array():
    edges = np.matrix([[0, 1], [1, 2]])
    assert toporank.order(edges).tolist() == toporank.order(np.asarray(edges)).tolist() == [0, 1, 2]
