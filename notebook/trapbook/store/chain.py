"""The hashes that link a notebook's history, and the log of every save.

Each record kind keeps its own chain of versions (a run's versions, a screen's versions, a
setting's versions): every version's hash covers its metadata, its content and the hash of
the version before it. On top of those, the notebook keeps one log of every save in the
order they happened, itself hash-chained, and a head row with the log's length and last
hash. A version that disappears (the newest one, or a whole run) leaves a log entry that
points at nothing, so it is found even when the chain it belonged to still looks whole.

Pure functions over a sqlite3 connection, so migrations and `verify` use the very same code.
"""

from __future__ import annotations

import hashlib
import json
import sqlite3
from json.encoder import encode_basestring as _json_text  # json.dumps' own string writer (ensure_ascii=False)

#: The kinds of record a save log entry can name, with the table holding their versions.
LOGGED_KINDS = {"run": "versions", "screen": "screen_versions", "setting": "setting_versions"}


def _sha(obj: dict) -> str:
    return hashlib.sha256(_canonical(obj).encode()).hexdigest()


def _canonical(obj: dict) -> str:
    """records.canonical_json(obj), the records' one canonical form, written out directly for a
    flat dict of text, whole numbers and nulls (every link of a chain): checking twenty members'
    chains hashes hundreds of thousands of them, and the general encoder costs four times this.
    Anything else goes to canonical_json itself; a test holds the two equal."""
    parts = []
    for key in sorted(obj):
        value = obj[key]
        kind = type(value)
        if kind is str:
            text = _json_text(value)
        elif value is None:
            text = "null"
        elif kind is int:
            text = int.__repr__(value)
        else:
            from ..records import canonical_json

            return canonical_json(obj)
        parts.append(f"{_json_text(key)}:{text}")
    return "{" + ",".join(parts) + "}"


def data_sha(data: str) -> str:
    return hashlib.sha256(data.encode()).hexdigest()


def version_hash(run_id: str, version: int, author: str, time: str, reason: str, action: str, prev: str | None, data: str) -> str:
    """SHA-256 over a run version's metadata and its canonical JSON: the link of the chain."""
    return _sha(
        {
            "run": run_id,
            "version": version,
            "author": author,
            "time": time,
            "reason": reason,
            "action": action,
            "prev": prev,
            "data_sha256": data_sha(data),
        }
    )


def screen_hash(screen_id: str, version: int, author: str, time: str, reason: str, prev: str | None, data: str) -> str:
    """The same link for a screen's versions."""
    return _sha(
        {
            "screen": screen_id,
            "version": version,
            "author": author,
            "time": time,
            "reason": reason,
            "prev": prev,
            "data_sha256": data_sha(data),
        }
    )


def setting_hash(key: str, version: int, author: str, time: str, reason: str, prev: str | None, value: str) -> str:
    """The same link for one setting's versions (`value` is its stored JSON text)."""
    return _sha(
        {
            "setting": key,
            "version": version,
            "author": author,
            "time": time,
            "reason": reason,
            "prev": prev,
            "value_sha256": data_sha(value),
        }
    )


def save_hash(n: int, kind: str, record: str, version: int, item_hash: str, prev: str | None) -> str:
    """The link of the notebook's save log."""
    return _sha({"n": n, "kind": kind, "record": record, "version": version, "item": item_hash, "prev": prev})


def cache_hash(key: str, smiles: str, tier: str, engine: str, result: str) -> str:
    """What a cache entry must still hash to for it to be served."""
    return _sha({"key": key, "smiles": smiles, "tier": tier, "engine": engine, "result_sha256": data_sha(result)})


def is_private_setting(key: str) -> bool:
    """Editor drafts are scratch space, offered back only to the editor that wrote them:
    not a record, so neither versioned nor logged (saved often, as the chemist types)."""
    return key.startswith("draft:")


def append_save(conn: sqlite3.Connection, kind: str, record: str, version: int, item_hash: str) -> str:
    """Add one entry to the save log and move the head; call inside the save's transaction."""
    if kind not in LOGGED_KINDS:
        raise ValueError(f"unknown kind of save: {kind}")
    row = conn.execute("SELECT count, hash FROM head WHERE one = 1").fetchone()
    count, prev = (row[0], row[1]) if row else (0, None)
    n = count + 1
    h = save_hash(n, kind, record, version, item_hash, prev)
    conn.execute(
        "INSERT INTO saves (n, kind, record, version, item_hash, prev, hash) VALUES (?,?,?,?,?,?,?)",
        (n, kind, record, version, item_hash, prev, h),
    )
    conn.execute(
        "INSERT INTO head (one, count, hash) VALUES (1, ?, ?) ON CONFLICT(one) DO UPDATE SET count = excluded.count, "
        "hash = excluded.hash",
        (n, h),
    )
    return h


def stored_value(value) -> str:
    """A setting's value as stored: JSON text, the same bytes every time for the same value."""
    return json.dumps(value)
