"""Tables of a notebook file and the migrations that build them, each recorded once."""

from __future__ import annotations

import datetime as _dt
import sqlite3
from typing import Callable

SCHEMA_VERSION = 1


def _script(conn: sqlite3.Connection, script: str) -> None:
    """Run statements one by one: executescript would commit the open migration transaction."""
    for stmt in script.split(";"):
        if stmt.strip():
            conn.execute(stmt)


def _v1(conn: sqlite3.Connection) -> None:
    _script(
        conn,
        """
        CREATE TABLE IF NOT EXISTS runs (
            id TEXT PRIMARY KEY,
            title TEXT NOT NULL,
            chemist TEXT,
            date TEXT,
            status TEXT,
            screen TEXT,
            withdrawn INTEGER NOT NULL DEFAULT 0,
            version INTEGER NOT NULL,
            hash TEXT NOT NULL,
            created TEXT NOT NULL,
            updated TEXT NOT NULL,
            data TEXT NOT NULL
        );
        CREATE TABLE IF NOT EXISTS versions (
            run_id TEXT NOT NULL,
            version INTEGER NOT NULL,
            author TEXT NOT NULL,
            time TEXT NOT NULL,
            reason TEXT NOT NULL,
            action TEXT NOT NULL,
            prev_hash TEXT,
            hash TEXT NOT NULL,
            data TEXT NOT NULL,
            PRIMARY KEY (run_id, version)
        );
        CREATE TABLE IF NOT EXISTS screens (
            id TEXT PRIMARY KEY,
            name TEXT NOT NULL,
            version INTEGER NOT NULL,
            created TEXT NOT NULL,
            updated TEXT NOT NULL,
            data TEXT NOT NULL
        );
        CREATE TABLE IF NOT EXISTS screen_versions (
            screen_id TEXT NOT NULL,
            version INTEGER NOT NULL,
            author TEXT NOT NULL,
            time TEXT NOT NULL,
            reason TEXT NOT NULL,
            data TEXT NOT NULL,
            PRIMARY KEY (screen_id, version)
        );
        CREATE TABLE IF NOT EXISTS run_index (
            run_id TEXT PRIMARY KEY,
            precursor TEXT,
            intermediate TEXT,
            trap TEXT,
            trap_smiles TEXT,
            fluoride TEXT,
            additive TEXT,
            solvent TEXT,
            temp_min_c REAL,
            temp_max_c REAL,
            time_min REAL,
            sealed INTEGER,
            yield_pct REAL,
            yield_kind TEXT,
            worst TEXT,
            findings TEXT
        );
        CREATE TABLE IF NOT EXISTS strain_cache (
            key TEXT PRIMARY KEY,
            smiles TEXT NOT NULL,
            tier TEXT NOT NULL,
            engine TEXT NOT NULL,
            created TEXT NOT NULL,
            result TEXT NOT NULL
        );
        CREATE TABLE IF NOT EXISTS settings (
            key TEXT PRIMARY KEY,
            value TEXT NOT NULL
        );
        CREATE TABLE IF NOT EXISTS counters (
            name TEXT PRIMARY KEY,
            value INTEGER NOT NULL
        );
        CREATE INDEX IF NOT EXISTS idx_index_trap ON run_index(trap);
        CREATE INDEX IF NOT EXISTS idx_index_yield ON run_index(yield_pct);
        CREATE INDEX IF NOT EXISTS idx_runs_screen ON runs(screen);
        """
    )


def _v2_search(conn: sqlite3.Connection) -> None:
    """Structures stored once with their fingerprints, which runs use them and as what, and
    a full-text table, so a search never re-parses every molecule or reads every record."""
    _script(
        conn,
        """
        CREATE TABLE IF NOT EXISTS structures (
            id INTEGER PRIMARY KEY,
            smiles TEXT NOT NULL UNIQUE,
            inchikey TEXT,
            morgan BLOB NOT NULL,
            pattern BLOB NOT NULL,
            mol BLOB NOT NULL,
            scheme TEXT NOT NULL
        );
        CREATE INDEX IF NOT EXISTS idx_structures_inchikey ON structures(inchikey);
        CREATE TABLE IF NOT EXISTS run_structures (
            run_id TEXT NOT NULL,
            part TEXT NOT NULL,
            name TEXT NOT NULL,
            structure_id INTEGER NOT NULL
        );
        CREATE INDEX IF NOT EXISTS idx_run_structures_run ON run_structures(run_id);
        CREATE INDEX IF NOT EXISTS idx_run_structures_structure ON run_structures(structure_id);
        CREATE TABLE IF NOT EXISTS search_state (
            n INTEGER PRIMARY KEY,
            run_id TEXT NOT NULL UNIQUE,
            hash TEXT NOT NULL
        );
        CREATE VIRTUAL TABLE IF NOT EXISTS run_text USING fts5(
            run_id UNINDEXED, title, notes, observations, tags, tokenize = 'unicode61 remove_diacritics 2'
        );
        CREATE INDEX IF NOT EXISTS idx_runs_chemist ON runs(chemist);
        CREATE INDEX IF NOT EXISTS idx_runs_date ON runs(date)
        """
    )


def _v3_search_index(conn: sqlite3.Connection) -> None:
    """A covering index, so condition searches scan small index rows, never the run records."""
    conn.execute("CREATE INDEX IF NOT EXISTS idx_runs_search ON runs(withdrawn, id, title, chemist, date, screen)")


#: Tables whose rows a search reads; any change to them gives the notebook a new search token.
SEARCH_SOURCES = ("runs", "run_structures", "structures", "search_state")


def _v4_search_token(conn: sqlite3.Connection) -> None:
    """A token that changes with every write a search depends on, so a search can keep what it
    worked out (screened structures, structure→run links, text hits) for as long as the token
    stands, across connections and processes; and a covering index so the structure→run links
    are read from the index alone.

    The token is random rather than a count: a notebook copied over another at the same path
    can never present a token that an earlier, different file already had.
    """
    conn.execute("CREATE TABLE IF NOT EXISTS search_token (one INTEGER PRIMARY KEY CHECK (one = 1), token TEXT NOT NULL)")
    conn.execute("INSERT OR IGNORE INTO search_token (one, token) VALUES (1, lower(hex(randomblob(8))))")
    for table in SEARCH_SOURCES:
        for event in ("INSERT", "UPDATE", "DELETE"):
            conn.execute(
                f"CREATE TRIGGER IF NOT EXISTS search_token_{table}_{event.lower()} AFTER {event} ON {table} "
                "BEGIN UPDATE search_token SET token = lower(hex(randomblob(8))); END"
            )
    conn.execute("CREATE INDEX IF NOT EXISTS idx_run_structures_links ON run_structures(structure_id, run_id, part, name)")
    conn.execute("DROP INDEX IF EXISTS idx_run_structures_structure")  # a prefix of the covering index above


#: (version, description, function). Append, never edit: a notebook records each one applied.
MIGRATIONS: list[tuple[int, str, Callable[[sqlite3.Connection], None]]] = [
    (1, "runs, versions, screens, index, strain cache, settings", _v1),
    (2, "search: structures with fingerprints, run structures, full-text table", _v2_search),
    (3, "search: covering index of runs for condition queries", _v3_search_index),
    (4, "search: change token with triggers; covering index of structure links", _v4_search_token),
]


def migrate(conn: sqlite3.Connection) -> list[int]:
    """Apply the migrations this notebook has not had; return the versions applied."""
    conn.execute(
        "CREATE TABLE IF NOT EXISTS migrations (version INTEGER PRIMARY KEY, applied TEXT NOT NULL, description TEXT NOT NULL)"
    )
    done = {row[0] for row in conn.execute("SELECT version FROM migrations")}
    applied = []
    for version, description, fn in MIGRATIONS:
        if version in done:
            continue
        conn.execute("BEGIN IMMEDIATE")
        try:
            fn(conn)
            conn.execute(
                "INSERT INTO migrations (version, applied, description) VALUES (?, ?, ?)",
                (version, _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds"), description),
            )
            conn.execute("COMMIT")
        except BaseException:
            conn.execute("ROLLBACK")
            raise
        applied.append(version)
    return applied
