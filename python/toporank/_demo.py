"""``toporank demo``: invented data sets, generated deterministically, and a short report.

Two invented scenarios:

- the *Journal of Imaginary Results*, 1990-2024, four issues a year: each
  paper cites older papers, and a few papers of the same issue cite each
  other (companion papers), which makes citation loops;
- the *orbit* monorepo: modules and the modules they import, with one
  import cycle in its billing package.

The demo writes them as ordinary files and then runs the same readers and
writers as the ``toporank`` command on those files.
"""

from __future__ import annotations

import os
import time
from typing import Any

import numpy as np

import toporank

from ._report import (
    cut_report,
    cycle_report,
    named,
    order_with_report,
    shown_cycle,
    without_edges,
)
from .io import atomic_output, read_graph, read_key, write_json
from .io.write import node_strings

JOURNAL = "Journal of Imaginary Results"
FIRST_YEAR, LAST_YEAR, ISSUES, PAPERS_PER_ISSUE = 1990, 2024, 4, 22
# (year, issue, papers citing each other in a ring) — the invented citation loops
LOOPS = ((1997, 3, (4, 9)), (2006, 1, (2, 15, 7)), (2019, 4, (11, 3)))

# module -> modules it imports; billing/invoice, billing/tax and billing/ledger import in a ring
MONOREPO: dict[str, tuple[str, ...]] = {
    "core/log": (),
    "core/config": ("core/log",),
    "core/errors": (),
    "core/clock": ("core/errors",),
    "util/text": ("core/errors",),
    "util/retry": ("core/clock", "core/log"),
    "storage/blob": ("core/config", "core/log", "util/retry"),
    "storage/sql": ("core/config", "core/log", "util/retry"),
    "storage/cache": ("storage/blob", "core/clock"),
    "net/http": ("core/config", "util/retry", "util/text"),
    "net/rpc": ("net/http", "core/errors"),
    "auth/tokens": ("core/clock", "storage/cache"),
    "auth/users": ("storage/sql", "auth/tokens", "util/text"),
    "billing/tax": ("billing/ledger", "util/text"),
    "billing/ledger": ("storage/sql", "billing/invoice"),
    "billing/invoice": ("auth/users", "billing/tax"),
    "billing/reports": ("billing/invoice", "billing/ledger", "storage/blob"),
    "search/index": ("storage/blob", "util/text"),
    "search/query": ("search/index", "net/rpc"),
    "web/pages": ("net/http", "auth/users", "search/query"),
    "web/api": ("net/rpc", "auth/users", "billing/reports"),
    "web/admin": ("web/api", "web/pages"),
    "tools/migrate": ("storage/sql", "core/config"),
    "tools/lint": ("util/text",),
    "app/server": ("web/api", "web/pages", "web/admin", "tools/migrate"),
}


def paper_id(year: int, issue: int, number: int) -> str:
    """The invented journal's identifier of a paper."""
    return f"JIR-{year}-{issue}-{number:02d}"


def journal(seed: int = 7) -> tuple[list[tuple[str, str]], dict[str, int]]:
    """Citation edges ``(cited, citing)`` of the invented journal, and each paper's year."""
    rng = np.random.default_rng(seed)
    papers: list[tuple[str, int]] = []
    for year in range(FIRST_YEAR, LAST_YEAR + 1):
        for issue in range(1, ISSUES + 1):
            for number in range(1, PAPERS_PER_ISSUE + 1):
                papers.append((paper_id(year, issue, number), year))
    per_issue = PAPERS_PER_ISSUE
    edges: list[tuple[str, str]] = []
    for t in range(per_issue, len(papers)):
        earlier = t - t % per_issue  # papers of earlier issues only
        count = int(rng.integers(1, 9))
        # recent work is cited more: draw the age with a bias toward small values
        ages = (earlier * rng.random(count) ** 3).astype(np.int64)
        for cited in sorted(set((earlier - 1 - ages).tolist())):
            edges.append((papers[cited][0], papers[t][0]))
    for year, issue, ring in LOOPS:
        ids = [paper_id(year, issue, number) for number in ring]
        for k, cited in enumerate(ids):
            edges.append((cited, ids[(k + 1) % len(ids)]))
    return edges, dict(papers)


def journal_main_path(
    since: int = 2019, method: str = "global"
) -> tuple[toporank.MainPath, dict[str, int]]:
    """The main path (SPC weights) of the invented journal's papers from ``since`` on.

    The papers of one issue citing each other in a ring go through the
    preprint transformation; returns the main path and each paper's year.
    """
    citations, years = journal()
    recent = [(a, b) for a, b in citations if years[a] >= since and years[b] >= since]
    found = toporank.main_path(recent, method=method, on_cycle="preprint")
    return found, years


def monorepo() -> list[tuple[str, str]]:
    """Import edges ``(module, imported module)`` of the invented monorepo."""
    return [(module, imported) for module, imports in MONOREPO.items() for imported in imports]


def _loops(g: toporank.Graph) -> list[list[object]]:
    """One witness cycle per strongly connected component with a cycle."""
    report = cycle_report(g, witnesses=True)
    return [item["cycle"] for item in report["components"]]


def _write_tsv(path: str, comment: str, header: tuple[str, str], rows: Any) -> None:
    with atomic_output(path) as f:
        f.write(f"# {comment}\n")
        f.write("\t".join(header) + "\n")
        f.writelines(f"{a}\t{b}\n" for a, b in rows)


def _write_csv(path: str, header: tuple[str, str], rows: Any) -> None:
    with atomic_output(path) as f:
        f.write(",".join(header) + "\n")
        f.writelines(f"{a},{b}\n" for a, b in rows)


def built_sources(g: toporank.Graph) -> np.ndarray:
    """The source node of each stored edge (CSR row ids)."""
    return np.repeat(np.arange(g.n), np.diff(g.indptr))


def shell_commands(out: str) -> list[str]:
    """Commands to try on the demo's files in ``out`` (all run as written; README lists them)."""
    d = out.rstrip("/")
    try:
        import matplotlib  # noqa: F401

        plot = f" --plot {d}/policies.png"
    except ImportError:
        plot = ""
    return [
        f"toporank order {d}/monorepo-imports.csv --columns imports,module --on-cycle partial",
        f"toporank order {d}/journal-citations.tsv --columns cited,citing --tie priority "
        f"--key {d}/journal-years.tsv --on-cycle condense -o {d}/order.csv "
        f"--summary {d}/summary.json",
        f"toporank cycles {d}/monorepo-imports.csv --columns imports,module --cut",
        f"toporank verify {d}/monorepo-imports-cut.csv --columns imports,module "
        f"{d}/monorepo-build-order.txt",
        f"toporank levels {d}/monorepo-imports-cut.csv --columns imports,module",
        f"toporank compare {d}/journal-citations.tsv --columns cited,citing --key "
        f"{d}/journal-years.tsv --workers 4 --on-cycle cut{plot}",
        f"toporank mainpath {d}/journal-citations.tsv --columns cited,citing "
        f"--on-cycle preprint -o {d}/mainpath.csv",
    ]


def run(out: str, *, progress: bool = True) -> int:
    """Write the invented data into ``out``, order them, print a report; return the exit status."""
    started = time.perf_counter()
    os.makedirs(out, exist_ok=True)
    citations, years = journal()
    paths = {
        "citations": os.path.join(out, "journal-citations.tsv"),
        "years": os.path.join(out, "journal-years.tsv"),
        "imports": os.path.join(out, "monorepo-imports.csv"),
        "journal_order": os.path.join(out, "journal-order.csv"),
        "journal_summary": os.path.join(out, "journal-summary.json"),
        "imports_cut": os.path.join(out, "monorepo-imports-cut.csv"),
        "build_order": os.path.join(out, "monorepo-build-order.txt"),
        "monorepo_summary": os.path.join(out, "monorepo-summary.json"),
    }
    _write_tsv(
        paths["citations"],
        f"{JOURNAL}: invented citations, generated by toporank demo",
        ("cited", "citing"),
        citations,
    )
    _write_tsv(
        paths["years"],
        f"{JOURNAL}: year of each invented paper",
        ("paper", "year"),
        sorted(years.items()),
    )
    _write_csv(paths["imports"], ("module", "imports"), monorepo())

    journal_on_cycle = "condense"
    g = read_graph(paths["citations"], columns=("cited", "citing"), progress=progress)
    key = read_key(paths["years"], g)
    ids, report = order_with_report(g, journal_on_cycle, tie="priority", key=key)
    if ids is None:  # not reached: condense always gives an order
        raise RuntimeError("the demo's journal could not be ordered")
    names = node_strings(g, ids)
    with atomic_output(paths["journal_order"]) as f:
        f.write("node,position,year\n")
        f.writelines(f"{p},{i},{years[p]}\n" for i, p in enumerate(names))
    write_json(
        paths["journal_summary"],
        {
            "input": paths["citations"],
            "nodes": g.n,
            "edges": g.m,
            "on_cycle": journal_on_cycle,
            "ordered": len(ids),
            "cycles": report,
        },
    )

    print(f"toporank demo: invented data and results in {out}/\n")
    print(f"{JOURNAL} ({FIRST_YEAR}-{LAST_YEAR}, invented): {g.n} papers, {g.m} citations")
    if report["is_dag"]:
        print("  no citation loops")
    else:
        loops = _loops(g)
        if loops:
            print(f"  not a DAG: {len(loops)} citation loops among papers of one issue:")
            for loop in loops:
                print(f"    {shown_cycle(loop)}")
        else:
            print(f"  not a DAG: citation loop {shown_cycle(report['witness_cycle'])}")
        print(f"  all {len(ids)} papers ordered, each loop kept together (--on-cycle condense)")
    first = ", ".join(f"{p} ({years[p]})" for p in names[:4])
    print(f"  reading order, oldest first (--tie priority by year): {first}, ...")

    edges = monorepo()
    m = read_graph(paths["imports"], columns=("imports", "module"), progress=progress)
    cut = cut_report(m)
    built = without_edges(m, cut["edge"])
    _write_csv(
        paths["imports_cut"],
        ("module", "imports"),
        [(v, u) for u, v in zip(named(built, built_sources(built)), named(built, built.indices))],
    )
    build_ids, build_report = order_with_report(m, "cut", tie="queue")
    if build_ids is None:  # not reached: cut always gives an order
        raise RuntimeError("the demo's monorepo could not be ordered")
    build_order = node_strings(m, build_ids)
    with atomic_output(paths["build_order"]) as f:
        f.writelines(f"{module}\n" for module in build_order)
    write_json(
        paths["monorepo_summary"],
        {
            "input": paths["imports"],
            "nodes": m.n,
            "edges": m.m,
            "on_cycle": "cut",
            "ordered": len(build_ids),
            "cut": cut,
            "cycles": build_report,
        },
    )
    print(f"\norbit monorepo (invented): {m.n} modules, {len(edges)} imports")
    if not build_report["is_dag"]:
        print(f"  import cycle: {shown_cycle(build_report['witness_cycle'])}")
        removed = ", ".join(
            f"{u} -> {v}" for u, v in zip(cut["source"], cut["target"], strict=True)
        )
        print(f"  removing {removed} breaks the cycle (--on-cycle cut); imports left in")
        print(f"    {paths['imports_cut']}")
    print(f"  build order of all {len(build_ids)} modules: {', '.join(build_order[:5])}, ...")

    print("\nwritten:")
    for path in paths.values():
        print(f"  {path}")
    print("\nnext, from the shell:")
    for command in shell_commands(out):
        print(f"  {command}")
    print(f"\ndone in {time.perf_counter() - started:.2f} s")
    return 0
