"""Distortion descriptors of a strained bond, from plain coordinates.

Kept free of RDKit objects in the arithmetic so the formulas can be checked on
hand-built geometries whose twist and pyramidalization are known by construction.
Angles are returned in degrees because that is how chemists quote them.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np


def wrap(angle: float) -> float:
    """Fold an angle into (-pi, pi] so differences of dihedrals stay comparable."""
    folded = math.remainder(angle, 2.0 * math.pi)
    return math.pi if folded == -math.pi else folded


def dihedral(p0, p1, p2, p3) -> float:
    """Signed torsion p0-p1-p2-p3 in radians (IUPAC sign convention)."""
    p0, p1, p2, p3 = (np.asarray(p, dtype=float) for p in (p0, p1, p2, p3))
    b0 = p0 - p1
    b1 = p2 - p1
    b2 = p3 - p2
    b1n = b1 / np.linalg.norm(b1)
    v = b0 - np.dot(b0, b1n) * b1n
    w = b2 - np.dot(b2, b1n) * b1n
    x = np.dot(v, w)
    y = np.dot(np.cross(b1n, v), w)
    return math.atan2(y, x)


def distance(p, q) -> float:
    return float(np.linalg.norm(np.asarray(p, dtype=float) - np.asarray(q, dtype=float)))


def angle(p0, p1, p2) -> float:
    """Bond angle at p1 in degrees; used for allene and alkyne bending."""
    u = np.asarray(p0, dtype=float) - np.asarray(p1, dtype=float)
    v = np.asarray(p2, dtype=float) - np.asarray(p1, dtype=float)
    cos = np.dot(u, v) / (np.linalg.norm(u) * np.linalg.norm(v))
    return math.degrees(math.acos(max(-1.0, min(1.0, float(cos)))))


@dataclass(frozen=True)
class Distortion:
    """Winkler–Dunitz descriptors of one double bond, in degrees."""

    twist_deg: float
    chi1_deg: float
    chi2_deg: float

    @property
    def pyramidalization_deg(self) -> float:
        """The larger |chi|: the more distorted carbon is what limits the pi overlap."""
        return max(abs(self.chi1_deg), abs(self.chi2_deg))


def _cis_pairing(xyz, c1: int, c2: int, subs1, subs2):
    """Order substituents so that a/c (and b/d) are the pair cis in the planar reference.

    The partner of `a` on the far carbon is the one with the smaller |torsion|;
    this stays well defined for twists below 90 degrees, which covers every
    bond that still has a pi bond worth the name.
    """
    a, b = subs1
    cands = sorted(subs2, key=lambda s: abs(dihedral(xyz[a], xyz[c1], xyz[c2], xyz[s])))
    c, d = cands[0], cands[1]
    return a, b, c, d


def winkler_dunitz(xyz, c1: int, c2: int, subs1, subs2) -> Distortion:
    """Twist and pyramidalization of C1=C2 from the four substituent torsions.

    `subs1` are the two atoms bonded to C1 (besides C2), `subs2` those bonded to C2.
    The twist is the mean of the two cis torsions; each chi measures how far
    one carbon departs from a planar (sp2) arrangement.
    """
    if len(subs1) != 2 or len(subs2) != 2:
        raise ValueError("each alkene carbon needs exactly two substituents")
    a, b, c, d = _cis_pairing(xyz, c1, c2, subs1, subs2)
    w1 = dihedral(xyz[a], xyz[c1], xyz[c2], xyz[c])
    w2 = dihedral(xyz[b], xyz[c1], xyz[c2], xyz[d])
    w3 = dihedral(xyz[b], xyz[c1], xyz[c2], xyz[c])
    tau = wrap(w1 + wrap(w2 - w1) / 2.0)
    chi1 = wrap(w1 - w3 + math.pi)
    chi2 = wrap(w2 - w3 + math.pi)
    return Distortion(math.degrees(tau), math.degrees(chi1), math.degrees(chi2))


def torsion_deg(xyz, i: int, j: int, k: int, m: int) -> float:
    """Signed torsion i-j-k-m in degrees (used for the Si–C–C–X alignment)."""
    return math.degrees(dihedral(xyz[i], xyz[j], xyz[k], xyz[m]))
