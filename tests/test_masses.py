"""Formula, molar mass, exact mass and ion m/z, checked against an independent library
(molmass, its own isotope table) and the named atomic masses in docs/sources.md."""

from __future__ import annotations

import math

import molmass
import periodictable
import pytest

from trapbook.chemistry import masses
from trapbook.chemistry.ions import ELECTRON_MASS_U, ion_name
from trapbook.errors import ChemistryError

# (SMILES, molecular formula written by hand from the structure)
KNOWN = [
    ("C1=CC2OC1C1CCC3CCCC21C3", "C13H18O"),  # furan adduct of bicyclo[3.3.1]non-1-ene
    ("c1ccc2c(c1)C1c3ccccc3C2c2ccccc21", "C20H14"),  # triptycene
    ("c1ccc2cc3ccccc3cc2c1", "C14H10"),  # anthracene
    ("c1ccc(cc1)-c1oc(-c2ccccc2)c2ccccc12", "C20H14O"),  # 1,3-diphenylisobenzofuran
    ("CC(C)(C)[N+]([O-])=Cc1ccccc1", "C11H15NO"),  # PBN nitrone
    ("C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F", "C10H13F3O3SSi"),  # Kobayashi benzyne precursor
]


@pytest.mark.parametrize("smiles,formula", KNOWN)
def test_formula_and_monoisotopic_mass_match_molmass(smiles, formula):
    counts = masses.element_counts(smiles)
    # Source: molmass (independent formula library) writes formulas in Hill order.
    assert masses.hill_formula(counts) == molmass.Formula(formula).formula == formula
    # Source: molmass monoisotopic mass; 1e-5 u is < 0.05 ppm at these masses.
    assert masses.monoisotopic_mass(counts) == pytest.approx(molmass.Formula(formula).monoisotopic_mass, abs=1e-5)


@pytest.mark.parametrize("smiles,formula", KNOWN)
def test_average_mass_matches_periodictable(smiles, formula):
    # Source: periodictable (standard atomic weights, independent of RDKit); 0.02 g/mol as in docs/sources.md.
    assert masses.average_mass(masses.element_counts(smiles)) == pytest.approx(periodictable.formula(formula).mass, abs=0.02)


def test_anthracene_molar_mass_from_table():
    # Source: docs/sources.md, "Amounts, molar masses and solvents": anthracene 178.23 g/mol (IUPAC 2021 weights).
    assert masses.average_mass(masses.element_counts("c1ccc2cc3ccccc3cc2c1")) == pytest.approx(178.23, abs=0.01)


def test_mass_from_the_named_atomic_masses():
    # Source: docs/sources.md, "Exact masses" (atomic-mass evaluation, from memory).
    h, c, o, na, f, si, s = 1.00782503, 12.0, 15.99491462, 22.98976928, 18.99840316, 27.97692653, 31.97207117
    assert masses.monoisotopic_mass({"C": 13, "H": 18, "O": 1}) == pytest.approx(13 * c + 18 * h + o, abs=2e-6)
    precursor = masses.element_counts("C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F")
    by_hand = 10 * c + 13 * h + 3 * f + 3 * o + s + si
    assert masses.monoisotopic_mass(precursor) == pytest.approx(by_hand, abs=2e-6)
    # [M+Na]+ with the electron removed
    assert masses.ion_mz({"C": 13, "H": 18, "O": 1}, "[M+Na]+") == pytest.approx(13 * c + 18 * h + o + na - 0.00054858, abs=2e-6)


def test_worked_check_c13h18o():
    counts = masses.element_counts("C1=CC2OC1C1CCC3CCCC21C3")
    # Source: docs/sources.md, "Exact masses", worked check (from memory): 190.1358 and [M+Na]+ 213.1250.
    assert round(masses.monoisotopic_mass(counts), 4) == 190.1358
    assert round(masses.ion_mz(counts, "[M+Na]+"), 4) == 213.1250


@pytest.mark.parametrize(
    "ion,added,charge",
    [
        ("[M+H]+", "C13H19O", 1),
        ("[M+Na]+", "C13H18ONa", 1),
        ("[M+NH4]+", "C13H22ON", 1),
        ("[M+K]+", "C13H18OK", 1),
        ("[M-H]-", "C13H17O", -1),
    ],
)
def test_every_ion_against_molmass_with_the_electron(ion, added, charge):
    # Source: molmass neutral mass of the ion's atoms, minus (cation) or plus (anion) the
    # electron mass from molmass's own constant (CODATA).
    expected = molmass.Formula(added).monoisotopic_mass - charge * molmass.ELECTRON.mass
    assert masses.ion_mz({"C": 13, "H": 18, "O": 1}, ion) == pytest.approx(expected, abs=1e-5)


def test_electron_mass_constant():
    # Source: molmass's electron mass (CODATA 2018), rounded to 8 decimals.
    assert ELECTRON_MASS_U == pytest.approx(molmass.ELECTRON.mass, abs=1e-8)


def test_hill_order_without_carbon():
    # Source: docs/sources.md, "Exact masses": Hill order, no carbon -> alphabetical.
    assert masses.hill_formula(masses.element_counts("[Na+].[Cl-]")) == "ClNa"
    assert masses.hill_formula(masses.element_counts("O")) == "H2O"


def test_ppm_error_worked_example():
    # Source: docs/sources.md, "Exact masses": ppm = (found - calcd)/calcd * 1e6.
    # 213.1250 calcd, 213.1261 found: 0.0011/213.1250 = 5.16 ppm, beyond the 5 ppm custom.
    assert masses.ppm_error(213.1250, 213.1261) == pytest.approx(5.161, abs=0.001)
    assert masses.ppm_error(213.1250, 213.1248) == pytest.approx(-0.938, abs=0.001)


@pytest.mark.parametrize("bad", [math.nan, math.inf, -1.0, 0.0, "213.1", True, None])
def test_ppm_error_refuses_nonsense(bad):
    with pytest.raises(ChemistryError):
        masses.ppm_error(213.1250, bad)


@pytest.mark.parametrize("text,name", [("[M+Na]+", "[M+Na]+"), (" [m+na]+ ", "[M+Na]+"), ("[M\u2212H]\u2212", "[M-H]-")])
def test_ion_names_people_type(text, name):
    assert ion_name(text) == name


@pytest.mark.parametrize("bad", ["[M+Li]+", "", None, "\x00", "[M+Na]+" * 100])
def test_unknown_ion_is_refused_with_the_list(bad):
    with pytest.raises(ChemistryError) as exc:
        ion_name(bad)
    assert "[M+Na]+" in exc.value.hint


def test_mass_summary_refuses_a_charged_species_and_dummy_atoms():
    with pytest.raises(ChemistryError):
        masses.mass_summary("C[N+](C)(C)C")
    with pytest.raises(ChemistryError):
        masses.mass_summary("*C")


def test_isotope_label_uses_the_isotope_mass():
    # Source: molmass, CD3 written with the deuterium isotope.
    counts = masses.element_counts("[2H]C([2H])([2H])Cl")
    assert masses.monoisotopic_mass(counts) == pytest.approx(molmass.Formula("C[2H]3Cl").monoisotopic_mass, abs=1e-5)
