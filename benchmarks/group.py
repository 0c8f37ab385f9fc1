"""A group of many members' notebooks searched together, against one notebook holding the same runs.

    .venv/bin/python benchmarks/group.py                               # 20 members × 1 000 runs vs 1 × 20 000
    .venv/bin/python benchmarks/group.py --members 20 --runs 5000      # the full size: 20 × 5 000 vs 1 × 100 000
    .venv/bin/python benchmarks/group.py --runs 500 --keep /tmp/group-bench   # build once, then reuse

The runs are synthesised as in benchmarks/search.py (`make_run`, `bulk_add`), once: run i
goes into member i // runs and into the single notebook, so both hold exactly the same
runs. Each query is timed cold (kept work cleared, as a one-shot `trapbook --group ...
search`) and repeated, by median; the group's answer is checked to name the same runs.
The group's cold figure is given twice: its first search ever (no pool file) and a
one-shot search after an earlier process left the pool file of these unchanged members
(structure_pool_file.py; the single notebook can be written, so it keeps none). The first
search answers before its pool file is written (structure_pool_file.save_later: written
when the group is closed or the process ends; here between timings): the time printed is
the time to the answer. Which structures the members
share comes from each member's digest (store/structure_digest.py): notebooks built by an
older Trapbook get theirs when opened once for writing, which this script does.
Target: the group searches as fast as the single notebook (ratio about 1; common
practice, no source: the PI should not wait longer for being able to read everyone).
Opening the group checks every member's chains (group.check_member); that time is
printed too, beside a full `verify` of one member, which the group does not run. The
members' distinct structures are one pool (structure_pool.py), screened once per query:
the benchmark prints how many rows the members hold and how many of them are distinct.
"""

from __future__ import annotations

import argparse
import json
import os
import random
import statistics
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "notebook"))
sys.path.insert(0, str(Path(__file__).resolve().parent))

from search import bulk_add, make_run, structures, timed  # noqa: E402  (benchmarks/search.py)

from trapbook import integrity  # noqa: E402
from trapbook import search as S  # noqa: E402
from trapbook import structure_pool_file as pool_file  # noqa: E402
from trapbook.group import Group  # noqa: E402
from trapbook.search_query import query_from_options  # noqa: E402
from trapbook.store import Notebook  # noqa: E402

QUERIES = {
    "substructure [3.3.1] core (generic bonds)": dict(substructure="[#6]1~[#6]~[#6]2~[#6]~[#6]~[#6]~[#6](~[#6]1)~[#6]2"),
    "substructure nitrile C#N": dict(substructure="C#N"),
    "similarity to a [3.3.1] alkene ≥ 0.6": dict(similar="C12=CCCC(CCC1)C2", min_similarity=0.6),
    "trap furan, T ≥ 80 °C": dict(trap="furan", temp_min="80"),
    "fluoride TBAF, yield ≥ 50 %": dict(fluoride="TBAF", yield_min=50),
    "chemist + date range": dict(chemist="novak", date_from="2023-01-01", date_to="2023-06-30"),
    "full text 'oligomers'": dict(text="oligomers"),
}


def build(folder: Path, members: int, runs: int) -> tuple[list[Path], Path]:
    rng = random.Random(20261202)
    pool = structures(rng)
    cache: dict = {}
    paths = [folder / f"member{k + 1:02d}.sqlite" for k in range(members)]
    single = folder / "single.sqlite"
    t0 = time.perf_counter()
    with Notebook.create(single) as whole:
        for k, path in enumerate(paths):
            dicts = [make_run(i, rng, pool, cache) for i in range(k * runs, (k + 1) * runs)]
            with Notebook.create(path) as nb:
                bulk_add(nb, [dict(d) for d in dicts])
            bulk_add(whole, dicts)
            print(f"  built member {k + 1}/{members} ({time.perf_counter() - t0:.0f} s)", file=sys.stderr)
    print(f"build: {members} × {runs} runs and 1 × {members * runs} in {time.perf_counter() - t0:.0f} s")
    return paths, single


def built_or_build(folder: Path, members: int, runs: int) -> tuple[list[Path], Path]:
    """The notebooks of an earlier run with the same sizes in `folder` (a marker file says which), else new ones."""
    folder.mkdir(parents=True, exist_ok=True)
    marker = folder / "group-benchmark.json"
    sizes = {"members": members, "runs": runs}
    if marker.exists() and json.loads(marker.read_text()) == sizes:
        paths = [folder / f"member{k + 1:02d}.sqlite" for k in range(members)]
        print(f"reusing {members} × {runs} runs and 1 × {members * runs} in {folder}")
        return paths, folder / "single.sqlite"
    if any(folder.iterdir()):  # never delete notebooks to make room: someone may want them
        sys.exit(f"{folder} holds other files (another size, or not this benchmark's): give an empty or new folder")
    out = build(folder, members, runs)
    marker.write_text(json.dumps(sizes))
    return out


def timed_cold(fn, repeat: int, first: bool = False) -> tuple[float, object]:
    """Median seconds of fn with nothing kept in memory; with first=True, no pool file either
    (the first search of the group ever). Before each call, the pool file an earlier call kept
    for writing (structure_pool_file.save_later) is written, outside the timing."""
    times, out = [], None
    for _ in range(repeat):
        pool_file.settle()
        S.clear_caches()
        if first:
            for p in pool_file.folder().glob("pool-*"):
                p.unlink()
        t0 = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t0)
    pool_file.settle()
    return statistics.median(times), out


def compare(nb: Notebook, group: Group, repeat: int) -> tuple[list[float], list[float]]:
    """Print each query's times; return the group/single ratios of first searches and of one-shot searches.

    single cold and group first: nothing kept in memory or on disk. group one-shot: nothing in
    memory, the pool file an earlier process left (a repeated `trapbook --group ... search`).
    """
    print(
        f"\n{'query':46} {'hits':>6} {'single cold':>12} {'group first':>12} {'ratio':>6} "
        f"{'group 1-shot':>13} {'ratio':>6} {'single rep':>11} {'group rep':>10}"
    )
    first, one_shot = [], []
    for name, options in QUERIES.items():
        query = query_from_options(**options)
        one_s, hits = timed_cold(lambda q=query: S.search(nb, q), repeat)
        grp_s, ghits = timed_cold(lambda q=query: group.search(q), repeat, first=True)
        shot_s, _ = timed_cold(lambda q=query: group.search(q), repeat)
        one_r, _ = timed(lambda q=query: S.search(nb, q), repeat, cold=False)
        grp_r, _ = timed(lambda q=query: group.search(q), repeat, cold=False)
        assert {h.run_id for h in hits} == {h["run_id"] for h in ghits}, f"{name}: the group found other runs"
        first.append(grp_s / one_s if one_s else float("nan"))
        one_shot.append(shot_s / one_s if one_s else float("nan"))
        print(
            f"{name:46} {len(hits):6d} {one_s:12.3f} {grp_s:12.3f} {first[-1]:6.2f} "
            f"{shot_s:13.3f} {one_shot[-1]:6.2f} {one_r:11.3f} {grp_r:10.3f}"
        )
    return first, one_shot


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--members", type=int, default=20)
    ap.add_argument("--runs", type=int, default=1000, help="runs per member (the single notebook holds members × runs)")
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--keep", help="build the notebooks in this folder, or reuse the ones an earlier run built there")
    args = ap.parse_args()
    tmp = tempfile.TemporaryDirectory()
    os.environ["TRAPBOOK_CACHE_DIR"] = str(Path(tmp.name) / "cache")  # pool files here, not in the user's cache
    paths, single = built_or_build(Path(args.keep) if args.keep else Path(tmp.name), args.members, args.runs)
    for path in [*paths, single]:  # kept notebooks of an older Trapbook: brought to this layout (their digest)
        Notebook.open(path).close()

    t0 = time.perf_counter()
    group = Group.open(paths)
    opened = time.perf_counter() - t0
    assert all(m.ok for m in group.members), [m.problems for m in group.members if not m.ok]
    t0 = time.perf_counter()
    full = integrity.verify_path(paths[0], check_files=False)
    full_s = time.perf_counter() - t0
    # bulk_add skips the bench checks, so the full verify reports every summary row as different; only its time counts here
    chain_problems = [p for p in full.problems if p.code != "index-mismatch"]
    assert not chain_problems, chain_problems[:3]
    print(
        f"open the group (chains of every member checked): {opened:.2f} s for {args.members} members; "
        f"full verify of one member: {full_s:.2f} s (× {args.members} would be {full_s * args.members:.0f} s)"
    )

    nb = Notebook.open(single)
    held = sum(m.nb.conn.execute("SELECT count(*) FROM structures").fetchone()[0] for m in group.readable())
    distinct = nb.conn.execute("SELECT count(*) FROM structures").fetchone()[0]
    pooled = S.substructure_ids(group.members[0].nb, "C#N", reuse=False)[1]["structures"]
    assert pooled == distinct, (pooled, distinct)  # both hold the same runs, so the same distinct structures
    print(f"structures: the members hold {held} rows, {pooled} distinct, screened once per query (single notebook: {distinct})")
    first, one_shot = compare(nb, group, args.repeat)
    print(
        f"\nworst cold ratio group/single, first search: {max(first):.2f}, one-shot with the pool file: {max(one_shot):.2f} "
        f"(target: about 1, i.e. ≤ 1.5); median {statistics.median(first):.2f} and {statistics.median(one_shot):.2f}"
    )
    print(
        json.dumps(
            {
                "members": args.members,
                "runs_per_member": args.runs,
                "open_group_s": round(opened, 3),
                "full_verify_one_member_s": round(full_s, 3),
                "worst_cold_ratio": round(max(first), 3),
                "median_cold_ratio": round(statistics.median(first), 3),
                "worst_one_shot_ratio": round(max(one_shot), 3),
                "median_one_shot_ratio": round(statistics.median(one_shot), 3),
                "load_average": [round(x, 2) for x in os.getloadavg()],
            }
        )
    )
    nb.close()
    group.close()


if __name__ == "__main__":
    main()
