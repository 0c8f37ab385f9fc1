"""The distinct structures of the notebooks searched together, each once, with its bit strings.

A group's members (group.py) each store their own copy of the structures they share (the
same traps, substrates, intermediates), so twenty notebooks may hold every structure
several times over. A pool gives each distinct canonical SMILES one row, whose bits are
read from the first notebook that holds it (bits depend on the SMILES alone, once made by
the same fingerprint scheme: rows of another scheme are made again), and keeps for every
notebook the pool row of each of its structure ids. A query is screened and matched over
the pool's rows, once; each notebook's answer is read back through its ids. One notebook
is a pool of one: the same code answers both.

Which structures the notebooks share is found from each notebook's digest (one blob of
(id, SMILES key) entries, store/structure_digest.py), so no SMILES is read only to learn
that another notebook holds it too; a notebook without a usable digest has its SMILES read
and keyed here. Each distinct structure's SMILES and bits are then read once, from the
notebook that lends them, with SQLite's aggregates (one string of ids, one of SMILES, one
blob of bits per notebook) rather than row by row. Everything is read, never written: the
pool lives in the memory of the process (search_structures keeps it while the notebooks
are unchanged).
"""

from __future__ import annotations

import json
from dataclasses import dataclass, field

import numpy as np

from .errors import StoreError
from .store import structure_digest

#: The stored bit strings a pool reads: the substructure screen and the similarity fingerprint.
COLUMNS = ("pattern", "morgan")
_WORDS = 32  # 2048 bits, the width of both (chemistry/fingerprints.py), as 64-bit words


@dataclass
class Share:
    """One notebook's part of a pool: its structure ids (in the order read), the pool row of each, and which
    ids lend their stored bits to their row (the first copy of a structure the pool met)."""

    key: str
    token: str
    ids: np.ndarray
    rows: np.ndarray
    lends: np.ndarray
    names: list[bytes] | None = None  # the SMILES as read, where they were read to make the share


@dataclass
class Pool:
    """Each distinct SMILES of N ≥ 1 notebooks once; one bit matrix per column read so far."""

    shares: dict[str, Share]
    smiles: list[str]
    bits: dict[str, np.ndarray] = field(default_factory=dict)
    answers: dict[tuple, tuple] = field(default_factory=dict)


class Moved(Exception):
    """A notebook's structure rows changed between two reads of one pool (a save from elsewhere)."""


def _ids(nb, joined: str | None, n: int | None = None) -> np.ndarray:
    """Structure ids from SQLite's group_concat (commas), checked against the count expected."""
    ids = np.fromstring(joined, dtype=np.int64, sep=",") if joined else np.zeros(0, np.int64)
    if n is not None and len(ids) != n:
        raise StoreError(
            f"the structure rows of {nb.path} cannot be read apart ({len(ids)} ids, {n} SMILES)",
            f"rebuild its search tables: open it on its own and run 'trapbook --db {nb.path} reindex'",
        )
    return ids


def _read_names(nb) -> tuple[np.ndarray, list[bytes]]:
    """(ids, UTF-8 SMILES) of every structure, from the SMILES index: no page of fingerprints is read.

    A file that keeps its text in UTF-16 (not one Trapbook made) has its SMILES read as text."""
    text = "group_concat(smiles, char(10))"
    utf8 = nb.conn.execute("PRAGMA encoding").fetchone()[0] == "UTF-8"
    ids, joined = nb.conn.execute(
        f"SELECT group_concat(id), {f'CAST({text} AS BLOB)' if utf8 else text} FROM structures"
    ).fetchone()
    if isinstance(joined, str):
        joined = joined.encode()
    names = joined.split(b"\n") if joined is not None else []  # a canonical SMILES holds no newline
    return _ids(nb, ids, len(names)), names


def _read_keys(nb, token: str) -> tuple[np.ndarray, np.ndarray, list[bytes] | None]:
    """(ids, SMILES keys, SMILES or None) of every structure of a notebook.

    From its digest where one describes every row (store/structure_digest.py: no SMILES is
    read); else the SMILES are read and their keys worked out here, the same keys. A
    notebook without a search token has its SMILES read: comparing them again is the only
    way to see that it was written while the pool was read."""
    entries = structure_digest.read(nb.conn) if token else None
    if entries is not None:
        return entries["id"].astype(np.int64), entries["key"], None
    ids, names = _read_names(nb)
    return ids, structure_digest.keys_of(names), names


def read_pool(sources: list[tuple], column: str) -> Pool:
    """The pool of these (notebook, file key, token) sources, with the bit string `column` read.

    Structures are told apart by the keys of their SMILES; a pool row's SMILES and bits are
    read from the first notebook that holds it (it lends them), each once."""
    if column not in COLUMNS:
        raise ValueError(f"no stored bit string '{column}'")
    read = [(nb, key, token, *_read_keys(nb, token)) for nb, key, token in sources]
    keys = np.concatenate([r[4] for r in read]) if read else np.zeros((0, 2), np.uint64)
    first, inverse = _distinct(keys[:, 0])
    if np.any(keys[first[inverse], 1] != keys[:, 1]):  # equal first words, different second: never expected
        raise StoreError(
            "two different structures of these notebooks share half a search key",
            "search each notebook on its own, and report this: it should not happen",
        )
    shares: dict[str, Share] = {}
    at = 0
    for _nb, key, token, ids, _keys, names in read:
        rows = inverse[at : at + len(ids)]
        if len(rows) and np.bincount(rows, minlength=len(first)).max() > 1:  # a SMILES stored twice (it is UNIQUE)
            raise StoreError(
                f"the structure rows of {key} hold a SMILES more than once",
                f"rebuild its search tables: open it on its own and run 'trapbook --db {key} reindex'",
            )
        lends = first[rows] == np.arange(at, at + len(ids))
        shares[key] = Share(key, token, ids, rows, lends, None if token else names)
        at += len(ids)
    pool = Pool(shares, [""] * len(first))
    by_key = {key: nb for nb, key, _ in sources}
    lent = [_lent_bits(by_key[key], share, pool.smiles, column, with_names=True) for key, share in shares.items()]
    pool.bits[column] = _assemble(len(first), lent)
    return pool


def _distinct(words: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(first position of each distinct value, the distinct row of every position), rows in value order.

    np.unique(return_index=True) does the same with a stable sort, which costs twice this
    unstable one; the first position is then the least position within each run of equals."""
    if not len(words):
        return np.zeros(0, np.int64), np.zeros(0, np.int64)
    order = np.argsort(words)
    ranked = words[order]
    starts = np.empty(len(words), dtype=bool)
    starts[0] = True
    np.not_equal(ranked[1:], ranked[:-1], out=starts[1:])
    inverse = np.empty(len(words), dtype=np.int64)
    inverse[order] = np.cumsum(starts) - 1
    first = np.minimum.reduceat(order, np.flatnonzero(starts))
    return first, inverse


def read_column(pool: Pool, by_key: dict, column: str) -> np.ndarray:
    """The pool's matrix of `column`, read now if this is the pool's first query of that kind."""
    have = pool.bits.get(column)
    if have is not None:
        return have
    if column not in COLUMNS:
        raise ValueError(f"no stored bit string '{column}'")
    lent = [_lent_bits(by_key[key], share, pool.smiles, column) for key, share in pool.shares.items()]
    pool.bits[column] = _assemble(len(pool.smiles), lent)
    return pool.bits[column]


def _lent_bits(nb, share: Share, smiles: list[str], column: str, with_names: bool = False) -> tuple[np.ndarray, np.ndarray]:
    """(pool rows, their bits) for the structures this notebook is the first to hold; with_names,
    their SMILES are put into the pool's list too (read in the same statement as the bits).

    Where it lends at least half its rows the table is read in one pass (cheaper than
    looking each id up), else only the ids it lends. The notebook's search token, read
    again afterwards, must still be the one the share was made under: any write in
    between (a save from elsewhere) changes it, and the pool is then read again (Moved).
    A notebook without a token has its SMILES compared with those its share was made from.
    """
    rows = share.rows[share.lends]
    if not len(rows):
        return rows, np.zeros((0, _WORDS), np.uint64)
    ids = share.ids[share.lends]
    where, args = ("", ()) if 2 * len(ids) >= len(share.ids) else (_BY_ID, (json.dumps(ids.tolist()),))
    text = "CAST(group_concat(smiles, char(10)) AS BLOB)" if with_names or not share.token else "NULL"
    got_ids, low, high, blob, joined = nb.conn.execute(
        f"SELECT group_concat(id), min(scheme), max(scheme), CAST(group_concat({column}, '') AS BLOB), {text} "
        f"FROM structures{where}",
        args,
    ).fetchone()
    got = _ids(nb, got_ids)
    order = _ascending_order(got)
    at = order[np.minimum(np.searchsorted(got[order], ids), max(len(got) - 1, 0))] if len(got) else order
    if not np.array_equal(got[at], ids):
        raise Moved
    names = None
    if joined is not None:
        read = joined.encode() if isinstance(joined, str) else joined
        split = read.split(b"\n")
        names = [split[i] for i in at.tolist()]
    if share.token:
        if _token(nb) != share.token:
            raise Moved
    elif share.names is None or names != [share.names[i] for i in np.flatnonzero(share.lends).tolist()]:
        raise Moved
    if with_names:
        for r, name in zip(rows.tolist(), names or ()):
            smiles[r] = name.decode()
    if _made_here(low, high) and len(blob or b"") == len(got) * _WORDS * 8:
        return rows, np.frombuffer(blob, dtype=np.uint64).reshape(len(got), _WORDS)[at]
    return rows, _made_again(nb, column, ids, [smiles[r] for r in rows.tolist()])


def _ascending_order(ids: np.ndarray) -> np.ndarray:
    """Positions that put ids in ascending order (SQLite mostly returns them so: then no sort)."""
    if len(ids) < 2 or bool(np.all(ids[1:] > ids[:-1])):
        return np.arange(len(ids))
    return np.argsort(ids, kind="stable")


_BY_ID = " WHERE id IN (SELECT value FROM json_each(?))"


def _token(nb) -> str:
    return nb.conn.execute("SELECT token FROM search_token").fetchone()[0]


def _made_here(low: str | None, high: str | None) -> bool:
    """Whether every row read was written under this Trapbook's fingerprint scheme."""
    from .chemistry import fingerprints

    return low == high == fingerprints.SCHEME


def _made_again(nb, column: str, ids: np.ndarray, names: list[str]) -> np.ndarray:
    """Bits of these structures, row by row: stored ones where made under this fingerprint scheme,
    else worked out again from the SMILES, in memory (the query's bits are this RDKit's, and a
    screen is only sound between bits of the same making). Slow; `trapbook reindex` ends it."""
    from .chemistry import fingerprints

    stored = {
        sid: data
        for sid, scheme, data in nb.conn.execute(
            f"SELECT id, scheme, {column} FROM structures{_BY_ID}", (json.dumps(ids.tolist()),)
        )
        if scheme == fingerprints.SCHEME and len(data) == _WORDS * 8
    }
    words = np.zeros((len(ids), _WORDS), np.uint64)
    for i, (sid, smi) in enumerate(zip(ids.tolist(), names)):
        words[i] = np.frombuffer(stored.get(sid) or getattr(fingerprints.structure_bits(smi), column), dtype=np.uint64)
    return words


def _assemble(n: int, lent: list[tuple[np.ndarray, np.ndarray]]) -> np.ndarray:
    """One matrix of n rows from each notebook's lent rows; every row is filled exactly once."""
    out = np.zeros((n, _WORDS), dtype=np.uint64)
    filled = 0
    for rows, words in lent:
        out[rows] = words
        filled += len(rows)
    if filled != n:  # each distinct structure is lent by exactly one notebook
        raise StoreError(f"{filled} fingerprints read for {n} distinct structures", "search again")
    return out
