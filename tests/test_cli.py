"""The command line as a user drives it: stable --json keys, clear errors, exit codes."""

import json
import os
import subprocess
import sys

import pytest
from click.testing import CliRunner

from trapbook.cli import main


@pytest.fixture
def cli(tmp_path):
    runner = CliRunner()
    db = str(tmp_path / "cli.sqlite")
    assert runner.invoke(main, ["--db", db, "init"]).exit_code == 0  # only init creates a notebook

    def invoke(*args, input=None):
        return runner.invoke(main, ["--db", db, "--author", "tester", *args], input=input, catch_exceptions=False)

    return invoke


def test_amounts_json_has_stable_keys_and_numbers(cli, minimal_run_file):
    res = cli("amounts", str(minimal_run_file), "--json")
    assert res.exit_code == 0, res.output
    data = json.loads(res.output)
    assert data["limiting"] == "aryne precursor A"
    for line in data["lines"]:
        assert {"name", "role", "mw_g_mol", "equiv", "mmol", "mass_mg", "volume_ul"} <= set(line)
    by = {x["name"]: x for x in data["lines"]}
    # Source: docs/sources.md furan constants -> 143 µL; 1.0 M TBAF, 0.600 mmol -> 600 µL
    assert round(by["furan"]["volume_ul"]) == 143
    assert round(by["TBAF 1.0 M in THF"]["volume_ul"]) == 600
    assert by["THF"]["mmol"] is None


def test_amounts_text_uses_chemists_rounding(cli, minimal_run_file):
    res = cli("amounts", str(minimal_run_file))
    assert res.exit_code == 0
    # Source: docs/sources.md furan constants -> 143 µL; 1.0 M TBAF, 0.600 mmol -> 600 µL (n = c V);
    # 0.200 mmol is the run file's own limiting amount
    assert "143" in res.output and "600" in res.output and "0.200" in res.output


def test_wrong_unit_is_a_clear_message_exit_2(cli, tmp_path, minimal_run):
    minimal_run["lines"][2]["volume"] = "2 mg"
    del minimal_run["lines"][2]["equiv"]
    p = tmp_path / "bad.json"
    p.write_text(json.dumps(minimal_run))
    res = cli("amounts", str(p))
    assert res.exit_code == 2
    assert "line 'furan': volume '2 mg' is a mass" in res.output
    assert "Traceback" not in res.output


def test_add_show_update_history(cli, minimal_run_file, tmp_path, minimal_run):
    res = cli("add", str(minimal_run_file), "--json")
    assert res.exit_code == 0, res.output
    run_id = json.loads(res.output)["run_id"]
    shown = json.loads(cli("show", run_id, "--json").output)
    assert shown["meta"]["version"] == 1 and shown["run"]["title"] == minimal_run["title"]
    minimal_run["lines"][2]["equiv"] = 6
    p = tmp_path / "edit.json"
    p.write_text(json.dumps(minimal_run))
    res = cli("update", run_id, str(p), "--reason", "less furan")
    assert res.exit_code == 0, res.output
    hist = json.loads(cli("history", run_id, "--json").output)
    assert [h["version"] for h in hist] == [1, 2]
    assert hist[1]["reason"] == "less furan" and hist[1]["author"] == "tester"
    old = json.loads(cli("show", run_id, "--version", "1", "--json").output)
    assert old["run"]["lines"][2]["equiv"]["value"] == 10


def test_export_import_round_trip(cli, minimal_run_file, tmp_path):
    cli("add", str(minimal_run_file))
    cli("add", str(minimal_run_file))
    out = cli("export").output
    assert len(out.strip().splitlines()) == 2
    dump = tmp_path / "runs.jsonl"
    dump.write_text(out)
    runner = CliRunner()
    other = str(tmp_path / "other.sqlite")
    res = runner.invoke(main, ["--db", other, "import", str(dump), "--create", "--json"])
    assert res.exit_code == 0, res.output
    assert json.loads(res.output)["imported"] == ["TB-0001", "TB-0002"]


def test_import_is_atomic_and_names_the_record(cli, tmp_path, minimal_run):
    bad = dict(minimal_run, lines=[dict(minimal_run["lines"][0], amount="2 mL")] + minimal_run["lines"][1:])
    p = tmp_path / "mixed.jsonl"
    p.write_text(json.dumps(minimal_run) + "\n" + json.dumps(bad) + "\n")
    res = cli("import", str(p))
    assert res.exit_code == 2
    assert "line 2" in res.output and "amount" in res.output
    assert json.loads(cli("list", "--json").output) == []


def test_missing_notebook_and_run_are_messages(cli):
    res = cli("show", "TB-0042")
    assert res.exit_code == 2 and "error:" in res.output


def test_demo_no_ui_builds_the_demo(tmp_path):
    runner = CliRunner()
    res = runner.invoke(main, ["--db", str(tmp_path / "demo.sqlite"), "demo", "--strain", "none", "--json"])
    assert res.exit_code == 0, res.output
    data = json.loads(res.output)
    assert data["runs"] >= 16 and data["screens"] >= 1


def test_console_script_prints_no_traceback(tmp_path):
    env = dict(os.environ, TRAPBOOK_DB=str(tmp_path / "none.sqlite"))
    proc = subprocess.run([sys.executable, "-m", "trapbook", "amounts", str(tmp_path / "nope.json")],
                          capture_output=True, text=True, env=env, timeout=120)
    assert proc.returncode == 2
    assert "no file" in proc.stderr and "Traceback" not in proc.stderr
