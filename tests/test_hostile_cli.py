"""Hostile input and misuse of the command and the readers: never a hang, a traceback or a
clobbered file. Each test runs the command in a subprocess with a time limit where a hang
or a crash is possible. References: POSIX file semantics (FIFOs, symlinks, permission bits,
/dev/full answering ENOSPC) and shell conventions (exit statuses), marked "common practice".
"""

from __future__ import annotations

import gzip
import os
import shutil
import stat
import subprocess
import sys
import tempfile
import threading

import numpy as np
import pytest

import toporank
from toporank.cli import main

EDGES = "0\t1\n1\t2\n"  # the order of this chain is 0 1 2 (common practice: a path has one order)


def _script(*argv, timeout=60, **kwargs):
    return subprocess.run(
        [sys.executable, "-m", "toporank", *map(str, argv)],
        capture_output=True,
        text=True,
        timeout=timeout,
        **kwargs,
    )


def _one_line_error(err: str, *parts: str) -> None:
    assert err.startswith("toporank: ") and err.count("\n") == 1, err
    assert "Traceback" not in err
    for part in parts:
        assert part in err, err


def _feed_fifo(path, data: bytes) -> threading.Thread:
    def write() -> None:
        with open(path, "wb") as f:
            f.write(data)

    thread = threading.Thread(target=write, daemon=True)
    thread.start()
    return thread


# 3. FIFO input and process substitution --------------------------------------------


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="needs FIFOs")
def test_fifo_input_is_read_once(tmp_path):
    fifo = tmp_path / "edges.fifo"
    os.mkfifo(fifo)
    writer = _feed_fifo(fifo, EDGES.encode())
    result = _script("order", fifo, timeout=30)
    writer.join(5)
    assert result.returncode == 0, result.stderr
    assert result.stdout.split() == ["0", "1", "2"]


@pytest.mark.skipif(shutil.which("bash") is None, reason="needs bash")
def test_process_substitution(tmp_path):
    command = f"{sys.executable} -m toporank order <(printf '{EDGES}')"
    result = subprocess.run(["bash", "-c", command], capture_output=True, text=True, timeout=30)
    assert result.returncode == 0, result.stderr
    assert result.stdout.split() == ["0", "1", "2"]


def test_spool_limit_ends_with_a_clear_error_and_no_temporary_left(tmp_path):
    spool_folder = tmp_path / "tmp"
    spool_folder.mkdir()
    environment = {**os.environ, "TOPORANK_SPOOL_LIMIT": "1000", "TMPDIR": str(spool_folder)}
    result = _script("order", "-", input=EDGES * 200, env=environment, timeout=30)
    assert result.returncode == 2
    _one_line_error(result.stderr, "<stdin>: more than 1000 bytes", "TOPORANK_SPOOL_LIMIT")
    assert os.listdir(spool_folder) == []


# 4. long lines and endless input ------------------------------------------------


def test_dev_zero_ends_quickly_with_an_error():
    if not os.path.exists("/dev/zero"):
        pytest.skip("needs /dev/zero")
    result = _script("order", "/dev/zero", timeout=30)
    assert result.returncode == 2
    _one_line_error(result.stderr, "/dev/zero:1: a line longer than")


def test_stdin_from_dev_zero_ends_quickly_and_leaves_no_spool(tmp_path):
    if not os.path.exists("/dev/zero"):
        pytest.skip("needs /dev/zero")
    spool_folder = tmp_path / "tmp"
    spool_folder.mkdir()
    with open("/dev/zero", "rb") as zero:
        result = subprocess.run(
            [sys.executable, "-m", "toporank", "order", "-"],
            stdin=zero,
            capture_output=True,
            text=True,
            timeout=30,
            env={**os.environ, "TMPDIR": str(spool_folder)},
        )
    assert result.returncode == 2
    _one_line_error(result.stderr, "<stdin>:1: a line longer than")
    assert os.listdir(spool_folder) == []


def test_long_line_in_a_regular_file_is_named(tmp_path):
    path = tmp_path / "e.tsv"
    path.write_text("0\t1\n" + "7" * 5000 + "\t1\n")
    environment = {**os.environ, "TOPORANK_MAX_LINE_BYTES": "1000"}
    result = _script("order", path, env=environment, timeout=30)
    assert result.returncode == 2
    _one_line_error(result.stderr, f"{path}:2: a line longer than 1000 bytes")


def test_long_second_line_of_a_gz_is_refused_by_the_sniffer(tmp_path):
    path = tmp_path / "e.tsv.gz"
    with gzip.open(path, "wb") as f:
        f.write(b"0\t1\n")
        f.write(b"1" * (4 << 20))  # 4 MiB with no line end, over the 1 MiB default
    result = _script("order", path, timeout=60)
    assert result.returncode == 2
    _one_line_error(result.stderr, f"{path}:2: a line longer than")


# 8. -o onto files that are not plain regular files ----------------------------------


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="needs FIFOs")
def test_output_to_a_fifo_is_written_as_a_stream(tmp_path):
    graph = tmp_path / "e.tsv"
    graph.write_text(EDGES)
    fifo = tmp_path / "out.fifo"
    os.mkfifo(fifo)
    received: list[bytes] = []

    def read() -> None:
        with open(fifo, "rb") as f:
            received.append(f.read())

    reader = threading.Thread(target=read, daemon=True)
    reader.start()
    result = _script("order", graph, "-o", fifo, timeout=30)
    reader.join(10)
    assert result.returncode == 0, result.stderr
    assert received == [b"0\n1\n2\n"]
    assert stat.S_ISFIFO(os.lstat(fifo).st_mode)  # still a FIFO, not replaced
    assert sorted(os.listdir(tmp_path)) == ["e.tsv", "out.fifo"]


def test_output_through_a_symlink_keeps_the_link_and_the_mode(tmp_path):
    graph = tmp_path / "e.tsv"
    graph.write_text(EDGES)
    target = tmp_path / "target.txt"
    target.write_text("old\n")
    os.chmod(target, 0o640)
    link = tmp_path / "link.txt"
    os.symlink(target.name, link)
    result = _script("order", graph, "-o", link, timeout=30)
    assert result.returncode == 0, result.stderr
    assert os.path.islink(link) and os.readlink(link) == target.name
    assert target.read_text() == "0\n1\n2\n"
    assert stat.S_IMODE(os.stat(target).st_mode) == 0o640


def _private_full_device(folder):
    """A node of the /dev/full device in ``folder``, so a regression clobbers only it."""
    path = folder / "full"
    try:
        os.mknod(path, 0o666 | stat.S_IFCHR, os.makedev(1, 7))
    except (PermissionError, AttributeError, OSError):
        pytest.skip("cannot make a device node here (needs root on Linux)")
    return path


def test_output_to_a_link_to_stdout_is_a_stream(tmp_path):
    # a private link like /dev/stdout (-> /proc/self/fd/1), so a regression replaces only it
    if not os.path.isdir("/proc/self/fd"):
        pytest.skip("needs /proc")
    graph = tmp_path / "e.tsv"
    graph.write_text(EDGES)
    link = tmp_path / "stdout"
    os.symlink("/proc/self/fd/1", link)
    result = _script("order", graph, "-o", link, "-q", timeout=30)
    assert result.returncode == 0, result.stderr
    assert result.stdout.split() == ["0", "1", "2"]
    assert os.readlink(link) == "/proc/self/fd/1"
    assert sorted(os.listdir(tmp_path)) == ["e.tsv", "stdout"]


def test_full_device_reports_no_space_left(tmp_path):
    full = _private_full_device(tmp_path)
    graph = tmp_path / "e.tsv"
    graph.write_text(EDGES)
    result = _script("order", graph, "-o", full, timeout=30)
    assert result.returncode == 2
    _one_line_error(result.stderr, f"cannot write {full}: no space left")
    assert stat.S_ISCHR(os.stat(full).st_mode)  # still the device, not a regular file
    assert sorted(os.listdir(tmp_path)) == ["e.tsv", "full"]


# 9. messages and exception types -------------------------------------------------


def test_columns_zero_zero_in_python_is_a_graph_input_error(tmp_path):
    path = tmp_path / "e.tsv"
    path.write_text(EDGES)
    with pytest.raises(toporank.GraphInputError, match="name the same column twice"):
        toporank.read_graph(path, columns=(0, 0))


@pytest.mark.parametrize(
    ("entry", "words"),
    [(np.array([[3, 3]]), "2-D int64"), (np.array([3.0, 3.0]), "1-D float64")],
)
def test_npz_shape_entry_of_the_wrong_kind(tmp_path, entry, words):
    path = tmp_path / "g.npz"
    np.savez(
        path,
        format=np.array("csr"),
        shape=entry,
        data=np.zeros(0),
        indices=np.zeros(0, dtype=np.int32),
        indptr=np.zeros(4, dtype=np.int32),
    )
    with pytest.raises(toporank.GraphFileError, match=f"{path}: its shape entry is a {words}"):
        toporank.read_graph(path)


def test_npz_edge_arrays_of_the_wrong_kind(tmp_path):
    path = tmp_path / "g.npz"
    np.savez(path, src=np.array([0.0, 1.0]), dst=np.array([1, 2]))
    with pytest.raises(toporank.GraphFileError, match="its src array is a 1-D float64 array"):
        toporank.read_graph(path)


def test_truncated_gz_names_the_file(tmp_path):
    whole = gzip.compress(("0\t1\n" * 5000).encode())
    path = tmp_path / "e.tsv.gz"
    path.write_bytes(whole[: len(whole) // 2])
    with pytest.raises(toporank.GraphFileError, match=f"{path}: is a truncated .gz file"):
        toporank.read_graph(path)


def test_closed_stdout_is_an_error_not_a_traceback(tmp_path):
    graph = tmp_path / "e.tsv"
    graph.write_text(EDGES)
    result = subprocess.run(
        f"{sys.executable} -m toporank order {graph} >&-",
        shell=True,
        capture_output=False,
        stderr=subprocess.PIPE,
        text=True,
        timeout=30,
    )
    assert result.returncode == 2
    _one_line_error(result.stderr, "standard output is closed")


def test_ctrl_c_while_the_command_imports_prints_no_traceback():
    # a KeyboardInterrupt raised while numpy loads, as Ctrl-C pressed at start-up would
    code = (
        "import sys\n"
        "class Stop:\n"
        "    def find_spec(self, name, path=None, target=None):\n"
        "        if name == 'numpy':\n"
        "            raise KeyboardInterrupt\n"
        "sys.meta_path.insert(0, Stop())\n"
        "sys.argv = ['toporank', 'order', 'x']\n"
        "import toporank\n"
    )
    result = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, timeout=60
    )
    assert result.returncode == 130, result.stderr
    assert "Traceback" not in result.stderr
    assert result.stderr.startswith("toporank: interrupted")


# 10. messages naming the value ------------------------------------------------------


def test_npy_negative_id_names_row_and_column(tmp_path):
    path = tmp_path / "e.npy"
    np.save(path, np.array([[0, 1], [-1, 2]]))
    with pytest.raises(toporank.GraphFileError) as caught:
        toporank.read_graph(path)
    message = str(caught.value)
    assert "row 1, column 0 = -1" in message and "]" not in message


def test_folder_and_device_inputs_are_not_called_missing(tmp_path, capsys):
    folder = tmp_path / "d.npy"
    folder.mkdir()
    assert main(["order", str(folder)]) == 2
    _one_line_error(capsys.readouterr().err, f"{folder}: is a folder, not a file")
    assert main(["order", "/dev/null", "--format", "mtx"]) == 2
    err = capsys.readouterr().err
    assert "no such file" not in err and "/dev/null" in err


def test_permission_denied_is_not_called_missing(tmp_path):
    folder = tempfile.mkdtemp()
    try:
        os.chmod(folder, 0o755)
        path = os.path.join(folder, "e.npy")
        np.save(path, np.array([[0, 1]]))
        os.chmod(path, 0)
        kwargs = {}
        if os.geteuid() == 0:
            # root reads any file: run as the unprivileged "nobody" (uid 65534) instead
            kwargs = {"user": 65534, "group": 65534, "extra_groups": []}
        try:
            result = subprocess.run(
                [sys.executable, "-m", "toporank", "order", path],
                capture_output=True,
                text=True,
                timeout=60,
                cwd="/",
                **kwargs,
            )
        except PermissionError:
            pytest.skip("the unprivileged user cannot run this interpreter")
        if "toporank" not in result.stderr:
            pytest.skip(f"the unprivileged user cannot import toporank: {result.stderr[-200:]}")
        assert result.returncode == 2, result.stderr
        _one_line_error(result.stderr, f"{path}: permission denied")
    finally:
        shutil.rmtree(folder, ignore_errors=True)


def test_summary_written_is_not_called_nothing_written(tmp_path, capsys):
    graph = tmp_path / "c.tsv"
    graph.write_text("a\tb\nb\ta\n")
    summary = tmp_path / "s.json"
    assert main(["order", str(graph), "--summary", str(summary)]) == 1
    err = capsys.readouterr().err
    assert "Nothing was written" not in err
    assert f"Only the summary was written to {summary}" in err
    assert summary.exists()


def test_negative_column_is_not_a_header_name(tmp_path, capsys):
    graph = tmp_path / "e.tsv"
    graph.write_text(EDGES)
    assert main(["order", str(graph), "--columns=-1,0"]) == 2
    _one_line_error(capsys.readouterr().err, "-1 is not a column; positions count from 0")


def test_duplicate_nodes_in_a_key_file_are_refused(tmp_path, capsys):
    graph = tmp_path / "e.tsv"
    graph.write_text("a\tb\n")
    key = tmp_path / "k.tsv"
    key.write_text("a\t1\nb\t2\na\t3\n")
    status = main(["order", str(graph), "--tie", "priority", "--key", str(key)])
    assert status == 2
    _one_line_error(capsys.readouterr().err, f"{key}: gives node 'a' 2 values")


def test_duplicate_labels_in_an_npz_are_refused(tmp_path):
    path = tmp_path / "g.npz"
    np.savez(path, src=np.array([0]), dst=np.array([1]), labels=np.array(["a", "a"]))
    with pytest.raises(toporank.GraphFileError, match="its labels name 'a' twice"):
        toporank.read_graph(path)
