"""Node-aligned side files: orders (one node per line, a CSV node column, ``.npy``) and keys."""

from __future__ import annotations

import dataclasses

import numpy as np

from .._graph import Graph
from .common import GraphFileError, check_path, local_copy, read_lines
from .options import ReadOptions
from .text import read_text_columns

__all__ = ["read_key", "read_nodes"]


def read_nodes(path: str, graph: Graph, *, progress: bool = False) -> np.ndarray:
    """Nodes listed in a file: one per line, a CSV's first (or ``node``) column, or ``.npy``.

    A first line that is a column name (not a node of the graph, while the
    next line is) is skipped as a header.
    """
    if path.endswith(".npy"):
        check_path(path)
        try:
            return np.load(path, allow_pickle=False)
        except (ValueError, OSError) as exc:
            raise GraphFileError(path, f"is not a readable .npy file ({exc})") from None
    labelled = graph.labels is not None
    options = ReadOptions(progress=progress, labels=labelled)
    with local_copy(path, options) as (local, shown):
        first = [line for _, line in _first_lines(local, shown, options, 2)]
        delimiter = "," if path.endswith(".csv") or "," in (first[0] if first else "") else "\t"
        fields = [line.rstrip("\r\n").split(delimiter) for line in first]
        columns: tuple[int | str, ...] = (0,)
        header = False
        if fields and "node" in [f.strip() for f in fields[0]]:
            columns, header = ("node",), True
        elif (
            len(fields) == 2 and not _is_node(graph, fields[0][0]) and _is_node(graph, fields[1][0])
        ):
            header = True
        options = dataclasses.replace(options, delimiter=delimiter, header=header, columns=columns)
        table = read_text_columns(local, shown, options, ("node",))
    values = table.values[0]
    if labelled:
        return np.asarray(values.to_numpy(zero_copy_only=False), dtype=object)
    return values


def _first_lines(path: str, shown: str, options: ReadOptions, count: int) -> list[tuple[int, str]]:
    lines = []
    for number, line in read_lines(path, shown, options):
        if line.strip() and not line.lstrip().startswith("#"):
            lines.append((number, line))
            if len(lines) == count:
                break
    return lines


def _is_node(graph: Graph, text: str) -> bool:
    text = text.strip()
    if graph.labels is not None:
        return text in graph.label_index
    return text.isdigit() and int(text) < graph.n


def read_key(path: str, graph: Graph, *, progress: bool = False) -> np.ndarray:
    """A per-node key read from a two-column file (node, value); every node needs one value."""
    labelled = graph.labels is not None
    options = ReadOptions(progress=progress, labels=labelled, columns=(0, 1))
    with local_copy(path, options) as (local, shown):
        table = read_text_columns(local, shown, options, ("node", "number"))
    nodes, values = table.values
    if labelled:
        index = graph.label_index
        names = nodes.to_numpy(zero_copy_only=False)
        ids = np.fromiter((index.get(x, -1) for x in names), dtype=np.int64, count=len(names))
    else:
        ids = np.asarray(nodes, dtype=np.int64)
        names = ids
    unknown = np.flatnonzero((ids < 0) | (ids >= graph.n))
    if len(unknown):
        raise GraphFileError(
            shown, f"names node {_shown(names[unknown[0]])!r}, which is not in the graph"
        )
    counts = np.bincount(ids, minlength=graph.n)
    repeated = np.flatnonzero(counts > 1)
    if len(repeated):
        node = repeated[0] if graph.labels is None else graph.labels[repeated[0]]
        rows = np.flatnonzero(ids == repeated[0])[:2]
        raise GraphFileError(
            shown,
            f"gives node {_shown(node)!r} {counts[repeated[0]]} values (entries {rows[0] + 1} "
            f"and {rows[1] + 1}); every node needs exactly one",
        )
    key = np.full(graph.n, np.nan)
    key[ids] = values
    missing = np.flatnonzero(np.isnan(key))
    if len(missing):
        node = missing[0] if graph.labels is None else graph.labels[missing[0]]
        raise GraphFileError(shown, f"has no value for node {_shown(node)!r}; every node needs one")
    if np.all(key == np.round(key)) and np.all(np.abs(key) < 2**53):
        return key.astype(np.int64)
    return key


def _shown(value: object) -> object:
    return value.item() if isinstance(value, np.generic) else value
