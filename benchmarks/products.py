"""Seconds to list the expected trapping products, one intermediate of each kind with common traps.

Each case runs `trapbook.trapping.products_report` (reaction templates, stereo enumeration,
seeded ETKDG embedding, MMFF94 energy window, by-products and masses) and prints the wall
time, how many adducts and by-products came out, and how many notes say what was dropped.
The first case also pays for importing RDKit; the figure after it is the warm time.

Usage: python benchmarks/products.py [--repeat 1]
"""

from __future__ import annotations

import argparse
import time

CASES = [
    ("bicyclo[3.3.1]non-1-ene + furan", "C12=CCCC(C1)CCC2", "c1ccoc1"),
    ("bicyclo[3.3.1]non-1-ene + 2,5-dimethylfuran", "C12=CCCC(C1)CCC2", "Cc1ccc(C)o1"),
    ("bicyclo[3.3.1]non-1-ene + anthracene", "C12=CCCC(C1)CCC2", "c1ccc2cc3ccccc3cc2c1"),
    ("bicyclo[3.3.1]non-1-ene + PBN nitrone", "C12=CCCC(C1)CCC2", "CC(C)(C)[N+]([O-])=Cc1ccccc1"),
    ("bicyclo[2.2.1]hept-1-ene + 1,3-diphenylisobenzofuran", "C12=CCC(CC1)C2", "c1ccc(cc1)-c1oc(-c2ccccc2)c2ccccc12"),
    ("1,2-cyclohexadiene + furan", "C1=C=CCCC1", "c1ccoc1"),
    ("cyclohexyne + furan", "C1#CCCCC1", "c1ccoc1"),
    ("benzyne + anthracene", "C1#CC=CC=C1", "c1ccc2cc3ccccc3cc2c1"),
]


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=1)
    args = parser.parse_args()
    from trapbook.trapping import products_report

    print(f"{'case':<55} {'s':>7} {'adducts':>8} {'by-prod':>8} {'notes':>6}")
    for label, inter, trap in CASES:
        times = []
        for _ in range(max(1, args.repeat)):
            t0 = time.perf_counter()
            report = products_report(inter, trap)
            times.append(time.perf_counter() - t0)
        kinds = [p["kind"] for p in report["products"]]
        print(
            f"{label:<55} {min(times):7.2f} {kinds.count('adduct'):8d} {kinds.count('by-product'):8d} {len(report['notes']):6d}"
            + ("  (cut short)" if report["truncated"] else "")
        )


if __name__ == "__main__":
    main()
