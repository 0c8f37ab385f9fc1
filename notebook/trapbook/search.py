"""Find past runs by structure, conditions and words: "have we trapped this ring system, with what?".

A search is a `Query` (search_query.py: the one query language, typed or given as CLI
options) run by `run_query`. Every part narrows the result (AND). Structure and text parts
give run sets first (search_structures.py); condition parts become SQL over the summary row
written at save time (store/index.py), never over the records themselves.
"""

from __future__ import annotations

import gc
import json
import re
import sqlite3
from dataclasses import dataclass, field

from .errors import ChemistryError, TrapbookError
from .search_query import Query, Range, check_limit, check_time_limit, plain_words, query_from_options
from .search_structures import (  # noqa: F401  (clear_caches, substructure_ids: the benchmark calls them here)
    clear_caches,
    inchikey_ids,
    memo_for,
    remember,
    runs_using,
    similar_ids,
    substructure_ids,
)
from .store import index as run_index


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
    return [
        r[0]
        for r in nb.conn.execute(
            "SELECT r.id FROM runs r LEFT JOIN search_state s ON s.run_id = r.id WHERE s.run_id IS NULL ORDER BY r.id"
        )
    ]


def ensure_indexed(nb) -> int:
    """Index whatever runs lack search rows; returns how many were indexed."""
    memo = memo_for(nb)
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
        for (rid,) in nb.conn.execute("SELECT id FROM runs ORDER BY id").fetchall():
            run_index.index_run(nb, nb.get_run(rid))  # summary row too: findings follow thresholds and strain cache
            n += 1
    clear_caches()
    return n


# --- conditions: the parts of a Query that are SQL over the summary row -------------------------

_LIKE_ESCAPE = "\\"


def like_pattern(text: str) -> str:
    """`%text%` for LIKE ... ESCAPE '\\', with the text's own %, _ and \\ matched literally."""
    escaped = text.replace(_LIKE_ESCAPE, _LIKE_ESCAPE * 2).replace("%", _LIKE_ESCAPE + "%").replace("_", _LIKE_ESCAPE + "_")
    return f"%{escaped}%"


def _substring(column: str, text: str) -> tuple[str, list]:
    """Case-insensitive 'column contains text', wildcards in the text taken literally."""
    return f"lower(coalesce({column}, '')) LIKE ? ESCAPE '\\'", [like_pattern(text.casefold())]


def _list_match(column: str, names: list[str]) -> tuple[str, list]:
    """SQL for 'one of the '; '-joined names in column equals one of names' (case-insensitive)."""
    wrapped = f"(';' || lower(replace(coalesce({column}, ''), '; ', ';')) || ';')"
    return ("(" + " OR ".join(f"{wrapped} LIKE ? ESCAPE '\\'" for _ in names) + ")", [like_pattern(f";{n};") for n in names])


def _known_trap(text: str) -> tuple[list[str], list[str]]:
    """Names and SMILES a trap query stands for: the built-in trap table, else the query itself."""
    from .chemistry import molecules
    from .planning import find_trap

    names, smiles = [text], []
    known = find_trap(text)
    if known is not None:
        names.extend([known.name, *known.aliases])
        smiles.append(known.smiles)
    if molecules.is_valid(text) and not re.fullmatch(r"[A-Za-z][a-z]{3,}", text):
        smiles.append(text)
    canon = []
    for s in smiles:
        try:
            canon.append(molecules.canonical(s))
        except ChemistryError:
            continue  # a name that also reads as SMILES but not as a molecule: the names still match
    return sorted({n.casefold() for n in names}), sorted(set(canon))


def _trap_condition(trap: str) -> tuple[str, list]:
    """The trap compound: a trap line named as it (or its aliases), or whose structure is it."""
    names, smiles = _known_trap(trap)
    sql, args = _list_match("i.trap", names)
    if not smiles:
        return sql, args
    marks = ",".join("?" * len(smiles))
    by_structure = (
        f"r.id IN (SELECT rs.run_id FROM run_structures rs JOIN structures s ON s.id = rs.structure_id "
        f"WHERE rs.part = 'trap' AND s.smiles IN ({marks}))"
    )
    return f"({sql} OR {by_structure})", [*args, *smiles]


def _range_condition(column: str, bounds: Range, whole_periods: bool = False) -> tuple[list[str], list]:
    """SQL for a Range; with whole_periods a year or month bound covers the whole period."""
    where, args = [], []
    low, high = bounds.low, bounds.high
    if whole_periods:  # '2026-09-99' sorts after every day of September and before October
        low = low + "-99" if low is not None and bounds.low_strict and len(low) < 10 else low
        high = high + "-99" if high is not None and not bounds.high_strict and len(high) < 10 else high
    if low is not None:
        where.append(f"{column} {'>' if bounds.low_strict else '>='} ?")
        args.append(low)
    if high is not None:
        where.append(f"{column} {'<' if bounds.high_strict else '<='} ?")
        args.append(high)
    return where, args


def _finding_code(text: str) -> str:
    """A finding code as the Logbook shows the worst one ('stop:trap-late') or bare ('trap-late')."""
    severity, sep, code = text.strip().partition(":")
    return code if sep and severity in ("stop", "warn", "note") else text.strip()


def condition_sql(nb, q: Query) -> tuple[list[str], list]:
    """WHERE parts and their arguments for the summary-row, run and screen parts of the query."""
    where: list[str] = [] if q.include_withdrawn else ["r.withdrawn = 0"]
    args: list = []

    def add(sql: str, a: list) -> None:
        where.append(sql)
        args.extend(a)

    if q.trap:
        add(*_trap_condition(q.trap.strip()))
    for column, value in (
        ("i.fluoride", q.fluoride),
        ("i.additive", q.additive),
        ("i.solvent", q.solvent),
        ("r.chemist", q.chemist),
    ):
        if value:
            add(*_substring(column, value.strip()))
    for column, bounds in (
        ("i.temp_max_c", q.temp_c),
        ("i.time_min", q.time_min),
        ("i.yield_pct", q.yield_pct),
        ("r.date", q.date),
    ):
        if bounds is not None:
            sql, a = _range_condition(column, bounds, whole_periods=column == "r.date")
            where.extend(sql)
            args.extend(a)
    if q.screen:
        add("r.screen = ?", [nb.get_screen(q.screen.strip()).id])
    if q.finding:
        add("EXISTS (SELECT 1 FROM json_each(coalesce(i.findings, '[]')) WHERE value = ?)", [_finding_code(q.finding)])
    return where, args


# --- full text ---------------------------------------------------------------------------------


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
    raise TrapbookError(f"cannot read the text query '{text}' ({last})", 'use plain words, or quote a phrase: "silyl triflate"')


def _text_hits(nb, text: str) -> dict[str, tuple[float, list[str]]]:
    """Runs whose words match, as a run set: relevance 0–1 (bm25 over the best) and the snippet."""
    rows = _text_rows(nb, text)
    best = min((r[1] for r in rows), default=0.0)  # more negative is more relevant
    if best < 0:
        return {rid: (score / best, ["text: " + snip]) for rid, score, snip in rows}
    return {rid: (1.0, ["text: " + snip]) for rid, _, snip in rows}


def _name_words(text: str) -> list[str]:
    return re.findall(r"[^\W_]+", text.casefold())


def _names_chemist(word: str, chemist: str) -> bool:
    """True when the word is the chemist's name or a run of its words ('Iyer', 'S. Iyer'); an
    initial alone ('S.') names nobody, and part of a word ('Iy') is not a name."""
    want, have = _name_words(word), _name_words(chemist)
    if not want or max(len(w) for w in want) < 2:
        return False
    return any(have[i : i + len(want)] == want for i in range(len(have) - len(want) + 1))


def _named_runs(nb, word: str) -> dict[str, str]:
    """run id → what matched, for the runs this word names: by id (exactly, any case) or by chemist."""
    found = {rid: f"id: {rid}" for (rid,) in nb.conn.execute("SELECT id FROM runs WHERE lower(id) = ?", (word.casefold(),))}
    chemists = [c for (c,) in nb.conn.execute("SELECT DISTINCT chemist FROM runs WHERE chemist IS NOT NULL")]
    named = [c for c in chemists if _names_chemist(word, c)]
    if named:
        marks = ",".join("?" * len(named))
        for rid, chemist in nb.conn.execute(f"SELECT id, chemist FROM runs WHERE chemist IN ({marks})", named):
            found.setdefault(rid, f"chemist: {chemist}")
    return found


def _plain_word_hits(nb, text: str) -> dict[str, tuple[float, list[str]]]:
    """The runs plain words find: the full text as typed, and the runs where every word is in the
    run's text, its id or its chemist's name (so `TB-0012` and `Iyer` find what a chemist means).

    A run a word names by id or chemist ranks first (score 1); full-text hits keep their relevance.
    """
    hits = dict(_text_hits(nb, text))
    words = plain_words(text)
    named = [_named_runs(nb, w) for w in words]
    if not any(named):
        return hits
    every: set[str] | None = None
    for word, by_name in zip(words, named):
        plain = _fts_query(word)[-1]
        if not re.search(r"\w", plain):
            continue  # no word to match (as the plain form of the whole text drops it)
        by_text = {rid for rid, _, _ in _text_rows(nb, plain)}
        mine = set(by_name) | by_text
        every = mine if every is None else every & mine
    for rid in sorted(every or ()):
        why = [by_name[rid] for by_name in named if rid in by_name]
        if why:
            hits[rid] = (1.0, why + (hits[rid][1] if rid in hits else []))
    return hits


# --- running a query ---------------------------------------------------------------------------


def _run_sets(nb, q: Query) -> list[tuple[dict, bool]]:
    """(run id → [score, words], whether its score ranks the answer) for each structure or text part.

    Answers are kept while the notebook is unchanged (search_structures.remember).
    """
    memo = memo_for(nb)
    sets: list[tuple[dict, bool]] = []
    if q.substructure:
        sub = q.substructure.strip()
        sets.append(
            (
                remember(
                    memo,
                    ("runs", "substructure", sub),
                    lambda: runs_using(nb, substructure_ids(nb, sub, time_limit_s=q.time_limit_s)[0], "substructure"),
                ),
                False,
            )
        )
    if q.inchikey:
        key = q.inchikey.strip().upper()
        sets.append((remember(memo, ("runs", "inchikey", key), lambda: runs_using(nb, inchikey_ids(nb, key), "inchikey")), False))
    if q.similar:
        threshold = float(q.min_similarity)
        sets.append(
            (
                remember(
                    memo,
                    ("runs", "similar", q.similar.strip(), threshold),
                    lambda: runs_using(nb, similar_ids(nb, q.similar, threshold), "similarity"),
                ),
                True,
            )
        )
    if q.text:
        sets.append((remember(memo, ("text", q.text.strip()), lambda: _plain_word_hits(nb, q.text)), not q.similar))
    return sets


_INDEX_COLUMNS = ", i.trap, i.fluoride, i.solvent, i.temp_max_c, i.time_min, i.yield_pct, i.yield_kind, i.additive "


def _fetch_rows(nb, q: Query, where: list[str], args: list, restrict: set[str] | None) -> dict[str, tuple]:
    """run id → (id, title, data or None, summary columns...) of the runs passing the SQL parts."""
    if restrict is not None and not restrict:
        return {}
    need_index = q.has_conditions() or any("i." in w for w in where)
    sql = "SELECT r.id, r.title, " + ("r.data" if q.tags else "NULL")
    if not need_index:
        sql += " FROM runs r"
    elif restrict is None:  # summary-row filters: run_index drives the scan; survivors look up their run
        sql += _INDEX_COLUMNS + "FROM run_index i CROSS JOIN runs r ON r.id = i.run_id"
    else:  # a run set in hand: look its runs up by key (the IN list drives), then their summary rows
        sql += _INDEX_COLUMNS + "FROM runs r LEFT JOIN run_index i ON i.run_id = r.id"
    if restrict is not None:
        where = where + ["r.id IN (SELECT value FROM json_each(?))"]
        args = args + [json.dumps(sorted(restrict))]
    sql += (" WHERE " + " AND ".join(where)) if where else ""
    rows = {row[0]: row for row in nb.conn.execute(sql, args)}
    if q.tags:
        wanted = {t.casefold() for t in q.tags}
        rows = {rid: row for rid, row in rows.items() if wanted <= {t.casefold() for t in json.loads(row[2]).get("tags", [])}}
    return rows


def _condition_words(q: Query, row: tuple) -> list[str]:
    """What the summary row shows for each condition asked (the 'matched' words of a hit)."""
    words: list[str] = []
    if q.trap:
        words.append(f"trap: {row[3]}")
    if q.fluoride:
        words.append(f"fluoride: {row[4]}")
    if q.additive:
        words.append(f"additive: {row[10]}")
    if q.solvent:
        words.append(f"solvent: {row[5]}")
    if q.temp_c is not None:
        words.append(f"temperature: {row[6]:g} °C" if row[6] is not None else "temperature: none recorded")
    if q.time_min is not None:
        words.append(f"time: {row[7]:g} min" if row[7] is not None else "time: none recorded")
    if q.yield_pct is not None:
        words.append(f"yield: {row[8]:.0f} % ({row[9]})" if row[8] is not None else "yield: none")
    if q.finding:
        words.append(f"finding: {_finding_code(q.finding)}")
    if q.tags:
        words.append("tags: " + ", ".join(q.tags))
    return words


def run_query(nb, q: Query) -> list[Hit]:
    """Runs passing every part of the query, best first (similarity, then text relevance, then id)."""
    if q.limit is not None:
        check_limit(q.limit)
    check_time_limit(q.time_limit_s)
    ensure_indexed(nb)
    where, args = condition_sql(nb, q)
    # Structure and text parts first: they give run sets, so the condition query reads only those rows.
    sets = _run_sets(nb, q)
    restrict: set[str] | None = None
    for found in sorted((f for f, _ in sets), key=len):
        restrict = set(found) if restrict is None else {rid for rid in restrict if rid in found}
    rows = _fetch_rows(nb, q, where, args, restrict)

    # Order first (it needs only the scores), then build results for the runs returned.
    scoring = next((f for f, ranks in reversed(sets) if ranks), None)
    order = sorted(rows)
    scores = None if scoring is None else {rid: scoring[rid][0] for rid in rows}
    if scores is not None:
        order.sort(key=scores.__getitem__, reverse=True)  # stable: equal scores stay in id order
    if q.limit is not None:
        order = order[: q.limit]

    found_words = [f for f, _ in sets]
    if not (q.has_conditions() or q.tags) and len(found_words) == 1:  # one run set alone: the common broad query
        only = found_words[0]
        return [Hit(rid, rows[rid][1], 1.0 if scores is None else scores[rid], list(only[rid][1])) for rid in order]
    hits = []
    for rid in order:
        words = _condition_words(q, rows[rid]) if (q.has_conditions() or q.tags) else []
        for found in found_words:
            words.extend(found[rid][1])
        hits.append(Hit(rid, rows[rid][1], 1.0 if scores is None else scores[rid], words))
    return hits


def search(nb, query: Query | None = None, **options) -> list[Hit]:
    """Run a Query, or the Query of `trapbook search`'s options (temp_min=..., trap=..., ...)."""
    if query is None:
        query = query_from_options(**options)
    elif options:
        raise TrapbookError("give a Query or search options, not both", "build one Query with every part")
    # Broad answers build tens of thousands of small objects; the cyclic collector would scan
    # everything the kept answers hold again and again meanwhile, for nothing (none are cycles).
    paused = gc.isenabled()
    gc.disable()
    try:
        return run_query(nb, query)
    finally:
        if paused:
            gc.enable()
