"""Winkler–Dunitz descriptors on geometries built with a known twist and pyramidalization."""

from __future__ import annotations

import math

import numpy as np
import pytest
from rdkit import Chem
from rdkit.Chem import AllChem, rdMolTransforms

from trapbook.chemistry import geometry as geo

# Source: Winkler & Dunitz, J. Mol. Biol. 1971, 59, 169 (from memory), definitions as
# written in docs/sources.md "Strain": tau = (w1 + w2)/2, chi1 = w1 - w3 + pi, chi2 = w2 - w3 + pi.


def _alkene(twist_deg: float, bend1_deg: float = 0.0, bend2_deg: float = 0.0):
    """C1 at the origin, C2 on +x; substituents placed at 120 degrees to the C=C axis.

    Seen down the C=C axis, a sits at 90 and b at 270 degrees, each pushed toward 0 by
    bend1 (a true pyramidalization: both substituents fold to the same side); c and d
    start eclipsing a and b, are rotated by the twist and folded by bend2.
    Expected: tau = twist, chi1 = 2*bend1, chi2 = 2*bend2 (up to sign).
    """
    c1, c2 = np.zeros(3), np.array([1.34, 0.0, 0.0])

    def sub(origin, outward, theta_deg):
        t = math.radians(theta_deg)
        axial = outward * math.cos(math.radians(60))
        radial = math.sin(math.radians(60))
        return origin + 1.09 * np.array([axial, radial * math.cos(t), radial * math.sin(t)])

    a = sub(c1, -1.0, 90 - bend1_deg)
    b = sub(c1, -1.0, 270 + bend1_deg)
    c = sub(c2, 1.0, 90 + twist_deg - bend2_deg)
    d = sub(c2, 1.0, 270 + twist_deg + bend2_deg)
    return np.array([c1, c2, a, b, c, d])


def _wd(xyz):
    return geo.winkler_dunitz(xyz, 0, 1, [2, 3], [4, 5])


def test_planar_alkene_gives_zero():
    # Source: docs/sources.md "Strain", "A planar alkene gives tau = chi = 0".
    wd = _wd(_alkene(0.0))
    assert wd.twist_deg == pytest.approx(0.0, abs=1e-6)
    assert wd.chi1_deg == pytest.approx(0.0, abs=1e-6)
    assert wd.chi2_deg == pytest.approx(0.0, abs=1e-6)


@pytest.mark.parametrize("twist", [10.0, 35.0, -25.0, 60.0])
def test_pure_twist(twist):
    # Source: the construction in _alkene (tau = twist, chi = 0), by the docs/sources.md "Strain" definitions
    wd = _wd(_alkene(twist))
    assert abs(wd.twist_deg) == pytest.approx(abs(twist), abs=1e-6)
    assert wd.pyramidalization_deg == pytest.approx(0.0, abs=1e-6)


@pytest.mark.parametrize("twist,bend1,bend2", [(0, 10, 0), (20, 15, 5), (30, -12, 20), (45, 25, 25)])
def test_twist_with_pyramidalization(twist, bend1, bend2):
    # Source: the construction in _alkene (tau = twist, chi1 = 2*bend1, chi2 = 2*bend2), by the
    # docs/sources.md "Strain" definitions; pyramidalization taken as the larger |chi|
    wd = _wd(_alkene(twist, bend1, bend2))
    assert abs(wd.twist_deg) == pytest.approx(abs(twist), abs=1e-6)
    assert abs(wd.chi1_deg) == pytest.approx(abs(2 * bend1), abs=1e-6)
    assert abs(wd.chi2_deg) == pytest.approx(abs(2 * bend2), abs=1e-6)
    assert wd.pyramidalization_deg == pytest.approx(max(abs(2 * bend1), abs(2 * bend2)), abs=1e-6)


def test_substituent_order_does_not_matter():
    # Source: docs/sources.md "Strain" definitions: swapping a/b together with c/d keeps the cis pairing,
    # so |tau| and the pyramidalization are unchanged
    xyz = _alkene(30, 10, 5)
    one = geo.winkler_dunitz(xyz, 0, 1, [2, 3], [4, 5])
    two = geo.winkler_dunitz(xyz, 0, 1, [3, 2], [5, 4])
    assert abs(one.twist_deg) == pytest.approx(abs(two.twist_deg), abs=1e-6)
    assert one.pyramidalization_deg == pytest.approx(two.pyramidalization_deg, abs=1e-6)


def test_relaxed_unstrained_alkene_is_nearly_planar():
    # common practice, no source: an acyclic trisubstituted alkene minimises to a flat C=C.
    mol = Chem.AddHs(Chem.MolFromSmiles("CC=C(C)C"))
    AllChem.EmbedMolecule(mol, randomSeed=7)
    AllChem.MMFFOptimizeMolecule(mol, maxIters=2000)
    xyz = mol.GetConformer().GetPositions()
    i, j = 1, 2
    subs_i = [n.GetIdx() for n in mol.GetAtomWithIdx(i).GetNeighbors() if n.GetIdx() != j]
    subs_j = [n.GetIdx() for n in mol.GetAtomWithIdx(j).GetNeighbors() if n.GetIdx() != i]
    wd = geo.winkler_dunitz(xyz, i, j, subs_i, subs_j)
    assert abs(wd.twist_deg) < 2.0
    assert wd.pyramidalization_deg < 3.0
    # Source: typical C=C length 1.34 Å (from memory); MMFF reproduces it closely.
    assert geo.distance(xyz[i], xyz[j]) == pytest.approx(1.34, abs=0.02)


def test_torsion_matches_rdkit():
    # Independent check: RDKit's own dihedral routine on the same conformer.
    mol = Chem.AddHs(Chem.MolFromSmiles("C[Si](C)(C)CC(C)Br"))
    AllChem.EmbedMolecule(mol, randomSeed=11)
    conf = mol.GetConformer()
    xyz = conf.GetPositions()
    si, c1, c2, br = 1, 4, 5, 7
    expected = rdMolTransforms.GetDihedralDeg(conf, si, c1, c2, br)
    assert geo.torsion_deg(xyz, si, c1, c2, br) == pytest.approx(expected, abs=1e-6)


def test_wrap_folds_into_half_open_interval():
    # Source: docs/sources.md "Strain", angles wrapped to (−π, π]: 3π → π, −π → π, 2π + 0.1 → 0.1
    assert geo.wrap(3 * math.pi) == pytest.approx(math.pi)
    assert geo.wrap(-math.pi) == pytest.approx(math.pi)
    assert geo.wrap(2 * math.pi + 0.1) == pytest.approx(0.1)
