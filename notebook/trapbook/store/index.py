"""Summary columns written beside each run at save time, so lists and condition queries
never re-read and re-compute every run.

The row is rebuilt from the run alone on every save, inside the save's transaction.
"""

from __future__ import annotations

import json
from typing import TYPE_CHECKING

from ..errors import TrapbookError
from . import structure_digest

if TYPE_CHECKING:  # pragma: no cover
    from ..records import Run
    from .notebook import Notebook

_SEVERITY_RANK = {"stop": 0, "warn": 1, "note": 2}


def _names(run: Run, role: str) -> str | None:
    names = [ln.name for ln in run.lines_by_role(role)]
    return "; ".join(names) if names else None


def _temps(run: Run) -> tuple[float | None, float | None]:
    ts = [t for s in run.steps for t in s.temperatures_c()]  # both ends of a ramp
    return (min(ts), max(ts)) if ts else (None, None)


def _time(run: Run) -> float | None:
    from ..units import to_canonical

    hs = [to_canonical(s.hold, "duration") for s in run.steps if s.hold is not None]
    return sum(hs) if hs else None


def _headline_yield(run: Run) -> tuple[float | None, str | None]:
    """The run's headline yield (`amounts.headline_yield`) for the summary row.

    A yield that cannot be worked out is stored as unknown; the run's findings carry the
    reason ('yield-unknown'), so the list shows the problem rather than a number.
    """
    from ..amounts import headline_yield

    try:
        return headline_yield(run)
    except TrapbookError:
        return None, None


def _stored_findings(run: Run, nb: Notebook | None = None) -> list[dict]:
    """The run's findings as stored in the summary row (`trapbook.findings.findings_for`)."""
    from ..findings import findings_for

    return [f.to_dict() for f in findings_for(nb, run)]


def summary_row(nb: Notebook, run: Run) -> dict:
    """The run's summary row as a save writes it; `verify` recomputes it to compare."""
    tmin, tmax = _temps(run)
    y, kind = _headline_yield(run)
    findings = _stored_findings(run, nb)
    worst = None
    if findings:
        top = min(findings, key=lambda f: _SEVERITY_RANK.get(f["severity"], 9))
        worst = f"{top['severity']}:{top['code']}"
    traps = run.lines_by_role("trap")
    precursors = run.lines_by_role("precursor")
    return {
        "run_id": run.id,
        "precursor": "; ".join(p.smiles or p.name for p in precursors) or None,
        "intermediate": run.intermediate_name or intermediate_smiles(run),
        "trap": _names(run, "trap"),
        "trap_smiles": "; ".join(t.smiles for t in traps if t.smiles) or None,
        "fluoride": _names(run, "fluoride source"),
        "additive": _names(run, "additive"),
        "solvent": _names(run, "solvent"),
        "temp_min_c": tmin,
        "temp_max_c": tmax,
        "time_min": _time(run),
        "sealed": 1 if any(s.sealed for s in run.steps) else 0,
        "yield_pct": y,
        "yield_kind": kind,
        "worst": worst,
        "findings": json.dumps([f["code"] for f in findings]),
    }


def index_run(nb: Notebook, run: Run) -> None:
    nb.db["run_index"].insert(summary_row(nb, run), replace=True)
    row = nb.conn.execute("SELECT hash FROM runs WHERE id = ?", (run.id,)).fetchone()
    index_search(nb.conn, run, row[0] if row else None)


def refresh_summaries(nb: Notebook) -> int:
    """Rewrite every run's summary row, in one transaction.

    Findings and the worst finding are judged at save time with the notebook's thresholds
    and cached strain; when those change, the stored rows would go on judging by the old ones.
    """
    with nb.transaction():
        ids = [r[0] for r in nb.conn.execute("SELECT id FROM runs ORDER BY id").fetchall()]
        for rid in ids:
            index_run(nb, nb.get_run(rid))
    return len(ids)


# --- structures and full text for search (written in the same transaction as the row above) ---

#: Which lines of a run are searched by structure, and under what word a hit is reported.
STRUCTURE_PARTS = ("precursor", "intermediate", "trap", "product")

_CANONICAL: dict[str, str] = {}


def run_structures(run: Run) -> list[tuple[str, str, str]]:
    """(part, name, SMILES) of the precursor, intermediate, traps and products of a run."""
    out: list[tuple[str, str, str]] = []
    for line in run.lines:
        if line.role in STRUCTURE_PARTS and line.smiles:
            out.append((line.role, line.name, line.smiles))
    smiles = intermediate_smiles(run)
    if smiles:
        out.append(("intermediate", run.intermediate_name or "intermediate", smiles))
    return out


def intermediate_smiles(run: Run) -> str | None:
    """The recorded intermediate, else the one the silyl precursor releases (so it is listed and found)."""
    from ..strain_link import intermediate_of

    return intermediate_of(run)


def structure_id(conn, smiles: str) -> int:
    """Id of a structure in the notebook, fingerprinted and stored on first sight."""
    from ..chemistry import fingerprints

    canon = _CANONICAL.get(smiles)
    if canon is None:
        from ..chemistry import molecules

        canon = molecules.canonical(smiles)
        if len(_CANONICAL) > 20000:
            _CANONICAL.clear()
        _CANONICAL[smiles] = canon
    row = conn.execute("SELECT id FROM structures WHERE smiles = ?", (canon,)).fetchone()
    if row:
        return row[0]
    bits = fingerprints.structure_bits(canon)
    cur = conn.execute(
        "INSERT INTO structures (smiles, inchikey, morgan, pattern, mol, scheme) VALUES (?,?,?,?,?,?)",
        (canon, bits.inchikey, bits.morgan, bits.pattern, bits.mol, fingerprints.SCHEME),
    )
    structure_digest.append(conn, cur.lastrowid, canon)
    return cur.lastrowid


def run_text_fields(run: Run) -> tuple[str, str, str, str]:
    """(title, notes, observations, tags) as indexed for full-text search; step notes count as notes."""
    notes = " ".join(x for x in [run.notes or ""] + [s.note or "" for s in run.steps] if x)
    obs = (run.outcome.observations or "") if run.outcome else ""
    return run.title, notes, obs, " ".join(run.tags)


def index_search(conn, run: Run, run_hash: str | None) -> None:
    """Replace the run's structure links and full-text row; cheap when its structures are known."""
    conn.execute("DELETE FROM run_structures WHERE run_id = ?", (run.id,))
    rows = [(run.id, part, name, structure_id(conn, smi)) for part, name, smi in run_structures(run)]
    conn.executemany("INSERT INTO run_structures (run_id, part, name, structure_id) VALUES (?,?,?,?)", rows)
    row = conn.execute("SELECT n FROM search_state WHERE run_id = ?", (run.id,)).fetchone()
    if row is None:
        n = conn.execute("INSERT INTO search_state (run_id, hash) VALUES (?, ?)", (run.id, run_hash or "")).lastrowid
    else:
        n = row[0]
        conn.execute("UPDATE search_state SET hash = ? WHERE n = ?", (run_hash or "", n))
        conn.execute("DELETE FROM run_text WHERE rowid = ?", (n,))
    conn.execute(
        "INSERT INTO run_text (rowid, run_id, title, notes, observations, tags) VALUES (?,?,?,?,?,?)",
        (n, run.id, *run_text_fields(run)),
    )
