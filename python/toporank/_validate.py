"""Every argument check of the public functions, with one wording each.

The public functions normalise the graph with :func:`toporank.as_graph` and
pass every other argument through a check here before calling the compiled
core, which then asserts invariants but does not check arguments again.
Each check raises :class:`~toporank.GraphInputError` naming the argument and
the offending value (as the caller wrote it: a label, a plain integer).
"""

from __future__ import annotations

import operator
import os
from collections.abc import Hashable, Iterable, Mapping
from typing import TYPE_CHECKING, Any, Literal, NoReturn

import numpy as np

from . import _core
from ._errors import CyclicGraphError, GraphInputError

if TYPE_CHECKING:
    from ._graph import Graph

TIES = ("queue", "stack", "priority", "random")
"""The tie-break policies of :func:`toporank.order`."""

SCHEDULE_TIES = (*TIES, "critical")
"""The ready-set policies of :func:`toporank.schedule` and :func:`toporank.compare`."""

ON_CYCLE = ("raise", "partial", "condense", "cut")
"""What :func:`toporank.order` and the sweeps do on a graph with a cycle."""

OnCycle = Literal["raise", "partial", "condense", "cut"]

THREADS_VARIABLE = "TOPORANK_NUM_THREADS"
"""Environment variable giving the default worker count of parallel steps."""

LARGEST_COUNT = 2**63 - 1
"""The largest node count or thread count accepted (int64 ids)."""

_INT64_MAX = 2**63 - 1
_UINT64_MAX = 2**64 - 1


def show(value: Any) -> str:
    """A value as messages show it: numpy scalars as plain Python values."""
    if isinstance(value, np.generic):
        value = value.item()
    return repr(value)


def whole_number(value: Any, name: str) -> int:
    """``value`` as a Python int (numpy integers too), refusing bools and non-integers."""
    try:
        if isinstance(value, (bool, np.bool_)):
            raise TypeError
        return operator.index(value)
    except TypeError:
        raise GraphInputError(f"{name} must be an integer, got {show(value)}") from None


def positive_int(value: Any, name: str, too_small: str | None = None) -> int:
    """``value`` as an int of at least 1, or a GraphInputError naming it (bools refused).

    ``too_small`` words the error for values below 1 (``{number}`` is filled in).
    """
    number = whole_number(value, name)
    if number < 1:
        message = too_small or "{name} must be at least 1, got {number}"
        raise GraphInputError(message.format(name=name, number=number))
    return number


def worker_count(workers: Any) -> int:
    """The worker count of a schedule: a whole number of at least 1."""
    return positive_int(
        workers, "workers", "workers = {number}; a schedule needs at least one worker"
    )


# More timed runs than this only repeat a median that stopped moving long
# before, and a huge count (say 2**64) would run for ever.
MAX_REPEAT = 1000


def repeat_count(repeat: Any) -> int:
    """Timed runs per policy of a comparison: a whole number in ``1..MAX_REPEAT``."""
    runs = positive_int(repeat, "repeat")
    if runs > MAX_REPEAT:
        raise GraphInputError(
            f"repeat = {runs} timed runs per policy is too many; it must satisfy "
            f"1 <= repeat <= {MAX_REPEAT}"
        )
    return runs


def distributed_on_cycle(on_cycle: Any) -> str:
    """``on_cycle`` of ``toporank.distributed``: ``"raise"``, ``"mark"`` or ``"report"``."""
    choices = ("raise", "mark", "report")
    if not isinstance(on_cycle, str) or on_cycle not in choices:
        raise GraphInputError(f"on_cycle must be one of {choices}, got {show(on_cycle)}")
    return on_cycle


def tie_column(tie: Any, nodes: Any) -> str | None:
    """``tie`` of ``toporank.distributed.order``: None, or a column name of ``nodes``."""
    if tie is None:
        if nodes is not None:
            raise GraphInputError("nodes gives tie-break keys; name the column with tie=")
        return None
    if not isinstance(tie, str) or not tie:
        raise GraphInputError(f"tie must be a column name of nodes, got {show(tie)}")
    if nodes is None:
        raise GraphInputError(f"tie={tie!r} needs nodes=, the table holding that column")
    if tie in ("node", "level", "position"):
        raise GraphInputError(f"tie must not be {tie!r}: that column is the order's own")
    return tie


def node_count(n: Any) -> int:
    """A node count ``n``: a whole number in ``0..2**63 - 1``."""
    if isinstance(n, (bool, np.bool_)) or not isinstance(n, (int, np.integer)):
        raise GraphInputError(f"n must be a non-negative integer, got {show(n)}")
    n = int(n)
    if not 0 <= n <= LARGEST_COUNT:
        raise GraphInputError(
            f"n = {n} is not a node count; it must satisfy 0 <= n <= {LARGEST_COUNT} (2**63 - 1)"
        )
    return n


def usable_cores() -> int:
    """The cores this process may run on."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # not on Linux
        return max(1, os.cpu_count() or 1)


def thread_count(threads: Any) -> int:
    """The worker count: ``threads``, else ``TOPORANK_NUM_THREADS``, else the usable cores.

    Counts beyond the usable cores are capped to them: more workers than
    cores only add pool threads, never speed.
    """
    where = ""
    if threads is None:
        setting = os.environ.get(THREADS_VARIABLE, "").strip()
        if not setting:
            return usable_cores()
        try:
            threads = int(setting)
        except ValueError:
            raise GraphInputError(
                f"{THREADS_VARIABLE}={setting!r} is not a whole number of threads"
            ) from None
        where = f" (from {THREADS_VARIABLE})"
    if isinstance(threads, (bool, np.bool_)) or not isinstance(threads, (int, np.integer)):
        raise GraphInputError(f"threads must be a positive integer, got {show(threads)}{where}")
    if threads < 1:
        raise GraphInputError(f"threads must be a positive integer, got {int(threads)}{where}")
    return min(int(threads), usable_cores())


def sweep_threads(threads: Any) -> int:
    """Workers of the sweeps (levels, heights, critical path, path counts).

    ``None`` without ``TOPORANK_NUM_THREADS`` means one worker: the serial
    loop measured fastest on citation-like graphs, so parallel sweeps run
    only on request.
    """
    if threads is None and not os.environ.get(THREADS_VARIABLE, "").strip():
        return 1
    return thread_count(threads)


COUNT_KINDS = ("spc", "splc", "spnp")


def choice(value: Any, name: str, options: tuple[str, ...]) -> str:
    """``value`` checked to be one of the strings ``options``."""
    if not isinstance(value, str) or value not in options:
        raise GraphInputError(f"{name} must be one of {options}, got {show(value)}")
    return value


def on_cycle_choice(on_cycle: Any) -> OnCycle:
    """``on_cycle`` checked against :data:`ON_CYCLE`."""
    if not isinstance(on_cycle, str) or on_cycle not in ON_CYCLE:
        raise GraphInputError(f"on_cycle must be one of {ON_CYCLE}, got {show(on_cycle)}")
    choice: OnCycle = on_cycle  # type: ignore[assignment]
    return choice


def policy(
    g: Graph, tie: Any, key: Any, descending: Any, seed: Any, ties: tuple[str, ...] = TIES
) -> tuple[np.ndarray | None, int]:
    """The key array (or ``None``) and the seed of a tie-break policy."""
    descending = switch(descending, "descending")
    if not isinstance(tie, str) or tie not in ties:
        raise GraphInputError(f"tie must be one of {ties}, got {show(tie)}")
    if tie == "critical":
        if key is not None or descending or seed is not None:
            raise GraphInputError("key, descending and seed do not apply to tie='critical'")
        return None, 0
    if tie != "priority" and (key is not None or descending):
        raise GraphInputError(f"key and descending apply to tie='priority', not to tie={tie!r}")
    if tie != "random" and seed is not None:
        raise GraphInputError(f"seed applies to tie='random', not to tie={tie!r}")
    key_array = None if key is None else node_key(g, key)
    return key_array, (random_seed(seed) if tie == "random" else 0)


def tie_list(ties: Any) -> tuple[str, ...]:
    """Policies to compare: a non-empty selection of :data:`SCHEDULE_TIES`, each once."""
    ordered(ties, "ties")
    if not isinstance(ties, (str, Iterable)) or isinstance(ties, (bytes, Mapping)):
        raise GraphInputError(
            f"ties must be a policy name or a sequence of them ({SCHEDULE_TIES}), got {show(ties)}"
        )
    chosen = (ties,) if isinstance(ties, str) else tuple(ties)
    if not chosen:
        raise GraphInputError(f"ties is empty; tie must be one of {SCHEDULE_TIES}")
    for tie in chosen:
        if not isinstance(tie, str) or tie not in SCHEDULE_TIES:
            raise GraphInputError(f"tie must be one of {SCHEDULE_TIES}, got {show(tie)}")
    repeated = [t for t in SCHEDULE_TIES if chosen.count(t) > 1]
    if repeated:
        raise GraphInputError(f"ties lists {repeated[0]!r} more than once")
    return chosen


def switch(value: Any, name: str) -> bool:
    """A yes/no argument: ``True``, ``False`` (numpy's too), or the integers 1 and 0."""
    if isinstance(value, (bool, np.bool_)):
        return bool(value)
    if isinstance(value, (int, np.integer)) and value in (0, 1):
        return bool(value)
    raise GraphInputError(f"{name} must be True or False, got {show(value)}")


def reference_key(g: Graph, key: Any, descending: Any) -> np.ndarray | None:
    """A reference key to compare orders with (``None`` without one)."""
    descending = switch(descending, "descending")
    if key is None:
        if descending:
            raise GraphInputError("descending applies to a key; pass key=... as well")
        return None
    return node_key(g, key)


def random_seed(seed: Any) -> int:
    """A seed in ``0..2**64 - 1``; ``None`` draws fresh entropy."""
    if seed is None:
        return int(np.random.SeedSequence().generate_state(1, np.uint64)[0])
    value = whole_number(seed, "seed")
    if not 0 <= value <= _UINT64_MAX:
        raise GraphInputError(f"seed must satisfy 0 <= seed < 2**64, got {value}")
    return value


def _label_note(g: Graph, node: int) -> str:
    return "" if g.labels is None else f" (node {show(g.labels[node])})"


def _integer_list(values: list[Any], name: str) -> np.ndarray | None:
    """Python ints as int64, or uint64 when some exceed int64; ``None`` if not all ints."""
    if not values or not all(
        isinstance(v, (int, np.integer)) and not isinstance(v, (bool, np.bool_)) for v in values
    ):
        return None
    low, high = min(int(v) for v in values), max(int(v) for v in values)
    if low >= -(2**63) and high <= _INT64_MAX:
        return np.array([int(v) for v in values], dtype=np.int64)
    if low >= 0 and high <= _UINT64_MAX:
        return np.array([int(v) for v in values], dtype=np.uint64)
    if low < -(2**63):
        at = next(k for k, v in enumerate(values) if int(v) < -(2**63))
    elif high > _UINT64_MAX:
        at = next(k for k, v in enumerate(values) if int(v) > _UINT64_MAX)
    else:  # negatives beside values from 2**63 up
        at = next(k for k, v in enumerate(values) if int(v) > _INT64_MAX)
    raise GraphInputError(
        f"{name}[{at}] = {int(values[at])} fits neither int64 nor uint64 beside the other "
        "values; integer keys must all lie in -2**63..2**63 - 1 or all in 0..2**64 - 1"
    )


def node_key(g: Graph, key: Any, name: str = "key") -> np.ndarray:
    """A per-node key as an int64, uint64 or float64 array of length ``n``.

    For a labelled graph ``key`` may also be a mapping from label to value.
    Integers stay integers (int64, or uint64 for values from 2**63 up);
    datetime64 and timedelta64 values order as their int64 counts;
    booleans, non-numeric values, NaN, NaT and a wrong length are refused.
    """
    if isinstance(key, Mapping):
        if g.labels is None:
            raise GraphInputError(
                f"{name} is a mapping, but the graph has integer ids; pass an array"
            )
        missing = [label for label in g.labels if label not in key]
        if missing:
            raise GraphInputError(f"{name} has no value for node {show(missing[0])}")
        key = [key[label] for label in g.labels]
    if isinstance(key, (list, tuple)):
        exact = _integer_list(list(key), name)
        array = exact if exact is not None else np.asarray(key)
    else:
        array = np.asarray(key)
    if array.ndim != 1 or len(array) != g.n:
        raise GraphInputError(
            f"{name} must be 1-D with one value per node ({g.n}), got shape {array.shape}"
        )
    kind = array.dtype.kind
    if kind == "f":
        array = np.ascontiguousarray(array, dtype=np.float64)
        nan = np.flatnonzero(np.isnan(array))
        if len(nan):
            # the core's wording for keys (it checks too, as an invariant)
            why = "; keys must be comparable" if name == "key" else ""
            raise GraphInputError(f"{name}[{nan[0]}] is NaN{_label_note(g, int(nan[0]))}{why}")
        return array
    if kind == "i":
        return np.ascontiguousarray(array, dtype=np.int64)
    if kind == "u":
        return np.ascontiguousarray(array, dtype=np.uint64)
    if kind in "mM":
        # dates and durations (one unit per array) order as their int64 counts
        nat = np.flatnonzero(np.isnat(array))
        if len(nat):
            at = int(nat[0])
            raise GraphInputError(
                f"{name}[{at}] is NaT{_label_note(g, at)}; keys must be comparable"
            )
        return np.ascontiguousarray(array).view(np.int64)
    raise GraphInputError(
        f"{name} has dtype {array.dtype}, expected integers, floats or datetime64"
    )


def node_weights(g: Graph, values: Any, name: str) -> np.ndarray:
    """Per-node numbers (array, or mapping for labelled graphs) as finite non-negative float64."""
    array = node_key(g, values, name).astype(np.float64, copy=False)
    bad = np.flatnonzero(~(np.isfinite(array) & (array >= 0)))
    if len(bad):
        at = int(bad[0])
        raise GraphInputError(
            f"{name}[{at}] = {array[at].item()}{_label_note(g, at)}; weights must be finite "
            "and non-negative"
        )
    return np.ascontiguousarray(array)


def durations(g: Graph, duration: Any) -> np.ndarray:
    """Task durations as int64 or float64, one per node, finite and non-negative."""
    if duration is None:
        return np.ones(g.n, dtype=np.int64)
    values = node_key(g, duration, "duration")
    if values.dtype == np.uint64:
        if len(values) and int(values.max()) > _INT64_MAX:
            node = int(values.argmax())
            raise GraphInputError(
                f"duration[{node}] = {int(values[node])} is too large for 64-bit integer "
                f"times{_label_note(g, node)}; pass float durations"
            )
        values = values.astype(np.int64)
    bad = np.flatnonzero(~np.isfinite(values) | (values < 0))
    if len(bad):
        node = int(bad[0])
        raise GraphInputError(
            f"duration[{node}] = {values[node].item()!r} is not a duration"
            f"{_label_note(g, node)}; durations must be finite and >= 0"
        )
    return values


def edge_values(g: Graph, values: Any, name: str, source: Any = None) -> np.ndarray:
    """Per-edge numbers as a float64 array in stored (CSR) edge order.

    ``values`` follows the package's edge order: the stored order for CSR
    input (a scipy CSR matrix's ``.data`` order), the input order for edge
    lists and label pairs, ``.tocoo()`` order for other sparse formats. The
    string ``"data"`` takes the stored values of ``source``, which must be the
    scipy sparse matrix the graph was read from. Every value must be finite
    and non-negative; the first that is not is named by input position and edge.
    """
    from ._graph import as_nodes, is_sparse

    if isinstance(values, str):
        if values != "data":
            raise GraphInputError(f"{name} must be an array of numbers or 'data', got {values!r}")
        if not is_sparse(source):
            raise GraphInputError(
                f"{name}='data' takes a scipy sparse matrix's stored values, but the graph is a "
                f"{type(source).__name__}"
            )
        values = source.data if source.format == "csr" else source.tocoo().data
    array = np.asarray(values)
    if array.ndim != 1 or len(array) != g.m:
        raise GraphInputError(
            f"{name} must be 1-D with one value per edge ({g.m}), got shape {array.shape}"
        )
    if len(array) and array.dtype.kind not in "iuf":
        raise GraphInputError(f"{name} has dtype {array.dtype}, expected integers or floats")
    array = np.ascontiguousarray(array, dtype=np.float64)
    bad = np.flatnonzero(~(np.isfinite(array) & (array >= 0)))
    positions = g.edge_input_positions()
    if len(bad):
        at = int(bad[0])
        stored = at if positions is None else int(np.flatnonzero(positions == at)[0])
        u = int(np.searchsorted(g.indptr, stored, side="right")) - 1
        ends = as_nodes(g, np.array([u, int(g.indices[stored])]))
        raise GraphInputError(
            f"{name}[{at}] = {array[at].item()} (edge {show(ends[0])} -> {show(ends[1])}); "
            "weights must be finite and non-negative"
        )
    return array if positions is None else array[positions]


def node_argument(g: Graph, node: Any, name: str) -> int:
    """A single node argument (an id, or a label of a labelled graph) as its id."""
    if g.labels is not None:
        try:
            return g.label_index[node]
        except (KeyError, TypeError):
            raise GraphInputError(f"{name} = {show(node)} is not a node of the graph") from None
    if isinstance(node, (bool, np.bool_)) or not isinstance(node, (int, np.integer)):
        raise GraphInputError(f"{name} must be an integer node id, got {show(node)}")
    value = int(node)
    if not 0 <= value < g.n:
        raise GraphInputError(
            f"{name} = {value} is not a node id; ids must satisfy 0 <= id < {g.n}"
        )
    return value


def ordered(values: Any, name: str) -> None:
    """Refuse a set: its order follows hashes, which for strings change from
    one run to the next, so node numbering and results would too."""
    if isinstance(values, (set, frozenset)):
        raise GraphInputError(
            f"{name} is a {type(values).__name__}, whose order changes from run to run "
            f"(string hashes are salted per process); pass a list, e.g. sorted({name})"
        )


def node_list(nodes: Any, name: str) -> list[Any]:
    """A sequence of nodes as a list; generators are read once, strings and sets refused."""
    if isinstance(nodes, (str, bytes, Mapping)) or not isinstance(nodes, Iterable):
        raise GraphInputError(f"{name} must be a sequence of nodes, got {type(nodes).__name__}")
    ordered(nodes, name)
    return list(nodes)


def node_ids(g: Graph, nodes: Any, name: str) -> tuple[np.ndarray, Any]:
    """``nodes`` (ids, or labels for a labelled graph) as an int64 id array, with the
    nodes as given (indexable, for messages).

    Unknown labels and ids beyond int64 map to -1; callers report them by
    position, showing the value as given.
    """
    if g.labels is not None:
        given = nodes if isinstance(nodes, np.ndarray) else node_list(nodes, name)
        index = g.label_index
        ids = np.empty(len(given), dtype=np.int64)
        for position, label in enumerate(given):
            if not isinstance(label, Hashable):
                raise GraphInputError(
                    f"{name}[{position}] = {show(label)} is not a node of the graph "
                    "(labels are hashable)"
                )
            ids[position] = index.get(label, -1)
        return ids, given
    if not isinstance(nodes, np.ndarray):
        nodes = node_list(nodes, name)
    return integer_ids(nodes, name), nodes


def integer_ids(nodes: Any, name: str) -> np.ndarray:
    """Integer node ids as an int64 array; values beyond int64 map to -1 (reported by callers)."""
    array = np.asarray(nodes)
    if array.dtype.kind in "fO" and isinstance(nodes, (list, tuple)):
        # numpy turns a list mixing small ints with ints from 2**63 up into
        # floats (or objects): keep Python ints exact
        exact = _exact_ids(nodes)
        if exact is not None:
            return exact
    if array.ndim != 1:
        raise GraphInputError(f"{name} must be 1-D, got shape {array.shape}")
    if len(array) == 0:
        return np.zeros(0, dtype=np.int64)
    if array.dtype.kind not in "iu":
        raise GraphInputError(f"{name} has dtype {array.dtype}, expected integer node ids")
    if array.dtype == np.uint64 and int(array.max()) > _INT64_MAX:
        return np.where(array > _INT64_MAX, -1, array).astype(np.int64)
    return np.ascontiguousarray(array, dtype=np.int64)


def _exact_ids(values: list[Any] | tuple[Any, ...]) -> np.ndarray | None:
    """Python ints as int64 ids, those beyond int64 as -1; ``None`` if not all ints."""
    if not all(
        isinstance(v, (int, np.integer)) and not isinstance(v, (bool, np.bool_)) for v in values
    ):
        return None
    exact = [v if -(2**63) <= v <= _INT64_MAX else -1 for v in map(int, values)]
    return np.array(exact, dtype=np.int64)


def distinct_labels(labels: np.ndarray) -> None:
    """Refuse a label list naming one node twice, naming the label."""
    seen: dict[Any, int] = {}
    for position, label in enumerate(labels.tolist()):
        try:
            first = seen.setdefault(label, position)
        except TypeError:
            raise GraphInputError(
                f"labels[{position}] = {show(label)} is not hashable; labels name nodes"
            ) from None
        if first != position:
            raise GraphInputError(
                f"labels[{position}] = {show(label)} repeats labels[{first}]; labels must be "
                "distinct"
            )


def cyclic_error(g: Graph, found: _core.Cyclic) -> CyclicGraphError:
    """The CyclicGraphError of a core ``Cyclic``, speaking labels for a labelled graph."""
    from ._graph import as_nodes

    return CyclicGraphError(
        as_nodes(g, found.cycle), as_nodes(g, found.order), as_nodes(g, found.blocked)
    )


def raise_cycle(g: Graph, found: _core.Cyclic) -> NoReturn:
    """Raise the CyclicGraphError of a core ``Cyclic``."""
    raise cyclic_error(g, found)
