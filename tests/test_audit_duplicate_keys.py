"""A key given twice in one JSON object (`{"title": "a", "title": "b"}`) is refused with the key
and where it is, in a run file, in one line of a JSON-lines file and in a JSON list of runs;
nothing is saved. Before, the last of the two was kept without a word.

Source: docs/sources.md, "Records, files and exchange formats" (RFC 8259 §4: names within an
object should be unique, and readers differ on which of two equal names they keep; Python's
json module keeps the last).
"""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner

from samples import MINIMAL_RUN
from trapbook.cli import main
from trapbook.errors import RecordError
from trapbook.records import load_run_text
from trapbook.store import Notebook

RUN_TEXT = json.dumps(MINIMAL_RUN, ensure_ascii=False)
TWO_TITLES = RUN_TEXT.replace('{"title": ', '{"title": "a", "title": ', 1)
TWO_FURAN_ROLES = RUN_TEXT.replace('"role": "trap"', '"role": "trap", "role": "additive"', 1)
TWO_HOLDS = RUN_TEXT.replace('"hold": "2 h"', '"hold": "2 h", "hold": "3 h"', 1)


def test_the_samples_hold_the_repeated_keys():
    for text, key in ((TWO_TITLES, '"title"'), (TWO_FURAN_ROLES, '"role": "additive"'), (TWO_HOLDS, '"3 h"')):
        assert text != RUN_TEXT and key in text


@pytest.fixture
def db(tmp_path):
    path = tmp_path / "nb.sqlite"
    assert CliRunner().invoke(main, ["--db", str(path), "init"]).exit_code == 0
    return path


def _count_runs(db) -> int:
    with Notebook.open(db) as nb:
        return nb.count_runs()


def test_python_keeps_the_last_of_two_keys_so_it_must_be_refused():
    assert json.loads(TWO_TITLES)["title"] == MINIMAL_RUN["title"]  # what json alone does: "a" is lost
    with pytest.raises(RecordError) as err:
        load_run_text(TWO_TITLES, "run.json")
    assert "'title' twice at the top level" in err.value.message and err.value.field == "title"


@pytest.mark.parametrize(
    ("text", "words"),
    [(TWO_TITLES, "'title' twice at the top level"), (TWO_FURAN_ROLES, "'role' twice in line 'furan'")],
    ids=["top level", "in a line"],
)
def test_add_refuses_a_repeated_key_and_saves_nothing(db, tmp_path, text, words):
    path = tmp_path / "run.json"
    path.write_text(text, encoding="utf-8")
    res = CliRunner().invoke(main, ["--db", str(db), "add", str(path)])
    assert res.exit_code == 2, res.output
    assert str(path) in res.stderr and words in res.stderr and "what to do:" in res.stderr
    assert _count_runs(db) == 0


def test_import_of_json_lines_names_the_line_and_the_place(db, tmp_path):
    path = tmp_path / "runs.jsonl"
    path.write_text(RUN_TEXT + "\n" + TWO_FURAN_ROLES + "\n", encoding="utf-8")
    res = CliRunner().invoke(main, ["--db", str(db), "import", str(path), "--json"])
    assert res.exit_code == 2, res.output
    err = json.loads(res.stdout)
    assert f"{path} line 2" in err["error"] and "'role' twice in line 'furan'" in err["error"]
    assert err["field"] == "role" and "nothing was imported" in err["hint"]
    assert _count_runs(db) == 0  # all or nothing: the good first line is not kept either


def test_import_of_a_json_list_names_the_record_and_step(db, tmp_path):
    path = tmp_path / "runs.json"
    path.write_text("[" + RUN_TEXT + ",\n" + TWO_HOLDS + "]", encoding="utf-8")
    res = CliRunner().invoke(main, ["--db", str(db), "import", str(path)])
    assert res.exit_code == 2, res.output
    assert "'hold' twice in record 2: step 3" in res.stderr
    assert _count_runs(db) == 0


def test_import_of_one_run_file_and_of_stdin(db, tmp_path):
    path = tmp_path / "run.json"
    path.write_text(TWO_TITLES, encoding="utf-8")
    res = CliRunner().invoke(main, ["--db", str(db), "import", str(path)])
    assert res.exit_code == 2 and "'title' twice at the top level" in res.stderr
    res = CliRunner().invoke(main, ["--db", str(db), "import", "-"], input=TWO_TITLES)
    assert res.exit_code == 2 and "'title' twice at the top level" in res.stderr
    assert _count_runs(db) == 0


def test_equal_keys_in_different_objects_are_fine(db, tmp_path):
    """Every line has its own "name": only a repeat inside one object is refused."""
    path = tmp_path / "run.json"
    path.write_text(RUN_TEXT, encoding="utf-8")
    assert CliRunner().invoke(main, ["--db", str(db), "add", str(path)]).exit_code == 0
    assert _count_runs(db) == 1
