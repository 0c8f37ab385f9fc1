"""Summary columns written beside each run at save time, so lists and condition queries
never re-read and re-compute every run.

The row is rebuilt from the run alone on every save, inside the save's transaction.
"""

from __future__ import annotations

import json
from typing import TYPE_CHECKING

from ..errors import TrapbookError
from ..records import Run
from ..units import to_canonical

if TYPE_CHECKING:  # pragma: no cover
    from .notebook import Notebook

_SEVERITY_RANK = {"stop": 0, "warn": 1, "note": 2}


def _names(run: Run, role: str) -> str | None:
    names = [ln.name for ln in run.lines_by_role(role)]
    return "; ".join(names) if names else None


def _temps(run: Run) -> tuple[float | None, float | None]:
    ts = [to_canonical(s.temperature, "temperature") for s in run.steps if s.temperature is not None]
    return (min(ts), max(ts)) if ts else (None, None)


def _time(run: Run) -> float | None:
    hs = [to_canonical(s.hold, "duration") for s in run.steps if s.hold is not None]
    return sum(hs) if hs else None


def best_yield(run: Run) -> tuple[float | None, str | None]:
    """Highest product yield of the run and whether it is isolated or by NMR."""
    from .. import amounts

    try:
        ys = amounts.product_yields(run)
    except TrapbookError:
        return None, None
    best, kind = None, None
    for y in ys:
        for value, k in ((y.isolated_yield_pct, "isolated"), (y.nmr_yield_pct, "NMR")):
            if value is not None and (best is None or value > best):
                best, kind = value, k
    if best is None and run.outcome is not None and run.status in ("done", "failed") and run.outcome.products == []:
        return 0.0, "none found"
    return best, kind


def findings_for(run: Run) -> list[dict]:
    try:
        from .. import checks
    except ImportError:  # the checks module is optional for the store
        return []
    try:
        return [f.to_dict() for f in checks.run_checks(run)]
    except TrapbookError:
        return []


def index_run(nb: "Notebook", run: Run) -> None:
    tmin, tmax = _temps(run)
    y, kind = best_yield(run)
    findings = findings_for(run)
    worst = None
    if findings:
        top = min(findings, key=lambda f: _SEVERITY_RANK.get(f["severity"], 9))
        worst = f"{top['severity']}:{top['code']}"
    traps = run.lines_by_role("trap")
    precursors = run.lines_by_role("precursor")
    nb.conn.execute(
        """INSERT OR REPLACE INTO run_index (run_id, precursor, intermediate, trap, trap_smiles, fluoride, additive, solvent,
           temp_min_c, temp_max_c, time_min, sealed, yield_pct, yield_kind, worst, findings)
           VALUES (?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?)""",
        (
            run.id,
            "; ".join(p.smiles or p.name for p in precursors) or None,
            run.intermediate_name or run.intermediate,
            _names(run, "trap"),
            "; ".join(t.smiles for t in traps if t.smiles) or None,
            _names(run, "fluoride source"),
            _names(run, "additive"),
            _names(run, "solvent"),
            tmin,
            tmax,
            _time(run),
            1 if any(s.sealed for s in run.steps) else 0,
            y,
            kind,
            worst,
            json.dumps([f["code"] for f in findings]),
        ),
    )
