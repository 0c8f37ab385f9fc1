"""Water brought in with the reagents: it competes with the trap and slows fluoride."""

from __future__ import annotations

from .. import amounts, materials
from ..units import fmt_mmol, to_canonical
from .context import Context, listing
from .finding import Finding


def _solution_water(ctx: Context, line, row) -> float | None:
    """Water (mmol) in a stock solution: from its stated wt%, else the supplier figure for commercial TBAF."""
    if line.molarity is None or row is None or row.volume_ul is None:
        return None
    if line.water is not None:
        solvent = materials.solution_solvent(line)
        density = solvent.density_g_ml.value if solvent and solvent.density_g_ml else ctx.settings.solution_density_g_ml
        return row.volume_ul / 1000.0 * density * 1000.0 * to_canonical(line.water, "fraction") / amounts.WATER_MW
    mat = materials.recognise(line)
    if mat is None or mat.solution_water_per_fluoride is None or "anhydrous" in line.name.lower():
        return None
    return ctx.settings.tbaf_solution_water_per_fluoride * (row.mmol or 0.0)


def _per_what(ctx: Context) -> tuple[float, str]:
    """(mmol, words) the water is counted against: the precursor, as the threshold is set, even
    when another line (a precious trap) is the limiting one; the limiting line only when no
    precursor amount is known."""
    rows = [(ln.name, ctx.row(ln.name)) for ln in ctx.run.lines_by_role("precursor")]
    known = [(name, row.mmol) for name, row in rows if row is not None and row.mmol]
    if known:
        return sum(mmol for _, mmol in known), listing([name for name, _ in known])
    return ctx.table.limiting_mmol, f"'{ctx.table.limiting}'"


def check_water(ctx: Context) -> list[Finding]:
    """Water protonates or hydrolyses what fluoride releases; the chemist should see how much goes in."""
    if ctx.table is None:
        return []
    found: list[tuple[str, float]] = []
    for line in ctx.run.lines:
        row = ctx.row(line.name)
        if row is None:
            continue
        w = row.water_mmol if row.water_mmol is not None else _solution_water(ctx, line, row)
        if w:
            found.append((line.name, w))
    if not found:
        return []
    total = sum(w for _, w in found)
    basis_mmol, basis = _per_what(ctx)
    per = total / basis_mmol
    parts = ", ".join(f"'{n}' about {fmt_mmol(w)} mmol" for n, w in found)
    severity = "warn" if per > ctx.settings.water_warn_per_precursor else "note"
    msg = (
        f"The reagents bring about {fmt_mmol(total)} mmol water, {per:.2g} mmol per mmol of "
        f"{basis} ({parts}). Water competes with the trap (protonation, hydrolysis of the "
        "leaving group) and slows fluoride. "
    )
    if severity == "warn":
        msg += (
            f"That is above the threshold of {ctx.settings.water_warn_per_precursor:g} mmol water per mmol precursor: "
            "consider an anhydrous fluoride source, such as TBAT, or CsF dried by heating under vacuum and "
            "used with 18-crown-6 or a tetraalkylammonium salt."
        )
    else:
        msg += "An anhydrous fluoride source (TBAT, or dried CsF) avoids it if yields are low."
    return [Finding("water-brought", severity, msg, [n for n, _ in found])]
