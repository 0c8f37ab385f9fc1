"""Hazards: the usual caution of each material used, once per run, and fluoride with acid."""

from __future__ import annotations

from .. import materials
from ..records import Run
from .context import Context, line_names, listing
from .finding import Finding


def _materials_used(run: Run) -> dict[str, tuple[materials.Material | None, list[str]]]:
    """Each distinct known material in the run (solution solvents included), with the lines that bring it."""
    used: dict[str, tuple[materials.Material | None, list[str]]] = {}
    for line in run.lines:
        if line.role == "product":
            continue
        for mat in (materials.recognise(line), materials.solution_solvent(line)):
            if mat is not None and mat.hazards:
                used.setdefault(mat.key, (mat, []))[1].append(line.name)
        known = materials.recognise(line)
        if line.role == "fluoride source" and (known is None or "fluoride" not in known.hazards):
            used.setdefault("fluoride:" + line.name.casefold(), (None, []))[1].append(line.name)
    return used


def check_hazards(ctx: Context) -> list[Finding]:
    """One caution per material, once per run, so the reminders stay readable."""
    table = materials.hazards()
    out: list[Finding] = []
    for mat, names in _materials_used(ctx.run).values():
        keys = mat.hazards if mat is not None else ("fluoride",)
        titles = ", ".join(table[k].title for k in keys if k in table)
        label = mat.name if mat is not None else names[0]
        msg = f"{label} ({titles}) is used in this run ({listing(names)}); see the caution before handling it."
        out.append(Finding("material-caution", "note", msg, names, [], materials.caution_text(keys)))
    out += _fluoride_with_acid(ctx)
    return out


def _fluoride_with_acid(ctx: Context) -> list[Finding]:
    run = ctx.run
    fluorides = run.lines_by_role("fluoride source")
    acids = [ln for ln in run.lines if (m := materials.recognise(ln)) is not None and m.category == "acid"]
    if not fluorides or not acids:
        return []
    msg = (
        f"The run puts a fluoride source ({listing(line_names(fluorides))}) together with an acid "
        f"({listing(line_names(acids))}); together they give hydrogen fluoride."
    )
    caution = materials.caution_text(("hf",))
    return [Finding("fluoride-acid", "warn", msg, line_names(fluorides) + line_names(acids), [], caution)]
