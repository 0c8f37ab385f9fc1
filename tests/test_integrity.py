"""verify, attachments, backup and restore: changes made outside Trapbook are caught, nothing is lost."""

from __future__ import annotations

import hashlib
import os
import random
import shutil
import sqlite3
import stat
import subprocess
import sys

import pytest

from trapbook import attachments, integrity
from trapbook.backup import backup, restore
from trapbook.errors import RecordError, StoreError
from trapbook.records import load_run
from trapbook.store import Notebook


@pytest.fixture
def nb_path(demo_notebook_path, tmp_path):
    dest = tmp_path / "nb.sqlite"
    backup(demo_notebook_path, dest)
    return dest


def _codes(path):
    return {(p.code, p.record) for p in integrity.verify_path(path).problems}


def test_demo_notebook_verifies(demo_notebook_path):
    rep = integrity.verify_path(demo_notebook_path)
    assert rep.ok, rep.to_dict()
    assert rep.checked["runs"] == 18 and rep.checked["versions"] >= 18  # the demo lab's 18 run files


def test_a_changed_byte_in_a_stored_version_is_caught(nb_path):
    con = sqlite3.connect(nb_path)
    data = con.execute("SELECT data FROM versions WHERE run_id = 'TB-0005' AND version = 1").fetchone()[0]
    i = data.index('"title":"') + 9
    changed = data[:i] + ("X" if data[i] != "X" else "Y") + data[i + 1 :]  # one byte
    con.execute("UPDATE versions SET data = ? WHERE run_id = 'TB-0005' AND version = 1", (changed,))
    con.commit()
    con.close()
    codes = _codes(nb_path)
    assert ("hash-mismatch", "TB-0005 v1") in codes
    assert ("current-mismatch", "TB-0005") in codes


def test_a_rewritten_current_row_is_caught(nb_path):
    con = sqlite3.connect(nb_path)
    con.execute("UPDATE runs SET title = 'renamed by hand' WHERE id = 'TB-0002'")
    con.commit()
    con.close()
    assert ("current-mismatch", "TB-0002") in _codes(nb_path)


def test_a_deleted_version_breaks_the_chain(nb_path):
    nb = Notebook.open(nb_path)
    run = nb.get_run("TB-0001").to_json_dict()
    nb.save_run(dict(run, title="two"), 1, reason="r1")
    nb.save_run(dict(run, title="three"), 2, reason="r2")
    nb.close()
    con = sqlite3.connect(nb_path)
    con.execute("DELETE FROM versions WHERE run_id = 'TB-0001' AND version = 2")
    con.commit()
    con.close()
    codes = _codes(nb_path)
    assert ("chain-gap", "TB-0001 v3") in codes and ("chain-link", "TB-0001 v3") in codes


def test_a_whole_deleted_history_is_caught(nb_path):
    con = sqlite3.connect(nb_path)
    con.execute("DELETE FROM versions WHERE run_id = 'TB-0009'")
    con.commit()
    con.close()
    assert ("orphan-row", "TB-0009") in _codes(nb_path)


def test_a_damaged_file_is_reported_not_raised(nb_path, tmp_path):
    damaged = tmp_path / "damaged.sqlite"
    shutil.copyfile(nb_path, damaged)
    size = damaged.stat().st_size
    with open(damaged, "r+b") as fh:  # overwrite pages in the middle of the file
        fh.seek(size // 2)
        fh.write(random.Random(0).randbytes(8192))
    rep = integrity.verify_path(damaged)
    assert not rep.ok
    garbage = tmp_path / "garbage.sqlite"
    garbage.write_bytes(b"not a database at all" * 100)
    rep = integrity.verify_path(garbage)
    assert not rep.ok and rep.problems[0].code == "sqlite"


def test_attachment_store_is_content_addressed_and_checked(nb_path, tmp_path):
    nb = Notebook.open(nb_path)
    f = tmp_path / "fid.bin"
    f.write_bytes(os.urandom(3000))
    res = attachments.attach(nb, "TB-0004", f, author="ada")
    # Source: sha256sum (GNU coreutils), an implementation independent of Python's hashlib
    if shutil.which("sha256sum"):
        outside = subprocess.run(["sha256sum", str(f)], capture_output=True, text=True, check=True).stdout.split()[0]
        assert res["sha256"] == outside
    assert res["sha256"] == hashlib.sha256(f.read_bytes()).hexdigest()
    blob = attachments.blob_path(attachments.store_dir(nb), res["sha256"])
    assert blob.parent.name == res["sha256"][:2] and blob.name == res["sha256"][2:]
    mode = blob.stat().st_mode
    assert not mode & (stat.S_IXUSR | stat.S_IXGRP | stat.S_IXOTH)  # never executable
    assert not mode & stat.S_IWUSR  # not overwritten by accident
    # recorded in a new version, with the reason
    hist = nb.history("TB-0004")
    assert hist[-1].version == res["version"] == 2 and "attached fid.bin" in hist[-1].reason
    run = nb.get_run("TB-0004")
    assert run.attachments[0].size == 3000
    with pytest.raises(RecordError):
        attachments.attach(nb, "TB-0004", f)  # the same file twice under the same name
    nb.close()
    assert integrity.verify_path(nb_path).ok
    os.chmod(blob, 0o644)
    blob.write_bytes(b"changed")
    assert ("attachment", "TB-0004 v2 attachment fid.bin") in _codes(nb_path)
    with pytest.raises(StoreError):
        attachments.read_verified(attachments.store_dir(nb_path), res["sha256"], 3000)
    blob.unlink()
    assert any(c[0] == "attachment" for c in _codes(nb_path))


def test_backup_while_another_process_is_saving(nb_path, tmp_path):
    writer = subprocess.Popen(
        [
            sys.executable,
            "-c",
            f"""
import sys
from trapbook.store import Notebook
nb = Notebook.open({str(nb_path)!r})
for i in range(400):
    nb.add_run({{"title": f"busy {{i}}", "lines": [{{"role": "precursor", "name": "p", "amount": "0.1 mmol"}}]}}, author="w")
    if i == 5:
        print("going", flush=True)
""",
        ],
        stdout=subprocess.PIPE,
        text=True,
    )
    try:
        assert writer.stdout.readline().strip() == "going"
        results = [backup(nb_path, tmp_path / f"b{i}.sqlite") for i in range(3)]
    finally:
        writer.wait(timeout=120)
    assert writer.returncode == 0
    counts = []
    for res in results:
        assert res["verified"], res["problems"]
        con = sqlite3.connect(res["path"])
        counts.append(con.execute("SELECT count(*) FROM runs").fetchone()[0])
        con.close()
    assert all(18 <= c <= 418 for c in counts)  # the demo's 18 runs, plus at most the writer's 400
    assert integrity.verify_path(nb_path).ok


def test_backup_never_overwrites(nb_path, tmp_path):
    dest = tmp_path / "b.sqlite"
    dest.write_text("keep")
    with pytest.raises(StoreError):
        backup(nb_path, dest)
    assert dest.read_text() == "keep"
    res = backup(nb_path, tmp_path)  # a folder: a dated name inside it
    assert res["verified"] and res["path"].startswith(str(tmp_path))


def test_restore_refuses_a_damaged_backup_and_keeps_what_was_there(nb_path, tmp_path, minimal_run):
    good = tmp_path / "good.sqlite"
    backup(nb_path, good)
    bad = tmp_path / "bad.sqlite"
    backup(nb_path, bad)
    con = sqlite3.connect(bad)
    con.execute("UPDATE versions SET author = 'someone else' WHERE run_id = 'TB-0003'")
    con.commit()
    con.close()
    nb = Notebook.open(nb_path)
    new_id = nb.add_run(load_run(minimal_run), author="ada").run_id
    nb.close()
    before = nb_path.read_bytes()
    with pytest.raises(StoreError) as exc:
        restore(bad, nb_path)
    assert "does not pass verify" in exc.value.message
    assert nb_path.read_bytes() == before
    res = restore(good, nb_path)
    assert res["verified"]
    kept = Notebook.open(res["previous_kept_at"])
    assert kept.get_run(new_id).title == minimal_run["title"]  # the run added after the backup is not lost
    kept.close()
    nb = Notebook.open(nb_path)
    assert nb.count_runs() == 18
    nb.close()
