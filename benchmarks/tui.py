"""Startup time and input latency of the terminal UI on a notebook of 10 000 runs.

Builds the notebook at run time in a temporary folder (nothing is committed): the demo
lab's 18 runs go in through `Notebook.add_run` (so they are validated, checked and
indexed), then each is cloned to 10 000 runs in one transaction with its own id, title,
version hash (the store's own `version_hash`) and a copy of its index row — the index
row and the search rows (full text, structures used) depend only on the run's content,
which the clone keeps, save the title.

Prints:
  * the floor: a fresh Python process doing nothing, and one that imports Textual and draws
    a bare table of as many rows — no Trapbook start can beat these on this machine;
  * cold start: a fresh Python process from import to the Logbook's first rows painted, and on
    to the first run's preview shown (it loads RDKit and the units in a worker);
  * warm start: the same inside this process (imports done);
  * the machine's load average beside them (the figures scale with it);
  * filter work: from the end of the typing pause to the matching rows in the table (the
    core's search in its worker, then the table refilled), median over several texts;
  * latency of a cursor move with
    its preview, and a keystroke in the run editor's amount field (validation plus live
    amounts), each as the median of several, measured through Textual's test pilot, which
    adds its own wait for idle to every key — so these are upper bounds.

Usage: python benchmarks/tui.py [--runs 10000]
"""

from __future__ import annotations

import argparse
import asyncio
import json
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path


def build(path: Path, n: int) -> float:
    from trapbook.demo import load_demo_files
    from trapbook.records import canonical_json
    from trapbook.store import Notebook, chain
    from trapbook.store.notebook import now_utc, version_hash

    t0 = time.perf_counter()
    runs, _ = load_demo_files()
    with Notebook.create(path) as nb:
        with nb.transaction():
            ids = [nb.add_run(r.model_copy(update={"screen": None, "factors": {}}), author="bench").run_id for r in runs]
            templates = []
            for rid in ids:
                data = json.loads(nb.conn.execute("SELECT data FROM runs WHERE id = ?", (rid,)).fetchone()[0])
                cols = [d[1] for d in nb.conn.execute("PRAGMA table_info(run_index)")]
                idx = nb.conn.execute(f"SELECT {', '.join(cols)} FROM run_index WHERE run_id = ?", (rid,)).fetchone()
                text_row = nb.conn.execute("SELECT notes, observations, tags FROM run_text WHERE run_id = ?", (rid,)).fetchone()
                parts = nb.conn.execute("SELECT part, name, structure_id FROM run_structures WHERE run_id = ?", (rid,)).fetchall()
                templates.append((data, cols, idx, text_row, parts))
            for i in range(len(ids), n):
                data, cols, idx, text_row, parts = templates[i % len(templates)]
                rid = f"TB-{i + 1:05d}"
                d = dict(data, id=rid, title=f"{data['title']} #{i + 1}")
                text = canonical_json(d)
                t = now_utc()
                h = version_hash(rid, 1, "bench", t, "benchmark", "create", None, text)
                nb.conn.execute(
                    "INSERT INTO versions (run_id, version, author, time, reason, action, prev_hash, hash, data) "
                    "VALUES (?,?,?,?,?,?,?,?,?)",
                    (rid, 1, "bench", t, "benchmark", "create", None, h, text),
                )
                chain.append_save(nb.conn, "run", rid, 1, h)  # the notebook's log of saves, as a save keeps it
                nb.conn.execute(
                    "INSERT INTO runs (id, title, chemist, date, status, screen, withdrawn, version, hash, created, updated, data) "
                    "VALUES (?,?,?,?,?,?,?,?,?,?,?,?)",
                    (rid, d["title"], d.get("chemist"), d.get("date"), d.get("status"), None, 0, 1, h, t, t, text),
                )
                row = list(idx)
                row[cols.index("run_id")] = rid
                nb.conn.execute(f"INSERT INTO run_index ({', '.join(cols)}) VALUES ({', '.join('?' * len(cols))})", row)
                # the search rows a save writes (full text, structures used, what was indexed)
                nb.conn.execute("INSERT INTO search_state (run_id, hash) VALUES (?, ?)", (rid, h))
                nb.conn.execute(
                    "INSERT INTO run_text (run_id, title, notes, observations, tags) VALUES (?,?,?,?,?)",
                    (rid, d["title"], *text_row),
                )
                nb.conn.executemany(
                    "INSERT INTO run_structures (run_id, part, name, structure_id) VALUES (?,?,?,?)", [(rid, *p) for p in parts]
                )
        count = nb.count_runs()
        from trapbook import search

        assert not search.pending(nb), "every run has its search rows"
    assert count == n, count
    return time.perf_counter() - t0


COLD = """
import sys, time
t0 = time.perf_counter()
import asyncio
from trapbook.tui.app import TrapbookApp
async def main():
    app = TrapbookApp(sys.argv[1], warm=False)
    async with app.run_test(size=(120, 40)) as pilot:
        while app.rows_drawn_at is None:  # set once the Logbook's first rows are painted
            await asyncio.sleep(0.002)
        drawn = app.rows_drawn_at - t0
        preview = app.screen.query_one('#preview')
        while not str(preview.content):  # and on to the first run's preview (RDKit, units) shown
            await asyncio.sleep(0.002)
        previewed = time.perf_counter() - t0
        table = app.screen.query_one('#runs')
        assert table.row_count > 0
        print(drawn, previewed, table.row_count)
asyncio.run(main())
"""


FLOOR = """
import sys, time
t0 = time.perf_counter()
import asyncio
from textual.app import App
from textual.widgets import DataTable
drawn = []
class Bare(App):
    def compose(self):
        yield DataTable(id='runs')
    def on_mount(self):
        t = self.query_one(DataTable)
        t.add_columns(*'abcdefghijk')
        for i in range(int(sys.argv[1])):
            t.add_row(*[str(i)] * 11)
        self.call_after_refresh(lambda: drawn.append(time.perf_counter()))
async def main():
    app = Bare()
    async with app.run_test(size=(120, 40)) as pilot:
        while not drawn:
            await asyncio.sleep(0.002)
        print(drawn[0] - t0, app.query_one(DataTable).row_count)
asyncio.run(main())
"""


def cold_start(path: Path, repeats: int = 3) -> tuple[float, float, int]:
    """(to the first rows painted, to the first preview shown), medians in s, and the rows."""
    drawn, previewed, rows = [], [], 0
    for _ in range(repeats):
        out = subprocess.run([sys.executable, "-c", COLD, str(path)], capture_output=True, text=True, check=True)
        d, i, rows = out.stdout.split()
        drawn.append(float(d))
        previewed.append(float(i))
    return statistics.median(drawn), statistics.median(previewed), int(rows)


def floors(rows: int, repeats: int = 3) -> tuple[float, float]:
    """(bare Python start, Python + Textual drawing a bare table of `rows` rows), medians in s."""
    bare, textual_ = [], []
    for _ in range(repeats):
        t = time.perf_counter()
        subprocess.run([sys.executable, "-c", "pass"], check=True)
        bare.append(time.perf_counter() - t)
        out = subprocess.run([sys.executable, "-c", FLOOR, str(rows)], capture_output=True, text=True, check=True)
        textual_.append(float(out.stdout.split()[0]))
    return statistics.median(bare), statistics.median(textual_)


async def in_process(path: Path, repeats: int) -> dict:
    from trapbook.tui.app import TrapbookApp

    t0 = time.perf_counter()
    app = TrapbookApp(path, warm=False)
    out: dict = {}
    async with app.run_test(size=(120, 40)) as pilot:
        await pilot.pause()
        out["warm_start_s"] = time.perf_counter() - t0
        screen = app.screen
        box = screen.query_one("#filter")
        # filter: the work done once the typing pause ends (debounce is 0.12 s on top): the
        # core's search in its worker, then the table refilled with the rows it names
        times = []
        for word in ["furan", "anthracene", "trap:furan", "TBAF", "Iyer"][: max(repeats, 3)]:
            await app.workers.wait_for_complete()  # the last answer's preview drawn, as before a new text
            await pilot.pause()
            box.value = word
            t = time.perf_counter()
            screen.filter_box.search_now()
            box_answer = screen.filter_box  # the answer reaches the box, then the table lists its runs
            while box_answer.answered != word or len(screen.shown) != len(box_answer.run_ids or ()):
                if time.perf_counter() - t > 30:
                    raise RuntimeError(f"no answer to the filter {word!r} in 30 s")
                await asyncio.sleep(0.002)
            times.append(time.perf_counter() - t)
        out["filter_apply_ms"] = 1000 * statistics.median(times)
        out["rows_after_filter"] = len(screen.shown)
        box.value = ""
        screen.filter_box.search_now()
        await pilot.pause()
        screen.query_one("#runs").focus()
        times = []
        for _ in range(repeats):
            t = time.perf_counter()
            await pilot.press("down")
            await pilot.pause(0.1)  # the preview waits 0.08 s for the cursor to settle
            times.append(time.perf_counter() - t - 0.1)
        out["cursor_move_ms"] = 1000 * statistics.median(times)
        await pilot.press("n")
        await pilot.pause()
        for ch in "trap":
            await pilot.press(ch)
        await pilot.press("tab", *"furan", "tab", *"c1ccoc1", "tab")
        times = []
        for ch in "10":
            t = time.perf_counter()
            await pilot.press(ch)
            times.append(time.perf_counter() - t)
        for ch in " equiv"[:repeats]:
            t = time.perf_counter()
            await pilot.press(ch if ch != " " else "space")
            times.append(time.perf_counter() - t)
        out["editor_key_ms"] = 1000 * statistics.median(times)
        await pilot.press("escape")
        await pilot.pause()
        await pilot.press("d")  # discard the half-written line's run
        await pilot.pause()
        times = []
        for _ in range(repeats):  # a key no binding or widget uses: the pilot's own round trip
            t = time.perf_counter()
            await pilot.press("f12")
            times.append(time.perf_counter() - t)
        out["pilot_overhead_hint_ms"] = 1000 * statistics.median(times)
    return out


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--runs", type=int, default=10_000)
    ap.add_argument("--repeats", type=int, default=5)
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "bench.sqlite"
        built = build(path, args.runs)
        print(f"notebook: {args.runs} runs built in {built:.1f} s")
        import os

        print("load average (1, 5, 15 min): " + ", ".join(f"{x:.2f}" for x in os.getloadavg()) + f" on {os.cpu_count()} cores")
        cold, previewed, rows = cold_start(path)
        bare, floor = floors(rows)
        print(f"cold start (new process, imports included, to {rows} rows drawn): {cold:.2f} s (median of 3)")
        print(f"  and on to the first run's preview shown (it loads RDKit and the units): {previewed:.2f} s")
        print(f"  floor: Python alone {bare:.2f} s; Python + Textual drawing a bare table of {rows} rows {floor:.2f} s")
        res = asyncio.run(in_process(path, args.repeats))
        print(f"warm start (in process): {res['warm_start_s']:.2f} s")
        print(
            f"filter work, typing pause to rows shown (core search + table): {res['filter_apply_ms']:.0f} ms median "
            f"(+120 ms pause; {res['rows_after_filter']} rows at the end)"
        )
        print(f"cursor move in the run table, with preview: {res['cursor_move_ms']:.0f} ms median (pilot round trip)")
        print(
            f"keystroke in the editor's amount field (check + live amounts): {res['editor_key_ms']:.0f} ms median "
            f"(pilot round trip; a bare key costs about {res['pilot_overhead_hint_ms']:.0f} ms of pilot waiting)"
        )


if __name__ == "__main__":
    main()
