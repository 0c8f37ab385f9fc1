"""The Campaigns screen (a on the Logbook): the stored campaigns, one campaign's ranked table
as the core gives it, a new campaign started from a skeleton and counted to its end, and no
start offered in a read-only session. Driven with Textual's pilot at 80×24, the smallest
terminal a chemist has.

The work runs on a small in-process Dask client (one worker, one thread) handed to the app,
fast tier, no precursors: the cheapest campaign there is, and the same code path as the
local cluster the screen starts on its own.
"""

from __future__ import annotations

import shutil

import pytest

pytest.importorskip("textual")

from rdkit import Chem  # independent judge of what is a SMILES

from test_tui_layout import f1_in_sight, footer_drawn
from trapbook import campaign as cp
from trapbook.demo import build_demo
from trapbook.errors import TrapbookError
from trapbook.store import Notebook
from trapbook.tui.app import TrapbookApp
from trapbook.tui.screens.campaign import CampaignScreen

# Source: docs/sources.md (Terminal UI): 80 columns × 24 lines, the VT100's screen.
SMALL = (80, 24)
OCTENE = "bicyclo[2.2.2]oct-1-ene"
NONENE = "bicyclo[3.3.1]non-1-ene"
URANIUM = "no force field for uranium"
CANDIDATES = [
    f"C12=CCC(CC1)CC2 {OCTENE}",
    f"C1=C2CCCC(CC1)C2 {NONENE}",
    f"C1=C2CCC(C1)CC2.[U] {URANIUM}",
    "C1CC(  not a structure",
]


@pytest.fixture(scope="module")
def client():
    from distributed import Client

    from trapbook.chemistry import conformers

    threads = conformers.THREADS  # a worker sets it to one; in-process that is this process's setting
    c = Client(processes=False, n_workers=1, threads_per_worker=1, dashboard_address=":0")
    yield c
    c.close()
    conformers.THREADS = threads


@pytest.fixture(scope="module")
def seeded_base(tmp_path_factory, client):
    """The demo lab with one stored fast-tier campaign: two bridgehead alkenes, one that fails, one unreadable line."""
    path = tmp_path_factory.mktemp("campaign") / "demo.sqlite"
    build_demo(path)
    record = cp.plan("candidates.txt", tier="fast", precursors=False, lines=CANDIDATES)
    with Notebook.open(path) as nb:
        cp.run_campaign(nb, record, client=client)
    return path, record["id"]


@pytest.fixture
def seeded(tmp_path, seeded_base):
    base, campaign_id = seeded_base
    path = tmp_path / "demo.sqlite"
    shutil.copy(base, path)
    return path, campaign_id


async def campaign_screen(pilot) -> CampaignScreen:
    await pilot.pause(0.3)
    await pilot.press("a")
    for _ in range(100):  # the table is read in a worker (the first read loads RDKit)
        screen = pilot.app.screen
        if isinstance(screen, CampaignScreen) and screen.query_one("#campaign-table").row_count:
            break
        await pilot.pause(0.05)
    await pilot.app.workers.wait_for_complete()
    await pilot.pause(0.1)
    assert isinstance(pilot.app.screen, CampaignScreen)
    return pilot.app.screen


def table_rows(screen) -> dict[str, dict]:
    """Candidate name (the row's key; the cell may be cut short) -> its cells by header, in table order."""
    table = screen.query_one("#campaign-table")
    labels = [str(c.label) for c in table.ordered_columns]
    keys = [table.coordinate_to_cell_key((r, 0)).row_key.value for r in range(table.row_count)]
    return {key: dict(zip(labels, map(str, table.get_row(key)))) for key in keys}


async def test_the_stored_campaign_and_its_ranked_table_at_80x24(seeded):
    path, campaign_id = seeded
    app = TrapbookApp(path, author="pilot", warm=False)
    async with app.run_test(size=SMALL) as pilot:
        screen = await campaign_screen(pilot)
        listing = screen.query_one("#campaign-list")
        assert listing.row_count == 1 and listing.coordinate_to_cell_key((0, 0)).row_key.value == campaign_id
        rows = table_rows(screen)
        names = list(rows)
        # Source: docs/sources.md "Strain" — S = a + b + c (Fawcett): 6 for [2.2.2], 7 for [3.3.1];
        # the bridgehead C=C of non-1-ene is trans in the eight-membered ring, oct-1-ene's in a six (Wiseman)
        assert (rows[OCTENE]["S"], rows[OCTENE]["Trans"]) == ("6", "6")
        assert (rows[NONENE]["S"], rows[NONENE]["Trans"]) == ("7", "8")
        # Source: docs/sources.md "Campaign screen and map" — non-1-ene is isolable, oct-1-ene known
        # only by trapping: least strained first, so the isolable one ranks above
        assert names.index(NONENE) < names.index(OCTENE)
        # common practice, no source (docs/sources.md "Campaign screen and map"): a fast-tier number is never classed
        assert rows[NONENE]["Class"] == rows[OCTENE]["Class"] == "prescreen"
        assert rows[URANIUM]["Class"] == "failed" and rows[URANIUM]["Strain"] == "—"
        # the failures are in sight with their reasons, the unreadable line among them
        with Notebook.open(path) as nb:
            failed = cp.load_record(nb, campaign_id)["failed"]
        detail = str(screen.query_one("#campaign-detail").render())
        assert Chem.MolFromSmiles("C1CC(") is None  # RDKit agrees the line is no structure
        assert {f["candidate"] for f in failed} == {URANIUM, "not a structure"}
        for f in failed:
            assert f["reason"].split("\n")[0][:30] in detail.replace("\n", " ")
        # 80×24: both tables and the detail on the screen, no sideways scroll, f1 in the footer
        table = screen.query_one("#campaign-table")
        assert table.virtual_size.width <= table.size.width
        for part in ("#campaign-list", "#campaign-table", "#campaign-detail-box", "#campaign-start"):
            region = screen.query_one(part).region
            assert region.height > 0 and region.right <= SMALL[0], part
        await footer_drawn(pilot)
        assert f1_in_sight(app, SMALL[0])
        await pilot.press("escape")
        await pilot.pause(0.2)
        assert type(app.screen).__name__ == "LogbookScreen"


async def test_a_long_name_is_cut_before_any_column_goes(seeded, client):
    """A candidate named at length: its name gives way, every number column stays at 80 columns."""
    path, _ = seeded
    record = cp.plan("long.txt", tier="fast", precursors=False, lines=[f"C12=CCC(CC1)CC2 {'x' * 60}"])
    with Notebook.open(path) as nb:
        cp.run_campaign(nb, record, client=client)
    app = TrapbookApp(path, author="pilot", warm=False)
    async with app.run_test(size=SMALL) as pilot:
        screen = await campaign_screen(pilot)
        keys = [screen.query_one("#campaign-list").coordinate_to_cell_key((r, 0)).row_key.value for r in range(2)]
        screen.query_one("#campaign-list").move_cursor(row=keys.index(record["id"]))
        await pilot.pause(0.3)
        await app.workers.wait_for_complete()
        await pilot.pause(0.1)
        table = screen.query_one("#campaign-table")
        labels = [str(c.label) for c in table.ordered_columns]
        for wanted in ("S", "Trans", "Strain", "Class", "Twist°", "Pyr°", "Aligned"):
            assert wanted in labels
        (row,) = map(table.get_row_at, range(table.row_count))
        name = str(row[labels.index("Candidate")])
        assert name.endswith("…") and len(name) < 60
        assert table.virtual_size.width <= table.size.width
        assert "x" * 60 in str(screen.query_one("#campaign-detail").render())  # said in full below


async def test_a_campaign_started_here_counts_to_its_end(tmp_path, client):
    path = tmp_path / "nb.sqlite"
    Notebook.create(path).close()
    app = TrapbookApp(path, author="pilot", warm=False)
    app.campaign_client = client
    async with app.run_test(size=SMALL) as pilot:
        await pilot.pause(0.3)
        await pilot.press("a")
        await pilot.pause(0.2)
        screen = app.screen
        seen = []
        shown = screen.show_progress
        screen.show_progress = lambda m: (seen.append((m.done, m.failed, m.left)), shown(m))
        from textual.widgets import Checkbox, Select

        screen.query_one("#campaign-tier", Select).value = "fast"
        screen.query_one("#campaign-precursors", Checkbox).value = False
        await pilot.press("n", *"C1CC2CCC1CC2", "enter")
        for _ in range(400):
            await pilot.pause(0.05)
            if screen.running is None and seen:
                break
        await app.workers.wait_for_complete()
        await pilot.pause(0.2)
        assert str(screen.query_one("#campaign-msg").render()).strip() == ""  # no error said
        # Source: docs/sources.md "Campaigns" — bicyclo[2.2.2]octane holds one bridgehead alkene:
        # strain only (no precursors), one task, counted from one left to one done
        counted = [s for s in seen if sum(s)]
        assert counted[0] == (0, 0, 1) and counted[-1] == (1, 0, 0)
        assert str(screen.query_one("#campaign-counts").render()).startswith("done 1 · failed 0 · left 0")
        assert screen.query_one("#campaign-bar").percentage == 1.0
        rows = table_rows(screen)
        # Source: docs/sources.md "Strain" — bicyclo[2.2.2]oct-1-ene: S 6, trans in a six-membered ring
        ((name, row),) = rows.items()
        assert (row["S"], row["Trans"], row["Class"]) == ("6", "6", "prescreen")
    with Notebook.open(path) as nb:
        assert len(cp.campaigns(nb)) == 1  # kept in the notebook, as the command keeps it


async def test_a_bad_skeleton_is_said_with_what_to_do(tmp_path, client):
    path = tmp_path / "nb.sqlite"
    Notebook.create(path).close()
    app = TrapbookApp(path, author="pilot", warm=False)
    app.campaign_client = client
    bad = "C1CC("
    assert Chem.MolFromSmiles(bad) is None  # RDKit, independently: not a SMILES
    with pytest.raises(TrapbookError) as core:
        cp.plan(bad)
    async with app.run_test(size=SMALL) as pilot:
        await pilot.pause(0.3)
        await pilot.press("a")
        await pilot.pause(0.2)
        await pilot.press("n", *bad, "enter")
        await pilot.pause(0.3)
        await app.workers.wait_for_complete()
        await pilot.pause(0.2)
        said = str(app.screen.query_one("#campaign-msg").render()).replace("\n", " ")
        assert core.value.message in said and core.value.hint in said.replace("  ", " ")
        assert app.screen.query_one("#campaign-msg").region.height > 0
    with Notebook.open(path) as nb:
        assert cp.campaigns(nb) == []  # nothing was recorded


async def test_a_read_only_session_offers_no_start(seeded):
    path, campaign_id = seeded
    app = TrapbookApp(path, author="pilot", warm=False, read_only=True)
    async with app.run_test(size=SMALL) as pilot:
        screen = await campaign_screen(pilot)
        assert screen.query_one("#campaign-list").row_count == 1  # the stored campaign is still shown
        assert screen.query_one("#campaign-start").display is False
        assert "new_campaign" not in {b.action for _, b, enabled, _ in screen.active_bindings.values() if enabled}
        await pilot.press("n")
        await pilot.pause(0.2)
        assert any("read-only" in n.message for n in app._notifications)
        screen.start()  # even asked directly, it refuses and says so
        await pilot.pause(0.2)
        assert "only reads" in str(screen.query_one("#campaign-msg").render())
        assert screen.running is None
    with Notebook.open(path) as nb:
        assert cp.campaigns(nb) == [campaign_id]
