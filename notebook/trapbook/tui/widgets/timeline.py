"""The addition track: when the precursor, the trap and the fluoride source enter the flask.

A trapping run lives or dies by one fact — is the trap already in the flask when the
fluoride meets the precursor? — so the track draws one lane per key line across the
ordered steps, and states the verdict the bench checks reached (it does not judge itself).
"""

from __future__ import annotations

from rich.text import Text
from textual.widgets import Static

from ..theme import severity_style, tone

#: Lanes drawn, in order, and how each is labelled and which colour role it takes (theme.py).
LANES = (
    ("precursor", "precursor", "accent"),
    ("trap", "trap", "ok"),
    ("fluoride source", "F⁻ source", "attention"),
)
LABEL_W = 11


def _entry_steps(run) -> dict[str, int]:
    """First step (0-based) in which each line name is added."""
    first: dict[str, int] = {}
    for i, step in enumerate(run.steps):
        for name in step.add:
            first.setdefault(name.casefold(), i)
    return first


def _temp(step) -> str:
    temps = step.temperatures_c()  # both ends of a ramp ('0 °C to rt' draws as 0→23°)
    return "→".join(f"{t:.0f}" for t in temps) + "°" if temps else ""


def track(run, findings: list | None, width: int | None = None) -> Text:
    """The track as Rich text; `findings` are the bench checks of the same run.

    Given the `width` it has, the steps are drawn narrower rather than wrapped.
    """
    out = Text()
    n = len(run.steps)
    if n == 0:
        out.append("No steps yet: say what goes in when (Steps tab).", style=f"italic {tone('muted')}")
        return out
    cell = 6 if n <= 5 else 4 if n <= 8 else 3
    while width and cell > 3 and LABEL_W + n * cell > width:
        cell -= 1
    first = _entry_steps(run)
    out.append(" " * LABEL_W)
    for i in range(n):
        out.append(f"{i + 1:<{cell}}", style="bold")
    out.append("\n" + " " * LABEL_W)
    for step in run.steps:
        mark = _temp(step) + ("▣" if step.sealed else "")
        out.append(f"{mark[: cell - 1]:<{cell}}", style=f"{tone('muted')}")
    out.append("\n")
    for role, label, colour_role in LANES:
        colour = tone(colour_role)
        lines = run.lines_by_role(role)
        if not lines:
            out.append(f"{label:<{LABEL_W}}", style=colour)
            out.append("none in this run\n", style=f"italic {tone('muted')}")
            continue
        for line in lines:
            at = first.get(line.name.casefold())
            out.append(f"{label[: LABEL_W - 1]:<{LABEL_W}}", style=colour)
            if at is None:  # said in words, which fit the panel however many steps there are
                out.append("never added in any step\n", style=f"{tone('warn')}")
                continue
            for i in range(n):
                if i < at:
                    out.append("·".ljust(cell), style=f"{tone('faint')}")
                elif i == at:
                    out.append("●" + "━" * (cell - 1), style=f"bold {colour}")
                else:
                    out.append("━" * cell, style=colour)
            out.append("\n")
    out.append(verdict(run, findings))
    return out


def verdict(run, findings: list | None) -> Text:
    """One line stating what the checks said about the order of additions."""
    codes = {f.code: f for f in (findings or [])}
    if findings is None:
        return Text("order not judged: checks not available", style=f"italic {tone('muted')}")
    if "trap-late" in codes:
        return Text("✖ trap enters after the fluoride source", style=severity_style("stop"))
    if "no-trap" in codes:
        return Text("▲ no trap line: nothing to catch the intermediate", style=severity_style("warn"))
    if "trap-order-unknown" in codes:
        return Text("▲ steps do not say when the trap goes in", style=severity_style("warn"))
    if run.lines_by_role("trap") and run.lines_by_role("fluoride source"):
        return Text("✔ trap in the flask before the fluoride source", style=f"bold {tone('ok')}")
    return Text("")


class AdditionTrack(Static):
    """Shows `track()` of the run being looked at."""

    def show(self, run, findings: list | None) -> None:
        self.update(track(run, findings) if run is not None else Text("no valid run to draw", style="italic"))
