"""A version saved under looser rules stays a readable record.

Input rules tighten over time (no tabs in titles, holds longer than zero, bounded numbers).
A run already in a notebook that breaks a newer rule must still list, show and export;
only a new version has to meet the rules in force.
"""

from __future__ import annotations

import json
import sqlite3

from click.testing import CliRunner

from trapbook.cli import main
from trapbook.errors import RecordError
from trapbook.records import load_run, stored_run


def _old_style(data: dict) -> dict:
    data = json.loads(json.dumps(data))
    data["title"] = "furan\ttrap, old notebook"  # a tab: refused in a title today
    data["steps"][0]["hold"] = {"value": 0, "unit": "min"}  # a zero hold: refused today
    return data


def test_new_input_is_refused_but_stored_text_reads(minimal_run_file):
    data = _old_style(json.loads(minimal_run_file.read_text()))
    try:
        load_run(data)
    except RecordError:
        pass
    else:
        raise AssertionError("a tab in a title and a zero hold must be refused as new input")
    run = stored_run(json.dumps(data))
    assert run.title == "furan\ttrap, old notebook"
    assert run.steps[0].hold.magnitude == 0


def test_cli_lists_shows_and_exports_an_old_version(tmp_path, minimal_run_file):
    db = str(tmp_path / "old.sqlite")
    runner = CliRunner()
    assert runner.invoke(main, ["--db", db, "init"]).exit_code == 0
    res = runner.invoke(main, ["--db", db, "add", str(minimal_run_file), "--json"])
    assert res.exit_code == 0, res.output
    rid = json.loads(res.output)["run_id"]
    con = sqlite3.connect(db)
    with con:
        data = _old_style(json.loads(con.execute("SELECT data FROM runs WHERE id = ?", (rid,)).fetchone()[0]))
        con.execute("UPDATE runs SET data = ? WHERE id = ?", (json.dumps(data), rid))
        con.execute("UPDATE versions SET data = ? WHERE run_id = ?", (json.dumps(data), rid))
    con.close()
    for args in (["show", rid, "--json"], ["list", "--json"], ["export", "--format", "jsonl", "-o", str(tmp_path / "o.jsonl")]):
        res = runner.invoke(main, ["--db", db, *args])
        assert res.exit_code == 0, (args, res.output)
    shown = json.loads(runner.invoke(main, ["--db", db, "show", rid, "--json"]).output)
    assert "old notebook" in json.dumps(shown)
