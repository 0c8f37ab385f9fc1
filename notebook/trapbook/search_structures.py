"""Structure lookups of run search, and the work kept between searches.

Each distinct structure is stored once with its fingerprints when a run is saved, so a
query screens the stored bit strings first and hands only the survivors to RDKit's
atom-by-atom matcher, which runs in a worker process under a time limit (a crafted
pattern can make one match take minutes). Answers are kept for as long as the notebook's
search token stands.
"""

from __future__ import annotations

import json
import re
import sqlite3
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .errors import TrapbookError
from .search_query import DEFAULT_TIME_LIMIT_S
from .store import index as run_index

#: Parts of a run that structure queries look at, in the order hits are reported.
PARTS = run_index.STRUCTURE_PARTS

# --- what searches keep between calls, for as long as the notebook's search token stands ------
#
# Every write a search depends on (runs, structures, structure links, full-text rows) gives the
# notebook a new random token (store/schema.py, migration 4). Work done under one token — the
# fingerprint matrices, which stored structures a query matches, which runs use them, the text
# hits — stays valid until the token changes, whichever connection or process made the change.

_KEEP = 64  # answers kept per notebook; the oldest goes first


@dataclass
class _Memo:
    token: str
    matrices: dict[str, tuple[np.ndarray, np.ndarray, list[str]]] = field(default_factory=dict)
    answers: dict[tuple, object] = field(default_factory=dict)
    indexed: bool = False


_MEMOS: dict[str, _Memo] = {}

#: Whether a stored SMILES contains a query, by query text. A match depends on nothing but the
#: two strings, so it holds for every notebook: a group of members' notebooks (group.py), whose
#: files each store their own copy of the structures they share, matches each one once.
_CONTAINS: dict[str, dict[str, bool]] = {}


def clear_caches() -> None:
    """Forget all kept work (what a fresh process starts with); never needed for correct answers."""
    _MEMOS.clear()
    _CONTAINS.clear()


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


def memo_for(nb) -> _Memo:
    """The kept work for this notebook file, fresh if anything it depends on has changed."""
    try:
        token = nb.conn.execute("SELECT token FROM search_token").fetchone()[0]
    except sqlite3.OperationalError:  # opened without its migrations (read-only checks): keep nothing
        return _Memo(token="")
    key = str(Path(nb.path).resolve())
    memo = _MEMOS.get(key)
    if memo is None or memo.token != token:
        memo = _MEMOS[key] = _Memo(token)
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


def _matrix(nb, column: str, memo: _Memo | None = None) -> tuple[np.ndarray, np.ndarray, list[str]]:
    """(structure ids, fingerprints as an N×words uint64 array, SMILES) for 'morgan' or 'pattern'."""
    memo = memo or memo_for(nb)
    hit = memo.matrices.get(column)
    if hit is not None:
        return hit
    rows = nb.conn.execute(f"SELECT id, {column}, smiles FROM structures ORDER BY id").fetchall()
    ids = np.fromiter((r[0] for r in rows), dtype=np.int64, count=len(rows))
    if rows:
        bits = np.frombuffer(b"".join(r[1] for r in rows), dtype=np.uint64).reshape(len(rows), -1)
    else:
        bits = np.zeros((0, 32), dtype=np.uint64)
    value = (ids, bits, [r[2] for r in rows])
    if memo.token:
        memo.matrices[column] = value
    return value


def _as_words(data: bytes) -> np.ndarray:
    return np.frombuffer(data, dtype=np.uint64)


def substructure_ids(
    nb, query_text: str, screen: bool = True, reuse: bool = True, time_limit_s: float = DEFAULT_TIME_LIMIT_S
) -> tuple[dict[int, float], dict]:
    """Ids of stored structures that contain the query (SMARTS or SMILES), each scored 1.

    With screen=False every stored molecule goes to the matcher: the slow path the
    fingerprint screen is measured against. reuse=False ignores (and does not keep) the
    answer of an earlier identical query, so the benchmark can time the screen and the
    matching themselves (the fingerprint matrix is still kept). A match that outlasts
    time_limit_s stops with a ChemistryError that says so (nothing is kept).
    """
    memo = memo_for(nb)
    if not reuse:
        return _substructure(nb, memo, query_text, screen, time_limit_s, keep_matches=False)
    key = ("substructure", query_text.strip() if isinstance(query_text, str) else query_text, screen)
    found, stats = remember(memo, key, lambda: _substructure(nb, memo, query_text, screen, time_limit_s))
    return dict(found), dict(stats)


def _substructure(
    nb, memo: _Memo, query_text: str, screen: bool, time_limit_s: float, keep_matches: bool = True
) -> tuple[dict[int, float], dict]:
    from .chemistry import fingerprints, molecules

    query = molecules.substructure_query(query_text)
    ids, bits, smiles = _matrix(nb, "pattern", memo)
    if screen:
        q = _as_words(fingerprints.query_pattern(query))
        rows = np.flatnonzero(np.all((bits & q) == q, axis=1)).tolist()
    else:
        rows = list(range(len(ids)))
    candidates = [smiles[i] for i in rows]
    hits = (
        _matching(candidates, query_text, time_limit_s)
        if keep_matches
        else fingerprints.matching_indices(candidates, query_text, time_limit_s)
    )
    found: dict[int, float] = {int(ids[rows[i]]): 1.0 for i in hits}
    stats = {"structures": len(ids), "screened_in": len(rows), "matched": len(found)}
    return found, stats


def similar_ids(nb, smiles: str, min_similarity: float) -> dict[int, float]:
    """Stored structures with Morgan Tanimoto ≥ min_similarity to the query, with the value."""
    from .chemistry import fingerprints

    if not 0.0 <= min_similarity <= 1.0:
        raise TrapbookError(f"minimum similarity {min_similarity:g} is outside 0–1", "give a Tanimoto threshold such as 0.6")
    q = _as_words(fingerprints.query_morgan(smiles))
    ids, bits, _ = _matrix(nb, "morgan")
    if len(ids) == 0:
        return {}
    inter = np.bitwise_count(bits & q).sum(axis=1, dtype=np.int64)
    union = np.bitwise_count(bits | q).sum(axis=1, dtype=np.int64)
    with np.errstate(invalid="ignore", divide="ignore"):
        sim = np.where(union > 0, inter / np.maximum(union, 1), 0.0)
    keep = sim >= min_similarity - 1e-12
    return {int(i): float(s) for i, s in zip(ids[keep], sim[keep])}


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
