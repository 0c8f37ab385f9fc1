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
        "SELECT version, author, time, reason, action, prev_hash, hash, data FROM versions WHERE run_id = ? ORDER BY version", (res.run_id,)
    ).fetchall()
    prev = None
    for version, author, time, reason, action, prev_hash, h, data in rows:
        # Source: SHA-256 (FIPS 180-4) via hashlib, recomputed here from the stored fields
        # (sorted-key, no-space JSON of the metadata and the data's own SHA-256), not via Trapbook
        assert prev_hash == prev
        assert h == version_hash(res.run_id, version, author, time, reason, action, prev, data)
        link = {"run": res.run_id, "version": version, "author": author, "time": time, "reason": reason,
                "action": action, "prev": prev, "data_sha256": hashlib.sha256(data.encode()).hexdigest()}
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
