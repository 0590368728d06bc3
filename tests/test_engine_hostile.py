"""Hostile use of the core engine: a crash, an abort or a silent wrong answer
must never come out of these, only a documented exception."""

from __future__ import annotations

import os
import subprocess
import sys
import textwrap

import numpy as np
import pytest

import toporank
from toporank import GraphInputError


def _run(script: str) -> subprocess.CompletedProcess[str]:
    return subprocess.run(
        [sys.executable, "-c", textwrap.dedent(script)],
        capture_output=True,
        text=True,
        timeout=240,
    )


def test_sums_of_finite_weights_that_overflow_raise_naming_the_node():
    # 3 * 1e308 exceeds the largest float64, about 1.797e308 (IEEE 754).
    chain = (np.array([0, 1]), np.array([1, 2]))
    with pytest.raises(GraphInputError, match="overflows at node 1"):
        toporank.critical_path(chain, node_weight=[1e308] * 3)
    # Just below the limit still works: 3 * 5e307 = 1.5e308 (common practice).
    result = toporank.critical_path(chain, node_weight=[5e307] * 3)
    assert result.length == 1.5e308


def test_an_absurd_node_count_is_an_exception_not_an_abort():
    result = _run(
        """
        import numpy as np, toporank
        try:
            toporank.order((np.array([0]), np.array([1])), n=2**40)
        except (MemoryError, ValueError) as e:
            assert "1099511627777" in str(e), str(e)
            print("raised")
        """
    )
    assert result.returncode == 0, result.stderr
    assert result.stdout.strip() == "raised"


def test_input_written_by_another_thread_mid_call_never_crashes():
    # A second Python thread scribbles over indptr and indices while the
    # GIL-free core reads them: each call must return or raise a ValueError
    # subclass (the input changed), and the process must survive.
    result = _run(
        """
        import threading
        import numpy as np, toporank
        from toporank._synthetic import citation_dag

        n = 200_000
        src, dst, _ = citation_dag(n, 10, seed=1)
        built = toporank.Graph.from_edges(src, dst, n=n)
        indptr, indices = built.indptr.copy(), built.indices.copy()
        graph = toporank.Graph.from_csr(indptr, indices)
        good = toporank.order(graph)
        calls = [
            lambda: toporank.order(graph),
            lambda: toporank.order(graph, tie="priority"),
            lambda: toporank.levels(graph),
            lambda: toporank.heights(graph, threads=2),
            lambda: toporank.critical_path(graph, threads=2),
            lambda: toporank.path_counts(graph, threads=2),
            lambda: toporank.components(graph),
            lambda: toporank.condense(graph),
            lambda: toporank.cycle_witness(graph),
            lambda: toporank.verify_order(graph, good),
            lambda: toporank.order_metrics(graph, good),
        ]
        stop = threading.Event()

        def scribble():
            # Write garbage, then put the true values back, so that calls
            # start on valid input and see it change while they run.
            rng = np.random.default_rng(0)
            while not stop.is_set():
                at = rng.integers(0, len(indices), 64)
                rows = rng.integers(1, n, 4)
                kept, kept_rows = indices[at], indptr[rows]
                indices[at] = rng.integers(-3, 2 * n, 64)
                indptr[rows] = rng.integers(-3, 2 * len(indices), 4)
                indices[at], indptr[rows] = kept, kept_rows

        thread = threading.Thread(target=scribble)
        thread.start()
        seen = set()
        try:
            for _ in range(6):
                for call in calls:
                    try:
                        call()
                        seen.add("returned")
                    except ValueError as e:
                        seen.add(type(e).__name__)
        finally:
            stop.set()
            thread.join()
        print(sorted(seen))
        """
    )
    assert result.returncode == 0, result.stderr[-2000:]
    assert result.stdout.startswith("["), result.stdout


# Python salts str hashes per process (common practice since Python 3.3,
# PYTHONHASHSEED), so a set of labels iterates in a different order from one
# run to the next; numbering nodes in that order would change every result.
_SET_ORDER = """
import toporank
pairs = {("alpha", "beta"), ("gamma", "delta"), ("eps", "zeta"), ("eta", "theta")}
print(" ".join(map(str, toporank.order(sorted(pairs)))))
print(" ".join(map(str, pairs)))
"""


def test_sets_are_refused_because_their_order_changes_from_run_to_run():
    salted = []
    for seed in ("1", "2", "3", "4"):
        done = subprocess.run(
            [sys.executable, "-c", _SET_ORDER],
            capture_output=True,
            text=True,
            timeout=120,
            env={**os.environ, "PYTHONHASHSEED": seed},
        )
        assert done.returncode == 0, done.stderr
        ours, raw = done.stdout.splitlines()
        salted.append((ours, raw))
    # The raw set order moved with the salt; the order of the sorted list did not.
    assert len({raw for _, raw in salted}) > 1
    assert len({ours for ours, _ in salted}) == 1
    pairs = {("a", "b"), ("c", "d")}
    with pytest.raises(GraphInputError, match=r"pairs is a set.*sorted\(pairs\)"):
        toporank.order(pairs)
    with pytest.raises(GraphInputError, match="frozenset"):
        toporank.Graph.from_pairs(frozenset(pairs))
    g = toporank.Graph.from_pairs(sorted(pairs))
    with pytest.raises(GraphInputError, match="order is a set"):
        toporank.verify_order(g, {"a", "b", "c", "d"})
    with pytest.raises(GraphInputError, match="order is a set"):
        toporank.order_metrics(g, {"a", "b", "c", "d"})
    with pytest.raises(GraphInputError, match="tasks is a set"):
        toporank.Frontier(g).finish({"a", "c"})
    with pytest.raises(GraphInputError, match="ties is a set"):
        toporank.compare(g, {"queue", "stack"})
    with pytest.raises(GraphInputError, match="nodes is a set"):
        toporank.DynamicOrder(g).add_nodes({"e", "f"})
    # A dict's keys and items keep insertion order: still accepted.
    assert toporank.order({"a": "b", "c": "d"}.items()).tolist() == ["a", "c", "b", "d"]


@pytest.mark.parametrize(
    "given",
    [
        np.array([1, 2**64 - 1], dtype=np.uint64),
        [1, 2**64 - 1],  # numpy would make this list float64
        [1, 2**70],  # and this one object
    ],
)
def test_ids_beyond_int64_are_named_as_given_not_as_minus_one(given):
    shown = str(int(given[1]))
    d = toporank.DynamicOrder(n=3)
    with pytest.raises(GraphInputError, match=rf"src\[1\] = {shown} is not a node id"):
        d.add_edges(given, [2, 2])
    with pytest.raises(GraphInputError, match=rf"dst\[1\] = {shown} is not a node id"):
        d.remove_edges([0, 0], given)
    assert d.m == 0
    g = toporank.Graph.from_edges([0, 1], [1, 2])
    with pytest.raises(toporank.InvalidOrderError, match=rf"order\[1\] = {shown} is not a node"):
        toporank.verify_order(g, given)
    with pytest.raises(GraphInputError, match=rf"tasks\[1\] = {shown} is not a node"):
        toporank.Frontier(g).finish(given)


def test_frontier_names_an_unknown_label_and_a_count_too_large():
    f = toporank.Frontier([("a", "b")])
    with pytest.raises(GraphInputError, match="task 'zz' is not a node of the graph"):
        f.fail("zz")
    with pytest.raises(
        GraphInputError, match=r"count in 0..2\*\*63 - 1, got 2361183241434822606848"
    ):
        f.take(2**71)


def test_arguments_of_the_wrong_type_are_named_not_crashed_on():
    # Found by throwing random values at every argument: each of these used
    # to end in a TypeError, ValueError or OverflowError from deep inside.
    pairs = [("a", "b"), ("b", "c")]
    with pytest.raises(GraphInputError, match=r"descending must be True or False, got array"):
        toporank.order(pairs, tie="priority", key=[1, 2, 3], descending=np.array([1, 2]))
    with pytest.raises(GraphInputError, match="descending must be True or False, got 'yes'"):
        toporank.order_metrics(pairs, ["a", "b", "c"], key=[1, 2, 3], descending="yes")
    with pytest.raises(GraphInputError, match="grouped must be True or False, got 2"):
        toporank.levels(pairs, grouped=2)
    assert toporank.order(pairs, tie="priority", key=[1, 2, 3], descending=np.True_).tolist() == [
        "a",
        "b",
        "c",
    ]
    with pytest.raises(GraphInputError, match="ties must be a policy name or a sequence"):
        toporank.compare(pairs, ties=3)
    d = toporank.DynamicOrder(pairs)
    with pytest.raises(GraphInputError, match="src must be a sequence of nodes, got NoneType"):
        d.add_edges(None, ["b"])
    with pytest.raises(GraphInputError, match="dst must be a sequence of nodes, got float"):
        d.remove_edges(["a"], 1.5)
    with pytest.raises(GraphInputError, match="below 2\\*\\*63, got 18446744073709551616"):
        toporank.DynamicOrder(n=2**64)
    with pytest.raises(GraphInputError, match="below 2\\*\\*63, got 18446744073709551616"):
        toporank.DynamicOrder(n=1).add_nodes(2**64)


@pytest.mark.parametrize(
    ("keywords", "message"),
    [
        ({"columns": 3}, "columns must be a list or tuple"),
        ({"columns": (0, True)}, "columns must be a list or tuple"),
        ({"delimiter": 3}, "delimiter must be a string or None, got 3"),
        ({"header": "yes"}, "header must be True, False or None, got 'yes'"),
        ({"labels": 1}, "labels must be True, False or None, got 1"),
        ({"format": ["text"]}, "format must be one of"),
        ({"progress": np.array([1, 2])}, "progress must be True or False"),
    ],
)
def test_reader_options_of_the_wrong_type_are_named(tmp_path, keywords, message):
    path = tmp_path / "e.tsv"
    path.write_text("a\tb\nb\tc\n")
    with pytest.raises(GraphInputError, match=message):
        toporank.read_graph(path, **keywords)
    with pytest.raises(GraphInputError, match=message):
        toporank.ReadOptions(**keywords)
    # the right types still read (columns as a numpy array too)
    assert toporank.read_graph(path, columns=np.array([1, 0])).labels.tolist() == ["b", "a", "c"]


def test_stateful_objects_refuse_copies_that_would_share_their_state():
    # copy.copy used to hand back a second handle on the same state: taking a
    # task through the "copy" took it from the original too.
    import copy
    import pickle

    frontier = toporank.Frontier([("parse", "check")])
    dynamic = toporank.DynamicOrder([("parse", "check")])
    for stateful, name in ((frontier, "Frontier"), (dynamic, "DynamicOrder")):
        for attempt in (copy.copy, copy.deepcopy, pickle.dumps):
            with pytest.raises(TypeError, match=f"a {name} cannot be copied or pickled"):
                attempt(stateful)
    assert frontier.take().tolist() == ["parse"]
    assert dynamic.order.tolist() == ["parse", "check"]


def test_a_tuple_of_two_columns_is_read_as_columns_whatever_their_type():
    # (src, dst) as pandas Series of length 2 used to be read as two (u, v)
    # pairs: edges 0 -> 2 and 1 -> 3 instead of 0 -> 1 and 2 -> 3.
    pd = pytest.importorskip("pandas")
    pa = pytest.importorskip("pyarrow")
    src, dst = [0, 2], [1, 3]
    expected = toporank.Graph.from_edges(np.array(src), np.array(dst))
    for columns in (
        (pd.Series(src), pd.Series(dst)),
        (pa.array(src), pa.array(dst)),
        (np.array(src), dst),  # one numpy column makes both columns
    ):
        g = toporank.as_graph(columns)
        assert g.labels is None
        np.testing.assert_array_equal(g.indptr, expected.indptr)
        np.testing.assert_array_equal(g.indices, expected.indices)
    # string columns are labels, as pairs of the same names would be
    named = toporank.as_graph((pd.Series(["core", "core", "io"]), pd.Series(["io", "net", "app"])))
    pairs = toporank.as_graph([("core", "io"), ("core", "net"), ("io", "app")])
    assert named.labels.tolist() == pairs.labels.tolist()
    np.testing.assert_array_equal(named.indices, pairs.indices)
    with pytest.raises(GraphInputError, match=r"src\[1\] is missing"):
        toporank.as_graph((pd.Series(["a", None]), pd.Series(["b", "c"])))
    with pytest.raises(GraphInputError, match="from a DataFrame directly"):
        toporank.order(pd.DataFrame({"src": src, "dst": dst}))
    # a tuple of two plain lists stays two pairs (the documented pair form)
    assert toporank.as_graph(([0, 2], [1, 3])).labels.tolist() == [0, 2, 1, 3]
