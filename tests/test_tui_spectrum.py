"""The Outcome tab's spectrum: the processed 1H spectrum behind an NMR yield, drawn in the terminal.

The spectrum is a synthetic FID with known signals (tests/spectra_samples.py): the internal
standard's 3H singlet at 6.10 ppm and the product's 1H signal at 5.30 ppm, integrated by
`trapbook nmr` as a chemist would. The plot is read the way a person reads it: the shifts
printed under the axis give the ppm of each column, and the shaded columns, the peaks and the
integral labels are checked against the regions, the signals put into the FID and the stored
qNMR record.
"""

from __future__ import annotations

import json
import re

import pytest

pytest.importorskip("textual")

from click.testing import CliRunner
from rich.console import Console

from spectra_samples import WORKED, bruker_zip
from trapbook.cli import main
from trapbook.display import fmt_sig
from trapbook.store import Notebook

SIZE = (80, 24)
#: The worked qNMR example's run: 0.100 mmol of precursor and of internal standard.
# Source: docs/sources.md, "NMR yield with an internal standard" (the worked example).
RUN = {
    "title": "qNMR from the spectrum",
    "lines": [
        {"role": "precursor", "name": "P", "smiles": "C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F", "amount": "0.100 mmol"},
        {"role": "internal standard", "name": "TMB", "smiles": "COc1cc(OC)cc(OC)c1", "amount": "0.100 mmol"},
        {"role": "product", "name": "adduct", "smiles": "C1=CC2OC1c1ccccc12"},
    ],
}
STANDARD, PRODUCT = (6.00, 6.20), (5.20, 5.40)
NMR = ("--standard", "6.00..6.20", "--product", "5.20..5.40", "--standard-protons", "3", "--product-protons", "1")
# Source: docs/sources.md "Spectra" — the signals put into the synthetic FID: the standard's singlet
# at 6.10 ppm (area 3.00) and the product's signal at 5.30 ppm (area 0.62).
STANDARD_SHIFT, PRODUCT_SHIFT = WORKED[0][0], WORKED[1][0]
KNOWN_PRODUCT_INTEGRAL = WORKED[1][1] / WORKED[0][1] * 3  # the standard's integral set to its 3 protons


@pytest.fixture(scope="module")
def spectrum_nb(tmp_path_factory):
    """TB-0001 integrated from its FID; TB-0002 with no spectrum; TB-0003 integrated from an FID
    whose stored bytes were then changed on disk."""
    from trapbook.attachments import blob_path, store_dir

    tmp = tmp_path_factory.mktemp("spectrum")
    db = str(tmp / "nb.sqlite")
    runner = CliRunner()

    def cli(*args):
        res = runner.invoke(main, ["--db", db, "--author", "tester", *args], catch_exceptions=False)
        assert res.exit_code == 0, res.output
        return res

    cli("init")
    run_file = tmp / "run.json"
    run_file.write_text(json.dumps(RUN))
    for _ in range(3):
        cli("add", str(run_file))
    for run_id, seed in (("TB-0001", 1), ("TB-0003", 2)):
        folder = tmp / run_id
        folder.mkdir()
        (tmp / f"{run_id}.zip").write_bytes(bruker_zip(folder, seed=seed))
        cli("attach", run_id, str(tmp / f"{run_id}.zip"))
        cli("nmr", run_id, *NMR)
    with Notebook.open(db) as nb:
        sha = nb.get_run("TB-0003").attachments[0].sha256
        blob_path(store_dir(nb), sha).write_bytes(b"not the bytes that were integrated")
    return tmp / "nb.sqlite"


def stored_qnmr(path, run_id: str = "TB-0001"):
    with Notebook.open(path) as nb:
        return nb.get_run(run_id).outcome.products[0].qnmr


def drawn(path, columns: int = 76):
    """The plot as the Outcome tab draws it, from the stored record by the report's own call."""
    from trapbook.spectra.figures import stored_spectrum
    from trapbook.tui.widgets.spectrum_draw import Marked, plot_text

    with Notebook.open(path) as nb:
        run = nb.get_run("TB-0001")
        spec, integ = stored_spectrum(nb, run, run.outcome.products[0])
    marked = [
        Marked("standard", *STANDARD, integ.standard_integral, 3),
        Marked("product", *PRODUCT, integ.product_integral, 1),
    ]
    text, _ = plot_text(spec.ppm, spec.intensity, marked, columns)
    return text


def ppm_of_columns(lines: list[str]):
    """The shift at the middle of each column, read off the printed axis: each label sits centred
    under its tick (┬), so two ticks and their labels fix the straight line from column to ppm."""
    axis, labels = lines[-2], lines[-1]
    ticks = [i for i, ch in enumerate(axis) if ch == "┬"]
    values = {}
    for m in re.finditer(r"-?\d+\.\d+", labels):
        tick = min(ticks, key=lambda t: abs(t + 0.5 - (m.start() + m.end()) / 2))
        values[tick] = float(m.group())
    (c1, v1), (c2, v2) = min(values.items()), max(values.items())
    per_column = (v2 - v1) / (c2 - c1)
    assert per_column < 0  # high ppm on the left, as a 1H spectrum is read
    # a tick marks the column its shift falls in: its middle is within half a column of the shift
    return lambda c: v1 + (c - c1) * per_column, abs(per_column)


def test_plot_shades_the_regions_where_their_shifts_are_and_labels_their_integrals(spectrum_nb):
    text = drawn(spectrum_nb)
    lines = text.plain.split("\n")
    assert all(len(line) <= 76 for line in lines)
    ppm_at, step = ppm_of_columns(lines)
    console = Console(width=200, color_system="truecolor")
    plot_rows = [i for i, line in enumerate(lines) if any("\u2800" <= ch <= "\u28ff" for ch in line)]
    row = text.split("\n")[plot_rows[-1]]
    shaded = [c for c in range(len(row.plain)) if row.get_style_at_offset(console, c).bgcolor is not None]
    grounds = {c: row.get_style_at_offset(console, c).bgcolor for c in shaded}
    for low, high in (STANDARD, PRODUCT):
        inside = {c for c in range(len(row.plain)) if low + step <= ppm_at(c) <= high - step}
        near = {c for c in range(len(row.plain)) if low - step <= ppm_at(c) <= high + step}
        mine = {c for c in shaded if near and min(near) <= c <= max(near)}
        assert inside <= mine <= near, (low, high, sorted(mine))
        assert len({grounds[c] for c in mine}) == 1
    assert len(set(grounds.values())) == 2  # the two regions in two colours

    # the peaks stand where the FID put them: the tallest dot of each region's columns
    def top_dot(c: int) -> int:
        for r in plot_rows:
            ch = lines[r][c]
            if "\u2801" <= ch <= "\u28ff":
                return r
        return len(lines)

    for (low, high), shift in ((STANDARD, STANDARD_SHIFT), (PRODUCT, PRODUCT_SHIFT)):
        columns = [c for c in range(len(row.plain)) if low <= ppm_at(c) <= high]
        peak = min(columns, key=top_dot)
        assert abs(ppm_at(peak) - shift) <= step

    # the labels over the regions carry the integrals of the stored qNMR record
    q = stored_qnmr(spectrum_nb)
    label_row = lines[0]
    assert f"IS ∫ {fmt_sig(q.standard_integral, 3)}" in label_row
    assert f"P ∫ {fmt_sig(q.integral, 3)}" in label_row
    assert q.integral == pytest.approx(KNOWN_PRODUCT_INTEGRAL, rel=0.01)
    # each label is centred over its region
    for label, (low, high) in ((f"IS ∫ {fmt_sig(q.standard_integral, 3)}", STANDARD), (f"P ∫ {fmt_sig(q.integral, 3)}", PRODUCT)):
        middle = ppm_at(label_row.index(label) + len(label) / 2 - 0.5)
        assert low - step <= middle <= high + step


async def test_outcome_tab_draws_the_spectrum_once_it_is_shown(spectrum_nb):
    from trapbook.tui.app import TrapbookApp
    from trapbook.tui.screens.editor import WorkbenchScreen
    from trapbook.tui.widgets.spectrum_plot import SpectrumPlot

    app = TrapbookApp(spectrum_nb, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        app.push_screen(WorkbenchScreen(run_id="TB-0001"))
        await pilot.pause()
        screen = app.screen
        plot = screen.query_one(SpectrumPlot)
        assert plot._found is None and plot._pending is not None  # nothing read while the Lines tab shows
        await pilot.press("f5")
        await pilot.pause()
        await app.workers.wait_for_complete()
        await pilot.pause(0.2)
        shown = str(plot.render())
        q = stored_qnmr(spectrum_nb)
        assert f"IS ∫ {fmt_sig(q.standard_integral, 3)}" in shown and f"P ∫ {fmt_sig(q.integral, 3)}" in shown
        assert any("\u2801" <= ch <= "\u28ff" for ch in shown)
        assert "ppm" in shown.split("\n")[-1]
        assert max(len(line) for line in shown.split("\n")) <= plot.content_size.width <= SIZE[0]


@pytest.mark.parametrize(
    ("run_id", "words"),
    [
        ("TB-0002", ["No ¹H spectrum", "trapbook nmr TB-0002 --standard"]),
        ("TB-0003", ["cannot be drawn", "changed on disk"]),
    ],
)
async def test_outcome_tab_says_when_there_is_no_spectrum_or_it_cannot_be_drawn(spectrum_nb, run_id, words):
    from trapbook.tui.app import TrapbookApp
    from trapbook.tui.screens.editor import WorkbenchScreen
    from trapbook.tui.widgets.spectrum_plot import SpectrumPlot

    app = TrapbookApp(spectrum_nb, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        app.push_screen(WorkbenchScreen(run_id=run_id))
        await pilot.pause()
        await pilot.press("f5")
        await pilot.pause()
        await app.workers.wait_for_complete()
        await pilot.pause(0.2)
        shown = str(app.screen.query_one(SpectrumPlot).render())
    assert all(w in shown for w in words), shown


def test_changing_a_result_keeps_the_spectrum_record_behind_its_integrals(spectrum_nb):
    """A dr typed beside integrals from a spectrum keeps the record that vouches for them; typing
    over the integrals is refused, since the record would vouch for numbers it did not give."""
    from trapbook.tui.outcome_form import form_values, product_entry

    with Notebook.open(spectrum_nb) as nb:
        stored = nb.get_run("TB-0001").to_json_dict()["outcome"]["products"][0]
    values = {**form_values(stored), "dr": "5:1"}
    entry, why = product_entry(values, ["adduct"], [stored], 0)
    assert why is None and entry["dr"] == "5:1"
    assert entry["qnmr"] == stored["qnmr"]  # the record and the integrals to the last digit
    entry, why = product_entry({**values, "integral": "0.70"}, ["adduct"], [stored], 0)
    assert entry is None and "trapbook nmr" in why


def test_braille_dots_are_the_ones_unicode_names():
    """A spike in the right half of the first cell is a vertical line of dots 4, 5, 6 and 8; the
    flat baseline beside it is the bottom dots 7 and 8."""
    import unicodedata

    import numpy as np

    from trapbook.tui.widgets.spectrum_draw import Window, braille_cells

    window = Window(1.0, 0.0, 10)
    ppm = np.linspace(1.0, 0.0, 2001)  # high ppm first, as a processed spectrum is stored
    intensity = np.where((ppm < 0.95) & (ppm > 0.90), 1.0, 0.0)  # the second dot column of ten cells (0.05 ppm each)
    cells = braille_cells(ppm, intensity, window, rows=2)
    names = [[unicodedata.name(chr(0x2800 + mask)) for mask in row] for row in cells]
    # Source: the Unicode Standard's Braille Patterns block (U+2800-U+28FF), as named in Python's unicodedata
    assert names[0][0] == "BRAILLE PATTERN DOTS-4568"
    assert names[1][0] == "BRAILLE PATTERN DOTS-45678"  # the line meets the baseline (dot 7) at the foot
    assert names[1][5] == "BRAILLE PATTERN DOTS-78"
    assert names[0][5] == "BRAILLE PATTERN BLANK"


async def test_the_plot_takes_the_light_theme_colours_at_once_after_f8(spectrum_nb):
    """Switching themes redraws the plot in the new theme's colours, not the old theme's left in
    the stylesheet until it is refreshed."""
    import colorsys

    from trapbook.tui.app import TrapbookApp
    from trapbook.tui.screens.editor import WorkbenchScreen
    from trapbook.tui.theme import LIGHT, tone

    app = TrapbookApp(spectrum_nb, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        app.push_screen(WorkbenchScreen(run_id="TB-0001"))
        await pilot.pause()
        await pilot.press("f5", "f8")
        await pilot.pause()
        ink = tone("ink")
    # Source: CSS Color Module Level 3, HSL to RGB (computed with Python's colorsys, an outside converter)
    h, s, lightness = (float(v.rstrip("%")) for v in LIGHT.foreground[4:-1].split(","))
    r, g, b = colorsys.hls_to_rgb(h / 360, lightness / 100, s / 100)
    assert ink.lower() == f"#{round(r * 255):02x}{round(g * 255):02x}{round(b * 255):02x}"


async def test_removing_the_result_and_typing_observations_change_the_run(spectrum_nb):
    """ctrl+r on the results table takes the result out of the run (and the outcome it leaves
    empty); a run-wide box goes into the run as typed."""
    from trapbook.tui.app import TrapbookApp
    from trapbook.tui.screens.editor import WorkbenchScreen
    from trapbook.tui.widgets.spectrum_plot import SpectrumPlot

    app = TrapbookApp(spectrum_nb, author="pilot", warm=False)
    async with app.run_test(size=(120, 40)) as pilot:
        app.push_screen(WorkbenchScreen(run_id="TB-0001"))
        await pilot.pause()
        screen = app.screen
        await pilot.press("f5")
        screen.query_one("#products").focus()
        await pilot.press("ctrl+r")
        await pilot.pause(0.2)
        assert "outcome" not in screen.data
        assert "No ¹H spectrum" in str(screen.query_one(SpectrumPlot).render())
        screen.query_one("#out-observations").focus()
        await pilot.press(*"yellow")
        await pilot.pause(0.2)
        assert screen.data["outcome"] == {"observations": "yellow"}
        assert screen.dirty
