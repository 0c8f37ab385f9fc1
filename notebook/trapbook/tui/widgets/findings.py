"""The checks panel: what the bench checks say about the run, most severe first."""

from __future__ import annotations

from rich.text import Text
from textual.widgets import Static

from ..text import SEVERITY_MARK, SEVERITY_STYLE, shown


def findings_text(findings: list | None, problem: str | None = None) -> Text:
    out = Text()
    if problem:
        out.append(shown(problem) + "\n", style="italic #f2c14e")
    if findings is None:
        out.append("checks not available in this installation", style="italic #8fa3b8")
        return out
    if not findings:
        out.append("nothing to flag", style="#9be564")
        return out
    for f in findings:
        style = SEVERITY_STYLE.get(f.severity, "")
        out.append(f"{SEVERITY_MARK.get(f.severity, '?')} {f.severity:<4} ", style=style)
        out.append(f.code, style=f"bold {style}")
        where = []
        if f.lines:
            where.append(shown(", ".join(f.lines)))
        if f.steps:
            where.append("step " + ", ".join(map(str, f.steps)))
        if where:
            out.append(f"  [{'; '.join(where)}]", style="#8fa3b8")
        out.append("\n  " + shown(f.message, multiline=True) + "\n")
        if f.caution:
            out.append("  caution: ", style="bold #ff9f1c")
            out.append(shown(f.caution, multiline=True) + "\n", style="italic")
    return out


class ChecksPanel(Static):
    def show(self, findings: list | None, problem: str | None = None) -> None:
        self.update(findings_text(findings, problem))
