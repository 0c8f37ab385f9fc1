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
    proc = subprocess.run(
        [sys.executable, "-m", "trapbook", "amounts", str(tmp_path / "nope.json")],
        capture_output=True,
        text=True,
        env=env,
        timeout=120,
    )
    assert proc.returncode == 2
    assert "no file" in proc.stderr and "Traceback" not in proc.stderr


# --- one error path: words on stderr, or JSON on stdout under --json ---------------------


def test_json_error_is_an_object_on_stdout_exit_2(cli, tmp_path, minimal_run):
    minimal_run["lines"][2]["volume"] = "2 mg"
    del minimal_run["lines"][2]["equiv"]
    p = tmp_path / "bad.json"
    p.write_text(json.dumps(minimal_run))
    res = cli("amounts", str(p), "--json")
    assert res.exit_code == 2
    data = json.loads(res.stdout)
    assert set(data) == {"error", "hint", "field"}
    assert "volume '2 mg' is a mass" in data["error"] and data["hint"]
    assert "volume" in data["field"]  # the refused input, for code to branch on
    assert res.stderr == ""
    # without --json the same refusal is words on stderr and nothing on stdout
    res = cli("amounts", str(p))
    assert res.exit_code == 2 and res.stdout == ""
    assert res.stderr.startswith("error: ") and "what to do:" in res.stderr


def test_json_error_names_the_field_refused(cli):
    res = cli("show", "TB-0001", "--json")  # the notebook exists but holds no such run
    assert res.exit_code == 2 and json.loads(res.stdout)["error"]
    runner = CliRunner()
    res = runner.invoke(main, ["--db", "/nonexistent-folder/nb.sqlite", "list", "--json"])
    assert res.exit_code == 2
    assert json.loads(res.stdout)["field"] == "db"


def test_usage_error_under_json_is_json(cli):
    res = cli("list", "--json", "--no-such-option")
    assert res.exit_code == 2
    assert "no-such-option" in json.loads(res.stdout)["error"]


def test_a_bug_is_exit_1_and_still_json(cli, monkeypatch):
    from trapbook.store import Notebook

    def broken(self, *args, **kwargs):
        raise ZeroDivisionError("division by zero")

    monkeypatch.setattr(Notebook, "list_runs", broken)
    res = cli("list", "--json")
    assert res.exit_code == 1
    data = json.loads(res.stdout)
    assert "unexpected ZeroDivisionError" in data["error"] and "report" in data["hint"]
    res = cli("list")
    assert res.exit_code == 1 and "Traceback" not in res.output and "unexpected ZeroDivisionError" in res.stderr


def test_closed_pipe_is_a_quiet_exit_0(cli, monkeypatch):
    from trapbook.store import Notebook

    def gone(self, *args, **kwargs):
        raise BrokenPipeError

    monkeypatch.setattr(Notebook, "list_runs", gone)
    res = cli("list")
    assert res.exit_code == 0 and res.stderr == ""


def test_no_command_module_carries_its_own_error_decorator():
    from pathlib import Path

    import trapbook.cli as cli_pkg

    for src in Path(cli_pkg.__file__).parent.glob("*.py"):
        assert "@guarded" not in src.read_text(encoding="utf-8"), src.name


# --- a mistyped --db never creates a notebook ------------------------------------------------


@pytest.mark.parametrize(
    "args",
    [
        ["list"],
        ["show", "TB-0001"],
        ["settings"],
        ["open"],
        ["add", "{run}"],
        ["import", "{run}"],
        ["screens"],
        ["search", "--text", "furan"],
        ["verify"],
    ],
)
def test_mistyped_db_says_no_notebook_and_creates_nothing(tmp_path, minimal_run_file, args):
    missing = tmp_path / "no-such-folder" / "typo.sqlite"
    res = CliRunner().invoke(main, ["--db", str(missing), *[a.format(run=minimal_run_file) for a in args]])
    assert res.exit_code == 2, res.output
    assert str(missing) in res.stderr and ("no notebook" in res.stderr or "does not exist" in res.stderr)
    assert "trapbook init" in res.stderr or "--create" in res.stderr
    assert not missing.parent.exists()


def test_add_and_import_create_only_when_asked(tmp_path, minimal_run_file):
    db = tmp_path / "new.sqlite"
    res = CliRunner().invoke(main, ["--db", str(db), "add", str(minimal_run_file)])
    assert res.exit_code == 2 and "--create" in res.stderr and not db.exists()
    res = CliRunner().invoke(main, ["--db", str(db), "add", str(minimal_run_file), "--create", "--json"])
    assert res.exit_code == 0, res.output
    assert json.loads(res.stdout)["run_id"] and db.exists()


def test_list_refuses_an_empty_file_and_leaves_it_empty(tmp_path):
    empty = tmp_path / "empty.sqlite"
    empty.write_bytes(b"")
    res = CliRunner().invoke(main, ["--db", str(empty), "list"])
    assert res.exit_code == 2 and "empty" in res.stderr
    assert empty.stat().st_size == 0


def test_errors_carry_data_for_code_not_only_words():
    from trapbook.errors import UnitError
    from trapbook.units import parse_quantity

    # Source: SI base dimensions (BIPM SI Brochure, 9th ed.): a mass is [mass], a volume [length]^3
    with pytest.raises(UnitError) as err:
        parse_quantity("2 mg", "volume", field="volume")
    assert err.value.field == "volume"
    assert err.value.got == "[mass]" and err.value.expected == "[length] ** 3"
    assert err.value.to_dict() == {"error": err.value.message, "hint": err.value.hint, "field": "volume"}


async def test_the_terminal_ui_does_not_create_a_mistyped_notebook(tmp_path):
    from trapbook.tui.app import TrapbookApp

    missing = tmp_path / "no-such-folder" / "typo.sqlite"
    app = TrapbookApp(missing, author="pilot", warm=False)
    async with app.run_test() as pilot:
        await pilot.pause(0.1)
    assert app.nb is None
    assert not missing.parent.exists()
