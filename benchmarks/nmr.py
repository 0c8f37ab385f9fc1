"""Seconds to integrate a 24-vial screen from its attached Bruker FIDs (target: under 10 s on 2 cores).

Builds a temporary notebook with 24 runs, each with its own synthetic 16k-point Bruker FID
(zipped experiment folder, digital filter, phase error, sloped baseline, noise) attached,
then times `trapbook.spectra.runs.integrate_screen`: read and unzip, process, integrate and
save a new version per vial. Prints the total, the time per vial, and the yields' spread.

Usage: python benchmarks/nmr.py [--vials 24]
"""

from __future__ import annotations

import argparse
import statistics
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))

RUN = {
    "title": "screen vial",
    "lines": [
        {"role": "precursor", "name": "P", "smiles": "C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F", "amount": "0.100 mmol"},
        {"role": "internal standard", "name": "TMB", "smiles": "COc1cc(OC)cc(OC)c1", "amount": "0.100 mmol"},
        {"role": "product", "name": "adduct", "smiles": "C1=CC2OC1c1ccccc12"},
    ],
}


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--vials", type=int, default=24)
    args = parser.parse_args()

    from spectra_samples import fid, write_bruker, zip_folder
    from trapbook.attachments import attach
    from trapbook.spectra import Region
    from trapbook.spectra.runs import RegionSet, integrate_screen
    from trapbook.store import Notebook

    with tempfile.TemporaryDirectory() as tmp:
        root = Path(tmp)
        nb = Notebook.create(root / "bench.sqlite")
        ids = []
        for i in range(args.vials):
            rid = nb.add_run(RUN, author="bench").run_id
            folder = root / f"src{i}"
            folder.mkdir()
            zipped = root / f"vial{i:02d}.zip"
            zipped.write_bytes(zip_folder(write_bruker(folder, fid(seed=i, phase_deg=20.0 + 3 * i))))
            attach(nb, rid, zipped, author="bench")
            ids.append(rid)
        sid = nb.add_screen({"name": "bench screen", "runs": ids})
        regions = RegionSet(Region.of(6.0, 6.2), Region.of(5.2, 5.4), 3, 1)
        start = time.perf_counter()
        res = integrate_screen(nb, sid, regions, author="bench")
        took = time.perf_counter() - start
        nb.close()
    yields = [r["yield_pct"] for r in res["integrated"]]
    print(
        f"{len(yields)} vials integrated in {took:.2f} s ({took / max(1, len(yields)):.3f} s per vial); "
        f"refused {len(res['refused'])}"
    )
    print(f"NMR yield (known 62 %): mean {statistics.mean(yields):.2f} %, min {min(yields):.2f}, max {max(yields):.2f}")


if __name__ == "__main__":
    main()
