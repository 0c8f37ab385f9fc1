"""How long `verify` takes as a notebook grows: seconds in all and per run.

Run:  .venv/bin/python benchmarks/verify.py [--runs 500] [--no-files]

The notebook is built with ordinary saves (`Notebook.add_run`, so findings, structures and
full text are written as in use) from the demo lab's run files, cycled with new titles, in
a temporary folder. `verify` then walks every chain and the save log and recomputes every
run's summary, structure links, full-text row and each structure's fingerprints.
Target: a 1 000-run notebook verifies in under a minute on the 2-core machine (common
practice, no source: a check people will run before every backup).
"""

from __future__ import annotations

import argparse
import json
import tempfile
import time
from pathlib import Path

from trapbook import integrity
from trapbook.store import Notebook

ROOT = Path(__file__).resolve().parents[1]


def build(path: Path, n: int) -> float:
    files = sorted((ROOT / "demo_lab" / "runs").glob("*.json"))
    t0 = time.perf_counter()
    with Notebook.create(path) as nb, nb.transaction():
        for i in range(n):
            data = json.loads(files[i % len(files)].read_text(encoding="utf-8"))
            data.pop("id", None)
            data["title"] = f"{data['title']} #{i + 1}"
            nb.add_run(data, author="benchmark", reason="benchmark")
    return time.perf_counter() - t0


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--runs", type=int, default=500)
    ap.add_argument("--no-files", action="store_true", help="skip re-hashing attached files")
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "verify.sqlite"
        built = build(path, args.runs)
        t0 = time.perf_counter()
        report = integrity.verify_path(path, check_files=not args.no_files)
        took = time.perf_counter() - t0
    print(f"built {args.runs} runs in {built:.1f} s ({built / args.runs * 1000:.1f} ms per save, one transaction)")
    print(f"verify: {took:.2f} s in all, {took / args.runs * 1000:.1f} ms per run; ok={report.ok}; checked {report.checked}")
    print(f"target: 1000 runs in < 60 s -> projected {took / args.runs * 1000:.1f} s")


if __name__ == "__main__":
    main()
