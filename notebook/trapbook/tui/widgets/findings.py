"""The checks panel: what the bench checks say about the run, most severe first."""

from __future__ import annotations

from rich.text import Text
from textual.widgets import Static

from ..text import SEVERITY_MARK, shown
from ..theme import severity_style, tone


def findings_text(findings: list | None, problem: str | None = None) -> Text:
    out = Text()
    if problem:
        out.append(shown(problem) + "\n", style=f"italic {tone('warn')}")
    if findings is None:
        out.append("checks not available in this installation", style=f"italic {tone('muted')}")
        return out
    if not findings:
        out.append("nothing to flag", style=f"{tone('ok')}")
        return out
    for f in findings:
        style = severity_style(f.severity)
        out.append(f"{SEVERITY_MARK.get(f.severity, '?')} {f.severity:<4} ", style=style)
        out.append(f.code, style=f"bold {style}")
        where = []
        if f.lines:
            where.append(shown(", ".join(f.lines)))
        if f.steps:
            where.append("step " + ", ".join(map(str, f.steps)))
        if where:
            out.append(f"  [{'; '.join(where)}]", style=f"{tone('muted')}")
        out.append("\n  " + shown(f.message, multiline=True) + "\n")
        if f.caution:
            out.append("  caution: ", style=f"bold {tone('attention')}")
            out.append(shown(f.caution, multiline=True) + "\n", style="italic")
    return out


class ChecksPanel(Static):
    def show(self, findings: list | None, problem: str | None = None) -> None:
        self.update(findings_text(findings, problem))
