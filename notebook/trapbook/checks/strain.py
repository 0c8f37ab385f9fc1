"""Strain and alignment: tie the judged stability of the intermediate to how the run tries
to catch it, and flag a precursor whose Si-C and C-X bonds are poorly aligned."""

from __future__ import annotations

from ..stability import judge
from .addition_order import trap_timing
from .context import Context, line_names
from .finding import Finding


def check_strain(ctx: Context) -> list[Finding]:
    """Tie the judged stability of the intermediate to how the run tries to catch it.

    The class comes from `stability.judge` alone: a fast-tier prescreen, a failed result or
    a kind without classes concludes nothing here, and "may survive without a trap" is said
    only when the judgement says no trap is needed.
    """
    verdict = judge(ctx.strain)
    if verdict is None:
        return []
    traps = ctx.run.lines_by_role("trap")
    how = f" ({verdict.words} Source: {verdict.source})"
    if verdict.needs_trap:
        if not traps:
            msg = (
                f"The intermediate needs a trap{how}. This run has none, so it will dimerise or decompose. "
                "Add a trap (e.g. furan or another diene) before the fluoride source."
            )
            return [Finding("strain-untrapped", "stop", msg)]
        if trap_timing(ctx) == "late":
            msg = (
                f"The intermediate needs a trap{how}, and the trap goes in after the fluoride source, so there "
                "is nothing in the flask to catch it when it forms. Add the trap first."
            )
            return [Finding("strain-untrapped", "stop", msg, line_names(traps))]
        return []
    msg = (
        f"The intermediate is judged {verdict.stability}{how}. It may survive without a trap; a run without "
        "one, with the product isolated or observed directly, may be worth trying."
    )
    return [Finding("strain-isolable", "note", msg)]


def check_alignment(ctx: Context) -> list[Finding]:
    """A misaligned diastereomer may sit untouched even under forcing conditions."""
    verdict = (ctx.alignment or {}).get("verdict")
    if not isinstance(verdict, str) or not verdict.strip().lower().startswith("poor"):
        return []
    dih = ctx.alignment.get("weighted_dihedral_deg", ctx.alignment.get("dihedral_deg"))
    angle = f" (Si-C-C-X dihedral about {dih:.0f}°)" if isinstance(dih, (int, float)) else ""
    msg = (
        f"The precursor's C-Si bond and C-X bond are poorly aligned{angle}. Fluoride-triggered elimination "
        "needs them antiperiplanar or close to it, so this diastereomer may not react even when heated "
        "for long. Check which diastereomer you have, or make the aligned one."
    )
    return [Finding("precursor-misaligned", "warn", msg, line_names(ctx.run.lines_by_role("precursor")))]
