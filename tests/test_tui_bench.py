"""Pilot tests of the Workbench and Screen board on strained intermediates of more than one kind:
the strain card and the board plot read each kind by its own quantity, the alignment is read at
the run's temperature, saves take the notebook's bench words, a step says what 'reflux' means,
the Outcome tab offers the expected products and the reagent table shows planned beside weighed.
"""

from __future__ import annotations

import shutil

import pytest

pytest.importorskip("textual")

from rdkit import Chem  # independent reference for structures and formulas
from rdkit.Chem import Descriptors, rdMolDescriptors
from rich.console import Console

from trapbook.store import Notebook
from trapbook.tui.app import TrapbookApp
from trapbook.tui.screens.editor import LINE_COLUMNS, WorkbenchScreen

SIZE = (120, 40)
BENZYNE = "C1=CC=CC#C1"
NONENE = "C12=CCCC(CCC1)C2"  # bicyclo[3.3.1]non-1-ene
# 2-(trimethylsilyl)phenyl triflate releases benzyne with fluoride.
# Source: Himeshima, Sonoda & Kobayashi, Chem. Lett. 1983, 12, 1211; docs/sources.md, "Strain views".
KOBAYASHI = "C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F"


def _run(title: str, intermediate: str | None, temperature: str = "23 °C", **extra) -> dict:
    lines = [
        {"role": "precursor", "name": "precursor", "smiles": KOBAYASHI, "amount": "0.200 mmol"},
        {"role": "fluoride source", "name": "CsF", "smiles": "[Cs+].[F-]", "equiv": 3.0},
        {"role": "solvent", "name": "MeCN", "smiles": "CC#N", "volume": "2.0 mL"},
        {"role": "trap", "name": "furan", "smiles": "c1ccoc1", "equiv": 10, "density": "0.951 g/mL"},
    ]
    run = {
        "title": title,
        "lines": lines,
        "steps": [
            {"add": ["precursor", "MeCN", "furan"], "temperature": "23 °C"},
            {"add": ["CsF"], "temperature": temperature, "hold": "1 h"},
        ],
        **extra,
    }
    if intermediate:
        run["intermediate"] = intermediate
    return run


@pytest.fixture(scope="module")
def two_kinds(tmp_path_factory):
    """Benzyne (derived from its precursor) and bicyclo[3.3.1]non-1-ene runs, both done with a
    yield, the accurate tier of both intermediates cached as `trapbook strain` would."""
    from trapbook.records import load_run
    from trapbook.strain_link import get_strain

    path = tmp_path_factory.mktemp("bench") / "nb.sqlite"
    with Notebook.create(path) as nb:
        ids = {}
        for key, smiles in (("aryne", None), ("nonene", NONENE)):
            data = _run(
                f"{key}, furan", smiles, status="done", outcome={"products": [{"product": "adduct", "isolated_mass": "20.0 mg"}]}
            )
            data["lines"].append({"role": "product", "name": "adduct", "smiles": "C1=CC2OC1c1ccccc12"})
            ids[key] = nb.add_run(load_run(data), author="pilot").run_id
        for smi in (BENZYNE, NONENE):
            get_strain(nb, smi, tier="accurate")
    return path, ids


@pytest.fixture
def notebook_copy(two_kinds, tmp_path):
    path, ids = two_kinds
    copy = tmp_path / "nb.sqlite"
    shutil.copy(path, copy)
    return copy, ids


def shown_text(renderable, width: int = 44) -> str:
    console = Console(width=width, record=True, file=open("/dev/null", "w"))
    console.print(renderable)
    return console.export_text()


def lines_cell(screen: WorkbenchScreen, name: str, column: str) -> str:
    t = screen.query_one("#lines")
    col = [c for c, _ in LINE_COLUMNS].index(column)
    for key in t.rows:
        row = t.get_row(key)
        if name.lower() in str(row[2]).lower():
            return str(row[col]).strip()
    raise AssertionError(f"no line {name}")


async def open_run(pilot, app, run_id: str) -> WorkbenchScreen:
    app.push_screen(WorkbenchScreen(run_id=run_id))
    await pilot.pause()
    screen = app.screen
    assert isinstance(screen, WorkbenchScreen)
    screen.recompute()
    await pilot.pause()
    return screen


# --- the strain card -----------------------------------------------------------------------


async def test_strain_card_reads_an_aryne_by_its_own_quantity_and_says_where_it_came_from(notebook_copy):
    path, ids = notebook_copy
    app = TrapbookApp(path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        screen = await open_run(pilot, app, ids["aryne"])
        card = shown_text(screen.query_one("#strain").content)
    # Source: docs/sources.md "Strain views" — this precursor releases benzyne (Kobayashi 1983).
    assert Chem.CanonSmiles(screen.intermediate_smiles()) == Chem.CanonSmiles(BENZYNE)
    assert "derived from the precursor" in card
    assert "aryne strain" in card and "olefin" not in card and "OS " not in card
    # Source: docs/sources.md "Strain" — arynes are made in situ and trapped, none is isolable.
    assert "trapping only" in card and "needs a trap" in card
    assert "twist" not in card and "S value" not in card  # angles of twisted alkenes, none for an aryne


async def test_strain_card_shows_a_fast_result_as_a_prescreen_without_a_class(tmp_path):
    from trapbook.records import load_run
    from trapbook.strain_link import get_strain

    path = tmp_path / "fast.sqlite"
    with Notebook.create(path) as nb:
        run_id = nb.add_run(load_run(_run("nonene, fast tier only", NONENE)), author="pilot").run_id
        get_strain(nb, NONENE, tier="fast")
    app = TrapbookApp(path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        screen = await open_run(pilot, app, run_id)
        assert screen.strain is None  # only the accurate tier is acted on
        with Notebook.open(path) as nb:
            from trapbook.chemistry.strain_key import cache_key

            fast = nb.cache_get(cache_key(NONENE, "fast"))
        from trapbook.tui.widgets.strain_card import card

        text = shown_text(card(NONENE, fast, None, None, "as recorded on the run"))
    # Source: docs/sources.md "Strain" — MMFF94 (the fast tier) overestimates twisted alkenes; it is never classed.
    assert "prescreen" in text and "isolable" not in text and "unstable" not in text
    assert "olefin strain" in text and "as recorded on the run" in text


# --- the alignment at the run's temperature ------------------------------------------------


async def test_workbench_reads_and_computes_the_alignment_at_the_runs_temperature(tmp_path):
    from trapbook.findings import cached_alignment
    from trapbook.records import load_run
    from trapbook.strain_link import alignment_key

    path = tmp_path / "cold.sqlite"
    with Notebook.create(path) as nb:
        run_id = nb.add_run(load_run(_run("benzyne at -78 °C", None, temperature="-78 °C")), author="pilot").run_id
    app = TrapbookApp(path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        screen = await open_run(pilot, app, run_id)
        # Source: docs/sources.md "Strain views" — populations follow exp(−ΔE/RT): read at the fluoride step's −78 °C.
        assert screen.release_temperature_c() == pytest.approx(-78.0)
        assert screen.alignment is None  # nothing cached yet at any temperature
        await pilot.press("ctrl+g")
        for _ in range(400):
            await pilot.pause(0.05)
            if not screen.query_one("#strain-progress").display and screen.alignment is not None:
                break
        await app.workers.wait_for_complete()
        await pilot.pause(0.2)
        assert screen.alignment is not None and screen.alignment["temperature_c"] == pytest.approx(-78.0)
    with Notebook.open(path) as nb:
        assert nb.cache_get(alignment_key(KOBAYASHI, -78.0)) is not None
        assert nb.cache_get(alignment_key(KOBAYASHI, 25.0)) is None  # not at room temperature
        assert cached_alignment(nb, nb.get_run(run_id)) is not None  # where the checks read it


# --- the Screen board's plot ---------------------------------------------------------------


async def test_board_plots_one_kind_at_a_time_with_its_own_quantity(notebook_copy):
    from trapbook.tui.screens.review import BoardScreen

    path, ids = notebook_copy
    app = TrapbookApp(path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        app.push_screen(BoardScreen())
        await pilot.pause(0.3)
        board = app.screen
        assert isinstance(board, BoardScreen)
        # Source: docs/sources.md "Strain views" — an aryne's strain and an olefin strain are different measures.
        assert board.kinds == ["aryne", "bridgehead alkene"]
        note = shown_text(board.query_one("#plot-note").content, 100)
        assert "2 kinds" in note and "aryne" in note
        shown_first = board.kinds[board.kind_index]
        await pilot.press("k")
        await pilot.pause(0.2)
        assert board.kinds[board.kind_index] != shown_first
        note = shown_text(board.query_one("#plot-note").content, 100)
        assert "bridgehead alkene" in note and "OS" not in note


# --- bench words and reflux ------------------------------------------------------------------


async def test_a_workbench_save_gives_rt_the_notebooks_meaning(notebook_copy):
    from trapbook.records import load_run
    from trapbook.settings import update_check_settings
    from trapbook.units import to_canonical

    path, ids = notebook_copy
    with Notebook.open(path) as nb:
        run_id = nb.add_run(load_run(_run("benzyne at rt", None, temperature="rt")), author="pilot").run_id
        update_check_settings(nb, ["room_temperature_c=20"], author="pilot")
    app = TrapbookApp(path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        screen = await open_run(pilot, app, run_id)
        await pilot.press("f2")
        title = screen.query_one("#run-title")
        title.value = title.value + " (again)"
        await pilot.pause(0.2)
        await pilot.press("ctrl+s")
        await pilot.pause(0.2)
        app.screen.query_one("#reason").value = "rt as this lab means it"
        await pilot.press("enter")
        await pilot.pause(0.3)
        assert screen.base_version == 2
    with Notebook.open(path) as nb:
        step = nb.get_run(run_id).steps[1]
    # the lab's own setting, made above: 'rt' is 20 °C in this notebook (the CLI's add and update agree)
    assert to_canonical(step.temperature, "temperature") == pytest.approx(20.0)
    assert "notebook" in (step.temperature_basis or "")


async def test_a_reflux_step_is_checked_against_the_runs_solvent(notebook_copy):
    path, ids = notebook_copy
    app = TrapbookApp(path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        screen = await open_run(pilot, app, ids["nonene"])
        await pilot.press("f4")
        await pilot.pause()
        screen.query_one("#step-temperature").value = "reflux"
        screen.steps_tab.preview()
        msg = shown_text(screen.query_one("#step-msg").content, 200)
    # Source: docs/sources.md "Amounts, molar masses and solvents" — acetonitrile boils at 81.6 °C (CRC Handbook).
    assert "acetonitrile" in msg.lower() and "81.6" in msg
    assert "needs the run's solvent" not in msg


# --- expected products and planned against weighed -----------------------------------------


async def test_outcome_offers_the_expected_products_worked_out_in_a_worker(notebook_copy):
    from trapbook.tui.screens.expected_dialog import ExpectedProductsDialog

    path, ids = notebook_copy
    app = TrapbookApp(path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        screen = await open_run(pilot, app, ids["nonene"])
        await pilot.press("f5")
        await pilot.press("ctrl+t")
        await pilot.pause()
        dialog = app.screen
        assert isinstance(dialog, ExpectedProductsDialog)
        await app.workers.wait_for_complete()
        await pilot.pause(0.2)
        assert dialog.products
        first = dialog.products[0]
        await pilot.press("enter")
        await pilot.pause(0.3)
        assert app.screen is screen
        picked = screen.query_one("#prod-product").value
        line = next(ln for ln in screen.data["lines"] if ln["name"] == picked)
    # Source: docs/sources.md "Workbench and Screen board" — a [4+2] adduct of furan (C4H4O) with
    # bicyclo[3.3.1]non-1-ene (C9H14) holds every atom of both: C13H18O.
    assert first["kind"] == "adduct"
    assert rdMolDescriptors.CalcMolFormula(Chem.MolFromSmiles(line["smiles"])) == "C13H18O"
    assert line["role"] == "product" and "furan" in picked


async def test_reagent_table_shows_planned_beside_weighed(notebook_copy):
    from trapbook.records import load_run

    path, ids = notebook_copy
    data = _run("benzyne, weighed", None)
    data["lines"][0]["actual"] = "70.0 mg"
    with Notebook.open(path) as nb:
        run_id = nb.add_run(load_run(data), author="pilot").run_id
    app = TrapbookApp(path, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        screen = await open_run(pilot, app, run_id)
        await pilot.press("f3")
        await pilot.pause()
        planned, given, mg = (lines_cell(screen, "precursor", c) for c in ("planned", "given", "mg"))
    # Source: docs/sources.md "Experimental paragraph and weighed amounts" — planned mass is n × M; M of
    # 2-(trimethylsilyl)phenyl triflate from RDKit's standard atomic weights.
    mw = Descriptors.MolWt(Chem.MolFromSmiles(KOBAYASHI))
    assert planned == f"{0.200 * mw:.1f} mg"
    assert given == "weighed" and mg == "70.0"  # the amounts follow what went into the flask
