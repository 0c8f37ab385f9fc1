"""`trapbook demo` never drops a run it did not create.

A newcomer types a first real run into the demo notebook (`make demo` opens it) and runs
`demo` again: the run and its history must still be reachable, and when a fresh demo is
asked for, the old notebook is kept as a dated backup and the command says where.
Every check here is of behaviour (what is still stored, what is said), not of numbers.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest
from click.testing import CliRunner

from trapbook.cli import main
from trapbook.demo import demo_lab_dir
from trapbook.store import Notebook

FIRST_RUN = {
    "title": "first real run: furan trap of the C7 bridgehead alkene",
    "chemist": "A. Trial",
    "lines": [{"name": "furan", "role": "trap", "amount": "1 mmol"}],
}


def _demo(db: Path, *extra: str):
    res = CliRunner().invoke(main, ["--db", str(db), "demo", "--no-ui", "--strain", "none", *extra])
    return res


def _demo_json(db: Path, *extra: str) -> dict:
    res = CliRunner().invoke(main, ["--db", str(db), "demo", "--strain", "none", "--json", *extra])
    assert res.exit_code == 0, res.output
    return json.loads(res.output)


def _demo_run_count() -> int:
    return len(list((demo_lab_dir() / "runs").glob("*.json")))


@pytest.fixture
def demo_with_my_run(tmp_path):
    """A demo notebook where the user added a run and then edited it once."""
    db = tmp_path / "demo.sqlite"
    _demo_json(db)
    run_file = tmp_path / "mine.json"
    run_file.write_text(json.dumps(FIRST_RUN), encoding="utf-8")
    runner = CliRunner()
    res = runner.invoke(main, ["--db", str(db), "--author", "A. Trial", "add", str(run_file), "--json"])
    assert res.exit_code == 0, res.output
    rid = json.loads(res.output)["run_id"]
    with Notebook.open(db) as nb:
        run = nb.get_run(rid).model_copy(update={"title": FIRST_RUN["title"] + " (repeat)"})
        nb.save_run(run, 1, author="A. Trial", reason="second attempt noted")
    return db, rid


def test_rerunning_demo_keeps_a_run_the_user_added(demo_with_my_run):
    db, rid = demo_with_my_run
    assert rid == f"TB-{_demo_run_count() + 1:04d}"  # the next id after the demo's own runs
    res = _demo(db)
    assert res.exit_code == 0, res.output
    assert "not rebuilt" in res.output and rid in res.output and "--fresh" in res.output
    with Notebook.open(db) as nb:
        versions = nb.history(rid)
        assert [v.reason for v in versions] == ["created", "second attempt noted"]
        assert {v.author for v in versions} == {"A. Trial"}
        assert nb.count_runs() == _demo_run_count() + 1


def test_fresh_demo_keeps_the_old_notebook_as_a_dated_backup_and_says_where(demo_with_my_run):
    from trapbook.integrity import verify_path

    db, rid = demo_with_my_run
    summary = _demo_json(db, "--fresh")
    backup = Path(summary["backup"])
    assert summary["rebuilt"] and backup.is_file() and backup.parent == db.parent.resolve()
    assert re.fullmatch(r"demo-\d{8}-\d{6}\.sqlite", backup.name)
    assert str(backup) in summary["notice"]
    with Notebook.open(backup) as old:
        assert [v.reason for v in old.history(rid)] == ["created", "second attempt noted"]
    assert verify_path(backup).ok
    with Notebook.open(db) as nb:  # the new demo holds only the demo's runs
        assert nb.count_runs() == _demo_run_count()
        assert rid not in nb.run_ids()
    res = _demo(db, "--fresh")  # now only the demo's own runs: rebuilt without another backup
    assert res.exit_code == 0 and "kept at" not in res.output
    assert sorted(p.name for p in db.parent.iterdir() if p.suffix == ".sqlite") == sorted([backup.name, db.name])


def test_an_edited_demo_run_is_work_too(tmp_path):
    db = tmp_path / "demo.sqlite"
    _demo_json(db)
    with Notebook.open(db) as nb:
        run = nb.get_run("TB-0001")
        nb.save_run(run.model_copy(update={"page": "p. 12"}), 1, author="A. Trial", reason="paper page added")
    summary = _demo_json(db)
    assert summary["rebuilt"] is False and summary["user_work"] == ["run TB-0001 (2 versions)"]
    with Notebook.open(db) as nb:
        assert nb.get_run("TB-0001").page == "p. 12"


def test_attached_files_travel_with_the_backup(demo_with_my_run, tmp_path):
    from trapbook import attachments

    db, rid = demo_with_my_run
    spectrum = tmp_path / "1H.txt"
    spectrum.write_bytes(b"fictional 1H NMR test bytes\n" * 100)
    with Notebook.open(db) as nb:
        res = attachments.attach(nb, rid, spectrum, author="A. Trial")
    summary = _demo_json(db, "--fresh")
    kept = attachments.blob_path(attachments.store_dir(summary["backup"]), res["sha256"])
    assert kept.read_bytes() == spectrum.read_bytes()


def test_a_demo_holding_only_its_own_runs_is_rebuilt_in_place(tmp_path):
    db = tmp_path / "demo.sqlite"
    first = _demo_json(db)
    again = _demo_json(db)
    assert first["rebuilt"] and again["rebuilt"] and again["backup"] is None
    assert sorted(p.name for p in tmp_path.iterdir() if p.suffix == ".sqlite") == ["demo.sqlite"]


def test_the_name_set_in_the_demo_is_carried_over(tmp_path):
    db = tmp_path / "demo.sqlite"
    _demo_json(db)
    assert CliRunner().invoke(main, ["--db", str(db), "whoami", "A. Trial"]).exit_code == 0
    assert _demo_json(db)["rebuilt"]
    res = CliRunner().invoke(main, ["--db", str(db), "whoami", "--json"])
    assert json.loads(res.output)["name"] == "A. Trial"


def test_a_lab_notebook_is_never_replaced_even_with_fresh(tmp_path):
    lab = tmp_path / "lab.sqlite"
    with Notebook.create(lab) as nb:
        nb.add_run(FIRST_RUN, author="A. Trial")
    res = _demo(lab, "--fresh")
    assert res.exit_code == 2 and "not a demo notebook" in res.output
    with Notebook.open(lab) as nb:
        assert [r["title"] for r in nb.list_runs()] == [FIRST_RUN["title"]]
    assert sorted(p.name for p in tmp_path.iterdir() if p.suffix == ".sqlite") == ["lab.sqlite"]
