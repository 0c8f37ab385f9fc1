"""Tables of a notebook file and the migrations that build them, each recorded once.

sqlite-utils is imported by the migrations that write, not here: opening a notebook that
is up to date needs only sqlite3.
"""

from __future__ import annotations

import datetime as _dt
import sqlite3
from collections.abc import Callable


def _statements(conn: sqlite3.Connection, statements: tuple[str, ...]) -> None:
    """Run statements one by one: executescript would commit the open migration transaction."""
    for stmt in statements:
        conn.execute(stmt)


V1_STATEMENTS = (
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
    )
    """,
    """
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
    )
    """,
    """
    CREATE TABLE IF NOT EXISTS screens (
        id TEXT PRIMARY KEY,
        name TEXT NOT NULL,
        version INTEGER NOT NULL,
        created TEXT NOT NULL,
        updated TEXT NOT NULL,
        data TEXT NOT NULL
    )
    """,
    """
    CREATE TABLE IF NOT EXISTS screen_versions (
        screen_id TEXT NOT NULL,
        version INTEGER NOT NULL,
        author TEXT NOT NULL,
        time TEXT NOT NULL,
        reason TEXT NOT NULL,
        data TEXT NOT NULL,
        PRIMARY KEY (screen_id, version)
    )
    """,
    """
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
    )
    """,
    """
    CREATE TABLE IF NOT EXISTS strain_cache (
        key TEXT PRIMARY KEY,
        smiles TEXT NOT NULL,
        tier TEXT NOT NULL,
        engine TEXT NOT NULL,
        created TEXT NOT NULL,
        result TEXT NOT NULL
    )
    """,
    """
    CREATE TABLE IF NOT EXISTS settings (
        key TEXT PRIMARY KEY,
        value TEXT NOT NULL
    )
    """,
    """
    CREATE TABLE IF NOT EXISTS counters (
        name TEXT PRIMARY KEY,
        value INTEGER NOT NULL
    )
    """,
    """
    CREATE INDEX IF NOT EXISTS idx_index_trap ON run_index(trap)
    """,
    """
    CREATE INDEX IF NOT EXISTS idx_index_yield ON run_index(yield_pct)
    """,
    """
    CREATE INDEX IF NOT EXISTS idx_runs_screen ON runs(screen)
    """,
)


def _v1(conn: sqlite3.Connection) -> None:
    _statements(conn, V1_STATEMENTS)


V2_SEARCH_STATEMENTS = (
    """
    CREATE TABLE IF NOT EXISTS structures (
        id INTEGER PRIMARY KEY,
        smiles TEXT NOT NULL UNIQUE,
        inchikey TEXT,
        morgan BLOB NOT NULL,
        pattern BLOB NOT NULL,
        mol BLOB NOT NULL,
        scheme TEXT NOT NULL
    )
    """,
    """
    CREATE INDEX IF NOT EXISTS idx_structures_inchikey ON structures(inchikey)
    """,
    """
    CREATE TABLE IF NOT EXISTS run_structures (
        run_id TEXT NOT NULL,
        part TEXT NOT NULL,
        name TEXT NOT NULL,
        structure_id INTEGER NOT NULL
    )
    """,
    """
    CREATE INDEX IF NOT EXISTS idx_run_structures_run ON run_structures(run_id)
    """,
    """
    CREATE INDEX IF NOT EXISTS idx_run_structures_structure ON run_structures(structure_id)
    """,
    """
    CREATE TABLE IF NOT EXISTS search_state (
        n INTEGER PRIMARY KEY,
        run_id TEXT NOT NULL UNIQUE,
        hash TEXT NOT NULL
    )
    """,
    """
    CREATE VIRTUAL TABLE IF NOT EXISTS run_text USING fts5(
        run_id UNINDEXED, title, notes, observations, tags, tokenize = 'unicode61 remove_diacritics 2'
    )
    """,
    """
    CREATE INDEX IF NOT EXISTS idx_runs_chemist ON runs(chemist)
    """,
    """
    CREATE INDEX IF NOT EXISTS idx_runs_date ON runs(date)
    """,
)


def _v2_search(conn: sqlite3.Connection) -> None:
    """Structures stored once with their fingerprints, which runs use them and as what, and
    a full-text table, so a search never re-parses every molecule or reads every record."""
    _statements(conn, V2_SEARCH_STATEMENTS)


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


def _v5_integrity(conn: sqlite3.Connection) -> None:
    """What `verify` needs to see every fact a reader sees: a log of every save with a head
    (so a deleted run or newest version is found), settings kept as versions with author and
    reason, screens hash-chained like runs, and a content hash on every cache entry (an
    edited entry is never served). Records already in the notebook enter the log and the
    chains as they stand now."""
    import sqlite_utils

    from . import chain

    db = sqlite_utils.Database(conn)
    db["saves"].create(
        {"n": int, "kind": str, "record": str, "version": int, "item_hash": str, "prev": str, "hash": str},
        pk="n",
        not_null={"kind", "record", "version", "item_hash", "hash"},
    )
    db["saves"].create_index(["kind", "record", "version"], index_name="idx_saves_record", unique=True)
    db["head"].create({"one": int, "count": int, "hash": str}, pk="one", not_null={"count", "hash"})
    db["setting_versions"].create(
        {"key": str, "version": int, "value": str, "author": str, "time": str, "reason": str, "prev_hash": str, "hash": str},
        pk=("key", "version"),
        not_null={"value", "author", "time", "reason", "hash"},
    )
    db["screen_versions"].add_column("prev_hash", str)
    db["screen_versions"].add_column("hash", str)
    db["strain_cache"].add_column("content_sha256", str)
    db["migrations"].add_column("app_version", str)
    _backfill_screens(conn, chain)
    _backfill_settings(conn, chain)
    for key, smiles, tier, engine, result in conn.execute(
        "SELECT key, smiles, tier, engine, result FROM strain_cache"
    ).fetchall():
        conn.execute(
            "UPDATE strain_cache SET content_sha256 = ? WHERE key = ?", (chain.cache_hash(key, smiles, tier, engine, result), key)
        )
    _backfill_log(conn, chain)


def _backfill_screens(conn: sqlite3.Connection, chain) -> None:
    prev: dict[str, str] = {}
    rows = conn.execute("SELECT screen_id, version, author, time, reason, data FROM screen_versions ORDER BY screen_id, version")
    for sid, version, author, time, reason, data in rows.fetchall():
        h = chain.screen_hash(sid, version, author, time, reason, prev.get(sid), data)
        conn.execute(
            "UPDATE screen_versions SET prev_hash = ?, hash = ? WHERE screen_id = ? AND version = ?",
            (prev.get(sid), h, sid, version),
        )
        prev[sid] = h


def _backfill_settings(conn: sqlite3.Connection, chain) -> None:
    t = _dt.datetime.now(_dt.UTC).isoformat(timespec="microseconds")
    reason = "kept as it was when settings became versioned"
    for key, value in conn.execute("SELECT key, value FROM settings ORDER BY key").fetchall():
        if chain.is_private_setting(key):
            continue
        h = chain.setting_hash(key, 1, "trapbook", t, reason, None, value)
        conn.execute(
            "INSERT INTO setting_versions (key, version, value, author, time, reason, prev_hash, hash) VALUES (?,?,?,?,?,?,?,?)",
            (key, 1, value, "trapbook", t, reason, None, h),
        )


def _backfill_log(conn: sqlite3.Connection, chain) -> None:
    items = []
    for kind, table, id_col in (
        ("run", "versions", "run_id"),
        ("screen", "screen_versions", "screen_id"),
        ("setting", "setting_versions", "key"),
    ):
        items += [
            (time, kind, rec, version, h)
            for rec, version, time, h in conn.execute(f"SELECT {id_col}, version, time, hash FROM {table}").fetchall()
        ]
    for _time, kind, rec, version, h in sorted(items, key=lambda x: (x[0], x[1], x[2], x[3])):
        chain.append_save(conn, kind, rec, version, h)


def _v6_structure_digest(conn: sqlite3.Connection) -> None:
    """A compact (id, SMILES key) list of the stored structures, so notebooks searched together
    find the structures they share without reading every SMILES (store/structure_digest.py)."""
    from . import structure_digest

    conn.execute(structure_digest.TABLE)
    for trigger in structure_digest.TRIGGERS:
        conn.execute(trigger)
    structure_digest.build(conn)


#: (version, description, function). Append, never edit: a notebook records each one applied.
MIGRATIONS: list[tuple[int, str, Callable[[sqlite3.Connection], None]]] = [
    (1, "runs, versions, screens, index, strain cache, settings", _v1),
    (2, "search: structures with fingerprints, run structures, full-text table", _v2_search),
    (3, "search: covering index of runs for condition queries", _v3_search_index),
    (4, "search: change token with triggers; covering index of structure links", _v4_search_token),
    (5, "integrity: save log and head, versioned settings, hash-chained screens, hashed cache entries", _v5_integrity),
    (6, "search: a digest of the stored structures (id and SMILES key) for notebooks searched together", _v6_structure_digest),
]

#: The newest schema this code knows; a notebook with a later migration is read but not written.
SCHEMA_VERSION = MIGRATIONS[-1][0]

_MIGRATIONS_TABLE = (
    "CREATE TABLE IF NOT EXISTS migrations (version INTEGER PRIMARY KEY, applied TEXT NOT NULL, description TEXT NOT NULL)"
)


def applied_versions(conn: sqlite3.Connection) -> set[int] | None:
    """Migrations recorded in the file, None when it has no migrations table (not a notebook yet)."""
    try:
        return {row[0] for row in conn.execute("SELECT version FROM migrations")}
    except sqlite3.OperationalError as exc:
        if "no such table" in str(exc):
            return None
        raise


def needed_release(conn: sqlite3.Connection) -> str | None:
    """The Trapbook release that applied the notebook's newest migration, when it recorded one."""
    try:
        row = conn.execute("SELECT app_version FROM migrations ORDER BY version DESC LIMIT 1").fetchone()
    except sqlite3.OperationalError:
        return None
    return row[0] if row and row[0] else None


def pending(conn: sqlite3.Connection) -> list[int]:
    """Versions of the migrations this notebook still needs (read without taking a lock)."""
    done = applied_versions(conn) or set()
    return [v for v, _, _ in MIGRATIONS if v not in done]


#: Migrations that only add derived aids a reader can do without (it works the same answers out
#: another way): a notebook lacking only these is read as it is by a group or `verify`.
READ_WITHOUT = frozenset({6})


def pending_for_readers(conn: sqlite3.Connection) -> list[int]:
    """The pending migrations without which this Trapbook cannot read the notebook as it means to."""
    return [v for v in pending(conn) if v not in READ_WITHOUT]


def migrate(conn: sqlite3.Connection, begin: Callable[[], None]) -> list[int]:
    """Apply the migrations this notebook has not had; return the versions applied.

    Each migration runs in its own transaction, started by `begin` (BEGIN IMMEDIATE with
    waiting), and what is applied is read only once that write lock is held: several
    processes opening a new notebook at once each see the others' work, never apply a
    migration twice.
    """
    from .. import __version__

    applied = []
    for version, description, fn in MIGRATIONS:
        begin()
        try:
            conn.execute(_MIGRATIONS_TABLE)
            if version in (applied_versions(conn) or set()):
                conn.execute("COMMIT")
                continue
            fn(conn)
            import sqlite_utils

            row = {
                "version": version,
                "applied": _dt.datetime.now(_dt.UTC).isoformat(timespec="seconds"),
                "description": description,
            }
            if "app_version" in {c[1] for c in conn.execute("PRAGMA table_info(migrations)")}:
                row["app_version"] = __version__
            sqlite_utils.Database(conn)["migrations"].insert(row)
            conn.execute("COMMIT")
        except BaseException:
            if conn.in_transaction:
                conn.execute("ROLLBACK")
            raise
        applied.append(version)
    return applied
