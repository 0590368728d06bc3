"""The binding's contracts: typed results, error classes, sizes that cannot abort.

Outside references: Python's own exception hierarchy (MemoryError,
KeyboardInterrupt, RuntimeError are builtins; common practice that a
library reports allocation failure as MemoryError), and exact integer
arithmetic of Python ints for keys beyond 2**63.
"""

from __future__ import annotations

import subprocess
import sys
import textwrap

import numpy as np
import pytest

import toporank
from toporank import _core
from toporank._errors import GraphInputError, InvalidOrderError

# kind -> (class, words the message must hold)
ERROR_KINDS = {
    "input": (GraphInputError, "indices[3] = -2"),
    "input_changed": (GraphInputError, "indices changed during the call"),
    "allocation": (MemoryError, "8796093022208 bytes"),
    "interrupted": (KeyboardInterrupt, "interrupted"),
    "thread_pool": (RuntimeError, "could not start 4 worker threads"),
    "internal": (RuntimeError, "internal error"),
}


@pytest.mark.parametrize("kind", sorted(ERROR_KINDS))
def test_each_core_error_kind_has_its_python_class(kind):
    cls, words = ERROR_KINDS[kind]
    with pytest.raises(BaseException) as info:
        _core._raise_error_kind(kind)
    assert type(info.value) is cls, (kind, type(info.value))
    assert words in str(info.value)
    if cls is RuntimeError:
        assert not isinstance(info.value, ValueError)


def test_unknown_error_kind_is_an_input_error():
    with pytest.raises(GraphInputError, match="unknown error kind"):
        _core._raise_error_kind("nonsense")


def _small():
    g = toporank.as_graph((np.array([0, 0, 1]), np.array([1, 2, 2])))
    cyclic = toporank.as_graph((np.array([0, 1]), np.array([1, 0])))
    return g, cyclic


def test_no_entry_point_returns_a_positional_tuple():
    g, cyclic = _small()
    order = np.array([0, 1, 2], dtype=np.int64)
    unit = np.ones(3, dtype=np.int64)
    results = [
        _core.kahn_order(g.indptr, g.indices, "queue"),
        _core.kahn_order(cyclic.indptr, cyclic.indices, "queue"),
        _core.edges_to_csr(np.array([0]), np.array([1]), 2, True),
        _core.verify_order(g.indptr, g.indices, order[::-1].copy()),
        _core.positions(np.array([0, 0]), 2),
        _core.order_metrics(g.indptr, g.indices, order, order),
        _core.list_schedule(g.indptr, g.indices, unit, 2, "critical"),
        _core.bottom_levels(g.indptr, g.indices, unit),
        _core.levels(g.indptr, g.indices, 1, True),
        _core.heights(g.indptr, g.indices),
        _core.critical_path(g.indptr, g.indices),
        _core.path_counts(g.indptr, g.indices),
        _core.strong_components(g.indptr, g.indices),
        _core.condensation(g.indptr, g.indices),
        _core.cut_cycles(cyclic.indptr, cyclic.indices),
        _core.cycle_witness(cyclic.indptr, cyclic.indices),
    ]
    for result in results:
        assert not isinstance(result, tuple), result


def test_every_sweep_reports_a_cycle_in_one_shape():
    _, cyclic = _small()
    unit = np.ones(2, dtype=np.int64)
    calls = [
        lambda: _core.kahn_order(cyclic.indptr, cyclic.indices, "queue"),
        lambda: _core.levels(cyclic.indptr, cyclic.indices),
        lambda: _core.heights(cyclic.indptr, cyclic.indices),
        lambda: _core.critical_path(cyclic.indptr, cyclic.indices),
        lambda: _core.path_counts(cyclic.indptr, cyclic.indices),
        lambda: _core.list_schedule(cyclic.indptr, cyclic.indices, unit, 1, "queue"),
        lambda: _core.bottom_levels(cyclic.indptr, cyclic.indices, unit),
    ]
    for call in calls:
        found = call()
        assert isinstance(found, _core.Cyclic)
        # the 2-cycle 0 <-> 1 blocks both nodes (checked by hand, from memory of Kahn's rule)
        assert sorted(found.blocked.tolist()) == [0, 1]
        assert sorted(found.cycle.tolist()) == [0, 1]
        assert len(found.order) == 0


def test_results_are_frozen():
    g, _ = _small()
    found = _core.strong_components(g.indptr, g.indices)
    with pytest.raises(AttributeError):
        found.count = 7  # type: ignore[misc]


def test_unsupported_widths_are_named():
    # Mixed widths are read as they are: int64 offsets with int32 ids.
    order = _core.kahn_order(np.array([0, 1, 1], dtype=np.int64), np.array([1], np.int32), "queue")
    assert order.tolist() == [0, 1] and order.dtype == np.int32
    with pytest.raises(GraphInputError, match="indptr must be a 1-D numpy array of int32 or int64"):
        _core.kahn_order(np.array([0, 0], dtype=np.int16), np.array([], dtype=np.int32), "queue")
    with pytest.raises(GraphInputError, match=r"indices must be .* int32, int64 or uint32"):
        _core.kahn_order(np.array([0, 0], dtype=np.int64), np.array([], dtype=np.uint64), "queue")
    with pytest.raises(GraphInputError, match="src and dst must be 1-D numpy arrays of one dtype"):
        _core.edges_to_csr(np.array([0], dtype=np.int64), np.array([1], dtype=np.int32), 2)
    with pytest.raises(GraphInputError, match="key must be a 1-D numpy array"):
        _core.kahn_order(np.array([0, 0]), np.array([], dtype=np.int64), "priority", [1])


ABSURD = {
    "n=2**40": ("toporank.order((np.array([0]), np.array([1])), n=2**40)", "MemoryError", "bytes"),
    "n=2**64": (
        "toporank.order((np.array([0]), np.array([1])), n=2**64)",
        "GraphInputError",
        "n =",
    ),
    "levels n=2**40": (
        "toporank.levels((np.array([0]), np.array([1])), n=2**40)",
        "MemoryError",
        "1099511627777",
    ),
    "threads=2**64": (
        "print(toporank.order((np.array([0]), np.array([1])), threads=2**64).tolist())",
        None,
        "[0, 1]",
    ),
    "heights threads=2**64": (
        "print(toporank.heights((np.array([0]), np.array([1])), threads=2**64).tolist())",
        None,
        "[1, 0]",
    ),
    "TOPORANK_NUM_THREADS=2**70": (
        "import os; os.environ['TOPORANK_NUM_THREADS'] = str(2**70); "
        "print(toporank.order((np.array([0]), np.array([1]))).tolist())",
        None,
        "[0, 1]",
    ),
}


@pytest.mark.parametrize("case", sorted(ABSURD))
def test_absurd_sizes_raise_typed_errors_in_a_surviving_process(case):
    code, exception, words = ABSURD[case]
    script = textwrap.dedent(
        f"""
        import numpy as np, toporank
        try:
            {code}
        except Exception as e:
            print(type(e).__name__, e)
        """
    )
    done = subprocess.run(
        [sys.executable, "-c", script], capture_output=True, text=True, timeout=120
    )
    assert done.returncode == 0, (done.returncode, done.stderr)
    if exception is not None:
        assert done.stdout.startswith(exception + " "), done.stdout
    else:
        assert "Error" not in done.stdout, done.stdout
    assert words in done.stdout, done.stdout
    assert "OverflowError" not in done.stdout


def test_integer_keys_from_2_63_stay_exact():
    # exact integer comparison: 2**63 - 2 < 2**63 - 1 < 2**63 (float64 would tie them)
    pairs = [("a", "x"), ("b", "x"), ("c", "x")]
    key = {"a": 2**63, "b": 2**63 - 1, "c": 2**63 - 2, "x": 0}
    assert toporank.order(pairs, tie="priority", key=key).tolist() == ["c", "b", "a", "x"]
    descending = toporank.order(pairs, tie="priority", key=key, descending=True)
    assert descending.tolist() == ["a", "b", "c", "x"]
    listed = toporank.order(
        (np.array([0, 1, 2]), np.array([3, 3, 3])), tie="priority", key=[2**63, 2**63 - 1, 5, 0]
    )
    assert listed.tolist() == [2, 1, 0, 3]


def test_integer_keys_that_fit_no_width_are_refused():
    pairs = [("a", "b")]
    with pytest.raises(GraphInputError, match=r"key\[1\] = 18446744073709551616 fits neither"):
        toporank.order(pairs, tie="priority", key={"a": 1, "b": 2**64})
    with pytest.raises(GraphInputError, match="fits neither"):
        toporank.order(pairs, tie="priority", key={"a": -1, "b": 2**63})


def test_verify_order_refuses_unhashable_labels_and_reads_generators():
    pairs = [("a", "b")]
    with pytest.raises(GraphInputError, match=r"order\[0\] = \['a'\]"):
        toporank.verify_order(pairs, [["a"], "b"])
    assert toporank.verify_order(pairs, (x for x in ["a", "b"])) is None
    with pytest.raises(InvalidOrderError):
        toporank.verify_order(pairs, (x for x in ["b", "a"]))
    with pytest.raises(GraphInputError, match="sequence of nodes"):
        toporank.verify_order(pairs, "ab")


def test_messages_show_plain_values():
    g = (np.array([0]), np.array([1]))
    with pytest.raises(InvalidOrderError) as info:
        toporank.verify_order(g, [np.int64(0), np.int64(5)])
    assert "order[1] = 5 " in str(info.value)
    assert "np.int64" not in str(info.value)
    top = np.array([0, 2**64 - 1], dtype=np.uint64)
    with pytest.raises(InvalidOrderError, match=r"order\[1\] = 18446744073709551615 "):
        toporank.verify_order(g, top)
    with pytest.raises(GraphInputError) as bad_seed:
        toporank.order(g, tie="random", seed=np.float64(0.5))
    assert "np.float64" not in str(bad_seed.value)


def test_duplicate_labels_are_refused_by_name():
    with pytest.raises(GraphInputError, match=r"labels\[2\] = 'io' repeats labels\[0\]"):
        toporank.Graph.from_labelled_edges([0], [1], ["io", "net", "io"])


def test_id_range_messages_read_as_half_open():
    # "0..3 (n = 3)" reads as if 3 were allowed; the messages spell out
    # 0 <= id < n, the half-open range of ids (common practice).
    indptr, indices = np.array([0, 1, 1, 1], dtype=np.int64), np.array([3], dtype=np.int64)
    with pytest.raises(GraphInputError, match=r"indices\[0\] = 3 is not a node id; ") as core_edge:
        _core.cycle_witness(indptr, indices)
    ok = np.array([0, 1, 1, 1], dtype=np.int64), np.array([1], dtype=np.int64)
    with pytest.raises(GraphInputError, match=r"through = 3 is not a node id; ") as core_node:
        _core.cycle_witness(*ok, 3)
    with pytest.raises(GraphInputError, match=r"through = 3 is not a node id; ") as python_node:
        toporank.cycle_witness((np.array([0]), np.array([1])), through=3, n=3)
    with pytest.raises(GraphInputError, match=r"v = 3 is not a node id; ") as dynamic_node:
        toporank.DynamicOrder(n=3).add_edge(0, 3)
    for raised in (core_edge, core_node, python_node, dynamic_node):
        message = str(raised.value)
        assert message.endswith("ids must satisfy 0 <= id < 3"), message
        assert "0..3" not in message
    with pytest.raises(GraphInputError, match=r"labels satisfy 0 <= label < 2$"):
        toporank.condense([(0, 1), (1, 0), (1, 2)]).members(2)
