"""Checking that a notebook still holds exactly what Trapbook wrote.

Every save stores an immutable version whose hash covers its metadata, its JSON and the
hash of the version before it. `verify` walks every chain again from the start, checks
that the current row of each run is its last version, that each stored file still has
the bytes its hash names, and asks SQLite for its own structural check. Anything edited
outside Trapbook (a byte changed in a version, a row deleted, a current row that no
longer matches its history, a spectrum replaced on disk) shows up as a problem that
names the record.

What this cannot catch: someone who rewrites a whole chain consistently, hashes
included. Keep backups (`trapbook backup`) elsewhere to guard against that.
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

    @property
    def ok(self) -> bool:
        return not self.problems

    def add(self, code: str, record: str, message: str) -> None:
        self.problems.append(Problem(code, record, message))

    def to_dict(self) -> dict:
        return {"ok": self.ok, "path": self.path, "problems": [p.to_dict() for p in self.problems], "checked": dict(self.checked)}


#: Problem codes and what they mean, for --help and the docs.
CODES = {
    "sqlite": "SQLite's own integrity check found damage in the file",
    "chain-gap": "a run's versions are not numbered 1, 2, 3 ... without gaps",
    "chain-link": "a version does not point at the hash of the version before it",
    "hash-mismatch": "a version's stored hash does not match its content (changed outside Trapbook)",
    "bad-record": "a stored version is not a readable run record",
    "not-canonical": "a stored version's JSON is not in the form Trapbook writes (edited by hand)",
    "current-mismatch": "a run's current row does not match its last version",
    "orphan-row": "a run row without any version history, or versions without a run row",
    "screen-mismatch": "a screen's current row does not match its last version",
    "attachment": "an attached file is missing or its bytes no longer match their SHA-256",
}


def verify(nb, check_files: bool = True) -> Report:
    """Every check on an open notebook; never raises for damage, only reports it."""
    from .store.notebook import version_hash

    rep = Report(str(nb.path))
    conn: sqlite3.Connection = nb.conn
    try:
        rows = conn.execute("PRAGMA integrity_check").fetchall()
    except sqlite3.DatabaseError as exc:
        rep.add("sqlite", "file", f"integrity check could not run: {exc}")
        return rep
    msgs = [r[0] for r in rows if r and r[0] != "ok"]
    for m in msgs[:50]:
        rep.add("sqlite", "file", m)
    try:
        _verify_runs(conn, rep, version_hash)
        _verify_screens(conn, rep)
        if check_files:
            _verify_files(nb, rep)
    except sqlite3.DatabaseError as exc:
        rep.add("sqlite", "file", f"the notebook could not be read to the end: {exc}")
    return rep


def _verify_runs(conn, rep: Report, version_hash) -> None:
    from .records import Run, canonical_json

    current = {r[0]: r for r in conn.execute("SELECT id, version, hash, data, title, status, screen FROM runs")}
    by_run: dict[str, list] = {}
    for row in conn.execute(
        "SELECT run_id, version, author, time, reason, action, prev_hash, hash, data FROM versions ORDER BY run_id, version"
    ):
        by_run.setdefault(row[0], []).append(row)
    n_versions = 0
    for run_id, versions in by_run.items():
        prev = None
        for i, (rid, version, author, time, reason, action, prev_hash, h, data) in enumerate(versions, 1):
            n_versions += 1
            where = f"{run_id} v{version}"
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
                run = Run.model_validate(json.loads(data))
                if canonical_json(run.to_json_dict()) != data:
                    rep.add("not-canonical", where, "JSON is not in the form Trapbook writes")
            except (ValueError, TypeError, RecursionError, TrapbookError) as exc:
                rep.add("bad-record", where, f"not a readable run record ({str(exc).splitlines()[0][:120]})")
            prev = h
        last = versions[-1]
        cur = current.get(run_id)
        if cur is None:
            rep.add("orphan-row", run_id, "has versions but no current row")
            continue
        _, cv, ch, cdata, title, status, screen = cur
        if cv != last[1] or ch != last[7]:
            rep.add("current-mismatch", run_id, f"current row says version {cv}, history ends at version {last[1]}"
                    if cv != last[1] else "current row's hash differs from its last version")
        if cdata != last[8]:
            rep.add("current-mismatch", run_id, "current data differs from its last version (changed outside Trapbook)")
        else:
            try:
                d = json.loads(cdata)
                if d.get("title") != title or d.get("status", "done") != status or d.get("screen") != screen:
                    rep.add("current-mismatch", run_id, "title, status or screen column differs from the run's data")
            except (ValueError, RecursionError):
                pass
    for run_id in current:
        if run_id not in by_run:
            rep.add("orphan-row", run_id, "current row has no version history")
    rep.checked["runs"] = len(current)
    rep.checked["versions"] = n_versions


def _verify_screens(conn, rep: Report) -> None:
    current = {r[0]: (r[1], r[2]) for r in conn.execute("SELECT id, version, data FROM screens")}
    last: dict[str, tuple] = {}
    for sid, version, data in conn.execute("SELECT screen_id, version, data FROM screen_versions ORDER BY screen_id, version"):
        last[sid] = (version, data)
    for sid, (version, data) in current.items():
        if sid not in last:
            rep.add("orphan-row", sid, "screen has no version history")
        elif last[sid] != (version, data):
            rep.add("screen-mismatch", sid, "current row differs from its last version (changed outside Trapbook)")
    rep.checked["screens"] = len(current)


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


def verify_path(path: str | Path, check_files: bool = True) -> Report:
    """Open the notebook read-only-in-spirit (no writes beyond SQLite's own) and verify it."""
    from .store import Notebook

    p = Path(path)
    if not p.exists():
        raise StoreError(f"no notebook at {p}", "check the path")
    try:
        conn = sqlite3.connect(f"file:{p}?mode=ro", uri=True, timeout=30.0)
        conn.execute("PRAGMA busy_timeout=30000")
        conn.execute("SELECT count(*) FROM sqlite_master").fetchone()
    except sqlite3.DatabaseError as exc:
        from .store.notebook import _access_error

        problem = _access_error(p, exc)  # a permission problem is not damage: say so, exit 2
        if problem is not None:
            raise problem from None
        rep = Report(str(p))
        rep.add("sqlite", "file", f"not a readable SQLite file: {exc}")
        return rep
    try:
        tables = {r[0] for r in conn.execute("SELECT name FROM sqlite_master WHERE type = 'table'")}
        if not {"runs", "versions", "screens", "screen_versions"} <= tables:
            rep = Report(str(p))
            rep.add("sqlite", "file", "not a Trapbook notebook (its tables are missing)")
            return rep
        return verify(Notebook(p, conn), check_files=check_files)
    finally:
        conn.close()


__all__ = ["verify", "verify_path", "Report", "Problem", "CODES"]
