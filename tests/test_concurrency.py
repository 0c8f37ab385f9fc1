"""Several processes on one notebook: stale saves are refused, every save is kept."""

from __future__ import annotations

import multiprocessing as mp

import pytest

from trapbook import integrity

_RUN = {
    "title": "shared run",
    "lines": [{"role": "precursor", "name": "precursor", "amount": "0.1 mmol"}, {"role": "trap", "name": "furan", "equiv": 10}],
}


def _edit_from_v1(path, who, barrier, queue):
    from trapbook.errors import StaleVersionError
    from trapbook.store import Notebook

    nb = Notebook.open(path)
    run = nb.get_run("TB-0001")
    base = nb.run_meta("TB-0001")["version"]
    edited = run.model_copy(update={"title": f"edited by {who}"})
    barrier.wait(30)
    try:
        res = nb.save_run(edited, base, author=who, reason=f"{who}'s change")
        queue.put((who, "saved", res.version))
    except StaleVersionError as exc:
        # the refused chemist reloads, re-applies the change and saves again: nothing is lost
        queue.put((who, "stale", exc.message))
        meta = nb.run_meta("TB-0001")
        again = nb.get_run("TB-0001").model_copy(update={"title": f"edited by {who}"})
        res = nb.save_run(again, meta["version"], author=who, reason=f"{who}'s change, re-applied")
        queue.put((who, "saved", res.version))
    nb.close()


def _seed(path):
    from trapbook.store import Notebook

    with Notebook.create(path) as nb:
        nb.add_run(dict(_RUN), author="seed")


@pytest.mark.parametrize("round_", range(5))
def test_second_save_from_a_stale_version_is_refused(tmp_path, round_):
    from trapbook.store import Notebook

    path = str(tmp_path / "two.sqlite")
    _seed(path)
    ctx = mp.get_context("fork")
    barrier, queue = ctx.Barrier(2), ctx.Queue()
    procs = [ctx.Process(target=_edit_from_v1, args=(path, who, barrier, queue)) for who in ("ada", "bo")]
    for p in procs:
        p.start()
    for p in procs:
        p.join(60)
        assert p.exitcode == 0
    events = [queue.get(timeout=5) for _ in range(3)]
    stale = [e for e in events if e[1] == "stale"]
    saved = sorted(e[2] for e in events if e[1] == "saved")
    assert len(stale) == 1 and saved == [2, 3]
    assert "was changed" in stale[0][2] and "not written" in stale[0][2]
    with Notebook.open(path) as nb:
        hist = nb.history("TB-0001")
        assert [v.version for v in hist] == [1, 2, 3]
        titles = {nb.get_run("TB-0001", v).title for v in (2, 3)}
        assert titles == {"edited by ada", "edited by bo"}  # both changes kept, in order
    assert integrity.verify_path(path).ok


def _add_many(path, k, n, barrier):
    from trapbook.store import Notebook

    nb = Notebook.open(path)
    barrier.wait(30)
    for i in range(n):
        nb.add_run(dict(_RUN, title=f"p{k}-{i}"), author=f"p{k}")
    nb.close()


def _many_writers(tmp_path, procs_n, runs_n):
    from trapbook.store import Notebook

    path = str(tmp_path / "many.sqlite")
    Notebook.create(path).close()
    ctx = mp.get_context("fork")
    barrier = ctx.Barrier(procs_n)
    procs = [ctx.Process(target=_add_many, args=(path, k, runs_n, barrier)) for k in range(procs_n)]
    for p in procs:
        p.start()
    for p in procs:
        p.join(600)
        assert p.exitcode == 0
    with Notebook.open(path) as nb:
        rows = nb.conn.execute("SELECT id, title FROM runs").fetchall()
    titles = sorted(t for _, t in rows)
    assert len({rid for rid, _ in rows}) == procs_n * runs_n
    assert titles == sorted(f"p{k}-{i}" for k in range(procs_n) for i in range(runs_n))
    assert integrity.verify_path(path).ok


def test_four_processes_saving_200_runs_each(tmp_path):
    _many_writers(tmp_path, 4, 200)


@pytest.mark.slow
def test_eight_processes_saving_500_runs_each(tmp_path):
    _many_writers(tmp_path, 8, 500)


# --- a new notebook opened by several processes at once ----------------------------------


def _create_same(path, barrier, queue):
    from trapbook.errors import TrapbookError
    from trapbook.store import Notebook

    barrier.wait(30)
    try:
        with Notebook.create(path) as nb:
            queue.put(("ok", nb.schema_version))
    except TrapbookError as exc:
        queue.put(("error", exc.message))


def _open_new_notebook_at_once(tmp_path, n):
    from trapbook.store import Notebook
    from trapbook.store.schema import MIGRATIONS

    path = str(tmp_path / "new.sqlite")
    ctx = mp.get_context("fork")
    barrier, queue = ctx.Barrier(n), ctx.Queue()
    procs = [ctx.Process(target=_create_same, args=(path, barrier, queue)) for _ in range(n)]
    for p in procs:
        p.start()
    for p in procs:
        p.join(120)
        assert p.exitcode == 0
    results = [queue.get(timeout=5) for _ in range(n)]
    assert results == [("ok", MIGRATIONS[-1][0])] * n, results
    with Notebook.open(path) as nb:
        versions = [r[0] for r in nb.conn.execute("SELECT version FROM migrations ORDER BY version")]
    assert versions == [v for v, _, _ in MIGRATIONS]  # each applied once
    assert integrity.verify_path(path).ok


def test_eight_processes_creating_one_new_notebook(tmp_path):
    _open_new_notebook_at_once(tmp_path, 8)


@pytest.mark.slow
@pytest.mark.parametrize("round_", range(10))
def test_many_rounds_of_processes_creating_one_new_notebook(tmp_path, round_):
    _open_new_notebook_at_once(tmp_path, 12)


# --- edits without a base version: read under the write lock, never falsely stale ---------


def _edit_current(path, who, n, barrier, queue):
    from trapbook.errors import StaleVersionError
    from trapbook.store import Notebook

    nb = Notebook.open(path)
    barrier.wait(30)
    stale = 0
    for i in range(n):
        run = nb.get_run("TB-0001").model_copy(update={"notes": f"{who} note {i}"})
        try:
            nb.save_run(run, None, author=who, reason=f"{who} edit {i}")
        except StaleVersionError:
            stale += 1
    queue.put((who, stale))
    nb.close()


def _edits_without_base(tmp_path, procs_n, edits_n):
    from trapbook.store import Notebook

    path = str(tmp_path / "current.sqlite")
    _seed(path)
    ctx = mp.get_context("fork")
    barrier, queue = ctx.Barrier(procs_n), ctx.Queue()
    procs = [ctx.Process(target=_edit_current, args=(path, f"p{k}", edits_n, barrier, queue)) for k in range(procs_n)]
    for p in procs:
        p.start()
    for p in procs:
        p.join(300)
        assert p.exitcode == 0
    results = [queue.get(timeout=5) for _ in range(procs_n)]
    assert sum(stale for _, stale in results) == 0, results
    with Notebook.open(path) as nb:
        hist = nb.history("TB-0001")
    assert len(hist) == 1 + procs_n * edits_n  # every edit kept as its own version
    assert integrity.verify_path(path).ok


def test_edits_without_a_base_version_are_never_refused_as_stale(tmp_path):
    _edits_without_base(tmp_path, 4, 10)


@pytest.mark.slow
def test_many_edits_without_a_base_version(tmp_path):
    _edits_without_base(tmp_path, 8, 30)
