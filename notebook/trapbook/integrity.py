"""Checking that a notebook still holds exactly what Trapbook wrote.

Every fact a reader sees is one of three kinds, and `verify` checks each kind its own way:

- a version in a hash chain (runs, screens, settings): every chain is walked again from
  its first version, each hash recomputed; the current row of each record must be its last
  version, column by column (title, chemist, date, status, screen, withdrawn, times);
- derived data (a run's summary row with its yield and worst finding, its structure links,
  its full-text row): recomputed from the run and compared;
- a cache (strain and alignment results): each entry carries a hash of its content; an
  entry that no longer matches is never served (it is computed again on the next request)
  and is reported here.

Above the chains sits the notebook's log of every save, itself hash-chained, with a head
row (count and last hash): a version that disappears, even a whole run or the newest
version with its current row rolled back, leaves a log entry pointing at nothing.

What this cannot catch: someone who rewrites history consistently with Trapbook's own
code (new hashes for every changed version, the log and its head rebuilt to match), or who
cuts the newest saves off the end of the log together with their versions and sets the
head back. Nothing inside one file can tell such a rewrite from the truth; a backup kept
elsewhere, or the head hash written down outside the notebook, can.

Read-only throughout: verify never writes to the notebook.
"""

from __future__ import annotations

import json
import sqlite3
from dataclasses import asdict, dataclass, field
from pathlib import Path

from .errors import StoreError, TrapbookError


@dataclass
class Problem:
    code: str
    record: str
    message: str

    def to_dict(self) -> dict:
        return asdict(self)


@dataclass
class Report:
    path: str
    problems: list[Problem] = field(default_factory=list)
    checked: dict[str, int] = field(default_factory=dict)
    head: dict | None = None

    @property
    def ok(self) -> bool:
        return not self.problems

    def add(self, code: str, record: str, message: str) -> None:
        self.problems.append(Problem(code, record, message))

    def to_dict(self) -> dict:
        return {
            "ok": self.ok,
            "path": self.path,
            "problems": [p.to_dict() for p in self.problems],
            "checked": dict(self.checked),
            "head": self.head,
        }


#: Problem codes and what they mean, for --help and the docs.
CODES = {
    "sqlite": "SQLite's own integrity check found damage in the file",
    "old-schema": "the notebook has not been brought up to this Trapbook's layout yet (open it once to upgrade)",
    "chain-gap": "a record's versions are not numbered 1, 2, 3 ... without gaps",
    "chain-link": "a version does not point at the hash of the version before it",
    "hash-mismatch": "a version's stored hash does not match its content (changed outside Trapbook)",
    "bad-record": "a stored version is not a readable run record",
    "not-canonical": "a stored version's JSON is not in the form Trapbook writes (edited by hand)",
    "current-mismatch": "a run's current row (data, title, chemist, date, status, screen, withdrawn, times) "
    "does not match its last version",
    "orphan-row": "a current row without any version history, or versions without a current row",
    "screen-mismatch": "a screen's current row does not match its last version",
    "setting-mismatch": "a setting's current value does not match its last version",
    "log-broken": "the notebook's log of saves is not numbered, linked or hashed as written",
    "head-mismatch": "the notebook's head (count and last hash of the save log) does not match the log, "
    "or the log no longer holds a head noted earlier (--head)",
    "log-missing-version": "a save in the log names a version that is gone or changed (a deleted run or version)",
    "unlogged-version": "a version that no save in the log names (added outside Trapbook)",
    "index-mismatch": "a run's summary row (yield, worst finding, conditions) differs from what the run gives",
    "structure-mismatch": "a run's structure links, or a stored structure's fingerprints, differ from the run",
    "text-mismatch": "a run's full-text row differs from the run",
    "cache-mismatch": "a cached strain or alignment result no longer matches its hash (it is not used)",
    "attachment": "an attached file is missing or its bytes no longer match their SHA-256",
}


def verify(nb, check_files: bool = True, noted_head: str | None = None) -> Report:
    """Every check on an open notebook; never raises for damage, only reports it.

    `noted_head` ("COUNT:HASH", as `verify` printed it earlier and someone kept elsewhere)
    is looked for in the save log: a history rewritten or cut back since then lacks it.
    """
    from . import integrity_derived, integrity_log
    from .store import schema

    rep = Report(str(nb.path))
    conn: sqlite3.Connection = nb.conn
    try:
        rows = conn.execute("PRAGMA integrity_check").fetchall()
    except sqlite3.DatabaseError as exc:
        rep.add("sqlite", "file", f"integrity check could not run: {exc}")
        return rep
    for m in [r[0] for r in rows if r and r[0] != "ok"][:50]:
        rep.add("sqlite", "file", m)
    try:
        runs = _verify_runs(conn, rep)
        current = schema.pending_for_readers(conn) == []
        if not current:
            rep.add(
                "old-schema",
                "file",
                "this notebook predates the save log and versioned settings: "
                "open it once with this Trapbook (e.g. 'trapbook list') to upgrade it, then verify again",
            )
        else:
            integrity_log.verify_screens(conn, rep)
            integrity_log.verify_settings(conn, rep)
            integrity_log.verify_log(conn, rep)
            if noted_head:
                integrity_log.verify_noted_head(conn, rep, noted_head)
            integrity_log.verify_cache(conn, rep)
            integrity_derived.verify_derived(nb, runs, rep)  # judged with the settings and cache checked above
        if check_files:
            _verify_files(nb, rep)
    except sqlite3.DatabaseError as exc:
        rep.add("sqlite", "file", f"the notebook could not be read to the end: {exc}")
    return rep


def _check_version(rep: Report, row: tuple, i: int, prev: str | None):
    """One run version: number, link, hash and form; returns the run it holds (None if unreadable)."""
    from .records import canonical_json, stored_run
    from .store.chain import version_hash

    rid, version, author, time, reason, action, prev_hash, h, data = row
    where = f"{rid} v{version}"
    if version != i:
        rep.add("chain-gap", where, f"expected version {i} here, found {version}")
    if prev_hash != prev:
        rep.add("chain-link", where, "does not point at the hash of the version before it")
    try:
        recomputed = version_hash(rid, version, author, time, reason, action, prev_hash, data)
    except (TypeError, AttributeError):
        recomputed = None
    if recomputed != h:
        rep.add("hash-mismatch", where, "content does not match its stored SHA-256 (changed outside Trapbook)")
    try:
        run = stored_run(data)
    except (ValueError, TypeError, RecursionError, TrapbookError) as exc:
        rep.add("bad-record", where, f"not a readable run record ({str(exc).splitlines()[0][:120]})")
        return None
    if canonical_json(run.to_json_dict()) != data:
        rep.add("not-canonical", where, "JSON is not in the form Trapbook writes")
    return run


def _verify_runs(conn, rep: Report) -> dict:
    """Every run's chain and current row; returns {run id: the run of its last version} for the derived checks."""
    cols = "id, version, hash, data, title, chemist, date, status, screen, withdrawn, created, updated"
    current = {r[0]: r for r in conn.execute(f"SELECT {cols} FROM runs")}
    by_run: dict[str, list] = {}
    for row in conn.execute(
        "SELECT run_id, version, author, time, reason, action, prev_hash, hash, data FROM versions ORDER BY run_id, version"
    ):
        by_run.setdefault(row[0], []).append(row)
    n_versions, runs = 0, {}
    for run_id, versions in by_run.items():
        prev, withdrawn, run = None, 0, None
        for i, row in enumerate(versions, 1):
            n_versions += 1
            run = _check_version(rep, row, i, prev)
            if row[5] in ("withdraw", "restore"):
                withdrawn = 1 if row[5] == "withdraw" else 0
            prev = row[7]
        cur = current.get(run_id)
        if cur is None:
            rep.add("orphan-row", run_id, "has versions but no current row")
            continue
        _compare_current(rep, cur, versions, run, withdrawn)
        if run is not None and cur[3] == versions[-1][8]:
            runs[run_id] = run
    for run_id in current:
        if run_id not in by_run:
            rep.add("orphan-row", run_id, "current row has no version history")
    rep.checked["runs"] = len(current)
    rep.checked["versions"] = n_versions
    return runs


def _compare_current(rep: Report, cur: tuple, versions: list, run, withdrawn: int) -> None:
    """The current row is a copy of the last version: every column a list or a search reads."""
    run_id, cv, ch, cdata, title, chemist, date, status, screen, cwithdrawn, created, updated = cur
    last = versions[-1]
    if cv != last[1]:
        rep.add("current-mismatch", run_id, f"current row says version {cv}, history ends at version {last[1]}")
    elif ch != last[7]:
        rep.add("current-mismatch", run_id, "current row's hash differs from its last version")
    if cdata != last[8]:
        rep.add("current-mismatch", run_id, "current data differs from its last version (changed outside Trapbook)")
    if run is None:
        return
    from .store.notebook import listed_columns

    expected = {
        **listed_columns(run, withdrawn),
        "created": versions[0][3],
        "updated": last[3],
    }
    found = {
        "title": title,
        "chemist": chemist,
        "date": date,
        "status": status,
        "screen": screen,
        "withdrawn": cwithdrawn,
        "created": created,
        "updated": updated,
    }
    wrong = [k for k in expected if expected[k] != found[k]]
    if wrong:
        rep.add(
            "current-mismatch", run_id, f"{', '.join(wrong)} column(s) differ from the run's history (changed outside Trapbook)"
        )


def _verify_files(nb, rep: Report) -> None:
    """Every attachment named by any version (old versions keep their files too)."""
    from . import attachments

    root = attachments.store_dir(nb)
    wanted: dict[str, tuple[int, str]] = {}
    for run_id, version, data in nb.conn.execute("SELECT run_id, version, data FROM versions ORDER BY run_id, version"):
        try:
            atts = json.loads(data).get("attachments") or []
        except (ValueError, AttributeError, RecursionError):
            continue
        for a in atts:
            if isinstance(a, dict) and isinstance(a.get("sha256"), str):
                wanted.setdefault(a["sha256"], (a.get("size"), f"{run_id} v{version} attachment {a.get('name', '?')}"))
    for sha, (size, where) in sorted(wanted.items()):
        problem = attachments.check_blob(root, sha, size if isinstance(size, int) else None)
        if problem:
            rep.add("attachment", where, f"{problem} ({sha[:12]}…)")
    rep.checked["attachments"] = len(wanted)


def verify_path(path: str | Path, check_files: bool = True, noted_head: str | None = None) -> Report:
    """Open the notebook for reading only (nothing is written, not even an upgrade) and verify it."""
    from .store import Notebook
    from .store.connect import open_read_only

    p = Path(path)
    if not p.exists():
        raise StoreError(f"no notebook at {p}", "check the path")
    try:
        conn = open_read_only(p)  # a permission problem is not damage: its StoreError goes up (exit 2)
        conn.execute("PRAGMA busy_timeout=30000")
    except sqlite3.DatabaseError as exc:
        rep = Report(str(p))
        rep.add("sqlite", "file", f"not a readable SQLite file: {exc}")
        return rep
    try:
        try:
            tables = {r[0] for r in conn.execute("SELECT name FROM sqlite_master WHERE type = 'table'")}
        except sqlite3.DatabaseError as exc:
            rep = Report(str(p))
            rep.add("sqlite", "file", f"not a readable SQLite file: {exc}")
            return rep
        if not {"runs", "versions", "screens", "screen_versions"} <= tables:
            rep = Report(str(p))
            rep.add("sqlite", "file", "not a Trapbook notebook (its tables are missing)")
            return rep
        return verify(
            Notebook(p, conn, write_problem=StoreError("verify only reads")), check_files=check_files, noted_head=noted_head
        )
    finally:
        conn.close()


__all__ = ["verify", "verify_path", "Report", "Problem", "CODES"]
