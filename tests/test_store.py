"""The notebook: immutable versions with a hash chain, stale saves refused, nothing deleted."""

import hashlib
import json

import pytest

from trapbook.errors import NotFoundError, RecordError, StaleVersionError, StoreError
from trapbook.records import canonical_json, load_run
from trapbook.store import Notebook
from trapbook.store.notebook import version_hash
from trapbook.store.schema import MIGRATIONS


def test_add_get_and_ids(notebook, minimal_run):
    a = notebook.add_run(load_run(minimal_run), author="ada")
    b = notebook.add_run(load_run(minimal_run), author="ada")
    assert a.run_id != b.run_id and a.version == 1
    assert notebook.get_run(a.run_id).title == minimal_run["title"]
    with pytest.raises(NotFoundError):
        notebook.get_run("TB-9999")


def test_edit_keeps_earlier_version_readable(notebook, minimal_run):
    res = notebook.add_run(load_run(minimal_run), author="ada")
    edited = notebook.get_run(res.run_id).to_json_dict()
    edited["lines"][2]["equiv"] = 5
    notebook.save_run(edited, expected_version=1, author="bo", reason="less furan")
    assert notebook.get_run(res.run_id, version=1).line("furan").equiv.magnitude == 10
    assert notebook.get_run(res.run_id).line("furan").equiv.magnitude == 5
    hist = notebook.history(res.run_id)
    assert [v.version for v in hist] == [1, 2]
    assert hist[1].author == "bo" and hist[1].reason == "less furan"
    assert any("furan" in c and "10" in c and "5" in c for c in hist[1].changes)


def test_version_hashes_chain(notebook, minimal_run):
    res = notebook.add_run(load_run(minimal_run))
    d = notebook.get_run(res.run_id).to_json_dict()
    d["title"] = "second"
    notebook.save_run(d, 1, reason="retitle")
    rows = notebook.conn.execute(
        "SELECT version, author, time, reason, action, prev_hash, hash, data FROM versions WHERE run_id = ? ORDER BY version",
        (res.run_id,),
    ).fetchall()
    prev = None
    for version, author, time, reason, action, prev_hash, h, data in rows:
        # Source: SHA-256 (FIPS 180-4) via hashlib, recomputed here from the stored fields
        # (sorted-key, no-space JSON of the metadata and the data's own SHA-256), not via Trapbook
        assert prev_hash == prev
        assert h == version_hash(res.run_id, version, author, time, reason, action, prev, data)
        link = {
            "run": res.run_id,
            "version": version,
            "author": author,
            "time": time,
            "reason": reason,
            "action": action,
            "prev": prev,
            "data_sha256": hashlib.sha256(data.encode()).hexdigest(),
        }
        payload = json.dumps(link, sort_keys=True, separators=(",", ":"), ensure_ascii=False)
        assert h == hashlib.sha256(payload.encode()).hexdigest()
        assert json.loads(data) == json.loads(canonical_json(json.loads(data)))
        prev = h
    assert notebook.run_meta(res.run_id)["hash"] == prev
    # a changed byte in the stored JSON no longer matches its hash
    tampered = rows[0][7].replace("Furan", "Furam")
    assert version_hash(res.run_id, 1, rows[0][1], rows[0][2], rows[0][3], rows[0][4], None, tampered) != rows[0][6]


def test_stale_save_is_refused_and_nothing_written(notebook, minimal_run):
    res = notebook.add_run(load_run(minimal_run))
    d = notebook.get_run(res.run_id).to_json_dict()
    notebook.save_run(dict(d, title="first edit"), 1, reason="one")
    with pytest.raises(StaleVersionError, match="was changed"):
        notebook.save_run(dict(d, title="stale edit"), 1, reason="two")
    assert notebook.get_run(res.run_id).title == "first edit"
    assert len(notebook.history(res.run_id)) == 2


def test_edit_needs_a_reason(notebook, minimal_run):
    res = notebook.add_run(load_run(minimal_run))
    with pytest.raises(RecordError, match="reason"):
        notebook.save_run(notebook.get_run(res.run_id), 1, reason=" ")


def test_withdraw_keeps_the_record(notebook, minimal_run):
    res = notebook.add_run(load_run(minimal_run))
    notebook.withdraw_run(res.run_id, reason="duplicate entry")
    assert notebook.list_runs() == []
    assert [r["id"] for r in notebook.list_runs(include_withdrawn=True)] == [res.run_id]
    assert notebook.get_run(res.run_id).title == minimal_run["title"]
    assert notebook.history(res.run_id)[-1].action == "withdraw"


def test_migrations_recorded_and_wal(tmp_path):
    nb = Notebook.create(tmp_path / "m.sqlite")
    rows = nb.conn.execute("SELECT version, description FROM migrations ORDER BY version").fetchall()
    assert [r[0] for r in rows] == [m[0] for m in MIGRATIONS]
    assert nb.conn.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
    nb.close()
    # reopening applies nothing twice
    nb = Notebook.open(tmp_path / "m.sqlite")
    assert nb.conn.execute("SELECT count(*) FROM migrations").fetchone()[0] == len(MIGRATIONS)
    nb.close()


def test_not_a_notebook_is_a_store_error(tmp_path):
    p = tmp_path / "junk.sqlite"
    p.write_bytes(b"this is not sqlite" * 100)
    with pytest.raises(StoreError, match="not a Trapbook notebook"):
        Notebook.open(p)
    with pytest.raises(StoreError, match="no notebook"):
        Notebook.open(tmp_path / "missing.sqlite")


def test_import_is_all_or_nothing(notebook, minimal_run):
    good = load_run(minimal_run)
    bad = load_run(minimal_run).model_copy(update={"id": "TB-0001"})
    notebook.add_run(good, keep_id=False)  # takes TB-0001
    with pytest.raises(RecordError):
        with notebook.transaction():
            notebook.add_run(good)
            notebook.add_run(bad, keep_id=True)  # clashes: whole transaction rolls back
    assert notebook.count_runs() == 1


def test_default_path_from_environment(monkeypatch, tmp_path):
    from trapbook.store import default_path

    monkeypatch.setenv("TRAPBOOK_DB", str(tmp_path / "x.sqlite"))
    assert default_path() == tmp_path / "x.sqlite"


# --- only an explicit create makes a notebook ---------------------------------------------


def test_opening_a_missing_path_names_init_and_makes_nothing(tmp_path):
    target = tmp_path / "no" / "such" / "folder" / "nb.sqlite"
    with pytest.raises(NotFoundError) as exc:
        Notebook.open(target)
    assert f"no notebook at {target}" in exc.value.message and "trapbook init" in exc.value.message
    assert not (tmp_path / "no").exists()  # no folder made on the way


def test_an_empty_file_is_refused_and_left_as_it_is(tmp_path):
    empty = tmp_path / "empty.sqlite"
    empty.touch()
    with pytest.raises(StoreError, match="empty file, not a notebook"):
        Notebook.open(empty)
    assert empty.stat().st_size == 0
    with Notebook.open(empty, create=True) as nb:  # what `init` does: an explicit create
        assert nb.schema_version == MIGRATIONS[-1][0]


def test_another_programs_sqlite_file_gets_no_notebook_tables(tmp_path):
    import sqlite3

    other = tmp_path / "other.db"
    with sqlite3.connect(other) as conn:
        conn.execute("CREATE TABLE photos (id INTEGER PRIMARY KEY)")
    for create in (False, True):
        with pytest.raises(StoreError, match="another program's tables"):
            Notebook.open(other, create=create)
    with sqlite3.connect(other) as conn:
        assert [r[0] for r in conn.execute("SELECT name FROM sqlite_master WHERE type = 'table'")] == ["photos"]


# --- faults: full disk, a lock held too long ----------------------------------------------


def test_a_full_disk_says_so_and_changes_nothing(notebook, minimal_run):
    from trapbook import integrity

    notebook.add_run(minimal_run, author="a")
    pages = notebook.conn.execute("PRAGMA page_count").fetchone()[0]
    # Source: docs/sources.md, "Store, verify and faults" (max_page_count gives SQLITE_FULL, as a full disk does)
    notebook.conn.execute(f"PRAGMA max_page_count = {pages}")
    big = dict(minimal_run, notes="x" * 19_000)
    with pytest.raises(StoreError) as exc:
        notebook.add_run(big, author="a")
    assert exc.value.message == "the disk is full; nothing was changed"
    assert "free some space" in exc.value.hint
    assert notebook.run_ids() == ["TB-0001"]
    notebook.conn.execute("PRAGMA max_page_count = 1073741823")
    assert integrity.verify(notebook).ok


def test_a_lock_held_too_long_is_waited_for_then_refused_plainly(tmp_path, minimal_run, monkeypatch, caplog):
    import sqlite3

    from trapbook.store import connect

    path = tmp_path / "locked.sqlite"
    Notebook.create(path).close()
    monkeypatch.setattr(connect, "LOCK_WAIT_SECONDS", 1.0)
    monkeypatch.setattr(connect, "LOCK_SLICE_MS", 100)
    holder = sqlite3.connect(path, isolation_level=None)
    holder.execute("BEGIN IMMEDIATE")  # Source: docs/sources.md, "Store, verify and faults" (BEGIN IMMEDIATE locks)
    try:
        with Notebook.open(path) as nb, caplog.at_level("WARNING", logger="trapbook.store"):
            with pytest.raises(StoreError) as exc:
                nb.add_run(minimal_run, author="a")
            assert "locked" in exc.value.message and "nothing was changed" in exc.value.message
            assert "waiting" in caplog.text and str(path) in caplog.text  # who waits, for what
    finally:
        holder.execute("ROLLBACK")
        holder.close()


def test_a_lock_released_while_waiting_lets_the_save_through(tmp_path, minimal_run, monkeypatch):
    import sqlite3
    import threading

    from trapbook.store import connect

    path = tmp_path / "locked.sqlite"
    Notebook.create(path).close()
    monkeypatch.setattr(connect, "LOCK_WAIT_SECONDS", 20.0)
    monkeypatch.setattr(connect, "LOCK_SLICE_MS", 100)
    holder = sqlite3.connect(path, isolation_level=None, check_same_thread=False)
    holder.execute("BEGIN IMMEDIATE")
    release = threading.Timer(0.8, lambda: holder.execute("ROLLBACK"))
    release.start()
    try:
        with Notebook.open(path) as nb:
            assert nb.add_run(minimal_run, author="a").run_id == "TB-0001"
    finally:
        release.join()
        holder.close()


# --- a notebook written by a newer Trapbook ------------------------------------------------


def _from_the_future(path, minimal_run):
    with Notebook.create(path) as nb:
        nb.add_run(minimal_run, author="a")
        nb.conn.execute(
            "INSERT INTO migrations (version, applied, description, app_version) "
            "VALUES (99, '2099-01-01T00:00:00+00:00', 'a later layout', '9.9.0')"
        )


def test_a_newer_notebook_is_read_but_not_written(tmp_path, minimal_run):
    path = tmp_path / "future.sqlite"
    _from_the_future(path, minimal_run)
    with Notebook.open(path) as nb:
        assert nb.get_run("TB-0001").title == minimal_run["title"]  # reading is fine
        for write in (lambda: nb.add_run(minimal_run, author="a"), lambda: nb.set_setting("email", "x@example.org")):
            with pytest.raises(StoreError) as exc:
                write()
            assert "newer Trapbook" in exc.value.message and "9.9.0" in exc.value.hint
        assert nb.run_ids() == ["TB-0001"]
        assert nb.conn.execute("SELECT max(version) FROM migrations").fetchone()[0] == 99  # nothing migrated


def test_restore_of_a_newer_backup_is_refused_naming_the_version(tmp_path, minimal_run):
    from trapbook.backup import restore

    src = tmp_path / "future.sqlite"
    _from_the_future(src, minimal_run)
    target = tmp_path / "mine.sqlite"
    with Notebook.create(target) as nb:
        nb.add_run(minimal_run, author="me")
    before = target.read_bytes()
    with pytest.raises(StoreError) as exc:
        restore(src, target)
    assert "newer Trapbook" in exc.value.message and "9.9.0" in exc.value.hint
    assert target.read_bytes() == before


# --- a place that cannot be written: read through SQLite's read-only URI --------------------


def test_an_unwritable_place_opens_read_only(tmp_path, minimal_run, monkeypatch):
    """Tests run as root, for whom chmod changes nothing: the choice of URI is tested directly."""
    from trapbook.store import connect

    path = tmp_path / "share.sqlite"
    with Notebook.create(path) as nb:
        nb.add_run(minimal_run, author="a")
    monkeypatch.setattr(connect, "writable_here", lambda p: False)
    opened = []
    real = connect.open_read_only
    monkeypatch.setattr(connect, "open_read_only", lambda p: opened.append(p) or real(p))
    with Notebook.open(path) as nb:
        assert opened == [path] and nb.read_only
        assert nb.list_runs()[0]["id"] == "TB-0001"
        with pytest.raises(StoreError, match="cannot use the notebook"):
            nb.add_run(minimal_run, author="a")
        assert nb.run_ids() == ["TB-0001"]  # nothing half-written
    with Notebook.open(tmp_path / "share.sqlite", create=False) as nb:
        assert nb.run_ids() == ["TB-0001"]


# --- upgrading a notebook made before the save log ------------------------------------------


def _as_schema_4(path):
    """Take away what migration 5 added, leaving the layout earlier Trapbook versions wrote."""
    import sqlite3

    with sqlite3.connect(path) as conn:
        for table in ("saves", "head", "setting_versions"):
            conn.execute(f"DROP TABLE {table}")
        for table, column in (
            ("screen_versions", "prev_hash"),
            ("screen_versions", "hash"),
            ("strain_cache", "content_sha256"),
            ("migrations", "app_version"),
        ):
            conn.execute(f"ALTER TABLE {table} DROP COLUMN {column}")
        conn.execute("DELETE FROM migrations WHERE version = 5")


def test_an_older_notebook_is_upgraded_and_then_verifies(tmp_path, minimal_run):
    from trapbook import integrity

    path = tmp_path / "old.sqlite"
    with Notebook.create(path) as nb:
        nb.add_run(minimal_run, author="a")
        nb.save_run(nb.get_run("TB-0001").model_copy(update={"notes": "n"}), 1, author="a", reason="note")
        nb.add_screen({"name": "s", "factors": {"trap": ["furan"]}}, author="a")
        nb.set_setting("email", "a@example.org", author="a")
        nb.cache_put("k", "C", "fast", "e", {"v": 1})
    _as_schema_4(path)
    assert "old-schema" in {p.code for p in integrity.verify_path(path).problems}
    with Notebook.open(path) as nb:
        assert nb.schema_version == MIGRATIONS[-1][0]
        assert nb.cache_get("k") == {"v": 1}
        assert nb.setting_history("email")[0]["value"] == "a@example.org"
    rep = integrity.verify_path(path)
    assert rep.ok, rep.to_dict()
    assert rep.checked["saves"] == 4  # two run versions, the screen, the setting


def test_settings_do_not_import_the_store():
    """The store reads settings (who saves, thresholds); settings must not import the store back."""
    import ast
    import inspect

    import trapbook.settings

    tree = ast.parse(inspect.getsource(trapbook.settings))
    imported = [n.module or "" for n in ast.walk(tree) if isinstance(n, ast.ImportFrom)]
    imported += [a.name for n in ast.walk(tree) if isinstance(n, ast.Import) for a in n.names]
    assert not [m for m in imported if "store" in m.split(".")], imported
