"""Stoichiometry and yields from one given amount per line.

A chemist writes down one number per material — "0.200 mmol" of precursor, "10 equiv"
of furan, "2.0 mL" of THF — and needs every other number at the bench: how many mg to
weigh, how many µL to syringe, at what concentration the run goes. Full precision is
kept here; rounding is for display only.
"""

from __future__ import annotations

import re
from dataclasses import asdict, dataclass, field

from . import materials
from .chemistry import molecules
from .errors import ChemistryError, RecordError
from .records import AMOUNT_FIELDS, Line, Run, parse_ratio
from .units import parse_quantity, to_canonical, unit_text

WATER_MW = 18.015  # g/mol, H2O from IUPAC standard atomic weights


@dataclass
class LineAmounts:
    """Every amount of one line, computed from the one that was given."""

    name: str
    role: str
    given: str | None
    form: str  # "solid", "neat liquid", "solution", "solvent", "product"
    mw_g_mol: float | None
    equiv: float | None
    mmol: float | None
    mass_mg: float | None
    volume_ul: float | None
    purity: float | None = None
    molarity_M: float | None = None
    water_mmol: float | None = None

    def to_dict(self) -> dict:
        return asdict(self)


@dataclass
class AmountTable:
    limiting: str
    limiting_mmol: float
    lines: list[LineAmounts]
    concentration_M: float | None
    concentration_basis: str
    total_volume_ml: float | None
    theoretical: dict[str, dict] = field(default_factory=dict)

    def line(self, name: str) -> LineAmounts | None:
        key = name.casefold()
        return next((x for x in self.lines if x.name.casefold() == key), None)

    def to_dict(self) -> dict:
        return {
            "limiting": self.limiting,
            "limiting_mmol": self.limiting_mmol,
            "concentration_M": self.concentration_M,
            "concentration_basis": self.concentration_basis,
            "total_volume_ml": self.total_volume_ml,
            "theoretical": self.theoretical,
            "lines": [x.to_dict() for x in self.lines],
        }


def molar_mass(line: Line) -> float | None:
    """g/mol of the form weighed: the explicit override, else from the SMILES, else unknown."""
    if line.molar_mass is not None:
        return to_canonical(line.molar_mass, "molar_mass")
    if line.smiles:
        return molecules.molar_mass(line.smiles)
    return None


def _purity(line: Line) -> float:
    return to_canonical(line.purity, "fraction") if line.purity is not None else 1.0


def _form(line: Line) -> str:
    if line.role == "product":
        return "product"
    if line.molarity is not None:
        return "solution"
    if line.density is not None:
        return "neat liquid"
    if line.role == "solvent":
        return "solvent"
    if line.volume is not None:
        return "solvent"
    return "solid"


_CATION = re.compile(r"\[[^\]]*\+\d*\]")
_ANION = re.compile(r"\[[^\]]*-\d*\]")
#: Above this melting point a material is a solid on the bench. Common practice, no source.
SOLID_ABOVE_MP_C = 25.0


def _is_salt(smiles: str) -> bool:
    """A SMILES of separate cation and anion fragments ('[Cs+].[F-]'): a salt, solid unless stated."""
    charges = [len(_CATION.findall(f)) - len(_ANION.findall(f)) for f in smiles.split(".")]
    return any(c > 0 for c in charges) and any(c < 0 for c in charges)


def _solid_reason(line: Line) -> str | None:
    """Why Trapbook knows this line is a solid (known melting point, or a salt), or None."""
    mat = materials.recognise(line)
    if mat is not None and mat.mp_c is not None and mat.mp_c.value > SOLID_ABOVE_MP_C:
        return f"{mat.name} melts at {mat.mp_c.value:g} °C ({mat.mp_c.source}), so it is a solid"
    smiles = line.smiles or (mat.smiles if mat is not None else None)
    if smiles and _is_salt(smiles):
        return f"its structure ({smiles}) is a salt, a solid"
    return None


def refuse_solid_by_volume(line: Line) -> None:
    """A solid has no volume to dispense; counted as a liquid it would dilute the run's concentration."""
    if line.volume is None or line.density is not None or line.molarity is not None or line.role == "solvent":
        return
    why = _solid_reason(line)
    if why:
        vol = f"{line.volume.magnitude:g} {unit_text(line.volume)}"
        raise RecordError(
            f"line '{line.name}' is given by volume ({vol}) with no density or molarity, but {why}: "
            "a volume of solid cannot be turned into an amount, and would be counted as liquid",
            "give its mass or amount; if it went in as a stock solution, give the solution's molarity "
            '(e.g. "molarity": "1.0 M"); if it really is a liquid, give its density',
            field="volume",
        )


def with_density_on_file(line: Line) -> Line:
    """A known liquid (a solvent Trapbook has data for, such as furan or 2,5-dimethylfuran)
    given by equiv, amount, mass or volume without a density, with the density on file
    (and, with neither SMILES nor molar mass given, the molar mass on file, as for "water").

    The bench syringes such a trap or additive, so its µL is what the chemist needs; and
    counted as a solid its volume would drop out of the concentration and out of a sealed
    vessel's fill and headspace. Solvent lines stay solvents (a volume, no equiv) and a
    density or molarity the run gives always wins.
    """
    if line.density is not None or line.molarity is not None or line.role in ("solvent", "product"):
        return line
    mat = materials.recognise(line)
    if mat is None or not mat.is_solvent or mat.density_g_ml is None:
        return line
    if mat.mp_c is not None and mat.mp_c.value > SOLID_ABOVE_MP_C:
        return line
    update = {"density": parse_quantity({"value": mat.density_g_ml.value, "unit": "g/mL"}, "density")}
    if line.smiles is None and line.molar_mass is None and mat.molar_mass_g_mol is not None:
        update["molar_mass"] = parse_quantity({"value": mat.molar_mass_g_mol.value, "unit": "g/mol"}, "molar_mass")
    return line.model_copy(update=update)


def limiting_line(run: Run) -> Line:
    """The line all equiv refer to: marked limiting, else named, else the precursor."""
    flagged = [ln for ln in run.lines if ln.limiting]
    if flagged:
        return flagged[0]
    if run.limiting:
        ln = run.line(run.limiting)
        if ln is not None:
            return ln
    precursors = run.lines_by_role("precursor")
    if precursors:
        return precursors[0]
    raise RecordError(
        "the run has no precursor line and no line marked limiting",
        'add a precursor line, or set "limiting": true on the line the equiv refer to',
    )


def _absolute_mmol(line: Line, mw: float | None) -> float | None:
    """mmol from an amount, mass or volume; None if the line gives equiv or cannot say."""
    if line.amount is not None:
        return to_canonical(line.amount, "amount")
    if line.mass is not None:
        if mw is None:
            return None
        return to_canonical(line.mass, "mass") * _purity(line) / mw
    if line.volume is not None:
        vol_ml = to_canonical(line.volume, "volume") / 1000.0
        if line.molarity is not None:
            return vol_ml * to_canonical(line.molarity, "molarity")
        if line.density is not None and mw is not None:
            return vol_ml * to_canonical(line.density, "density") * 1000.0 * _purity(line) / mw
    return None


def _fill(line: Line, mmol: float | None, mw: float | None) -> tuple[float | None, float | None]:
    """(mass_mg, volume_µL) for a line whose mmol is known, by its form."""
    form = _form(line)
    mass = to_canonical(line.mass, "mass") if line.mass is not None else None
    vol = to_canonical(line.volume, "volume") if line.volume is not None else None
    if mmol is None:
        if form == "neat liquid" and vol is not None and mass is None:
            mass = vol / 1000.0 * to_canonical(line.density, "density") * 1000.0
        elif form == "neat liquid" and mass is not None and vol is None:
            vol = mass / to_canonical(line.density, "density")
        return mass, vol
    if form == "solution":
        if vol is None:
            vol = mmol / to_canonical(line.molarity, "molarity") * 1000.0
        return None, vol
    if mw is not None and mass is None:
        mass = mmol * mw / _purity(line)
    if form == "neat liquid" and vol is None and mass is not None:
        vol = mass / to_canonical(line.density, "density")
    return mass, vol


def _water_of_water_line(mmol: float | None, volume_ul: float | None) -> float | None:
    """mmol of a line that is water itself: its own amount, or (a solvent line, given by volume)
    its volume with the density and molar mass on file."""
    if mmol is not None:
        return mmol
    water = materials.by_key(materials.WATER_KEY)
    if volume_ul is None or water.density_g_ml is None or water.molar_mass_g_mol is None:
        return None
    return volume_ul / 1000.0 * water.density_g_ml.value * 1000.0 / water.molar_mass_g_mol.value


def _water_mmol(line: Line, mmol: float | None, mass_mg: float | None, volume_ul: float | None = None) -> float | None:
    """Water a line brings: all of it when the line is water; else hydrate water written in its
    SMILES, plus a stated wt% of the weighed mass.

    The wt% of a stock solution cannot be turned into mmol without the solution's
    density, so it is left to the bench checks (which use the supplier's figure).
    """
    if materials.is_water(line):
        return _water_of_water_line(mmol, volume_ul)
    water = 0.0
    known = False
    if line.smiles and mmol is not None:
        n = molecules.water_count(line.smiles)
        if n:
            water += n * mmol
            known = True
    if line.water is not None and mass_mg is not None and line.molarity is None:
        water += mass_mg * to_canonical(line.water, "fraction") / WATER_MW
        known = True
    return water if known else None


def as_weighed(line: Line) -> Line:
    """The line with what was actually weighed or measured (`actual`) in place of its planned amount.

    The one place the choice is made: once a line records what went into the flask, every
    equiv, concentration and yield is worked out from that, not from the plan.
    """
    if line.actual is None:
        return line
    from .units import measured_kind

    kind = measured_kind(line.actual)
    if line.role == "solvent" and kind != "volume" and line.density is None:
        raise RecordError(
            f"solvent '{line.name}' records a weighed {kind}, but the run's concentration needs its volume",
            "record the volume measured, or give the solvent's density",
            field="actual",
        )
    cleared = dict.fromkeys(AMOUNT_FIELDS)
    return line.model_copy(update={**cleared, kind: line.actual})


def compute(run: Run, planned: bool = False) -> AmountTable:
    """The reagent table of a run: mmol, equiv, mg and µL of every line — from what was
    weighed where a line records it, or (`planned=True`) from the plan alone."""
    if not planned and any(ln.actual is not None for ln in run.lines):
        run = run.model_copy(update={"lines": [as_weighed(ln) for ln in run.lines]})
    run = run.model_copy(update={"lines": [with_density_on_file(ln) for ln in run.lines]})
    for line in run.lines:
        refuse_solid_by_volume(line)
    lim = limiting_line(run)
    try:
        lim_mw = molar_mass(lim)
    except ChemistryError as exc:
        raise RecordError(f"line '{lim.name}': {exc.message}", exc.hint) from None
    n_lim = _absolute_mmol(lim, lim_mw)
    if n_lim is None:
        if lim.equiv is not None:
            raise RecordError(f"limiting line '{lim.name}' is given in equiv", "give the limiting line an amount, mass or volume")
        need = "a SMILES or molar mass" if lim.mass is not None else "a density or molarity (and a SMILES)"
        raise RecordError(f"cannot work out mmol of limiting line '{lim.name}'", f"give it {need}, or give its amount in mmol")
    if n_lim <= 0:
        raise RecordError(f"limiting line '{lim.name}' has no amount", "give a positive amount")

    rows: list[LineAmounts] = []
    total_ul = 0.0
    for line in run.lines:
        mw = molar_mass(line)
        form = _form(line)
        if line.role == "product":
            rows.append(LineAmounts(line.name, line.role, None, form, mw, None, None, None, None))
            continue
        if line.equiv is not None:
            equiv = to_canonical(line.equiv, "equiv")
            mmol = equiv * n_lim
        else:
            mmol = _absolute_mmol(line, mw)
            equiv = mmol / n_lim if mmol is not None else None
        if form == "solvent":
            mmol = equiv = None
        if line.equiv is not None and form in ("solid", "neat liquid") and mw is None:
            raise RecordError(
                f"line '{line.name}' is given in equiv but has no SMILES or molar mass",
                "add its SMILES (or molar_mass) so its mass can be worked out",
            )
        mass, vol = _fill(line, mmol, mw)
        water = _water_mmol(line, mmol, mass, vol)
        if vol is not None:
            total_ul += vol
        rows.append(
            LineAmounts(
                name=line.name,
                role=line.role,
                given=line.given,
                form=form,
                mw_g_mol=mw,
                equiv=equiv,
                mmol=mmol,
                mass_mg=mass,
                volume_ul=vol,
                purity=_purity(line) if line.purity is not None else None,
                molarity_M=to_canonical(line.molarity, "molarity") if line.molarity is not None else None,
                water_mmol=water,
            )
        )
    conc = n_lim / (total_ul / 1000.0) if total_ul > 0 else None
    basis = (
        f"limiting line in {total_ul / 1000.0:.3g} mL total liquid (solvent, solutions and neat liquids added)"
        if total_ul > 0
        else "no liquid volume recorded"
    )
    theo = {}
    for line in run.lines_by_role("product"):
        mw = molar_mass(line)
        theo[line.name] = {"mmol": n_lim, "mass_mg": n_lim * mw if mw else None, "mw_g_mol": mw}
    return AmountTable(lim.name, n_lim, rows, conc, basis, total_ul / 1000.0 if total_ul else None, theo)


# --- yields -------------------------------------------------------------------------------


@dataclass
class ProductYield:
    product: str
    theoretical_mmol: float
    isolated_mmol: float | None = None
    isolated_yield_pct: float | None = None
    nmr_mmol: float | None = None
    nmr_yield_pct: float | None = None
    dr: str | None = None
    dr_major_fraction: float | None = None
    er: str | None = None
    ee_pct: float | None = None
    ee_source: str | None = None

    @property
    def best_yield_pct(self) -> float | None:
        """Isolated if there is one (what the chemist has in hand), else the NMR yield."""
        return self.isolated_yield_pct if self.isolated_yield_pct is not None else self.nmr_yield_pct

    def to_dict(self) -> dict:
        d = asdict(self)
        d["yield_pct"] = self.best_yield_pct
        return d


def nmr_mmol(n_standard_mmol: float, integral: float, protons: int, standard_integral: float, standard_protons: int) -> float:
    """n_P = n_IS · (I_P/N_P)/(I_IS/N_IS): the qNMR relation for an internal standard."""
    return n_standard_mmol * (integral / protons) / (standard_integral / standard_protons)


def ee_from_er(major: float, minor: float) -> float:
    """ee (%) = (er − 1)/(er + 1) with er = major/minor; written via the parts to allow minor = 0."""
    return 100.0 * (major - minor) / (major + minor)


def normalise_ratio(text: str) -> tuple[str, float]:
    """'1:5' -> ('5:1', 0.833): major first, and the major isomer's fraction."""
    a, b = parse_ratio(text)
    major, minor = max(a, b), min(a, b)
    if minor > 0:
        shown = f"{major / minor:.3g}:1"
    else:
        shown = f"{major:g}:0"
    return shown, major / (major + minor)


def product_yields(run: Run, table: AmountTable | None = None) -> list[ProductYield]:
    """Yield and selectivity of each product recorded in the outcome."""
    if run.outcome is None:
        return []
    table = table or compute(run)
    out: list[ProductYield] = []
    for res in run.outcome.products:
        line = run.line(res.product)
        theo = table.limiting_mmol
        py = ProductYield(product=line.name, theoretical_mmol=theo)
        mw = molar_mass(line)
        if res.isolated_mass is not None:
            if mw is None:
                raise RecordError(f"product '{line.name}' has an isolated mass but no SMILES or molar mass", "add its SMILES")
            py.isolated_mmol = to_canonical(res.isolated_mass, "mass") / mw
            py.isolated_yield_pct = 100.0 * py.isolated_mmol / theo
        if res.qnmr is not None:
            n_is = standard_mmol(run, table, res.qnmr)
            py.nmr_mmol = nmr_mmol(
                n_is, res.qnmr.integral, res.qnmr.protons, res.qnmr.standard_integral, res.qnmr.standard_protons
            )
            py.nmr_yield_pct = 100.0 * py.nmr_mmol / theo
        if res.dr:
            py.dr, py.dr_major_fraction = normalise_ratio(res.dr)
        if res.er:
            a, b = parse_ratio(res.er)
            py.er = f"{max(a, b):g}:{min(a, b):g}"
            py.ee_pct = ee_from_er(max(a, b), min(a, b))
            py.ee_source = "from er"
        elif res.ee is not None:
            py.ee_pct = res.ee
            py.ee_source = "as recorded"
        out.append(py)
    return out


def headline_product(yields: list[ProductYield]) -> ProductYield | None:
    """The product that stands for the run: the highest headline (isolated, else NMR) yield."""
    best: ProductYield | None = None
    for y in yields:
        if best is None or (
            y.best_yield_pct is not None and (best.best_yield_pct is None or y.best_yield_pct > best.best_yield_pct)
        ):
            best = y
    return best


def headline_yield(run: Run, table: AmountTable | None = None) -> tuple[float | None, str | None]:
    """(yield %, kind) that stands for the run in every list, map and plot.

    Isolated if recorded, else NMR: the isolated yield is what the chemist has in hand, so a
    higher NMR figure of the same product never replaces it. Across products the best one
    stands for the run. A finished run that found no product reads (0.0, 'none found').
    Raises when the yields cannot be worked out (the caller shows why).
    """
    best = headline_product(product_yields(run, table))
    if best is not None and best.best_yield_pct is not None:
        return best.best_yield_pct, ("isolated" if best.isolated_yield_pct is not None else "NMR")
    if run.outcome is not None and run.status in ("done", "failed") and run.outcome.products == []:
        return 0.0, "none found"
    return None, None


def standard_mmol(run: Run, table: AmountTable, q) -> float:
    """Amount of internal standard in the NMR sample: as recorded, else from its line."""
    if q.standard_amount is not None:
        return to_canonical(q.standard_amount, "amount")
    name = q.standard
    if name is None:
        stds = run.lines_by_role("internal standard")
        if len(stds) != 1:
            raise RecordError(
                "qNMR data needs an internal standard: " + ("none is listed" if not stds else "more than one is listed"),
                "add one 'internal standard' line, or name it in the qNMR record (\"standard\")",
            )
        name = stds[0].name
    row = table.line(name)
    if row is None or row.mmol is None:
        raise RecordError(f"cannot work out the mmol of internal standard '{name}'", "give its mass and SMILES, or its amount")
    return row.mmol


def mass_balance_pct(run: Run, table: AmountTable | None = None) -> float | None:
    """Products plus recovered precursor, as % of the limiting amount; None without data."""
    if run.outcome is None:
        return None
    table = table or compute(run)
    yields = product_yields(run, table)
    total = sum((y.best_yield_pct or 0.0) for y in yields)
    have = any(y.best_yield_pct is not None for y in yields)
    if run.outcome.recovered_precursor is not None:
        lim = limiting_line(run)
        mw = molar_mass(lim)
        if mw:
            rec = to_canonical(run.outcome.recovered_precursor, "mass") / mw
            total += 100.0 * rec / table.limiting_mmol
            have = True
    return total if have else None
