"""A compact list of a notebook's structures — (id, key of its SMILES) — kept beside them.

Notebooks searched together (a group's members, structure_pool.py) must find which of
their structures they share before they screen them once. Comparing SMILES means reading
and hashing every copy of every structure in every member, which costs a twenty-member
group several times what one notebook of the same runs costs. The digest gives each stored
structure a 128-bit key of its canonical SMILES (the first 16 bytes of its SHA-256), packed
with its id into 24 bytes and appended, at the moment the structure is stored, to blobs of
at most 1024 entries: a reader takes a member's whole list in one statement, and equal keys
are equal structures (two different SMILES sharing 128 bits is not expected in the life of
the universe; the pool still refuses to go on if the two halves of two keys disagree).

The digest is derived data and is trusted only while it provably describes the table: its
entries are as many as the table's rows, its ids distinct and its largest id the table's.
Any row deleted or changed clears it (triggers, migration 6); a row stored by code that
does not append here (an older writer cannot: it refuses a notebook migrated past it)
leaves the counts unequal. Either way `read` says the digest cannot be used and the pool
reads the SMILES themselves, and the notebook's next `trapbook reindex` writes it again.
"""

from __future__ import annotations

import hashlib
import sqlite3
import struct

import numpy as np

ENTRY = np.dtype([("id", "<i8"), ("key", "<u8", (2,))])  # 24 bytes: the id, then the SMILES key as two words
_PACK = struct.Struct("<q16s")
_PER_BLOB = 1024  # entries per stored blob: a new structure rewrites at most 24 KiB


def key_of(smiles: str) -> bytes:
    """The 16-byte key of a canonical SMILES (the same text always gives the same key)."""
    return hashlib.sha256(smiles.encode("utf-8")).digest()[:16]


def keys_of(names: list[bytes]) -> np.ndarray:
    """Keys of UTF-8 SMILES as an (n, 2) array of words: the digest's layout, worked out here."""
    sha = hashlib.sha256
    joined = b"".join([sha(n).digest()[:16] for n in names])
    return np.frombuffer(joined, dtype="<u8").reshape(len(names), 2) if names else np.zeros((0, 2), "<u8")


def append(conn: sqlite3.Connection, structure_id: int, smiles: str) -> None:
    """Record a structure just stored (in the same transaction as its row)."""
    conn.execute(
        "INSERT INTO structure_digest (part, entries) VALUES (?, ?) "
        "ON CONFLICT(part) DO UPDATE SET entries = CAST(entries || excluded.entries AS BLOB)",  # || alone gives text
        (structure_id // _PER_BLOB, _PACK.pack(structure_id, key_of(smiles))),
    )


TABLE = "CREATE TABLE IF NOT EXISTS structure_digest (part INTEGER PRIMARY KEY, entries BLOB NOT NULL)"

#: A deleted or changed structure row makes every entry suspect: the digest is cleared, not patched.
TRIGGERS = tuple(
    f"CREATE TRIGGER IF NOT EXISTS structure_digest_cleared_on_{event.lower()} AFTER {event} ON structures "
    "BEGIN DELETE FROM structure_digest; END"
    for event in ("DELETE", "UPDATE")
)


def build(conn: sqlite3.Connection) -> int:
    """Write the digest of every stored structure afresh (a migration, or a notebook whose digest was cleared)."""
    conn.execute("DELETE FROM structure_digest")
    n = 0
    for sid, smiles in conn.execute("SELECT id, smiles FROM structures ORDER BY id").fetchall():
        append(conn, sid, smiles)
        n += 1
    return n


def read(conn: sqlite3.Connection) -> np.ndarray | None:
    """Every (id, key) of the notebook's structures, or None where no digest describes them all.

    One statement, so the entries and the table's counts are read from the same snapshot."""
    try:
        count, top, blob = conn.execute(
            "SELECT (SELECT count(*) FROM structures), (SELECT max(id) FROM structures), "
            "(SELECT CAST(group_concat(entries, '') AS BLOB) FROM structure_digest)"
        ).fetchone()
    except sqlite3.OperationalError as exc:  # a notebook not yet migrated (read-only here): no digest
        if "no such table" in str(exc):
            return None
        raise
    blob = blob or b""
    if len(blob) % ENTRY.itemsize or len(blob) // ENTRY.itemsize != count:
        return None
    entries = np.frombuffer(blob, dtype=ENTRY)
    if not count:
        return entries
    ids = np.sort(entries["id"])
    if ids[-1] != top or np.any(ids[1:] == ids[:-1]):
        return None
    return entries
