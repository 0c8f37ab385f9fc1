"""The Screen board never writes one label over another: the yield grid's level names and the
plot's point names each keep to cells of their own, at 80×24, 100×30 and 120×40.

The grid is checked as Rich draws it at the width the board gives it (Rich's table borders
mark each cell's span); the plot as plotext itself draws it (its canvas, with the names put
where `label_plan` says). Level names here are invented: only their length matters.
"""

from __future__ import annotations

import re
import shutil

import pytest

pytest.importorskip("textual")

from rich.console import Console

from trapbook.records import Screen
from trapbook.review import review_screen
from trapbook.store import Notebook
from trapbook.tui.widgets.heatgrid import grid
from trapbook.tui.widgets.plot_labels import axis_ticks, canvas_size, label_plan, to_cell

SIZES = [(80, 24), (100, 30), (120, 40)]
LONG_ROWS = [
    "tetrabutylammonium difluorotriphenylsilicate, freshly dried",
    "tetrabutylammonium difluorotriphenylsilicate, as received",
    "caesium fluoride with 18-crown-6",
    "KF",
]
MANY_COLUMNS = [
    "acetonitrile, dried over sieves",
    "acetonitrile / THF 1:1",
    "tetrahydrofuran",
    "DMF",
    "1,2-dimethoxyethane",
    "toluene with 18-crown-6",
    "MeCN",
    "dichloromethane",
    "propionitrile",
]


@pytest.fixture
def long_names(demo_notebook_path, tmp_path):
    """The demo notebook with one more screen whose levels have long names, and many of them."""
    path = tmp_path / "demo.sqlite"
    shutil.copy(demo_notebook_path, path)
    with Notebook.open(path) as nb:
        sid = nb.add_screen(
            Screen(name="fluoride source by solvent", factors={"fluoride source": LONG_ROWS, "solvent": MANY_COLUMNS}),
            author="pilot",
        )
        matrix = review_screen(nb, sid)["matrix"]
    return path, sid, matrix


def _spans(border: str, joints: str) -> list[tuple[int, int]]:
    """(first, last + 1) of each cell between the joints of a table's border line."""
    cuts = [i for i, ch in enumerate(border) if ch in joints]
    return [(a + 1, b) for a, b in zip(cuts, cuts[1:])]


def _read_grid(lines: list[str]) -> tuple[list[str], list[list[str]], list[str]]:
    """(column headers, each band's row labels, lines after the tables) as drawn, cell by cell.

    Source: Rich's table box characters (rich.box.HEAVY_HEAD): ┏┳┓ open a table, the header
    sits between ┃ on the lines before ┡, each body row starts with │ and its cells end at │.
    """
    headers, rows, rest = [], [], []
    i = 0
    while i < len(lines):
        if not lines[i].startswith("┏"):
            rest.append(lines[i])
            i += 1
            continue
        spans = _spans(lines[i], "┏┳┓")
        head = []
        i += 1
        while not lines[i].startswith("┡"):
            for a, b in spans:
                assert lines[i][a - 1] == "┃" and lines[i][b] == "┃", "a label runs over a cell border"
            head.append(lines[i])
            i += 1
        # a level's name is one line: the column cells of every header line but the last are empty
        for line in head[:-1]:
            assert all(not line[a:b].strip() for a, b in spans[1:]), f"a column label wraps: {line!r}"
        headers.extend(head[-1][a:b].strip() for a, b in spans[1:])
        i += 1
        rows.append([])
        while not lines[i].startswith("└"):
            if lines[i].startswith("│") and lines[i][spans[0][0] : spans[0][1]].strip():
                rows[-1].append(lines[i][spans[0][0] : spans[0][1]].strip())
            i += 1
        i += 1
    return headers, rows, rest


def _names(shown: list[str], levels: list[str], legend: str) -> list[str]:
    """The level each shown label stands for: its whole name, a cut one ending in …, or a key of the legend."""
    out = []
    for label, level in zip(shown, levels):
        if label == level:
            out.append(level)
        elif label.endswith("…"):
            assert level.startswith(label[:-1].rstrip()), (label, level)
            out.append(level)
        else:
            assert f"{label} = {level}" in legend, (label, level)
            out.append(level)
    return out


@pytest.mark.parametrize("size", SIZES)
async def test_grid_labels_each_keep_their_own_cell(long_names, size):
    from textual.widgets import Static

    from trapbook.tui.app import TrapbookApp
    from trapbook.tui.screens.review import BoardScreen

    path, sid, matrix = long_names
    app = TrapbookApp(path, author="pilot", warm=False)
    async with app.run_test(size=size) as pilot:
        app.push_screen(BoardScreen(screen_id=sid))
        await pilot.pause(0.3)
        heat = app.screen.query_one("#heat", Static)
        width = heat.content_region.width
    assert width >= 40
    console = Console(width=width, color_system=None, record=True)
    console.print(grid(matrix))
    lines = console.export_text().splitlines()
    assert all(len(line) <= width for line in lines)  # nothing runs past the board's edge
    headers, bands, rest = _read_grid(lines)
    legend = " ".join(" ".join(rest).split())
    # every level is there once, in order, and each label names exactly one level; a band of
    # the columns that did not fit across repeats the row labels
    rows = bands[0]
    assert all(band == rows for band in bands)
    assert len(headers) == len(MANY_COLUMNS) and len(rows) == len(LONG_ROWS)
    assert _names(headers, MANY_COLUMNS, legend) == MANY_COLUMNS
    assert _names(rows, LONG_ROWS, legend) == LONG_ROWS
    assert len(set(headers)) == len(headers) and len(set(rows)) == len(rows)  # no two read the same


def test_short_level_names_are_written_whole(demo_notebook):
    """The demo's screen (three traps by two temperatures) needs no key and no cut at the board's narrowest."""
    matrix = review_screen(demo_notebook, "SC-0001")["matrix"]
    console = Console(width=56, color_system=None, record=True)
    console.print(grid(matrix))
    headers, bands, rest = _read_grid(console.export_text().splitlines())
    assert headers == matrix["column_levels"] and bands == [matrix["row_levels"]]


def _drawn(width: int, height: int, points, placed, xlim, ylim) -> list[str]:
    """The plot as plotext draws it (the figure the board's plot widget holds) at width × height:
    a title, axis labels, the points, the names."""
    from textual_plotext.plot import Plot

    plt = Plot()
    plt._limit_size(False, False)  # as the board's StrainPlot: bound by its own size, not the terminal's
    plt.plotsize(width, height)
    plt.title("best yield vs olefin strain")
    plt.xlabel("olefin strain (kcal/mol)")
    plt.ylabel("best yield %")
    plt.scatter([p[1] for p in points], [p[2] for p in points], marker="○")
    plt.xlim(*xlim)
    plt.ylim(*ylim)
    plt.xticks(*axis_ticks(xlim, canvas_size(width, height)[0]))
    for label in placed:
        plt.text(label.text, label.x, label.y, alignment="left")
    return re.sub(r"\x1b\[[0-9;]*m", "", plt.build()).splitlines()


@pytest.mark.parametrize("plot_size", [(20, 12), (41, 20), (52, 30)])  # the board's plot at 80×24, 100×30, 120×40
def test_plot_names_never_overlap_and_land_where_planned(plot_size):
    width, height = plot_size
    # layout coordinates, not data: ten points crowded into a third of the axis
    points = [(f"bicyclo[{3 + i % 3}.3.1]non-1-ene isomer {i}", 10 + i * 1.5, 20 + 7 * i) for i in range(10)]
    xlim, ylim = (9.0, 40.0), (0.0, 100.0)
    placed, legend = label_plan(points, width, height, xlim, ylim)
    spans = sorted(label.span for label in placed)
    for (r1, _, b1), (r2, a2, _) in zip(spans, spans[1:]):
        assert r1 != r2 or b1 < a2, "two names touch or overlap"
    # every point is named: on the plot, or on a legend line
    written = {label.text for label in placed}
    for name, _, _ in points:
        assert name in written or any(line.endswith(name) or line.startswith(name) for line in legend)
    lines = _drawn(width, height, points, placed, xlim, ylim)
    cols, rows = canvas_size(width, height)
    canvas = [line[6 : 6 + cols] for line in lines[2 : 2 + rows]]  # Source: plotext's frame, y ticks 5 wide + ┤
    for label in placed:
        assert canvas[label.row][label.col : label.col + len(label.text)] == label.text, label
    # no name covers a point: plotext drew all of them (distinct cells) around the names
    cells = {(to_cell(x, xlim, cols), to_cell(y, ylim, rows)) for _, x, y in points}
    assert sum(line.count("○") for line in canvas) == len(cells)
    # the x axis numbers keep a space between them
    ticks = lines[2 + rows + 1]
    assert re.fullmatch(r"\s*(-?\d+\.\d)(\s+-?\d+\.\d)*\s*", ticks), ticks
