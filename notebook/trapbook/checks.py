"""Bench checks: read a run (planned or done) and say what a careful chemist would.

A trapping run fails in a few well-known ways — the trap goes in after the fluoride, the
fluoride is short, the solvent boils off or freezes, the flask is sealed and heated past
the boiling point — and a finished run can carry numbers that cannot be true (a yield
over 100 %). These checks catch such things before the flask is set up and when the
result is written down. They are pure functions of the run (and, optionally, of the
strain engine's result dicts): no database, no UI, no printing, and a valid run never
makes them raise. Judgement thresholds are `CheckSettings`, which a lab can change.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field
from typing import Any, Callable

from . import amounts, materials
from .chemistry import molecules
from .errors import ChemistryError, TrapbookError
from .records import Run, load_run, parse_ratio
from .units import fmt_equiv, fmt_mmol, to_canonical

SEVERITIES = ("stop", "warn", "note")
_RANK = {s: i for i, s in enumerate(SEVERITIES)}

#: Closing sentence of every safety caution: the check is a reminder, not an assessment.
DEFER = ("Follow the SDS, your local rules and your lab's safety officer; "
         "this reminder does not replace a risk assessment.")

_GAS_CONSTANT = 0.08314462618  # L·bar/(mol·K), CODATA
_TRIMETHYLSILYL = "[Si]([CH3])([CH3])[CH3]"

CHECK_CODES: dict[str, str] = {
    "amounts-unknown": "warn: the reagent table cannot be worked out, so amount checks were skipped",
    "trap-late": "stop: the trap was added after the fluoride source met the precursor",
    "trap-order-unknown": "warn: the steps do not say when the trap went in relative to the fluoride source",
    "no-trap": "warn: the run has no trap line",
    "strain-untrapped": "stop: the intermediate is computed unstable and nothing is in the flask to catch it",
    "strain-isolable": "note: the intermediate is computed isolable, so trapping may not be needed",
    "precursor-misaligned": "warn: the precursor's Si-C and C-X bonds are poorly aligned for elimination",
    "trap-low": "stop below 1 equiv of trap, warn below the working minimum",
    "trap-amount-unknown": "note: the amount of trap cannot be worked out",
    "no-fluoride": "warn: a silyl precursor but no fluoride source line",
    "fluoride-low": "warn: less than one fluoride per silyl group to remove",
    "fluoride-uncounted": "note: fluoride per silyl group cannot be counted (a SMILES is missing)",
    "water-brought": "note, or warn above the threshold: water brought in with the reagents, per mmol precursor",
    "above-bp-open": "warn: a step heats an open flask above a liquid's boiling point",
    "above-bp-sealed": "warn with pressure caution: a sealed vessel heated above a liquid's boiling point",
    "sealed-gas": "warn with pressure caution: desilylation releases a gas in a sealed vessel",
    "below-mp": "warn: a step is colder than the solvent's melting point",
    "concentration-unusual": "warn: the concentration of the limiting line is far from the usual range",
    "step-unknown-line": "warn: a step adds a line the run does not have",
    "line-never-added": "warn: a line is never added in any step",
    "step-no-temperature": "note: steps without a temperature",
    "step-no-time": "note: steps without a hold or addition time",
    "yield-over-100": "warn: a yield above 100 %",
    "mass-balance-high": "warn: products plus recovered precursor above the mass-balance limit",
    "qnmr-no-standard": "warn: qNMR integrals without an internal standard to refer them to",
    "yield-unknown": "note: a product's yield cannot be worked out",
    "ee-out-of-range": "warn: an ee outside 0-100 %",
    "ee-er-mismatch": "warn: the recorded ee and the ee from the er disagree",
    "ratio-order": "note: a dr or er written minor first",
    "fluoride-acid": "warn with caution: fluoride and an acid in the same run give hydrogen fluoride",
    "material-caution": "note with caution: the usual hazards of a material used, once per material",
    "check-incomplete": "note: one check could not finish on this run's data",
}


@dataclass
class Finding:
    """One thing the chemist should know about a run, in words they can act on."""

    code: str
    severity: str
    message: str
    lines: list[str] = field(default_factory=list)
    steps: list[int] = field(default_factory=list)
    caution: str | None = None

    def __post_init__(self) -> None:
        if self.severity not in _RANK:
            raise TrapbookError(f"finding severity '{self.severity}' is not one of {', '.join(SEVERITIES)}")
        if self.code not in CHECK_CODES:
            raise TrapbookError(f"finding code '{self.code}' is not a known check code")

    def to_dict(self) -> dict:
        return {"code": self.code, "severity": self.severity, "message": self.message,
                "lines": list(self.lines), "steps": list(self.steps), "caution": self.caution}


# --- settings -------------------------------------------------------------------------------

#: Where each default threshold comes from; shown in docs and kept next to the values.
SETTING_SOURCES: dict[str, str] = {
    "trap_min_equiv": "common practice, no source",
    "fluoride_min_per_silyl": "stoichiometry: one fluoride is consumed per Si-C bond cleaved",
    "water_warn_per_precursor": "common practice, no source",
    "tbaf_solution_water_per_fluoride": "REFERENCE.md: commercial 1.0 M TBAF in THF, about 5 wt% water (supplier specification, from memory)",
    "solution_density_g_ml": "common practice, no source (about the density of a 1 M salt solution in THF)",
    "concentration_low_M": "common practice, no source",
    "concentration_high_M": "common practice, no source",
    "bp_margin_c": "common practice, no source",
    "mp_margin_c": "common practice, no source",
    "yield_max_pct": "definition of yield",
    "mass_balance_max_pct": "common practice, no source (about the error of weighing and NMR integration)",
    "ee_tolerance_pct": "common practice, no source (about the error of a chiral HPLC integration)",
    "headspace_ml": "common practice, no source (a typical pressure tube headspace, used only for the gas estimate)",
}


@dataclass
class CheckSettings:
    """Thresholds a lab may set differently; stored as a notebook-level setting.

    Defaults and their sources are in `SETTING_SOURCES`.
    """

    trap_min_equiv: float = 2.0
    fluoride_min_per_silyl: float = 1.0
    water_warn_per_precursor: float = 1.0
    tbaf_solution_water_per_fluoride: float = 2.5
    solution_density_g_ml: float = 0.90
    concentration_low_M: float = 0.01
    concentration_high_M: float = 1.0
    bp_margin_c: float = 0.0
    mp_margin_c: float = 0.0
    yield_max_pct: float = 100.0
    mass_balance_max_pct: float = 105.0
    ee_tolerance_pct: float = 2.0
    headspace_ml: float = 10.0

    def __post_init__(self) -> None:
        for f in dataclasses.fields(self):
            v = getattr(self, f.name)
            if isinstance(v, bool) or not isinstance(v, (int, float)) or v != v or v in (float("inf"), float("-inf")):
                raise TrapbookError(f"check setting '{f.name}' must be a number (got {v!r})", "give a plain number")
            setattr(self, f.name, float(v))
        positive = [f.name for f in dataclasses.fields(self) if not f.name.endswith("_margin_c")]
        bad = [n for n in positive if getattr(self, n) <= 0]
        if bad:
            raise TrapbookError(f"check settings must be greater than zero: {', '.join(bad)}", "give positive numbers")
        if self.concentration_low_M >= self.concentration_high_M:
            raise TrapbookError("concentration_low_M must be below concentration_high_M",
                                f"got {self.concentration_low_M:g} M and {self.concentration_high_M:g} M")

    def to_dict(self) -> dict:
        return dataclasses.asdict(self)

    @classmethod
    def from_dict(cls, data: Any) -> "CheckSettings":
        """Settings from a stored dict; missing keys keep their defaults, unknown keys are an error."""
        if data is None:
            return cls()
        if not isinstance(data, dict):
            raise TrapbookError("check settings must be a JSON object of name: number", f"got {type(data).__name__}")
        known = {f.name for f in dataclasses.fields(cls)}
        unknown = sorted(set(data) - known)
        if unknown:
            raise TrapbookError(f"unknown check setting(s): {', '.join(map(str, unknown))}",
                                f"known settings are: {', '.join(sorted(known))}")
        return cls(**data)


# --- what happened when ---------------------------------------------------------------------


@dataclass
class _Timeline:
    """When each line first went into the flask (0-based step index), from the ordered steps."""

    first: dict[str, int]
    unknown: dict[str, list[int]]  # name as written -> 1-based steps

    def step_of(self, name: str) -> int | None:
        return self.first.get(name.casefold())

    def present(self, run: Run, index: int) -> list:
        """Lines in the flask during step `index`; a line no step adds counts as present (the cautious view)."""
        return [ln for ln in run.lines
                if (s := self.step_of(ln.name)) is None or s <= index]


def _timeline(run: Run) -> _Timeline:
    first: dict[str, int] = {}
    unknown: dict[str, list[int]] = {}
    for i, step in enumerate(run.steps):
        for name in step.add:
            line = run.line(name)
            if line is None:
                unknown.setdefault(name, []).append(i + 1)
                continue
            first.setdefault(line.name.casefold(), i)
    return _Timeline(first, unknown)


@dataclass
class _Context:
    run: Run
    settings: CheckSettings
    strain: dict | None
    alignment: dict | None
    timeline: _Timeline
    table: amounts.AmountTable | None = None
    table_error: TrapbookError | None = None

    def row(self, name: str):
        return self.table.line(name) if self.table is not None else None


# --- helpers --------------------------------------------------------------------------------


def _names(lines) -> list[str]:
    return [ln.name for ln in lines]


def _and(parts: list[str]) -> str:
    if len(parts) <= 1:
        return "".join(parts)
    return ", ".join(parts[:-1]) + " and " + parts[-1]


def _listing(names: list[str]) -> str:
    return _and([f"'{n}'" for n in names])


def _temp_c(step) -> float | None:
    return to_canonical(step.temperature, "temperature") if step.temperature is not None else None


def _first_step(tl: _Timeline, lines) -> int | None:
    found = [s for ln in lines if (s := tl.step_of(ln.name)) is not None]
    return min(found) if found else None


def _silyl_count(line) -> int | None:
    if not line.smiles:
        return None
    return molecules.element_count(line.smiles, "Si")


def _tms_count(line) -> int:
    """Silyl groups that leave as Me3SiF: all Si atoms when a trimethylsilyl is present (an upper bound)."""
    if not line.smiles:
        return 0
    if not molecules.has_substructure(line.smiles, molecules.substructure_query(_TRIMETHYLSILYL)):
        return 0
    return molecules.element_count(line.smiles, "Si")


def _fluoride_per_formula(line) -> float | None:
    mat = materials.recognise(line)
    if mat is not None and mat.fluoride_per_formula is not None:
        return float(mat.fluoride_per_formula)
    if line.smiles:
        return float(molecules.fluoride_count(line.smiles))
    return None


# --- trap order and strain ------------------------------------------------------------------


def _trap_timing(ctx: _Context) -> str:
    """'in time', 'late', 'unknown' or 'n/a' (no trap or no fluoride to race against)."""
    run, tl = ctx.run, ctx.timeline
    traps = run.lines_by_role("trap")
    fluorides = run.lines_by_role("fluoride source")
    if not traps or not fluorides:
        return "n/a"
    t_trap = _first_step(tl, traps)
    t_f = _first_step(tl, fluorides)
    precursors = run.lines_by_role("precursor")
    t_p = _first_step(tl, precursors) if precursors else t_f
    if t_trap is None or t_f is None or t_p is None:
        return "unknown"
    return "late" if t_trap > max(t_f, t_p) else "in time"


def check_trap_order(ctx: _Context) -> list[Finding]:
    """The check users asked for: an intermediate that lives microseconds cannot wait for its trap."""
    timing = _trap_timing(ctx)
    run, tl = ctx.run, ctx.timeline
    traps = run.lines_by_role("trap")
    fluorides = run.lines_by_role("fluoride source")
    if timing == "late":
        t_f = _first_step(tl, fluorides)
        precursors = run.lines_by_role("precursor")
        meet = max(t_f, _first_step(tl, precursors)) if precursors else t_f
        t_trap = _first_step(tl, traps)
        msg = (f"The trap was added after the fluoride source. The fluoride source ({_listing(_names(fluorides))}) "
               f"meets the precursor in step {meet + 1}, but the trap ({_listing(_names(traps))}) goes in only in "
               f"step {t_trap + 1}. The intermediate forms as soon as fluoride reaches the precursor and lives far too "
               "briefly to wait, so it dimerises or decomposes before any trap arrives. Put the trap in the flask "
               "with the precursor before the fluoride source, or add them in the same step.")
        return [Finding("trap-late", "stop", msg, _names(traps) + _names(fluorides), sorted({meet + 1, t_trap + 1}))]
    if timing == "unknown":
        if not run.steps:
            why = "the run has no steps"
        else:
            missing = [ln.name for ln in traps + fluorides + run.lines_by_role("precursor") if tl.step_of(ln.name) is None]
            why = f"no step adds {_listing(missing)}"
        msg = (f"Trapbook cannot tell whether the trap was in the flask before the fluoride source: {why}. "
               "A late trap is the commonest reason a trapping run gives nothing. Record the steps in order, "
               "naming the step in which the trap, the precursor and the fluoride source each went in.")
        return [Finding("trap-order-unknown", "warn", msg, _names(traps) + _names(fluorides))]
    if not traps and ctx.run.lines_by_role("precursor"):
        cls = (ctx.strain or {}).get("stability_class")
        if cls in ("isolable", "hyperstable", "unstable"):
            return []  # the strain checks speak for this case
        msg = ("The run has no trap line. A strained intermediate released without a trap usually ends as "
               "dimers or decomposition products. Add the trap as a line (role 'trap'), or note that this "
               "is a control run.")
        return [Finding("no-trap", "warn", msg)]
    return []


def _strain_words(strain: dict) -> str:
    """' (olefin strain 24.1 kcal/mol, fast tier)' or '' when the engine gave no number."""
    os_ = strain.get("olefin_strain_kcal_mol")
    if not isinstance(os_, (int, float)) or isinstance(os_, bool):
        return ""
    tier = strain.get("tier")
    return f" (olefin strain {os_:.1f} kcal/mol" + (f", {tier} tier)" if tier else ")")


def check_strain(ctx: _Context) -> list[Finding]:
    """Tie the computed stability of the intermediate to how the run tries to catch it."""
    if not ctx.strain:
        return []
    cls = ctx.strain.get("stability_class")
    how = _strain_words(ctx.strain)
    traps = ctx.run.lines_by_role("trap")
    if cls == "unstable":
        if not traps:
            msg = (f"The intermediate is computed unstable{how}: it is known only by trapping, and this run has "
                   "no trap. Without one it will dimerise or decompose. Add a trap (e.g. furan or another diene) "
                   "before the fluoride source.")
            return [Finding("strain-untrapped", "stop", msg)]
        if _trap_timing(ctx) == "late":
            msg = (f"The intermediate is computed unstable{how} and the trap goes in after the fluoride source, "
                   "so there is nothing in the flask to catch it when it forms. Add the trap first.")
            return [Finding("strain-untrapped", "stop", msg, _names(traps))]
    if cls in ("isolable", "hyperstable"):
        msg = (f"The intermediate is computed {cls}{how}. It may survive without a trap; a run without one, "
               "with the product isolated or observed directly, may be worth trying.")
        return [Finding("strain-isolable", "note", msg)]
    return []


def check_alignment(ctx: _Context) -> list[Finding]:
    """A misaligned diastereomer may sit untouched even under forcing conditions."""
    verdict = (ctx.alignment or {}).get("verdict")
    if not isinstance(verdict, str) or not verdict.strip().lower().startswith("poor"):
        return []
    dih = ctx.alignment.get("weighted_dihedral_deg", ctx.alignment.get("dihedral_deg"))
    angle = f" (Si-C-C-X dihedral about {dih:.0f}°)" if isinstance(dih, (int, float)) else ""
    msg = (f"The precursor's C-Si bond and C-X bond are poorly aligned{angle}. Fluoride-triggered elimination "
           "needs them antiperiplanar or close to it, so this diastereomer may not react even when heated "
           "for long. Check which diastereomer you have, or make the aligned one.")
    return [Finding("precursor-misaligned", "warn", msg, _names(ctx.run.lines_by_role("precursor")))]


# --- amounts --------------------------------------------------------------------------------


def check_amounts_known(ctx: _Context) -> list[Finding]:
    if ctx.table_error is None:
        return []
    err = ctx.table_error
    hint = f" {err.hint[0].upper()}{err.hint[1:]}." if err.hint else ""
    msg = (f"The amounts cannot be worked out: {err.message}. Checks of equiv, water, concentration and "
           f"yield were skipped.{hint}")
    return [Finding("amounts-unknown", "warn", msg)]


def _trap_mmol(ctx: _Context, line) -> float | None:
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


def check_trap_amount(ctx: _Context) -> list[Finding]:
    """Too little trap lets the intermediate find itself (dimer) before it finds the trap."""
    traps = ctx.run.lines_by_role("trap")
    if ctx.table is None or not traps:
        return []
    per = [(_trap_mmol(ctx, ln), ln) for ln in traps]
    unknown = [ln.name for n, ln in per if n is None]
    if unknown:
        msg = (f"The amount of trap {_listing(unknown)} cannot be worked out, so its equiv were not checked. "
               "Give an amount, or a SMILES with a mass, or a density for a neat liquid.")
        return [Finding("trap-amount-unknown", "note", msg, unknown)]
    equiv = sum(n for n, _ in per) / ctx.table.limiting_mmol
    names = _names(traps)
    if equiv < 1.0:
        msg = (f"Only {fmt_equiv(equiv)} equiv of trap for the limiting line '{ctx.table.limiting}'. "
               "Below one equiv most of the intermediate cannot be trapped, and what is left dimerises or "
               f"decomposes. Use at least {fmt_equiv(ctx.settings.trap_min_equiv)} equiv.")
        return [Finding("trap-low", "stop", msg, names)]
    if equiv < ctx.settings.trap_min_equiv:
        msg = (f"{fmt_equiv(equiv)} equiv of trap is below the working minimum of "
               f"{fmt_equiv(ctx.settings.trap_min_equiv)} equiv. The trap has to win a race against dimerisation "
               "and solvent; an excess is what wins it. Raise the trap unless it is precious.")
        return [Finding("trap-low", "warn", msg, names)]
    return []


def check_fluoride(ctx: _Context) -> list[Finding]:
    """One fluoride per silicon to strip; fewer caps the conversion whatever else is right."""
    run = ctx.run
    precursors = run.lines_by_role("precursor")
    fluorides = run.lines_by_role("fluoride source")
    if not precursors or ctx.table is None:
        return []
    si = [(_silyl_count(ln), ln) for ln in precursors]
    if not fluorides:
        if any(n for n, _ in si):
            msg = ("The precursor carries silyl groups but the run has no fluoride source line, so nothing "
                   "releases the intermediate. Add the fluoride source (e.g. TBAF or CsF) as a line.")
            return [Finding("no-fluoride", "warn", msg, _names(precursors))]
        return []
    f_per = [(_fluoride_per_formula(ln), ln) for ln in fluorides]
    missing = [ln.name for n, ln in si if n is None] + [ln.name for n, ln in f_per if n is None]
    missing += [ln.name for ln in precursors + fluorides if (r := ctx.row(ln.name)) is None or r.mmol is None]
    if missing:
        msg = (f"Fluoride per silyl group cannot be counted: {_listing(sorted(set(missing)))} lacks a SMILES or an "
               "amount Trapbook can work out. Add it to have the fluoride equiv checked.")
        return [Finding("fluoride-uncounted", "note", msg, sorted(set(missing)))]
    si_mmol = sum(n * ctx.row(ln.name).mmol for n, ln in si)
    if si_mmol <= 0:
        return []
    f_mmol = sum(n * ctx.row(ln.name).mmol for n, ln in f_per)
    ratio = f_mmol / si_mmol
    if ratio < ctx.settings.fluoride_min_per_silyl:
        msg = (f"The fluoride source gives {fmt_mmol(f_mmol)} mmol fluoride for {fmt_mmol(si_mmol)} mmol of silyl "
               f"groups on the precursor ({ratio:.2f} per silyl group). Each silyl group removed uses one fluoride, "
               "so at most that fraction of the precursor can react. Use at least one equiv of fluoride per silyl group.")
        return [Finding("fluoride-low", "warn", msg, _names(fluorides) + _names(precursors))]
    return []


def _solution_water(ctx: _Context, line, row) -> float | None:
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


def check_water(ctx: _Context) -> list[Finding]:
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
    per = total / ctx.table.limiting_mmol
    parts = ", ".join(f"'{n}' about {fmt_mmol(w)} mmol" for n, w in found)
    severity = "warn" if per > ctx.settings.water_warn_per_precursor else "note"
    msg = (f"The reagents bring about {fmt_mmol(total)} mmol water, {per:.2g} mmol per mmol of "
           f"'{ctx.table.limiting}' ({parts}). Water competes with the trap (protonation, hydrolysis of the "
           "leaving group) and slows fluoride. ")
    if severity == "warn":
        msg += (f"That is above the threshold of {ctx.settings.water_warn_per_precursor:g} mmol water per mmol precursor: "
                "consider an anhydrous fluoride source, such as TBAT, or CsF dried by heating under vacuum and "
                "used with 18-crown-6 or a tetraalkylammonium salt.")
    else:
        msg += "An anhydrous fluoride source (TBAT, or dried CsF) avoids it if yields are low."
    return [Finding("water-brought", severity, msg, [n for n, _ in found])]


def check_concentration(ctx: _Context) -> list[Finding]:
    """Far too dilute and the trap is slow; far too concentrated and the intermediate finds itself."""
    if ctx.table is None or ctx.table.concentration_M is None:
        return []
    c = ctx.table.concentration_M
    lo, hi = ctx.settings.concentration_low_M, ctx.settings.concentration_high_M
    if lo <= c <= hi:
        return []
    side = "dilute" if c < lo else "concentrated"
    effect = ("the trap meets the intermediate slowly and side reactions with solvent or water win"
              if c < lo else "dimerisation competes with trapping and heat is hard to remove")
    msg = (f"The run is at {c:.3g} M in '{ctx.table.limiting}', more {side} than the usual "
           f"{lo:g}-{hi:g} M: {effect}. Check the solvent volume.")
    return [Finding("concentration-unusual", "warn", msg)]


# --- temperature against the liquids in the flask -------------------------------------------


def _liquids(ctx: _Context, index: int) -> list[tuple[object, materials.Material]]:
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
    fit = "" if mat.antoine.covers(t) else (
        f", extrapolated beyond the fitted {mat.antoine.t_min_c:g} to {mat.antoine.t_max_c:g} °C, so rough")
    return f"{mat.name}: about {p:.1f} bar at {t:g} °C (Antoine; {mat.antoine.source}{fit})"


def _gas_mmol(ctx: _Context, index: int) -> float:
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


def _gas_text(ctx: _Context, mmol: float, t: float) -> str:
    gas = materials.by_key("tmsf")
    bar = mmol / 1000.0 * _GAS_CONSTANT * (t + 273.15) / (ctx.settings.headspace_ml / 1000.0)
    return (f"Desilylation releases up to {fmt_mmol(mmol)} mmol fluorotrimethylsilane (Me3SiF, bp about "
            f"{gas.bp_c.value:g} °C; {gas.bp_c.source}), a gas at this temperature: roughly {bar:.1f} bar more in "
            f"a {ctx.settings.headspace_ml:g} mL headspace (ideal gas, some dissolves).")


def _pressure_caution() -> str:
    return ("Use a vessel rated for the pressure and temperature, behind a blast shield, filled to no more than "
            "about half its volume, and let it cool fully before opening. " + DEFER)


def check_temperatures(ctx: _Context) -> list[Finding]:
    """Compare every step's temperature with the bp and mp of the liquids then in the flask."""
    out: list[Finding] = []
    s = ctx.settings
    for i, step in enumerate(ctx.run.steps):
        t = _temp_c(step)
        if t is None:
            continue
        liquids = _liquids(ctx, i)
        hot = _by_material([(ln, m) for ln, m in liquids if m.bp_c and t > m.bp_c.value + s.bp_margin_c])
        if hot:
            out.append(_hot_finding(ctx, i, step, t, hot))
        cold = _by_material([(ln, m) for ln, m in liquids if ln.role == "solvent" and m.mp_c
                             and t < m.mp_c.value - s.mp_margin_c])
        for mat, names in cold.values():
            msg = (f"Step {i + 1} is at {t:g} °C, below the melting point of {mat.name} ({mat.mp_c.value:g} °C; "
                   f"{mat.mp_c.source}). The solvent may freeze, stopping stirring and dropping reagents out "
                   "of solution. Run warmer, or choose a solvent that stays liquid.")
            out.append(Finding("below-mp", "warn", msg, names, [i + 1]))
    return out


def _hot_finding(ctx: _Context, i: int, step, t: float, hot) -> Finding:
    names = [n for _, ns in hot.values() for n in ns]
    which = _and([f"{m.name} (bp {m.bp_c.value:g} °C; {m.bp_c.source})" for m, _ in hot.values()])
    if not step.sealed:
        msg = (f"Step {i + 1} is at {t:g} °C in an open vessel, above the boiling point of {which}. The liquid "
               "will boil off, changing the concentration or leaving the flask dry. Fit a reflux condenser, "
               "work below the boiling point, or use a sealed pressure vessel.")
        return Finding("above-bp-open", "warn", msg, names, [i + 1])
    vp = "; ".join(_vapour_text(m, t) for m, _ in hot.values())
    gas = _gas_mmol(ctx, i)
    msg = (f"Step {i + 1} heats a sealed vessel to {t:g} °C, above the boiling point of {which}, so pressure "
           f"builds. Vapour pressure of the pure liquid: {vp}.")
    if gas > 0:
        msg += " On top of that: " + _gas_text(ctx, gas, t)
    return Finding("above-bp-sealed", "warn", msg, names, [i + 1], _pressure_caution())


def check_sealed_gas(ctx: _Context) -> list[Finding]:
    """Sealed below the solvent's bp can still build pressure from the Me3SiF the reaction makes."""
    gas = materials.by_key("tmsf")
    out: list[Finding] = []
    for i, step in enumerate(ctx.run.steps):
        t = _temp_c(step)
        if not step.sealed or (t is not None and t <= gas.bp_c.value):
            continue
        hot = any(m.bp_c and t is not None and t > m.bp_c.value + ctx.settings.bp_margin_c for _, m in _liquids(ctx, i))
        n = _gas_mmol(ctx, i)
        if hot or n <= 0:
            continue  # above-bp-sealed already says it, or no gas forms
        shown = t if t is not None else 20.0
        at = f" at {t:g} °C" if t is not None else ""
        msg = (f"Step {i + 1} is in a sealed vessel{at}. " + _gas_text(ctx, n, shown)
               + " Allow for this pressure when choosing the vessel.")
        names = _names(ctx.run.lines_by_role("precursor"))
        out.append(Finding("sealed-gas", "warn", msg, names, [i + 1], _pressure_caution()))
    return out


# --- steps ----------------------------------------------------------------------------------


def check_steps(ctx: _Context) -> list[Finding]:
    """Steps are how a run is repeated; gaps and misnamed lines make it unrepeatable."""
    run, tl = ctx.run, ctx.timeline
    out: list[Finding] = []
    for name, steps in tl.unknown.items():
        msg = (f"Step {', '.join(map(str, steps))} adds '{name}', which is not one of the run's lines. "
               "Fix the spelling in the step or add the line, or Trapbook cannot follow what went in when.")
        out.append(Finding("step-unknown-line", "warn", msg, [name], steps))
    if run.steps:
        never = [ln.name for ln in run.lines
                 if ln.role not in ("product", "internal standard", "trap") and tl.step_of(ln.name) is None]
        if never:
            msg = (f"No step adds {_listing(never)}. Say in which step each line went in, so the order of "
                   "additions (and so the run) can be repeated.")
            out.append(Finding("line-never-added", "warn", msg, never))
    no_temp = [i + 1 for i, st in enumerate(run.steps) if st.temperature is None]
    if no_temp:
        msg = (f"Step {', '.join(map(str, no_temp))} has no temperature. Record it (room temperature is "
               "about 23 °C) so the run can be repeated and the solvent checks can run.")
        out.append(Finding("step-no-temperature", "note", msg, [], no_temp))
    no_time = [i + 1 for i, st in enumerate(run.steps)
               if st.hold is None and st.over is None and not (st.add and i + 1 < len(run.steps))]
    if no_time:
        msg = (f"Step {', '.join(map(str, no_time))} has no hold or addition time. Record how long the flask "
               "was kept at that temperature.")
        out.append(Finding("step-no-time", "note", msg, [], no_time))
    return out


# --- outcome --------------------------------------------------------------------------------


def _qnmr_unreferenced(run: Run, res) -> bool:
    q = res.qnmr
    if q is None or q.standard_amount is not None or q.standard is not None:
        return False
    return len(run.lines_by_role("internal standard")) != 1


def _one_product_yield(ctx: _Context, res):
    """The yield of one product, so one bad record does not hide the others."""
    sub = ctx.run.model_copy(update={"outcome": ctx.run.outcome.model_copy(update={"products": [res]})})
    return amounts.product_yields(sub, ctx.table)[0]


def check_outcome(ctx: _Context) -> list[Finding]:
    """Numbers that cannot be true are usually a wrong scale, molar mass or standard amount."""
    run = ctx.run
    if run.outcome is None or ctx.table is None:
        return []
    out: list[Finding] = []
    s = ctx.settings
    for res in run.outcome.products:
        if _qnmr_unreferenced(run, res):
            n = len(run.lines_by_role("internal standard"))
            why = "no internal standard line" if n == 0 else f"{n} internal standard lines and the qNMR names none"
            msg = (f"Product '{res.product}' has qNMR integrals but {why}, so the NMR yield cannot be worked out. "
                   "Add the internal standard as a line (with its mass and SMILES) or name it in the qNMR record.")
            out.append(Finding("qnmr-no-standard", "warn", msg, [res.product]))
            res = res.model_copy(update={"qnmr": None})
        try:
            py = _one_product_yield(ctx, res)
        except TrapbookError as exc:
            msg = f"The yield of '{res.product}' cannot be worked out: {exc.message}."
            out.append(Finding("yield-unknown", "note", msg, [res.product]))
            continue
        out += _yield_findings(res.product, py, s) + _selectivity_findings(res, py, s)
    out += _mass_balance(ctx)
    return out


def _yield_findings(name: str, py, s: CheckSettings) -> list[Finding]:
    out = []
    for kind, pct in (("isolated", py.isolated_yield_pct), ("NMR", py.nmr_yield_pct)):
        if pct is not None and pct > s.yield_max_pct:
            msg = (f"The {kind} yield of '{name}' comes to {pct:.0f} %, above {s.yield_max_pct:g} %. Usually the "
                   "scale, the product's SMILES (molar mass), residual solvent, or the standard's amount is off. "
                   "Check them before trusting the number.")
            out.append(Finding("yield-over-100", "warn", msg, [name]))
    return out


def _selectivity_findings(res, py, s: CheckSettings) -> list[Finding]:
    out = []
    if res.ee is not None and not 0 <= res.ee <= 100:
        msg = (f"The ee of '{res.product}' is recorded as {res.ee:g} %; ee runs from 0 to 100 %. Record it as a "
               "positive number (name the major enantiomer in a note), or give the er instead.")
        out.append(Finding("ee-out-of-range", "warn", msg, [res.product]))
    if res.ee is not None and res.er and py.ee_pct is not None and abs(abs(res.ee) - py.ee_pct) > s.ee_tolerance_pct:
        msg = (f"'{res.product}' has er {res.er}, which gives {py.ee_pct:.1f} % ee, but the ee is recorded as "
               f"{res.ee:g} %. ee = (er - 1)/(er + 1); one of the two is wrong. Correct it, or keep only the er.")
        out.append(Finding("ee-er-mismatch", "warn", msg, [res.product]))
    for label, text in (("dr", res.dr), ("er", res.er)):
        if text:
            a, b = parse_ratio(text)
            if a < b:
                msg = (f"The {label} of '{res.product}' is written minor first ({text}); Trapbook reads it as "
                       f"{b:g}:{a:g}. Write the major isomer first to avoid confusion.")
                out.append(Finding("ratio-order", "note", msg, [res.product]))
    return out


def _mass_balance(ctx: _Context) -> list[Finding]:
    try:
        mb = amounts.mass_balance_pct(ctx.run, ctx.table)
    except TrapbookError:
        return []  # the per-product findings already say why
    limit = ctx.settings.mass_balance_max_pct
    if mb is None or mb <= limit:
        return []
    msg = (f"Products plus recovered precursor add up to {mb:.0f} % of the limiting amount, above {limit:g} %. "
           "Material cannot appear from nowhere: check for residual solvent, impure fractions counted twice, "
           "or a wrong scale.")
    return [Finding("mass-balance-high", "warn", msg, [p.product for p in ctx.run.outcome.products])]


# --- hazards --------------------------------------------------------------------------------


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


def check_hazards(ctx: _Context) -> list[Finding]:
    """One caution per material, once per run, so the reminders stay readable."""
    table = materials.hazards()
    out: list[Finding] = []
    for key, (mat, names) in _materials_used(ctx.run).items():
        keys = mat.hazards if mat is not None else ("fluoride",)
        titles = ", ".join(table[k].title for k in keys if k in table)
        text = " ".join(table[k].caution for k in keys if k in table)
        label = mat.name if mat is not None else names[0]
        msg = f"{label} ({titles}) is used in this run ({_listing(names)}); see the caution before handling it."
        out.append(Finding("material-caution", "note", msg, names, [], f"{text} {DEFER}"))
    out += _fluoride_with_acid(ctx)
    return out


def _fluoride_with_acid(ctx: _Context) -> list[Finding]:
    run = ctx.run
    fluorides = run.lines_by_role("fluoride source")
    acids = [ln for ln in run.lines if (m := materials.recognise(ln)) is not None and m.category == "acid"]
    if not fluorides or not acids:
        return []
    msg = (f"The run puts a fluoride source ({_listing(_names(fluorides))}) together with an acid "
           f"({_listing(_names(acids))}); together they give hydrogen fluoride.")
    caution = (materials.hazards()["hf"].caution + " " + DEFER)
    return [Finding("fluoride-acid", "warn", msg, _names(fluorides) + _names(acids), [], caution)]


# --- entry point ----------------------------------------------------------------------------

_CHECKS: tuple[Callable[[_Context], list[Finding]], ...] = (
    check_trap_order,
    check_strain,
    check_amounts_known,
    check_trap_amount,
    check_fluoride,
    check_temperatures,
    check_sealed_gas,
    check_alignment,
    check_water,
    check_concentration,
    check_steps,
    check_outcome,
    check_hazards,
)


def _as_dict(value: Any, what: str) -> dict | None:
    if value is None:
        return None
    if not isinstance(value, dict):
        raise TrapbookError(f"{what} must be the dict the strain engine returns (got {type(value).__name__})",
                            "pass the engine's result unchanged, or None")
    return value


def _context(run: Run, strain, alignment, settings) -> _Context:
    ctx = _Context(run, settings, strain, alignment, _timeline(run))
    try:
        ctx.table = amounts.compute(run)
    except TrapbookError as exc:
        ctx.table_error = exc
    return ctx


def run_checks(run: Run | dict, *, strain: dict | None = None, alignment: dict | None = None,
               settings: CheckSettings | None = None) -> list[Finding]:
    """All findings for a run, most severe first, in a fixed order within each severity."""
    if isinstance(run, dict):
        run = load_run(run)
    if not isinstance(run, Run):
        raise TrapbookError(f"run_checks needs a run (got {type(run).__name__})", "load the run file first")
    if settings is not None and not isinstance(settings, CheckSettings):
        raise TrapbookError("settings must be CheckSettings", "build them with CheckSettings.from_dict(...)")
    ctx = _context(run, _as_dict(strain, "strain"), _as_dict(alignment, "alignment"), settings or CheckSettings())
    findings: list[Finding] = []
    for check in _CHECKS:
        try:
            findings += check(ctx)
        except (TrapbookError, ChemistryError) as exc:
            what = check.__name__.removeprefix("check_").replace("_", " ")
            findings.append(Finding("check-incomplete", "note", f"The {what} check could not finish: {exc.message}."))
    return sorted(findings, key=lambda f: _RANK[f.severity])
