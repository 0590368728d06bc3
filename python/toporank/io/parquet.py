"""Parquet edge lists: one file or a dataset (a folder of files), two columns chosen by name.

Files are read in the order of their paths, each row group by row group in
batches of about ``BATCH_EDGES`` rows, so memory stays bounded. Integer
columns are node ids; string (or dictionary-of-string) columns are labels,
interned batch by batch.
"""

from __future__ import annotations

from collections.abc import Iterator, Sequence
from typing import Any

import numpy as np

from .._errors import GraphInputError
from .build import BATCH_EDGES, EdgeBatch, LabelIndex
from .common import GraphFileError
from .options import ReadOptions
from .write import _bar

__all__ = ["ParquetEdges"]


class ParquetEdges:
    """The edges of a Parquet file or dataset as an iterator of batches, read once.

    :meth:`labels` gives the node names of a labelled dataset once the
    batches are spent (None for integer ids).
    """

    def __init__(self, name: str, options: ReadOptions) -> None:
        import pyarrow.dataset as ds

        self.name = name
        self.options = options
        self.index: LabelIndex | None = None
        try:
            dataset = ds.dataset(name, format="parquet")
        except (OSError, ValueError) as exc:
            raise GraphFileError(
                name, f"is not a readable Parquet file or dataset ({exc})"
            ) from None
        self.files = sorted(dataset.files)
        if not self.files:
            raise GraphFileError(
                name,
                "holds no Parquet files (a folder is read as a Parquet dataset unless it "
                "holds graph.json, a saved graph)",
            )
        self.columns = _chosen(name, dataset.schema, options.columns)
        kinds = [_kind(name, dataset.schema.field(c)) for c in self.columns]
        if kinds[0] != kinds[1]:
            raise GraphFileError(
                name,
                f"columns {self.columns[0]!r} and {self.columns[1]!r} must both be integer ids "
                "or both be string labels",
            )
        self.kind = kinds[0]
        self.rows = dataset.count_rows()

    def labels(self) -> np.ndarray | None:
        """Node names (string columns), or None for integer ids."""
        return None if self.index is None else self.index.labels()

    def __iter__(self) -> Iterator[EdgeBatch]:
        import pyarrow as pa
        import pyarrow.parquet as pq

        if self.kind == "label":
            self.index = LabelIndex()
        with _bar(self.rows, "reading", self.name, self.options.progress, unit="edges") as bar:
            for path in self.files:
                try:
                    source = pq.ParquetFile(path)
                    batches = source.iter_batches(batch_size=BATCH_EDGES, columns=self.columns)
                    row = 0
                    for batch in batches:
                        yield self._batch(path, row, batch)
                        row += batch.num_rows
                        bar.update(batch.num_rows)
                except (OSError, pa.ArrowInvalid) as exc:
                    raise GraphFileError(path, f"cannot read Parquet data ({exc})") from None

    def _batch(self, path: str, row: int, batch: Any) -> EdgeBatch:
        import pyarrow as pa
        import pyarrow.compute as pc

        values = []
        for name in self.columns:
            column = batch.column(name)
            if column.null_count:
                at = row + int(pc.index(pc.is_null(column), True).as_py())
                raise GraphFileError(path, f"row {at}, column {name!r}: a missing node")
            if self.kind == "label":
                if pa.types.is_dictionary(column.type):
                    column = column.cast(column.type.value_type)
                values.append(column)
                continue
            array = column.to_numpy()
            if array.dtype.kind == "i" and len(array) and int(array.min()) < 0:
                at = int(np.argmin(array))
                raise GraphFileError(
                    path,
                    f"row {row + at}, column {name!r}: {int(array[at])} is not a node id; "
                    "ids must be >= 0",
                )
            if array.dtype.kind == "u" and len(array) and int(array.max()) > 2**63 - 1:
                at = int(np.argmax(array))
                raise GraphFileError(
                    path,
                    f"row {row + at}, column {name!r}: {int(array[at])} is too large a node id; "
                    "ids must be below 2**63",
                )
            values.append(array)
        if self.index is not None:
            return self.index.intern(values[0], values[1])
        return EdgeBatch(values[0], values[1])


def _chosen(name: str, schema: Any, columns: Sequence[int | str]) -> list[str]:
    names = list(schema.names)
    if len(columns) != 2:
        raise GraphInputError(f"columns must name 2 columns, got {list(columns)!r}")
    chosen = []
    for column in columns:
        if isinstance(column, str):
            if column not in names:
                raise GraphFileError(name, f"no column named {column!r}; the columns are {names}")
            chosen.append(column)
        else:
            if not 0 <= int(column) < len(names):
                raise GraphFileError(
                    name, f"has {len(names)} columns ({names}); there is no column {column}"
                )
            chosen.append(names[int(column)])
    if chosen[0] == chosen[1]:
        raise GraphInputError(
            f"columns {chosen[0]!r} and {chosen[1]!r} name the same column twice; "
            "give the source column, then a different target column"
        )
    return chosen


def _kind(name: str, field: Any) -> str:
    import pyarrow as pa

    kind = field.type
    if pa.types.is_dictionary(kind):
        kind = kind.value_type
    if pa.types.is_integer(kind):
        return "id"
    if pa.types.is_string(kind) or pa.types.is_large_string(kind):
        return "label"
    raise GraphFileError(
        name, f"column {field.name!r} has type {field.type}; node columns hold integers or strings"
    )
