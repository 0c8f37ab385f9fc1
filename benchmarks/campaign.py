"""Campaign figures: 200 fast-tier candidates on one and two workers (wall time, speed-up),
20 at the accurate tier, and a re-run after the client is killed half-way.

Run: .venv/bin/python benchmarks/campaign.py [--fast N] [--accurate N] [--kill N] [--repeat R]
Each timed run uses a new notebook in a temporary directory and a new cluster (new worker
processes), and checks that the cache holds none of its tasks before the clock starts, so
nothing comes from a cache unless the part is about the cache. Start-up (the cluster and
each worker's engine imports) is printed apart from the compute, with the total beside
them; the speed-up is given on both. The load average (1 min) before, and its mean and
highest while a run goes on, are printed beside it: on a shared machine the speed-up says
as much about the neighbours as about the code.
"""

from __future__ import annotations

import argparse
import os
import signal
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path

from trapbook import campaign as cp
from trapbook.chemistry.enumerate import KINDS, intermediates_of_skeleton
from trapbook.store import Notebook


def bicyclo(a: int, b: int, c: int) -> str:
    """SMILES of bicyclo[a.b.c]alkane (a >= b >= c >= 1)."""
    return "C12" + "C" * a + "C(" + "C" * b + "1)" + "C" * c + "2"


def candidate_lines(n: int) -> list[str]:
    """n distinct intermediates: every bridgehead alkene, cyclic allene and cycloalkyne of the
    bridged bicycles, smallest S first."""
    seen: dict[str, str] = {}
    triples = sorted(
        ((a, b, c) for a in range(1, 9) for b in range(1, a + 1) for c in range(1, b + 1)), key=lambda t: (sum(t), t)
    )
    for a, b, c in triples:
        for cand in intermediates_of_skeleton(bicyclo(a, b, c), KINDS):
            seen.setdefault(cand.smiles, f"[{a}.{b}.{c}]-{len(seen) + 1}")
            if len(seen) >= n:
                return [f"{smi} {name}" for smi, name in seen.items()]
    return [f"{smi} {name}" for smi, name in seen.items()]


def load() -> str:
    return "load average " + ", ".join(f"{x:.2f}" for x in os.getloadavg())


class LoadWatch:
    """The 1-minute load average sampled every 2 s while a run goes on."""

    def __init__(self) -> None:
        self.before = os.getloadavg()[0]
        self.samples: list[float] = []
        self._stop = threading.Event()
        self._thread = threading.Thread(target=self._sample, daemon=True)

    def _sample(self) -> None:
        while not self._stop.wait(2.0):
            self.samples.append(os.getloadavg()[0])

    def __enter__(self) -> LoadWatch:
        self._thread.start()
        return self

    def __exit__(self, *exc) -> None:
        self._stop.set()
        self._thread.join()
        self.samples.append(os.getloadavg()[0])

    def words(self) -> str:
        mean = sum(self.samples) / len(self.samples)
        return f"load {self.before:.2f} before, {mean:.2f} mean / {max(self.samples):.2f} max during"


def timed_run(lines: list[str], tier: str, workers: int, folder: Path) -> dict:
    """One campaign from an empty cache: start-up (cluster + worker imports) and compute timed apart."""
    nb = Notebook.create(folder / f"{tier}-{workers}-{time.monotonic_ns()}.sqlite")
    record = cp.plan("benchmark", tier=tier, precursors=False, lines=lines)
    tasks = cp.tasks_of(record)
    if any(cp.cached(nb, t) is not None for t in tasks):
        raise SystemExit("the notebook's cache is not empty before the timed run: the figure would be wrong")
    with LoadWatch() as watch:
        t0 = time.perf_counter()
        client = cp.open_client(n_workers=workers)
        try:
            cp.warm_workers(client)
            t1 = time.perf_counter()
            summary = cp.run_campaign(nb, record, client=client)
            t2 = time.perf_counter()
        finally:
            cp.close_client(client)
            nb.close()
    if summary["computed"] + len(summary["failed"]) != len(tasks):
        raise SystemExit(f"{summary['computed']} of {len(tasks)} tasks computed: the figure would be wrong")
    return {"start": t1 - t0, "compute": t2 - t1, "total": t2 - t0, "summary": summary, "load": watch.words()}


def say_run(label: str, run: dict) -> None:
    print(
        f"{label}: start-up {run['start']:.1f} s + compute {run['compute']:.1f} s = total {run['total']:.1f} s; "
        f"{run['summary']['computed']} computed, {len(run['summary']['failed'])} failed; {run['load']}",
        flush=True,
    )


_CHILD = """
import sys
from trapbook import campaign as cp
from trapbook.store import Notebook
if __name__ == "__main__":
    lines = open(sys.argv[2], encoding="utf-8").read().splitlines()
    nb = Notebook.open(sys.argv[1])
    record = cp.plan("benchmark", tier="fast", precursors=False, lines=lines)
    def tell(done, failed, left):
        print(done, failed, left, flush=True)
    cp.run_campaign(nb, record, n_workers=2, progress=tell)
"""


def killed_half_way(lines: list[str], folder: Path) -> dict:
    """Start a campaign in a child process, kill it (and its cluster) after half the results,
    then run it again here and count what is computed."""
    db = folder / "killed.sqlite"
    Notebook.create(db).close()
    listing = folder / "killed.txt"
    listing.write_text("\n".join(lines) + "\n", encoding="utf-8")
    script = folder / "child.py"
    script.write_text(_CHILD, encoding="utf-8")
    proc = subprocess.Popen(
        [sys.executable, str(script), str(db), str(listing)],
        stdout=subprocess.PIPE,
        stderr=subprocess.DEVNULL,
        text=True,
        start_new_session=True,
    )
    done_at_kill = 0
    for line in proc.stdout:
        done_at_kill = int(line.split()[0])
        if done_at_kill >= len(lines) // 2:
            break
    os.killpg(proc.pid, signal.SIGKILL)  # the child's own process group: client, scheduler and workers
    proc.wait()
    nb = Notebook.open(db)
    record = cp.plan("benchmark", tier="fast", precursors=False, lines=lines)
    cached_now = sum(cp.cached(nb, t) is not None for t in cp.tasks_of(record))
    summary = cp.run_campaign(nb, record, n_workers=2)
    nb.close()
    return {
        "tasks": len(lines),
        "reported_done_at_kill": done_at_kill,
        "in_cache_after_kill": cached_now,
        "computed_on_rerun": summary["computed"],
        "from_cache_on_rerun": summary["from_cache"],
        "failed_on_rerun": len(summary["failed"]),
    }


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--fast", type=int, default=200)
    ap.add_argument("--accurate", type=int, default=20)
    ap.add_argument("--kill", type=int, default=60, help="candidates of the kill-and-resume part")
    ap.add_argument("--repeat", type=int, default=1, help="pairs of 1- and 2-worker runs")
    args = ap.parse_args()
    lines = candidate_lines(max(args.fast, args.accurate, args.kill))
    print(f"cores {os.cpu_count()}; {load()}", flush=True)
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        fast = lines[: args.fast]
        for _ in range(args.repeat if args.fast else 0):
            runs = {}
            for workers in (1, 2):
                runs[workers] = timed_run(fast, "fast", workers, folder)
                say_run(f"fast tier, {len(fast)} candidates, {workers} worker(s)", runs[workers])
            print(
                f"speed-up on 2 workers: {runs[1]['total'] / runs[2]['total']:.2f}x on the total, "
                f"{runs[1]['compute'] / runs[2]['compute']:.2f}x on the compute alone (target >= 1.7 on 2 free cores)",
                flush=True,
            )
        if args.accurate:
            run = timed_run(lines[: args.accurate], "accurate", 2, folder)
            say_run(f"accurate tier, {args.accurate} candidates, 2 workers", run)
        if args.kill:
            with LoadWatch() as watch:
                k = killed_half_way(lines[: args.kill], folder)
            print(
                f"killed half-way: {k['tasks']} tasks, {k['reported_done_at_kill']} reported done at the kill, "
                f"{k['in_cache_after_kill']} in the cache; the re-run computed {k['computed_on_rerun']} "
                f"(+ {k['failed_on_rerun']} failed) and took {k['from_cache_on_rerun']} from the cache; {watch.words()}"
            )


if __name__ == "__main__":
    main()
