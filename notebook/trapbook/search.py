"""Find past runs by structure, conditions and words: "have we trapped this ring system, with what?".

Every filter narrows the result (they combine with AND). Structure queries run over the
precursor, intermediate, trap and product of every run; each distinct structure is
stored once with its fingerprints when a run is saved, so a query screens the stored
bit strings first and hands only the survivors to RDKit's atom-by-atom matcher.
Condition filters read the summary row written at save time (store/index.py), never
the records themselves.
"""

from __future__ import annotations

import gc
import json
import re
import sqlite3
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .errors import ChemistryError, TrapbookError
from .store import index as run_index

#: Parts of a run that structure queries look at, in the order hits are reported.
PARTS = run_index.STRUCTURE_PARTS


@dataclass
class Hit:
    """One run that passed every filter, with what made it match."""

    run_id: str
    title: str
    score: float
    matched: list[str] = field(default_factory=list)

    def to_dict(self) -> dict:
        return {"run_id": self.run_id, "title": self.title, "score": round(self.score, 4), "matched": list(self.matched)}


# --- keeping the search tables filled -------------------------------------------------------


def pending(nb) -> list[str]:
    """Runs saved without search rows (a notebook from before search existed)."""
    n_runs = nb.conn.execute("SELECT count(*) FROM runs").fetchone()[0]
    n_done = nb.conn.execute("SELECT count(*) FROM search_state").fetchone()[0]
    if n_runs == n_done:
        return []
    return [r[0] for r in nb.conn.execute(
        "SELECT r.id FROM runs r LEFT JOIN search_state s ON s.run_id = r.id WHERE s.run_id IS NULL ORDER BY r.id")]


def ensure_indexed(nb) -> int:
    """Index whatever runs lack search rows; returns how many were indexed."""
    memo = _memo(nb)
    if memo.indexed:  # checked already, and nothing was written since
        return 0
    todo = pending(nb)
    if todo:
        with nb.transaction():
            for rid in todo:
                run = nb.get_run(rid)
                h = nb.conn.execute("SELECT hash FROM runs WHERE id = ?", (rid,)).fetchone()[0]
                run_index.index_search(nb.conn, run, h)
    else:
        memo.indexed = True
    return len(todo)


def reindex(nb) -> int:
    """Rebuild every structure, fingerprint and full-text row from the stored runs."""
    with nb.transaction():
        for table in ("run_structures", "search_state", "run_text", "structures"):
            nb.conn.execute(f"DELETE FROM {table}")
        n = 0
        for rid, h, in nb.conn.execute("SELECT id, hash FROM runs ORDER BY id").fetchall():
            run_index.index_run(nb, nb.get_run(rid))  # summary row too: findings follow thresholds and strain cache
            n += 1
    clear_caches()
    return n


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


def clear_caches() -> None:
    """Forget all kept work (what a fresh process starts with); never needed for correct answers."""
    _MEMOS.clear()


def _memo(nb) -> _Memo:
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


def _remember(memo: _Memo, key: tuple, compute):
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
    memo = memo or _memo(nb)
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


def substructure_ids(nb, query_text: str, screen: bool = True, reuse: bool = True) -> tuple[dict[int, float], dict]:
    """Ids of stored structures that contain the query (SMARTS or SMILES), each scored 1.

    With screen=False every stored molecule goes to the matcher: the slow path the
    fingerprint screen is measured against. reuse=False ignores (and does not keep) the
    answer of an earlier identical query, so the benchmark can time the screen and the
    matching themselves (the fingerprint matrix is still kept).
    """
    memo = _memo(nb)
    if not reuse:
        return _substructure(nb, memo, query_text, screen)
    key = ("substructure", query_text.strip() if isinstance(query_text, str) else query_text, screen)
    found, stats = _remember(memo, key, lambda: _substructure(nb, memo, query_text, screen))
    return dict(found), dict(stats)


def _substructure(nb, memo: _Memo, query_text: str, screen: bool) -> tuple[dict[int, float], dict]:
    from .chemistry import fingerprints, molecules

    query = molecules.substructure_query(query_text)
    ids, bits, smiles = _matrix(nb, "pattern", memo)
    if screen:
        q = _as_words(fingerprints.query_pattern(query))
        rows = np.flatnonzero(np.all((bits & q) == q, axis=1)).tolist()
    else:
        rows = list(range(len(ids)))
    hits = fingerprints.matching_indices([smiles[i] for i in rows], query)
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
    key = (key or "").strip().upper()
    if not re.fullmatch(r"[A-Z]{14}(-[A-Z]{10}(-[A-Z])?)?", key):
        raise TrapbookError(f"'{key}' is not an InChIKey", "give a key like SIVKZPBURVINMX-UHFFFAOYSA-N, or its first 14-letter block")
    if len(key) == 14:
        rows = nb.conn.execute("SELECT id FROM structures WHERE inchikey LIKE ?", (key + "-%",))
    else:
        rows = nb.conn.execute("SELECT id FROM structures WHERE inchikey = ?", (key,))
    return {r[0]: 1.0 for r in rows}


_PART_RANK = {p: i for i, p in enumerate(PARTS)}


def _runs_of(nb, structure_scores: dict[int, float], what: str) -> dict[str, list]:
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


# --- conditions --------------------------------------------------------------------------------


def _number(value, kind: str, name: str) -> float | None:
    """A bound given as a number (in °C, min or %) or as text with a unit ('2 h', '60 °C')."""
    if value is None or value == "":
        return None
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        return float(value)
    from .units import parse_quantity, to_canonical

    text = str(value).strip()
    if kind == "percent":
        try:
            return float(text.rstrip("% "))
        except ValueError:
            raise TrapbookError(f"{name} '{text}' is not a percentage", "give a number such as 50") from None
    try:
        return float(text)
    except ValueError:
        pass
    return to_canonical(parse_quantity(text, kind, name), kind)


def _known_trap(text: str) -> tuple[list[str], list[str]]:
    """Names and SMILES a trap query stands for: the built-in trap table, else the query itself."""
    names, smiles = [text], []
    try:
        from .planning import find_trap

        known = find_trap(text)
    except ImportError:  # pragma: no cover - planning is part of the package
        known = None
    if known is not None:
        names.extend([known.name, *known.aliases])
        smiles.append(known.smiles)
    from .chemistry import molecules

    if molecules.is_valid(text) and not re.fullmatch(r"[A-Za-z][a-z]{3,}", text):
        smiles.append(text)
    canon = []
    for s in smiles:
        try:
            canon.append(molecules.canonical(s))
        except ChemistryError:
            continue
    return sorted({n.casefold() for n in names}), sorted(set(canon))


def _list_match(column: str, names: list[str]) -> tuple[str, list]:
    """SQL for 'one of the '; '-joined names in column equals one of names' (case-insensitive)."""
    wrapped = f"(';' || lower(replace(coalesce({column}, ''), '; ', ';')) || ';')"
    return "(" + " OR ".join(f"{wrapped} LIKE ?" for _ in names) + ")", [f"%;{_like_escape(n)};%" for n in names]


def _like_escape(text: str) -> str:
    return text.replace("%", "")


def _substring(column: str, text: str) -> tuple[str, list]:
    return f"lower(coalesce({column}, '')) LIKE ?", [f"%{text.casefold()}%"]


def _resolve_screen(nb, screen: str) -> str:
    return nb.get_screen(screen).id


def _fts_query(text: str) -> list[str]:
    """The text as typed (FTS5 syntax allowed), then a plain form with every word quoted."""
    words = re.findall(r"[\w\-\.,']+", text, flags=re.UNICODE)
    plain = " ".join('"' + w.replace('"', "") + '"' for w in words if w.strip("-.,'"))
    return [text, plain] if plain and plain != text else [text]


def _text_rows(nb, text: str) -> list[tuple[str, float, str]]:
    """(run id, bm25, snippet) of the runs whose words match; bad FTS syntax falls back to plain words."""
    if not text or not text.strip():
        raise TrapbookError("the text query is empty", "give one or more words, e.g. --text oligomers")
    last: Exception | None = None
    for q in _fts_query(text.strip()):
        try:
            return nb.conn.execute(
                "SELECT run_id, bm25(run_text), snippet(run_text, -1, '[', ']', '…', 8) FROM run_text WHERE run_text MATCH ?",
                (q,),
            ).fetchall()
        except sqlite3.OperationalError as exc:
            last = exc
    raise TrapbookError(f"cannot read the text query '{text}' ({last})", "use plain words, or quote a phrase: \"silyl triflate\"")


def _relevance(rows: list[tuple[str, float, str]]) -> float:
    """The best bm25 of the answer (more negative is more relevant), which every score is divided by."""
    return min((r[1] for r in rows), default=0.0)


def text_ids(nb, text: str) -> dict[str, tuple[float, str]]:
    """run id → (relevance 0–1, snippet) from the full-text table."""
    rows = _text_rows(nb, text)
    best = _relevance(rows)
    return {r[0]: ((r[1] / best) if best < 0 else 1.0, r[2]) for r in rows}


def _text_hits(nb, text: str) -> dict[str, tuple[float, list[str]]]:
    """text_ids in the shape of the structure run sets: relevance and the words that matched."""
    rows = _text_rows(nb, text)
    best = _relevance(rows)
    if best < 0:
        return {rid: (score / best, ["text: " + snip]) for rid, score, snip in rows}
    return {rid: (1.0, ["text: " + snip]) for rid, _, snip in rows}


def _real_date(text: str) -> bool:
    """A full date must exist on the calendar; a year or year-month bound needs a real month."""
    import datetime as _dt

    parts = text.split("-")
    try:
        if len(parts) == 3:
            _dt.date.fromisoformat(text)
        elif len(parts) == 2:
            return 1 <= int(parts[1]) <= 12
    except ValueError:
        return False
    return True


def search(
    nb,
    *,
    substructure: str | None = None,
    similar: str | None = None,
    min_similarity: float = 0.6,
    inchikey: str | None = None,
    trap: str | None = None,
    fluoride: str | None = None,
    additive: str | None = None,
    solvent: str | None = None,
    temp_min=None,
    temp_max=None,
    time_min=None,
    time_max=None,
    yield_min=None,
    yield_max=None,
    chemist: str | None = None,
    date_from: str | None = None,
    date_to: str | None = None,
    screen: str | None = None,
    tags: list[str] | str | None = None,
    finding: str | None = None,
    text: str | None = None,
    limit: int | None = None,
    include_withdrawn: bool = False,
) -> list[Hit]:
    """Runs passing every given filter, best first (similarity, then text relevance, then id).

    Temperatures are the highest the flask reaches (°C), times the summed holds (min),
    yields the run's best product yield (%, isolated preferred over NMR).
    """
    # Broad answers build tens of thousands of small objects; the cyclic collector would scan
    # everything the kept answers hold again and again meanwhile, for nothing (none are cycles).
    paused = gc.isenabled()
    gc.disable()
    try:
        return _search(nb, **{k: v for k, v in locals().items() if k not in ("nb", "paused")})
    finally:
        if paused:
            gc.enable()


def _search(nb, *, substructure, similar, min_similarity, inchikey, trap, fluoride, additive, solvent, temp_min, temp_max,
            time_min, time_max, yield_min, yield_max, chemist, date_from, date_to, screen, tags, finding, text, limit,
            include_withdrawn) -> list[Hit]:
    ensure_indexed(nb)
    where: list[str] = []
    args: list = []
    if not include_withdrawn:
        where.append("r.withdrawn = 0")

    trap_names: list[str] = []
    if trap:
        trap_names, trap_smiles = _known_trap(trap.strip())
        sql, a = _list_match("i.trap", trap_names)
        parts = [sql]
        args_t = list(a)
        if trap_smiles:
            marks = ",".join("?" * len(trap_smiles))
            parts.append(
                f"r.id IN (SELECT rs.run_id FROM run_structures rs JOIN structures s ON s.id = rs.structure_id "
                f"WHERE rs.part = 'trap' AND s.smiles IN ({marks}))"
            )
            args_t.extend(trap_smiles)
        where.append("(" + " OR ".join(parts) + ")")
        args.extend(args_t)
    for column, value in (("i.fluoride", fluoride), ("i.additive", additive), ("i.solvent", solvent)):
        if value:
            sql, a = _substring(column, value.strip())
            where.append(sql)
            args.extend(a)
    for column, value, op, kind, name in (
        ("i.temp_max_c", temp_min, ">=", "temperature", "minimum temperature"),
        ("i.temp_max_c", temp_max, "<=", "temperature", "maximum temperature"),
        ("i.time_min", time_min, ">=", "duration", "minimum time"),
        ("i.time_min", time_max, "<=", "duration", "maximum time"),
        ("i.yield_pct", yield_min, ">=", "percent", "minimum yield"),
        ("i.yield_pct", yield_max, "<=", "percent", "maximum yield"),
    ):
        bound = _number(value, kind, name)
        if bound is not None:
            where.append(f"{column} {op} ?")
            args.append(bound)
    if chemist:
        sql, a = _substring("r.chemist", chemist.strip())
        where.append(sql)
        args.extend(a)
    for value, op, name in ((date_from, ">=", "from"), (date_to, "<=", "to")):
        if value:
            text_date = str(value).strip()
            if not re.fullmatch(r"\d{4}(-\d{2}(-\d{2})?)?", text_date) or not _real_date(text_date):
                raise TrapbookError(f"date {name} '{text_date}' is not a date written YYYY-MM-DD", "e.g. --date-from 2026-09-01")
            if op == "<=" and len(text_date) < 10:
                text_date += "-99"  # a year or month bound includes the whole period
            where.append(f"r.date {op} ?")
            args.append(text_date)
    if screen:
        where.append("r.screen = ?")
        args.append(_resolve_screen(nb, screen.strip()))
    if finding:
        where.append("EXISTS (SELECT 1 FROM json_each(coalesce(i.findings, '[]')) WHERE value = ?)")
        args.append(finding.strip())
    tag_list = [t.strip() for t in (tags.split(",") if isinstance(tags, str) else (tags or [])) if t and t.strip()]

    # Structure and text filters first: they give run sets, so the condition query below reads
    # only those rows instead of every run. Their answers are kept while the notebook is unchanged.
    memo = _memo(nb)
    found_sets: list[tuple[dict, bool]] = []
    if substructure:
        found_sets.append((_remember(memo, ("runs", "substructure", substructure.strip()),
                                     lambda: _runs_of(nb, substructure_ids(nb, substructure)[0], "substructure")), False))
    if inchikey:
        found_sets.append((_remember(memo, ("runs", "inchikey", inchikey.strip().upper()),
                                     lambda: _runs_of(nb, inchikey_ids(nb, inchikey), "inchikey")), False))
    if similar:
        threshold = float(min_similarity)
        found_sets.append((_remember(memo, ("runs", "similar", similar.strip(), threshold),
                                     lambda: _runs_of(nb, similar_ids(nb, similar, threshold), "similarity")), True))
    if text:
        found_sets.append((_remember(memo, ("text", text.strip()), lambda: _text_hits(nb, text)), not similar))
    restrict: set[str] | None = None
    for found in sorted((f for f, _ in found_sets), key=len):
        restrict = set(found) if restrict is None else {rid for rid in restrict if rid in found}

    need_data = bool(tag_list)
    conditions = bool(trap or fluoride or solvent or finding or any(
        v is not None for v in (temp_min, temp_max, time_min, time_max, yield_min, yield_max)))
    need_index = conditions or any("i." in w for w in where)
    sql = "SELECT r.id, r.title, " + ("r.data" if need_data else "NULL")
    if need_index:
        sql += ", i.trap, i.fluoride, i.solvent, i.temp_max_c, i.time_min, i.yield_pct, i.yield_kind, i.findings "
        if restrict is None:
            # Summary-row filters: run_index drives the scan (small rows, tested first); survivors look up their run.
            sql += "FROM run_index i CROSS JOIN runs r ON r.id = i.run_id"
        else:
            # A run set in hand: look its runs up by key (the IN list drives), then their summary rows.
            sql += "FROM runs r LEFT JOIN run_index i ON i.run_id = r.id"
    else:
        sql += " FROM runs r"
    if restrict is None:
        full = sql + (" WHERE " + " AND ".join(where) if where else "")
        rows = {row[0]: row for row in nb.conn.execute(full, args)}
    elif not restrict:
        rows = {}
    else:
        cond = where + ["r.id IN (SELECT value FROM json_each(?))"]
        rows = {row[0]: row for row in nb.conn.execute(sql + " WHERE " + " AND ".join(cond), args + [json.dumps(sorted(restrict))])}

    if tag_list:
        wanted = {t.casefold() for t in tag_list}
        rows = {rid: row for rid, row in rows.items() if wanted <= {t.casefold() for t in json.loads(row[2]).get("tags", [])}}

    # Order first (it needs only the scores), then build results for the runs returned.
    scoring = next((f for f, replace in reversed(found_sets) if replace), None)
    if scoring is None:
        order = sorted(rows)
        scores = None
    else:
        scores = {rid: scoring[rid][0] for rid in rows}
        order = sorted(rows)
        order.sort(key=scores.__getitem__, reverse=True)  # stable: equal scores stay in id order
    if limit is not None:
        if limit < 0:
            raise TrapbookError(f"limit {limit} is negative", "give a positive number of results")
        order = order[:limit]

    found_words = [f for f, _ in found_sets]
    if not (conditions or tag_list) and len(found_words) == 1:  # one run set alone: the common broad query
        only = found_words[0]
        return [Hit(rid, rows[rid][1], 1.0 if scores is None else scores[rid], list(only[rid][1])) for rid in order]
    hits = []
    for rid in order:
        row = rows[rid]
        words: list[str] = []
        if conditions or tag_list:
            if trap:
                words.append(f"trap: {row[3]}")
            if fluoride:
                words.append(f"fluoride: {row[4]}")
            if solvent:
                words.append(f"solvent: {row[5]}")
            if temp_min is not None or temp_max is not None:
                words.append(f"temperature: {row[6]:g} °C" if row[6] is not None else "temperature: none recorded")
            if time_min is not None or time_max is not None:
                words.append(f"time: {row[7]:g} min" if row[7] is not None else "time: none recorded")
            if yield_min is not None or yield_max is not None:
                words.append(f"yield: {row[8]:.0f} % ({row[9]})" if row[8] is not None else "yield: none")
            if finding:
                words.append(f"finding: {finding.strip()}")
            if tag_list:
                words.append("tags: " + ", ".join(tag_list))
        for found in found_words:
            words.extend(found[rid][1])
        hits.append(Hit(rid, row[1], 1.0 if scores is None else scores[rid], words))
    return hits
