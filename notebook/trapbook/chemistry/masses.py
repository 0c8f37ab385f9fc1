"""Formula, molar mass, exact mass and the m/z of the ions an HRMS report quotes.

A characterisation block puts the calculated m/z of one ion beside the value found; the
two agree to a few ppm only if the calculation uses the mass of the most abundant
isotope of each element (not the average atomic weight) and counts the electron lost or
gained when the ion forms. Both numbers come from RDKit's periodic table, so the average
molar mass here and elsewhere in Trapbook agree.
"""

from __future__ import annotations

import math
from collections import Counter

from rdkit import Chem

from ..errors import ChemistryError
from .ions import ELECTRON_MASS_U, ION_RECIPES, ion_name
from .molecules import parse

_TABLE = Chem.GetPeriodicTable()


def element_counts(smiles: str) -> dict[str, int]:
    """Atoms of each element in everything the SMILES writes, implicit hydrogens included.

    An atom written with an isotope (e.g. [2H], [13C]) is counted under that isotope's
    label, such as '2H', so its exact mass is the isotope's and not the common one.
    """
    mol = parse(smiles)
    counts: Counter[str] = Counter()
    for atom in mol.GetAtoms():
        symbol = atom.GetSymbol()
        if symbol == "*" or atom.GetAtomicNum() == 0:
            raise ChemistryError("the structure has a dummy atom ('*'), which has no mass", "write the whole structure")
        iso = atom.GetIsotope()
        counts[f"{iso}{symbol}" if iso else symbol] += 1
        counts["H"] += atom.GetTotalNumHs()
    return {k: v for k, v in counts.items() if v}


def net_charge(smiles: str) -> int:
    return sum(a.GetFormalCharge() for a in parse(smiles).GetAtoms())


def _split(label: str) -> tuple[int, str]:
    digits = "".join(ch for ch in label if ch.isdigit())
    return (int(digits) if digits else 0), label[len(digits) :]


def hill_formula(counts: dict[str, int]) -> str:
    """Hill order: C then H then the rest alphabetically; with no carbon, all alphabetically."""
    bad = [k for k, v in counts.items() if v < 0]
    if bad:
        raise ChemistryError(f"negative atom count for {', '.join(bad)}", "an ion cannot remove atoms the molecule lacks")
    symbols = {k: v for k, v in counts.items() if v}
    plain = sorted(symbols, key=lambda k: (_split(k)[1], _split(k)[0]))
    if "C" in symbols:
        first = [k for k in ("C", "H") if k in symbols]
        plain = first + [k for k in plain if k not in first]
    parts = []
    for label in plain:
        iso, sym = _split(label)
        text = f"[{iso}{sym}]" if iso else sym
        parts.append(text + (str(symbols[label]) if symbols[label] != 1 else ""))
    return "".join(parts)


def _atom_mass(label: str, exact: bool) -> float:
    iso, sym = _split(label)
    try:
        if iso:
            mass = _TABLE.GetMassForIsotope(sym, iso)
        elif exact:
            mass = _TABLE.GetMostCommonIsotopeMass(sym)
        else:
            mass = _TABLE.GetAtomicWeight(sym)
    except (RuntimeError, ValueError):
        raise ChemistryError(f"no mass known for '{label}'", "check the element symbol and isotope") from None
    if not (mass > 0 and math.isfinite(mass)):
        raise ChemistryError(f"no mass known for '{label}'", "check the element symbol and isotope")
    return float(mass)


def average_mass(counts: dict[str, int]) -> float:
    """Molar mass (g/mol) from standard atomic weights (isotope-labelled atoms at their own mass)."""
    return sum(n * _atom_mass(k, exact=bool(_split(k)[0])) for k, n in counts.items())


def monoisotopic_mass(counts: dict[str, int], charge: int = 0) -> float:
    """Exact mass (u) of the species with every atom its most abundant isotope, electrons counted."""
    return sum(n * _atom_mass(k, exact=True) for k, n in counts.items()) - charge * ELECTRON_MASS_U


def ion_counts(counts: dict[str, int], ion: str) -> tuple[dict[str, int], int]:
    """Atoms and charge of one ion of M: conservation of atoms is checked, not assumed."""
    recipe, charge = ION_RECIPES[ion_name(ion)]
    out = Counter(counts)
    for sym, n in recipe.items():
        out[sym] += n
    if any(v < 0 for v in out.values()):
        raise ChemistryError(f"{ion} needs atoms the molecule lacks", "choose another ion")
    assert sum(out.values()) == sum(counts.values()) + sum(recipe.values())
    return {k: v for k, v in out.items() if v}, charge


def ion_mz(counts: dict[str, int], ion: str) -> float:
    """m/z of one ion of the neutral M, the electron lost (cation) or gained (anion) included."""
    atoms, charge = ion_counts(counts, ion)
    return monoisotopic_mass(atoms, charge) / abs(charge)


def ppm_error(calculated: float, found: float) -> float:
    """(found − calculated) / calculated in parts per million, the way an HRMS line quotes it."""
    for label, v in (("calculated m/z", calculated), ("found m/z", found)):
        if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v) or v <= 0:
            raise ChemistryError(
                f"{label} must be a positive finite number, got {v!r}", "give the m/z as read from the spectrum, e.g. 213.1248"
            )
    return (found - calculated) / calculated * 1e6


def mass_summary(smiles: str) -> dict:
    """Formula, molar mass, exact mass and every listed ion's m/z for one structure."""
    counts = element_counts(smiles)
    charge = net_charge(smiles)
    if charge:
        raise ChemistryError(
            f"the structure carries a net charge of {charge:+d}", "give the neutral compound; the ions are formed from it"
        )
    return {
        "formula": hill_formula(counts),
        "molar_mass": average_mass(counts),
        "monoisotopic_mass": monoisotopic_mass(counts),
        "ions": {ion: ion_mz(counts, ion) for ion in ION_RECIPES},
    }
