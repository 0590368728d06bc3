"""Edge lists streamed into CSR in bounded memory, Parquet input, saved-graph folders.

References: networkx edge sets (``networkx.MultiDiGraph`` keeps duplicates),
the in-memory path (``Graph.from_edges`` / ``Graph.from_pairs``, themselves
checked against networkx in test_io.py), and numpy's stable argsort for the
row order a stable counting sort gives (common practice: grouping by source
with a stable sort keeps each row in input order).
"""

from __future__ import annotations

import gzip
import json
import os
import signal
import subprocess
import sys
import time

import networkx as nx
import numpy as np
import pyarrow as pa
import pyarrow.parquet as pq
import pytest

import toporank
from toporank import _core
from toporank.io import EdgeBatch, GraphFileError, ReadOptions, build_graph
from toporank.io import text as text_module


def _random_edges(m=3000, n=400, seed=5):
    rng = np.random.default_rng(seed)
    return rng.integers(0, n, m), rng.integers(0, n, m)


def _write_tsv(path, src, dst, header=None, opener=open):
    with opener(path, "wt") as f:
        if header:
            f.write(header + "\n")
        for u, v in zip(src.tolist(), dst.tolist(), strict=True):
            f.write(f"{u}\t{v}\n")


def _edge_multiset(g):
    """The stored edges as a sorted list of (u, v), labels for labelled graphs."""
    rows = np.repeat(np.arange(g.n), np.diff(g.indptr))
    names = g.labels if g.labels is not None else np.arange(g.n)
    return sorted(zip(names[rows].tolist(), names[np.asarray(g.indices)].tolist(), strict=True))


def _networkx_multiset(src, dst):
    reference = nx.MultiDiGraph()
    reference.add_edges_from(zip(src, dst, strict=True))
    return sorted((u, v) for u, v, _ in reference.edges(keys=True))


def _same_graph(g, reference):
    np.testing.assert_array_equal(g.indptr, reference.indptr)
    np.testing.assert_array_equal(g.indices, reference.indices)
    if reference.labels is None:
        assert g.labels is None
    else:
        assert g.labels.tolist() == reference.labels.tolist()


@pytest.fixture
def small_blocks(monkeypatch):
    """Streamed text blocks of 4 KiB, so even small files come in many batches."""
    monkeypatch.setattr(text_module, "_BLOCK_BYTES", 4096)


# ---------------------------------------------------------------------------
# round trips through every streamed reader


def test_text_gzip_npy_npz_parquet_agree_with_the_in_memory_path_and_networkx(
    tmp_path, small_blocks
):
    src, dst = _random_edges()
    reference = toporank.Graph.from_edges(src, dst)
    paths = {
        "tsv": tmp_path / "e.tsv",
        "gz": tmp_path / "e.tsv.gz",
        "npy": tmp_path / "e.npy",
        "npz": tmp_path / "e.npz",
        "parquet": tmp_path / "e.parquet",
    }
    _write_tsv(paths["tsv"], src, dst)
    _write_tsv(paths["gz"], src, dst, opener=gzip.open)
    np.save(paths["npy"], np.stack([src, dst], axis=1))
    np.savez(paths["npz"], src=src, dst=dst)
    pq.write_table(pa.table({"from": src, "to": dst}), paths["parquet"], row_group_size=700)
    for kind, path in paths.items():
        g = toporank.read_graph(path)
        _same_graph(g, reference)
        assert _edge_multiset(g) == _networkx_multiset(src.tolist(), dst.tolist()), kind
        # the edges named by input position, as the in-memory path names them
        np.testing.assert_array_equal(g.edge_input_positions(), reference.edge_input_positions())


def test_fortran_and_big_endian_npy_are_read_in_batches(tmp_path, monkeypatch):
    monkeypatch.setattr("toporank.io.binary.BATCH_EDGES", 64)
    src, dst = _random_edges(1000, 90, seed=2)
    reference = toporank.Graph.from_edges(src, dst)
    fortran = np.asfortranarray(np.stack([src, dst], axis=1).astype(">i4"))
    np.save(tmp_path / "f.npy", fortran)
    _same_graph(toporank.read_graph(tmp_path / "f.npy"), reference)


def test_rows_keep_input_order(tmp_path, small_blocks):
    src, dst = _random_edges(5000, 50, seed=9)  # many edges per row
    _write_tsv(tmp_path / "e.tsv", src, dst)
    g = toporank.read_graph(tmp_path / "e.tsv")
    # common practice: a stable sort by source keeps each row in input order
    by_source = np.argsort(src, kind="stable")
    np.testing.assert_array_equal(g.indices, dst[by_source])
    np.testing.assert_array_equal(g.edge_input_positions(), by_source)


def test_grouped_input_keeps_no_positions_and_ids_fit_int32(tmp_path):
    src = np.repeat(np.arange(100), 3)
    dst = (src * 7 + np.tile([1, 2, 3], 100)) % 150
    _write_tsv(tmp_path / "e.tsv", src, dst)
    g = toporank.read_graph(tmp_path / "e.tsv")
    assert g.indices.dtype == np.int32 and g.indptr.dtype == np.int32
    assert g.edge_input_positions() is None  # stored order is input order
    np.testing.assert_array_equal(g.indices, dst)


def test_labels_are_interned_in_first_seen_order_across_batches(tmp_path, small_blocks):
    src, dst = _random_edges(4000, 700, seed=3)
    pairs = [(f"paper-{u}", f"paper-{v}") for u, v in zip(src.tolist(), dst.tolist(), strict=True)]
    with open(tmp_path / "e.tsv", "w") as f:
        f.write("".join(f"{u}\t{v}\n" for u, v in pairs))
    g = toporank.read_graph(tmp_path / "e.tsv")
    _same_graph(g, toporank.Graph.from_pairs(pairs))
    assert _edge_multiset(g) == _networkx_multiset(*zip(*pairs, strict=True))


def test_headers_and_named_columns(tmp_path, small_blocks):
    src, dst = _random_edges(2000, 100, seed=4)
    with open(tmp_path / "e.csv", "w") as f:
        f.write("weight,citing,cited\n")
        f.write("".join(f"0.5,{u},{v}\n" for u, v in zip(src.tolist(), dst.tolist(), strict=True)))
    g = toporank.read_graph(tmp_path / "e.csv", columns=("citing", "cited"))
    _same_graph(g, toporank.Graph.from_edges(src, dst))
    g = toporank.read_graph(tmp_path / "e.csv", columns=(2, 1), header=True)
    _same_graph(g, toporank.Graph.from_edges(dst, src))


def test_a_bad_line_after_many_batches_is_named_by_its_number(tmp_path, small_blocks):
    src, dst = _random_edges(3000, 100, seed=6)
    lines = [f"{u}\t{v}\n" for u, v in zip(src.tolist(), dst.tolist(), strict=True)]
    lines[2500] = "17\tseventeen\n"  # line 2501
    (tmp_path / "e.tsv").write_text("".join(lines))
    with pytest.raises(GraphFileError) as caught:
        toporank.read_graph(tmp_path / "e.tsv")
    assert caught.value.line == 2501 and "'seventeen' is not an integer node id" in str(
        caught.value
    )
    lines[2500] = "17\t-3\n"
    (tmp_path / "e.tsv").write_text("".join(lines))
    with pytest.raises(GraphFileError, match=r"e.tsv:2501: -3 is not a node id"):
        toporank.read_graph(tmp_path / "e.tsv")


def test_a_mid_file_comment_falls_back_without_losing_or_repeating_edges(tmp_path, small_blocks):
    src, dst = _random_edges(2000, 100, seed=8)
    lines = [f"{u} {v}\n" for u, v in zip(src.tolist(), dst.tolist(), strict=True)]
    lines.insert(1500, "# a comment with three words\n")
    lines.insert(1700, "   \n")
    (tmp_path / "e.txt").write_text("".join(lines))
    _same_graph(toporank.read_graph(tmp_path / "e.txt"), toporank.Graph.from_edges(src, dst))


@pytest.mark.parametrize("delimiter", ["\t", ","])
def test_labelled_comment_lines_shaped_like_edges_are_not_edges(tmp_path, small_blocks, delimiter):
    # A line starting with "#" is a comment (the documented rule). The fast
    # reader knows no comments; one with as many fields as an edge, in a
    # labelled file, used to come back as an edge from a node named "# ...".
    src, dst = _random_edges(2000, 100, seed=12)
    pairs = [(f"p{u}", f"p{v}") for u, v in zip(src.tolist(), dst.tolist(), strict=True)]
    lines = [f"{u}{delimiter}{v}\n" for u, v in pairs]
    lines.insert(1500, f"# retracted{delimiter}p3\n")
    lines.insert(10, f"  #p1{delimiter}p2\n")
    (tmp_path / "e.txt").write_text("".join(lines))
    g = toporank.read_graph(tmp_path / "e.txt")
    assert not [label for label in g.labels.tolist() if "#" in label]
    _same_graph(g, toporank.Graph.from_pairs(pairs))
    assert _edge_multiset(g) == _networkx_multiset(*zip(*pairs, strict=True))  # networkx


def test_a_comment_line_is_not_an_edge_when_column_0_is_not_read(tmp_path, small_blocks):
    src, dst = _random_edges(2000, 100, seed=13)
    lines = [f"x\t{u}\t{v}\n" for u, v in zip(src.tolist(), dst.tolist(), strict=True)]
    lines.insert(700, "# moved\t5\t6\n")  # its columns 1 and 2 parse as ids
    (tmp_path / "e.tsv").write_text("".join(lines))
    g = toporank.read_graph(tmp_path / "e.tsv", columns=(1, 2))
    _same_graph(g, toporank.Graph.from_edges(src, dst))
    # with comments switched off the line is data: one more edge, 5 -> 6, at its place
    plain = toporank.read_graph(tmp_path / "e.tsv", ReadOptions(comment="", columns=(1, 2)))
    with_line = toporank.Graph.from_edges(
        np.insert(src, 700, 5), np.insert(dst, 700, 6), max(plain.n, 7)
    )
    _same_graph(plain, with_line)


def test_npy_errors_name_the_row(tmp_path, monkeypatch):
    monkeypatch.setattr("toporank.io.binary.BATCH_EDGES", 10)
    edges = np.arange(60).reshape(30, 2)
    edges[23, 1] = -4
    np.save(tmp_path / "e.npy", edges)
    with pytest.raises(GraphFileError, match=r"row 23, column 1\] = -4|row 23, column 1 = -4"):
        toporank.read_graph(tmp_path / "e.npy")


# ---------------------------------------------------------------------------
# Parquet


def test_a_parquet_dataset_of_several_files_is_read_in_path_order(tmp_path):
    src, dst = _random_edges(2500, 300, seed=11)
    folder = tmp_path / "citations"
    folder.mkdir()
    for k, start in enumerate(range(0, 2500, 1000)):
        part = pa.table({"citing": src[start : start + 1000], "cited": dst[start : start + 1000]})
        pq.write_table(part, folder / f"part-{k:03d}.parquet", row_group_size=300)
    g = toporank.read_graph(folder, columns=("citing", "cited"))
    _same_graph(g, toporank.Graph.from_edges(src, dst))
    assert _edge_multiset(g) == _networkx_multiset(src.tolist(), dst.tolist())
    flipped = toporank.read_graph(folder, columns=("cited", "citing"))
    _same_graph(flipped, toporank.Graph.from_edges(dst, src))


def test_parquet_labels_dictionary_columns_and_errors(tmp_path):
    pairs = [("core", "app"), ("log", "core"), ("log", "app"), ("cli", "core")]
    u, v = zip(*pairs, strict=True)
    table = pa.table({"a": pa.array(u).dictionary_encode(), "b": pa.array(v)})
    pq.write_table(table, tmp_path / "l.parquet")
    g = toporank.read_graph(tmp_path / "l.parquet")
    _same_graph(g, toporank.Graph.from_pairs(pairs))
    pq.write_table(pa.table({"a": [0, 1, None], "b": [1, 2, 3]}), tmp_path / "n.parquet")
    with pytest.raises(GraphFileError, match=r"row 2, column 'a': a missing node"):
        toporank.read_graph(tmp_path / "n.parquet")
    pq.write_table(pa.table({"a": [0, -1], "b": [1, 2]}), tmp_path / "neg.parquet")
    with pytest.raises(GraphFileError, match=r"row 1, column 'a': -1 is not a node id"):
        toporank.read_graph(tmp_path / "neg.parquet")
    big = pa.table({"a": pa.array([0, 2**64 - 1], pa.uint64()), "b": pa.array([1, 2], pa.uint64())})
    pq.write_table(big, tmp_path / "big.parquet")
    with pytest.raises(
        GraphFileError, match=r"row 1, column 'a': 18446744073709551615 is too large"
    ):
        toporank.read_graph(tmp_path / "big.parquet")
    with pytest.raises(GraphFileError, match="no column named 'x'"):
        toporank.read_graph(tmp_path / "neg.parquet", columns=("x", "b"))
    pq.write_table(pa.table({"a": [0.5], "b": [1.0]}), tmp_path / "f.parquet")
    with pytest.raises(GraphFileError, match="type double"):
        toporank.read_graph(tmp_path / "f.parquet")
    pq.write_table(pa.table({"a": ["x"], "b": [1]}), tmp_path / "mixed.parquet")
    with pytest.raises(GraphFileError, match="both be integer ids or both be string labels"):
        toporank.read_graph(tmp_path / "mixed.parquet")
    (tmp_path / "empty").mkdir()
    with pytest.raises(GraphFileError, match="holds no Parquet files"):
        toporank.read_graph(tmp_path / "empty")


# ---------------------------------------------------------------------------
# the builder itself


def test_spill_is_bounded_by_the_spool_limit_and_removed(tmp_path):
    spills = tmp_path / "spills"
    spills.mkdir()
    src, dst = _random_edges(3000, 100)
    batches = (EdgeBatch(src[k : k + 500], dst[k : k + 500]) for k in range(0, 3000, 500))
    with pytest.raises(toporank.GraphInputError, match="TOPORANK_SPOOL_LIMIT"):
        build_graph(batches, spill_dir=str(spills), spill_limit_bytes=10_000)
    assert os.listdir(spills) == []
    batches = (EdgeBatch(src[k : k + 500], dst[k : k + 500]) for k in range(0, 3000, 500))
    g = build_graph(batches, spill_dir=str(spills))
    _same_graph(g, toporank.Graph.from_edges(src, dst))
    assert os.listdir(spills) == []


def test_spill_is_removed_after_a_bad_line(tmp_path, small_blocks):
    spills = tmp_path / "spills"
    spills.mkdir()
    src, dst = _random_edges(3000, 100)
    lines = [f"{u}\t{v}\n" for u, v in zip(src.tolist(), dst.tolist(), strict=True)]
    lines[2900] = "1\tx\n"
    (tmp_path / "e.tsv").write_text("".join(lines))
    with pytest.raises(GraphFileError):
        toporank.read_graph(tmp_path / "e.tsv", ReadOptions(spill_dir=str(spills)))
    assert os.listdir(spills) == []


def test_without_edge_positions_the_graph_refuses_to_name_edges(tmp_path):
    src, dst = np.array([2, 0, 1]), np.array([0, 1, 2])
    _write_tsv(tmp_path / "e.tsv", src, dst)
    g = toporank.read_graph(tmp_path / "e.tsv", ReadOptions(edge_positions=False))
    _same_graph(g, toporank.Graph.from_edges(src, dst))
    with pytest.raises(toporank.GraphInputError, match="edge_positions=False"):
        g.edge_input_positions()


def test_builder_misuse_is_an_error_not_a_crash():
    builder = _core.CsrBuilder()
    with pytest.raises(RuntimeError, match="place before start"):
        builder.place(np.array([0], np.int32), np.array([1], np.int32))
    builder.count(np.array([0, 1], np.int64), np.array([1, 0], np.int64))
    builder.start(2)
    with pytest.raises(RuntimeError, match="count after start"):
        builder.count(np.array([0], np.int64), np.array([1], np.int64))
    with pytest.raises(toporank.GraphInputError, match="changed"):
        builder.place(np.array([0, 5], np.int64), np.array([1, 0], np.int64))
    with pytest.raises(toporank.GraphInputError, match="one dtype"):
        builder.place(np.array([0], np.int64), np.array([1], np.int32))


# ---------------------------------------------------------------------------
# saved graphs


def _saved(tmp_path, labelled=False, grouped=False):
    src, dst = _random_edges(500, 60, seed=1)
    if grouped:
        order = np.argsort(src, kind="stable")
        src, dst = src[order], dst[order]
    if labelled:
        g = toporank.Graph.from_pairs(
            [(f"m{u}", f"m{v}") for u, v in zip(src.tolist(), dst.tolist(), strict=True)]
        )
    else:
        g = toporank.Graph.from_edges(src, dst)
    folder = tmp_path / "g.graph"
    toporank.save_graph(g, folder)
    return g, folder


@pytest.mark.parametrize("labelled", [False, True])
def test_saved_graph_round_trips_memory_mapped(tmp_path, labelled):
    g, folder = _saved(tmp_path, labelled)
    reopened = toporank.read_graph(folder)
    _same_graph(reopened, g)
    np.testing.assert_array_equal(reopened.edge_input_positions(), g.edge_input_positions())
    assert not reopened.indices.flags.owndata  # a view of the mapped file
    assert toporank.components(reopened).tolist() == toporank.components(g).tolist()
    description = json.loads((folder / "graph.json").read_text())
    assert (description["nodes"], description["edges"], description["labels"]) == (
        g.n,
        g.m,
        labelled,
    )


def test_saving_replaces_an_old_saved_graph_and_refuses_other_folders(tmp_path):
    _, folder = _saved(tmp_path)
    toporank.save_graph(toporank.Graph.from_edges(np.array([0]), np.array([1])), folder)
    assert toporank.read_graph(folder).m == 1
    assert sorted(p.name for p in tmp_path.iterdir()) == ["g.graph"]  # no leftovers
    other = tmp_path / "photos"
    other.mkdir()
    with pytest.raises(GraphFileError, match="not a saved graph"):
        toporank.save_graph(toporank.Graph.from_edges(np.array([0]), np.array([1])), other)


def _edit_description(**changes):
    def corrupt(folder):
        path = folder / "graph.json"
        description = json.loads(path.read_text())
        description.update(changes)
        path.write_text(json.dumps(description))

    return corrupt


def _truncate(name, keep=0.5):
    def corrupt(folder):
        path = folder / name
        data = path.read_bytes()
        path.write_bytes(data[: int(len(data) * keep)])

    return corrupt


def _replace_array(name, change):
    def corrupt(folder):
        array = np.load(folder / name)
        np.save(folder / name, change(array.copy()))

    return corrupt


def _set(position, value):
    def change(array):
        array[position] = value
        return array

    return change


CORRUPTIONS = {
    "description not JSON": (
        lambda f: (f / "graph.json").write_text("{nodes: 3"),
        "graph.json is not valid JSON",
    ),
    "not our description": (_edit_description(format="photos"), "does not describe a saved"),
    "future version": (_edit_description(version=99), "version 99"),
    "negative node count": (_edit_description(nodes=-1), "nodes must be a count"),
    "unknown width": (_edit_description(indices="float64"), "indices must be one of"),
    "node count disagrees": (_edit_description(nodes=61), "indptr.npy holds 61 entries"),
    "edge count disagrees": (_edit_description(edges=7), "indices.npy holds 500 entries"),
    "width disagrees": (_edit_description(indices="int32"), "says 1-D int32"),
    "indices missing": (lambda f: (f / "indices.npy").unlink(), "indices.npy is missing"),
    "indices truncated": (_truncate("indices.npy"), "indices.npy is not a readable .npy"),
    "indptr header cut": (_truncate("indptr.npy", 0.01), "indptr.npy is not a readable .npy"),
    "indptr decreasing": (_replace_array("indptr.npy", _set(30, 0)), "indptr decreases"),
    "indptr end wrong": (_replace_array("indptr.npy", _set(-1, 499)), "indptr"),
    "id out of range": (_replace_array("indices.npy", _set(17, 60)), "indices[17] = 60"),
    "negative id": (_replace_array("indices.npy", _set(3, -2)), "indices[3] = -2"),
    "2-D array": (
        _replace_array("indices.npy", lambda a: a.reshape(-1, 2)),
        "holds a 2-D",
    ),
    "positions missing": (lambda f: (f / "positions.npy").unlink(), "positions.npy is missing"),
}


@pytest.mark.parametrize("kind", sorted(CORRUPTIONS))
def test_corrupt_saved_graphs_are_one_line_errors(tmp_path, kind):
    corrupt, expected = CORRUPTIONS[kind]
    _, folder = _saved(tmp_path)
    corrupt(folder)
    with pytest.raises(GraphFileError) as caught:
        toporank.read_graph(folder)
    message = str(caught.value)
    assert expected in message and "\n" not in message, message


LABEL_CORRUPTIONS = {
    "labels missing": (lambda f: (f / "labels.arrow").unlink(), "labels.arrow is missing"),
    "labels truncated": (_truncate("labels.arrow"), "labels.arrow is not a readable Arrow"),
    "labels count": (lambda f: _rewrite_labels(f, lambda labels: labels[:-1]), "holds 59 labels"),
    "labels repeated": (
        lambda f: _rewrite_labels(f, lambda labels: [labels[0], *labels[:-1]]),
        "names a node twice",
    ),
}


def _rewrite_labels(folder, change):
    import pyarrow.ipc as ipc

    with pa.memory_map(str(folder / "labels.arrow")) as source:
        labels = ipc.open_file(source).read_all().column("label").to_pylist()
    table = pa.table({"label": pa.array(change(labels), pa.large_string())})
    with pa.OSFile(str(folder / "labels.arrow"), "wb") as sink:
        with ipc.new_file(sink, table.schema) as writer:
            writer.write_table(table)


@pytest.mark.parametrize("kind", sorted(LABEL_CORRUPTIONS))
def test_corrupt_saved_labels_are_one_line_errors(tmp_path, kind):
    corrupt, expected = LABEL_CORRUPTIONS[kind]
    _, folder = _saved(tmp_path, labelled=True)
    corrupt(folder)
    with pytest.raises(GraphFileError, match=expected):
        toporank.read_graph(folder)


# ---------------------------------------------------------------------------
# the command line


def _toporank(*args, **kwargs):
    return subprocess.run(
        [sys.executable, "-m", "toporank", *map(str, args)],
        capture_output=True,
        text=True,
        timeout=120,
        **kwargs,
    )


def test_pack_then_every_command_opens_the_folder(tmp_path):
    src, dst = _random_edges(800, 200, seed=12)
    keep = src < dst  # a DAG, so order and levels succeed
    src, dst = src[keep], dst[keep]
    _write_tsv(tmp_path / "e.tsv", src, dst)
    packed = _toporank("pack", tmp_path / "e.tsv", "-o", tmp_path / "e.graph")
    assert packed.returncode == 0, packed.stderr
    description = json.loads((tmp_path / "e.graph" / "graph.json").read_text())
    assert description["source"]["path"] == str(tmp_path / "e.tsv")
    assert description["source"]["format"] == "text"
    for command in ("order", "levels", "cycles"):
        from_file = _toporank(command, tmp_path / "e.tsv", "-q")
        from_folder = _toporank(command, tmp_path / "e.graph", "-q")
        assert from_file.returncode == 0, from_file.stderr
        assert from_folder.stdout.replace("e.graph", "e.tsv") == from_file.stdout, command
    order = tmp_path / "order.txt"
    assert _toporank("order", tmp_path / "e.graph", "-o", order).returncode == 0
    verified = _toporank("verify", tmp_path / "e.graph", order)
    assert verified.returncode == 0, verified.stderr


def test_pack_refuses_to_overwrite_other_folders(tmp_path):
    _write_tsv(tmp_path / "e.tsv", np.array([0]), np.array([1]))
    (tmp_path / "keep").mkdir()
    result = _toporank("pack", tmp_path / "e.tsv", "-o", tmp_path / "keep")
    assert result.returncode == 2 and "not a saved graph" in result.stderr
    assert result.stderr.count("\n") == 1


def test_ctrl_c_while_building_removes_the_spill(tmp_path):
    # a file large enough that the read lasts well over the moment of the signal
    rng = np.random.default_rng(0)
    m = 4_000_000
    src, dst = rng.integers(0, 10**6, m), rng.integers(0, 10**6, m)
    import pyarrow.csv as pacsv

    pacsv.write_csv(
        pa.table({"s": src, "d": dst}),
        str(tmp_path / "big.tsv"),
        write_options=pacsv.WriteOptions(
            include_header=False, delimiter="\t", quoting_style="none"
        ),
    )
    out = tmp_path / "out"
    out.mkdir()
    process = subprocess.Popen(
        [sys.executable, "-m", "toporank", "order", str(tmp_path / "big.tsv"), "-o", out / "o"],
        stderr=subprocess.PIPE,
        text=True,
    )
    deadline = time.monotonic() + 60
    while not any(p.name.startswith("toporank-spill-") for p in out.iterdir()):
        assert process.poll() is None and time.monotonic() < deadline, "no spill appeared"
        time.sleep(0.01)
    sent = time.monotonic()
    process.send_signal(signal.SIGINT)
    _, err = process.communicate(timeout=30)
    assert time.monotonic() - sent < 3  # honoured within about a second (slack for load)
    assert process.returncode == 130, err
    assert list(out.iterdir()) == []  # neither spill nor partial output left


# ---------------------------------------------------------------------------
# progress on long phases


class _Terminal:
    """A text stream that says it is a terminal and keeps what was written."""

    def __init__(self):
        self.written = []

    def isatty(self):
        return True

    def write(self, text):
        self.written.append(text)
        return len(text)

    def flush(self):
        pass


def test_compute_phases_show_elapsed_time_only_on_a_terminal_and_never_with_q(monkeypatch):
    import argparse

    from toporank.cli.output import working

    terminal = _Terminal()
    monkeypatch.setattr(sys, "stderr", terminal)
    with working(argparse.Namespace(quiet=False), "ordering"):
        time.sleep(1.5)  # past the one-second delay before anything is drawn
    shown = "".join(terminal.written)
    assert "ordering" in shown and "00:01" in shown, shown
    for quiet, stream in ((True, _Terminal()), (False, _Pipe())):
        monkeypatch.setattr(sys, "stderr", stream)
        with working(argparse.Namespace(quiet=quiet), "ordering"):
            time.sleep(1.3)
        assert stream.written == []


class _Pipe(_Terminal):
    def isatty(self):
        return False
