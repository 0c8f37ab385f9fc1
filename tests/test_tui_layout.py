"""The terminal UI at the sizes chemists actually have: 80×24 over SSH, 100×30, 120×40.

Also the colours: both variants of the theme readable (WCAG contrast) and still apart on a
plain 16-colour terminal, and no colour written into the TUI's Python.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest

pytest.importorskip("textual")

from trapbook.tui.app import TrapbookApp

# Source: docs/sources.md (Terminal UI): 80 columns × 24 lines is the VT100's screen and
# still the default size of xterm and of most terminal emulators and SSH clients.
SMALL = (80, 24)


def f1_in_sight(app, width: int) -> bool:
    keys = [k for k in app.screen.query("FooterKey") if k.key == "f1"]
    return bool(keys) and keys[0].region.right <= width and keys[0].region.width > 0


async def footer_drawn(pilot) -> None:
    """The footer is laid out after the screen's first refresh; on a busy machine that takes a while."""
    for _ in range(60):
        keys = list(pilot.app.screen.query("FooterKey"))
        if keys and all(k.region.width > 0 for k in keys):
            return
        await pilot.pause(0.05)


async def test_logbook_at_80x24_shows_ten_runs_without_a_sideways_scroll(demo_path):
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SMALL) as pilot:
        await pilot.pause(0.3)
        table = app.screen.query_one("#runs")
        assert table.region.height - 1 >= 10  # one line is the header
        assert table.row_count >= 10
        assert table.virtual_size.width <= table.size.width  # every column shown fits
        await footer_drawn(pilot)
        assert f1_in_sight(app, SMALL[0])
        await pilot.press("p")  # the preview hidden: the table takes its room
        await pilot.pause()
        assert table.region.height >= SMALL[1] - 5


async def test_workbench_at_80x24_shows_every_lines_amounts(demo_path):
    """TB-0001: equiv, mmol, mg and µL of each line within the 80 columns; the name is what gives way."""
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SMALL) as pilot:
        await pilot.press("e")
        await pilot.pause(0.3)
        screen = app.screen
        table = screen.query_one("#lines")
        assert table.region.right <= SMALL[0] and table.region.height > 0
        labels = [str(c.label) for c in table.ordered_columns]
        widths = [c.get_render_width(table) for c in table.ordered_columns]
        right_of_mg = sum(widths[: labels.index("µL") + 1])
        assert right_of_mg <= table.size.width
        row = next(table.get_row_at(r) for r in range(table.row_count) if str(table.get_row_at(r)[2]).startswith("furan"))
        # Source: docs/sources.md, furan M 68.07 g/mol (CRC, from memory); TB-0001 adds
        # 10 equiv on 0.100 mmol of precursor: 1.00 mmol × 68.07 g/mol = 68.1 mg
        assert str(row[labels.index("mg")]) == f"{1.00 * 68.07:.1f}"
        assert str(row[labels.index("mmol")]) == "1.00"
        await footer_drawn(pilot)
        assert f1_in_sight(app, SMALL[0])


async def test_side_panel_is_a_pane_of_its_own_under_120_columns(demo_path):
    """f7 shows the addition track, strain card and checks in place of the tabs, and back again."""
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SMALL) as pilot:
        await pilot.press("e")
        await pilot.pause(0.3)
        screen = app.screen
        side, tabs = screen.query_one("#bench-side"), screen.query_one("#tabs")
        assert side.region.width == 0 and tabs.region.width > 0
        assert "checks:" in str(screen.query_one("#status").render())  # said in a line while out of sight
        await pilot.press("f7")
        await pilot.pause(0.3)
        assert side.region.width >= SMALL[0] - 2 and tabs.region.width == 0
        track = screen.query_one("#track")
        lanes = str(track.render()).splitlines()[:5]
        assert all(len(line.rstrip()) <= track.content_size.width for line in lanes), lanes
        await pilot.press("f7")
        await pilot.pause()
        assert side.region.width == 0 and tabs.region.width > 0
        assert screen.focused is not None and screen.focused.region.width > 0


@pytest.mark.parametrize("size", [(80, 24), (100, 30), (120, 40)])
async def test_every_screen_keeps_f1_in_the_footer(demo_path, size):
    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=size) as pilot:
        await footer_drawn(pilot)
        assert f1_in_sight(app, size[0]), "Logbook"
        for key, name in (("e", "Workbench"), ("h", "Version trail"), ("b", "Screen board")):
            await pilot.press(key)
            await pilot.pause(0.3)
            await footer_drawn(pilot)
            assert f1_in_sight(app, size[0]), name
            await pilot.press("escape")
            for _ in range(60):  # back on the Logbook before the next key
                if type(app.screen).__name__ == "LogbookScreen":
                    break
                await pilot.pause(0.05)
            assert type(app.screen).__name__ == "LogbookScreen"


def _relative_luminance(hex_colour: str) -> float:
    """WCAG 2.1 relative luminance of an sRGB colour, written out here from the definition."""

    def channel(v: int) -> float:
        c = v / 255
        return c / 12.92 if c <= 0.04045 else ((c + 0.055) / 1.055) ** 2.4

    r, g, b = (int(hex_colour.lstrip("#")[i : i + 2], 16) for i in (0, 2, 4))
    return 0.2126 * channel(r) + 0.7152 * channel(g) + 0.0722 * channel(b)


def _contrast(a: str, b: str) -> float:
    hi, lo = sorted((_relative_luminance(a), _relative_luminance(b)), reverse=True)
    return (hi + 0.05) / (lo + 0.05)


TEXT_ROLES = ("ink", "accent", "attention", "ok", "warn", "stop", "muted")


@pytest.mark.parametrize("variant", ["trapbook-dark", "trapbook-light"])
async def test_text_colours_are_readable_in_both_variants(demo_path, variant):
    # Source: docs/sources.md (Terminal UI): WCAG 2.1 success criterion 1.4.3 asks 4.5:1
    # between text and its background; relative luminance and contrast ratio as WCAG 2.1 defines them.
    from trapbook.tui.theme import tone

    app = TrapbookApp(demo_path, author="pilot", warm=False)
    async with app.run_test(size=SMALL) as pilot:
        app.theme = variant
        await pilot.pause()
        ground = tone("ground")
        for role in TEXT_ROLES:
            assert _contrast(tone(role), ground) >= 4.5, (variant, role, tone(role), ground)


@pytest.mark.parametrize("variant", ["trapbook-dark", "trapbook-light"])
def test_roles_stay_apart_on_a_16_colour_terminal(variant):
    """Mapped to the nearest of the 16 standard colours (as Rich does for such a terminal),
    text never lands on the ground's colour, and a stop never looks like a pass or a note."""
    # Source: docs/sources.md (Terminal UI): the 16 standard colours of ECMA-48 SGR 30-37 / 90-97;
    # the mapping to the nearest one is Rich's own (an independent library).
    from rich.color import Color, ColorSystem
    from textual.color import Color as TColor

    from trapbook.tui.theme import ROLES, THEMES

    theme = next(t for t in THEMES if t.name == variant)
    variables = {**theme.to_color_system().generate(), **theme.variables}
    ground = TColor.parse(variables["background"])

    def ansi(role: str) -> int:
        c = TColor.parse(variables[ROLES[role]])
        return Color.parse(ground.blend(c.with_alpha(1.0), c.a).hex).downgrade(ColorSystem.STANDARD).number

    base = ansi("ground")
    for role in TEXT_ROLES:
        assert ansi(role) != base, (variant, role)
    assert len({ansi("stop"), ansi("ok"), ansi("muted")}) == 3
    assert ansi("stop") != ansi("warn")


def test_no_colour_is_written_into_the_tuis_python():
    """Colours come from the theme (theme.py's roles, app.tcss's variables), never a hex code in code."""
    tui = Path(__file__).resolve().parents[1] / "notebook" / "trapbook" / "tui"
    hex_colour = re.compile(r"#[0-9a-fA-F]{6}\b")
    found = [
        f"{p.relative_to(tui)}:{n}"
        for p in tui.rglob("*.py")
        for n, line in enumerate(p.read_text(encoding="utf-8").splitlines(), 1)
        if hex_colour.search(line)
    ]
    assert not found
    assert not hex_colour.search((tui / "app.tcss").read_text(encoding="utf-8"))
