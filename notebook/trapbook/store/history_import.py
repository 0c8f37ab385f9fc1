"""Bringing a run in together with every version it had in another notebook.

An archive (an RO-Crate written by Trapbook) carries each run's whole version history:
author, UTC time, reason, action, the hash of the version before and the version's own
hash. Importing it as one new "imported" version would lose who changed what and why, so
the history is written back as it was, after its chain has been checked from the first
version to the last exactly as `verify` checks a notebook: numbered 1, 2, 3 ..., each
pointing at the hash of the one before, each hash recomputed from its content, each
record a readable run in the form Trapbook writes. A broken chain is refused whole.

When the run's id is already taken in this notebook, the run gets the next free id; the
history is then re-keyed (the id is part of every hash), with authors, times, reasons
and actions unchanged, and the caller says so.
"""

from __future__ import annotations

import datetime as _dt
import json
from dataclasses import dataclass

from ..errors import RecordError
from ..records import canonical_json, load_run

ACTIONS = ("create", "edit", "withdraw", "restore")
MAX_VERSIONS = 10_000
MAX_TEXT = 2_000


@dataclass
class HistoryVersion:
    version: int
    author: str
    time: str
    reason: str
    action: str
    prev_hash: str | None
    hash: str
    data: str


def _text(value, what: str, where: str) -> str:
    from ..text_rules import check_line

    if not isinstance(value, str) or not value.strip():
        raise RecordError(f"{where}: the {what} is missing", "the archive's history is damaged; nothing was imported")
    try:
        return check_line(value, MAX_TEXT)
    except ValueError as exc:
        raise RecordError(
            f"{where}: the {what} {exc}", "the archive's history is damaged or crafted; nothing was imported"
        ) from None


def _one(item, run_id: str, n: int) -> HistoryVersion:
    where = f"history of {run_id}, version {n}"
    if not isinstance(item, dict):
        raise RecordError(f"{where} is not a version record", "the archive's history is damaged; nothing was imported")
    version = item.get("version")
    if not isinstance(version, int) or isinstance(version, bool) or version != n:
        raise RecordError(
            f"{where}: expected version number {n}, found {str(version)[:20]!r}",
            "the archive's history has a gap or is out of order; nothing was imported",
        )
    time = _text(item.get("time"), "time", where)
    try:
        _dt.datetime.fromisoformat(time)
    except ValueError:
        raise RecordError(
            f"{where}: '{time[:40]}' is not a date and time", "the archive's history is damaged; nothing was imported"
        ) from None
    action = item.get("action")
    if action not in ACTIONS or (n == 1) != (action == "create"):
        raise RecordError(
            f"{where}: '{str(action)[:20]}' is not a possible action here",
            "the first version creates the run, later ones edit, withdraw or restore it; nothing was imported",
        )
    prev, h, data = item.get("prev_hash"), item.get("hash"), item.get("data")
    if not isinstance(h, str) or not (prev is None or isinstance(prev, str)) or not isinstance(data, str):
        raise RecordError(
            f"{where}: the hash, previous hash or data is missing", "the archive's history is damaged; nothing was imported"
        )
    return HistoryVersion(
        n, _text(item.get("author"), "author", where), time, _text(item.get("reason"), "reason", where), action, prev, h, data
    )


def checked_history(run_id: str, items: list) -> list[HistoryVersion]:
    """The versions of `run_id` as given, or a RecordError naming the first broken link."""
    from ..text_rules import validate_run_id
    from .chain import version_hash

    try:
        validate_run_id(run_id)
    except ValueError as exc:
        raise RecordError(f"a history in the archive names a run {exc}", "nothing was imported") from None
    if not isinstance(items, list) or not items:
        raise RecordError(f"the history of {run_id} is empty", "the archive's history is damaged; nothing was imported")
    if len(items) > MAX_VERSIONS:
        raise RecordError(f"the history of {run_id} has {len(items)} versions, over {MAX_VERSIONS}", "nothing was imported")
    out, prev = [], None
    for n, item in enumerate(items, 1):
        v = _one(item, run_id, n)
        where = f"history of {run_id}, version {n}"
        if v.prev_hash != prev:
            raise RecordError(
                f"{where} does not point at the hash of the version before it",
                "the archive's history was changed or is incomplete; nothing was imported",
            )
        if version_hash(run_id, n, v.author, v.time, v.reason, v.action, v.prev_hash, v.data) != v.hash:
            raise RecordError(
                f"{where}: its content does not match its SHA-256",
                "the archive's history was changed after it was written; nothing was imported",
            )
        run = _run_of(v.data, where)
        if run.id != run_id:
            raise RecordError(f"{where} is a record of run {str(run.id)[:40]}, not of {run_id}", "nothing was imported")
        out.append(v)
        prev = v.hash
    return out


def _run_of(data: str, where: str):
    try:
        run = load_run(json.loads(data))
    except (ValueError, RecursionError) as exc:
        raise RecordError(f"{where} is not a readable run record ({str(exc)[:100]})", "nothing was imported") from None
    except RecordError as exc:
        raise RecordError(f"{where}: {exc.message}", "nothing was imported") from None
    if canonical_json(run.to_json_dict()) != data:
        raise RecordError(f"{where} is not in the form Trapbook writes (edited by hand)", "nothing was imported")
    return run


def rekeyed(versions: list[HistoryVersion], new_id: str) -> list[HistoryVersion]:
    """The same history under another run id: same authors, times, reasons and actions, new hashes."""
    from .chain import version_hash

    out, prev = [], None
    for v in versions:
        d = json.loads(v.data)
        d["id"] = new_id
        data = canonical_json(load_run(d).to_json_dict())
        h = version_hash(new_id, v.version, v.author, v.time, v.reason, v.action, prev, data)
        out.append(HistoryVersion(v.version, v.author, v.time, v.reason, v.action, prev, h, data))
        prev = h
    return out


def write_history(nb, run_id: str, versions: list[HistoryVersion]):
    """Insert every version and the run's current row; the caller holds the write transaction."""
    from .. import attachments
    from . import chain
    from . import index as run_index
    from .notebook import SaveResult

    if nb.conn.execute(
        "SELECT 1 FROM runs WHERE id = ? UNION SELECT 1 FROM versions WHERE run_id = ?", (run_id, run_id)
    ).fetchone():
        raise RecordError(f"run id {run_id} is already in this notebook", "nothing was imported")
    withdrawn = 0
    runs = []
    for v in versions:
        run = load_run(json.loads(v.data))
        attachments.require_stored(nb, run)  # every version's files: verify asks for them all
        nb.conn.execute(
            "INSERT INTO versions (run_id, version, author, time, reason, action, prev_hash, hash, data) VALUES (?,?,?,?,?,?,?,?,?)",
            (run_id, v.version, v.author, v.time, v.reason, v.action, v.prev_hash, v.hash, v.data),
        )
        chain.append_save(nb.conn, "run", run_id, v.version, v.hash)  # the notebook's own log of saves
        if v.action in ("withdraw", "restore"):
            withdrawn = 1 if v.action == "withdraw" else 0
        runs.append(run)
    last, run = versions[-1], runs[-1]
    nb.conn.execute(
        """INSERT INTO runs (id, title, chemist, date, status, screen, withdrawn, version, hash, created, updated, data)
           VALUES (?,?,?,?,?,?,?,?,?,?,?,?)""",
        (
            run_id,
            run.title,
            run.chemist,
            run.date.isoformat() if run.date else None,
            run.status,
            run.screen,
            withdrawn,
            last.version,
            last.hash,
            versions[0].time,
            last.time,
            last.data,
        ),
    )
    run_index.index_run(nb, run)
    return SaveResult(run_id, last.version, last.hash, True)


__all__ = ["HistoryVersion", "checked_history", "rekeyed", "write_history"]
