"""Regressions from a user trial of the store: read-only notebooks, withdraw twice,
missing versions, and version-trail wording a chemist can read."""

from __future__ import annotations

import copy
import json
import os
import shutil
import sqlite3
import subprocess
import sys
import tempfile
from pathlib import Path

import pytest

from trapbook.errors import NotFoundError, RecordError, StoreError
from trapbook.store import Notebook


def _run_with_result(run: dict, mass: str = "20.0 mg") -> dict:
    run = copy.deepcopy(run)
    run["lines"].append({"role": "product", "name": "adduct", "smiles": "C1=CC2OC1c1ccccc12"})
    run["outcome"] = {"products": [{"product": "adduct", "isolated_mass": mass}]}
    return run


# --- a notebook that cannot be written ---------------------------------------------------


def test_write_to_a_read_only_connection_is_a_store_error_not_a_crash(tmp_path, minimal_run):
    path = tmp_path / "nb.sqlite"
    with Notebook.create(path) as nb:
        nb.add_run(minimal_run, author="a")
    # SQLite's own read-only mode stands in for a file the user may not write.
    ro = Notebook(path, sqlite3.connect(f"file:{path}?mode=ro", uri=True, isolation_level=None))
    try:
        assert ro.get_run("TB-0001").title == minimal_run["title"]  # reading still works
        with pytest.raises(StoreError, match="cannot use the notebook") as exc:
            ro.add_run(minimal_run, author="a")
        assert exc.value.hint
        with pytest.raises(StoreError):
            ro.set_setting("x", 1)
    finally:
        ro.close()
    with Notebook.open(path) as nb:
        assert nb.run_ids() == ["TB-0001"]  # nothing half-written


def _as_reader(args: list[str]) -> subprocess.CompletedProcess:
    """Run the CLI as a user who may read but not write (nobody, when the tests run as root)."""
    cmd = [sys.executable, "-m", "trapbook", *args]
    if os.geteuid() == 0:
        setpriv = shutil.which("setpriv")
        if setpriv is None:
            pytest.skip("running as root without setpriv: cannot act as a user without write access")
        cmd = [setpriv, "--reuid=65534", "--regid=65534", "--clear-groups", *cmd]
    env = {k: v for k, v in os.environ.items() if k != "TRAPBOOK_DB"}
    return subprocess.run(cmd, check=False, capture_output=True, text=True, timeout=120, env=env, cwd="/")


@pytest.fixture
def shared_folder():
    """A folder others can reach (pytest's own tmp folders are private to their owner)."""
    d = Path(tempfile.mkdtemp(prefix="trapbook-ro-", dir="/tmp"))
    d.chmod(0o755)
    yield d
    for p in d.rglob("*"):
        p.chmod(0o755 if p.is_dir() else 0o644)
    d.chmod(0o755)
    shutil.rmtree(d, ignore_errors=True)


def _readonly_notebook(folder: Path, minimal_run: dict) -> Path:
    path = folder / "nb.sqlite"
    with Notebook.create(path) as nb:
        nb.add_run(minimal_run, author="a")
        nb.conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    for extra in folder.glob("nb.sqlite-*"):
        extra.unlink()
    path.chmod(0o444)
    return path


def test_read_only_folder_is_read_and_saves_are_refused_plainly(shared_folder, minimal_run):
    """A notebook on a read-only share: reading, listing and verifying work; a save is refused."""
    path = _readonly_notebook(shared_folder, minimal_run)
    shared_folder.chmod(0o555)
    res = _as_reader(["--db", str(path), "list"])
    assert res.returncode == 0, res.stderr
    assert "TB-0001" in res.stdout and minimal_run["title"] in res.stdout
    res = _as_reader(["--db", str(path), "verify"])
    assert res.returncode == 0, res.stdout + res.stderr
    run_file = Path(tempfile.mkdtemp(prefix="trapbook-run-", dir="/tmp")) / "run.json"
    run_file.write_text(json.dumps(minimal_run), encoding="utf-8")
    run_file.parent.chmod(0o755)
    run_file.chmod(0o644)
    res = _as_reader(["--db", str(path), "add", str(run_file)])
    assert res.returncode == 2, res.stderr
    assert "read-only for you" in res.stderr and "not a Trapbook notebook" not in res.stderr and "Traceback" not in res.stderr
    assert not list(shared_folder.glob("nb.sqlite-*"))  # nothing written beside it either


def test_read_only_file_reads_but_refuses_saves_plainly(shared_folder, minimal_run, tmp_path):
    path = _readonly_notebook(shared_folder, minimal_run)
    shared_folder.chmod(0o777)  # SQLite may put its journal beside the file
    run_file = shared_folder / "run.json"
    run_file.write_text(json.dumps(minimal_run), encoding="utf-8")
    run_file.chmod(0o644)
    assert _as_reader(["--db", str(path), "show", "TB-0001"]).returncode == 0
    for args in (["add", str(run_file)], ["withdraw", "TB-0001", "--reason", "x"], ["settings", "--set", "trap_min_equiv=3"]):
        res = _as_reader(["--db", str(path), *args])
        assert res.returncode == 2, (args, res.stderr)
        assert "read-only for you" in res.stderr and "unexpected" not in res.stderr


def test_new_notebook_in_a_read_only_folder_names_the_folder(shared_folder):
    shared_folder.chmod(0o555)
    res = _as_reader(["--db", str(shared_folder / "new.sqlite"), "init"])
    assert res.returncode == 2
    assert f"folder {shared_folder} is read-only" in res.stderr


# --- withdraw and versions ---------------------------------------------------------------


def test_withdrawing_twice_is_refused_and_adds_no_version(notebook, minimal_run):
    rid = notebook.add_run(minimal_run, author="a").run_id
    notebook.withdraw_run(rid, "duplicate", author="a")
    with pytest.raises(RecordError, match="already withdrawn"):
        notebook.withdraw_run(rid, "again", author="a")
    notebook.withdraw_run(rid, "was right after all", author="a", restore=True)
    with pytest.raises(RecordError, match="not withdrawn"):
        notebook.withdraw_run(rid, "again", author="a", restore=True)
    assert [v.action for v in notebook.history(rid)] == ["create", "withdraw", "restore"]


def test_version_zero_is_reported_as_a_missing_version(notebook, minimal_run):
    rid = notebook.add_run(minimal_run, author="a").run_id
    with pytest.raises(NotFoundError, match=r"no run TB-0001 version 0") as exc:
        notebook.get_run(rid, 0)
    assert "history" in exc.value.hint


def test_history_names_the_product_and_the_value_that_changed(notebook, minimal_run):
    run = _run_with_result(minimal_run, "20.0 mg")
    rid = notebook.add_run(run, author="a").run_id
    edited = _run_with_result(minimal_run, "22.0 mg")
    edited["steps"][2]["hold"] = "3 h"
    notebook.save_run({**edited, "id": rid}, 1, author="a", reason="reweighed, longer hold")
    changes = notebook.history(rid)[1].changes
    assert "outcome.products[adduct].isolated_mass: 20 mg → 22 mg" in changes
    assert "steps[3].hold: 2 h → 3 h" in changes


def test_history_says_an_added_outcome_field_by_field():
    from trapbook.store import diff_runs

    old = {"title": "a"}
    new = {
        "title": "a",
        "outcome": {
            "products": [{"product": "adduct", "isolated_mass": {"value": 21.0, "unit": "mg"}, "dr": "3:1"}],
            "observations": "white solid",
        },
    }
    changes = diff_runs(old, new)
    assert "outcome.products[adduct].isolated_mass: added 21 mg" in changes
    assert 'outcome.products[adduct].dr: added "3:1"' in changes
    assert not any("{" in c for c in changes)  # no raw JSON objects


def test_demo_never_replaces_a_notebook_with_real_runs(tmp_path, minimal_run):
    from trapbook.demo import build_demo
    from trapbook.errors import TrapbookError
    from trapbook.records import load_run
    from trapbook.store import Notebook

    real = tmp_path / "lab.sqlite"
    with Notebook.create(real) as nb:
        nb.add_run(load_run(minimal_run))
    with pytest.raises(TrapbookError, match="not a demo notebook"):
        build_demo(real)
    with Notebook.open(real) as nb:
        assert nb.count_runs() == 1  # the lab's run is still there
    demo = tmp_path / "demo.sqlite"
    first = build_demo(demo)
    again = build_demo(demo)  # a demo notebook may be rebuilt in place
    assert first["runs"] == again["runs"] >= 16
