"""`import --create` that fails leaves no new empty notebook behind, as `add --create` does not:
the notebook made by that command is removed again and the message says so. A notebook that was
already there, or one that holds anything, is never removed.
"""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner

from samples import MINIMAL_RUN
from trapbook.cli import main
from trapbook.errors import TrapbookError
from trapbook.records import load_run
from trapbook.store import Notebook
from trapbook.store.made_for_command import notebook_made_for_command


@pytest.fixture
def bad_file(tmp_path):
    path = tmp_path / "runs.jsonl"
    path.write_text(json.dumps(MINIMAL_RUN) + "\n{not json\n", encoding="utf-8")
    return path


def _invoke(db, *args):
    return CliRunner().invoke(main, ["--db", str(db), *map(str, args)])


@pytest.mark.parametrize("command", ["import", "add"])
def test_a_failed_create_leaves_no_notebook_and_no_folders(tmp_path, bad_file, command):
    db = tmp_path / "new" / "deeper" / "nb.sqlite"
    res = _invoke(db, command, bad_file, "--create")
    assert res.exit_code == 2, res.output
    assert not db.exists() and not (tmp_path / "new").exists()
    assert not list(tmp_path.glob("new*"))
    if command == "import":  # add fails on the file before it makes anything; import made one and says so
        assert "removed again" in res.stderr and str(db) in res.stderr


def test_the_json_error_says_so_too(tmp_path, bad_file):
    db = tmp_path / "nb.sqlite"
    res = _invoke(db, "import", bad_file, "--create", "--json")
    assert res.exit_code == 2
    assert "removed again" in json.loads(res.stdout)["error"]
    assert not db.exists() and not list(tmp_path.glob("nb.sqlite*"))


def test_an_existing_notebook_is_never_removed(tmp_path, bad_file, minimal_run_file):
    db = tmp_path / "nb.sqlite"
    assert _invoke(db, "init").exit_code == 0
    res = _invoke(db, "import", bad_file, "--create")
    assert res.exit_code == 2 and "removed" not in res.stderr
    assert db.exists()
    assert _invoke(db, "add", minimal_run_file).exit_code == 0  # still a working notebook


def test_an_existing_empty_notebook_is_kept_as_well(tmp_path, bad_file):
    """Made by init earlier and still empty: not made by this command, so not this command's to remove."""
    db = tmp_path / "nb.sqlite"
    assert _invoke(db, "init").exit_code == 0
    assert _invoke(db, "import", bad_file, "--create").exit_code == 2
    with Notebook.open(db) as nb:
        assert nb.count_runs() == 0


def test_a_good_import_with_create_keeps_the_notebook(tmp_path):
    good = tmp_path / "runs.jsonl"
    good.write_text(json.dumps(MINIMAL_RUN) + "\n", encoding="utf-8")
    db = tmp_path / "nb.sqlite"
    assert _invoke(db, "import", good, "--create").exit_code == 0
    with Notebook.open(db) as nb:
        assert nb.count_runs() == 1


def test_a_new_notebook_that_holds_a_save_is_kept_when_the_command_fails_after_it(tmp_path):
    db = tmp_path / "nb.sqlite"
    with pytest.raises(TrapbookError) as err:
        with notebook_made_for_command(db) as nb:
            nb.add_run(load_run(MINIMAL_RUN), author="tester", reason="created")
            raise TrapbookError("a later step failed", "try again")
    assert "removed" not in err.value.message
    with Notebook.open(db) as nb:
        assert nb.count_runs() == 1


def test_a_stray_files_folder_that_was_already_there_is_left_alone(tmp_path, bad_file):
    db = tmp_path / "nb.sqlite"
    stray = tmp_path / "nb.sqlite.files"
    stray.mkdir()
    (stray / "keep.txt").write_text("someone's file", encoding="utf-8")
    assert _invoke(db, "import", bad_file, "--create").exit_code == 2
    assert not db.exists() and (stray / "keep.txt").read_text(encoding="utf-8") == "someone's file"
