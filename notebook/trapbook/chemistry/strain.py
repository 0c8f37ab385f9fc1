"""Strain of a strained intermediate, in two tiers, by balanced reaction schemes.

Each kind has its own quantity (see `schemes` for the reactions and `trapbook.stability`
for the classes): olefin strain for bridgehead and other ring alkenes (Maier and
Schleyer), ring strain beside the excess over the saturated ring for cycloalkynes and
cyclic allenes, and the strain of the formal triple bond for arynes. Each energy is taken
at the lowest conformer found. Method errors largely cancel within a balanced scheme,
but MMFF94 still overestimates twisted alkenes: the fast tier is a labelled prescreen
that is never classed, and the accurate tier (GFN2-xTB geometries) is the answer.
"""

from __future__ import annotations

import time
from collections.abc import Callable

import numpy as np
from rdkit import Chem

from trapbook import stability

from . import bridgehead as bh
from . import geometry as geo
from . import schemes as sch
from .species import (  # noqa: F401  (re-exported: callers import these from here)
    METHODS,
    Species,
    check_tier,
    conformer_energy,
    guarded,
    reference_species,
    shutdown,
    species,
)
from .strain_key import ENGINE_SCHEME, ENGINE_VERSION, TIERS, cache_key  # noqa: F401  (one definition of the key)

Progress = Callable[[str, float], None]
_reference_species = reference_species  # benchmark scripts clear this cache between molecules
PRESCREEN_NOTE = (
    "fast tier: MMFF94 prescreen, no class is given (MMFF94 overestimates twisted alkenes); "
    "run the accurate tier before acting on it"
)


def stability_class(os_kcal: float | None, kind: str = stability.BRIDGEHEAD) -> str | None:
    """Class of an accurate-tier number of a kind (default: bridgehead olefin strain)."""
    return stability.class_of(kind, os_kcal)


def canonical_smiles(smiles: str) -> str:
    return Chem.MolToSmiles(bh.parse(smiles))


def precursor_alignment(smiles: str, temperature_c: float = 25.0) -> dict:
    """Kept here for callers of the old location; the work is in `alignment`."""
    from .alignment import precursor_alignment as run

    return run(smiles, temperature_c=temperature_c)


# ---------------------------------------------------------------- distortion


def _distortion(sp: Species, unit: sch.Unit, tier: str) -> dict:
    xyz = sp.positions
    mol_h = sp.mol_h
    out = {"twist_deg": None, "pyramidalization_deg": None, "chi_deg": None, "bend_angle_deg": None}
    if unit.kind in (bh.ALLENE, bh.ALKYNE, bh.ARYNE):
        out["bond_length_angstrom"] = round(geo.distance(xyz[unit.atoms[0]], xyz[unit.atoms[1]]), 4)
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
        out["wiberg_bond_order"] = round(float(sp.bond_orders[unit.atoms[0], unit.atoms[1]]), 3)
    return out


def _min_bend(mol_h: Chem.Mol, xyz: np.ndarray, unit: sch.Unit) -> float:
    """Smallest bond angle along the cumulated/triple unit: how far it is bent from 180 degrees."""
    chain = unit.atoms
    if unit.kind == bh.ALLENE:
        return geo.angle(xyz[chain[0]], xyz[chain[1]], xyz[chain[2]])
    angles = []
    for end, other in ((chain[0], chain[1]), (chain[1], chain[0])):
        for n in mol_h.GetAtomWithIdx(end).GetNeighbors():
            if n.GetIdx() != other:
                angles.append(geo.angle(xyz[n.GetIdx()], xyz[end], xyz[other]))
    return min(angles)


# ---------------------------------------------------------------- energies of a scheme


def _notify(progress: Progress | None, stage: str, fraction: float) -> None:
    if progress is not None:
        progress(stage, fraction)


def _scheme_value(scheme: sch.Scheme, energies: dict[str, Species]) -> float:
    sch.assert_balanced(scheme)  # again at the point of use: no number from an unbalanced scheme
    return float(sum(float(t.coefficient) * energies[t.smiles].energy_kcal for t in scheme.terms))


def _energies(mol, unit, parent, schemes, tier, progress) -> dict[str, Species]:
    """Energy of every species the schemes name, the intermediate first (its strained bonds
    may need the saturated-analogue embedding)."""
    inter = Chem.MolToSmiles(mol)
    order = [inter] + [t.smiles for s in schemes for t in s.terms if t.smiles != inter]
    unique = list(dict.fromkeys(order))
    parent_smiles = Chem.MolToSmiles(parent)
    out: dict[str, Species] = {}
    for k, smi in enumerate(unique):
        _notify(progress, f"{smi[:30]}: {METHODS[tier].split(' ')[0]}", k / len(unique))
        if smi == inter:
            out[smi] = species(mol, tier, unit.bond_ids)
        elif smi == parent_smiles:
            out[smi] = species(parent, tier)
        else:
            out[smi] = reference_species(smi, tier)
    return out


# ---------------------------------------------------------------- the public entry point


@guarded
def compute_strain(smiles: str, tier: str = "accurate", progress: Progress | None = None) -> dict:
    """Strain and distortion of the intermediate's strained unit, as a JSON-ready dict."""
    check_tier(tier)
    start = time.perf_counter()
    mol = bh.parse(smiles)
    _notify(progress, "perceive", 0.0)
    perception = bh.perceive_mol(mol)
    result = _skeleton(mol, perception, tier)
    unit = sch.find_unit(mol, perception)
    if unit is None:
        return _finish(result, perception.message, start, progress)
    result["kind"] = unit.kind
    parent = sch.parent_of(mol, unit)
    ref = sch.reference_pair(mol, unit)
    schemes = [sch.unit_scheme(mol, unit, parent, ref)]
    if unit.kind in (bh.ALKYNE, bh.ALLENE):
        ring = sch.ring_strain_scheme(parent)
        if ring is not None:
            schemes.append(ring)
    energies = _energies(mol, unit, parent, schemes, tier, progress)
    result.update(_values(unit.kind, schemes, energies))
    olefin = energies[Chem.MolToSmiles(mol)]
    result.update(_distortion(olefin, unit, tier))
    result.update(
        {
            "conformers": olefin.conformers,
            "converged": all(s.converged for s in energies.values()),
            "reference": ref,
            "parent_smiles": Chem.MolToSmiles(parent),
            "schemes": [s.to_dict() for s in schemes],
            "species": {smi: sp.summary() for smi, sp in energies.items()},
            "embedding": olefin.route,
        }
    )
    _judge_into(result)
    message = f"{perception.message} Strain computed for the ring double bond." if unit.candidate is None else ""
    return _finish(result, message, start, progress)


def _values(kind: str, schemes: list[sch.Scheme], energies: dict[str, Species]) -> dict:
    unit_value = round(_scheme_value(schemes[0], energies), 2)
    out: dict = {}
    if kind == bh.ARYNE:
        out["aryne_strain_kcal_mol"] = unit_value
    elif kind in (bh.ALKYNE, bh.ALLENE):
        out["excess_strain_kcal_mol"] = unit_value
        ring = round(unit_value + _scheme_value(schemes[1], energies), 2) if len(schemes) > 1 else None
        out["ring_strain_kcal_mol"] = ring
        if ring is None:
            out["ring_strain_note"] = (
                "ring strain not computed: a ring of the saturated parent holds an aromatic or "
                "multiple bond, which the group scheme would count as strain"
            )
    else:
        out["olefin_strain_kcal_mol"] = unit_value
    key = stability.value_key(kind)
    out["strain_quantity"] = stability.quantity_of(kind)
    out["strain_kcal_mol"] = out.get(key) if key else None
    return out


def _judge_into(result: dict) -> None:
    """Class only an accurate-tier number; the fast tier is a prescreen and gets none."""
    verdict = stability.judge(result)
    result["stability_class"] = verdict.stability if verdict else None
    result["needs_trap"] = verdict.needs_trap if verdict else None
    result["judgement"] = (
        {
            "stability": verdict.stability,
            "needs_trap": verdict.needs_trap,
            "words": verdict.words,
            "quantity": verdict.quantity,
            "value_kcal_mol": verdict.value_kcal,
            "source": verdict.source,
        }
        if verdict
        else None
    )
    if result["tier"] != stability.ACTIONABLE_TIER:
        result["prescreen_note"] = PRESCREEN_NOTE


def _finish(result: dict, message: str, start: float, progress: Progress | None) -> dict:
    if message:
        result["message"] = message
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
        "strain_quantity": None,
        "strain_kcal_mol": None,
        "olefin_strain_kcal_mol": None,
        "stability_class": None,
        "needs_trap": None,
        "judgement": None,
        "twist_deg": None,
        "pyramidalization_deg": None,
        "bond_length_angstrom": None,
        "wiberg_bond_order": None,
        "tier": tier,
        "method": METHODS[tier],
        "rough": tier == "fast",
        "prescreen": tier == "fast",
        "conformers": 0,
        "seconds": 0.0,
        "engine_version": ENGINE_VERSION,
        "reference": None,
        "message": "",
    }
