"""Olefin (pi-bond) strain of a strained intermediate, in two tiers, plus precursor alignment.

Olefin strain follows the homodesmotic scheme of Maier and Schleyer:

    OS = [E(olefin) - E(parent alkane)] - [E(ref olefin) - E(ref alkane)]

with each energy taken at the lowest conformer found, the parent made by
hydrogenating only the strained unit, and the reference pair an unstrained ring
(or chain) with the same substitution at the unsaturation. Errors in the method
largely cancel between the two brackets, which is why even a force field gives a
usable ranking; MMFF94 still overestimates twisted alkenes, so the fast tier is
labelled rough and the accurate tier (GFN2-xTB geometries) is the default answer.
"""

from __future__ import annotations

import functools
import multiprocessing
import time
from concurrent.futures import ProcessPoolExecutor
from dataclasses import dataclass
from functools import lru_cache
from typing import Callable

import numpy as np
from rdkit import Chem

from trapbook.errors import ChemistryError, TrapbookError

from . import bridgehead as bh
from . import conformers as cf
from . import geometry as geo
from . import xtb

from .strain_key import ENGINE_SCHEME, ENGINE_VERSION, TIERS, cache_key  # noqa: E402,F401  (one definition of the key)

METHODS = {
    "fast": "MMFF94 (RDKit ETKDG) — rough prescreen",
    "accurate": "GFN2-xTB (tblite) on MMFF conformers",
}
# How many distinct MMFF minima go on to GFN2-xTB, and within what MMFF window.
# The window is wide because MMFF mis-orders twisted-alkene conformers.
XTB_CONFORMERS = 4
XTB_WINDOW_KCAL = 10.0
WORKERS = 2
# Below this many atoms a GFN2-xTB optimisation takes well under a second, less than
# starting worker processes; such molecules are optimised in-process, one after another.
PARALLEL_MIN_ATOMS = 45
RT_298_KCAL = 0.0019872043 * 298.15

Progress = Callable[[str, float], None]


# ---------------------------------------------------------------- classes and keys


def _guarded(func):
    """Turn any foreign exception (RDKit, tblite, numpy) into a ChemistryError, so the
    CLI and TUI only ever see the one error hierarchy."""

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        try:
            return func(*args, **kwargs)
        except TrapbookError:
            raise
        except Exception as exc:  # noqa: BLE001 - deliberate boundary
            raise ChemistryError(
                f"The strain engine could not handle this structure ({type(exc).__name__}: {exc}).",
                "Check the SMILES; if it is right, report it with the structure attached.",
            ) from exc

    return wrapper


def stability_class(os_kcal: float | None) -> str | None:
    """Maier–Schleyer classes; the boundaries are theirs (kcal/mol)."""
    if os_kcal is None:
        return None
    if os_kcal < 0:
        return "hyperstable"
    if os_kcal <= 17:
        return "isolable"
    if os_kcal <= 21:
        return "observable"
    return "unstable"


def canonical_smiles(smiles: str) -> str:
    return Chem.MolToSmiles(bh.parse(smiles))


def _check_tier(tier: str) -> None:
    if tier not in TIERS:
        raise ChemistryError(f"Unknown tier {tier!r}.", "Use 'fast' (rough prescreen) or 'accurate'.")


# ---------------------------------------------------------------- species energies


@dataclass
class Species:
    """Lowest-energy result for one molecule of the scheme."""

    smiles: str
    energy_kcal: float
    conformers: int
    mol_h: Chem.Mol
    positions: np.ndarray
    bond_orders: np.ndarray | None
    converged: bool
    route: str
    force_field: str


def _pool():
    """A two-process pool for independent conformer optimisations (spawned, so tblite's
    OpenMP state is never forked); `None` when processes are unavailable."""
    global _POOL
    if _POOL is None and WORKERS > 1:
        try:
            _POOL = ProcessPoolExecutor(WORKERS, mp_context=multiprocessing.get_context("spawn"))
        except (OSError, ValueError, NotImplementedError):
            return None
    return _POOL


_POOL = None


def _run_jobs(jobs: list[tuple]) -> list:
    """Optimise in parallel where it pays; results keep job order, so output is deterministic.

    Worker processes are spawned, so a calling script needs the usual
    ``if __name__ == "__main__":`` guard; the CLI, TUI and pytest have one.
    """
    big = jobs and len(jobs[0][0]) >= PARALLEL_MIN_ATOMS
    pool = _pool() if len(jobs) > 1 and big and multiprocessing.parent_process() is None else None
    if pool is not None:
        try:
            return list(pool.map(xtb.optimise_job, jobs))
        except Exception:  # noqa: BLE001 - a broken pool falls back to serial, same numbers
            _reset_pool()
    return [xtb.optimise_job(j) for j in jobs]


def _reset_pool() -> None:
    global _POOL
    if _POOL is not None:
        _POOL.shutdown(cancel_futures=True)
    _POOL = None


def shutdown() -> None:
    """Stop the worker processes (the CLI and tests call this at exit; harmless otherwise)."""
    _reset_pool()


def _mmff_species(mol: Chem.Mol, relax_bonds: list[int] | None) -> tuple[cf.Ensemble, Species]:
    ens = cf.build_ensemble(mol, relax_bonds=relax_bonds)
    cid = ens.lowest
    sp = Species(
        smiles=Chem.MolToSmiles(mol),
        energy_kcal=float(ens.energies[0]),
        conformers=len(ens.conf_ids),
        mol_h=ens.mol,
        positions=ens.positions(cid),
        bond_orders=None,
        converged=True,
        route=ens.route,
        force_field=ens.force_field,
    )
    return ens, sp


def _xtb_candidates(ens: cf.Ensemble) -> list[int]:
    lowest = ens.energies[0]
    return [c for c, e in zip(ens.conf_ids, ens.energies) if e - lowest <= XTB_WINDOW_KCAL][:XTB_CONFORMERS]


def _same_bonds(mol_h: Chem.Mol, xyz: np.ndarray) -> bool:
    """True when the optimised geometry still has exactly the molecule's bonds
    (a strained alkene may otherwise close a new ring or fall apart on the xTB surface)."""
    table = Chem.GetPeriodicTable()
    radii = np.array([table.GetRcovalent(a.GetAtomicNum()) for a in mol_h.GetAtoms()])
    dist = np.linalg.norm(xyz[:, None, :] - xyz[None, :, :], axis=-1)
    bonded = dist < 1.15 * (radii[:, None] + radii[None, :])
    np.fill_diagonal(bonded, False)
    expected = np.zeros_like(bonded)
    for b in mol_h.GetBonds():
        expected[b.GetBeginAtomIdx(), b.GetEndAtomIdx()] = True
        expected[b.GetEndAtomIdx(), b.GetBeginAtomIdx()] = True
    return bool((bonded == expected).all())


def _xtb_species(ens: cf.Ensemble, base: Species) -> Species:
    numbers = [a.GetAtomicNum() for a in ens.mol.GetAtoms()]
    ids = _xtb_candidates(ens)
    results = _run_jobs([(numbers, ens.positions(c)) for c in ids])
    wanted = cf.specified_stereo(Chem.RemoveHs(ens.mol))
    good = []
    for res in results:
        if isinstance(res, str) or not _same_bonds(ens.mol, res.positions):
            continue
        if not _stereo_kept(ens.mol, res.positions, wanted):
            continue
        good.append(res)
    if not good:
        raise ChemistryError(
            f"GFN2-xTB optimisation failed for every conformer of {base.smiles}.",
            "The structure may rearrange on optimisation; the fast tier may still give a rough value.",
        )
    best = min(good, key=lambda r: r.energy_hartree)
    return Species(
        smiles=base.smiles,
        energy_kcal=best.energy_kcal,
        conformers=len(good),
        mol_h=ens.mol,
        positions=best.positions,
        bond_orders=best.bond_orders,
        converged=all(r.converged for r in good),
        route=base.route,
        force_field=base.force_field,
    )


def _stereo_kept(mol_h: Chem.Mol, xyz: np.ndarray, wanted: tuple) -> bool:
    probe = Chem.Mol(mol_h)
    probe.RemoveAllConformers()
    conf = Chem.Conformer(probe.GetNumAtoms())
    for i, p in enumerate(xyz):
        conf.SetAtomPosition(i, p.tolist())
    cid = probe.AddConformer(conf, assignId=True)
    return cf.stereo_matches(probe, cid, wanted)


def _species(mol: Chem.Mol, tier: str, relax_bonds: list[int] | None = None) -> Species:
    ens, sp = _mmff_species(mol, relax_bonds)
    return _xtb_species(ens, sp) if tier == "accurate" else sp


@lru_cache(maxsize=64)
def _reference_species(smiles: str, tier: str) -> Species:
    """Reference molecules recur in every calculation; compute each once per process."""
    return _species(bh.parse(smiles), tier)


@_guarded
def conformer_energy(smiles: str, tier: str = "accurate") -> dict:
    """Lowest-conformer energy of any molecule (kcal/mol, the tier's own zero), for
    comparing isomers directly, e.g. trans- against cis-cyclooctene."""
    _check_tier(tier)
    sp = _species(bh.parse(smiles), tier, _unsaturated_ring_bonds(bh.parse(smiles)))
    return {
        "smiles": sp.smiles,
        "energy_kcal_mol": sp.energy_kcal,
        "conformers": sp.conformers,
        "tier": tier,
        "method": METHODS[tier],
        "converged": sp.converged,
    }


def _unsaturated_ring_bonds(mol: Chem.Mol) -> list[int]:
    return [
        b.GetIdx()
        for b in mol.GetBonds()
        if b.GetBondType() in (Chem.BondType.DOUBLE, Chem.BondType.TRIPLE)
        and mol.GetRingInfo().NumBondRings(b.GetIdx())
    ]


# ---------------------------------------------------------------- the strained unit


@dataclass
class Unit:
    """The bond(s) whose strain is computed, and what kind of unit they form."""

    kind: str
    atoms: list[int]
    bond_ids: list[int]
    candidate: bh.Candidate | None


def _unit(mol: Chem.Mol, perception: bh.Perception) -> Unit | None:
    """The perceived strained unit, or failing that the first non-aromatic ring C=C,
    so that ordinary and trans-cycloalkenes still get a number."""
    cand = perception.best
    if cand is not None:
        atoms = cand.atoms
        pairs = list(zip(atoms, atoms[1:]))
        bonds = [mol.GetBondBetweenAtoms(i, j).GetIdx() for i, j in pairs]
        return Unit(cand.kind, atoms, bonds, cand)
    for b in mol.GetBonds():
        if (
            b.GetBondType() == Chem.BondType.DOUBLE
            and not b.GetIsAromatic()
            and mol.GetRingInfo().NumBondRings(b.GetIdx())
            and b.GetBeginAtom().GetAtomicNum() == 6
            and b.GetEndAtom().GetAtomicNum() == 6
        ):
            return Unit("ring alkene", [b.GetBeginAtomIdx(), b.GetEndAtomIdx()], [b.GetIdx()], None)
    return None


# ---------------------------------------------------------------- reference pairs

_RING_SLOT = {6: "C", 7: "N", 8: "O", 16: "S"}
_CAP = {6: "C", 7: "N(C)C", 8: "OC", 9: "F", 14: "[Si](C)(C)C", 16: "SC", 17: "Cl", 35: "Br", 53: "I"}
_CHAIN_CAP = {**_CAP, 6: "CC"}
_NAMES = {
    "C1=CCCCC1": "cyclohexene",
    "C1CCCCC1": "cyclohexane",
    "CC1=CCCCC1": "1-methylcyclohexene",
    "CC1CCCCC1": "methylcyclohexane",
    "CC1=C(C)CCCC1": "1,2-dimethylcyclohexene",
    "CC1CCCCC1C": "1,2-dimethylcyclohexane",
    "COC1=CCCCC1": "1-methoxycyclohexene",
    "COC1CCCCC1": "methoxycyclohexane",
    "C1=COCCC1": "3,4-dihydro-2H-pyran",
    "C1CCOCC1": "tetrahydropyran",
    "CCC=C=CCC": "hepta-3,4-diene",
    "CCCCCCC": "heptane",
    "CCC#CCC": "hex-3-yne",
    "CCCCCC": "hexane",
}


def _substituents(mol: Chem.Mol, atom: int, exclude: set[int]) -> list[Chem.Atom]:
    """Heavy neighbours outside the unit, ring carbons first (they fill the reference ring)."""
    nbrs = [n for n in mol.GetAtomWithIdx(atom).GetNeighbors() if n.GetIdx() not in exclude and n.GetAtomicNum() > 1]
    ring = mol.GetRingInfo()

    def rank(n):
        in_ring = ring.NumAtomRings(n.GetIdx()) > 0
        return (n.GetAtomicNum() != 6, not in_ring, n.GetIdx())

    return sorted(nbrs, key=rank)


def _caps(atoms: list[Chem.Atom], table: dict) -> str:
    return "".join(f"({table.get(a.GetAtomicNum(), 'C')})" for a in atoms)


def _alkene_reference(mol: Chem.Mol, i: int, j: int) -> tuple[str, str, int, list[str]]:
    subs_i = _substituents(mol, i, {j})
    subs_j = _substituents(mol, j, {i})
    if not subs_i or not subs_j:
        raise ChemistryError(
            "The double bond has an unsubstituted (=CH2) end; no ring reference applies.",
            "Olefin strain is defined here for ring double bonds.",
        )
    slot_i = _RING_SLOT.get(subs_i[0].GetAtomicNum(), "C")
    slot_j = _RING_SLOT.get(subs_j[0].GetAtomicNum(), "C")
    caps_i, caps_j = _caps(subs_i[1:], _CAP), _caps(subs_j[1:], _CAP)
    olefin = f"C1{caps_i}=C{caps_j}{slot_j}CC{slot_i}1"
    alkane = f"C1{caps_i}C{caps_j}{slot_j}CC{slot_i}1"
    hetero = sorted({a.GetSymbol() for a in subs_i + subs_j if a.GetAtomicNum() != 6})
    return olefin, alkane, len(subs_i) + len(subs_j), hetero


def _chain_reference(mol: Chem.Mol, unit: Unit) -> tuple[str, str, int, list[str]]:
    """Open-chain allene or alkyne with ethyl groups where the ring continues."""
    first, last = unit.atoms[0], unit.atoms[-1]
    inside = set(unit.atoms)
    subs_a = _substituents(mol, first, inside)
    subs_b = _substituents(mol, last, inside)
    caps_a, caps_b = _caps(subs_a, _CHAIN_CAP), _caps(subs_b, _CHAIN_CAP)
    if unit.kind == bh.ALLENE:
        olefin, alkane = f"C{caps_a}=C=C{caps_b}", f"C{caps_a}CC{caps_b}"
    else:
        olefin, alkane = f"C{caps_a}#C{caps_b}", f"C{caps_a}C{caps_b}"
    hetero = sorted({a.GetSymbol() for a in subs_a + subs_b if a.GetAtomicNum() != 6})
    return olefin, alkane, len(subs_a) + len(subs_b), hetero


def reference_pair(mol: Chem.Mol, unit: Unit) -> dict:
    """The unstrained pair with the same substitution at the unit, named where we can."""
    if unit.kind in (bh.ALLENE, bh.ALKYNE):
        olefin, alkane, n_sub, hetero = _chain_reference(mol, unit)
    else:
        olefin, alkane, n_sub, hetero = _alkene_reference(mol, *unit.atoms)
    olefin, alkane = canonical_smiles(olefin), canonical_smiles(alkane)
    words = {1: "monosubstituted", 2: "disubstituted", 3: "trisubstituted", 4: "tetrasubstituted"}
    return {
        "unsaturated": {"name": _NAMES.get(olefin), "smiles": olefin},
        "saturated": {"name": _NAMES.get(alkane), "smiles": alkane},
        "substitution": words.get(n_sub, f"{n_sub} substituents"),
        "heteroatom_neighbours": hetero,
    }


# ---------------------------------------------------------------- distortion


def _distortion(sp: Species, unit: Unit, tier: str) -> dict:
    xyz = sp.positions
    mol_h = sp.mol_h
    out = {"twist_deg": None, "pyramidalization_deg": None, "chi_deg": None, "bend_angle_deg": None}
    if unit.kind in (bh.ALLENE, bh.ALKYNE):
        a = unit.atoms[0]
        out["bond_length_angstrom"] = round(geo.distance(xyz[a], xyz[unit.atoms[1]]), 4)
        out["bend_angle_deg"] = round(_min_bend(mol_h, xyz, unit), 2)
    else:
        i, j = unit.atoms
        subs_i = [n.GetIdx() for n in mol_h.GetAtomWithIdx(i).GetNeighbors() if n.GetIdx() != j]
        subs_j = [n.GetIdx() for n in mol_h.GetAtomWithIdx(j).GetNeighbors() if n.GetIdx() != i]
        wd = geo.winkler_dunitz(xyz, i, j, subs_i, subs_j)
        out["twist_deg"] = round(abs(wd.twist_deg), 2)
        out["pyramidalization_deg"] = round(wd.pyramidalization_deg, 2)
        out["chi_deg"] = [round(wd.chi1_deg, 2), round(wd.chi2_deg, 2)]
        out["bond_length_angstrom"] = round(geo.distance(xyz[i], xyz[j]), 4)
    out["wiberg_bond_order"] = None
    if tier == "accurate" and sp.bond_orders is not None:
        i, j = unit.atoms[0], unit.atoms[1]
        out["wiberg_bond_order"] = round(float(sp.bond_orders[i, j]), 3)
    return out


def _min_bend(mol_h: Chem.Mol, xyz: np.ndarray, unit: Unit) -> float:
    """Smallest bond angle along the cumulated/triple unit: how far it is bent from 180 degrees."""
    angles = []
    chain = unit.atoms
    if unit.kind == bh.ALLENE:
        angles.append(geo.angle(xyz[chain[0]], xyz[chain[1]], xyz[chain[2]]))
    else:
        for end, other in ((chain[0], chain[1]), (chain[1], chain[0])):
            for n in mol_h.GetAtomWithIdx(end).GetNeighbors():
                if n.GetIdx() != other:
                    angles.append(geo.angle(xyz[n.GetIdx()], xyz[end], xyz[other]))
    return min(angles)


# ---------------------------------------------------------------- the public entry point


def _notify(progress: Progress | None, stage: str, fraction: float) -> None:
    if progress is not None:
        progress(stage, fraction)


@_guarded
def compute_strain(smiles: str, tier: str = "accurate", progress: Progress | None = None) -> dict:
    """Olefin strain and distortion of the intermediate's strained unit, as a JSON-ready dict."""
    _check_tier(tier)
    start = time.perf_counter()
    mol = bh.parse(smiles)
    _notify(progress, "perceive", 0.0)
    perception = bh.perceive_mol(mol)
    result = _skeleton(mol, perception, tier)
    unit = _unit(mol, perception)
    if unit is None:
        result["message"] = perception.message
        result["seconds"] = round(time.perf_counter() - start, 3)
        _notify(progress, "done", 1.0)
        return result
    ref = reference_pair(mol, unit)
    parent = cf.saturated(mol, unit.bond_ids)
    steps = [
        ("intermediate", lambda: _species(mol, tier, unit.bond_ids)),
        ("hydrogenated parent", lambda: _species(parent, tier)),
        ("reference unsaturated", lambda: _reference_species(ref["unsaturated"]["smiles"], tier)),
        ("reference saturated", lambda: _reference_species(ref["saturated"]["smiles"], tier)),
    ]
    energies = {}
    for k, (name, run) in enumerate(steps):
        _notify(progress, f"{name}: {METHODS[tier].split(' ')[0]}", k / len(steps))
        energies[name] = run()
    olefin = energies["intermediate"]
    os_kcal = (olefin.energy_kcal - energies["hydrogenated parent"].energy_kcal) - (
        energies["reference unsaturated"].energy_kcal - energies["reference saturated"].energy_kcal
    )
    result.update(_distortion(olefin, unit, tier))
    result.update(
        {
            "olefin_strain_kcal_mol": round(os_kcal, 2),
            "stability_class": stability_class(os_kcal),
            "conformers": olefin.conformers,
            "converged": all(s.converged for s in energies.values()),
            "reference": ref,
            "parent_smiles": Chem.MolToSmiles(parent),
            "species": {name: _species_summary(sp) for name, sp in energies.items()},
            "embedding": olefin.route,
        }
    )
    if unit.candidate is None:
        result["message"] = f"{perception.message} Strain computed for the ring double bond."
    result["seconds"] = round(time.perf_counter() - start, 3)
    _notify(progress, "done", 1.0)
    return result


def _skeleton(mol: Chem.Mol, perception: bh.Perception, tier: str) -> dict:
    cand = perception.best
    return {
        "smiles": Chem.MolToSmiles(mol),
        "kind": perception.kind,
        "bridges": list(cand.bridges) if cand and cand.bridges else None,
        "s_value": cand.s_value if cand else None,
        "trans_ring_size": cand.trans_ring_size if cand else None,
        "ring_size": cand.ring_size if cand else None,
        "candidates": [c.to_dict() for c in perception.candidates],
        "olefin_strain_kcal_mol": None,
        "stability_class": None,
        "twist_deg": None,
        "pyramidalization_deg": None,
        "bond_length_angstrom": None,
        "wiberg_bond_order": None,
        "tier": tier,
        "method": METHODS[tier],
        "rough": tier == "fast",
        "conformers": 0,
        "seconds": 0.0,
        "engine_version": ENGINE_VERSION,
        "reference": None,
        "message": "",
    }


def _species_summary(sp: Species) -> dict:
    return {
        "smiles": sp.smiles,
        "energy_kcal_mol": round(sp.energy_kcal, 4),
        "conformers": sp.conformers,
        "converged": sp.converged,
        "force_field": sp.force_field,
    }


# ---------------------------------------------------------------- precursor alignment

_SI_C_C_X = Chem.MolFromSmarts("[Si]-[#6]~[#6]-[$([OX2][SX4](=O)(=O)),Cl,Br,I]")
ALIGNED_WITHIN_DEG = 30.0


def _leaving_group(mol: Chem.Mol, x: int) -> str:
    atom = mol.GetAtomWithIdx(x)
    if atom.GetAtomicNum() != 8:
        return {17: "chloride", 35: "bromide", 53: "iodide"}[atom.GetAtomicNum()]
    sulfur = next(n for n in atom.GetNeighbors() if n.GetAtomicNum() == 16)
    carbon = next((n for n in sulfur.GetNeighbors() if n.GetAtomicNum() == 6), None)
    if carbon is None:
        return "sulfonate"
    fluorines = sum(1 for n in carbon.GetNeighbors() if n.GetAtomicNum() == 9)
    if fluorines == 3:
        return "triflate"
    if fluorines == 2:
        return "nonaflate" if _perfluoro_carbons(carbon, sulfur.GetIdx()) == 4 else "perfluoroalkanesulfonate"
    if carbon.GetIsAromatic():
        return "tosylate" if _para_methyl(carbon) else "arenesulfonate"
    return "mesylate" if carbon.GetDegree() == 1 else "alkanesulfonate"


def _perfluoro_carbons(start: Chem.Atom, sulfur: int) -> int:
    seen, stack = {start.GetIdx()}, [start]
    while stack:
        atom = stack.pop()
        for n in atom.GetNeighbors():
            if n.GetAtomicNum() == 6 and n.GetIdx() not in seen and n.GetIdx() != sulfur:
                seen.add(n.GetIdx())
                stack.append(n)
    return len(seen)


def _para_methyl(ipso: Chem.Atom) -> bool:
    ring = Chem.MolFromSmarts("c1ccc(-[CH3])cc1")
    frag_mol = ipso.GetOwningMol()
    return any(ipso.GetIdx() == m[0] for m in frag_mol.GetSubstructMatches(ring))


def _verdict(weighted_abs: float, anti: float, syn: float) -> str:
    """Judge by the aligned population first: a mean over two conformer families
    (say 60 and 180 degrees) would otherwise read as a misleading 120."""
    if anti + syn >= 0.5:
        return "well aligned (antiperiplanar)" if anti >= syn else "well aligned (synperiplanar)"
    if anti + syn >= 0.1:
        side = "antiperiplanar" if anti >= syn else "synperiplanar"
        return f"partly aligned (minor {side} population)"
    if 45 <= weighted_abs <= 135:
        return "poorly aligned (near orthogonal)"
    return "partly aligned (synclinal)" if weighted_abs < 45 else "partly aligned (anticlinal)"


def _boltzmann(energies: list[float]) -> np.ndarray:
    e = np.asarray(energies, dtype=float)
    w = np.exp(-(e - e.min()) / RT_298_KCAL)
    return w / w.sum()


@_guarded
def precursor_alignment(smiles: str) -> dict:
    """How well the C–Si bond lines up with the C–X bond it must push out, over the
    MMFF ensemble at 298 K; the diastereomer that cannot align may never fire."""
    start = time.perf_counter()
    mol = bh.parse(smiles)
    units = [tuple(m) for m in mol.GetSubstructMatches(_SI_C_C_X)]
    if not units:
        raise ChemistryError(
            "No Si–C–C–X unit (silyl group beside a triflate, nonaflate, tosylate or halide).",
            "Give the silyl precursor, e.g. C[Si](C)(C)[C@@H]1CCCC[C@H]1OS(=O)(=O)C(F)(F)F.",
        )
    ens = cf.build_ensemble(mol, n_confs=max(60, cf.n_conformers_for(mol)))
    weights = _boltzmann(ens.energies)
    reports = [_unit_report(mol, ens, weights, u) for u in units]
    out = dict(reports[0])
    out.update(
        {
            "smiles": Chem.MolToSmiles(mol),
            "conformers": len(ens.conf_ids),
            "method": "MMFF94 (RDKit ETKDG), Boltzmann 298 K",
            "units": reports,
            "engine_version": ENGINE_VERSION,
            "seconds": round(time.perf_counter() - start, 3),
        }
    )
    return out


def _unit_report(mol, ens: cf.Ensemble, weights: np.ndarray, unit: tuple) -> dict:
    si, c_si, c_x, x = unit
    phis = np.array([abs(geo.torsion_deg(ens.positions(c), si, c_si, c_x, x)) for c in ens.conf_ids])
    weighted = float(np.dot(weights, phis))
    syn = float(weights[phis <= ALIGNED_WITHIN_DEG].sum())
    anti = float(weights[phis >= 180 - ALIGNED_WITHIN_DEG].sum())
    return {
        "atoms": {"si": si, "c_si": c_si, "c_x": c_x, "x": x},
        "leaving_group": _leaving_group(mol, x),
        "dihedral_deg": round(float(phis[0]), 1),
        "weighted_dihedral_deg": round(weighted, 1),
        "aligned_fraction": round(anti + syn, 3),
        "verdict": _verdict(weighted, anti, syn),
    }

