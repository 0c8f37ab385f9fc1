"""Snapshot tests of every screen at 80×24, 100×30 and 120×40 on the demo notebook (pytest-textual-snapshot).

80×24 is the terminal a chemist gets over SSH on a lab PC; 120×40 a desktop window.

The snapshots under tests/__snapshots__/ were looked at and accepted by hand; a change in
any screen's look fails here until it is looked at again (`--snapshot-update`). The demo
notebook is built with a fixed clock so the version times and hashes in it do not move.
"""

from __future__ import annotations

import datetime as _dt

import pytest

pytest.importorskip("pytest_textual_snapshot")

#: Every screen is drawn at each of these sizes (columns, lines).
SIZES = [(80, 24), (100, 30), (120, 40)]
sizes = pytest.mark.parametrize("size", SIZES, ids=[f"{w}x{h}" for w, h in SIZES])


@pytest.fixture(scope="module")
def snap_db(tmp_path_factory):
    """The demo lab with a fixed clock, plus a second version of TB-0001."""
    from trapbook.demo import build_demo
    from trapbook.store import Notebook
    from trapbook.store import notebook as store_notebook

    ticks = iter(range(10_000))
    start = _dt.datetime(2026, 10, 7, 9, 0, tzinfo=_dt.UTC)
    real = store_notebook.now_utc
    store_notebook.now_utc = lambda: (start + _dt.timedelta(seconds=next(ticks))).isoformat(timespec="microseconds")
    try:
        path = tmp_path_factory.mktemp("snap") / "demo.sqlite"
        build_demo(path)
        with Notebook.open(path) as nb:
            run = nb.get_run("TB-0001")
            run = run.model_copy(update={"notes": "Adduct is a single diastereomer by 1H NMR."})
            nb.save_run(run, 1, author="L. Brandt", reason="added the NMR note")
            fill_fast_strain(nb)
    finally:
        store_notebook.now_utc = real
    return path


def fill_fast_strain(nb) -> None:
    """What pressing g on the Screen board does: fast-tier strain of every intermediate, cached."""
    from trapbook import review
    from trapbook.strain_link import get_strain

    for smiles in review.strain_map(nb)["missing_strain"]:
        get_strain(nb, smiles, "fast")


def make_app(path):
    from trapbook.tui.app import TrapbookApp

    return TrapbookApp(path, author="snapshot", warm=False)


async def settle(pilot) -> None:
    """Let timers and workers finish; stop cursor blinking, which would make the picture depend on timing."""
    from textual.widgets import Input

    await pilot.pause(0.5)  # the Logbook's first preview starts 0.4 s after the table is drawn
    await pilot.app.workers.wait_for_complete()
    for box in pilot.app.screen.query(Input):
        box.cursor_blink = False
    await pilot.pause(0.2)


@sizes
def test_logbook(snap_compare, snap_db, size):
    """The run table with the preview of TB-0001."""
    assert snap_compare(make_app(snap_db), terminal_size=size, run_before=settle)


@sizes
def test_logbook_filtered_by_trap(snap_compare, snap_db, size):
    async def before(pilot):
        await pilot.press("slash", *"trap:anthracene", "enter")
        await settle(pilot)

    assert snap_compare(make_app(snap_db), terminal_size=size, run_before=before)


@sizes
def test_workbench_lines(snap_compare, snap_db, size):
    """Workbench on TB-0001: reagent table, addition track, strain card, checks."""

    async def before(pilot):
        await pilot.press("e")
        await settle(pilot)

    assert snap_compare(make_app(snap_db), terminal_size=size, run_before=before)


@sizes
def test_workbench_steps_trap_late(snap_compare, snap_db, size):
    """TB-0010 added the furan after TBAF: the track and the checks say so."""

    async def before(pilot):
        await pilot.press(*["down"] * 9, "e")
        await settle(pilot)
        await pilot.press("f4")
        await settle(pilot)

    assert snap_compare(make_app(snap_db), terminal_size=size, run_before=before)


@sizes
def test_workbench_outcome_qnmr(snap_compare, snap_db, size):
    """TB-0004's outcome: qNMR integrals and the NMR yield worked out from them."""

    async def before(pilot):
        await pilot.press(*["down"] * 3, "e")
        await settle(pilot)
        await pilot.press("f5")
        await settle(pilot)

    assert snap_compare(make_app(snap_db), terminal_size=size, run_before=before)


@sizes
def test_screen_board(snap_compare, snap_db, size):
    """SC-0001: yield grid of trap × temperature, best conditions, strain plot."""

    async def before(pilot):
        await pilot.press(*["down"] * 12, "b")
        await settle(pilot)

    assert snap_compare(make_app(snap_db), terminal_size=size, run_before=before)


@sizes
def test_version_trail(snap_compare, snap_db, size):
    async def before(pilot):
        await pilot.press("h")
        await settle(pilot)

    assert snap_compare(make_app(snap_db), terminal_size=size, run_before=before)


@sizes
def test_keys(snap_compare, snap_db, size):
    async def before(pilot):
        await pilot.press("f1")
        await settle(pilot)

    assert snap_compare(make_app(snap_db), terminal_size=size, run_before=before)


@sizes
def test_leave_question(snap_compare, snap_db, tmp_path, size):
    """Leaving a changed run asks what to do with the changes (on a copy: a draft is written)."""
    import shutil

    copy = tmp_path / "demo.sqlite"
    shutil.copy(snap_db, copy)

    async def before(pilot):
        await pilot.press("e")
        await settle(pilot)
        await pilot.press("f2", "end", *" draft")
        await settle(pilot)
        await pilot.press("escape")
        await settle(pilot)

    assert snap_compare(make_app(copy), terminal_size=size, run_before=before)


@sizes
def test_workbench_run_tab_in_a_screen(snap_compare, snap_db, size):
    """TB-0013's Run tab: its screen SC-0001 and one row per varied condition with its level."""

    async def before(pilot):
        await pilot.press(*["down"] * 12, "e")
        await settle(pilot)
        await pilot.press("f2")
        await settle(pilot)

    assert snap_compare(make_app(snap_db), terminal_size=size, run_before=before)


def seed_campaign(path) -> None:
    """A fast-tier campaign of two bridgehead alkenes, one candidate that fails and one unreadable line."""
    from distributed import Client

    from trapbook import campaign as cp
    from trapbook.chemistry import conformers
    from trapbook.store import Notebook

    lines = [
        "C12=CCC(CC1)CC2 bicyclo[2.2.2]oct-1-ene",
        "C1=C2CCCC(CC1)C2 bicyclo[3.3.1]non-1-ene",
        "C1=C2CCC(C1)CC2.[U] no force field for uranium",
        "C1CC(  not a structure",
    ]
    threads = conformers.THREADS
    with Client(processes=False, n_workers=1, threads_per_worker=1, dashboard_address=":0") as client:
        with Notebook.open(path) as nb:
            cp.run_campaign(nb, cp.plan("candidates.txt", tier="fast", precursors=False, lines=lines), client=client)
    conformers.THREADS = threads


@sizes
def test_campaigns(snap_compare, snap_db, tmp_path, size):
    """a on the Logbook: the stored campaign, its ranked candidates, the failures with their reasons."""
    import shutil

    copy = tmp_path / "demo.sqlite"
    shutil.copy(snap_db, copy)
    seed_campaign(copy)

    async def before(pilot):
        await pilot.press("a")
        await settle(pilot)

    assert snap_compare(make_app(copy), terminal_size=size, run_before=before)
