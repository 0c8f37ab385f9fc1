"""A save's reason is one line of plain text, like every other single-line field.

It is hash-chained into the history, printed by every history view and exported with the
run: a reason that carried an escape sequence was stored, and then the notebook's own RO-Crate
could not be imported back ("history damaged or crafted").
Sources: docs/sources.md, "Bench words, input limits and ids" (control characters) and
"Records, files and exchange formats" (reasons on versions, 2,000 characters).
"""

from __future__ import annotations

import copy
import json

import pytest
from click.testing import CliRunner

from samples import MINIMAL_RUN
from trapbook.errors import RecordError

ESCAPED = "corrected\x1b[2J volume"


def _versions(nb, run_id: str) -> int:
    return len(nb.history(run_id))


def test_a_reason_with_an_escape_is_refused_and_nothing_is_written(notebook):
    rid = notebook.add_run(copy.deepcopy(MINIMAL_RUN), author="tester").run_id
    run = notebook.get_run(rid)
    for save in (
        lambda: notebook.save_run(run, 1, author="tester", reason=ESCAPED),
        lambda: notebook.withdraw_run(rid, reason="wrong\nflask", author="tester"),
        lambda: notebook.add_run(copy.deepcopy(MINIMAL_RUN), author="tester", reason="x\u202ey"),
    ):
        with pytest.raises(RecordError) as err:
            save()
        assert err.value.field == "reason"
        assert "U+" in err.value.message
    assert _versions(notebook, rid) == 1
    assert len(notebook.list_runs(include_withdrawn=True)) == 1


def test_screen_and_setting_reasons_follow_the_same_rule(notebook):
    with pytest.raises(RecordError):
        notebook.set_check_settings({"trap_min_equiv": 3}, author="tester", reason="a\x07b")
    with pytest.raises(RecordError):
        notebook.add_screen({"name": "s", "factors": {"trap": ["furan"]}}, author="tester", reason="a\x1bb")
    assert notebook.get_setting("checks", None) is None


def test_cli_update_names_the_reason_as_the_field(tmp_path):
    from trapbook.cli import main

    db, runfile = str(tmp_path / "nb.sqlite"), tmp_path / "run.json"
    runfile.write_text(json.dumps(MINIMAL_RUN), encoding="utf-8")
    runner = CliRunner()
    assert runner.invoke(main, ["--db", db, "init"]).exit_code == 0
    assert runner.invoke(main, ["--db", db, "--author", "t", "add", str(runfile)]).exit_code == 0
    res = runner.invoke(main, ["--db", db, "--author", "t", "update", "TB-0001", str(runfile), "--reason", ESCAPED, "--json"])
    assert res.exit_code == 2
    assert json.loads(res.output)["field"] == "reason"
    assert "Traceback" not in res.output


def test_every_reason_a_save_accepts_comes_back_from_a_crate(tmp_path):
    from trapbook.exchange import crate, jsonl
    from trapbook.store import Notebook
    from trapbook.text_rules import REASON_MAX

    src = Notebook.create(tmp_path / "a.sqlite")
    odd = tmp_path / "runs\x1b[31m.jsonl"  # a file name is not checked by anyone before it lands in a reason
    odd.write_text(json.dumps(MINIMAL_RUN) + "\n", encoding="utf-8")
    rid = jsonl.import_path(src, odd, author="tester")["imported"][0]
    src.save_run(src.get_run(rid), 1, author="tester", reason="r" * REASON_MAX)
    out = tmp_path / "runs.zip"
    crate.export(src, [src.get_run(rid)], output=out)
    src.close()
    dst = Notebook.create(tmp_path / "b.sqlite")
    report = crate.import_path(dst, out, author="tester")
    history = dst.history(report["imported"][0])
    assert [h.reason for h in history] == ["imported from runs\\u001b[31m.jsonl", "r" * REASON_MAX]
    dst.close()
