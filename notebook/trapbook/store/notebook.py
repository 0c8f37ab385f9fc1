"""The notebook file: runs and screens with an immutable, hash-chained version history.

Every save appends a version (author, UTC time, reason, SHA-256 of the canonical JSON,
hash of the previous version) inside one SQLite transaction, so a crash leaves either
the whole save or none of it. A save made from a stale version is refused, never merged.
Runs are withdrawn, never deleted.
"""

from __future__ import annotations

import contextlib
import datetime as _dt
import getpass
import hashlib
import json
import os
import sqlite3
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Iterable, Iterator

import sqlite_utils

from ..errors import NotFoundError, RecordError, StaleVersionError, StoreError
from ..records import Run, Screen, canonical_json, load_run, load_screen
from . import index as run_index
from .schema import migrate

APP_NAME = "trapbook"


def now_utc() -> str:
    return _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="microseconds")


def default_author() -> str:
    try:
        return getpass.getuser() or "unknown"
    except Exception:
        return os.environ.get("USER") or "unknown"


def default_path() -> Path:
    """TRAPBOOK_DB, else the per-user data directory."""
    env = os.environ.get("TRAPBOOK_DB")
    if env:
        return Path(env).expanduser()
    import platformdirs

    return Path(platformdirs.user_data_dir(APP_NAME, appauthor=False)) / "notebook.sqlite"


def version_hash(run_id: str, version: int, author: str, time: str, reason: str, action: str, prev: str | None, data: str) -> str:
    """SHA-256 over the version's metadata and its canonical JSON: the link of the chain."""
    payload = canonical_json(
        {"run": run_id, "version": version, "author": author, "time": time, "reason": reason,
         "action": action, "prev": prev, "data_sha256": hashlib.sha256(data.encode()).hexdigest()}
    )
    return hashlib.sha256(payload.encode()).hexdigest()


@dataclass
class SaveResult:
    run_id: str
    version: int
    hash: str
    created: bool


@dataclass
class VersionInfo:
    run_id: str
    version: int
    author: str
    time: str
    reason: str
    action: str
    hash: str
    prev_hash: str | None
    changes: list[str]

    def to_dict(self) -> dict:
        return self.__dict__.copy()


class Notebook:
    """One notebook file. Open with `Notebook.open(path)` or create with `Notebook.create(path)`."""

    def __init__(self, path: Path, conn: sqlite3.Connection):
        self.path = path
        self.conn = conn
        self.db = sqlite_utils.Database(conn)

    # --- opening -------------------------------------------------------------------
    @classmethod
    def create(cls, path: str | os.PathLike) -> "Notebook":
        p = Path(path).expanduser()
        if p.exists() and p.stat().st_size > 0:
            nb = cls.open(p)
            return nb
        try:
            p.parent.mkdir(parents=True, exist_ok=True)
        except OSError as exc:
            raise StoreError(f"cannot create folder {p.parent}: {exc.strerror}", "choose a writable location with --db") from None
        return cls._connect(p)

    @classmethod
    def open(cls, path: str | os.PathLike, create: bool = False) -> "Notebook":
        p = Path(path).expanduser()
        if not p.exists():
            if create:
                return cls.create(p)
            raise StoreError(f"no notebook at {p}", "create one with 'trapbook init PATH', or point --db / TRAPBOOK_DB at yours")
        return cls._connect(p)

    @classmethod
    def _connect(cls, p: Path) -> "Notebook":
        try:
            conn = sqlite3.connect(str(p), isolation_level=None, timeout=30.0, check_same_thread=False)
            conn.execute("PRAGMA journal_mode=WAL")
            conn.execute("PRAGMA synchronous=FULL")
            conn.execute("PRAGMA foreign_keys=ON")
            conn.execute("PRAGMA busy_timeout=30000")
            migrate(conn)
        except sqlite3.DatabaseError as exc:
            raise (_access_error(p, exc) or StoreError(f"{p} is not a Trapbook notebook ({exc})", "check the path, or restore from a backup")) from None
        return cls(p, conn)

    def close(self) -> None:
        with contextlib.suppress(Exception):
            self.conn.close()

    def __enter__(self) -> "Notebook":
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    @contextlib.contextmanager
    def transaction(self) -> Iterator[sqlite3.Connection]:
        """BEGIN IMMEDIATE: one writer at a time, all or nothing."""
        if self.conn.in_transaction:
            yield self.conn
            return
        try:
            self.conn.execute("BEGIN IMMEDIATE")
        except sqlite3.OperationalError as exc:
            raise (_access_error(self.path, exc) or exc) from None
        try:
            yield self.conn
        except sqlite3.OperationalError as exc:
            with contextlib.suppress(sqlite3.Error):
                self.conn.execute("ROLLBACK")
            problem = _access_error(self.path, exc)
            if problem is None:
                raise
            raise problem from None
        except BaseException:
            self.conn.execute("ROLLBACK")
            raise
        else:
            self.conn.execute("COMMIT")

    @property
    def schema_version(self) -> int:
        return max((r[0] for r in self.conn.execute("SELECT version FROM migrations")), default=0)

    # --- ids -----------------------------------------------------------------------
    def _next_id(self, counter: str, prefix: str) -> str:
        row = self.conn.execute("SELECT value FROM counters WHERE name = ?", (counter,)).fetchone()
        n = (row[0] if row else 0) + 1
        table = "runs" if counter == "run" else "screens"
        while self.conn.execute(f"SELECT 1 FROM {table} WHERE id = ?", (f"{prefix}{n:04d}",)).fetchone():
            n += 1
        self.conn.execute(
            "INSERT INTO counters (name, value) VALUES (?, ?) ON CONFLICT(name) DO UPDATE SET value = excluded.value",
            (counter, n),
        )
        return f"{prefix}{n:04d}"

    # --- runs ----------------------------------------------------------------------
    def add_run(self, run: Run | dict, author: str | None = None, reason: str = "created", keep_id: bool = False) -> SaveResult:
        """Store a new run (version 1). With keep_id, the run's own id is kept if it is free."""
        run = load_run(run) if not isinstance(run, Run) else run
        with self.transaction():
            if keep_id and run.id:
                if self.conn.execute("SELECT 1 FROM runs WHERE id = ?", (run.id,)).fetchone():
                    raise RecordError(f"run id {run.id} is already in this notebook", "import into another notebook, or drop the id to get a new one")
                run_id = run.id
            else:
                run_id = self._next_id("run", "TB-")
            run = run.model_copy(update={"id": run_id})
            return self._write_version(run, author or default_author(), reason, "create", None)

    def save_run(self, run: Run | dict, expected_version: int, author: str | None = None, reason: str = "") -> SaveResult:
        """Store a new version of an existing run, made from `expected_version`.

        If someone saved in between, the save is refused (StaleVersionError) and nothing
        is written: the chemist reloads, looks at what changed, and saves again.
        """
        run = load_run(run) if not isinstance(run, Run) else run
        if not run.id:
            raise RecordError("the run has no id", "use add for a new run")
        if not reason or not reason.strip():
            raise RecordError("a reason is needed to change a stored run", "say why, e.g. --reason 'corrected furan volume'")
        with self.transaction():
            row = self.conn.execute("SELECT version, hash, withdrawn FROM runs WHERE id = ?", (run.id,)).fetchone()
            if row is None:
                raise NotFoundError(f"no run {run.id} in this notebook", "list runs with 'trapbook list'")
            if row[0] != expected_version:
                raise StaleVersionError(
                    f"run {run.id} was changed (now version {row[0]}) since you opened version {expected_version}; your save was not written",
                    "reload the run, re-apply your change and save again",
                )
            return self._write_version(run, author or default_author(), reason.strip(), "edit", row[1], row[0] + 1)

    def withdraw_run(self, run_id: str, reason: str, author: str | None = None, restore: bool = False) -> SaveResult:
        """Mark a run withdrawn (or back), as a new version: it stays readable for ever."""
        if not reason or not reason.strip():
            raise RecordError("a reason is needed to withdraw a run", "say why with --reason")
        with self.transaction():
            row = self.conn.execute("SELECT version, hash, data, withdrawn FROM runs WHERE id = ?", (run_id,)).fetchone()
            if row is None:
                raise NotFoundError(f"no run {run_id} in this notebook", "list runs with 'trapbook list'")
            if bool(row[3]) != restore:
                # Saying it twice would only add a version that changes nothing.
                if restore:
                    raise RecordError(f"run {run_id} is not withdrawn", "nothing to bring back; see 'trapbook history RUN_ID'")
                raise RecordError(f"run {run_id} is already withdrawn", "bring it back with 'trapbook withdraw RUN_ID --undo --reason ...'")
            run = Run.model_validate(json.loads(row[2]))
            action = "restore" if restore else "withdraw"
            return self._write_version(run, author or default_author(), reason.strip(), action, row[1], row[0] + 1)

    def _write_version(self, run: Run, author: str, reason: str, action: str, prev: str | None, version: int = 1) -> SaveResult:
        data = canonical_json(run.to_json_dict())
        t = now_utc()
        h = version_hash(run.id, version, author, t, reason, action, prev, data)
        self.conn.execute(
            "INSERT INTO versions (run_id, version, author, time, reason, action, prev_hash, hash, data) VALUES (?,?,?,?,?,?,?,?,?)",
            (run.id, version, author, t, reason, action, prev, h, data),
        )
        withdrawn = 1 if action == "withdraw" else 0
        if action not in ("withdraw", "restore") and version > 1:
            withdrawn = self.conn.execute("SELECT withdrawn FROM runs WHERE id = ?", (run.id,)).fetchone()[0]
        self.conn.execute(
            """INSERT INTO runs (id, title, chemist, date, status, screen, withdrawn, version, hash, created, updated, data)
               VALUES (?,?,?,?,?,?,?,?,?,?,?,?)
               ON CONFLICT(id) DO UPDATE SET title=excluded.title, chemist=excluded.chemist, date=excluded.date,
               status=excluded.status, screen=excluded.screen, withdrawn=excluded.withdrawn, version=excluded.version,
               hash=excluded.hash, updated=excluded.updated, data=excluded.data""",
            (run.id, run.title, run.chemist, run.date.isoformat() if run.date else None, run.status, run.screen,
             withdrawn, version, h, t, t, data),
        )
        run_index.index_run(self, run)
        return SaveResult(run.id, version, h, version == 1)

    def get_run(self, run_id: str, version: int | None = None) -> Run:
        if version is None:
            row = self.conn.execute("SELECT data FROM runs WHERE id = ?", (run_id,)).fetchone()
        else:
            row = self.conn.execute("SELECT data FROM versions WHERE run_id = ? AND version = ?", (run_id, version)).fetchone()
        if row is None:
            what = f"run {run_id}" + (f" version {version}" if version is not None else "")
            hint = "list runs with 'trapbook list'"
            if version is not None and self.conn.execute("SELECT 1 FROM runs WHERE id = ?", (run_id,)).fetchone():
                hint = f"see the versions of {run_id} with 'trapbook history {run_id}'"
            raise NotFoundError(f"no {what} in this notebook", hint)
        return Run.model_validate(json.loads(row[0]))

    def run_meta(self, run_id: str) -> dict:
        row = self.conn.execute(
            "SELECT id, title, chemist, date, status, screen, withdrawn, version, hash, created, updated FROM runs WHERE id = ?",
            (run_id,),
        ).fetchone()
        if row is None:
            raise NotFoundError(f"no run {run_id} in this notebook", "list runs with 'trapbook list'")
        keys = ["id", "title", "chemist", "date", "status", "screen", "withdrawn", "version", "hash", "created", "updated"]
        d = dict(zip(keys, row))
        d["withdrawn"] = bool(d["withdrawn"])
        return d

    def run_ids(self, include_withdrawn: bool = True) -> list[str]:
        q = "SELECT id FROM runs" + ("" if include_withdrawn else " WHERE withdrawn = 0") + " ORDER BY id"
        return [r[0] for r in self.conn.execute(q)]

    def list_runs(self, include_withdrawn: bool = False, screen: str | None = None) -> list[dict]:
        """Rows for a run table: stored fields joined with the search index's summary columns."""
        where, args = [], []
        if not include_withdrawn:
            where.append("r.withdrawn = 0")
        if screen:
            where.append("r.screen = ?")
            args.append(screen)
        sql = (
            "SELECT r.id, r.title, r.chemist, r.date, r.status, r.screen, r.withdrawn, r.version, "
            "i.intermediate, i.trap, i.fluoride, i.solvent, i.temp_max_c, i.time_min, i.yield_pct, i.yield_kind, i.worst, i.sealed "
            "FROM runs r LEFT JOIN run_index i ON i.run_id = r.id"
            + (" WHERE " + " AND ".join(where) if where else "")
            + " ORDER BY r.id"
        )
        keys = ["id", "title", "chemist", "date", "status", "screen", "withdrawn", "version", "intermediate", "trap",
                "fluoride", "solvent", "temp_max_c", "time_min", "yield_pct", "yield_kind", "worst", "sealed"]
        out = []
        for row in self.conn.execute(sql, args):
            d = dict(zip(keys, row))
            d["withdrawn"] = bool(d["withdrawn"])
            d["sealed"] = bool(d["sealed"]) if d["sealed"] is not None else None
            out.append(d)
        return out

    def iter_runs(self, include_withdrawn: bool = True) -> Iterator[Run]:
        q = "SELECT data FROM runs" + ("" if include_withdrawn else " WHERE withdrawn = 0") + " ORDER BY id"
        for (data,) in self.conn.execute(q).fetchall():
            yield Run.model_validate(json.loads(data))

    def count_runs(self) -> int:
        return self.conn.execute("SELECT count(*) FROM runs").fetchone()[0]

    def history(self, run_id: str) -> list[VersionInfo]:
        rows = self.conn.execute(
            "SELECT version, author, time, reason, action, hash, prev_hash, data FROM versions WHERE run_id = ? ORDER BY version",
            (run_id,),
        ).fetchall()
        if not rows:
            raise NotFoundError(f"no run {run_id} in this notebook", "list runs with 'trapbook list'")
        out, prev = [], None
        for version, author, time, reason, action, h, ph, data in rows:
            cur = json.loads(data)
            changes = diff_runs(prev, cur) if prev is not None else ["created"]
            if action in ("withdraw", "restore"):
                changes = [("withdrawn" if action == "withdraw" else "restored")] + [c for c in changes if c != "no field changed"]
            out.append(VersionInfo(run_id, version, author, time, reason, action, h, ph, changes))
            prev = cur
        return out

    # --- screens -------------------------------------------------------------------
    def add_screen(self, screen: Screen | dict, author: str | None = None, reason: str = "created") -> str:
        screen = load_screen(screen) if not isinstance(screen, Screen) else screen
        with self.transaction():
            sid = screen.id
            if sid and self.conn.execute("SELECT 1 FROM screens WHERE id = ?", (sid,)).fetchone():
                raise RecordError(f"screen id {sid} is already in this notebook", "choose another id")
            sid = sid or self._next_id("screen", "SC-")
            screen = screen.model_copy(update={"id": sid})
            self._write_screen(screen, author or default_author(), reason, 1)
        return sid

    def save_screen(self, screen: Screen, author: str | None = None, reason: str = "updated") -> int:
        with self.transaction():
            row = self.conn.execute("SELECT version FROM screens WHERE id = ?", (screen.id,)).fetchone()
            if row is None:
                raise NotFoundError(f"no screen {screen.id} in this notebook", "list screens with 'trapbook screens'")
            self._write_screen(screen, author or default_author(), reason, row[0] + 1)
            return row[0] + 1

    def _write_screen(self, screen: Screen, author: str, reason: str, version: int) -> None:
        # not canonical: the order of the factors is the order the chemist gave them in
        data = json.dumps(screen.model_dump(mode="json", exclude_none=True), ensure_ascii=False)
        t = now_utc()
        self.conn.execute(
            "INSERT INTO screen_versions (screen_id, version, author, time, reason, data) VALUES (?,?,?,?,?,?)",
            (screen.id, version, author, t, reason, data),
        )
        self.conn.execute(
            """INSERT INTO screens (id, name, version, created, updated, data) VALUES (?,?,?,?,?,?)
               ON CONFLICT(id) DO UPDATE SET name=excluded.name, version=excluded.version, updated=excluded.updated, data=excluded.data""",
            (screen.id, screen.name, version, t, t, data),
        )

    def get_screen(self, key: str) -> Screen:
        row = self.conn.execute("SELECT data FROM screens WHERE id = ? OR name = ? ORDER BY id LIMIT 1", (key, key)).fetchone()
        if row is None:
            raise NotFoundError(f"no screen '{key}' in this notebook", "list screens with 'trapbook screens'")
        return Screen.model_validate(json.loads(row[0]))

    def list_screens(self) -> list[Screen]:
        return [Screen.model_validate(json.loads(r[0])) for r in self.conn.execute("SELECT data FROM screens ORDER BY id")]

    def screen_runs(self, screen: Screen) -> list[Run]:
        """Runs of a screen: those listed in it plus any run that names the screen."""
        ids = list(screen.runs)
        for (rid,) in self.conn.execute("SELECT id FROM runs WHERE screen = ? AND withdrawn = 0 ORDER BY id", (screen.id,)):
            if rid not in ids:
                ids.append(rid)
        out = []
        for rid in ids:
            meta = self.conn.execute("SELECT withdrawn FROM runs WHERE id = ?", (rid,)).fetchone()
            if meta is None or meta[0]:
                continue
            out.append(self.get_run(rid))
        return out

    # --- settings and cache --------------------------------------------------------
    def get_setting(self, key: str, default: Any = None) -> Any:
        row = self.conn.execute("SELECT value FROM settings WHERE key = ?", (key,)).fetchone()
        return json.loads(row[0]) if row else default

    def set_setting(self, key: str, value: Any) -> None:
        with self.transaction():
            self.conn.execute(
                "INSERT INTO settings (key, value) VALUES (?, ?) ON CONFLICT(key) DO UPDATE SET value = excluded.value",
                (key, json.dumps(value)),
            )

    def cache_get(self, key: str) -> dict | None:
        row = self.conn.execute("SELECT result FROM strain_cache WHERE key = ?", (key,)).fetchone()
        return json.loads(row[0]) if row else None

    def cache_put(self, key: str, smiles: str, tier: str, engine: str, result: dict) -> None:
        with self.transaction():
            self.conn.execute(
                "INSERT OR REPLACE INTO strain_cache (key, smiles, tier, engine, created, result) VALUES (?,?,?,?,?,?)",
                (key, smiles, tier, engine, now_utc(), json.dumps(result)),
            )

    def cached_strain_for(self, smiles: str) -> list[dict]:
        return [json.loads(r[0]) for r in self.conn.execute("SELECT result FROM strain_cache WHERE smiles = ?", (smiles,))]

    def reindex(self, run_ids: Iterable[str] | None = None) -> int:
        """Rebuild the summary rows (e.g. after strain results arrive, which change the checks)."""
        ids = list(run_ids) if run_ids is not None else self.run_ids()
        with self.transaction():
            for rid in ids:
                run_index.index_run(self, self.get_run(rid))
        return len(ids)

    # --- bulk ----------------------------------------------------------------------
    def import_runs(self, runs: Iterable[Run], author: str | None = None, reason: str = "imported", keep_ids: bool = True) -> list[SaveResult]:
        """All or nothing: either every run is stored or none is."""
        results = []
        with self.transaction():
            for run in runs:
                keep = keep_ids and bool(run.id) and not self.conn.execute("SELECT 1 FROM runs WHERE id = ?", (run.id,)).fetchone()
                results.append(self.add_run(run, author=author, reason=reason, keep_id=keep))
        return results


def diff_runs(old: dict, new: dict, prefix: str = "") -> list[str]:
    """What changed between two stored versions, in words a chemist reads ("lines[furan].equiv: 5 → 10")."""
    changes: list[str] = []
    _diff(old, new, prefix, changes)
    return changes or ["no field changed"]


def _show(v: Any) -> str:
    if isinstance(v, dict) and set(v) <= {"value", "unit"} and "value" in v:
        return f"{v['value']:g} {v.get('unit', '')}".strip()
    s = json.dumps(v, ensure_ascii=False)
    return s if len(s) <= 60 else s[:57] + "..."


def _is_quantity(v: Any) -> bool:
    return isinstance(v, dict) and set(v) <= {"value", "unit"} and "value" in v


def _added(v: Any, path: str, out: list[str]) -> None:
    """A new field said leaf by leaf ("outcome.products[adduct].isolated_mass: added 21 mg"), not as JSON."""
    if isinstance(v, dict) and v and not _is_quantity(v):
        for k in v:
            _added(v[k], f"{path}.{k}", out)
    elif isinstance(v, list) and v and all(isinstance(x, dict) for x in v):
        for i, x in enumerate(v, 1):
            label = x.get("product") or x.get("name") or i
            _added(x, f"{path}[{label}]", out)
    else:
        out.append(f"{path}: added {_show(v)}")


def _diff(old: Any, new: Any, path: str, out: list[str]) -> None:
    if old == new:
        return
    if isinstance(old, dict) and isinstance(new, dict) and not (set(old) <= {"value", "unit"} and "value" in old):
        for k in sorted(set(old) | set(new), key=str):
            p = f"{path}.{k}" if path else str(k)
            if k not in old:
                _added(new[k], p, out)
            elif k not in new:
                out.append(f"{p}: removed (was {_show(old[k])})")
            else:
                _diff(old[k], new[k], p, out)
        return
    key = _list_key(old, new)
    if key is not None:
        on = {x[key]: x for x in old}
        nn = {x[key]: x for x in new}
        for name in list(on) + [n for n in nn if n not in on]:
            p = f"{path}[{name}]"
            if name not in nn:
                out.append(f"{p}: removed")
            elif name not in on:
                out.append(f"{p}: added")
            else:
                _diff(on[name], nn[name], p, out)
        return
    if isinstance(old, list) and isinstance(new, list) and len(old) == len(new) and all(isinstance(x, dict) for x in old + new):
        # Steps (and anything else without a name) are compared in order: "steps[2].hold: 1 h → 2 h".
        for i, (a, b) in enumerate(zip(old, new), 1):
            _diff(a, b, f"{path}[{i}]", out)
        return
    out.append(f"{path}: {_show(old)} → {_show(new)}")


def _list_key(old: Any, new: Any) -> str | None:
    """The field that names each item of a list (lines by name, products by product), if every item has it once."""
    if not (isinstance(old, list) and isinstance(new, list)):
        return None
    items = old + new
    for key in ("name", "product"):
        if items and all(isinstance(x, dict) and key in x for x in items) \
                and len({x[key] for x in old}) == len(old) and len({x[key] for x in new}) == len(new):
            return key
    return None


def _access_error(path: Path, exc: sqlite3.Error) -> StoreError | None:
    """A plain-words StoreError when SQLite failed because the file or its folder is read-only for this user."""
    text = str(exc).lower()
    if "readonly" not in text and "read-only" not in text and "unable to open" not in text:
        return None
    path = Path(path)
    folder = path.parent
    if path.exists() and not os.access(path, os.W_OK):
        what = f"{path} is read-only for you"
    elif not os.access(folder, os.W_OK):
        what = f"the folder {folder} is read-only for you (SQLite keeps its journal files beside the notebook)"
    else:
        what = f"{path} cannot be written ({exc})"
    return StoreError(
        f"cannot use the notebook: {what}; nothing was changed",
        "ask for write access, or copy the notebook (with any -wal file beside it) to a folder of yours and point --db at the copy",
    )
