"""Structure lookups of run search, and the work kept between searches.

Each distinct structure is stored once with its fingerprints when a run is saved, so a
query screens the stored bit strings first and hands only the survivors to RDKit's
atom-by-atom matcher, which runs in a worker process under a time limit (a crafted
pattern can make one match take minutes).

The notebooks searched together — one notebook, or a group's readable members — are one
pool of distinct structures (structure_pool.py): a query is screened and matched over the
pool once, under one time limit, and each notebook's answer is read off through its own
structure ids. Answers are kept for as long as the notebooks' search tokens stand.
"""

from __future__ import annotations

import json
import re
import sqlite3
import weakref
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from . import structure_pool
from . import structure_pool_file as pool_file
from .errors import StoreError, TrapbookError
from .search_query import DEFAULT_TIME_LIMIT_S
from .store import index as run_index

#: Parts of a run that structure queries look at, in the order hits are reported.
PARTS = run_index.STRUCTURE_PARTS

# --- what searches keep between calls, for as long as the notebook's search token stands ------
#
# Every write a search depends on (runs, structures, structure links, full-text rows) gives the
# notebook a new random token (store/schema.py, migration 4). Work done under one token — the
# pool's share of that notebook, which stored structures a query matches, which runs use them,
# the text hits — stays valid until the token changes, whichever connection or process made the change.

_KEEP = 64  # answers kept per notebook or pool; the oldest goes first
_KEEP_POOLS = 4  # pools of notebooks searched together (one per notebook or group in use)


@dataclass
class _Memo:
    token: str
    key: str = ""
    answers: dict[tuple, object] = field(default_factory=dict)
    indexed: bool = False


_MEMOS: dict[str, _Memo] = {}

#: Whether a stored SMILES contains a query, by query text. A match depends on nothing but the
#: two strings, so it holds for every notebook and survives a pool being read again after a save.
_CONTAINS: dict[str, dict[str, bool]] = {}

#: Each open notebook's file, resolved once (a relative path is read where it was opened).
_FILE_KEYS: weakref.WeakKeyDictionary = weakref.WeakKeyDictionary()


def clear_caches() -> None:
    """Forget all kept work (what a fresh process starts with); never needed for correct answers."""
    _MEMOS.clear()
    _CONTAINS.clear()
    _POOLS.clear()


def _matching(smiles: list[str], query_text: str, time_limit_s: float) -> list[int]:
    """Positions of the SMILES that contain the query; only those never matched against it go to the matcher."""
    from .chemistry import fingerprints

    known = _CONTAINS.get(query_text)
    if known is None:
        if len(_CONTAINS) >= _KEEP:
            _CONTAINS.pop(next(iter(_CONTAINS)))
        known = _CONTAINS[query_text] = {}
    todo = [smi for smi in dict.fromkeys(smiles) if smi not in known]
    if todo:
        found = {todo[i] for i in fingerprints.matching_indices(todo, query_text, time_limit_s)}  # a timeout raises: nothing kept
        known.update((smi, smi in found) for smi in todo)
    return [i for i, smi in enumerate(smiles) if known[smi]]


def _file_key(nb) -> str:
    key = _FILE_KEYS.get(nb)
    if key is None:
        key = _FILE_KEYS[nb] = str(Path(nb.path).resolve())
    return key


def memo_for(nb) -> _Memo:
    """The kept work for this notebook file, fresh if anything it depends on has changed."""
    try:
        token = nb.conn.execute("SELECT token FROM search_token").fetchone()[0]
    except sqlite3.OperationalError:  # opened without its migrations (read-only checks): keep nothing
        return _Memo(token="", key=_file_key(nb))
    key = _file_key(nb)
    memo = _MEMOS.get(key)
    if memo is None or memo.token != token:
        memo = _MEMOS[key] = _Memo(token, key)
    return memo


def remember(memo: _Memo, key: tuple, compute):
    if memo.token and key in memo.answers:
        return memo.answers[key]
    value = compute()
    if memo.token:
        if len(memo.answers) >= _KEEP:
            memo.answers.pop(next(iter(memo.answers)))
        memo.answers[key] = value
    return value


# --- the pool the notebooks searched together are screened in (structure_pool.py) ----------------

_POOLS: dict[tuple[str, ...], structure_pool.Pool] = {}


def _sources(nb) -> tuple:
    """The notebooks screened in one pool with this one: its group's readable members (set by
    group.Group), or the notebook alone."""
    return tuple(getattr(nb, "screened_with", ()) or (nb,))


def _pool_for(nb, memo: _Memo, column: str, fresh: bool = False) -> tuple[structure_pool.Pool, dict]:
    """The pool nb is screened in, and its notebooks by file; read again where nb has changed.

    Only nb's own token is checked here: its share of the pool depends on nothing else (whether
    a SMILES matches depends on the SMILES alone), so a group search checks each member once.
    A notebook whose changes cannot be tracked (no search token) gets a pool of its own, not kept.
    """
    if not memo.token:
        return _read_pool([(nb, memo.key, "")], column), {memo.key: nb}
    by_key = {_file_key(s): s for s in _sources(nb)}
    by_key.setdefault(memo.key, nb)
    pool = None if fresh else _POOLS.get(tuple(by_key))
    share = pool.shares.get(memo.key) if pool is not None else None
    if share is None or share.token != memo.token:
        memos = [memo if key == memo.key else memo_for(s) for key, s in by_key.items()]
        sources = [(s, m.key, m.token) for s, m in zip(by_key.values(), memos) if m.token]
        on_disk = pool_file.kept_on_disk(sources)
        pool = pool_file.load(sources) if on_disk and not fresh else None
        if pool is None:
            pool = _read_pool(sources, column)
            if on_disk:
                pool_file.save_later(pool, sources)
        _POOLS.pop(tuple(by_key), None)
        if len(_POOLS) >= _KEEP_POOLS:
            _POOLS.pop(next(iter(_POOLS)))
        _POOLS[tuple(by_key)] = pool
    return pool, by_key


def _read_pool(sources: list[tuple], column: str) -> structure_pool.Pool:
    """structure_pool.read_pool, read once more if a notebook was written while it was read."""
    for _ in range(2):
        try:
            return structure_pool.read_pool(sources, column)
        except structure_pool.Moved:
            continue
    raise StoreError("a notebook searched here was written to twice while its structures were read", "search again")


def _pool_with(nb, memo: _Memo, column: str) -> tuple[structure_pool.Pool, np.ndarray]:
    """The pool nb is screened in, with its matrix of `column`."""
    pool, by_key = _pool_for(nb, memo, column)
    if column in pool.bits:
        return pool, pool.bits[column]
    try:
        bits = structure_pool.read_column(pool, by_key, column)
    except structure_pool.Moved:  # a notebook of the pool was written since: read them all again, with the column
        pool, _ = _pool_for(nb, memo, column, fresh=True)
        return pool, pool.bits[column]
    sources = [(by_key[key], key, share.token) for key, share in pool.shares.items()]
    if pool_file.kept_on_disk(sources):
        pool_file.save_later(pool, sources)  # now with this column too
    return pool, bits


def _keep(pool: structure_pool.Pool, key: tuple, value: tuple) -> None:
    if len(pool.answers) >= _KEEP:
        pool.answers.pop(next(iter(pool.answers)))
    pool.answers[key] = value


def _as_words(data: bytes) -> np.ndarray:
    return np.frombuffer(data, dtype=np.uint64)


def substructure_ids(
    nb, query_text: str, screen: bool = True, reuse: bool = True, time_limit_s: float = DEFAULT_TIME_LIMIT_S
) -> tuple[dict[int, float], dict]:
    """Ids of this notebook's stored structures that contain the query (SMARTS or SMILES), each scored 1.

    The query is screened and matched once over the pool nb is searched in (nb alone, or its
    group), under one time limit for all of it. With screen=False every structure of the pool
    goes to the matcher: the slow path the fingerprint screen is measured against.
    reuse=False ignores (and does not keep) the answer of an earlier identical query, so the
    benchmark can time the screen and the matching themselves (the fingerprints stay read).
    A match that outlasts time_limit_s stops with a ChemistryError that says so (nothing is
    kept). Stats: the pool's distinct structures, how many passed the screen, and how many of
    this notebook's structures matched.
    """
    memo = memo_for(nb)
    if not reuse:
        return _substructure(nb, memo, query_text, screen, time_limit_s, keep=False)
    key = ("substructure", query_text.strip() if isinstance(query_text, str) else query_text, screen)
    found, stats = remember(memo, key, lambda: _substructure(nb, memo, query_text, screen, time_limit_s))
    return dict(found), dict(stats)


def _substructure(
    nb, memo: _Memo, query_text: str, screen: bool, time_limit_s: float, keep: bool = True
) -> tuple[dict[int, float], dict]:
    from .chemistry import molecules

    query = molecules.substructure_query(query_text)  # a query that cannot be read is refused before any file is
    pool, bits = _pool_with(nb, memo, "pattern")
    key = ("substructure", query_text, screen)
    answer = pool.answers.get(key) if keep else None
    if answer is None:
        answer = _screen_and_match(pool, bits, query, query_text, screen, time_limit_s, keep)
        if keep:
            _keep(pool, key, answer)
    matched, stats = answer
    share = pool.shares[memo.key]
    found: dict[int, float] = dict.fromkeys(np.sort(share.ids[matched[share.rows]]).tolist(), 1.0)  # by id, as stored
    return found, {**stats, "matched": len(found)}


def _screen_and_match(
    pool: structure_pool.Pool, bits: np.ndarray, query, query_text: str, screen: bool, time_limit_s: float, keep: bool
):
    """(which pool rows contain the query, counts): each distinct structure screened once, and matched at most once."""
    from .chemistry import fingerprints

    if screen:
        q = _as_words(fingerprints.query_pattern(query))
        rows = np.flatnonzero(np.all((bits & q) == q, axis=1))
    else:
        rows = np.arange(len(pool.smiles))
    candidates = [pool.smiles[i] for i in rows]
    hits = (
        _matching(candidates, query_text, time_limit_s)
        if keep
        else fingerprints.matching_indices(candidates, query_text, time_limit_s)
    )
    matched = np.zeros(len(pool.smiles), dtype=bool)
    matched[rows[hits]] = True
    return matched, {"structures": len(pool.smiles), "screened_in": len(rows)}


def similar_ids(nb, smiles: str, min_similarity: float) -> dict[int, float]:
    """This notebook's stored structures with Morgan Tanimoto ≥ min_similarity to the query, with the value.

    The similarities are worked out once over the pool nb is searched in, for any threshold.
    """
    from .chemistry import fingerprints

    if not 0.0 <= min_similarity <= 1.0:
        raise TrapbookError(f"minimum similarity {min_similarity:g} is outside 0–1", "give a Tanimoto threshold such as 0.6")
    q = _as_words(fingerprints.query_morgan(smiles))
    memo = memo_for(nb)
    pool, bits = _pool_with(nb, memo, "morgan")
    key = ("similarity", smiles)
    answer = pool.answers.get(key)
    if answer is None:
        answer = (_tanimoto(bits, q),)
        _keep(pool, key, answer)
    share = pool.shares[memo.key]
    sim = answer[0][share.rows]
    keep = np.flatnonzero(sim >= min_similarity - 1e-12)
    keep = keep[np.argsort(share.ids[keep], kind="stable")]  # by id, as stored
    return {int(i): float(s) for i, s in zip(share.ids[keep], sim[keep])}


def _tanimoto(bits: np.ndarray, q: np.ndarray) -> np.ndarray:
    """Tanimoto of every row with the query (0 where both are empty)."""
    if len(bits) == 0:
        return np.zeros(0)
    inter = np.bitwise_count(bits & q).sum(axis=1, dtype=np.int64)
    union = np.bitwise_count(bits | q).sum(axis=1, dtype=np.int64)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(union > 0, inter / np.maximum(union, 1), 0.0)


def inchikey_ids(nb, key: str) -> dict[int, float]:
    """Stored structures with this InChIKey, or with this first (connectivity) block."""
    key = (key or "").strip().upper()
    if not re.fullmatch(r"[A-Z]{14}(-[A-Z]{10}(-[A-Z])?)?", key):
        raise TrapbookError(
            f"'{key}' is not an InChIKey", "give a key like SIVKZPBURVINMX-UHFFFAOYSA-N, or its first 14-letter block"
        )
    if len(key) == 14:
        rows = nb.conn.execute("SELECT id FROM structures WHERE inchikey LIKE ?", (key + "-%",))
    else:
        rows = nb.conn.execute("SELECT id FROM structures WHERE inchikey = ?", (key,))
    return {r[0]: 1.0 for r in rows}


_PART_RANK = {p: i for i, p in enumerate(PARTS)}


def runs_using(nb, structure_scores: dict[int, float], what: str) -> dict[str, list]:
    """run id → [best score, ["precursor: <name>", ...]] for runs using any of the structures.

    One query over the covering index of structure links (no table rows are read); a run's
    words come in the order of PARTS.
    """
    if not structure_scores:
        return {}
    out: dict[str, list] = {}
    similarity = what == "similarity"
    labels: dict[tuple, str] = {}  # many runs share a line name: build each label once
    rank: dict[str, int] = {}
    rows = nb.conn.execute(
        "SELECT run_id, part, name, structure_id FROM run_structures WHERE structure_id IN (SELECT value FROM json_each(?))",
        (json.dumps(list(structure_scores)),),
    )
    for rid, part, name, sid in rows:
        score = structure_scores[sid]
        key = (part, name, score) if similarity else (part, name)
        label = labels.get(key)
        if label is None:
            label = labels[key] = f"{part}: {name} ({what} {score:.2f})" if similarity else f"{part}: {name}"
            rank[label] = _PART_RANK.get(part, 9)
        entry = out.get(rid)
        if entry is None:
            out[rid] = [score, [label]]
            continue
        if score > entry[0]:
            entry[0] = score
        if label not in entry[1]:
            entry[1].append(label)
    by_part = rank.__getitem__
    for entry in out.values():
        if len(entry[1]) > 1:
            entry[1].sort(key=by_part)
    return out
