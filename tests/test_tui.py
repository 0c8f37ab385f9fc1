"""Pilot tests of the terminal UI: real flows driven from the keyboard on a fresh demo notebook.

Each test builds its own copy of the demo lab (demo_lab/, a fictional group) so saves do not
leak between tests, and drives the app with Textual's `App.run_test` pilot at 120×40.
"""

from __future__ import annotations

import pytest

pytest.importorskip("textual")

from rdkit import Chem  # independent reference for the structure filter

from trapbook.store import Notebook
from trapbook.tui.app import TrapbookApp
from trapbook.tui.screens.editor import WorkbenchScreen
from trapbook.tui.screens.runs import LogbookScreen

SIZE = (120, 40)
PRECURSOR = "C[Si](C)(C)[C@@]12CCC[C@@H](CC[C@H]1OS(=O)(=O)C(F)(F)F)C2"


async def type_text(pilot, text: str) -> None:
    """Send the characters as terminal key events, the way a fast typist (or a paste) does.

    `pilot.press` waits for the process to go idle after every key, which on a loaded
    machine costs ~80 ms a key; here the events go through the same driver queue back to
    back and the test waits once at the end.
    """
    from textual import events
    from textual.keys import _character_to_key

    driver = pilot.app._driver
    for ch in text:
        key = ch if ch.isalnum() else _character_to_key(ch)
        event = events.Key(key, ch)
        event.set_sender(pilot.app)
        driver.send_message(event)
    await pilot.pause()


async def new_field(pilot, text: str) -> None:
    """Type into the focused field, then Tab to the next."""
    await type_text(pilot, text)
    await pilot.press("tab")


async def enter_line(pilot, role: str, name: str, smiles: str, amount: str, form: str) -> None:
    """Fill the line form (role, name, SMILES, amount, density/molarity) and keep it with Enter."""
    for text in (role, name, smiles, amount):
        await new_field(pilot, text)
    await type_text(pilot, form)
    await pilot.press("enter")
    await pilot.pause()


async def write_run(pilot, trap_late: bool = False) -> WorkbenchScreen:
    """From the Logbook: a new run with precursor, furan, TBAF and THF, all by keyboard."""
    await pilot.press("n")
    await pilot.pause()
    screen = pilot.app.screen
    assert isinstance(screen, WorkbenchScreen)
    await pilot.press("f2")
    await type_text(pilot, "Furan trap of 331 by keyboard")
    await pilot.press("f3")
    # role, name, SMILES, amount, density/molarity; Enter keeps the line
    for role, name, smiles, amount, form in (
        ("precursor", "silyl triflate 331", PRECURSOR, "0.200 mmol", ""),
        ("trap", "furan", "c1ccoc1", "10 equiv", "0.951 g/mL"),
        ("fluoride source", "TBAF 1.0 M in THF", "CCCC[N+](CCCC)(CCCC)CCCC.[F-]", "1.5 equiv", "1.0 M"),
        ("solvent", "THF", "C1CCOC1", "2.0 mL", ""),
    ):
        await enter_line(pilot, role, name, smiles, amount, form)
    await pilot.press("f4")
    order = ["precursor + solvent", "fluoride source", "trap"] if trap_late else ["precursor + trap + solvent", "fluoride source"]
    for adds in order:
        await new_field(pilot, adds)
        await type_text(pilot, "-78 °C")
        await pilot.press("enter")
        await pilot.pause()
    await pilot.pause(0.2)
    return screen


def lines_cell(screen: WorkbenchScreen, name: str, column: str) -> str:
    from trapbook.tui.screens.editor import LINE_COLUMNS

    table = screen.query_one("#lines")
    col = [c for c, _ in LINE_COLUMNS].index(column)
    for r in range(table.row_count):
        row = table.get_row_at(r)
        if str(row[2]).startswith(name):
            return str(row[col])
    raise AssertionError(f"no line {name} in the table")


def checks_text(screen: WorkbenchScreen) -> str:
    return str(screen.query_one("#checks").render())


async def test_new_run_by_keyboard_shows_furan_volume(demo_path):
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        screen = await write_run(pilot)
        # Source: docs/sources.md, furan M 68.07 g/mol and density 0.951 g/mL (CRC, from memory):
        # 0.200 mmol × 10 × 68.07 g/mol / 0.951 g/mL = 143 µL
        assert lines_cell(screen, "furan", "µL") == str(round(0.200 * 10 * 68.07 / 0.951))
        # Source: docs/sources.md equiv_i = n_i / n_limiting and the definition of molarity (n = c V):
        # 0.200 mmol × 1.5 equiv / 1.0 M = 300 µL of TBAF solution
        assert lines_cell(screen, "TBAF", "µL") == "300"
        assert screen.problem is None


async def test_trap_late_appears_and_clears_when_moved(demo_path):
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        screen = await write_run(pilot, trap_late=True)
        # The rule of the trade (DESIGN.md, "Trap from the start"): the trap must be in the flask
        # before the fluoride source, or it catches nothing.
        assert "trap-late" in checks_text(screen)
        assert "trap enters after the fluoride source" in str(screen.query_one("#track").render())
        # keyboard: from the Adds field back to the steps table, down to step 3, move it up
        await pilot.press("shift+tab", "down", "down", "ctrl+up")
        await pilot.pause(0.2)
        assert "trap-late" not in checks_text(screen)


async def test_bad_amount_is_answered_beside_the_field_and_not_kept(demo_path):
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("n")
        await pilot.pause()
        screen = app.screen
        await new_field(pilot, "trap")
        await new_field(pilot, "furan")
        await new_field(pilot, "c1ccoc1")
        await type_text(pilot, "10 parsec")
        await pilot.pause()
        msg = str(screen.query_one("#msg-line-amount").render())
        assert "not an amount" in msg
        await pilot.press("enter")
        await pilot.pause()
        assert screen.data["lines"] == []
        # a SMILES with an unclosed ring is refused beside its own field (RDKit cannot parse it)
        await pilot.press("shift+tab")
        await type_text(pilot, "(")
        await pilot.pause()
        assert "not a valid SMILES" in str(screen.query_one("#msg-line-smiles").render())


async def test_save_edit_save_gives_two_versions(demo_path):
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        screen = await write_run(pilot)
        await pilot.press("ctrl+s")
        await pilot.pause()
        run_id = screen.run_id
        assert run_id is not None and screen.base_version == 1
        await pilot.press("f2", "end")
        await type_text(pilot, " (repeat)")
        await pilot.press("ctrl+s")
        await pilot.pause()
        await type_text(pilot, "title says it is a repeat")
        await pilot.press("enter")
        await pilot.pause()
        assert screen.base_version == 2
        await pilot.press("f6")
        await pilot.pause()
        trail = app.screen.query_one("#trail")
        assert trail.row_count == 2
    with Notebook.open(demo_path) as nb:
        versions = nb.history(run_id)
        assert [v.version for v in versions] == [1, 2]
        assert versions[1].reason == "title says it is a repeat"
        assert nb.get_run(run_id).title.endswith("(repeat)")
        assert nb.get_setting(f"draft:{run_id}") is None


async def test_stale_save_is_refused_and_the_draft_kept(demo_path):
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("e")  # TB-0001, the first row
        await pilot.pause()
        screen = app.screen
        assert screen.run_id == "TB-0001"
        with Notebook.open(demo_path) as other:  # someone else saves first
            other.save_run(other.get_run("TB-0001"), 1, author="someone", reason="other edit")
        await pilot.press("f2", "end")
        await type_text(pilot, " x")
        await pilot.press("ctrl+s")
        await pilot.pause()
        await type_text(pilot, "my edit")
        await pilot.press("enter")
        await pilot.pause()
        assert screen.base_version == 1  # not moved on
        assert screen.dirty
    with Notebook.open(demo_path) as nb:
        assert nb.run_meta("TB-0001")["version"] == 2
        assert nb.get_run("TB-0001").title.endswith(" x") is False
        draft = nb.get_setting("draft:TB-0001")
        assert draft and draft["data"]["title"].endswith(" x")


async def test_leaving_asks_and_keeps_a_draft(demo_path):
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("n")
        await pilot.pause()
        await pilot.press("f2")
        await type_text(pilot, "half-written plan")
        await pilot.press("escape")
        await pilot.pause()
        assert type(app.screen).__name__ == "LeaveDialog"
        await pilot.press("k")
        await pilot.pause()
        assert isinstance(app.screen, LogbookScreen)
        assert app.nb.get_setting("draft:new")["data"]["title"] == "half-written plan"
        await pilot.press("n")
        await pilot.pause()
        assert app.screen.data["title"] == "half-written plan"


def brute_force_ids(path, smarts: str) -> set[str]:
    """Runs with a precursor, intermediate, trap or product matching the query, by RDKit directly."""
    q = Chem.MolFromSmarts(smarts)
    out = set()
    with Notebook.open(path) as nb:
        for run in nb.iter_runs(include_withdrawn=False):
            smiles = [run.intermediate] + [ln.smiles for ln in run.lines if ln.role in ("precursor", "trap", "product")]
            if any(s and Chem.MolFromSmiles(s).HasSubstructMatch(q) for s in smiles):
                out.add(run.id)
    return out


async def test_filter_runs_by_substructure(demo_path):
    pytest.importorskip("trapbook.search")
    core = "C12=CCCC(CC1)C2"  # bicyclo[3.2.1]oct-1-ene written as SMARTS
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("slash")
        await type_text(pilot, f"sub:{core}")
        await pilot.press("enter")
        screen = app.screen
        for _ in range(100):  # the structure search runs in a worker; wait for its answer
            await pilot.pause(0.1)
            if screen.filter_box.answered == f"sub:{core}" or screen.filter_box.error is not None:
                break
        await pilot.pause(0.2)
        assert screen.filter_box.error is None
        shown = {r["id"] for r in screen.shown}
        table = screen.query_one("#runs")
        assert {table.get_row_at(i)[0] for i in range(table.row_count)} == shown
    expected = brute_force_ids(demo_path, core)
    assert expected, "the demo lab should hold runs of this core"
    assert shown == expected


async def test_filter_by_trap_name(demo_path):
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("slash")
        await type_text(pilot, "trap:anthracene")
        await pilot.press("enter")
        for _ in range(100):  # the filter's search runs in a worker; wait for its answer
            await pilot.pause(0.05)
            if app.screen.filter_box.answered == "trap:anthracene":
                break
        shown = {r["id"] for r in app.screen.shown}
    with Notebook.open(demo_path) as nb:
        # independent of the index: read each stored run's trap lines
        expected = {
            r.id
            for r in nb.iter_runs(include_withdrawn=False)
            if any("anthracene" in ln.name.lower() for ln in r.lines_by_role("trap"))
        }
    assert shown == expected and expected


@pytest.mark.slow
async def test_strain_card_computes_in_a_worker(demo_path):
    """ctrl+g fills the strain card (both tiers, then the alignment) without blocking the UI."""
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press(*["down"] * 4, "e")  # TB-0005, the [3.2.1] bridgehead alkene
        await pilot.pause()
        screen = app.screen
        await pilot.press("ctrl+g")
        seen = False  # the progress bar is up while it works (polled: a loaded machine starts threads late)
        for _ in range(200):
            if screen.query_one("#strain-progress").display:
                seen = True
                break
            await pilot.pause(0.05)
        assert seen
        await app.workers.wait_for_complete()
        await pilot.pause(0.3)
        from rich.console import Console

        from trapbook.tui.widgets.strain_card import card as strain_card

        console = Console(width=44, record=True, file=open("/dev/null", "w"))
        console.print(strain_card(screen.intermediate_smiles(), screen.strain, screen.alignment))
        card = console.export_text()
    # Source: docs/sources.md (literature): bicyclo[3.2.1]oct-1-ene has S = 6 and is known only by
    # trapping, i.e. Maier–Schleyer class "unstable".
    assert screen.strain["s_value"] == 6
    assert screen.strain["stability_class"] == "unstable"
    assert "unstable" in card
    with Notebook.open(demo_path) as nb:  # and it was cached for next time
        from trapbook.strain_link import strain_for_run

        assert strain_for_run(nb, nb.get_run("TB-0005")) is not None


# --- the run editor's outcome rows, limiting mark, screen fields ----------------------------


async def clear_and_type(pilot, text: str) -> None:
    """Empty the focused field (Home, then delete to the end) and type `text`."""
    await pilot.press("home", "ctrl+k")
    await type_text(pilot, text)


async def test_outcome_keeps_one_row_per_product(demo_path):
    """TB-0013 (furan adduct, 7.2 mg): add the endo adduct as a second product with its own mass."""
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press(*["down"] * 12, "e")
        await pilot.pause()
        screen = app.screen
        assert screen.run_id == "TB-0013"
        await pilot.press("f3")
        await new_field(pilot, "product")
        await new_field(pilot, "endo adduct")
        await type_text(pilot, "C1=CC2OC1C1CCC3CCCC21C3")
        await pilot.press("enter")
        await pilot.pause()
        await pilot.press("f5")
        await new_field(pilot, "endo")  # a unique start of the product line's name
        await type_text(pilot, "3.8 mg")
        await pilot.pause()
        # Source: IUPAC 2021 standard atomic weights (C 12.011, H 1.008, O 15.999):
        # C13H18O = 190.286 g/mol; 3.8 mg / 190.286 g/mol = 0.01997 mmol on 0.100 mmol precursor = 20.0 %
        assert "20.0 % isolated" in str(screen.query_one("#prod-msg").render())
        await pilot.press("ctrl+s")  # no Enter: the result still in the form is kept, not lost
        await pilot.pause()
        await type_text(pilot, "endo adduct isolated too")
        await pilot.press("enter")
        await pilot.pause()
        table = screen.query_one("#products")
        assert table.row_count == 2
        assert [str(table.get_row_at(i)[3]) for i in range(2)] == [
            f"{100 * 7.2 / 190.286 / 0.100:.0f} %",
            f"{100 * 3.8 / 190.286 / 0.100:.0f} %",
        ]
        # a second row for the same product is refused beside the form
        await pilot.press("f5")
        await new_field(pilot, "furan adduct")
        await type_text(pilot, "1 mg")
        await pilot.press("enter")
        await pilot.pause()
        assert "already has a result" in str(screen.query_one("#prod-msg").render())
    with Notebook.open(demo_path) as nb:
        run = nb.get_run("TB-0013")
        assert [(p.product, str(p.isolated_mass)) for p in run.outcome.products] == [
            ("furan adduct", "7.2 milligram"),
            ("endo adduct", "3.8 milligram"),
        ]


async def test_mark_limiting_line(demo_path):
    """TB-0001 with furan given as 1.00 mmol and marked limiting: every equiv refers to furan."""
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("e")
        await pilot.pause()
        screen = app.screen
        await pilot.press("f3", "shift+tab", "down")  # from the form up to the table, furan's row
        await pilot.press("ctrl+l")  # furan is given in equiv: refused, nothing changes
        await pilot.pause()
        assert not any(ln.get("limiting") for ln in screen.data["lines"])
        await pilot.press("enter", "tab", "tab")  # load furan into the form; to its Amount field
        await clear_and_type(pilot, "1.00 mmol")
        await pilot.press("enter")
        await pilot.pause()
        await pilot.press("shift+tab", "ctrl+l")  # the cursor stayed on furan's row
        await pilot.pause(0.2)
        assert screen.table.limiting == "furan"
        assert lines_cell(screen, "furan", "#").endswith("◆")
        # Definition of equiv (docs/sources.md: equiv_i = n_i / n_limiting) and of molarity:
        # TBAF 1.5 equiv × 1.00 mmol furan = 1.50 mmol; at 1.0 M that is 1500 µL
        assert lines_cell(screen, "TBAF", "µL") == "1500"
        assert lines_cell(screen, "silyl", "equiv") == "0.1"  # 0.100 mmol / 1.00 mmol, by the same definition
        await pilot.press("ctrl+l")  # again: unmarked, the precursor is limiting once more
        await pilot.pause(0.2)
        assert screen.table.limiting.startswith("silyl triflate")


async def test_screen_and_factor_levels_on_the_run_tab(demo_path):
    """A copy of TB-0013 moved to anthracene lands in SC-0001 with the screen's own spelling."""
    from trapbook import review

    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press(*["down"] * 12, "c")
        await pilot.pause()
        screen = app.screen
        await pilot.press("f2")
        assert screen.query_one("#run-screen").value == "SC-0001"
        labels = [str(screen.query_one(f"#row-fac-{i}").query_one("Label").render()) for i in range(2)]
        assert labels == ["trap", "temperature"]
        await pilot.press(*["tab"] * 6)  # title, chemist, date, status, page, screen -> trap
        await clear_and_type(pilot, "Anthracene")
        await pilot.pause()
        assert screen.data["factors"] == {"trap": "anthracene", "temperature": "80 °C"}
        await pilot.press("ctrl+s")
        await pilot.pause()
        new_id = screen.run_id
        assert new_id
    with Notebook.open(demo_path) as nb:
        run = nb.get_run(new_id)
        assert run.screen == "SC-0001" and run.factors == {"trap": "anthracene", "temperature": "80 °C"}
        assert new_id in review.review_screen(nb, "SC-0001")["not_done"]


async def test_amounts_before_a_title_and_role_words(demo_path):
    """Lines first, title later: amounts and checks show at once; 'fluoride' is the fluoride source."""
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("n")
        await pilot.pause()
        screen = app.screen
        for role, name, smiles, amount, form in (
            ("precursor", "silyl triflate 331", PRECURSOR, "0.200 mmol", ""),
            ("trap", "furan", "c1ccoc1", "10 equiv", "0.951 g/mL"),
            ("fluoride", "TBAF 1.0 M in THF", "CCCC[N+](CCCC)(CCCC)CCCC.[F-]", "1.5 equiv", "1.0 M"),
        ):
            await enter_line(pilot, role, name, smiles, amount, form)
        await pilot.pause(0.2)
        # Source: docs/sources.md furan M 68.07 g/mol, density 0.951 g/mL (CRC, from memory): 0.200 × 10 × 68.07 / 0.951 = 143 µL
        assert lines_cell(screen, "furan", "µL") == "143"
        assert screen.problem == "give the run a title (Run tab, f2)"
        assert screen.data["lines"][2]["role"] == "fluoride source"
        await pilot.press("f4")
        for adds in ("precursor", "fluoride", "trap"):  # role words name their lines
            await type_text(pilot, adds)
            await pilot.press("enter")
            await pilot.pause()
        await pilot.pause(0.2)
        assert screen.data["steps"][1]["add"] == ["TBAF 1.0 M in THF"]
        assert "trap-late" in checks_text(screen)  # DESIGN.md: the trap must be in before the fluoride


def test_alignment_is_cached_under_the_canonical_structure(tmp_path):
    """The Workbench reads a precursor's alignment from the cache on every keystroke (compute=False)."""
    from trapbook.strain_link import get_alignment

    aryl = "C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F"
    same = "FC(F)(F)S(=O)(=O)Oc1ccccc1[Si](C)(C)C"  # the same molecule written from the other end
    with Notebook.open(tmp_path / "a.sqlite", create=True) as nb:
        assert get_alignment(nb, aryl, compute=False) is None
        first = get_alignment(nb, aryl)
        # common practice, no source: ortho substituents on a benzene ring are coplanar (0°)
        assert first["dihedral_deg"] < 10
        assert get_alignment(nb, same, compute=False) == first


async def test_a_refused_field_is_said_in_full_below_its_form(demo_path):
    """The column beside a field is short; what it refuses is said in full under the form."""
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("n")
        await pilot.pause()
        screen = app.screen
        await type_text(pilot, "pre")  # not yet a role: the whole list of roles, not "give a name"
        await pilot.pause()
        said = str(screen.query_one("#line-msg").render())
        assert "role is one of" in said and "solvent" in said and "internal standard" in said
        assert screen.query_one("#status").size.height == 2  # "cannot be saved yet: ..." is not cut off
        await pilot.press("f4", "tab")
        await type_text(pilot, "-78 C")  # a bare C is the coulomb: the answer says to write °C
        await pilot.pause()
        assert "not a temperature" in str(screen.query_one("#msg-step-temperature").render())
        assert "'-78 °C'" in str(screen.query_one("#step-msg").render())
        await pilot.press(*["backspace"] * 5)
        await type_text(pilot, "23 °C")
        await pilot.pause()
        assert str(screen.query_one("#step-msg").render()).startswith("→ nothing added (a hold")


async def test_copy_as_plan_is_written_by_whoever_copies_it(demo_path):
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("c")  # TB-0001, by L. Brandt in the demo lab
        await pilot.pause()
        screen = app.screen
        assert screen.data["title"].startswith("Plan from TB-0001")
        assert screen.data["chemist"] == "pilot"
        await pilot.press("f2")
        assert screen.query_one("#run-chemist").value == "pilot"


def test_copy_as_plan_keeps_no_weighing_of_the_earlier_flask():
    """A copied plan is worked out from its planned amounts: the earlier run's weighed masses
    (Line.actual), outcome, files and id stay with that run, as for a screen's vials."""
    import copy

    from samples import MINIMAL_RUN
    from trapbook.planning.plan import HAPPENED_KEYS
    from trapbook.tui.rundata import plan_from

    stored = copy.deepcopy(MINIMAL_RUN)
    stored.update(id="TB-0042", date="2026-01-05", outcome={"observations": "done"})
    stored["lines"][0]["actual"] = {"value": 72.0, "unit": "mg"}
    plan = plan_from(stored)
    assert all("actual" not in line for line in plan["lines"])
    assert not {"id", "outcome", "attachments", "page"} & set(plan)
    assert plan["status"] == "planned" and plan["date"] != "2026-01-05" and "date" in HAPPENED_KEYS
    assert stored["lines"][0]["actual"] == {"value": 72.0, "unit": "mg"}  # the stored run is not touched


async def test_narrow_terminal_keeps_f1_and_the_addition_track_in_sight(demo_path):
    """At 100 columns the side panel is a pane of its own (f7), the footer ends in f1, the track does not wrap."""
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.press("e")  # TB-0001: four steps
        await pilot.pause(0.3)
        screen = app.screen
        assert screen.has_class("-narrow")
        keys = [k for k in screen.query("FooterKey") if k.key == "f1"]
        assert keys and keys[0].region.right <= 100
        await pilot.press("f4", "tab")  # a fifth step, a hold at room temperature
        await type_text(pilot, "23 °C")
        await pilot.press("enter", "f7")
        await pilot.pause(0.3)
        track = screen.query_one("#track")
        lines = str(track.render()).splitlines()
        assert lines[0].split() == ["1", "2", "3", "4", "5"]
        lanes = lines[:5]  # step numbers, temperatures, precursor, trap, fluoride (the verdict may wrap)
        assert all(len(line.rstrip()) <= track.content_size.width for line in lanes), lanes


def test_preview_names_each_finding_once(demo_path):
    """TB-0001 has three material cautions (furan, TBAF, THF): one mark with a count, not three."""
    from rich.console import Console

    from trapbook.tui.preview import preview

    with Notebook.open(demo_path) as nb:
        console = Console(width=120, record=True)
        console.print(preview(nb, "TB-0001"))
        text = console.export_text()
    assert text.count("material-caution") == 1
    assert "material-caution ×" in text


def test_a_lane_never_added_is_said_in_words_that_fit(demo_path):
    """A trap no step adds reads 'never added' within the panel, however many steps the run has."""
    from trapbook.tui.widgets.timeline import LABEL_W, track

    with Notebook.open(demo_path) as nb:
        run = nb.get_run("TB-0001")
    steps = [st.model_copy(update={"add": [n for n in st.add if n != "furan"]}) for st in run.steps]
    run = run.model_copy(update={"steps": steps + [steps[-1].model_copy(update={"add": []})]})
    lane = next(line for line in str(track(run, [], width=37)).splitlines() if line.startswith("trap"))
    assert lane.rstrip() == "trap".ljust(LABEL_W) + "never added in any step"


async def test_leaving_with_a_line_typed_but_not_kept_asks_first(demo_path):
    """A whole line typed without Enter is unsaved work: Esc asks, and 'keep' keeps it in the draft."""
    from trapbook.tui.screens.dialogs import LeaveDialog

    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("n")
        await pilot.pause()
        await new_field(pilot, "trap")
        await new_field(pilot, "furan")
        await new_field(pilot, "c1ccoc1")
        await type_text(pilot, "10 equiv")
        await pilot.press("escape")
        await pilot.pause()
        assert isinstance(app.screen, LeaveDialog)
        await pilot.press("k")
        await pilot.pause()
        assert isinstance(app.screen, LogbookScreen)
    with Notebook.open(demo_path) as nb:
        draft = nb.get_setting("draft:new")
    assert [ln["name"] for ln in draft["data"]["lines"]] == ["furan"]


async def test_looking_at_a_kept_row_is_not_unsaved_work(demo_path):
    """Loading a kept line into its form (Enter on the row) and leaving asks nothing."""
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("e")  # TB-0001
        await pilot.pause()
        await pilot.press("shift+tab", "down", "enter")  # the furan line into the form
        await pilot.pause()
        assert app.screen.query_one("#line-name").value == "furan"
        await pilot.press("escape")
        await pilot.pause()
        assert isinstance(app.screen, LogbookScreen)
