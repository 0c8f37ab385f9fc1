"""Builds the demo notebook from demo_lab/ (a fictional group's runs) for a first look."""

from __future__ import annotations

import datetime as _dt
import json
import os
from pathlib import Path

from .errors import TrapbookError
from .records import load_run, load_screen
from .settings import AUTHOR_KEY, notebook_author, set_notebook_author


def demo_lab_dir() -> Path:
    """demo_lab/ beside the source tree (TRAPBOOK_DEMO_LAB overrides)."""
    env = os.environ.get("TRAPBOOK_DEMO_LAB")
    if env:
        return Path(env)
    here = Path(__file__).resolve()
    for parent in here.parents:
        cand = parent / "demo_lab"
        if (cand / "runs").is_dir():
            return cand
    raise TrapbookError("the demo lab files were not found", "run from a checkout of Trapbook, or set TRAPBOOK_DEMO_LAB")


def default_demo_path() -> Path:
    import platformdirs

    return Path(platformdirs.user_data_dir("trapbook", appauthor=False)) / "demo.sqlite"


def load_demo_files(src: Path | None = None):
    src = src or demo_lab_dir()
    runs = []
    for f in sorted((src / "runs").glob("*.json")):
        try:
            runs.append(load_run(json.loads(f.read_text(encoding="utf-8"))))
        except TrapbookError as exc:
            raise TrapbookError(f"demo file {f.name}: {exc.message}", exc.hint) from None
    screens = [load_screen(json.loads(f.read_text(encoding="utf-8"))) for f in sorted((src / "screens").glob("*.json"))]
    return runs, screens


DEMO_MARK = "demo_notebook"
DEMO_REASON = "demo lab"


def user_work(nb) -> list[str]:
    """What in a demo notebook the demo did not create, in words ("run TB-0019", ...).

    Read from the hash-chained history: a run or screen is the demo's own only while its
    one version is the demo's creation; a run added, edited, withdrawn or imported since,
    a screen changed, or an unsaved draft in the editor is somebody's work.
    """
    found = []
    runs = nb.conn.execute(
        "SELECT r.id, count(v.version), min(v.action), min(v.reason), max(v.reason) FROM runs r "
        "LEFT JOIN versions v ON v.run_id = r.id GROUP BY r.id ORDER BY r.id"
    ).fetchall()
    for rid, n, action, low, high in runs:
        if n != 1 or action != "create" or low != DEMO_REASON or high != DEMO_REASON:
            found.append(f"run {rid}" + (f" ({n} versions)" if n > 1 else ""))
    screens = nb.conn.execute(
        "SELECT s.id, count(v.version), min(v.reason), max(v.reason) FROM screens s "
        "LEFT JOIN screen_versions v ON v.screen_id = s.id GROUP BY s.id ORDER BY s.id"
    ).fetchall()
    for sid, n, low, high in screens:
        if n != 1 or low != DEMO_REASON or high != DEMO_REASON:
            found.append(f"screen {sid}")
    for key, value in nb.conn.execute("SELECT key, value FROM settings ORDER BY key"):
        if value in (None, "null") or key in (DEMO_MARK, AUTHOR_KEY):  # the name is carried over
            continue
        found.append(f"unsaved draft {key[len('draft:') :]}" if key.startswith("draft:") else f"setting {key}")
    return found


def _inspect(path: Path) -> tuple[str, list[str]]:
    """('absent' | 'pristine' | 'user-work' | 'not-demo', what the demo did not create)."""
    if not path.exists() or path.stat().st_size == 0:
        return "absent", []
    from .store import Notebook

    try:
        with Notebook.open(path) as nb:
            is_demo = bool(nb.get_setting(DEMO_MARK, False))
            has_runs = nb.count_runs() > 0 or bool(nb.list_screens())
            work = user_work(nb)
    except TrapbookError as exc:
        return "not-demo", [exc.message]
    if not has_runs and not work:
        return "absent", []
    if not work:
        return "pristine", []  # every record is the demo's own creation, marked or not
    return ("user-work" if is_demo else "not-demo"), work


def _your_name(path: Path) -> str | None:
    """The "you are" name set in the old demo notebook, to carry into the rebuilt one."""
    from .store import Notebook

    if not path.exists() or path.stat().st_size == 0:
        return None
    with Notebook.open(path) as nb:
        return notebook_author(nb)


def dated_backup_path(path: Path) -> Path:
    """``demo-YYYYmmdd-HHMMSS.sqlite`` beside `path` (UTC); never a name already taken."""
    stamp = _dt.datetime.now(_dt.UTC).strftime("%Y%m%d-%H%M%S")
    suffix = path.suffix or ".sqlite"
    cand = path.with_name(f"{path.stem}-{stamp}{suffix}")
    n = 2
    while cand.exists() or cand.with_name(cand.name + ".files").exists():
        cand = path.with_name(f"{path.stem}-{stamp}-{n}{suffix}")
        n += 1
    return cand


def keep_aside(path: Path) -> Path:
    """Move the notebook at `path` (with its attached files) to a dated backup beside it.

    The copy is made through SQLite's backup API and verified before the original is
    removed, so a notebook another process has open is copied whole, not half.
    """
    from . import attachments, backup

    dest = dated_backup_path(path)
    files = attachments.store_dir(path)
    if files.exists():
        files.rename(attachments.store_dir(dest))
    backup.backup(path, dest)
    for suffix in ("", "-wal", "-shm"):
        Path(str(path) + suffix).unlink(missing_ok=True)
    return dest.resolve()


def _not_a_demo(path: Path, work: list[str]) -> TrapbookError:
    said = f" ({'; '.join(work[:3])}{'; ...' if len(work) > 3 else ''})" if work else ""
    hint = "give the demo another place with --db PATH (or unset TRAPBOOK_DB to use the per-user demo file)"
    if path == default_demo_path():
        hint = "'trapbook demo --fresh' keeps it as a dated backup beside it and builds a new demo"
    return TrapbookError(
        f"{path} is a notebook of its own, not a demo notebook{said}; the demo was not built and nothing was changed", hint
    )


def build_demo(
    path: Path | None = None, src: Path | None = None, strain_tier: str | None = None, progress=None, fresh: bool = False
) -> dict:
    """The demo notebook at `path` (the per-user demo file by default), built from demo_lab/.

    A demo notebook is rebuilt in place only while it holds nothing but the demo's own
    runs. When someone has added or changed runs in it, it is left as it is and opened
    (nothing the demo did not create is ever dropped); with `fresh`, it is first moved to
    a dated backup beside it (``demo-YYYYmmdd-HHMMSS.sqlite``), and the summary says where.
    A notebook that is not a demo notebook is never replaced (except the per-user demo
    file itself, which `fresh` keeps aside in the same way).

    With `strain_tier`, the strain of each demo intermediate is computed (and cached in
    the notebook) so that strain cards, checks and the strain map have numbers to show.
    """
    from .store import Notebook

    src = src or demo_lab_dir()
    path = Path(path or default_demo_path()).expanduser()
    runs, screens = load_demo_files(src)
    state, work = _inspect(path)
    name = _your_name(path) if state != "not-demo" else None
    kept_at = None
    if state == "not-demo" and not (fresh and path == default_demo_path()):
        raise _not_a_demo(path, work)
    if state == "user-work" and not fresh:
        with Notebook.open(path) as nb:
            n_runs, n_screens = nb.count_runs(), len(nb.list_screens())
        return {
            "path": str(path),
            "runs": n_runs,
            "screens": n_screens,
            "source": str(src),
            "strain": [],
            "rebuilt": False,
            "user_work": work,
            "backup": None,
            "notice": (
                f"{path} holds work the demo did not create ({'; '.join(work[:5])}"
                f"{'; ...' if len(work) > 5 else ''}); it was not rebuilt and is opened as it is. "
                "For a fresh demo, run 'trapbook demo --fresh': this notebook is then kept as a dated "
                "backup beside it."
            ),
        }
    if state in ("user-work", "not-demo"):
        kept_at = keep_aside(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    for suffix in ("", "-wal", "-shm"):
        Path(str(path) + suffix).unlink(missing_ok=True)  # 'absent' or 'pristine': only the demo's own
    with Notebook.create(path) as nb:
        with nb.transaction():
            for run in runs:
                nb.add_run(run, author=run.chemist or "demo", reason=DEMO_REASON, keep_id=True)
            for sc in screens:
                nb.add_screen(sc, author=sc.chemist or "demo", reason=DEMO_REASON)
            nb.set_setting(DEMO_MARK, True, author="demo", reason=DEMO_REASON)
            if name:
                set_notebook_author(nb, name)  # carried over from the notebook this one replaces
        n_runs, n_screens = nb.count_runs(), len(nb.list_screens())
        computed = _compute_strain(nb, runs, strain_tier, progress) if strain_tier else []
    notice = (
        (
            f"the earlier demo notebook, with work the demo did not create ({'; '.join(work[:5])}), "
            f"is kept at {kept_at}; open it with 'trapbook open {kept_at}'"
        )
        if kept_at
        else None
    )
    return {
        "path": str(path),
        "runs": n_runs,
        "screens": n_screens,
        "source": str(src),
        "strain": computed,
        "rebuilt": True,
        "user_work": work,
        "backup": str(kept_at) if kept_at else None,
        "notice": notice,
    }


def _compute_strain(nb, runs, tier: str, progress) -> list[dict]:
    from .stability import reading
    from .strain_link import get_strain

    smiles = sorted({r.intermediate for r in runs if r.intermediate})
    out = []
    for i, smi in enumerate(smiles):
        if progress:
            progress(f"strain of {smi} ({tier})", i / len(smiles))
        seen = reading(get_strain(nb, smi, tier=tier))  # the kind's own quantity and the one class (stability.judge)
        out.append(
            {
                "smiles": smi,
                "kind": seen["kind"],
                "strain_quantity": seen["strain_quantity"],
                "strain_kcal_mol": seen["strain_kcal_mol"],
                "stability_class": seen["stability_class"],
                "tier": tier,
            }
        )
    if progress:
        progress("done", 1.0)
    return out
