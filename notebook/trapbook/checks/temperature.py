"""Temperature and pressure: each step's temperature against the liquids then in the flask,
and the pressure a sealed vessel builds from vapour and from the gas desilylation releases."""

from __future__ import annotations

from .. import materials
from ..chemistry import molecules
from ..units import fmt_mmol, to_canonical
from .context import Context, join_and, line_names, temp_c
from .finding import Finding

_GAS_CONSTANT = 0.08314462618  # L·bar/(mol·K), CODATA
_TRIMETHYLSILYL = "[Si]([CH3])([CH3])[CH3]"


def _tms_count(line) -> int:
    """Silyl groups that leave as Me3SiF: all Si atoms when a trimethylsilyl is present (an upper bound)."""
    if not line.smiles:
        return 0
    if not molecules.has_substructure(line.smiles, molecules.substructure_query(_TRIMETHYLSILYL)):
        return 0
    return molecules.element_count(line.smiles, "Si")


def _liquids(ctx: Context, index: int) -> list[tuple[object, materials.Material]]:
    """(line, solvent data) for each known liquid in the flask at a step, solution solvents included."""
    out = []
    for line in ctx.timeline.present(ctx.run, index):
        mat = materials.recognise(line)
        if mat is not None and mat.is_solvent:
            out.append((line, mat))
            continue
        sol = materials.solution_solvent(line)
        if sol is not None:
            out.append((line, sol))
    return out


def _by_material(pairs) -> dict[str, tuple[materials.Material, list[str]]]:
    grouped: dict[str, tuple[materials.Material, list[str]]] = {}
    for line, mat in pairs:
        grouped.setdefault(mat.key, (mat, []))[1].append(line.name)
    return grouped


def _vapour_text(mat: materials.Material, t: float) -> str:
    if mat.antoine is None:
        return f"{mat.name}: no vapour-pressure constants on file"
    p = mat.antoine.pressure_bar(t)
    fit = (
        ""
        if mat.antoine.covers(t)
        else (f", extrapolated beyond the fitted {mat.antoine.t_min_c:g} to {mat.antoine.t_max_c:g} °C, so rough")
    )
    return f"{mat.name}: about {p:.1f} bar at {t:g} °C (Antoine; {mat.antoine.source}{fit})"


def _gas_mmol(ctx: Context, index: int) -> float:
    """Me3SiF (bp ~16 °C) released once fluoride meets a trimethylsilyl precursor by this step."""
    present = {ln.name for ln in ctx.timeline.present(ctx.run, index)}
    fl = [ln for ln in ctx.run.lines_by_role("fluoride source") if ln.name in present]
    if not fl:
        return 0.0
    total = 0.0
    for ln in ctx.run.lines_by_role("precursor"):
        row = ctx.row(ln.name)
        if ln.name in present and row is not None and row.mmol:
            total += _tms_count(ln) * row.mmol
    return total


def _liquid_ml(ctx: Context) -> float | None:
    return ctx.table.total_volume_ml if ctx.table is not None else None


def headspace(ctx: Context) -> tuple[float | None, str]:
    """(mL, words) of the gas space above the liquid: the run's vessel less its liquids when
    both are known, else the lab's assumed headspace, said to be assumed. None when full."""
    if ctx.run.vessel is None:
        ml = ctx.settings.headspace_ml
        return ml, f"an assumed {ml:g} mL headspace (give the run's vessel volume to use your own)"
    vessel_ml = to_canonical(ctx.run.vessel, "volume") / 1000.0
    liquid = _liquid_ml(ctx)
    if liquid is None:
        return vessel_ml, f"the {vessel_ml:g} mL vessel (liquid volume unknown, counted empty: an underestimate)"
    space = vessel_ml - liquid
    if space <= 0:
        return None, f"the {vessel_ml:g} mL vessel, which the {liquid:.3g} mL of liquid fills"
    return space, f"the {space:.3g} mL left above {liquid:.3g} mL of liquid in the {vessel_ml:g} mL vessel"


def _gas_text(ctx: Context, mmol: float, t: float) -> str:
    gas = materials.by_key("tmsf")
    space_ml, where = headspace(ctx)
    head = (
        f"Desilylation releases up to {fmt_mmol(mmol)} mmol fluorotrimethylsilane (Me3SiF, bp about "
        f"{gas.bp_c.value:g} °C; {gas.bp_c.source}), a gas at this temperature: "
    )
    if space_ml is None:
        return head + f"{where}, so the gas has no room at all."
    bar = mmol / 1000.0 * _GAS_CONSTANT * (t + 273.15) / (space_ml / 1000.0)
    return head + f"roughly {bar:.1f} bar more in {where} (ideal gas, some dissolves)."


def _pressure_caution() -> str:
    return materials.caution_text(("sealed_pressure",))


def check_temperatures(ctx: Context) -> list[Finding]:
    """Compare every step's temperature with the bp and mp of the liquids then in the flask."""
    out: list[Finding] = []
    s = ctx.settings
    for i, step in enumerate(ctx.run.steps):
        t = temp_c(step)
        if t is None:
            continue
        liquids = _liquids(ctx, i)
        hot = _by_material([(ln, m) for ln, m in liquids if m.bp_c and t > m.bp_c.value + s.bp_margin_c])
        if hot:
            out.append(_hot_finding(ctx, i, step, t, hot))
        low = step.min_temp_c()  # the bottom of a ramp is where a solvent freezes
        cold = _by_material(
            [(ln, m) for ln, m in liquids if ln.role == "solvent" and m.mp_c and low < m.mp_c.value - s.mp_margin_c]
        )
        for mat, names in cold.values():
            msg = (
                f"Step {i + 1} is at {low:g} °C, below the melting point of {mat.name} ({mat.mp_c.value:g} °C; "
                f"{mat.mp_c.source}). The solvent may freeze, stopping stirring and dropping reagents out "
                "of solution. Run warmer, or choose a solvent that stays liquid."
            )
            out.append(Finding("below-mp", "warn", msg, names, [i + 1]))
    return out


def _hot_finding(ctx: Context, i: int, step, t: float, hot) -> Finding:
    names = [n for _, ns in hot.values() for n in ns]
    which = join_and([f"{m.name} (bp {m.bp_c.value:g} °C; {m.bp_c.source})" for m, _ in hot.values()])
    if not step.sealed:
        msg = (
            f"Step {i + 1} is at {t:g} °C in an open vessel, above the boiling point of {which}. The liquid "
            "will boil off, changing the concentration or leaving the flask dry. Fit a reflux condenser, "
            "work below the boiling point, or use a sealed pressure vessel."
        )
        return Finding("above-bp-open", "warn", msg, names, [i + 1])
    vp = "; ".join(_vapour_text(m, t) for m, _ in hot.values())
    gas = _gas_mmol(ctx, i)
    msg = (
        f"Step {i + 1} heats a sealed vessel to {t:g} °C, above the boiling point of {which}, so pressure "
        f"builds. Vapour pressure of the pure liquid: {vp}."
    )
    if gas > 0:
        msg += " On top of that: " + _gas_text(ctx, gas, t)
    return Finding("above-bp-sealed", "warn", msg, names, [i + 1], _pressure_caution())


def check_sealed_gas(ctx: Context) -> list[Finding]:
    """Sealed below the solvent's bp can still build pressure from the Me3SiF the reaction makes."""
    gas = materials.by_key("tmsf")
    out: list[Finding] = []
    for i, step in enumerate(ctx.run.steps):
        t = temp_c(step)
        if not step.sealed or (t is not None and t <= gas.bp_c.value):
            continue
        hot = any(m.bp_c and t is not None and t > m.bp_c.value + ctx.settings.bp_margin_c for _, m in _liquids(ctx, i))
        n = _gas_mmol(ctx, i)
        if hot or n <= 0:
            continue  # above-bp-sealed already says it, or no gas forms
        shown = t if t is not None else 20.0
        at = f" at {t:g} °C" if t is not None else ""
        msg = (
            f"Step {i + 1} is in a sealed vessel{at}. "
            + _gas_text(ctx, n, shown)
            + " Allow for this pressure when choosing the vessel."
        )
        names = line_names(ctx.run.lines_by_role("precursor"))
        out.append(Finding("sealed-gas", "warn", msg, names, [i + 1], _pressure_caution()))
    return out


def check_vessel_fill(ctx: Context) -> list[Finding]:
    """A sealed vessel needs room for vapour and gas: liquids that fill it leave pressure nowhere to go."""
    sealed = [i + 1 for i, st in enumerate(ctx.run.steps) if st.sealed]
    liquid = _liquid_ml(ctx)
    if ctx.run.vessel is None or liquid is None or not sealed:
        return []
    vessel_ml = to_canonical(ctx.run.vessel, "volume") / 1000.0
    pct = 100.0 * liquid / vessel_ml
    limit = ctx.settings.vessel_fill_max_pct
    if pct > 100.0:
        msg = (
            f"The liquids add up to {liquid:.3g} mL, more than the {vessel_ml:g} mL vessel holds. Use a larger "
            "vessel or less solvent, or check the vessel volume and the line volumes."
        )
        return [Finding("vessel-overfilled", "stop", msg, [], sealed, _pressure_caution())]
    if pct > limit:
        msg = (
            f"The sealed vessel ({vessel_ml:g} mL) is {pct:.0f} % full with {liquid:.3g} mL of liquid, above the "
            f"limit of {limit:g} %. Heated liquid expands and its vapour and any gas need the space above it. "
            "Use a larger vessel or less solvent."
        )
        return [Finding("vessel-overfilled", "warn", msg, [], sealed, _pressure_caution())]
    return []
