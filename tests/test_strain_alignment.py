"""Si–C–C–X alignment of silyl precursors over the reachable MMFF ensemble.

Sources: docs/sources.md, "Strain" (Klyne–Prelog names, cyclohexane chairs, Boltzmann).
"""

from __future__ import annotations

import pytest

from trapbook.chemistry import alignment, strain
from trapbook.errors import ChemistryError

# Two diastereomers of 3-(trimethylsilyl)bicyclo[2.2.1]heptan-2-yl triflate. In the rigid
# norbornane frame the cis (exo,exo) pair is eclipsed (~0-20°) and the trans pair sits
# near 120°. Source: from memory — vicinal cis-exo torsions in norbornanes are near 0°.
CIS_EXO = "C[Si](C)(C)[C@@H]1[C@H](OS(=O)(=O)C(F)(F)F)[C@@H]2CC[C@H]1C2"
TRANS_NB = "C[Si](C)(C)[C@@H]1[C@@H](OS(=O)(=O)C(F)(F)F)[C@@H]2CC[C@H]1C2"
TRANS_CY = "C[Si](C)(C)[C@@H]1CCCC[C@H]1OS(=O)(=O)C(F)(F)F"  # trans-2-(trimethylsilyl)cyclohexyl triflate
CIS_CY = "C[Si](C)(C)[C@@H]1CCCC[C@@H]1OS(=O)(=O)C(F)(F)F"  # its cis epimer


@pytest.mark.parametrize(
    "phi,words",
    [
        # Source: docs/sources.md, "Strain" — Klyne & Prelog ranges.
        (0, "synperiplanar"),
        (29, "synperiplanar"),
        (45, "synclinal (gauche)"),
        (66, "synclinal (gauche)"),
        (72, "synclinal (gauche)"),
        (120, "anticlinal"),
        (-160, "antiperiplanar"),
        (180, "antiperiplanar"),
    ],
)
def test_angles_are_named_by_klyne_prelog(phi, words):
    assert alignment.klyne_prelog(phi) == words


def test_populations_are_boltzmann_and_sum_to_one():
    # Source: docs/sources.md, "Strain" — p = exp(-E/RT)/sum; at 298.15 K a 1.364 kcal/mol gap
    # is a factor of 10 (RT ln 10 = 1.364 kcal/mol).
    pops = alignment.populations([0.0, 1.3643], 25.0)
    assert pops.sum() == pytest.approx(1.0)
    assert pops[0] / pops[1] == pytest.approx(10.0, rel=1e-3)
    with pytest.raises(ChemistryError):
        alignment.populations([0.0], -300.0)


def test_trans_and_cis_cyclohexyl_triflates_get_different_verdicts():
    # Source: docs/sources.md, "Strain" (cyclohexane chairs) — the trans isomer reaches the
    # antiperiplanar diaxial chair by a ring flip; the cis isomer stays gauche (~60°) in both chairs.
    trans = alignment.precursor_alignment(TRANS_CY)
    cis = alignment.precursor_alignment(CIS_CY)
    assert trans["verdict"].startswith("aligns after a ring flip")
    assert "kcal/mol" in trans["verdict"] and "% at 25 °C" in trans["verdict"]
    assert trans["best_aligned"]["words"] == "antiperiplanar"
    assert 0 < trans["best_aligned"]["delta_kcal_mol"] <= alignment.REACHABLE_KCAL
    assert cis["verdict"].startswith("not periplanar")
    assert "synclinal (gauche)" in cis["verdict"]
    assert "near orthogonal" not in trans["verdict"] + cis["verdict"]


@pytest.mark.slow
def test_colder_run_holds_less_of_the_aligned_chair():
    # Source: docs/sources.md, "Strain" (Boltzmann): a higher conformer's share falls on cooling.
    warm = alignment.precursor_alignment(TRANS_CY, temperature_c=25.0)
    cold = alignment.precursor_alignment(TRANS_CY, temperature_c=-78.0)
    assert cold["best_aligned"]["population"] < warm["best_aligned"]["population"]
    assert "at -78 °C" in cold["verdict"]


def test_unassigned_stereocentres_are_split_into_diastereomers():
    # Source: docs/sources.md, "Strain" — cis and trans 1,2-disubstituted cyclohexanes differ.
    r = alignment.precursor_alignment("C[Si](C)(C)C1CCCCC1OS(=O)(=O)C(F)(F)F")
    assert r["stereo_warning"] and "unassigned" in r["stereo_warning"]
    assert len(r["diastereomers"]) == 2  # cis and trans (mirror images judged once)
    shorts = sorted(d["verdict_short"] for d in r["diastereomers"])
    assert shorts == ["aligns after a change of conformer", "not periplanar"]


@pytest.mark.slow
def test_norbornyl_diastereomers_are_told_apart():
    cis = alignment.precursor_alignment(CIS_EXO)
    trans = alignment.precursor_alignment(TRANS_NB)
    assert cis["verdict"].startswith("aligned: synperiplanar")
    assert cis["dihedral_deg"] < 30
    assert trans["verdict"].startswith("not periplanar")
    assert 60 < trans["weighted_dihedral_deg"] < 150
    assert cis["leaving_group"] == trans["leaving_group"] == "triflate"


@pytest.mark.parametrize(
    "smiles,what",
    [
        ("C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F", "aryne"),  # 2-(trimethylsilyl)phenyl triflate
        ("C[Si](C)(C)C1=C(OS(=O)(=O)C(F)(F)F)CCCC1", "cycloalkyne"),  # 2-silylcyclohexenyl triflate
    ],
)
def test_ring_held_precursors_are_synperiplanar(smiles, what):
    # common practice, no source: ortho (aryl) and vicinal (vinyl) substituents on a flat
    # ring unit are coplanar, 0°.
    r = alignment.precursor_alignment(smiles)
    assert r["dihedral_deg"] < 10
    assert r["verdict"].startswith("aligned: synperiplanar") and "held by the ring" in r["verdict"]


def test_allene_precursor_is_worded_honestly():
    # 6-(trimethylsilyl)cyclohex-1-enyl triflate, the 1,2-cyclohexadiene precursor. In a
    # cyclohexene half-chair the allylic substituent sits pseudo-axial or pseudo-equatorial,
    # neither in the alkene plane (textbook conformational analysis, from memory), so the
    # dihedral to the vinylic C–O bond is synclinal: the verdict names that, with the angle.
    r = alignment.precursor_alignment("C[Si](C)(C)C1CCCC=C1OS(=O)(=O)C(F)(F)F")
    assert r["verdict"].startswith("not periplanar") and "synclinal (gauche)" in r["verdict"]
    assert "short of periplanar" in r["verdict"]


def test_keys_and_atoms():
    r = strain.precursor_alignment(TRANS_CY)  # the old location still works
    for key in (
        "dihedral_deg",
        "weighted_dihedral_deg",
        "verdict",
        "conformers",
        "atoms",
        "aligned_fraction",
        "best_aligned",
        "conformer_table",
        "temperature_c",
        "measured",
        "stereo_warning",
    ):
        assert key in r
    assert set(r["atoms"]) == {"si", "c_si", "c_x", "x"}
    assert r["conformers"] >= 2  # Source: from memory — a cyclohexane ring has two chairs
    assert 0 <= r["weighted_dihedral_deg"] <= 180  # Source: definition, |dihedral| lies in [0°, 180°]
    assert "MMFF94" in r["method"]


@pytest.mark.slow
def test_leaving_groups_recognised():
    tos = alignment.precursor_alignment("C[Si](C)(C)C[C@H](C)OS(=O)(=O)c1ccc(C)cc1")
    assert tos["leaving_group"] == "tosylate"
    nf = alignment.precursor_alignment("C[Si](C)(C)C[C@H](C)OS(=O)(=O)C(F)(F)C(F)(F)C(F)(F)C(F)(F)F")
    assert nf["leaving_group"] == "nonaflate"
    br = alignment.precursor_alignment("C[C@@H](Br)C[Si](C)(C)C")
    assert br["leaving_group"] == "bromide"


def test_no_si_c_c_x_unit_is_a_chemistry_error():
    with pytest.raises(ChemistryError) as err:
        alignment.precursor_alignment("CCOS(=O)(=O)C(F)(F)F")
    assert err.value.hint


@pytest.mark.slow
def test_bridgehead_precursor_keeps_only_diastereomers_that_exist():
    # from memory: a bicyclo[3.3.1]nonane has one possible relative configuration at its
    # bridgeheads (an in/out isomer cannot close), so of the 4 diastereomer pairs of the
    # 1-silyl-2-triflate only the 2 epimers at C2 exist; and (textbook chair analysis) a
    # bridgehead substituent is equatorial to both rings, so neither epimer is antiperiplanar.
    r = alignment.precursor_alignment("C[Si](C)(C)C12CCCC(CCC1OS(=O)(=O)C(F)(F)F)C2")
    assert len(r["diastereomers"]) == 2
    assert len(r["left_out_diastereomers"]) == 2
    assert all(x["above_best_kcal_mol"] > alignment.IMPOSSIBLE_ABOVE_KCAL for x in r["left_out_diastereomers"])
    assert all(d["antiperiplanar_fraction"] < 0.01 for d in r["diastereomers"])
