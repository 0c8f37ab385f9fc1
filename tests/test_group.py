"""The group view (--group): several members' notebooks read together, never written.

Outside references: the members' files are compared byte for byte with SHA-256 (hashlib)
before and after a whole session, and run counts and ids are read with plain SQL
(sqlite3) from each file, not through Trapbook.
"""

from __future__ import annotations

import asyncio
import hashlib
import json
import shutil
import sqlite3
import subprocess
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner

from trapbook.cli import main
from trapbook.group import Group, open_member
from trapbook.search_query import parse_query


def _sha_all(folder: Path) -> dict[str, str]:
    """SHA-256 of every notebook file and of its write-ahead log (-wal) in the folder.

    A reader of a WAL notebook may leave an empty -wal file beside it (SQLite's read-only
    bookkeeping, no content); an empty log and no log both mean "no pending writes", so
    both hash as empty bytes here. Any byte written to either file changes a hash.
    """
    out = {}
    for p in sorted(folder.glob("*.sqlite")):
        wal = p.with_name(p.name + "-wal")
        out[p.name] = hashlib.sha256(p.read_bytes()).hexdigest()
        out[wal.name] = hashlib.sha256(wal.read_bytes() if wal.exists() else b"").hexdigest()
    return out


def _sql(path: Path, query: str, args=()) -> list[tuple]:
    conn = sqlite3.connect(f"file:{path}?mode=ro", uri=True)
    try:
        return conn.execute(query, args).fetchall()
    finally:
        conn.close()


@pytest.fixture(autouse=True)
def _pool_files_in_tmp(tmp_path, monkeypatch) -> None:
    """A group's structure pool files go to this test's own cache folder (structure_pool_file)."""
    monkeypatch.setenv("TRAPBOOK_CACHE_DIR", str(tmp_path / "cache"))


@pytest.fixture(scope="module")
def lab(tmp_path_factory) -> Path:
    """Two members: alice (the demo notebook, one fast-tier strain result cached) and bob (a copy, named)."""
    folder = tmp_path_factory.mktemp("lab")
    alice = folder / "alice.sqlite"
    subprocess.run(
        [sys.executable, "-m", "trapbook", "--db", str(alice), "demo", "--no-ui", "--strain", "none"],
        check=True,
        capture_output=True,
        timeout=180,
    )
    shutil.copy(alice, folder / "bob.sqlite")
    runner = CliRunner()
    assert runner.invoke(main, ["--db", str(folder / "bob.sqlite"), "whoami", "Bob B."]).exit_code == 0
    assert runner.invoke(main, ["--db", str(alice), "strain", "C12=CCCC(CCC1)C2", "--tier", "fast"]).exit_code == 0
    for p in folder.glob("*.sqlite-shm"):
        p.unlink()
    return folder


def _cli(*args: str):
    return CliRunner().invoke(main, list(args))


def test_group_search_labels_every_hit_and_writes_nothing(lab):
    before = _sha_all(lab)
    res = _cli(
        "--group", str(lab / "alice.sqlite"), "--group", str(lab / "bob.sqlite"), "search", "--trap", "anthracene", "--json"
    )
    assert res.exit_code == 0, res.output
    out = json.loads(res.output)
    assert [m["member"] for m in out["members"]] == ["alice", "bob"] and all(m["ok"] for m in out["members"])
    assert next(m for m in out["members"] if m["member"] == "bob")["owner"] == "Bob B."
    # Each member's own anthracene runs, read with plain SQL from its file.
    for member in ("alice", "bob"):
        expected = {
            r[0]
            for r in _sql(
                lab / f"{member}.sqlite",
                "SELECT run_id FROM run_index i JOIN runs r ON r.id = i.run_id "
                "WHERE r.withdrawn = 0 AND lower(i.trap) LIKE '%anthracene%'",
            )
        }
        got = {h["run_id"] for h in out["hits"] if h["member"] == member}
        assert got == expected and expected
        assert all(h["ref"] == f"{member}:{h['run_id']}" for h in out["hits"] if h["member"] == member)
    assert _sha_all(lab) == before


def test_a_whole_group_session_leaves_every_member_file_unchanged(lab, tmp_path):
    before = _sha_all(lab)
    group = ["--group", str(lab)]  # a folder: every *.sqlite in it
    listed = json.loads(_cli(*group, "list", "--json").output)
    counts = {m: _sql(lab / f"{m}.sqlite", "SELECT count(*) FROM runs WHERE withdrawn = 0")[0][0] for m in ("alice", "bob")}
    assert len(listed["runs"]) == sum(counts.values())
    assert {r["ref"] for r in listed["runs"]} == {
        f"{m}:{rid}" for m in counts for (rid,) in _sql(lab / f"{m}.sqlite", "SELECT id FROM runs WHERE withdrawn = 0")
    }
    text = _cli(*group, "list").output
    assert text.splitlines()[0].startswith("member") and "bob    TB-0018" in text

    review = _cli(*group, "review", "bob:SC-0001", "--json")
    assert review.exit_code == 0, review.output
    rv = json.loads(review.output)
    assert rv["member"] == "bob" and rv["screen_id"] == "SC-0001"
    ambiguous = _cli(*group, "review", "SC-0001")
    assert ambiguous.exit_code == 2 and "alice:SC-0001" in ambiguous.output and "bob:SC-0001" in ambiguous.output

    smap = json.loads(_cli(*group, "strain-map", "--json").output)
    runs = [r for x in smap["intermediates"] for r in x["runs"]]
    assert any(r.startswith("alice:") for r in runs) and any(r.startswith("bob:") for r in runs)

    report = _cli(*group, "report", "alice:TB-0001", "-o", str(tmp_path / "r.html"), "--json")
    assert report.exit_code == 0, report.output
    assert json.loads(report.output)["member"] == "alice" and (tmp_path / "r.html").stat().st_size > 1000

    asyncio.run(_tui_session(lab))
    assert _sha_all(lab) == before


async def _tui_session(lab: Path) -> None:
    from trapbook.tui.app import TrapbookApp
    from trapbook.tui.screens.runs import LogbookScreen

    app = TrapbookApp(None, group=(str(lab),), warm=False)
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.pause(0.3)
        screen = app.screen
        assert isinstance(screen, LogbookScreen) and app.read_only
        assert len(screen.rows) == 36 and {r["member"] for r in screen.rows} == {"alice", "bob"}
        assert "member" in [key for key, _, _ in screen.columns]
        await pilot.press("n")  # a new run would be written: refused, and said
        await pilot.pause(0.2)
        assert isinstance(app.screen, LogbookScreen)
        assert any("read-only" in n.message for n in app._notifications)
        from textual.widgets import DataTable

        screen.query_one("#runs", DataTable).move_cursor(row=len(screen.rows) - 1)  # the last row is bob's
        await pilot.pause(0.2)
        await pilot.press("e")  # read-only: its version trail, read from bob's notebook
        await pilot.pause(0.3)
        assert app.nb.path.name == "bob.sqlite" and type(app.screen).__name__ == "TrailScreen"


def test_strain_cached_by_one_member_serves_the_others(lab):
    from trapbook.chemistry.strain_key import cache_key
    from trapbook.review import shown_strain
    from trapbook.store import Notebook

    key = cache_key("C12=CCCC(CCC1)C2", "fast")
    assert _sql(lab / "bob.sqlite", "SELECT count(*) FROM strain_cache WHERE key = ?", (key,))[0][0] == 0
    assert _sql(lab / "alice.sqlite", "SELECT count(*) FROM strain_cache WHERE key = ?", (key,))[0][0] == 1
    with Notebook.open(lab / "bob.sqlite") as bob_alone:
        run = bob_alone.get_run("TB-0001")  # the [3.3.1] bridgehead alkene
        assert shown_strain(bob_alone, run) is None
    with Group.open([lab]) as group:
        bob = group.member("bob").nb
        found = shown_strain(bob, bob.get_run("TB-0001"))
        assert found is not None and found["tier"] == "fast"
        alice_row = _sql(lab / "alice.sqlite", "SELECT result FROM strain_cache WHERE key = ?", (key,))[0][0]
        assert found["olefin_strain_kcal_mol"] == json.loads(alice_row)["olefin_strain_kcal_mol"]


def test_a_member_changed_outside_trapbook_is_shown_and_left_out(lab, tmp_path):
    folder = tmp_path / "lab"
    folder.mkdir()
    for name in ("alice.sqlite", "bob.sqlite"):
        shutil.copy(lab / name, folder / name)
    conn = sqlite3.connect(folder / "bob.sqlite")
    conn.execute("UPDATE versions SET data = replace(data, 'furan', 'furan ') WHERE run_id = 'TB-0001' AND version = 1")
    conn.commit()
    conn.close()
    res = _cli("--group", str(folder), "list", "--json")
    out = json.loads(res.output)
    bob = next(m for m in out["members"] if m["member"] == "bob")
    assert bob["ok"] is False and any(p["code"] == "hash-mismatch" and p["record"] == "TB-0001 v1" for p in bob["problems"])
    assert {r["member"] for r in out["runs"]} == {"alice"}
    text = _cli("--group", str(folder), "search", "--trap", "furan")
    assert "NOT VERIFIED, left out: bob" in text.output and "bob:" not in text.stdout


def test_group_refuses_writes_and_a_second_notebook_option(lab, monkeypatch):
    for args in (
        ["add", "x.json"],
        ["withdraw", "TB-0001", "--reason", "x"],
        ["settings", "--set", "trap_min_equiv=3"],
        ["demo", "--no-ui"],
        ["verify"],
    ):
        res = _cli("--group", str(lab), *args)
        assert res.exit_code == 2 and "cannot run under --group" in res.output, (args, res.output)
    both = _cli("--db", str(lab / "alice.sqlite"), "--group", str(lab), "list")
    assert both.exit_code == 2 and "both --db" in both.output
    late = _cli("--group", str(lab), "list", "--db", str(lab / "alice.sqlite"))
    assert late.exit_code == 2 and "both --db" in late.output
    monkeypatch.setenv("TRAPBOOK_DB", str(lab / "alice.sqlite"))  # the environment's notebook yields to --group
    assert _cli("--group", str(lab), "list").exit_code == 0
    missing = _cli("--group", str(lab / "nobody.sqlite"), "list")
    assert missing.exit_code == 2 and "no notebook at" in missing.output


def test_member_connections_refuse_writes(lab):
    nb = open_member(lab / "alice.sqlite")
    try:
        with pytest.raises(sqlite3.OperationalError):
            nb.conn.execute("DELETE FROM runs")
        from trapbook.errors import StoreError

        with pytest.raises(StoreError, match="only reads"):
            nb.withdraw_run("TB-0001", "test")
    finally:
        nb.close()


def test_group_search_matches_each_member_searched_alone(lab):
    from trapbook.search import search
    from trapbook.store import Notebook

    query = parse_query("temp:>=100 yield:>=50")
    with Group.open([lab / "alice.sqlite", lab / "bob.sqlite"]) as group:
        merged = {(h["member"], h["run_id"]) for h in group.search(query)}
    alone = set()
    for member in ("alice", "bob"):
        with Notebook.open(lab / f"{member}.sqlite") as nb:
            alone |= {(member, h.run_id) for h in search(nb, query)}
    # The same runs from plain SQL over the summary rows (temperature ≥ 100 °C, yield ≥ 50 %).
    sql = {
        (m, r[0])
        for m in ("alice", "bob")
        for r in _sql(
            lab / f"{m}.sqlite",
            "SELECT i.run_id FROM run_index i JOIN runs r ON r.id = i.run_id "
            "WHERE r.withdrawn = 0 AND i.temp_max_c >= 100 AND i.yield_pct >= 50",
        )
    }
    assert merged == alone == sql and merged
