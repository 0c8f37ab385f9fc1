"""Crash safety: a process that keeps saving is killed (SIGKILL) at random moments.

Afterwards the notebook must pass `verify`, and every save the process reported as
done (it prints a line only after the save returned) must be there with the hash it
was given. Saves that were in flight may be missing; nothing may be half-written.

The writer is forked from the test process (it has Trapbook imported already), so each
kill costs milliseconds, not an interpreter start-up.
"""

from __future__ import annotations

import multiprocessing as mp
import os
import random
import signal
import sqlite3
import time

import pytest

from trapbook import integrity

_RUN = {
    "title": "crash test",
    "lines": [
        {"role": "precursor", "name": "precursor", "amount": "0.1 mmol"},
        {"role": "trap", "name": "furan", "equiv": 10},
        {"role": "solvent", "name": "THF", "volume": "1 mL"},
    ],
}


def _writer(path: str, fd: int, seed: int, attach_dir: str) -> None:
    """Add runs, edit them, attach files; report each save only after it returned."""
    from trapbook import attachments
    from trapbook.store import Notebook

    rng = random.Random(seed)
    nb = Notebook.open(path)
    mine: list[str] = []
    os.write(fd, b"ready\n")
    i = 0
    while True:
        i += 1
        roll = rng.random()
        if mine and roll < 0.3:
            rid = rng.choice(mine)
            meta = nb.run_meta(rid)
            run = nb.get_run(rid).model_copy(update={"title": f"edit {seed}-{i}"})
            res = nb.save_run(run, meta["version"], author="crash", reason=f"edit {i}")
        elif mine and roll < 0.4:
            rid = rng.choice(mine)
            f = os.path.join(attach_dir, f"{seed}-{i}.bin")
            with open(f, "wb") as fh:
                fh.write(os.urandom(2048))
            out = attachments.attach(nb, rid, f, author="crash")
            res = type("R", (), {"run_id": out["run_id"], "version": out["version"], "hash": nb.run_meta(rid)["hash"]})
        else:
            res = nb.add_run(dict(_RUN, title=f"crash {seed}-{i}"), author="crash")
            mine.append(res.run_id)
        os.write(fd, f"{res.run_id} {res.version} {res.hash}\n".encode())


def _warm_up(tmp_path) -> float:
    """Import what a save uses (checks, materials, ...) once here, so each forked writer saves at once;
    return the seconds one save takes on this machine now (the median of five)."""
    from trapbook import attachments
    from trapbook.store import Notebook

    with Notebook.create(tmp_path / "warm.sqlite") as nb:
        rid = nb.add_run(dict(_RUN), author="warm").run_id
        f = tmp_path / "warm.bin"
        f.write_bytes(b"warm")
        attachments.attach(nb, rid, f, author="warm")
        took = []
        for i in range(5):
            t0 = time.perf_counter()
            nb.add_run(dict(_RUN, title=f"warm {i}"), author="warm")
            took.append(time.perf_counter() - t0)
    return sorted(took)[2]


def _kill_loop(path, tmp_path, kills: int, max_delay: float, seed: int):
    """Saves reported by writers each killed at a random moment up to max_delay after starting;
    on a machine slow enough that a save takes more than max_delay / 12, the delays stretch to
    twelve saves (measured before the writers start, which a busy machine then slows further),
    so each kill still lands among saves."""
    ctx = mp.get_context("fork")
    max_delay = max(max_delay, 12 * _warm_up(tmp_path))
    rng = random.Random(seed)
    reported: list[tuple[str, int, str]] = []
    attach_dir = tmp_path / "incoming"
    attach_dir.mkdir(exist_ok=True)
    for k in range(kills):
        r, w = os.pipe()
        proc = ctx.Process(target=_writer, args=(str(path), w, seed * 1000 + k, str(attach_dir)))
        proc.start()
        os.close(w)
        buf = b""
        with os.fdopen(r, "rb", buffering=0) as pipe:
            while b"ready\n" not in buf:
                chunk = pipe.read(4096)
                assert chunk, "writer died before it was ready"
                buf += chunk
            time.sleep(rng.uniform(0.0, max_delay))
            os.kill(proc.pid, signal.SIGKILL)
            proc.join(10)
            while chunk := pipe.read(65536):
                buf += chunk
        lines = buf.split(b"\n")
        for line in lines[1:-1]:  # skip "ready"; the last piece has no newline (may be cut)
            rid, version, h = line.decode().split()
            reported.append((rid, int(version), h))
        assert proc.exitcode == -signal.SIGKILL
    return reported


def _check(path, reported):
    rep = integrity.verify_path(path)
    assert rep.ok, rep.to_dict()["problems"][:5]
    con = sqlite3.connect(path)
    try:
        for rid, version, h in reported:
            row = con.execute("SELECT hash FROM versions WHERE run_id = ? AND version = ?", (rid, version)).fetchone()
            assert row is not None, f"{rid} v{version} was reported saved but is missing"
            assert row[0] == h
        # every version stored is whole: its run row exists and points at the last one
        for rid, v in con.execute("SELECT run_id, max(version) FROM versions GROUP BY run_id"):
            assert con.execute("SELECT version FROM runs WHERE id = ?", (rid,)).fetchone()[0] == v
    finally:
        con.close()


def test_sigkill_at_random_moments_loses_no_reported_save(tmp_path):
    from trapbook.store import Notebook

    path = tmp_path / "crash.sqlite"
    Notebook.create(path).close()
    reported = _kill_loop(path, tmp_path, kills=30, max_delay=0.3, seed=7)  # a save: ~20-40 ms on a busy machine, or more
    # common practice, no source: more than 2 saves per kill on average shows saves were under way
    assert len(reported) > 2 * 30  # the writer really was saving, many times, when it was killed
    _check(path, reported)


@pytest.mark.slow
def test_sigkill_many_times_with_longer_runs(tmp_path):
    from trapbook.store import Notebook

    path = tmp_path / "crash.sqlite"
    Notebook.create(path).close()
    reported = _kill_loop(path, tmp_path, kills=150, max_delay=0.6, seed=11)
    _check(path, reported)
