"""Can a silyl precursor fire? The Si–C–C–X alignment over its reachable conformers.

Fluoride-induced 1,2-elimination needs the C–Si bond lined up with the C–X bond it pushes
out: antiperiplanar (or, in a rigid ring such as an aryl or vinyl triflate, synperiplanar).
Conformers interconvert fast at the bench, so a diastereomer whose lowest conformer is
gauche still fires if an aligned conformer is reachable (Curtin–Hammett): the verdict
says which conformer aligns, what it costs and how much of the ensemble it holds at the
run's temperature. Angles are named by the Klyne–Prelog ranges. A precursor with
unassigned stereocentres is split into its diastereomers, each judged side by side,
because they can behave oppositely.

Energies are MMFF94 conformer energies (RDKit ETKDG ensemble, fixed seed).
"""

from __future__ import annotations

import math
import time

import numpy as np
from rdkit import Chem
from rdkit.Chem.EnumerateStereoisomers import EnumerateStereoisomers, StereoEnumerationOptions

from trapbook.errors import ChemistryError

from . import bridgehead as bh
from . import conformers as cf
from . import geometry as geo
from .species import guarded
from .strain_key import ENGINE_VERSION

_SI_C_C_X = Chem.MolFromSmarts("[Si]-[#6]~[#6]-[$([OX2][SX4](=O)(=O)),Cl,Br,I]")
R_KCAL = 0.0019872043
#: within this many degrees of 0° or 180° the bonds count as aligned (Klyne–Prelog periplanar)
ALIGNED_WITHIN_DEG = 30.0
#: an aligned conformer no higher than this above the lowest one is reachable at the bench
REACHABLE_KCAL = 3.0
MAX_DIASTEREOMERS = 8
MEASURED = (
    "Measured: the Si–C–C–X dihedral (silyl carbon to leaving-group carbon) in every MMFF94 conformer "
    "of the precursor, Boltzmann populations at the given temperature, and the energy needed to reach "
    "the best-aligned conformer. Named by Klyne–Prelog: synperiplanar 0–30°, synclinal (gauche) 30–90°, "
    "anticlinal 90–150°, antiperiplanar 150–180°. Elimination needs antiperiplanar (or synperiplanar "
    f"in a rigid ring); an aligned conformer within {REACHABLE_KCAL:.0f} kcal/mol counts as reachable."
)


def klyne_prelog(phi_deg: float) -> str:
    """Name of a dihedral by the Klyne–Prelog ranges (sign ignored)."""
    phi = abs(phi_deg)
    if phi <= 30:
        return "synperiplanar"
    if phi <= 90:
        return "synclinal (gauche)"
    if phi <= 150:
        return "anticlinal"
    return "antiperiplanar"


def kelvin_of(temperature_c: float) -> float:
    """The temperature in kelvin, refused with words when it cannot be a run temperature."""
    kelvin = float(temperature_c) + 273.15
    if not math.isfinite(kelvin) or kelvin <= 0:
        raise ChemistryError(
            f"Temperature {temperature_c} °C is not a usable temperature.",
            "Give the run temperature in °C, above absolute zero (−273.15 °C).",
        )
    return kelvin


def populations(energies_kcal, temperature_c: float) -> np.ndarray:
    """Boltzmann populations of distinct conformers at the temperature; they sum to 1."""
    kelvin = kelvin_of(temperature_c)
    e = np.asarray(energies_kcal, dtype=float)
    w = np.exp(-(e - e.min()) / (R_KCAL * kelvin))
    pops = w / w.sum()
    if not math.isclose(float(pops.sum()), 1.0, abs_tol=1e-9):
        raise ChemistryError("Conformer populations do not sum to 100 %.", "Report the structure.")
    return pops


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
    return any(ipso.GetIdx() == m[0] for m in ipso.GetOwningMol().GetSubstructMatches(ring))


def _units(mol: Chem.Mol) -> list[tuple]:
    units = [tuple(m) for m in mol.GetSubstructMatches(_SI_C_C_X)]
    if not units:
        raise ChemistryError(
            "No Si–C–C–X unit (silyl group beside a triflate, nonaflate, tosylate or halide).",
            "Give the silyl precursor, e.g. C[Si](C)(C)[C@@H]1CCCC[C@H]1OS(=O)(=O)C(F)(F)F.",
        )
    return units


def unassigned_diastereomers(mol: Chem.Mol) -> list[Chem.Mol]:
    """Every diastereomer that can be embedded when stereocentres are left open (one of each
    mirror pair); [] when there is only one, e.g. all centres set or a lone open centre."""
    kept = embeddable_diastereomers(mol)
    return kept if len(kept) > 1 else []


def embeddable_diastereomers(mol: Chem.Mol) -> list[Chem.Mol]:
    """The diastereomers of the open stereocentres that embed in 3D, one of each mirror pair
    (RDKit's tryEmbedding: an isomer that cannot be embedded is taken as non-physical)."""
    opts = StereoEnumerationOptions(
        onlyUnassigned=True, tryEmbedding=True, unique=True, maxIsomers=MAX_DIASTEREOMERS, rand=0xC0FFEE
    )
    isomers = list(EnumerateStereoisomers(mol, options=opts))
    # enantiomers align identically: keep one of each mirror pair
    seen, kept = set(), []
    for iso in isomers:
        smi = Chem.MolToSmiles(iso)
        mirror = Chem.MolToSmiles(_mirror(iso))
        if smi in seen or mirror in seen:
            continue
        seen.add(smi)
        kept.append(iso)
    return kept


def _mirror(mol: Chem.Mol) -> Chem.Mol:
    m = Chem.Mol(mol)
    flip = {
        Chem.ChiralType.CHI_TETRAHEDRAL_CW: Chem.ChiralType.CHI_TETRAHEDRAL_CCW,
        Chem.ChiralType.CHI_TETRAHEDRAL_CCW: Chem.ChiralType.CHI_TETRAHEDRAL_CW,
    }
    for a in m.GetAtoms():
        a.SetChiralTag(flip.get(a.GetChiralTag(), a.GetChiralTag()))
    return m


@guarded
def precursor_alignment(smiles: str, temperature_c: float = 25.0) -> dict:
    """Si–C–C–X alignment of a silyl precursor at a temperature; diastereomers side by side
    when the SMILES leaves stereocentres open."""
    start = time.perf_counter()
    kelvin_of(temperature_c)
    mol = bh.parse(smiles)
    _units(mol)
    isomers = unassigned_diastereomers(mol)
    if isomers:
        sides, dropped = _real_diastereomers([_one_isomer(iso, temperature_c) for iso in isomers])
        verdicts = {s["verdict_short"] for s in sides}
        out = dict(sides[0])
        out.update(
            {
                "smiles": Chem.MolToSmiles(mol),
                "stereo_warning": (
                    f"{len(sides)} diastereomers: the SMILES leaves stereocentres unassigned, so "
                    "each one is judged below"
                    + ("; they differ" if len(verdicts) > 1 else "")
                    + (f" ({len(dropped)} more left out as too strained to exist)" if dropped else "")
                ),
                "verdict": "depends on the diastereomer: " + "; ".join(f"{s['smiles']}: {s['verdict']}" for s in sides),
                "diastereomers": sides,
                "left_out_diastereomers": dropped,
            }
        )
    else:
        out = _one_isomer(mol, temperature_c)
        out["stereo_warning"] = None
        out["diastereomers"] = []
        out["left_out_diastereomers"] = []
    out["seconds"] = round(time.perf_counter() - start, 3)
    return out


#: a diastereomer this far above the best one (MMFF94) is an impossible ring fusion, e.g. an
#: in/out bridged bicycle that embedding forced into shape
IMPOSSIBLE_ABOVE_KCAL = 25.0


def _real_diastereomers(sides: list[dict]) -> tuple[list[dict], list[dict]]:
    """Split off diastereomers too strained to exist, saying how far above the best each lies."""
    best = min(s["mmff_energy_kcal_mol"] for s in sides)
    kept = [s for s in sides if s["mmff_energy_kcal_mol"] - best <= IMPOSSIBLE_ABOVE_KCAL]
    dropped = [
        {"smiles": s["smiles"], "above_best_kcal_mol": round(s["mmff_energy_kcal_mol"] - best, 1)} for s in sides if s not in kept
    ]
    return kept, dropped


def _one_isomer(mol: Chem.Mol, temperature_c: float) -> dict:
    units = _units(mol)
    ens = cf.build_ensemble(mol, n_confs=max(60, cf.n_conformers_for(mol)))
    pops = populations(ens.energies, temperature_c)
    reports = [_unit_report(mol, ens, pops, u, temperature_c) for u in units]
    best = max(
        reports, key=lambda r: (r["aligned_fraction"], -r["best_aligned"]["delta_kcal_mol"] if r["best_aligned"] else -1e9)
    )
    out = dict(best)
    out.update(
        {
            "smiles": Chem.MolToSmiles(mol),
            "conformers": len(ens.conf_ids),
            "mmff_energy_kcal_mol": round(float(ens.energies[0]), 3),
            "temperature_c": temperature_c,
            "method": f"MMFF94 (RDKit ETKDG), Boltzmann populations at {temperature_c:g} °C",
            "measured": MEASURED,
            "units": reports,
            "engine_version": ENGINE_VERSION,
        }
    )
    return out


def _unit_report(mol, ens: cf.Ensemble, pops: np.ndarray, unit: tuple, temperature_c: float) -> dict:
    si, c_si, c_x, x = unit
    phis = np.array([abs(geo.torsion_deg(ens.positions(c), si, c_si, c_x, x)) for c in ens.conf_ids])
    energies = np.asarray(ens.energies) - ens.energies[0]
    syn = phis <= ALIGNED_WITHIN_DEG
    anti = phis >= 180 - ALIGNED_WITHIN_DEG
    aligned = syn | anti
    best = None
    if aligned.any():
        k = int(np.argmin(np.where(aligned, energies, np.inf)))
        best = {
            "dihedral_deg": round(float(phis[k]), 1),
            "words": klyne_prelog(phis[k]),
            "delta_kcal_mol": round(float(energies[k]), 2),
            "population": round(float(pops[k]), 4),
            "reachable": bool(energies[k] <= REACHABLE_KCAL),
        }
    in_ring = mol.GetRingInfo().NumBondRings(mol.GetBondBetweenAtoms(c_si, c_x).GetIdx()) > 0
    verdict, short = _verdict(phis, pops, energies, best, in_ring, temperature_c)
    table = [
        {
            "delta_kcal_mol": round(float(e), 2),
            "population": round(float(p), 4),
            "dihedral_deg": round(float(f), 1),
            "words": klyne_prelog(f),
        }
        for e, p, f in list(zip(energies, pops, phis))[:12]
    ]
    return {
        "atoms": {"si": si, "c_si": c_si, "c_x": c_x, "x": x},
        "leaving_group": _leaving_group(mol, x),
        "dihedral_deg": round(float(phis[0]), 1),
        "dihedral_words": klyne_prelog(phis[0]),
        "weighted_dihedral_deg": round(float(np.dot(pops, phis)), 1),
        "aligned_fraction": round(float(pops[aligned].sum()), 4),
        "antiperiplanar_fraction": round(float(pops[anti].sum()), 4),
        "synperiplanar_fraction": round(float(pops[syn].sum()), 4),
        "best_aligned": best,
        "verdict": verdict,
        "verdict_short": short,
        "conformer_table": table,
    }


def _verdict(phis, pops, energies, best, in_ring: bool, temperature_c: float) -> tuple[str, str]:
    """Words first by the lowest conformer, then by the cheapest aligned one."""
    low_words = klyne_prelog(phis[0])
    if best is not None and best["delta_kcal_mol"] <= 0.05:
        fixed = " (held by the ring)" if in_ring and float(phis.max() - phis.min()) < 20 else ""
        return (
            f"aligned: {best['words']} in the lowest conformer{fixed}, "
            f"{_pct(pops[(phis <= ALIGNED_WITHIN_DEG) | (phis >= 180 - ALIGNED_WITHIN_DEG)].sum())} "
            f"aligned at {temperature_c:g} °C"
        ), "aligned"
    if best is not None and best["reachable"]:
        how = "a ring flip" if in_ring else "a bond rotation"
        return (
            f"aligns after {how}, +{best['delta_kcal_mol']:.1f} kcal/mol, {_pct(best['population'])} at "
            f"{temperature_c:g} °C ({best['words']}, {best['dihedral_deg']:.0f}°; lowest conformer "
            f"{low_words}, {phis[0]:.0f}°)"
        ), "aligns after a change of conformer"
    near = phis[energies <= REACHABLE_KCAL]
    short_by = float(min(np.min(np.abs(near - 0.0)), np.min(np.abs(180.0 - near)))) - ALIGNED_WITHIN_DEG
    tail = (
        f"; the nearest periplanar conformer lies +{best['delta_kcal_mol']:.1f} kcal/mol up"
        if best is not None
        else "; no periplanar conformer was found"
    )
    return (
        f"not periplanar: within {REACHABLE_KCAL:.0f} kcal/mol the Si–C–C–X dihedral stays "
        f"{_range_words(phis, energies)}, {short_by:.0f}° short of periplanar at best{tail}. Expect this "
        "diastereomer to eliminate more slowly than an aligned one"
    ), "not periplanar"


def _range_words(phis, energies) -> str:
    near = phis[energies <= REACHABLE_KCAL]
    words = sorted({klyne_prelog(p) for p in near})
    low, high = round(float(near.min())), round(float(near.max()))
    span = f"{low}°" if low == high else f"{low}–{high}°"
    return f"{' or '.join(words)} ({span})"


def _pct(fraction) -> str:
    value = float(fraction) * 100
    return f"{value:.0f} %" if value >= 1 else f"{value:.1f} %"
