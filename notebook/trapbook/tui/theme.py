"""Trapbook's two themes and the colour roles its Python code draws with.

Every colour of the TUI comes from here. The stylesheet (app.tcss) uses the theme's
variables ($primary, $warning, $error, $success, $text-muted, ...); Rich text built in
Python (the addition track, the strain card, the checks) asks `tone(role)`, which reads the
same variables from the running theme, so switching between the dark and the light variant
recolours both. Colours are written as hue/saturation/lightness so the two variants visibly
share their hues: slate ground, teal for structure, amber for attention.

Each role sits near one of the 16 standard terminal colours (teal → cyan, amber → yellow,
red, green, grey → bright black), so on a plain 16-colour terminal, where Textual maps every
colour to its nearest standard one, the roles stay apart and readable.
"""

from __future__ import annotations

from textual.color import Color
from textual.theme import Theme

DARK = Theme(
    name="trapbook-dark",
    primary="hsl(186,55%,50%)",  # teal: structure, headings, the precursor lane
    secondary="hsl(205,30%,40%)",
    accent="hsl(40,90%,55%)",  # amber: keys, the best cell, the fluoride lane
    warning="hsl(44,86%,62%)",
    error="hsl(8,100%,64%)",
    success="hsl(96,70%,64%)",
    foreground="hsl(207,24%,90%)",
    background="hsl(210,21%,10%)",
    surface="hsl(206,30%,16%)",
    panel="hsl(206,30%,22%)",
    dark=True,
)

LIGHT = Theme(
    name="trapbook-light",
    primary="hsl(186,80%,28%)",
    secondary="hsl(205,40%,35%)",
    accent="hsl(30,90%,34%)",
    warning="hsl(38,95%,32%)",
    error="hsl(4,75%,42%)",
    success="hsl(120,80%,26%)",
    foreground="hsl(210,25%,12%)",
    background="hsl(40,30%,97%)",
    surface="hsl(40,20%,92%)",
    panel="hsl(200,20%,86%)",
    dark=False,
    variables={"foreground-muted": "hsl(210,8%,40%)"},  # the default muted ink is too pale on paper white
)

THEMES = (DARK, LIGHT)

#: What each role of our own drawing is, as a theme variable.
ROLES = {
    "accent": "primary",  # headings, run ids, the precursor lane
    "attention": "accent",  # keys in the help, the best conditions, the fluoride lane
    "ok": "success",
    "warn": "warning",
    "stop": "error",
    "muted": "foreground-muted",  # hints, units, secondary facts
    "faint": "foreground-disabled",  # steps before a line enters the flask
    "ground": "background",
    "ink": "foreground",
}


def _running_app():
    from textual._context import active_app

    try:
        return active_app.get()
    except LookupError:
        return None


def _variables(app) -> dict[str, str]:
    """The theme variables of the app's current theme (the dark theme's when no app runs, as in a
    unit test). Worked out from the theme itself: right after a switch the app's stored variables
    are still the old theme's until its stylesheet is refreshed, and a colour cached then would
    stay wrong."""
    return app.get_css_variables() if app is not None else DARK.to_color_system().generate()


_cache: dict[tuple[str, str], str] = {}


def tone(role: str) -> str:
    """The colour of a role in the running theme, as a Rich colour (alpha blended onto the ground)."""
    app = _running_app()
    key = (app.theme if app is not None else DARK.name, role)
    if key not in _cache:
        variables = _variables(app)
        ground = Color.parse(variables["background"])
        colour = Color.parse(variables[ROLES[role]])
        _cache[key] = ground.blend(colour.with_alpha(1.0), colour.a).hex
    return _cache[key]


def severity_style(severity: str) -> str:
    """How a finding of this severity is marked (a stop is bold as well as red, for monochrome)."""
    return {"stop": f"bold {tone('stop')}", "warn": tone("warn"), "note": tone("muted")}.get(severity, "")


def register(app) -> None:
    """Make both variants known to the app and start in the dark one."""
    for theme in THEMES:
        app.register_theme(theme)
    app.theme = DARK.name
