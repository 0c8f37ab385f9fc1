"""Strain-engine figures: seconds per molecule per tier and olefin strain beside its class.

Run:  /work/venv/bin/python benchmarks/strain.py [--tier fast|accurate|both] [--repeat]

Each molecule is timed cold: the per-process cache of reference-pair energies is
cleared first, so every figure includes all four species of the scheme. Targets
(issue 3): fast <= 2 s median, accurate <= 30 s median on the 2-core machine.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import time

from trapbook.chemistry import strain

SERIES = [
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
]


def run_one(smiles: str, tier: str) -> tuple[dict, float]:
    strain._reference_species.cache_clear()
    t0 = time.perf_counter()
    result = strain.compute_strain(smiles, tier=tier)
    return result, time.perf_counter() - t0


def measure_cache_hit(tier: str = "fast", repeats: int = 20) -> float | None:
    """Median seconds for a strain request answered from a notebook's cache."""
    import tempfile
    from pathlib import Path

    from trapbook.store import Notebook
    from trapbook.strain_link import get_strain

    smiles = SERIES[0][1]
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


def table(tier: str, repeat: bool) -> list[float]:
    print(f"\n== tier: {tier} — {strain.METHODS[tier]}")
    print(f"{'molecule':34s} {'S':>2s} {'trans':>5s} {'OS':>7s} {'class':>12s} {'tau':>6s} {'chi':>6s} "
          f"{'C=C':>6s} {'WBO':>5s} {'conf':>4s} {'s':>6s}" + ("  rerun dOS" if repeat else ""))
    times = []
    for name, smiles in SERIES:
        r, dt = run_one(smiles, tier)
        times.append(dt)
        wbo = "" if r["wiberg_bond_order"] is None else f"{r['wiberg_bond_order']:.2f}"
        line = (f"{name:34s} {r['s_value']:>2d} {r['trans_ring_size']:>5d} {r['olefin_strain_kcal_mol']:7.2f} "
                f"{r['stability_class']:>12s} {r['twist_deg']:6.1f} {r['pyramidalization_deg']:6.1f} "
                f"{r['bond_length_angstrom']:6.3f} {wbo:>5s} {r['conformers']:>4d} {dt:6.2f}")
        if repeat:
            again, _ = run_one(smiles, tier)
            line += f"  {again['olefin_strain_kcal_mol'] - r['olefin_strain_kcal_mol']:+.3f}"
        print(line, flush=True)
    print(f"median {statistics.median(times):.2f} s, max {max(times):.2f} s, n = {len(times)}")
    return times


def cyclooctene_gap(tier: str) -> None:
    t0 = time.perf_counter()
    trans = strain.conformer_energy("C1=C/CCCCCC/1", tier)["energy_kcal_mol"]
    cis = strain.conformer_energy("C1=C\\CCCCCC/1", tier)["energy_kcal_mol"]
    print(f"trans - cis cyclooctene ({tier}): {trans - cis:.2f} kcal/mol "
          f"(measured 9.3) [{time.perf_counter() - t0:.1f} s]")


def main(argv: list[str]) -> int:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--tier", choices=["fast", "accurate", "both"], default="both")
    ap.add_argument("--repeat", action="store_true", help="run each molecule twice and print the OS change")
    args = ap.parse_args(argv)
    print(strain.ENGINE_VERSION)
    tiers = ["fast", "accurate"] if args.tier == "both" else [args.tier]
    for tier in tiers:
        table(tier, args.repeat)
        cyclooctene_gap(tier)
    hit = measure_cache_hit()
    print(f"cache hit (notebook lookup, median of 20): {hit:.4f} s")
    strain.shutdown()
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
