"""Amounts: can they be worked out, is there enough trap, enough fluoride per silyl group,
and is the concentration in the usual range."""

from __future__ import annotations

from .. import amounts, materials
from ..chemistry import molecules
from ..units import fmt_equiv, fmt_mmol, to_canonical
from .context import Context, line_names, listing
from .finding import Finding


def _silyl_count(line) -> int | None:
    if not line.smiles:
        return None
    return molecules.element_count(line.smiles, "Si")


def _fluoride_per_formula(line) -> float | None:
    mat = materials.recognise(line)
    if mat is not None and mat.fluoride_per_formula is not None:
        return float(mat.fluoride_per_formula)
    if line.smiles:
        return float(molecules.fluoride_count(line.smiles))
    return None


def check_amounts_known(ctx: Context) -> list[Finding]:
    if ctx.table_error is None:
        return []
    err = ctx.table_error
    hint = f" {err.hint[0].upper()}{err.hint[1:]}." if err.hint else ""
    msg = f"The amounts cannot be worked out: {err.message}. Checks of equiv, water, concentration and yield were skipped.{hint}"
    return [Finding("amounts-unknown", "warn", msg)]


def _trap_mmol(ctx: Context, line) -> float | None:
    """mmol of a trap line, using the density on file when the trap is used as a co-solvent by volume."""
    row = ctx.row(line.name)
    if row is not None and row.mmol is not None:
        return row.mmol
    mat = materials.recognise(line)
    if line.volume is None or mat is None or mat.density_g_ml is None:
        return None
    smiles = line.smiles or mat.smiles
    mw = amounts.molar_mass(line) or (molecules.molar_mass(smiles) if smiles else None)
    if not mw:
        return None
    return to_canonical(line.volume, "volume") / 1000.0 * mat.density_g_ml.value * 1000.0 / mw


def check_trap_amount(ctx: Context) -> list[Finding]:
    """Too little trap lets the intermediate find itself (dimer) before it finds the trap."""
    traps = ctx.run.lines_by_role("trap")
    if ctx.table is None or not traps:
        return []
    per = [(_trap_mmol(ctx, ln), ln) for ln in traps]
    unknown = [ln.name for n, ln in per if n is None]
    if unknown:
        msg = (
            f"The amount of trap {listing(unknown)} cannot be worked out, so its equiv were not checked. "
            "Give an amount, or a SMILES with a mass, or a density for a neat liquid."
        )
        return [Finding("trap-amount-unknown", "note", msg, unknown)]
    equiv = sum(n for n, _ in per) / ctx.table.limiting_mmol
    names = line_names(traps)
    if equiv < 1.0:
        msg = (
            f"Only {fmt_equiv(equiv)} equiv of trap for the limiting line '{ctx.table.limiting}'. "
            "Below one equiv most of the intermediate cannot be trapped, and what is left dimerises or "
            f"decomposes. Use at least {fmt_equiv(ctx.settings.trap_min_equiv)} equiv."
        )
        return [Finding("trap-low", "stop", msg, names)]
    if equiv < ctx.settings.trap_min_equiv:
        msg = (
            f"{fmt_equiv(equiv)} equiv of trap is below the working minimum of "
            f"{fmt_equiv(ctx.settings.trap_min_equiv)} equiv. The trap has to win a race against dimerisation "
            "and solvent; an excess is what wins it. Raise the trap unless it is precious."
        )
        return [Finding("trap-low", "warn", msg, names)]
    return []


def check_fluoride(ctx: Context) -> list[Finding]:
    """One fluoride per silicon to strip; fewer caps the conversion whatever else is right."""
    run = ctx.run
    precursors = run.lines_by_role("precursor")
    fluorides = run.lines_by_role("fluoride source")
    if not precursors or ctx.table is None:
        return []
    si = [(_silyl_count(ln), ln) for ln in precursors]
    if not fluorides:
        if any(n for n, _ in si):
            msg = (
                "The precursor carries silyl groups but the run has no fluoride source line, so nothing "
                "releases the intermediate. Add the fluoride source (e.g. TBAF or CsF) as a line."
            )
            return [Finding("no-fluoride", "warn", msg, line_names(precursors))]
        return []
    f_per = [(_fluoride_per_formula(ln), ln) for ln in fluorides]
    missing = [ln.name for n, ln in si if n is None] + [ln.name for n, ln in f_per if n is None]
    missing += [ln.name for ln in precursors + fluorides if (r := ctx.row(ln.name)) is None or r.mmol is None]
    if missing:
        msg = (
            f"Fluoride per silyl group cannot be counted: {listing(sorted(set(missing)))} lacks a SMILES or an "
            "amount Trapbook can work out. Add it to have the fluoride equiv checked."
        )
        return [Finding("fluoride-uncounted", "note", msg, sorted(set(missing)))]
    si_mmol = sum(n * ctx.row(ln.name).mmol for n, ln in si)
    if si_mmol <= 0:
        return []
    f_mmol = sum(n * ctx.row(ln.name).mmol for n, ln in f_per)
    ratio = f_mmol / si_mmol
    if ratio < ctx.settings.fluoride_min_per_silyl:
        msg = (
            f"The fluoride source gives {fmt_mmol(f_mmol)} mmol fluoride for {fmt_mmol(si_mmol)} mmol of silyl "
            f"groups on the precursor ({ratio:.2f} per silyl group). Each silyl group removed uses one fluoride, "
            "so at most that fraction of the precursor can react. Use at least one equiv of fluoride per silyl group."
        )
        return [Finding("fluoride-low", "warn", msg, line_names(fluorides) + line_names(precursors))]
    return []


def check_concentration(ctx: Context) -> list[Finding]:
    """Far too dilute and the trap is slow; far too concentrated and the intermediate finds itself."""
    if ctx.table is None or ctx.table.concentration_M is None:
        return []
    c = ctx.table.concentration_M
    lo, hi = ctx.settings.concentration_low_M, ctx.settings.concentration_high_M
    if lo <= c <= hi:
        return []
    side = "dilute" if c < lo else "concentrated"
    effect = (
        "the trap meets the intermediate slowly and side reactions with solvent or water win"
        if c < lo
        else "dimerisation competes with trapping and heat is hard to remove"
    )
    msg = (
        f"The run is at {c:.3g} M in '{ctx.table.limiting}', more {side} than the usual "
        f"{lo:g}-{hi:g} M: {effect}. Check the solvent volume."
    )
    return [Finding("concentration-unusual", "warn", msg)]
