"""Strain-engine figures: seconds per molecule per tier, the strain beside its class, per kind.

Run:  .venv/bin/python benchmarks/strain.py [--tier fast|accurate|both] [--repeat] [--kind KIND]

Each molecule is timed cold: the per-process cache of reference energies is cleared first,
so every figure includes all species of its schemes. Targets: accurate tier <= 5 s median
per C6–C12 intermediate on the 2-core machine, no case over 30 s; fast tier <= 2 s median.
The fast tier is a prescreen and gets no class: its column shows how far MMFF94 strays
from the accurate number, which is why it is never acted on.
"""

from __future__ import annotations

import argparse
import os
import statistics
import sys
import time

from trapbook import stability
from trapbook.chemistry import strain

SERIES = {
    "bridgehead alkene": [
        ("bicyclo[2.2.1]hept-1-ene", "C12=CCC(CC1)C2"),
        ("bicyclo[2.2.2]oct-1-ene", "C12=CCC(CC1)CC2"),
        ("bicyclo[3.2.1]oct-1-ene", "C12=CCCC(CC1)C2"),
        ("bicyclo[3.2.1]oct-1(7)-ene", "C12=CCC(CCC1)C2"),
        ("bicyclo[3.3.1]non-1-ene", "C12=CCCC(CCC1)C2"),
        ("2-methylbicyclo[3.3.1]non-1-ene", "CC1=C2CCCC(CC1)C2"),
        ("bicyclo[3.2.2]non-1-ene", "C12=CCCC(CC1)CC2"),
        ("bicyclo[4.2.1]non-1-ene", "C12=CCCCC(CC1)C2"),
        ("bicyclo[3.3.2]dec-1-ene", "C12=CCCC(CCC1)CC2"),
        ("bicyclo[4.3.1]dec-1-ene", "C12=CCCCC(CCC1)C2"),
        ("bicyclo[4.4.1]undec-1-ene", "C12=CCCCC(CCCC1)C2"),
        ("bicyclo[3.3.3]undec-1-ene", "C12=CCCC(CCC1)CCC2"),
    ],
    "cycloalkyne": [
        ("cyclohexyne", "C1#CCCCC1"),
        ("cycloheptyne", "C1#CCCCCC1"),
        ("cyclooctyne", "C1#CCCCCCC1"),
        ("cyclononyne", "C1#CCCCCCCC1"),
        ("3,3-dimethylcyclooctyne", "CC1(C)CCCCCC#C1"),
    ],
    "cyclic allene": [
        ("1,2-cyclohexadiene", "C1CC=C=CC1"),
        ("1,2-cycloheptadiene", "C1CCC=C=CC1"),
        ("1,2-cyclooctadiene", "C1CCC=C=CCC1"),
        ("1,2-cyclononadiene", "C1CCCC=C=CCC1"),
        ("3-oxa-1,2-cyclohexadiene", "C1COC=C=C1"),
    ],
    "aryne": [
        ("benzyne", "C1=CC=CC#C1"),
        ("3-methoxybenzyne", "COC1=CC=CC#C1"),
        ("3,4-pyridyne", "C1=NC=CC#C1"),
        ("2,3-naphthalyne", "C1=CC2=CC#CC=C2C=C1"),
        ("4,5-difluorobenzyne", "FC1=CC#CC=C1F"),
    ],
}
EXPECTED = {  # the class the bench knows for each molecule (docs/sources.md, "Strain"); None = not stated
    "bicyclo[2.2.1]hept-1-ene": "unstable",
    "bicyclo[2.2.2]oct-1-ene": "unstable",
    "bicyclo[3.2.1]oct-1-ene": "unstable",
    "bicyclo[3.3.1]non-1-ene": "isolable",
    "cyclohexyne": "trapping only",
    "cycloheptyne": "cold and dilute only",
    "cyclooctyne": "isolable",
    "cyclononyne": "isolable",
    "1,2-cyclohexadiene": "trapping only",
    "1,2-cycloheptadiene": "trapping only",
    "1,2-cyclooctadiene": "observable",
    "1,2-cyclononadiene": "isolable",
}


def run_one(smiles: str, tier: str) -> tuple[dict, float, float]:
    """Result, wall seconds and CPU seconds of this process (the CPU figure does not grow
    when other work shares the machine; conformer work here runs in-process)."""
    strain.reference_species.cache_clear()
    t0, c0 = time.perf_counter(), time.process_time()
    result = strain.compute_strain(smiles, tier=tier)
    return result, time.perf_counter() - t0, time.process_time() - c0


def measure_cache_hit(tier: str = "fast", repeats: int = 20) -> float | None:
    """Median seconds for a strain request answered from a notebook's cache."""
    import tempfile
    from pathlib import Path

    from trapbook.store import Notebook
    from trapbook.strain_link import get_strain

    smiles = SERIES["bridgehead alkene"][0][1]
    with tempfile.TemporaryDirectory() as tmp:
        with Notebook.create(Path(tmp) / "bench.sqlite") as nb:
            get_strain(nb, smiles, tier=tier)  # fills the cache
            times = []
            for _ in range(repeats):
                t0 = time.perf_counter()
                hit = get_strain(nb, smiles, tier=tier)
                times.append(time.perf_counter() - t0)
                assert hit["cached"]
    return statistics.median(times)


def _cell(v, spec: str) -> str:
    width = int(spec.split(".")[0]) if spec[0].isdigit() else 0
    return f"{'—':>{width}}" if v is None else format(v, spec)


def table(kind: str, tier: str, repeat: bool) -> tuple[list[float], int, int]:
    quantity = stability.quantity_of(kind)
    print(f"\n-- {kind} ({tier}; classed by {quantity})")
    print(
        f"{'molecule':32s} {'value':>7s} {'OS':>6s} {'ring':>6s} {'excess':>6s} {'class':>22s} {'known':>22s} "
        f"{'WBO':>5s} {'conf':>4s} {'s':>6s} {'cpu s':>6s}" + ("  rerun d" if repeat else "")
    )
    times, cpus, agree, known = [], [], 0, 0
    for name, smiles in SERIES[kind]:
        r, dt, cpu = run_one(smiles, tier)
        times.append(dt)
        cpus.append(cpu)
        expected = EXPECTED.get(name)
        cls = r["stability_class"]
        if expected is not None and tier == "accurate":
            known += 1
            agree += cls == expected or (expected == "observable" and r.get("needs_trap"))
        line = (
            f"{name:32s} {_cell(r['strain_kcal_mol'], '7.2f')} {_cell(r['olefin_strain_kcal_mol'], '6.1f')} "
            f"{_cell(r.get('ring_strain_kcal_mol'), '6.1f')} {_cell(r.get('excess_strain_kcal_mol'), '6.1f')} "
            f"{cls or 'no class (prescreen)':>22s} {expected or '':>22s} {_cell(r['wiberg_bond_order'], '5.2f')} "
            f"{r['conformers']:>4d} {dt:6.2f} {cpu:6.2f}"
        )
        if repeat:
            again, _, _ = run_one(smiles, tier)
            line += f"  {again['strain_kcal_mol'] - r['strain_kcal_mol']:+.3f}"
        print(line, flush=True)
    print(
        f"{kind}: median {statistics.median(times):.2f} s (cpu {statistics.median(cpus):.2f} s), "
        f"max {max(times):.2f} s, n = {len(times)}"
    )
    return list(zip(times, cpus)), agree, known


def cyclooctene_gap(tier: str) -> None:
    t0 = time.perf_counter()
    trans = strain.conformer_energy("C1=C/CCCCCC/1", tier)["energy_kcal_mol"]
    cis = strain.conformer_energy("C1=C\\CCCCCC/1", tier)["energy_kcal_mol"]
    print(f"trans - cis cyclooctene ({tier}): {trans - cis:.2f} kcal/mol (measured 9.3) [{time.perf_counter() - t0:.1f} s]")


def main(argv: list[str]) -> int:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--tier", choices=["fast", "accurate", "both"], default="both")
    ap.add_argument("--kind", choices=list(SERIES), help="only this kind")
    ap.add_argument("--repeat", action="store_true", help="run each molecule twice and print the change")
    args = ap.parse_args(argv)
    print(strain.ENGINE_VERSION)
    tiers = ["fast", "accurate"] if args.tier == "both" else [args.tier]
    kinds = [args.kind] if args.kind else list(SERIES)
    for tier in tiers:
        print(f"\n== tier: {tier} — {strain.METHODS[tier]}")
        pairs, agree, known = [], 0, 0
        for kind in kinds:
            timed, a, k = table(kind, tier, args.repeat)
            pairs += timed
            agree, known = agree + a, known + k
        all_times = [t for t, _ in pairs]
        print(
            f"\nall kinds ({tier}): median {statistics.median(all_times):.2f} s "
            f"(cpu {statistics.median(c for _, c in pairs):.2f} s), max {max(all_times):.2f} s, "
            f"n = {len(all_times)}" + (f"; class agrees with the bench on {agree}/{known}" if known else "")
        )
        cyclooctene_gap(tier)
    if os.getloadavg()[0] > (os.cpu_count() or 1):
        print(
            f"note: load average {os.getloadavg()[0]:.1f} on {os.cpu_count()} cores; wall times are inflated, "
            "the cpu column is closer to an unshared machine"
        )
    hit = measure_cache_hit()
    print(f"cache hit (notebook lookup, median of 20): {hit:.4f} s")
    strain.shutdown()
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
