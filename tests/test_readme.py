"""The README's Python examples run as written, and their commented results hold."""

from __future__ import annotations

import ast
import re
from pathlib import Path

import pytest

README = Path(__file__).resolve().parent.parent / "README.md"
RESULT = re.compile(r"(array\(.*?\)|\[.*?\]|-?\d+\.\d+, \[.*?\]|None)(:|\s{2,}|$)")
BLOCKS = re.findall(r"```python\n(.*?)```", README.read_text(), flags=re.S)


def test_readme_has_python_examples():
    assert len(BLOCKS) >= 4


@pytest.mark.parametrize("number", range(len(BLOCKS)))
def test_readme_example_runs(number, tmp_path, monkeypatch):
    pytest.importorskip("matplotlib")
    monkeypatch.chdir(tmp_path)  # examples that write files write them here
    exec(compile(BLOCKS[number], f"README.md python block {number}", "exec"), {})


def test_readme_commented_results_hold(tmp_path, monkeypatch):
    # A statement whose line ends in a comment that starts with a literal
    # result (array(...), a list, a number, None) must evaluate to it.
    pytest.importorskip("matplotlib")
    monkeypatch.chdir(tmp_path)
    checked = 0
    for block in BLOCKS:
        namespace: dict[str, object] = {}
        lines = block.splitlines()
        for statement in ast.parse(block).body:
            source = ast.get_source_segment(block, statement) or ""
            comment = lines[statement.end_lineno - 1].partition("#")[2].strip()
            literal = RESULT.match(comment)
            if isinstance(statement, ast.Expr) and literal:
                got = eval(source, namespace)
                expected = eval(literal.group(1), {"array": _array, "dtype": object})
                assert _normal(got) == _normal(expected), source
                checked += 1
            else:
                exec(source, namespace)
    assert checked >= 8


def _array(values, dtype=None):
    return list(values)


def _normal(value):
    import numpy as np

    if isinstance(value, tuple):
        return [_normal(v) for v in value]
    if isinstance(value, np.ndarray):
        return value.tolist()
    if isinstance(value, list):
        return [_normal(v) for v in value]
    return value
