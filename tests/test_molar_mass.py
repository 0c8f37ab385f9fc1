"""Molar masses from SMILES against docs/sources.md and two independent formula-mass libraries."""

import molmass
import periodictable
import pytest

from trapbook.chemistry import molecules

# Source: docs/sources.md table (IUPAC 2021 standard atomic weights)
REFERENCE = [
    ("tetrabutylammonium fluoride, anhydrous", "CCCC[N+](CCCC)(CCCC)CCCC.[F-]", "C16H36FN", 261.47),
    ("tetrabutylammonium fluoride trihydrate", "CCCC[N+](CCCC)(CCCC)CCCC.[F-].O.O.O", "C16H42FNO3", 315.51),
    ("caesium fluoride", "[Cs+].[F-]", "CsF", 151.90),
    ("potassium fluoride", "[K+].[F-]", "KF", 58.10),
    ("tetrabutylammonium bromide", "CCCC[N+](CCCC)(CCCC)CCCC.[Br-]", "C16H36BrN", 322.37),
    ("TBAT", "CCCC[N+](CCCC)(CCCC)CCCC.F[Si-](F)(c1ccccc1)(c1ccccc1)c1ccccc1", "C34H51F2NSi", 539.87),
    ("18-crown-6", "C1COCCOCCOCCOCCOCCO1", "C12H24O6", 264.32),
    ("anthracene", "c1ccc2cc3ccccc3cc2c1", "C14H10", 178.23),
    ("furan", "c1ccoc1", "C4H4O", 68.07),
    ("2,5-dimethylfuran", "Cc1ccc(C)o1", "C6H8O", 96.13),
    ("1,3-diphenylisobenzofuran", "c1ccc(cc1)-c1oc(-c2ccccc2)c2ccccc12", "C20H14O", 270.33),
    ("1,3,5-trimethoxybenzene", "COc1cc(OC)cc(OC)c1", "C9H12O3", 168.19),
]


def _flat(formula: str) -> str:
    return formula.replace("+", "").replace("-", "")


@pytest.mark.parametrize("name,smiles,formula,mw", REFERENCE, ids=[r[0] for r in REFERENCE])
def test_molar_mass_matches_reference_table(name, smiles, formula, mw):
    # Source: docs/sources.md (IUPAC 2021); 0.02 g/mol covers rounding of the table to 2 decimals
    assert molecules.molar_mass(smiles) == pytest.approx(mw, abs=0.02)
    # element counts, not string order (RDKit writes KF as FK)
    assert periodictable.formula(_flat(molecules.formula(smiles))).atoms == periodictable.formula(formula).atoms


@pytest.mark.parametrize("name,smiles,formula,mw", REFERENCE, ids=[r[0] for r in REFERENCE])
def test_molar_mass_matches_independent_libraries(name, smiles, formula, mw):
    # Source: periodictable and molmass, formula masses independent of RDKit
    ours = molecules.molar_mass(smiles)
    assert ours == pytest.approx(periodictable.formula(formula).mass, abs=0.02)
    assert ours == pytest.approx(molmass.Formula(formula).mass, abs=0.02)


def test_bad_smiles_is_a_chemistry_error():
    from trapbook.errors import ChemistryError

    with pytest.raises(ChemistryError, match="not a valid SMILES"):
        molecules.molar_mass("c1ccoc")
