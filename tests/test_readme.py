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


SHELL = re.search(r"## From the shell\n.*?```bash\n(.*?)```", README.read_text(), flags=re.S)


def _shell_commands() -> list[str]:
    assert SHELL is not None
    joined = SHELL.group(1).replace("\\\n", " ")
    return [line for line in joined.splitlines() if line.strip() and not line.startswith("#")]


def test_readme_shell_commands_run_as_written_on_the_demo_folder(tmp_path):
    """Every command of "From the shell", in order, in a fresh folder; the demo comes first."""
    import os
    import shutil
    import subprocess
    import sys

    pytest.importorskip("matplotlib")
    commands = _shell_commands()
    assert commands[0].startswith("toporank demo") and len(commands) >= 7
    bin_folder = os.path.dirname(sys.executable)
    assert shutil.which("toporank", path=bin_folder), "the console script is installed"
    environment = {**os.environ, "PATH": bin_folder + os.pathsep + os.environ.get("PATH", "")}
    for command in commands:
        # a trailing "# exit N" comment states the documented exit status (common practice)
        expected = int(m.group(1)) if (m := re.search(r"# exit (\d)", command)) else 0
        result = subprocess.run(
            ["bash", "-c", command],
            cwd=tmp_path,
            env=environment,
            capture_output=True,
            text=True,
            timeout=300,
        )
        assert result.returncode == expected, (command, result.stderr)
        assert "Traceback" not in result.stderr
    # everything the commands wrote went into the demo folder, none into the working folder
    assert sorted(os.listdir(tmp_path)) == ["toporank-demo"]
    demo = tmp_path / "toporank-demo"
    for name in ("order.csv", "summary.json", "levels.csv", "policies.csv", "policies.png"):
        assert (demo / name).stat().st_size > 0, name
