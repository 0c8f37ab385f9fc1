"""The intermediate derived from a silyl precursor by 1,2-elimination (Si and X leave from
neighbouring carbons and a new pi bond joins them), checked against structures written
out by hand and compared with RDKit's canonical SMILES."""

import json
from pathlib import Path

import pytest

from trapbook.chemistry.derive import intermediate_from_precursor, is_precursor
from trapbook.chemistry.molecules import parse
from trapbook.errors import ChemistryError

ROOT = Path(__file__).resolve().parents[1]


def _same_constitution(a: str, b: str) -> bool:
    from rdkit import Chem

    ma, mb = parse(a), parse(b)
    Chem.RemoveStereochemistry(ma)
    Chem.RemoveStereochemistry(mb)
    return Chem.MolToSmiles(ma) == Chem.MolToSmiles(mb)


@pytest.mark.parametrize(
    "precursor,intermediate",
    [
        # Source: fluoride-induced 1,2-elimination of a silyl group and a vicinal leaving group
        # (the textbook route to arynes and cycloalkynes; from memory)
        ("C[Si](C)(C)C1=C(OS(=O)(=O)C(F)(F)F)CCCC1", "C1#CCCCC1"),  # cyclohexyne
        ("C[Si](C)(C)C1CCCCC1Br", "C1=CCCCC1"),
        ("C[Si](C)(C)C12CCCC(CCC1OS(=O)(=O)C(F)(F)F)C2", "C12=CCCC(CCC1)C2"),  # bicyclo[3.3.1]non-1-ene
    ],
)
def test_elimination_gives_the_expected_intermediate(precursor, intermediate):
    assert _same_constitution(intermediate_from_precursor(precursor), intermediate)


def test_aryne_from_aryl_silyl_triflate():
    out = intermediate_from_precursor("C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F")
    mol = parse(out)
    # benzyne C6H4: six carbons, four hydrogens, no Si, S or F left
    assert sorted(a.GetSymbol() for a in mol.GetAtoms()) == ["C"] * 6
    assert sum(a.GetTotalNumHs() for a in mol.GetAtoms()) == 4


def test_demo_precursors_give_the_recorded_intermediates():
    for f in sorted((ROOT / "demo_lab" / "runs").glob("*.json")):
        run = json.loads(f.read_text(encoding="utf-8"))
        pre = next(ln["smiles"] for ln in run["lines"] if ln["role"] == "precursor")
        assert _same_constitution(intermediate_from_precursor(pre), run["intermediate"]), f.name


def test_no_silyl_leaving_group_pair_is_a_clear_error():
    with pytest.raises(ChemistryError, match="no silyl group beside a leaving group"):
        intermediate_from_precursor("c1ccoc1")


@pytest.mark.parametrize(
    "precursor,kind",
    [
        # Source: docs/sources.md, "Strain" — aryl silyl triflates release arynes and hetarynes,
        # which are their own kind (trapped only); a vinyl silyl triflate releases a cycloalkyne,
        # an allylic silyl vinyl triflate a cyclic allene (from memory).
        ("C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F", "aryne"),
        ("COc1cccc(OS(=O)(=O)C(F)(F)F)c1[Si](C)(C)C", "aryne"),  # 3-methoxybenzyne precursor
        ("C[Si](C)(C)c1cnccc1OS(=O)(=O)C(F)(F)F", "aryne"),  # 3,4-pyridyne precursor
        ("C[Si](C)(C)C1=C(OS(=O)(=O)C(F)(F)F)CCCC1", "cycloalkyne"),
        ("C[Si](C)(C)C1CCCC=C1OS(=O)(=O)C(F)(F)F", "cyclic allene"),
    ],
)
def test_derived_intermediates_have_the_right_kind(precursor, kind):
    from trapbook.chemistry.bridgehead import perceive

    assert is_precursor(precursor)
    assert perceive(intermediate_from_precursor(precursor)).kind == kind


def test_an_intermediate_is_not_a_precursor():
    assert not is_precursor("C1#CCCCCCC1")
    assert not is_precursor("C1=CC=CC#C1")
