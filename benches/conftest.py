"""Shared bench helpers: sizes, interleaved timing, and a ratio table at the end.

Run the full suite with ``python -m pytest benches --benchmark-enable -s``;
``TOPORANK_BENCH_SMALL=1`` shrinks every graph so the normal test command can
smoke-run the benches in seconds (ratios are then meaningless and not checked).
"""

from __future__ import annotations

import os
import statistics
import time

import pytest

SMALL = os.environ.get("TOPORANK_BENCH_SMALL") == "1"

_ROWS: list[tuple[str, float, str]] = []


def scaled(full: int, small: int) -> int:
    """``full`` for a real benchmark run, ``small`` for a smoke run."""
    return small if SMALL else full


def interleaved(fns: dict[str, object], repeat: int = 5) -> dict[str, float]:
    """Median seconds of each callable, running them in turn so load affects all alike."""
    times: dict[str, list[float]] = {name: [] for name in fns}
    for _ in range(1 if SMALL else repeat):
        for name, fn in fns.items():
            start = time.perf_counter()
            fn()
            times[name].append(time.perf_counter() - start)
    return {name: statistics.median(values) for name, values in times.items()}


@pytest.fixture
def ratio_table():
    """Record ``(what, value, target)`` rows; all rows are printed after the run."""

    def record(what: str, value: float, target: str = "") -> float:
        _ROWS.append((what, value, target))
        return value

    return record


def pytest_terminal_summary(terminalreporter):
    if not _ROWS:
        return
    terminalreporter.section("toporank ratios (measured side by side in this run)")
    if SMALL:
        terminalreporter.write_line("smoke run on tiny graphs: ratios below are not meaningful")
    width = max(len(row[0]) for row in _ROWS)
    for what, value, target in _ROWS:
        terminalreporter.write_line(f"{what:<{width}}  {value:10.4g}   {target}")
