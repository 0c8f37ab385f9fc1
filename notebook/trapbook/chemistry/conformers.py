"""Bounded, reproducible 3D conformer ensembles for strained molecules.

Distance geometry alone gives up on the most twisted bridgehead alkenes (it
cannot satisfy planar sp2 bounds inside a small bicycle), and unbounded retries
can run for minutes. Every attempt here is capped, and when ETKDG returns too
few conformers the saturated analogue (which embeds easily) is embedded instead,
its coordinates are copied onto the unsaturated molecule and MMFF94 relaxes the
double bond back in. Random-coordinate embedding is the last resort.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from rdkit import Chem, rdBase
from rdkit.Chem import rdDistGeom, rdForceFieldHelpers, rdMolDescriptors

from trapbook.errors import ChemistryError

SEED = 0xC0FFEE
THREADS = 2
# Attempts per conformer: enough for ordinary rings, few enough to fail fast on Bredt cases.
# This count, not the timeout, is what bounds the work; the timeout (seconds per conformer)
# is only a safety net, because a wall-clock cutoff would make results depend on machine load.
_MAX_ITERATIONS = 20
_TIMEOUT_S = 10
# Two MMFF minima closer than this are one conformer (identical minima agree to ~1e-4).
_DEDUP_KCAL = 0.01
_MMFF_ROUNDS = 4


@dataclass
class Ensemble:
    """MMFF-minimised conformers of one species, lowest energy first."""

    mol: Chem.Mol
    conf_ids: list[int]
    energies: list[float]
    route: str
    force_field: str = "MMFF94"
    notes: list[str] = field(default_factory=list)

    @property
    def lowest(self) -> int:
        return self.conf_ids[0]

    def positions(self, conf_id: int) -> np.ndarray:
        return self.mol.GetConformer(conf_id).GetPositions()


def n_conformers_for(mol: Chem.Mol) -> int:
    """More conformers for medium rings and chains, where the low minimum is easy to miss."""
    ri = mol.GetRingInfo()
    largest = max((len(r) for r in ri.AtomRings()), default=0)
    rotors = rdkit_rotors(mol)
    n = 30 + 10 * rotors
    if largest >= 8:
        n += 30
    return int(min(n, 150))


def rdkit_rotors(mol: Chem.Mol) -> int:
    return rdMolDescriptors.CalcNumRotatableBonds(mol)


def _params(seed: int, random_coords: bool = False) -> rdDistGeom.EmbedParameters:
    params = rdDistGeom.ETKDGv3()
    params.randomSeed = seed
    params.maxIterations = _MAX_ITERATIONS
    params.timeout = _TIMEOUT_S
    params.numThreads = THREADS
    params.useRandomCoords = random_coords
    params.clearConfs = False
    return params


def _embed(mol_h: Chem.Mol, n: int, seed: int, random_coords: bool = False) -> int:
    try:
        with rdBase.BlockLogs():
            ids = rdDistGeom.EmbedMultipleConfs(mol_h, n, _params(seed, random_coords))
    except (RuntimeError, ValueError):
        return 0
    return len(ids)


def saturated(mol: Chem.Mol, bond_ids: list[int]) -> Chem.Mol:
    """The molecule with the given bonds made single: the relaxed analogue used for embedding
    and, in the strain scheme, the hydrogenated parent."""
    rw = Chem.RWMol(mol)
    for idx in bond_ids:
        bond = rw.GetBondWithIdx(idx)
        bond.SetBondType(Chem.BondType.SINGLE)
        bond.SetStereo(Chem.BondStereo.STEREONONE)
        bond.SetIsAromatic(False)
        for atom in (bond.GetBeginAtom(), bond.GetEndAtom()):
            atom.SetNoImplicit(False)
            atom.SetNumExplicitHs(0)
            atom.SetIsAromatic(False)
    out = rw.GetMol()
    with rdBase.BlockLogs():
        Chem.SanitizeMol(out)
    return out


def _copy_from_analogue(target_h: Chem.Mol, analogue_h: Chem.Mol) -> int:
    """Place the target's atoms on the analogue's conformers (same heavy-atom order).

    Each target hydrogen takes the position of an unused hydrogen on the same heavy
    atom of the analogue; the analogue's spare hydrogens are simply dropped.
    """
    mapping = {}
    used: set[int] = set()
    for atom in target_h.GetAtoms():
        if atom.GetAtomicNum() != 1:
            mapping[atom.GetIdx()] = atom.GetIdx()
            continue
        heavy = atom.GetNeighbors()[0].GetIdx()
        spare = [
            h.GetIdx()
            for h in analogue_h.GetAtomWithIdx(heavy).GetNeighbors()
            if h.GetAtomicNum() == 1 and h.GetIdx() not in used
        ]
        if not spare:
            return 0
        used.add(spare[0])
        mapping[atom.GetIdx()] = spare[0]
    added = 0
    for conf in analogue_h.GetConformers():
        new = Chem.Conformer(target_h.GetNumAtoms())
        for t_idx, a_idx in mapping.items():
            new.SetAtomPosition(t_idx, conf.GetAtomPosition(a_idx))
        target_h.AddConformer(new, assignId=True)
        added += 1
    return added


def _embed_analogue(mol: Chem.Mol, mol_h: Chem.Mol, bond_ids: list[int], n: int, seed: int) -> int:
    if not bond_ids:
        return 0
    try:
        analogue_h = Chem.AddHs(saturated(mol, bond_ids))
    except Exception:  # noqa: BLE001 - any sanitisation failure just disables this route
        return 0
    if not _embed(analogue_h, n, seed):
        return 0
    return _copy_from_analogue(mol_h, analogue_h)


def _minimise(mol_h: Chem.Mol) -> tuple[list[float], str]:
    """MMFF94 where parameters exist (UFF otherwise), repeated until each conformer converges."""
    if rdForceFieldHelpers.MMFFHasAllMoleculeParams(mol_h):
        run, name = rdForceFieldHelpers.MMFFOptimizeMoleculeConfs, "MMFF94"
    elif rdForceFieldHelpers.UFFHasAllMoleculeParams(mol_h):
        run, name = rdForceFieldHelpers.UFFOptimizeMoleculeConfs, "UFF"
    else:
        raise ChemistryError(
            "No force-field parameters for an atom in this structure.",
            "Strain can be computed for C, H, N, O, S, Si, halogen molecules.",
        )
    for _ in range(_MMFF_ROUNDS):
        with rdBase.BlockLogs():
            try:
                results = run(mol_h, numThreads=THREADS, maxIters=2000)
            except (RuntimeError, ValueError) as exc:  # e.g. "Bad Conformer Id": nothing usable was built
                raise ChemistryError(
                    "Could not build a usable 3D structure for this isomer; in this ring system it may not exist.",
                    "Check the stereo marks (an in/out bridgehead cannot close), or leave them open to see the isomers that exist.",
                ) from exc
        if all(flag == 0 for flag, _ in results):
            break
    return [e for _, e in results], name


def stereo_signature(mol: Chem.Mol) -> tuple:
    """CIP labels of the stereo elements the SMILES specifies; used to reject conformers
    in which embedding or minimisation inverted a centre or flipped a ring double bond."""
    centres = []
    for atom in mol.GetAtoms():
        if atom.GetChiralTag() != Chem.ChiralType.CHI_UNSPECIFIED and atom.HasProp("_CIPCode"):
            centres.append((atom.GetIdx(), atom.GetProp("_CIPCode")))
    bonds = []
    for bond in mol.GetBonds():
        if bond.GetStereo() in (Chem.BondStereo.STEREOE, Chem.BondStereo.STEREOZ):
            bonds.append((bond.GetIdx(), str(bond.GetStereo())))
    return tuple(centres), tuple(bonds)


def specified_stereo(mol: Chem.Mol) -> tuple:
    probe = Chem.Mol(mol)
    Chem.AssignStereochemistry(probe, cleanIt=True, force=True)
    return stereo_signature(probe)


def stereo_matches(mol_h: Chem.Mol, conf_id: int, wanted: tuple) -> bool:
    if not wanted[0] and not wanted[1]:
        return True
    probe = Chem.Mol(mol_h)
    Chem.AssignStereochemistryFrom3D(probe, confId=conf_id)
    centres = dict(stereo_signature(probe)[0])
    bonds = dict(stereo_signature(probe)[1])
    ok_c = all(centres.get(i) == label for i, label in wanted[0])
    ok_b = all(bonds.get(i) == label for i, label in wanted[1])
    return ok_c and ok_b


def build_ensemble(
    mol: Chem.Mol,
    n_confs: int | None = None,
    seed: int = SEED,
    relax_bonds: list[int] | None = None,
) -> Ensemble:
    """A deduplicated MMFF94 ensemble; `relax_bonds` are the strained bonds that may be
    saturated to get a first geometry when direct embedding fails."""
    n = n_confs or n_conformers_for(mol)
    mol_h = Chem.AddHs(mol)
    wanted = specified_stereo(mol)
    got, route = 0, "ETKDG"
    if _linear_in_ring(mol, relax_bonds):
        # distance geometry cannot close a ring round a linear C–C≡C–C unit and spends its
        # whole attempt budget failing (seconds per molecule): start from the analogue
        got, route = _embed_analogue(mol, mol_h, relax_bonds, n, seed), "saturated analogue"
    if not got:
        got, route = _embed(mol_h, n, seed), "ETKDG"
    if got < max(3, n // 4) and relax_bonds and route == "ETKDG":
        extra = _embed_analogue(mol, mol_h, relax_bonds, n, seed)
        if extra:
            route = "ETKDG + saturated analogue" if got else "saturated analogue"
            got += extra
    if not got:
        got, route = _embed(mol_h, max(5, n // 3), seed, random_coords=True), "random coordinates"
    if not got:
        raise ChemistryError(
            "Could not build a 3D structure for this molecule.",
            "Check the SMILES: the ring system may be impossible to close in 3D.",
        )
    energies, ff = _minimise(mol_h)
    conf_ids = [c.GetId() for c in mol_h.GetConformers()]
    kept = _dedupe(mol_h, conf_ids, energies, wanted)
    if not kept:
        raise ChemistryError(
            "Every 3D structure lost the stereochemistry given in the SMILES.",
            "Check the E/Z and R/S marks; the isomer may not exist in this ring system.",
        )
    ids = [c for c, _ in kept]
    return Ensemble(mol_h, ids, [e for _, e in kept], route, ff, [f"{got} embedded"])


def _linear_in_ring(mol: Chem.Mol, bond_ids: list[int] | None) -> bool:
    """True when a bond to relax is a triple bond in a ring (cycloalkyne or aryne)."""
    return any(mol.GetBondWithIdx(i).GetBondType() == Chem.BondType.TRIPLE for i in bond_ids or [])


def _dedupe(mol_h, conf_ids, energies, wanted) -> list[tuple[int, float]]:
    order = sorted(zip(conf_ids, energies), key=lambda t: (round(t[1], 6), t[0]))
    kept: list[tuple[int, float]] = []
    for cid, e in order:
        if kept and abs(e - kept[-1][1]) < _DEDUP_KCAL:
            continue
        if not stereo_matches(mol_h, cid, wanted):
            continue
        kept.append((cid, e))
    return kept
