"""Lowest-conformer energies of the molecules in a strain scheme, in two tiers.

The fast tier is the MMFF94 minimum of a bounded ETKDG ensemble; the accurate tier
re-optimises the lowest few MMFF minima with GFN2-xTB and keeps the best one whose
bonds and stereochemistry survived. Each species says which method gave its energy
and which searched its conformers, so an xTB number is never labelled MMFF94.
"""

from __future__ import annotations

import functools
import multiprocessing
from concurrent.futures import ProcessPoolExecutor
from dataclasses import dataclass
from functools import lru_cache

import numpy as np
from rdkit import Chem

from trapbook.errors import ChemistryError, TrapbookError

from . import bridgehead as bh
from . import conformers as cf
from . import xtb
from .strain_key import TIERS

METHODS = {
    "fast": "MMFF94 (RDKit ETKDG) — rough prescreen, no class",
    "accurate": "GFN2-xTB (tblite) on MMFF94 conformers",
}
# How many distinct MMFF minima go on to GFN2-xTB, and within what MMFF window.
# The window is wide because MMFF mis-orders twisted-alkene conformers.
XTB_CONFORMERS = 4
XTB_WINDOW_KCAL = 10.0
WORKERS = 2
# Below this many atoms a GFN2-xTB optimisation takes well under a second, less than
# starting worker processes; such molecules are optimised in-process, one after another.
PARALLEL_MIN_ATOMS = 45


def guarded(func):
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


def check_tier(tier: str) -> None:
    if tier not in TIERS:
        raise ChemistryError(f"Unknown tier {tier!r}.", "Use 'fast' (rough prescreen) or 'accurate'.")


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
    energy_method: str
    conformer_search: str

    def summary(self) -> dict:
        return {
            "smiles": self.smiles,
            "energy_kcal_mol": round(self.energy_kcal, 4),
            "conformers": self.conformers,
            "converged": self.converged,
            "energy_method": self.energy_method,
            "conformer_search": self.conformer_search,
        }


_POOL = None


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
        energy_method=ens.force_field,
        conformer_search=f"{ens.force_field} ({ens.route})",
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


def _stereo_kept(mol_h: Chem.Mol, xyz: np.ndarray, wanted: tuple) -> bool:
    probe = Chem.Mol(mol_h)
    probe.RemoveAllConformers()
    conf = Chem.Conformer(probe.GetNumAtoms())
    for i, p in enumerate(xyz):
        conf.SetAtomPosition(i, p.tolist())
    cid = probe.AddConformer(conf, assignId=True)
    return cf.stereo_matches(probe, cid, wanted)


def _xtb_species(ens: cf.Ensemble, base: Species) -> Species:
    numbers = [a.GetAtomicNum() for a in ens.mol.GetAtoms()]
    ids = _xtb_candidates(ens)
    results = _run_jobs([(numbers, ens.positions(c)) for c in ids])
    wanted = cf.specified_stereo(Chem.RemoveHs(ens.mol))
    good = [
        res
        for res in results
        if not isinstance(res, str) and _same_bonds(ens.mol, res.positions) and _stereo_kept(ens.mol, res.positions, wanted)
    ]
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
        energy_method=xtb.METHOD,
        conformer_search=base.conformer_search,
    )


def species(mol: Chem.Mol, tier: str, relax_bonds: list[int] | None = None) -> Species:
    ens, sp = _mmff_species(mol, relax_bonds)
    return _xtb_species(ens, sp) if tier == "accurate" else sp


@lru_cache(maxsize=128)
def reference_species(smiles: str, tier: str) -> Species:
    """Reference molecules recur in every calculation; compute each once per process."""
    return species(bh.parse(smiles), tier)


def unsaturated_ring_bonds(mol: Chem.Mol) -> list[int]:
    return [
        b.GetIdx()
        for b in mol.GetBonds()
        if b.GetBondType() in (Chem.BondType.DOUBLE, Chem.BondType.TRIPLE) and mol.GetRingInfo().NumBondRings(b.GetIdx())
    ]


@guarded
def conformer_energy(smiles: str, tier: str = "accurate") -> dict:
    """Lowest-conformer energy of any molecule (kcal/mol, the tier's own zero), for
    comparing isomers directly, e.g. trans- against cis-cyclooctene."""
    check_tier(tier)
    mol = bh.parse(smiles)
    sp = species(mol, tier, unsaturated_ring_bonds(mol))
    return {
        "smiles": sp.smiles,
        "energy_kcal_mol": sp.energy_kcal,
        "conformers": sp.conformers,
        "tier": tier,
        "method": METHODS[tier],
        "converged": sp.converged,
    }
