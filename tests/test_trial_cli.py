"""Regressions from a user trial of the command line: earlier versions shown as such,
attachments written to missing folders, export-only formats, absurd amounts, stale
findings after a threshold change, and --json keys the --help promises."""

from __future__ import annotations

import copy
import json

import pytest
from click.testing import CliRunner

from trapbook.cli import main


@pytest.fixture
def cli(tmp_path):
    runner = CliRunner()
    db = str(tmp_path / "trial.sqlite")
    assert runner.invoke(main, ["--db", db, "init"]).exit_code == 0  # only init creates a notebook

    def invoke(*args, input=None):
        return runner.invoke(main, ["--db", db, "--author", "tester", *args], input=input, catch_exceptions=False)

    invoke.db = db
    return invoke


def _write(tmp_path, name: str, run: dict):
    p = tmp_path / name
    p.write_text(json.dumps(run, ensure_ascii=False), encoding="utf-8")
    return p


def _help_keys(cli, *command) -> str:
    return cli(*command, "--help").stdout


def test_show_of_an_earlier_version_says_so(cli, tmp_path, minimal_run):
    rid = json.loads(cli("add", str(_write(tmp_path, "a.json", minimal_run)), "--json").stdout)["run_id"]
    edited = copy.deepcopy(minimal_run)
    edited["lines"][2]["equiv"] = 12
    assert cli("update", rid, str(_write(tmp_path, "b.json", edited)), "--reason", "more furan").exit_code == 0
    head = cli("show", rid, "--version", "1").stdout.splitlines()[0]
    assert "version 1 of 2" in head and "not the current one" in head
    assert "of 2" not in cli("show", rid).stdout.splitlines()[0]
    data = json.loads(cli("show", rid, "--version", "1", "--json").stdout)
    assert data["version_shown"] == 1 and data["meta"]["version"] == 2
    by = {ln["name"]: ln for ln in data["run"]["lines"]}
    assert by["furan"]["equiv"] == {"value": 10.0, "unit": "equiv"}  # the old content, as the header says


def test_attachment_copy_into_a_missing_folder_is_a_clear_error(cli, tmp_path, minimal_run):
    rid = json.loads(cli("add", str(_write(tmp_path, "a.json", minimal_run)), "--json").stdout)["run_id"]
    spectrum = tmp_path / "h1.fid"
    spectrum.write_bytes(b"\x00fid bytes")
    assert cli("attach", rid, str(spectrum)).exit_code == 0
    res = cli("attachment", rid, "h1.fid", "-o", str(tmp_path / "no" / "such" / "x.fid"))
    assert res.exit_code == 2
    assert "cannot write" in res.output and "unexpected" not in res.output
    # A trailing slash names a folder to make (the --help says "file or folder").
    res = cli("attachment", rid, "h1.fid", "-o", str(tmp_path / "copies") + "/", "--json")
    assert res.exit_code == 0, res.output
    out = json.loads(res.stdout)["path"]
    assert out.endswith("copies/h1.fid")
    with open(out, "rb") as fh:
        assert fh.read() == b"\x00fid bytes"


@pytest.mark.parametrize("fmt", ["csv", "xlsx"])
def test_importing_an_export_only_format_says_so(cli, tmp_path, minimal_run, fmt):
    cli("add", str(_write(tmp_path, "a.json", minimal_run)))
    out = tmp_path / f"runs.{fmt}"
    assert cli("export", "--format", fmt, "-o", str(out)).exit_code == 0
    res = cli("import", str(out))
    assert res.exit_code == 2
    assert f"'{fmt}' can be exported but not imported" in res.output
    assert "not valid JSON" not in res.output and "UTF-8" not in res.output


def test_absurd_amounts_still_fit_the_table(cli, tmp_path, minimal_run):
    run = copy.deepcopy(minimal_run)
    run["lines"][2]["equiv"] = 9.9e5  # a typo a chemist can make, just inside the limit; the table must stay readable
    res = cli("amounts", str(_write(tmp_path, "huge.json", run)))
    assert res.exit_code == 0, res.output
    rows = res.stdout.splitlines()
    width = len(rows[0])
    table = rows[2 : rows.index("")]
    assert table and all(len(r) <= width for r in table), table


def test_changing_a_threshold_rejudges_the_stored_runs(cli, tmp_path, minimal_run):
    # minimal_run has 10 equiv furan: no trap-low at the default threshold, trap-low at 20.
    rid = json.loads(cli("add", str(_write(tmp_path, "a.json", minimal_run)), "--json").stdout)["run_id"]
    assert json.loads(cli("search", "--finding", "trap-low", "--json").stdout) == []
    assert cli("settings", "--set", "trap_min_equiv=20").exit_code == 0
    hits = json.loads(cli("search", "--finding", "trap-low", "--json").stdout)
    assert [h["run_id"] for h in hits] == [rid]
    assert cli("settings", "--reset").exit_code == 0
    assert json.loads(cli("search", "--finding", "trap-low", "--json").stdout) == []


def test_reindex_rebuilds_the_findings_too(cli, tmp_path, minimal_run):
    from trapbook.settings import CHECKS_KEY
    from trapbook.store import Notebook

    rid = json.loads(cli("add", str(_write(tmp_path, "a.json", minimal_run)), "--json").stdout)["run_id"]
    with Notebook.open(cli.db) as nb:  # a threshold written without re-judging (e.g. by an older version)
        nb.set_setting(CHECKS_KEY, {"trap_min_equiv": 20.0})
    assert json.loads(cli("search", "--finding", "trap-low", "--json").stdout) == []
    assert cli("reindex").exit_code == 0
    assert [h["run_id"] for h in json.loads(cli("search", "--finding", "trap-low", "--json").stdout)] == [rid]


def test_json_keys_are_named_in_help(cli, tmp_path, minimal_run):
    run_file = _write(tmp_path, "a.json", minimal_run)
    init = json.loads(cli("init", "--json").stdout)
    rid = json.loads(cli("add", str(run_file), "--json").stdout)["run_id"]
    imported = json.loads(cli("import", str(run_file), "--json").stdout)
    shown = json.loads(cli("show", rid, "--json").stdout)
    for command, data in (("init", init), ("import", imported), ("show", shown)):
        text = " ".join(_help_keys(cli, command).split())
        missing = [k for k in data if k not in text]
        assert not missing, f"{command} --json prints keys its --help does not name: {missing}"


@pytest.mark.parametrize("bad", ["2026-13-01", "2026-02-30", "2026-00"])
def test_search_refuses_dates_not_on_the_calendar(cli, bad):
    # Source: the Gregorian calendar (ISO 8601): no month 13, no 30 February, no month 0
    assert cli("init").exit_code == 0
    res = cli("search", "--date-from", bad)
    assert res.exit_code == 2 and "is not a date" in res.output


def test_planned_runs_carry_no_date_of_their_own(cli, minimal_run, tmp_path):
    base = dict(minimal_run, date="2026-09-01")
    p = _write(tmp_path, "base.json", base)
    res = cli("screen", "plan", str(p), "--vary", "temperature=23 °C,60 °C", "--dry-run", "--json")
    assert res.exit_code == 0, res.output
    runs = json.loads(res.output)["runs"]
    assert len(runs) == 2 and all("date" not in r["run"] for r in runs)


def test_import_reads_json_lines_from_stdin(cli, minimal_run):
    lines = "\n".join(json.dumps(dict(minimal_run, title=f"piped {i}")) for i in range(2)) + "\n"
    res = cli("import", "-", "--json", input=lines)
    assert res.exit_code == 0, res.output
    assert len(json.loads(res.output)["imported"]) == 2
    titles = sorted(r["title"] for r in json.loads(cli("list", "--json").output))
    assert titles == ["piped 0", "piped 1"]
    # a bad record on stdin imports nothing and says where it came from
    res = cli("import", "-", input=json.dumps({"title": "x"}) + "\n")
    assert res.exit_code == 2 and "standard input" in res.output
    assert len(json.loads(cli("list", "--json").output)) == 2
