"""Builds the demo notebook from demo_lab/ (a fictional group's runs) for a first look."""

from __future__ import annotations

import json
import os
from pathlib import Path

from .errors import TrapbookError
from .records import load_run, load_screen


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


def _refuse_to_replace_real_notebook(path: Path) -> None:
    """The demo is rebuilt by deleting the old one: never do that to a notebook holding real runs."""
    if not path.exists() or path.stat().st_size == 0 or path == default_demo_path():
        return  # the per-user demo file is Trapbook's own
    from .store import Notebook

    try:
        with Notebook.open(path) as nb:
            is_demo = bool(nb.get_setting(DEMO_MARK, False))
            empty = nb.count_runs() == 0
    except TrapbookError:
        is_demo, empty = False, False
    if not (is_demo or empty):
        raise TrapbookError(
            f"{path} is a notebook with runs of its own, not a demo notebook; the demo was not built",
            "give the demo another place with --db PATH (or unset TRAPBOOK_DB to use the per-user demo file)",
        )


def build_demo(path: Path | None = None, src: Path | None = None, strain_tier: str | None = None, progress=None) -> dict:
    """A fresh demo notebook at `path` (the per-user demo file by default); replaces an older demo.

    With `strain_tier`, the strain of each demo intermediate is computed (and cached in
    the notebook) so that strain cards, checks and the strain map have numbers to show.
    """
    from .store import Notebook

    src = src or demo_lab_dir()
    path = path or default_demo_path()
    runs, screens = load_demo_files(src)
    path.parent.mkdir(parents=True, exist_ok=True)
    _refuse_to_replace_real_notebook(path)
    for suffix in ("", "-wal", "-shm"):
        p = Path(str(path) + suffix)
        if p.exists():
            p.unlink()
    with Notebook.create(path) as nb:
        with nb.transaction():
            for run in runs:
                nb.add_run(run, author=run.chemist or "demo", reason="demo lab", keep_id=True)
            for sc in screens:
                nb.add_screen(sc, author=sc.chemist or "demo", reason="demo lab")
            nb.conn.execute("INSERT OR REPLACE INTO settings (key, value) VALUES (?, ?)", (DEMO_MARK, json.dumps(True)))
        n_runs, n_screens = nb.count_runs(), len(nb.list_screens())
        computed = _compute_strain(nb, runs, strain_tier, progress) if strain_tier else []
    return {"path": str(path), "runs": n_runs, "screens": n_screens, "source": str(src), "strain": computed}


def _compute_strain(nb, runs, tier: str, progress) -> list[dict]:
    from .strain_link import get_strain

    smiles = sorted({r.intermediate for r in runs if r.intermediate})
    out = []
    for i, smi in enumerate(smiles):
        if progress:
            progress(f"strain of {smi} ({tier})", i / len(smiles))
        res = get_strain(nb, smi, tier=tier)
        out.append({"smiles": smi, "olefin_strain_kcal_mol": res.get("olefin_strain_kcal_mol"),
                    "stability_class": res.get("stability_class"), "tier": tier})
    if progress:
        progress("done", 1.0)
    return out
