"""Readers: each file format, written here, read back and compared with the in-memory API.

The reference for every round trip is the same edge list given to
``Graph.from_edges`` / ``Graph.from_pairs`` directly, and, for the formats
scipy writes (Matrix Market, ``.npz``), scipy's own writer and reader.
"""

from __future__ import annotations

import gzip
import os
import string

import numpy as np
import pytest
import scipy.io
import scipy.sparse as sp
from hypothesis import given, settings
from hypothesis import strategies as st

import toporank
from graphs import edge_lists
from toporank.io import atomic_output, read_key, read_nodes

ROUND_TRIPS = settings(max_examples=25, deadline=None)


def _same_csr(a: toporank.Graph, b: toporank.Graph) -> None:
    assert a.n == b.n and a.m == b.m
    np.testing.assert_array_equal(a.indptr, b.indptr)
    np.testing.assert_array_equal(a.indices, b.indices)


def _write(path, text: str) -> str:
    path.write_text(text, encoding="utf-8")
    return str(path)


def _isolated_free(src, dst):
    """The reference graph a text file can express: ``n`` is the largest id plus one."""
    return toporank.Graph.from_edges(src, dst)


@ROUND_TRIPS
@given(edges=edge_lists(max_nodes=30, max_edges=60), delimiter=st.sampled_from(["\t", ",", " "]))
def test_integer_text_round_trip(tmp_path_factory, edges, delimiter):
    src, dst, _ = edges
    folder = tmp_path_factory.mktemp("text")
    lines = ["# written by the test", f"source{delimiter}target{delimiter}weight"]
    lines += [f"{u}{delimiter}{v}{delimiter}0.5" for u, v in zip(src, dst, strict=True)]
    path = _write(folder / "edges.txt", "\n".join(lines) + "\n")
    if len(src) == 0:
        # a header and no edge lines: refused, naming the file (an edge list needs an edge)
        with pytest.raises(toporank.GraphFileError, match="holds a header but no edges"):
            toporank.read_graph(path, header=True)
    else:
        g = toporank.read_graph(path)
        assert g.labels is None
        _same_csr(g, _isolated_free(src, dst))
        assert (
            toporank.order(g, on_cycle="partial").tolist()
            == toporank.order((src, dst), on_cycle="partial").tolist()
        )


LABELS = st.text(alphabet=string.ascii_letters + string.digits + "_-./:", min_size=1, max_size=6)


@ROUND_TRIPS
@given(pairs=st.lists(st.tuples(LABELS, LABELS), min_size=1, max_size=40))
def test_labelled_text_round_trip_numbers_nodes_as_from_pairs(tmp_path_factory, pairs):
    folder = tmp_path_factory.mktemp("labels")
    path = _write(folder / "pairs.tsv", "".join(f"{u}\t{v}\n" for u, v in pairs))
    # header=False: a first line of two fresh plain words would be taken as a header
    g = toporank.read_graph(path, labels=True, header=False)
    reference = toporank.Graph.from_pairs(pairs)
    assert g.labels.tolist() == reference.labels.tolist()
    _same_csr(g, reference)
    assert (
        toporank.order(g, on_cycle="partial").tolist()
        == toporank.order(pairs, on_cycle="partial").tolist()
    )


def test_labels_detected_and_quoted_fields_kept(tmp_path):
    # Quoting as in RFC 4180 (comma-separated values), common practice.
    path = _write(tmp_path / "deps.csv", 'pkg,dep\n"a,b",c\nc,d\nd,"a,b"\n')
    g = toporank.read_graph(path, header=True)
    assert g.labels.tolist() == ["a,b", "c", "d"]
    assert g.m == 3


def test_runs_of_spaces_and_mid_file_comments_take_the_careful_path(tmp_path):
    text = "  1   2\n# a comment in the middle\n2\t 3\n\n3  4  extra\n"
    g = toporank.read_graph(_write(tmp_path / "edges.txt", text), delimiter="whitespace")
    _same_csr(g, toporank.Graph.from_edges(np.array([1, 2, 3]), np.array([2, 3, 4])))


@pytest.mark.parametrize("given", ["\t", "tab", "\\t"])
def test_delimiter_spellings(tmp_path, given):
    path = _write(tmp_path / "e.txt", "0\t1\n1\t2\n")
    _same_csr(toporank.read_graph(path, delimiter=given), toporank.Graph.from_edges([0, 1], [1, 2]))


def test_comment_row_shaped_like_data_is_skipped(tmp_path):
    text = "0\t1\n#\tnote\n1\t2\n"
    g = toporank.read_graph(_write(tmp_path / "edges.tsv", text))
    _same_csr(g, toporank.Graph.from_edges(np.array([0, 1]), np.array([1, 2])))


def test_named_columns_pick_source_and_target(tmp_path):
    text = "module,imports,kind\napp,net,runtime\nnet,log,runtime\n"
    g = toporank.read_graph(_write(tmp_path / "m.csv", text), columns=("imports", "module"))
    assert toporank.order(g).tolist() == ["log", "net", "app"]


def test_integer_header_is_detected(tmp_path):
    g = toporank.read_graph(_write(tmp_path / "e.csv", "from,to\n0,1\n1,2\n"))
    assert g.m == 2 and g.labels is None


def test_byte_order_mark_and_crlf_are_taken_in_stride(tmp_path):
    # Spreadsheet programs save a BOM and CRLF line ends (common practice).
    path = tmp_path / "e.csv"
    path.write_bytes("\ufeffa,b\r\nb,c\r\n".encode())
    g = toporank.read_graph(str(path))
    assert g.labels.tolist() == ["a", "b", "c"]


def test_gzip_text(tmp_path):
    path = tmp_path / "e.tsv.gz"
    with gzip.open(path, "wt") as f:
        f.write("# comment\n0\t1\n1\t2\n")
    _same_csr(toporank.read_graph(str(path)), toporank.Graph.from_edges([0, 1], [1, 2]))


@ROUND_TRIPS
@given(edges=edge_lists(max_nodes=20, max_edges=50))
def test_matrix_market_round_trip(tmp_path_factory, edges):
    src, dst, n = edges
    folder = tmp_path_factory.mktemp("mtx")
    matrix = sp.coo_array((np.ones(len(src)), (src, dst)), shape=(n, n))
    path = str(folder / "g.mtx")
    scipy.io.mmwrite(path, matrix)
    g = toporank.read_graph(path)
    reference = toporank.as_graph(scipy.io.mmread(path))
    _same_csr(g, reference)
    if n:
        # Duplicates may be summed by the writer; the edge set is what must survive (scipy).
        stored = {(int(u), int(v)) for u, v in zip(src, dst, strict=True)}
        rows = np.repeat(np.arange(g.n), np.diff(g.indptr))
        assert set(zip(rows.tolist(), g.indices.tolist(), strict=True)) == stored


@ROUND_TRIPS
@given(edges=edge_lists(max_nodes=20, max_edges=50))
def test_npz_round_trip(tmp_path_factory, edges):
    src, dst, n = edges
    folder = tmp_path_factory.mktemp("npz")
    matrix = sp.csr_array((np.ones(len(src)), (src, dst)), shape=(n, n))
    path = str(folder / "g.npz")
    sp.save_npz(path, matrix)
    _same_csr(toporank.read_graph(path), toporank.as_graph(matrix))


@pytest.mark.parametrize("dtype", [np.int32, np.int64, np.uint16])
def test_npy_round_trip(tmp_path, dtype):
    edges = np.array([[3, 1], [3, 0], [0, 2], [1, 2]], dtype=dtype)
    path = str(tmp_path / "edges.npy")
    np.save(path, edges)
    g = toporank.read_graph(path)
    _same_csr(g, toporank.as_graph(edges.astype(np.int64)))
    assert toporank.order(g).tolist() == [3, 1, 0, 2]


def test_npy_negative_id_is_refused(tmp_path):
    path = str(tmp_path / "edges.npy")
    np.save(path, np.array([[0, 1], [1, -4]]))
    with pytest.raises(toporank.GraphFileError, match=r"edges\.npy.*-4"):
        toporank.read_graph(path)


def test_npy_header_beyond_the_file_is_refused(tmp_path):
    path = tmp_path / "edges.npy"
    with open(path, "wb") as f:
        header = {"descr": "<i8", "fortran_order": False, "shape": (999999999999, 2)}
        np.lib.format.write_array_header_1_0(f, header)
        f.write(np.zeros(8, dtype=np.int64).tobytes())
    with pytest.raises(toporank.GraphFileError, match=r"claims shape \(999999999999, 2\)"):
        toporank.read_graph(str(path))


def test_matrix_market_header_beyond_memory_is_refused_before_allocating(tmp_path):
    path = _write(
        tmp_path / "huge.mtx",
        "%%MatrixMarket matrix coordinate pattern general\n"
        "5000000000 5000000000 900000000000\n1 2\n",
    )
    with pytest.raises(
        toporank.GraphFileError, match=r"huge\.mtx: the header claims 900000000000 "
    ):
        toporank.read_graph(path)


def test_text_errors_name_file_line_and_text(tmp_path):
    path = _write(tmp_path / "e.tsv", "0\t1\n1\t2\n\n# note\n2\tthree\n")
    with pytest.raises(toporank.GraphFileError) as info:
        toporank.read_graph(path, labels=False)
    assert info.value.line == 5 and info.value.path == path
    assert str(info.value).startswith(f"{path}:5: 'three' is not an integer node id")
    assert isinstance(info.value, ValueError)


def test_error_after_the_sniffed_lines_is_found(tmp_path):
    lines = [f"{i}\t{i + 1}" for i in range(500)] + ["7\t-3"] + ["1\t2"] * 10
    path = _write(tmp_path / "e.tsv", "\n".join(lines) + "\n")
    with pytest.raises(toporank.GraphFileError, match=r"e\.tsv:501: -3 is not a node id"):
        toporank.read_graph(path)


def test_missing_column_is_named(tmp_path):
    path = _write(tmp_path / "e.csv", "a,b\nb,c\nc\n")
    with pytest.raises(
        toporank.GraphFileError, match=r"e\.csv:3: needs at least 2 columns, found 1"
    ):
        toporank.read_graph(path)


def test_unknown_column_name_lists_the_header(tmp_path):
    path = _write(tmp_path / "e.csv", "source,target\na,b\n")
    with pytest.raises(toporank.GraphFileError, match=r"e\.csv:1: no column named 'from'"):
        toporank.read_graph(path, columns=("from", "target"))


def test_empty_file_is_refused(tmp_path):
    with pytest.raises(toporank.GraphFileError, match="holds no edges"):
        toporank.read_graph(_write(tmp_path / "e.tsv", "# nothing\n\n"))


def test_key_and_node_files(tmp_path):
    g = toporank.read_graph(_write(tmp_path / "e.tsv", "b\ta\nc\ta\n"))
    key = read_key(_write(tmp_path / "k.tsv", "node\tyear\na\t2001\nb\t1999\nc\t1990\n"), g)
    assert key.tolist() == [1999, 2001, 1990]  # node order b, a, c (first seen)
    assert toporank.order(g, tie="priority", key=key).tolist() == ["c", "b", "a"]
    with pytest.raises(toporank.GraphFileError, match="no value for node 'c'"):
        read_key(_write(tmp_path / "k2.tsv", "a\t1\nb\t2\n"), g)
    nodes = read_nodes(_write(tmp_path / "o.csv", "node,position\nc,0\nb,1\na,2\n"), g)
    assert nodes.tolist() == ["c", "b", "a"]
    # a comment line shaped like an entry is no entry (else: "node '# a' is not in the graph")
    text = "a\t2001\n# a\t1850\nb\t1999\nc\t1990\n"
    assert read_key(_write(tmp_path / "k3.tsv", text), g).tolist() == [1999, 2001, 1990]
    text = "c\n#b\nb\na\n"
    assert read_nodes(_write(tmp_path / "o2.txt", text), g).tolist() == ["c", "b", "a"]


def test_atomic_output_leaves_nothing_on_failure(tmp_path):
    target = tmp_path / "out.txt"
    with pytest.raises(KeyboardInterrupt), atomic_output(str(target)) as f:
        f.write("partial")
        raise KeyboardInterrupt
    assert os.listdir(tmp_path) == []
    with atomic_output(str(target)) as f:
        f.write("complete\n")
    assert target.read_text() == "complete\n"
    assert os.listdir(tmp_path) == ["out.txt"]
