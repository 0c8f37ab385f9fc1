"""The checks of `verify` on screens, settings, the save log with its head, and the cache.

Runs are checked in integrity.py and derived data in integrity_derived.py; the rule for
each hash lives once, in store/chain.py.
"""

from __future__ import annotations

import json
import sqlite3
from collections.abc import Callable

from .store import chain


def _walk(rep, rows: list[tuple], where: Callable[[tuple], str], recompute: Callable[[tuple], str]) -> None:
    """Numbering, links and hashes of one record's versions, given as (..., version, ..., prev_hash, hash) rows."""
    prev = None
    for i, row in enumerate(rows, 1):
        version, prev_hash, h = row[1], row[-2], row[-1]
        if version != i:
            rep.add("chain-gap", where(row), f"expected version {i} here, found {version}")
        if prev_hash != prev:
            rep.add("chain-link", where(row), "does not point at the hash of the version before it")
        try:
            ok = recompute(row) == h
        except (TypeError, AttributeError):
            ok = False
        if not ok:
            rep.add("hash-mismatch", where(row), "content does not match its stored SHA-256 (changed outside Trapbook)")
        prev = h


def verify_screens(conn: sqlite3.Connection, rep) -> None:
    current = {r[0]: r[1:] for r in conn.execute("SELECT id, version, data, name, created, updated FROM screens")}
    by_screen: dict[str, list] = {}
    for row in conn.execute(
        "SELECT screen_id, version, author, time, reason, data, prev_hash, hash FROM screen_versions ORDER BY screen_id, version"
    ):
        by_screen.setdefault(row[0], []).append(row)
    for sid, rows in by_screen.items():
        _walk(
            rep, rows, lambda r: f"screen {r[0]} v{r[1]}", lambda r: chain.screen_hash(r[0], r[1], r[2], r[3], r[4], r[6], r[5])
        )
        cur = current.get(sid)
        if cur is None:
            rep.add("orphan-row", f"screen {sid}", "has versions but no current row")
        elif (cur[0], cur[1]) != (rows[-1][1], rows[-1][5]):
            rep.add("screen-mismatch", f"screen {sid}", "current row differs from its last version (changed outside Trapbook)")
        else:
            try:
                name = json.loads(cur[1]).get("name")
            except (ValueError, AttributeError, RecursionError):
                name = None
            if name != cur[2]:
                rep.add("screen-mismatch", f"screen {sid}", "name column differs from the screen's data")
            elif (cur[3], cur[4]) != (rows[0][3], rows[-1][3]):
                rep.add("screen-mismatch", f"screen {sid}", "created or updated time differs from its versions")
    for sid in current:
        if sid not in by_screen:
            rep.add("orphan-row", f"screen {sid}", "screen has no version history")
    rep.checked["screens"] = len(current)


def verify_settings(conn: sqlite3.Connection, rep) -> None:
    current = {k: v for k, v in conn.execute("SELECT key, value FROM settings") if not chain.is_private_setting(k)}
    by_key: dict[str, list] = {}
    for row in conn.execute(
        "SELECT key, version, author, time, reason, value, prev_hash, hash FROM setting_versions ORDER BY key, version"
    ):
        by_key.setdefault(row[0], []).append(row)
    for key, rows in by_key.items():
        _walk(
            rep, rows, lambda r: f"setting {r[0]} v{r[1]}", lambda r: chain.setting_hash(r[0], r[1], r[2], r[3], r[4], r[6], r[5])
        )
        if chain.is_private_setting(key):
            rep.add("unlogged-version", f"setting {key}", "drafts are never versioned; this one was added outside Trapbook")
        elif current.get(key) != rows[-1][5]:
            rep.add(
                "setting-mismatch", f"setting {key}", "current value differs from its last version (changed outside Trapbook)"
            )
    for key in current:
        if key not in by_key:
            rep.add("setting-mismatch", f"setting {key}", "a setting without any version (added outside Trapbook)")
    rep.checked["settings"] = len(current)


def verify_log(conn: sqlite3.Connection, rep) -> None:
    """The save log's own chain, its head, and a one-to-one match between log entries and versions."""
    prev, n_expected, logged = None, 1, {}
    for n, kind, record, version, item, prev_link, h in conn.execute(
        "SELECT n, kind, record, version, item_hash, prev, hash FROM saves ORDER BY n"
    ):
        where = f"save {n}"
        if n != n_expected:
            rep.add("log-broken", where, f"expected save number {n_expected} here, found {n}")
        if prev_link != prev or chain.save_hash(n, kind, record, version, item, prev_link) != h:
            rep.add(
                "log-broken", where, "does not link to the save before it, or its hash does not match (changed outside Trapbook)"
            )
        logged[(kind, record, version)] = (item, where)
        prev, n_expected = h, n + 1
    count = n_expected - 1
    head = conn.execute("SELECT count, hash FROM head WHERE one = 1").fetchone()
    rep.head = {"count": count, "hash": prev}
    if (head or (0, None)) != (count, prev):
        rep.add(
            "head-mismatch",
            "notebook",
            f"the head says {head[0] if head else 0} saves, the log holds {count}, "
            "or their last hashes differ (saves removed or added outside Trapbook)",
        )
    seen = set()
    for kind, table in chain.LOGGED_KINDS.items():
        id_col = {"run": "run_id", "screen": "screen_id", "setting": "key"}[kind]
        for record, version, h in conn.execute(f"SELECT {id_col}, version, hash FROM {table}"):
            key = (kind, record, version)
            seen.add(key)
            entry = logged.get(key)
            if entry is None:
                rep.add("unlogged-version", f"{kind} {record} v{version}", "no save in the notebook's log names this version")
            elif entry[0] != h:
                rep.add(
                    "log-missing-version",
                    f"{kind} {record} v{version}",
                    f"{entry[1]} recorded another hash for this version (the version was replaced)",
                )
    for key, (_item, where) in logged.items():
        if key not in seen:
            kind, record, version = key
            rep.add(
                "log-missing-version",
                f"{kind} {record} v{version}",
                f"{where} recorded this version, which is no longer in the notebook (deleted outside Trapbook)",
            )
    rep.checked["saves"] = count


def verify_noted_head(conn: sqlite3.Connection, rep, noted: str) -> None:
    """A head noted outside the notebook ("COUNT:HASH") must still be in its log: later saves
    may follow it, but nothing before it may have changed."""
    from .errors import RecordError

    count, _, h = noted.strip().partition(":")
    if not count.isdigit() or len(h) != 64 or any(ch not in "0123456789abcdef" for ch in h):
        raise RecordError(f"'{noted[:80]}' is not a head as verify prints it", "give COUNT:HASH, e.g. 20:a553…(64 hex digits)")
    row = conn.execute("SELECT hash FROM saves WHERE n = ?", (int(count),)).fetchone()
    if row is None or row[0] != h:
        rep.add(
            "head-mismatch",
            "notebook",
            f"save {count} of the log is {'gone' if row is None else 'not the one noted'}: "
            "the history was rewritten or cut back since the head was noted",
        )


def verify_cache(conn: sqlite3.Connection, rep) -> None:
    n = 0
    for key, smiles, tier, engine, result, h in conn.execute(
        "SELECT key, smiles, tier, engine, result, content_sha256 FROM strain_cache ORDER BY key"
    ):
        n += 1
        try:
            ok = chain.cache_hash(key, smiles, tier, engine, result) == h
        except (TypeError, AttributeError):
            ok = False
        if not ok:
            rep.add(
                "cache-mismatch",
                f"cache {key[:80]}",
                "content does not match its hash (changed outside Trapbook): it is not used, and is computed again when asked for",
            )
    rep.checked["cache_entries"] = n
