"""Stereoisomers of one adduct constitution: enumerated, embedded, judged.

RDKit writes every labelling of the stereocentres; a trapping experiment gives only those
that exist in 3D (bounded, seeded ETKDG keeps every assigned centre), lie within an energy
window of the best one (MMFF94, so no in/out bridgehead isomer slips through) and come
from a suprafacial addition to the strained bond. Enantiomers are merged into one
racemic entry when nothing chiral went in, and the enumeration is halved to match.
"""

from __future__ import annotations

import time
from typing import TYPE_CHECKING

from rdkit import Chem
from rdkit.Chem import rdDistGeom, rdForceFieldHelpers, rdMolTransforms
from rdkit.Chem.EnumerateStereoisomers import EnumerateStereoisomers, GetStereoisomerCount, StereoEnumerationOptions

if TYPE_CHECKING:  # the dataclasses live with the reactions; only their names are used here
    from .products import Limits, Raw, Result, Site

EMBED_SEED = 20240607  # any fixed number: the same input gives the same isomers every time


def _embed(mol: Chem.Mol, limits: Limits) -> Chem.Mol | None:
    """A 3D model (MMFF94-relaxed where MMFF has parameters) that keeps every assigned
    stereocentre, or None if none can be built."""
    molh = Chem.AddHs(mol)
    params = rdDistGeom.ETKDGv3()
    params.maxIterations = limits.embed_iterations
    params.enforceChirality = True
    params.numThreads = 1
    for attempt in range(limits.embed_seeds):
        params.randomSeed = EMBED_SEED + attempt
        if rdDistGeom.EmbedMolecule(molh, params) == 0:
            break
    else:
        return None
    props = rdForceFieldHelpers.MMFFGetMoleculeProperties(molh) if limits.energy_window_kcal else None
    if props is not None:
        field = rdForceFieldHelpers.MMFFGetMoleculeForceField(molh, props)
        field.Minimize(maxIts=500)
        molh.SetDoubleProp("mmff_kcal", field.CalcEnergy())
    check = Chem.Mol(molh)
    Chem.AssignStereochemistryFrom3D(check)
    if Chem.MolToSmiles(Chem.RemoveHs(check)) != Chem.MolToSmiles(mol):
        return None
    return molh


def _cis_pairs(inter: Chem.Mol, site: Site) -> list[tuple[int | None, int | None]]:
    """Substituent pairs that are cis across the strained C=C (None stands for a hydrogen).

    The graph decides: in a ring of seven atoms or fewer a double bond is cis, so its ring
    neighbours are cis, and so are the two substituents outside that ring. A larger ring
    (trans-cyclooctene) is judged only if the SMILES gives the bond's E/Z.
    """
    a, b = site.atoms
    bond = inter.GetBondBetweenAtoms(a, b)
    if site.triple or bond.GetBondType() != Chem.BondType.DOUBLE:
        return []
    subs = {}
    for x in (a, b):
        atom = inter.GetAtomWithIdx(x)
        if sum(1 for y in atom.GetBonds() if y.GetBondType() == Chem.BondType.DOUBLE) > 1:
            return []  # an allene's central carbon becomes sp2 again: no cis/trans to keep
        subs[x] = [n.GetIdx() for n in atom.GetNeighbors() if n.GetIdx() not in (a, b)] + [None] * atom.GetTotalNumHs()
    if any(len(v) != 2 for v in subs.values()):
        return []
    rings = [r for r in inter.GetRingInfo().AtomRings() if a in r and b in r]
    if bond.GetStereo() in (
        Chem.BondStereo.STEREOE,
        Chem.BondStereo.STEREOTRANS,
        Chem.BondStereo.STEREOZ,
        Chem.BondStereo.STEREOCIS,
    ):
        s, t = bond.GetStereoAtoms()
        s, t = (s, t) if s in subs[a] else (t, s)
        if bond.GetStereo() in (Chem.BondStereo.STEREOE, Chem.BondStereo.STEREOTRANS):
            t = next(x for x in subs[b] if x != t)
    elif rings and len(min(rings, key=len)) <= 7:
        ring = min(rings, key=len)
        s, t = next(x for x in subs[a] if x in ring), next(x for x in subs[b] if x in ring)
    else:
        return []
    other = (next(x for x in subs[a] if x != s), next(x for x in subs[b] if x != t))
    return [(s, t), other]


def _suprafacial(molh: Chem.Mol, raw: Raw, pairs) -> bool:
    """A syn addition keeps each cis pair eclipsed-nearest in the Newman view along the old
    C=C: the cis partner of a substituent is still the one closest to it in dihedral angle.
    (A plain 90° cut fails in small bicycles, where every dihedral is near 60°.)"""
    if not pairs:
        return True
    conf = molh.GetConformer()
    a, b = (raw.from_intermediate[x] for x in raw.site.atoms)

    def product_atom(x, centre):
        if x is not None:
            return raw.from_intermediate[x]
        return next(n.GetIdx() for n in molh.GetAtomWithIdx(centre).GetNeighbors() if n.GetAtomicNum() == 1)

    for s, t in pairs:
        ps, pt = product_atom(s, a), product_atom(t, b)
        around_b = [n.GetIdx() for n in molh.GetAtomWithIdx(b).GetNeighbors() if n.GetIdx() != a]
        nearest = min(around_b, key=lambda n: abs(rdMolTransforms.GetDihedralDeg(conf, ps, a, b, n)))
        if nearest != pt:
            return False
    return True


def _endo_exo(molh: Chem.Mol, raw: Raw, inter: Chem.Mol) -> str | None:
    """'exo' when the intermediate's ring lies on the side of the one-atom bridge, 'endo' when
    it lies under the new C=C (the trade's convention for bridged bicyclic adducts)."""
    if raw.bridge is None or raw.alkene is None:
        return None
    ring_sets = [set(r) for r in inter.GetRingInfo().AtomRings() if set(raw.site.atoms) <= set(r)]
    if not ring_sets:
        return None
    ring = min(ring_sets, key=len)
    conf = molh.GetConformer()
    pos = lambda i: conf.GetAtomPosition(i)  # noqa: E731
    mid = (pos(raw.alkene[0]) + pos(raw.alkene[1])) * 0.5
    sides = set()
    for x in raw.site.atoms:
        if any(bd.GetBondType() != Chem.BondType.SINGLE for bd in raw.mol.GetAtomWithIdx(raw.from_intermediate[x]).GetBonds()):
            continue  # an aryne, alkyne or allene centre stays sp2: its ring points neither way
        for n in inter.GetAtomWithIdx(x).GetNeighbors():
            if n.GetIdx() in ring and n.GetIdx() not in raw.site.atoms:
                p = pos(raw.from_intermediate[n.GetIdx()])
                sides.add("exo" if (p - pos(raw.bridge)).Length() < (p - mid).Length() else "endo")
    return sides.pop() if len(sides) == 1 else None


def mirror_smiles(mol: Chem.Mol) -> str:
    flipped = Chem.Mol(mol)
    for atom in flipped.GetAtoms():
        tag = atom.GetChiralTag()
        if tag == Chem.ChiralType.CHI_TETRAHEDRAL_CW:
            atom.SetChiralTag(Chem.ChiralType.CHI_TETRAHEDRAL_CCW)
        elif tag == Chem.ChiralType.CHI_TETRAHEDRAL_CCW:
            atom.SetChiralTag(Chem.ChiralType.CHI_TETRAHEDRAL_CW)
    return Chem.MolToSmiles(flipped)


def has_stereo(mol: Chem.Mol) -> bool:
    """Whether the SMILES assigns any stereocentre or E/Z: if not, the adducts form as racemates."""
    return any(a.GetChiralTag() != Chem.ChiralType.CHI_UNSPECIFIED for a in mol.GetAtoms()) or any(
        b.GetStereo() != Chem.BondStereo.STEREONONE for b in mol.GetBonds()
    )


def _one_hand(mol: Chem.Mol) -> Chem.Mol:
    """The molecule with its first open stereocentre fixed: every enantiomer pair has exactly
    one member of this hand, so a racemic enumeration needs only half the isomers."""
    out = Chem.Mol(mol)
    centres = Chem.FindMolChiralCenters(out, includeUnassigned=True, useLegacyImplementation=False)
    open_centres = [idx for idx, label in centres if label == "?"]
    if open_centres:
        out.GetAtomWithIdx(open_centres[0]).SetChiralTag(Chem.ChiralType.CHI_TETRAHEDRAL_CW)
    return out


def _candidates(raw: Raw, racemic: bool, limits: Limits, deadline: float, result: Result):
    """(smiles, key, 3D model or None) for each stereoisomer, bounded in number and time."""
    opts = StereoEnumerationOptions(
        onlyUnassigned=True, unique=True, tryEmbedding=False, maxIsomers=limits.max_isomers_per_adduct, rand=EMBED_SEED
    )
    start = _one_hand(raw.mol) if racemic else raw.mol
    if GetStereoisomerCount(start, opts) > limits.max_isomers_per_adduct:
        result.truncated = True
        result.notes.append(f"{raw.smiles}: more than {limits.max_isomers_per_adduct} stereoisomers; a seeded sample was checked")
    seen: set[str] = set()
    for iso in EnumerateStereoisomers(start, opts):
        if time.monotonic() > deadline:
            result.truncated = True
            result.notes.append(f"time limit of {limits.seconds:g} s reached while checking {raw.smiles}")
            return
        Chem.AssignStereochemistry(iso, cleanIt=True, force=True)
        smiles, mirror = Chem.MolToSmiles(iso), mirror_smiles(iso)
        key = min(smiles, mirror) if racemic else smiles
        if key not in seen:
            seen.add(key)
            yield key, smiles != mirror, _embed(iso, limits)


def stereoisomers(raw: Raw, inter: Chem.Mol, racemic: bool, limits: Limits, deadline: float, result: Result) -> list[dict]:
    """Every stereoisomer of one constitution that exists in 3D, lies within the energy
    window of the best one and came from a suprafacial addition; enantiomers merged into one
    racemic entry when nothing chiral went in."""
    pairs = _cis_pairs(inter, raw.site)
    kept: dict[str, dict] = {}
    dropped = {
        "no 3D structure keeps them": 0,
        f"they need anti addition across {raw.site.label}": 0,
        f"more than {limits.energy_window_kcal:g} kcal/mol (MMFF94) above the best isomer": 0,
    }
    reasons = list(dropped)
    for key, chiral, molh in _candidates(raw, racemic, limits, deadline, result):
        if molh is None:
            dropped[reasons[0]] += 1
        elif not _suprafacial(molh, raw, pairs):
            dropped[reasons[1]] += 1
        else:
            energy = molh.GetDoubleProp("mmff_kcal") if molh.HasProp("mmff_kcal") else None
            kept[key] = {"smiles": key, "endo_exo": _endo_exo(molh, raw, inter), "chiral": chiral, "energy": energy}
    energies = [k["energy"] for k in kept.values() if k["energy"] is not None]
    if energies and limits.energy_window_kcal:
        for key in [
            k for k, v in kept.items() if v["energy"] is not None and v["energy"] - min(energies) > limits.energy_window_kcal
        ]:
            del kept[key]
            dropped[reasons[2]] += 1
    for reason, n in dropped.items():
        if n:
            result.notes.append(f"{raw.smiles}: {n} stereoisomer(s) dropped, {reason}")
    return [kept[k] for k in sorted(kept)]
