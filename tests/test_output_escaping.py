"""Stored text reaches no terminal raw: control characters are shown, not obeyed.

Old notebooks and imports can hold text that validation would refuse today, so these tests
write hostile text straight into the SQLite file (bypassing validation) and read it back
through the CLI, the Logbook and the preview.
"""

from __future__ import annotations

import io
import json
import sqlite3

import pytest
from click.testing import CliRunner
from rich.console import Console

from trapbook.cli import main
from trapbook.text_safety import json_safe, printable

# Source: docs/sources.md "Output: numbers and text": ESC ] 52 ; c ; <base64> BEL is the
# xterm OSC 52 clipboard write; ESC [ 2 J erases the screen (ECMA-48 ED); U+202E is the
# right-to-left override (Unicode UAX #9); 0x9B is the 8-bit C1 CSI (ECMA-48).
CLIPBOARD = "\x1b]52;c;ZWNobyBwd25lZA==\x07"
TITLE = f"[bold red]X[/] {CLIPBOARD} title\nTB-9999  2026-01-01  fake row \u202eoops \x9b2J"
CHEMIST = "\x1b[2Jchem"
REASON = "why\x1b]0;retitled\x07"
AUTHOR = "\x1b[5mroot"
RAW = ("\x1b", "\x07", "\x9b", "\u202e")


def _no_raw(text: str) -> None:
    for ch in RAW:
        assert ch not in text, f"raw {ch!r} reached the output"


@pytest.mark.parametrize(
    "raw, shown",
    [
        ("\x1b", "\\u001b"),
        ("\x07", "\\u0007"),
        ("\x00", "\\u0000"),
        ("\x7f", "\\u007f"),
        ("\x9b", "\\u009b"),
        ("\u202e", "\\u202e"),
        ("\u2066", "\\u2066"),
        ("\n", "\\n"),
        ("\r", "\\r"),
        ("\t", "\\t"),
    ],
)
def test_printable_shows_each_control_character(raw, shown):
    # Source: docs/sources.md "Output: numbers and text" (C0 0x00-0x1F, DEL 0x7F, C1 0x80-0x9F
    # per ECMA-48; bidi overrides and isolates U+202A-U+202E, U+2066-U+2069 per UAX #9)
    assert printable(f"a{raw}b") == f"a{shown}b"


def test_printable_keeps_chemistry_and_lines_where_asked():
    # Source: docs/sources.md "Output: numbers and text" (SMILES): '/' and '\' mark double-bond geometry (OpenSMILES), and
    # must pass through unchanged
    assert printable("F/C=C\\F") == "F/C=C\\F"
    assert printable("−78 °C, µL, 2,5-dimethylfuran") == "−78 °C, µL, 2,5-dimethylfuran"
    assert printable("line one\nline two\x1b", multiline=True) == "line one\nline two\\u001b"
    assert printable(None) == ""


def test_json_safe_keeps_the_value():
    data = {"t": "a\x9bb\u202ec\x1bd"}
    text = json_safe(json.dumps(data, ensure_ascii=False))
    _no_raw(text)
    assert json.loads(text) == data


@pytest.fixture
def hostile_db(tmp_path, minimal_run_file):
    db = str(tmp_path / "hostile.sqlite")
    runner = CliRunner()
    assert runner.invoke(main, ["--db", db, "init"]).exit_code == 0
    res = runner.invoke(main, ["--db", db, "add", str(minimal_run_file), "--json"])
    assert res.exit_code == 0, res.output
    rid = json.loads(res.output)["run_id"]
    con = sqlite3.connect(db)
    with con:
        data = json.loads(con.execute("SELECT data FROM runs WHERE id = ?", (rid,)).fetchone()[0])
        data.update(title=TITLE, chemist=CHEMIST, notes="note\x1b[31m red")
        con.execute("UPDATE runs SET title = ?, chemist = ?, data = ? WHERE id = ?", (TITLE, CHEMIST, json.dumps(data), rid))
        con.execute(
            "UPDATE versions SET data = ?, reason = ?, author = ? WHERE run_id = ?", (json.dumps(data), REASON, AUTHOR, rid)
        )
        con.execute("UPDATE run_index SET trap = ? WHERE run_id = ?", ("fu\x1b[8mran", rid))
    con.close()
    return db, rid


@pytest.mark.parametrize("command", [["list"], ["show", "{rid}"], ["history", "{rid}"], ["search", "--trap", "furan"]])
def test_cli_text_output_escapes_stored_text(hostile_db, command):
    db, rid = hostile_db
    res = CliRunner().invoke(main, ["--db", db, *[c.format(rid=rid) for c in command]], catch_exceptions=False)
    assert res.exit_code == 0, res.output
    assert rid in res.output or command[0] == "history"  # the hostile run is shown, not skipped
    _no_raw(res.output)
    assert not any(line.startswith("TB-9999") for line in res.output.splitlines()), "a newline faked a row"


def test_cli_shows_the_hostile_text_visibly(hostile_db):
    db, rid = hostile_db
    out = CliRunner().invoke(main, ["--db", db, "show", rid]).output
    assert "\\u001b]52;c;" in out and "\\u0007" in out and "\\n" in out
    hist = CliRunner().invoke(main, ["--db", db, "history", rid]).output
    assert "\\u001b[5mroot" in hist and "why\\u001b]0;retitled\\u0007" in hist


def test_cli_json_keeps_the_stored_value(hostile_db):
    db, rid = hostile_db
    out = CliRunner().invoke(main, ["--db", db, "list", "--json"]).output
    _no_raw(out)
    assert json.loads(out)[0]["title"] == TITLE  # the data is unchanged, only its printing is safe


def _plain(renderable) -> str:
    buf = io.StringIO()
    Console(file=buf, width=160, color_system=None, force_terminal=False).print(renderable)
    return buf.getvalue()


def test_tui_preview_escapes_stored_text(hostile_db):
    from trapbook.store import Notebook
    from trapbook.tui.preview import preview

    db, rid = hostile_db
    with Notebook.open(db) as nb:
        text = _plain(preview(nb, rid))
    _no_raw(text)
    assert "[bold red]X[/]" in text  # markup in a title is shown as written, not obeyed


async def test_tui_logbook_escapes_stored_text(hostile_db):
    from textual.widgets import DataTable
    from textual.widgets._data_table import default_cell_formatter

    from trapbook.tui.app import TrapbookApp

    db, rid = hostile_db
    app = TrapbookApp(db, author="pilot", warm=False)
    async with app.run_test(size=(160, 40)) as pilot:
        await pilot.pause(0.2)
        table = app.screen.query_one("#runs", DataTable)
        cells = [default_cell_formatter(c) for c in table.get_row_at(0)]
        plain = " | ".join(c.plain for c in cells)
        _no_raw(plain)
        assert "\n" not in plain
        assert any(c.plain.startswith("[bold red]X[/]") and not c.spans for c in cells), plain
