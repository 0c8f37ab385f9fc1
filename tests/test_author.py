"""Who saved: the notebook's "you are" name is recorded on every save, --author overrides it.

The history of a run must name the chemist who changed it, not the computer's login
("root" on a shared lab machine). Checked here against what the history stores and, for
the fallback, against `getpass.getuser()` (the standard library's login name).
"""

from __future__ import annotations

import getpass
import json

import pytest
from click.testing import CliRunner

from trapbook.cli import main
from trapbook.store import Notebook

RUN = {
    "title": "furan trap of the C7 bridgehead alkene",
    "chemist": "A. Trial",
    "lines": [{"name": "furan", "role": "trap", "amount": "1 mmol"}],
}


@pytest.fixture
def db(tmp_path):
    path = tmp_path / "lab.sqlite"
    assert CliRunner().invoke(main, ["init", str(path)]).exit_code == 0
    (tmp_path / "run.json").write_text(json.dumps(RUN), encoding="utf-8")
    return path


def _cli(db, *args):
    return CliRunner().invoke(main, ["--db", str(db), *args])


def _authors(db, run_id="TB-0001"):
    with Notebook.open(db) as nb:
        return [v.author for v in nb.history(run_id)]


def test_without_a_name_the_login_is_recorded_and_whoami_says_so(db, tmp_path):
    res = _cli(db, "whoami", "--json")
    assert json.loads(res.output) == {"name": getpass.getuser(), "source": "login", "path": str(db)}
    assert _cli(db, "add", str(tmp_path / "run.json")).exit_code == 0
    assert _authors(db) == [getpass.getuser()]


def test_every_save_records_the_notebook_name(db, tmp_path):
    assert _cli(db, "whoami", "A. Trial").exit_code == 0
    assert _cli(db, "add", str(tmp_path / "run.json")).exit_code == 0
    changed = dict(RUN, title="furan trap, repeat")
    (tmp_path / "v2.json").write_text(json.dumps(changed), encoding="utf-8")
    assert _cli(db, "update", "TB-0001", str(tmp_path / "v2.json"), "--reason", "repeat").exit_code == 0
    spectrum = tmp_path / "1H.txt"
    spectrum.write_bytes(b"fictional 1H test bytes\n")
    assert _cli(db, "attach", "TB-0001", str(spectrum)).exit_code == 0
    assert _cli(db, "withdraw", "TB-0001", "--reason", "flask cracked").exit_code == 0
    assert _cli(db, "import", str(tmp_path / "run.json")).exit_code == 0
    assert _authors(db) == ["A. Trial"] * 4
    assert _authors(db, "TB-0002") == ["A. Trial"]


def test_author_option_overrides_the_notebook_name(db, tmp_path):
    assert _cli(db, "whoami", "A. Trial").exit_code == 0
    assert _cli(db, "--author", "B. Other", "add", str(tmp_path / "run.json")).exit_code == 0
    assert _authors(db) == ["B. Other"]
    res = _cli(db, "--author", "B. Other", "whoami", "--json")
    assert json.loads(res.output)["source"] == "given"
    assert _cli(db, "whoami", "--clear").exit_code == 0
    assert json.loads(_cli(db, "whoami", "--json").output)["source"] == "login"


@pytest.mark.parametrize("bad", ["", "   ", "A. Trial\x1b]52;c;b3duZWQ=\x07", "A.\nTrial", "x" * 201, "A.\u202eTrial"])
def test_names_that_are_not_one_plain_line_are_refused(db, bad):
    res = _cli(db, "whoami", bad)
    assert res.exit_code == 2 and "error:" in res.output and "Traceback" not in res.output
    assert json.loads(_cli(db, "whoami", "--json").output)["source"] == "login"  # nothing was stored


def test_a_bad_author_option_saves_nothing(db, tmp_path):
    res = _cli(db, "--author", "root\x1b[2J", "add", str(tmp_path / "run.json"))
    assert res.exit_code == 2 and "escape" in res.output
    with Notebook.open(db) as nb:
        assert nb.count_runs() == 0


# --- the terminal UI ---------------------------------------------------------------------


async def test_a_copied_run_keeps_its_chemist_when_no_name_is_set(demo_path):
    pytest.importorskip("textual")
    from trapbook.tui.app import TrapbookApp

    with Notebook.open(demo_path) as nb:
        chemist = nb.get_run("TB-0001").chemist
    assert chemist and chemist != getpass.getuser()
    app = TrapbookApp(demo_path, warm=False)
    async with app.run_test(size=(120, 40)) as pilot:
        await pilot.press("c")  # copy the first row (TB-0001) as a plan
        await pilot.pause()
        assert app.screen.data["chemist"] == chemist


async def test_the_first_save_asks_who_is_saving_and_records_it(demo_path):
    pytest.importorskip("textual")
    from trapbook.tui.app import TrapbookApp
    from trapbook.tui.screens.name_dialog import NameDialog

    app = TrapbookApp(demo_path, warm=False)
    async with app.run_test(size=(120, 40)) as pilot:
        await pilot.press("c")
        await pilot.pause()
        editor = app.screen
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert isinstance(app.screen, NameDialog)
        app.screen.query_one("#author-name").value = "A. Trial"
        await pilot.press("enter")
        await pilot.pause(0.3)
        assert app.screen is editor and editor.run_id is not None
        run_id = editor.run_id
        assert app.author == "A. Trial"
        await pilot.press("escape")  # back to the Logbook; a second copy is credited to the name
        await pilot.pause()
        await pilot.press("c")
        await pilot.pause()
        assert app.screen.data["chemist"] == "A. Trial"
    with Notebook.open(demo_path) as nb:
        assert [v.author for v in nb.history(run_id)] == ["A. Trial"]
        from trapbook.settings import notebook_author

        assert notebook_author(nb) == "A. Trial"
