"""Ring perception: bridgehead alkenes, S values, Wiseman trans-ring sizes, cyclic allenes, cycloalkynes."""

from __future__ import annotations

import pytest
from rdkit import Chem

from trapbook.chemistry.bridgehead import perceive
from trapbook.errors import ChemistryError

# Source: docs/sources.md "Strain", "S values: 5, 6, 6, 7" (Fawcett's S = a + b + c) for the
# four classic bridgehead alkenes; trans-ring sizes follow Wiseman's rule that the
# bridgehead double bond is trans in the ring made of its own bridge and the longer
# of the other two (bicyclo[3.3.1]non-1-ene ~ trans-cyclooctene, docs/sources.md, "Strain").
CLASSIC = [
    ("C12=CCC(CC1)C2", [2, 2, 1], 5, 6),  # bicyclo[2.2.1]hept-1-ene
    ("C12=CCC(CC1)CC2", [2, 2, 2], 6, 6),  # bicyclo[2.2.2]oct-1-ene
    ("C12=CCCC(CC1)C2", [3, 2, 1], 6, 7),  # bicyclo[3.2.1]oct-1-ene
    ("C12=CCCC(CCC1)C2", [3, 3, 1], 7, 8),  # bicyclo[3.3.1]non-1-ene
]


@pytest.mark.parametrize("smiles,bridges,s_value,trans_ring", CLASSIC)
def test_classic_bridgehead_alkenes(smiles, bridges, s_value, trans_ring):
    p = perceive(smiles)
    assert p.kind == "bridgehead alkene"
    best = p.best
    assert best.bridges == bridges
    assert best.s_value == s_value
    assert best.trans_ring_size == trans_ring
    assert best.bridges[best.double_bond_bridge] == len(best.bridge_atoms[best.double_bond_bridge])


def test_bridgehead_atoms_are_the_double_bond():
    smiles = "C12=CCCC(CCC1)C2"
    p = perceive(smiles)
    mol = Chem.MolFromSmiles(smiles)
    i, j = p.best.atoms
    assert mol.GetBondBetweenAtoms(i, j).GetBondType() == Chem.BondType.DOUBLE
    # the first atom is the bridgehead: bonded to one atom of each of the three bridges
    assert i in p.best.bridgeheads
    assert mol.GetAtomWithIdx(i).GetDegree() == 3


@pytest.mark.parametrize(
    "smiles,why",
    [
        ("c1ccccc1", "aromatic"),  # benzene
        ("C1=CCCCC1", "no bicycle"),  # cyclohexene
        ("C1=CC2CCC1C2", "2-ene, not at the bridgehead"),  # norbornene
        ("C1=C2CCCCC2CCC1", "fused ring junction, not bridged"),  # a Δ1(9)-octalin
        ("CCCC", "no unsaturation"),
    ],
)
def test_none_cases(smiles, why):
    p = perceive(smiles)
    assert p.kind == "none", why
    assert p.candidates == []
    assert "no bridgehead alkene" in p.message


def test_double_bond_in_the_shorter_bridge():
    # bicyclo[3.2.2]non-1-ene with the double bond in a two-atom bridge: trans in 2+2+3 = 7.
    p = perceive("C12=CCC(CCC1)CC2")
    assert p.best.bridges == [3, 2, 2]
    assert p.best.s_value == 7
    assert p.best.bridges[p.best.double_bond_bridge] == 2
    assert p.best.trans_ring_size == 7


def test_double_bond_in_one_atom_bridge():
    # bicyclo[3.3.1]non-1(9)-ene: the C9 bridge carries the bond; trans-cyclohexene inside.
    p = perceive("C1CC2CCCC(C1)=C2")
    assert p.best.bridges == [3, 3, 1]
    assert p.best.double_bond_bridge == 2
    assert p.best.trans_ring_size == 6


def test_heteroatom_bridge():
    # 8-oxabicyclo[3.2.1]oct-1-ene: the oxygen is the one-atom bridge.
    smiles = "O1C2=CCC1CCC2"
    p = perceive(smiles)
    mol = Chem.MolFromSmiles(smiles)
    assert p.best.bridges == [3, 2, 1]
    one_atom = p.best.bridge_atoms[2]
    assert mol.GetAtomWithIdx(one_atom[0]).GetSymbol() == "O"


def test_nitrogen_bridge_and_substituents():
    # 2,9-dimethyl-9-azabicyclo[3.3.1]non-1-ene: N is the one-atom bridge.
    p = perceive("CC1=C2CCCC(CC1)N2C")
    assert p.kind == "bridgehead alkene"
    assert p.best.bridges == [3, 3, 1]
    assert p.best.s_value == 7
    assert p.best.trans_ring_size == 8


def test_polycycle_uses_smallest_bicycle():
    # Adamantene (tricyclo[3.3.1.1]dec-1-ene): smallest bicycle containing C1=C2 is
    # bicyclo[3.3.1] with the bond in a one-atom bridge, i.e. S = 7, trans-cyclohexene.
    p = perceive("C12=CC3CC(C1)CC(C3)C2")
    assert p.best.s_value == 7
    assert p.best.trans_ring_size == 6


def test_several_candidates_reported():
    p = perceive("C12=CCCC(CCC1)C2.C12=CCC(CC1)C2")
    assert len(p.candidates) == 2
    # the most strained (smallest S) comes first
    assert [c.s_value for c in p.candidates] == [5, 7]


def test_bridgehead_diene_reports_both_bonds():
    # bicyclo[3.2.2]nona-1,3-diene-like: C1=C and C=C4 both start at a bridgehead
    # and lie in the same two-atom bridge, so each is a bridgehead alkene of S = 7.
    p = perceive("C12=CC=C(CCC1)CC2")
    assert len(p.candidates) == 2
    assert [c.s_value for c in p.candidates] == [7, 7]
    assert len({tuple(sorted(c.atoms)) for c in p.candidates}) == 2


@pytest.mark.parametrize("smiles,size", [("C1CC=C=CC1", 6), ("C1CCC=C=CC1", 7), ("C1CCCC=C=CC1", 8)])
def test_cyclic_allenes(smiles, size):
    p = perceive(smiles)
    assert p.kind == "cyclic allene"
    assert p.best.ring_size == size
    assert len(p.best.atoms) == 3


@pytest.mark.parametrize("smiles,size", [("C1CCC#CCC1", 7), ("C1CCCC#CCC1", 8)])
def test_cycloalkynes(smiles, size):
    p = perceive(smiles)
    assert p.kind == "cycloalkyne"
    assert p.best.ring_size == size


def test_acyclic_allene_and_alkyne_are_none():
    assert perceive("CC=C=CC").kind == "none"
    assert perceive("CC#CC").kind == "none"


def test_bad_smiles_is_a_chemistry_error():
    with pytest.raises(ChemistryError) as err:
        perceive("C1CC(")
    assert err.value.hint


def test_empty_smiles_is_a_chemistry_error():
    with pytest.raises(ChemistryError):
        perceive("   ")
