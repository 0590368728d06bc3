"""Any value for any argument: a result or one of the documented exceptions.

Values of every wrong type (None, floats, NaN, huge ints, strings, bytes,
arrays of the wrong shape or dtype, mappings, sets, bare objects) are thrown
at the keyword arguments of every public function, and at the methods of
``Frontier`` and ``DynamicOrder``. A TypeError, ValueError, OverflowError or
AttributeError escaping from inside means an argument went unchecked; the
error classes a caller may catch are toporank's own (common practice for a
library: one documented family of exceptions, each naming the bad value).
"""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

import toporank

DOCUMENTED = (
    toporank.GraphInputError,  # GraphFileError is one
    toporank.CyclicGraphError,
    toporank.InvalidOrderError,
    toporank.TaskStateError,
)

GRAPHS = [
    [("a", "b"), ("b", "c")],
    [(0, 1), (1, 2), (2, 0)],
    (np.array([0, 1]), np.array([1, 2])),
    np.array([[0, 1], [1, 2]]),
    [],
    [("a", "a")],
    (np.array([0, 1], np.uint8), np.array([1, 2], np.uint8)),
    [(1.5, 2.5)],
    [(None, 1)],
]

VALUES = [
    None,
    0,
    1,
    -1,
    2**63,
    2**64,
    -(2**70),
    1.5,
    float("nan"),
    float("inf"),
    "x",
    "",
    "a",
    b"x",
    True,
    [],
    [1],
    [0, 1, 2],
    ["a", "b", "c"],
    [2**70, 0, 1],
    np.array([1, 2, 3]),
    np.array([np.nan, 1, 2]),
    np.array([[1]]),
    np.array(["a", "b", "c"]),
    np.array([1, 2, 3], dtype=object),
    {"a": 1, "b": 2, "c": 3},
    {"a", "b"},
    object(),
    (1, 2),
    np.int64(3),
    "queue",
    "priority",
    "critical",
    "condense",
    "cut",
    "spc",
    "key-route",
    "all",
]

FUNCTIONS = {
    "order": ["n", "tie", "key", "descending", "seed", "threads", "on_cycle"],
    "levels": ["n", "on_cycle", "threads", "grouped"],
    "heights": ["n", "on_cycle", "threads"],
    "critical_path": ["n", "node_weight", "edge_weight", "threads"],
    "path_counts": ["n", "threads"],
    "components": ["n"],
    "condense": ["n"],
    "cut_cycles": ["n"],
    "cycle_witness": ["n", "through"],
    "verify_order": ["n"],
    "order_metrics": ["n", "key", "descending"],
    "schedule": ["n", "duration", "tie", "key"],
    "compare": ["ties", "n", "key", "repeat", "seed"],
    "main_path": ["weight", "method", "routes", "extend", "ties", "on_cycle", "n", "threads"],
    "positions": [],
}

values = st.sampled_from(VALUES)


@settings(deadline=None)
@given(
    name=st.sampled_from(sorted(FUNCTIONS)),
    graph=st.sampled_from(GRAPHS),
    data=st.data(),
)
def test_every_function_answers_any_argument_with_a_documented_error(name, graph, data):
    names = FUNCTIONS[name]
    chosen = data.draw(st.lists(st.sampled_from(names), unique=True, max_size=3)) if names else []
    keywords = {k: data.draw(values, label=k) for k in chosen}
    function = getattr(toporank, name)
    try:
        if name == "positions":
            function(data.draw(values, label="order"))
        elif name in ("verify_order", "order_metrics"):
            function(graph, data.draw(values, label="order"), **keywords)
        elif name == "schedule":
            function(graph, workers=data.draw(values, label="workers"), **keywords)
        else:
            function(graph, **keywords)
    except DOCUMENTED:
        pass


@settings(deadline=None)
@given(graph=st.sampled_from(GRAPHS), data=st.data())
def test_frontier_and_dynamic_order_methods_answer_any_argument(graph, data):
    try:
        frontier = toporank.Frontier(graph)
    except DOCUMENTED:
        frontier = None
    try:
        dynamic = toporank.DynamicOrder(graph)
    except DOCUMENTED:
        dynamic = None
    methods = [
        ("frontier", "take", 1),
        ("frontier", "finish", 1),
        ("frontier", "fail", 1),
        ("dynamic", "add_edge", 2),
        ("dynamic", "remove_edge", 2),
        ("dynamic", "add_edges", 2),
        ("dynamic", "remove_edges", 2),
        ("dynamic", "add_nodes", 1),
        ("dynamic", "precedes", 2),
    ]
    for _ in range(4):
        owner, method, count = data.draw(st.sampled_from(methods))
        target = frontier if owner == "frontier" else dynamic
        arguments = [data.draw(values, label=f"{method} argument") for _ in range(count)]
        try:
            if target is not None:
                getattr(target, method)(*arguments)
            toporank.DynamicOrder(n=arguments[0])
        except DOCUMENTED:
            pass
    if dynamic is not None:  # whatever was refused, the order is still one
        toporank.verify_order(dynamic.graph, dynamic.order)


@settings(deadline=None)
@given(data=st.data())
def test_read_graph_answers_any_keyword(tmp_path_factory, data):
    path = tmp_path_factory.mktemp("args") / "e.tsv"
    path.write_text("a\tb\nb\tc\n")
    names = ["format", "delimiter", "header", "columns", "labels", "progress"]
    chosen = data.draw(st.lists(st.sampled_from(names), unique=True, max_size=2))
    keywords = {k: data.draw(values, label=k) for k in chosen}
    try:
        toporank.read_graph(path, **keywords)
    except DOCUMENTED:
        pass
