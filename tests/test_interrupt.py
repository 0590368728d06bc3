"""Ctrl-C reaches the compiled core: a long call ends with KeyboardInterrupt promptly.

Each case runs one public entry point in a child interpreter on a graph large
enough that the call lasts several seconds, sends SIGINT from here shortly
after the child says it has entered the call, and expects the child to die
of KeyboardInterrupt within a second of the signal, as Python does on an
uncaught KeyboardInterrupt (it re-raises SIGINT after printing the traceback,
so the exit status is "killed by SIGINT": common practice since Python 3.8).
A core that never asked Python about pending signals would finish the call
instead (seconds later), so these tests fail on a build that ignores Ctrl-C.

The graphs are built with numpy in the child, in about a second: ``n`` nodes,
each with ``d`` edges to random nodes among the next ``window`` ids, then
``window`` sinks (a DAG in which the identity is a topological order);
``cyclic`` adds an edge from the last node to node 0, which closes a cycle
through most nodes.
"""

from __future__ import annotations

import fcntl
import os
import pty
import selectors
import signal
import struct
import subprocess
import sys
import termios
import textwrap
import time

import numpy as np
import pytest

import toporank

pytestmark = pytest.mark.skipif(sys.platform == "win32", reason="POSIX signals")

# Seconds from the signal to the KeyboardInterrupt in the child: the core
# asks Python every 0.1 s (interrupt.rs), so a second leaves room for a
# loaded machine.
PROMPT = 1.0
# Seconds between the child's "started" (its entry to the core function) and
# the signal: well inside the core's work, which lasts seconds.
DELAY = 0.3

CHILD = """
import sys, time
import numpy as np
import scipy.sparse  # condense imports it on first use: not inside the timed window
import toporank

n, d, window, cyclic = {n}, {d}, {window}, {cyclic}
rng = np.random.default_rng(0)
m = n * d
indices = rng.integers(1, window + 1, m, dtype=np.int32)
indices += np.repeat(np.arange(n, dtype=np.int32), d)
indptr = np.minimum(np.arange(n + window + 1, dtype=np.int64) * d, m)
if cyclic:
    indices = np.append(indices, np.int32(0))
    indptr[-1] += 1
g = toporank.Graph.from_csr(indptr, indices)
identity = np.arange(n + window)
key = rng.random(n + window)
inner = toporank._core.{cue}


def entered(*args, **kwargs):  # "started" on entry to the core, past the call's numpy work
    print("started", flush=True)
    return inner(*args, **kwargs)


toporank._core.{cue} = entered
try:
    {call}
except KeyboardInterrupt:
    print("interrupted", time.monotonic(), flush=True)
    raise
print("returned", flush=True)
"""

# name: (call, core function, n, d, window, cyclic); each call lasts a few
# seconds here. The clock starts on entry to the core function that does the
# long work: some calls do numpy work of their own first, and its length
# varies with the machine, so a fixed wait could land the signal there.
CASES = {
    "order_fifo": ("toporank.order(g)", "kahn_order", 4_000_000, 24, 1 << 22, False),
    "order_fifo_one_thread": (
        "toporank.order(g, threads=1)",
        "kahn_order",
        4_000_000,
        24,
        1 << 22,
        False,
    ),
    "order_priority": (
        'toporank.order(g, tie="priority", key=key)',
        "kahn_order",
        4_000_000,
        16,
        1 << 22,
        False,
    ),
    "levels": ("toporank.levels(g)", "levels", 4_000_000, 24, 1 << 22, False),
    "heights": ("toporank.heights(g)", "heights", 4_000_000, 24, 1 << 22, False),
    "critical_path": ("toporank.critical_path(g)", "critical_path", 4_000_000, 16, 1 << 22, False),
    "path_counts": ("toporank.path_counts(g)", "path_counts", 4_000_000, 16, 1 << 22, False),
    "components": ("toporank.components(g)", "strong_components", 4_000_000, 24, 1 << 22, True),
    "condense": ("toporank.condense(g)", "condensation", 4_000_000, 6, 1 << 22, True),
    "cut_cycles": ("toporank.cut_cycles(g)", "cut_cycles", 4_000_000, 8, 1 << 22, True),
    "verify_order": (
        "toporank.verify_order(g, identity)",
        "verify_order",
        4_000_000,
        24,
        1 << 22,
        False,
    ),
    "order_metrics": (
        "toporank.order_metrics(g, identity)",
        "order_metrics",
        4_000_000,
        24,
        1 << 22,
        False,
    ),
    "schedule": ("toporank.schedule(g, workers=4)", "list_schedule", 4_000_000, 16, 1 << 22, False),
    "main_path": ("toporank.main_path(g)", "main_path", 4_000_000, 16, 1 << 22, False),
}


def _interrupt(
    call: str, cue: str, n: int, d: int, window: int, cyclic: bool, delay: float = DELAY
) -> tuple[float, str]:
    """Run ``call`` in a child, interrupt it inside the call; the latency and stderr."""
    script = CHILD.format(n=n, d=d, window=window, cyclic=cyclic, call=call, cue=cue)
    child = subprocess.Popen(
        [sys.executable, "-c", textwrap.dedent(script)],
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
    )
    try:
        assert child.stdout is not None
        with selectors.DefaultSelector() as waiting:
            waiting.register(child.stdout, selectors.EVENT_READ)
            if not waiting.select(timeout=30):
                pytest.fail("the child did not start the call within 30 s")
        line = child.stdout.readline()
        assert line == "started\n", line + child.communicate(timeout=10)[1][-2000:]
        time.sleep(delay)
        sent = time.monotonic()
        child.send_signal(signal.SIGINT)
        out, err = child.communicate(timeout=20)
    finally:
        if child.poll() is None:
            child.kill()
            child.wait()
    assert "returned" not in out, f"the call finished despite the signal; stderr: {err[-2000:]}"
    stamp = [line for line in out.splitlines() if line.startswith("interrupted ")]
    assert stamp, f"no KeyboardInterrupt; exit {child.returncode}; stderr: {err[-2000:]}"
    # Python's own exit on an uncaught KeyboardInterrupt: the traceback, then
    # death by SIGINT (not a plain error exit, not a crash).
    assert child.returncode == -signal.SIGINT, err[-2000:]
    assert err.rstrip().endswith("KeyboardInterrupt: interrupted"), err[-2000:]
    return float(stamp[0].split()[1]) - sent, err


@pytest.mark.parametrize("name", list(CASES))
def test_ctrl_c_ends_a_long_call_promptly(name):
    latency, _ = _interrupt(*CASES[name])
    print(f"interrupt latency {name}: {latency * 1000:.0f} ms")
    assert latency < PROMPT, f"{name}: KeyboardInterrupt {latency:.3f} s after the signal"


def _wait_for(fd: int, text: bytes, seconds: float) -> bytes:
    """What ``fd`` yields until ``text`` appears (fails after ``seconds``)."""
    seen = b""
    deadline = time.monotonic() + seconds
    with selectors.DefaultSelector() as waiting:
        waiting.register(fd, selectors.EVENT_READ)
        while text not in seen:
            left = deadline - time.monotonic()
            assert left > 0 and waiting.select(timeout=left), f"no {text!r} in {seen[-500:]!r}"
            try:
                chunk = os.read(fd, 4096)
            except OSError:  # the terminal closed: the command ended
                chunk = b""
            assert chunk, f"no {text!r} before the end: {seen[-500:]!r}"
            seen += chunk
    return seen


def _drain(fd: int) -> bytes:
    """Everything still to read from the terminal of a command that ended."""
    seen = b""
    with selectors.DefaultSelector() as waiting:
        waiting.register(fd, selectors.EVENT_READ)
        while waiting.select(timeout=2):
            try:
                chunk = os.read(fd, 4096)
            except OSError:  # closed: all read
                break
            if not chunk:
                break
            seen += chunk
    return seen


def test_command_interrupted_while_ordering_exits_130_and_writes_nothing(tmp_path):
    # A saved graph opens memory-mapped at once, so the time goes to the
    # ordering itself (smallest id first: a few seconds here); on a terminal
    # the command shows "ordering" while it works, the cue for the signal.
    n, d, window = 4_000_000, 24, 1 << 22
    rng = np.random.default_rng(0)
    indices = rng.integers(1, window + 1, n * d, dtype=np.int32)
    indices += np.repeat(np.arange(n, dtype=np.int32), d)
    indptr = np.minimum(np.arange(n + window + 1, dtype=np.int64) * d, n * d)
    toporank.save_graph(toporank.Graph.from_csr(indptr, indices), tmp_path / "graph")
    del indices, indptr
    out = tmp_path / "out"
    out.mkdir()
    graph, output = str(tmp_path / "graph"), str(out / "o")
    command = [sys.executable, "-m", "toporank", "order", graph, "-o", output, "--tie", "priority"]
    terminal, child_end = pty.openpty()
    # rows and columns, as a terminal window has (the spinner draws nothing in 0 x 0)
    fcntl.ioctl(child_end, termios.TIOCSWINSZ, struct.pack("HHHH", 24, 80, 0, 0))
    try:
        process = subprocess.Popen(
            command,
            stdout=subprocess.DEVNULL,
            stderr=child_end,
        )
        os.close(child_end)
        try:
            _wait_for(terminal, b"ordering", 30)
            time.sleep(DELAY)
            sent = time.monotonic()
            process.send_signal(signal.SIGINT)
            status = process.wait(timeout=20)
            latency = time.monotonic() - sent
            said = _drain(terminal)
        finally:
            if process.poll() is None:
                process.kill()
                process.wait()
    finally:
        os.close(terminal)
    print(f"interrupt latency command order (to exit): {latency * 1000:.0f} ms")
    assert status == 130, said[-2000:]
    assert b"interrupted; no output was written" in said, said[-2000:]
    assert latency < 2 * PROMPT  # the exit itself included
    assert list(out.iterdir()) == []  # neither the output nor a temporary
