"""Every strain scheme is a balanced reaction, for every kind and many substituted cases.

Source: docs/sources.md, "Strain" (Conservation): both sides of a reaction hold the same
atoms, hydrogens included. Element counts here come from RDKit's molecular formula
(CalcMolFormula), independent of the engine's own counting.
"""

from __future__ import annotations

import re
from collections import Counter
from fractions import Fraction

import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st
from rdkit import Chem
from rdkit.Chem.rdMolDescriptors import CalcMolFormula

from trapbook.chemistry import bridgehead as bh
from trapbook.chemistry import schemes as sch
from trapbook.errors import ChemistryError

SUBSTITUENTS = ["", "C", "OC", "F", "Cl", "[Si](C)(C)C", "N(C)C", "C(=O)OC", "CC"]


def formula_counts(smiles: str) -> Counter:
    """Element counts from RDKit's formula string (independent of schemes.element_counts)."""
    mol = Chem.MolFromSmiles(smiles)
    out: Counter = Counter()
    for el, n in re.findall(r"([A-Z][a-z]?)(\d*)", CalcMolFormula(mol)):
        out[el] += int(n) if n else 1
    return out


def net_atoms(scheme: sch.Scheme) -> dict:
    net: Counter = Counter()
    for t in scheme.terms:
        for el, n in formula_counts(t.smiles).items():
            net[el] += Fraction(t.coefficient) * n
    return {el: n for el, n in net.items() if n}


def _sub(s: str) -> str:
    return f"({s})" if s else ""


@st.composite
def intermediates(draw):
    kind = draw(st.sampled_from(["aryne", "hetaryne", "naphthalyne", "cycloalkyne", "allene", "bridgehead", "benzo"]))
    a, b = draw(st.sampled_from(SUBSTITUENTS)), draw(st.sampled_from(SUBSTITUENTS))
    if kind == "aryne":
        return f"C1{_sub(a)}=CC{_sub(b)}=CC#C1"
    if kind == "hetaryne":
        return draw(st.sampled_from([f"C1{_sub(a)}=NC=CC#C1", f"N1=C{_sub(a)}C=CC#C1", f"C1=NC{_sub(a)}=CC#C1"]))
    if kind == "naphthalyne":
        return f"C1{_sub(a)}=CC2=CC#CC=C2C=C1"
    if kind == "benzo":  # benzo-fused cycloalkynes and cyclic allenes, substituted on the arene
        return draw(
            st.sampled_from(
                [f"C1CC#CCCc2cc{_sub(a)}ccc21", f"C1C=C=CCc2c{_sub(a)}cccc21", f"C1=CC=C2C(=C1{_sub(a)})CC#CCC3=CC=CC=C23"]
            )
        )
    n = draw(st.integers(min_value=7, max_value=10))
    ring_atom = draw(st.sampled_from(["C", "O", "[Si](C)C", "N(C)"]))
    if kind == "cycloalkyne":
        return f"C1#CC{_sub(a)}C{_sub(b)}{ring_atom}" + "C" * (n - 5) + "1"
    if kind == "allene":
        return f"C1=C=CC{_sub(a)}C{_sub(b)}{ring_atom}" + "C" * (n - 6) + "1"
    return draw(
        st.sampled_from(
            [
                f"C12=C{_sub(a)}CCC(CCC1)C2",
                f"C12=C{_sub(a)}CC(CC1)C2",
                f"C12=CCCC{_sub(a)}(CCC1)C2",
                f"C12=C{_sub(a)}CCCC(CCC1)C2",
            ]
        )
    )


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(intermediates())
def test_every_scheme_balanced_by_an_independent_count(smiles):
    mol = Chem.MolFromSmiles(smiles)
    assume(mol is not None)
    mol = bh.parse(smiles)
    unit = sch.find_unit(mol, bh.perceive_mol(mol))
    assume(unit is not None)
    parent = sch.parent_of(mol, unit)
    try:
        ref = sch.reference_pair(mol, unit)
    except ChemistryError:
        assume(False)
    scheme = sch.unit_scheme(mol, unit, parent, ref)
    assert net_atoms(scheme) == {}, (smiles, scheme.to_dict())
    assert sch.imbalance(scheme) == {}
    ring = sch.ring_strain_scheme(parent)
    if ring is not None:
        assert net_atoms(ring) == {}, (smiles, ring.to_dict())


@pytest.mark.parametrize(
    "smiles,kind",
    [
        ("C1=CC=CC#C1", "aryne"),  # benzyne
        ("COC1=CC=CC#C1", "aryne"),  # 3-methoxybenzyne
        ("C1=NC=CC#C1", "aryne"),  # 3,4-pyridyne
        ("C1=CC2=CC#CC=C2C=C1", "aryne"),  # 2,3-naphthalyne
        ("C1#CCCCCCC1", "cycloalkyne"),
        ("C1CC=C=CC1", "cyclic allene"),
        ("C12=CCCC(CCC1)C2", "bridgehead alkene"),
        ("C1=CC2CCCC(C1)C2", "ring alkene"),  # bicyclo[3.3.1]non-2-ene: not at a bridgehead
    ],
)
def test_kinds_are_perceived(smiles, kind):
    # Source: docs/sources.md, "Strain" — arynes and hetarynes are their own kind (trapped only).
    mol = bh.parse(smiles)
    unit = sch.find_unit(mol, bh.perceive_mol(mol))
    assert unit.kind == kind


def test_aryne_scheme_adds_one_h2_on_each_side():
    # Source: docs/sources.md, "Strain" (Arynes): aryne + (Z)-alkene -> arene + alkyne.
    mol = bh.parse("C1=CC=CC#C1")
    unit = sch.find_unit(mol, bh.perceive_mol(mol))
    parent = sch.parent_of(mol, unit)
    assert formula_counts(Chem.MolToSmiles(parent)) == Counter({"C": 6, "H": 6})  # benzene
    scheme = sch.unit_scheme(mol, unit, parent, sch.reference_pair(mol, unit))
    names = {t.name for t in scheme.terms}
    assert {"hex-3-yne", "(Z)-hex-3-ene"} <= names


def test_an_unbalanced_scheme_is_refused_with_words():
    # The pairing benzyne -> benzene against hex-3-yne -> hexane is one H2 short on one side
    # (C6H4 - C6H6 = -H2, C6H10 - C6H14 = -2 H2): it must never give a number.
    bad = sch.Scheme("aryne strain", "wrong pair")
    bad.add(1, "C1=CC=CC#C1", "intermediate")
    bad.add(-1, "c1ccccc1", "arene")
    bad.add(-1, "CCC#CCC", "reference unsaturated")
    bad.add(1, "CCCCCC", "reference saturated")
    assert net_atoms(bad) == {"H": 2}
    with pytest.raises(ChemistryError) as err:
        sch.assert_balanced(bad)
    assert "not balanced" in err.value.message and "H" in err.value.message
    assert err.value.hint


def test_ring_strain_scheme_of_cyclooctane_is_the_classic_one():
    # Source: docs/sources.md, "Strain" — the homodesmotic ring opening of a cycloalkane
    # (CH2)n + n ethane -> n propane (textbook group-equivalent scheme).
    ring = sch.ring_strain_scheme(Chem.MolFromSmiles("C1CCCCCCC1"))
    coeffs = {t.smiles: t.coefficient for t in ring.terms}
    assert coeffs == {"C1CCCCCCC1": 1, "CC": 8, "CCC": -8}


def test_a_fused_arene_is_one_group_and_a_ring_alkene_has_none():
    # common practice, no source: methyl caps on single aromatic atoms would count aromatic
    # stabilisation as strain, so a fused benzene enters whole, as o-xylene.
    ring = sch.ring_strain_scheme(Chem.MolFromSmiles("c1ccc2c(c1)CCCCCC2"))
    coeffs = {t.smiles: t.coefficient for t in ring.terms}
    assert coeffs["Cc1ccccc1C"] == -1 and coeffs["CCC"] == -6 and coeffs["CC"] == 7
    assert net_atoms(ring) == {}
    assert sch.ring_strain_scheme(Chem.MolFromSmiles("C1=CCCCCCC1")) is None
