"""Hostile searches: LIKE wildcards are plain characters, and a costly substructure pattern
stops at its time limit with words that say so."""

from __future__ import annotations

import copy
import json
import sqlite3
import time

import pytest
from click.testing import CliRunner

from samples import MINIMAL_RUN
from trapbook.cli import main
from trapbook.errors import TrapbookError
from trapbook.search import _substring, search
from trapbook.store import Notebook

# A chain of 22 quaternary carbons, each with two methyls, and a hydroxyl at one end.
BRANCHED = "OC" + "C(C)(C)" * 22 + "C"
# Wildcard atoms in the same branched chain shape, then an explicit hydrogen on an oxygen: every
# way of laying the chain on the molecule is tried before the [#1] (never present: hydrogens
# are implicit) fails. RDKit's matcher backtracks for minutes (16 s for 20 repeats, measured).
PATHOLOGICAL = "*" + "~*(~*)(~*)" * 22 + "~[#8]~[#1]"
SHORT = "[#8]~*" + "~*(~*)(~*)" * 3  # the same kind of pattern, short enough to answer at once


@pytest.mark.parametrize(
    "needle,want",
    [
        ("%", {"50% aq. HF"}),
        ("_", {"n_BuLi"}),
        ("\\", {"a\\b"}),
        ("50%", {"50% aq. HF"}),
        ("n_b", {"n_BuLi"}),
        ("b", {"n_BuLi", "a\\b", "nxbuli"}),
    ],
)
def test_like_wildcards_are_plain_characters(needle, want):
    # Source: SQLite's LIKE ... ESCAPE (sqlite.org/lang_expr.html#like): with an escape character,
    # '%' and '_' after it match themselves; plain Python 'in' is the reference.
    names = ["50% aq. HF", "n_BuLi", "nxbuli", "a\\b", "THF"]
    conn = sqlite3.connect(":memory:")
    conn.execute("CREATE TABLE t (name TEXT)")
    conn.executemany("INSERT INTO t VALUES (?)", [(n,) for n in names])
    sql, args = _substring("name", needle)
    got = {r[0] for r in conn.execute(f"SELECT name FROM t WHERE {sql}", args)}
    assert got == want == {n for n in names if needle.casefold() in n.casefold()}


def _add(nb, title: str, chemist: str, product: str | None = None, solvent: str = "THF") -> None:
    run = copy.deepcopy(MINIMAL_RUN)
    run.update(title=title, chemist=chemist)
    for line in run["lines"]:
        if line["role"] == "solvent":
            line["name"] = solvent
    if product:
        run["lines"].append({"role": "product", "name": "branched alcohol", "smiles": product})
    nb.add_run(run)


def test_chemist_and_solvent_wildcards_in_a_notebook(tmp_path):
    with Notebook.create(tmp_path / "w.sqlite") as nb:
        _add(nb, "one", "A_B", solvent="THF_dry")
        _add(nb, "two", "AxB")
        _add(nb, "three", "100% sure")
        assert [h.title for h in search(nb, chemist="_")] == ["one"]
        assert [h.title for h in search(nb, chemist="%")] == ["three"]
        assert [h.title for h in search(nb, solvent="_")] == ["one"]
        assert {h.title for h in search(nb, chemist="a")} == {"one", "two"}


@pytest.fixture
def hostile_notebook(tmp_path):
    path = tmp_path / "hostile.sqlite"
    with Notebook.create(path) as nb:
        _add(nb, "branched", "A. Trial", product=BRANCHED)
    return path


def test_pathological_pattern_stops_at_the_time_limit(hostile_notebook):
    with Notebook.open(hostile_notebook) as nb:
        assert [h.title for h in search(nb, substructure=SHORT, time_limit_s=5)] == ["branched"]  # the shape is there
        start = time.monotonic()
        with pytest.raises(TrapbookError) as info:
            search(nb, substructure=PATHOLOGICAL, time_limit_s=1)
        took = time.monotonic() - start
    assert took < 4  # the limit plus the time to stop the worker, not the minutes of the match
    assert "stopped after 1 s" in info.value.message and "narrow the pattern" in info.value.hint


def test_cli_says_the_query_was_stopped(hostile_notebook):
    res = CliRunner().invoke(main, ["--db", str(hostile_notebook), "search", "-s", PATHOLOGICAL, "--time-limit", "1", "--json"])
    assert res.exit_code == 2
    err = json.loads(res.stdout)
    assert "stopped after 1 s" in err["error"] and "Traceback" not in res.output


def test_a_stopped_query_is_not_remembered_as_empty(hostile_notebook):
    with Notebook.open(hostile_notebook) as nb:
        for _ in range(2):  # the second ask is stopped again, never answered "no runs" from memory
            with pytest.raises(TrapbookError):
                search(nb, substructure=PATHOLOGICAL, time_limit_s=0.5)


@pytest.mark.parametrize("limit", [0, -1, float("nan"), float("inf"), 1e308])
def test_time_limit_must_be_a_sane_number_of_seconds(demo_notebook, limit):
    with pytest.raises(TrapbookError) as info:
        search(demo_notebook, trap="furan", time_limit_s=limit)
    assert "time limit" in info.value.message and info.value.hint
