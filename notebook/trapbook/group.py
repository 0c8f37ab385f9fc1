"""Several members' notebooks read together: the group's runs, searches, screens and strain map.

Each member keeps their own notebook (it works offline at the bench, and a SQLite file must
not be written by several machines over a network file system), so a group view never
writes: every member is opened read-only (`mode=ro`, refused writes by `query_only`, and a
`write_problem` that every save path checks). Each member's save log and version chains
are checked on open; a notebook that fails is kept out of every answer and listed with
its problems, never silently mixed in.

Every answer labels a run with its member (the file's stem) and its id, because ids such
as TB-0001 repeat from one notebook to the next. Searches run the one query language
(`search_query.Query`) on each member through `search.search` and merge the hits; a
structure query screens the members' distinct structures together, once, under one time
limit (search_structures: the readable members are one pool, a failing one is not in it;
the pool is kept in the user's cache folder for the next process, never in a member's
file: structure_pool_file); screens
and reports are the single-notebook functions run on the member that holds them. A strain
result cached by one member serves every other member's runs of the same intermediate:
the cache key is made of the structure, tier and engine version, not of the notebook.
"""

from __future__ import annotations

import sqlite3
import sys
from collections.abc import Iterable, Iterator
from dataclasses import dataclass, field
from operator import itemgetter
from pathlib import Path

from .errors import NotFoundError, StoreError, TrapbookError
from .search_query import Query
from .store.notebook import Notebook

#: Separates a member from an id in a group reference: `alice:TB-0004`, `bob:SC-0001`.
REF_SEPARATOR = ":"


def read_only_problem(path: Path) -> StoreError:
    """Why a save is refused in a group view or a read-only session (trapbook open/serve --read-only)."""
    return StoreError(
        f"this view only reads: nothing is written to {path}",
        f"to change it, open that notebook on its own: trapbook --db {path} ...",
    )


class MemberNotebook(Notebook):
    """A member's notebook opened for reading, whose strain lookups also ask the other members."""

    def __init__(self, path: Path, conn: sqlite3.Connection):
        super().__init__(path, conn, write_problem=read_only_problem(path))
        #: The other members' notebooks, asked in order when this one has no cached result.
        self.siblings: list[Notebook] = []
        #: Every readable member, this one among them: structure searches read their distinct
        #: structures into one pool and screen it once (search_structures._sources).
        self.screened_with: tuple[Notebook, ...] = ()

    def cache_get(self, key: str) -> dict | None:
        """This notebook's cached result, else the first other member's: a result depends only
        on the key (structure, tier, engine version), so it is the same whoever computed it."""
        hit = super().cache_get(key)
        if hit is not None:
            return hit
        for other in self.siblings:
            hit = Notebook.cache_get(other, key)
            if hit is not None:
                return hit
        return None


def open_member(path: Path) -> MemberNotebook:
    """A member's notebook opened so that nothing can be written to it, not even an upgrade."""
    from .store.connect import check_path, open_read_only

    check_path(path, create=False)
    try:
        conn = open_read_only(path)
        conn.execute("PRAGMA query_only=ON")
        conn.execute("PRAGMA busy_timeout=30000")
    except sqlite3.DatabaseError as exc:
        raise StoreError(f"{path} is not a readable notebook ({exc})", "check the path, or leave it out of the group") from None
    return MemberNotebook(path, conn)


def check_member(nb: Notebook) -> list[dict]:
    """Problems that keep a member out of the group's answers (empty when it may be read).

    The quick part of `integrity.verify`: the save log's chain and head, each version's
    hash recomputed from its content and linked to the one before, and the notebook being
    at this Trapbook's layout with its search rows written. `trapbook verify` does the rest
    (derived rows, files, SQLite's own check), which takes minutes on a big notebook.
    """
    from . import integrity
    from .integrity_log import verify_log, verify_screens, verify_settings
    from .search import pending
    from .store import schema
    from .store.connect import newer_schema_problem

    rep = integrity.Report(str(nb.path))
    conn = nb.conn
    try:
        tables = {r[0] for r in conn.execute("SELECT name FROM sqlite_master WHERE type = 'table'")}
        if "runs" not in tables or "versions" not in tables:
            rep.add("not-a-notebook", "file", "not a Trapbook notebook (its tables are missing)")
            return [p.to_dict() for p in rep.problems]
        if not {"saves", "head", "run_index"} <= tables or schema.pending_for_readers(conn):
            if newer_schema_problem(conn, nb.path) is None:
                rep.add(
                    "old-schema",
                    "file",
                    "the notebook predates this Trapbook's layout: open it once on its own "
                    "(trapbook --db FILE list) to upgrade it",
                )
                return [p.to_dict() for p in rep.problems]
        _check_run_chains(conn, rep)
        verify_screens(conn, rep)
        verify_settings(conn, rep)
        verify_log(conn, rep)
        if not rep.problems and pending(nb):
            rep.add("not-indexed", "file", "some runs have no search rows yet: run 'trapbook reindex' on that notebook")
    except sqlite3.DatabaseError as exc:
        rep.add("sqlite", "file", f"the notebook could not be read to the end: {exc}")
    return [p.to_dict() for p in rep.problems]


def _check_run_chains(conn: sqlite3.Connection, rep) -> None:
    """Every run version's hash recomputed from its stored content, numbered and linked in order."""
    from .store.chain import version_hash

    last: tuple[str, int, str | None] | None = None
    n = 0
    for rid, version, author, time, reason, action, prev_hash, h, data in conn.execute(
        "SELECT run_id, version, author, time, reason, action, prev_hash, hash, data FROM versions ORDER BY run_id, version"
    ):
        expected_version, expected_prev = (last[1] + 1, last[2]) if last and last[0] == rid else (1, None)
        where = f"{rid} v{version}"
        if version != expected_version:
            rep.add("chain-gap", where, f"expected version {expected_version} here, found {version}")
        if prev_hash != expected_prev:
            rep.add("chain-link", where, "does not point at the hash of the version before it")
        if version_hash(rid, version, author, time, reason, action, prev_hash, data) != h:
            rep.add("hash-mismatch", where, "content does not match its stored SHA-256 (changed outside Trapbook)")
        last = (rid, version, h)
        n += 1
    rep.checked["versions"] = n


@dataclass
class Member:
    """One notebook of the group: its label, and whether its answers may be shown."""

    label: str
    path: Path
    nb: MemberNotebook | None
    problems: list[dict] = field(default_factory=list)
    owner: str | None = None

    @property
    def ok(self) -> bool:
        return self.nb is not None and not self.problems

    def to_dict(self) -> dict:
        return {
            "member": self.label,
            "path": str(self.path),
            "owner": self.owner,
            "ok": self.ok,
            "runs": self.nb.count_runs() if self.ok else None,
            "problems": list(self.problems),
        }


def notebook_paths(given: Iterable[str | Path]) -> list[Path]:
    """The notebook files named: a folder stands for every *.sqlite file in it (not its subfolders)."""
    out: list[Path] = []
    for item in given:
        p = Path(item).expanduser()
        try:
            p.exists()
        except (OSError, ValueError):  # a NUL byte, a name too long for the system
            raise NotFoundError(
                f"--group {str(item)[:80]!r} cannot be a file name", "give the path of a notebook file or a folder"
            ) from None
        if p.is_dir():
            found = sorted(p.glob("*.sqlite"))
            if not found:
                raise NotFoundError(
                    f"no notebook (*.sqlite) in the folder {p}", "give notebook files, or a folder that holds some"
                )
            out.extend(found)
        elif not p.exists():
            raise NotFoundError(f"no notebook at {p}", "check the --group path (a notebook file, or a folder of them)")
        else:
            out.append(p)
    unique: list[Path] = []
    for p in out:
        if p.resolve() not in {u.resolve() for u in unique}:
            unique.append(p)
    if not unique:
        raise NotFoundError("no notebook given for the group", "give --group FILE (repeat it) or --group FOLDER")
    return unique


def _labels(paths: list[Path]) -> list[str]:
    """The file stems; where two stems are the same, the folder is added to tell them apart."""
    stems = [p.stem for p in paths]
    labels = [s if stems.count(s) == 1 else f"{p.parent.name}/{s}" for s, p in zip(stems, paths)]
    return [lab if labels.count(lab) == 1 else f"{lab}#{i + 1}" for i, lab in enumerate(labels)]


class Group:
    """Members' notebooks read together. Open with `Group.open(paths)`; close when done."""

    def __init__(self, members: list[Member]):
        self.members = members
        readable = [m.nb for m in members if m.ok]
        for m in members:
            if m.ok:
                m.nb.siblings = [o for o in readable if o is not m.nb]
                m.nb.screened_with = tuple(readable)

    @classmethod
    def open(cls, paths: Iterable[str | Path]) -> Group:
        """Open every notebook read-only and check its chains; a failing one is kept out, with its problems."""
        from .settings import notebook_author

        files = notebook_paths(paths)
        members = []
        for label, path in zip(_labels(files), files):
            try:
                nb = open_member(path)
            except TrapbookError as exc:
                members.append(Member(label, path, None, [{"code": "unreadable", "record": "file", "message": exc.message}]))
                continue
            problems = check_member(nb)
            owner = None
            if not problems:
                try:
                    owner = notebook_author(nb)
                except (TrapbookError, sqlite3.DatabaseError) as exc:
                    problems = [{"code": "unreadable", "record": "settings", "message": str(exc)}]
            members.append(Member(label, path, nb, problems, owner))
        return cls(members)

    def close(self) -> None:
        kept = sys.modules.get(f"{__package__}.structure_pool_file")  # loaded only if a structure search ran
        if kept is not None:
            kept.settle()  # pool files kept for writing are written while the members are still known
        for m in self.members:
            if m.nb is not None:
                m.nb.screened_with = ()  # a member kept after closing is searched alone, not with closed files
                m.nb.close()

    def __enter__(self) -> Group:
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    # --- members ------------------------------------------------------------------
    def readable(self) -> Iterator[Member]:
        """The members whose chains checked out: the only ones any answer is drawn from."""
        return (m for m in self.members if m.ok)

    def failing(self) -> list[Member]:
        return [m for m in self.members if not m.ok]

    def member(self, label: str) -> Member:
        for m in self.members:
            if m.label == label:
                if not m.ok:
                    raise StoreError(
                        f"the notebook of {label} ({m.path}) failed its check and is left out",
                        f"run 'trapbook --db {m.path} verify' to see why",
                    )
                return m
        raise NotFoundError(f"no member '{label}' in this group", "members: " + ", ".join(m.label for m in self.members))

    def split_ref(self, ref: str) -> tuple[str | None, str]:
        """(member, id) of `MEMBER:ID`; (None, ref) when `ref` names no member."""
        for m in self.members:
            prefix = m.label + REF_SEPARATOR
            if ref.startswith(prefix):
                return m.label, ref[len(prefix) :]
        return None, ref

    def to_dict(self) -> list[dict]:
        return [m.to_dict() for m in self.members]

    # --- answers ------------------------------------------------------------------
    def list_runs(self, include_withdrawn: bool = False, screen: str | None = None) -> list[dict]:
        """Every readable member's run rows, each with `member` and `ref` (MEMBER:ID)."""
        rows = []
        for m in self.readable():
            for row in m.nb.list_runs(include_withdrawn=include_withdrawn, screen=screen):
                rows.append({"member": m.label, "ref": m.label + REF_SEPARATOR + row["id"], **row})
        return rows

    def search(self, query: Query) -> list[dict]:
        """The same Query run on each member; hits best first, then by member and id, each labelled."""
        from .search import search

        hits = []
        for m in sorted(self.readable(), key=lambda m: m.label):
            labelled = [
                {"member": m.label, "ref": m.label + REF_SEPARATOR + h.run_id, **h.to_dict()} for h in search(m.nb, query)
            ]
            labelled.sort(key=itemgetter("run_id"))
            hits += labelled
        hits.sort(key=itemgetter("score"), reverse=True)  # stable: equal scores stay by member, then id
        if query.limit is not None:
            hits = hits[: query.limit]
        return hits

    def find(self, ref: str, kind: str) -> tuple[Member, str]:
        """The member holding run or screen `ref` (MEMBER:ID, or an id only one member has)."""
        label, key = self.split_ref(ref)
        if label is not None:
            return self.member(label), key
        holders = [m for m in self.readable() if _holds(m.nb, key, kind)]
        if len(holders) == 1:
            return holders[0], key
        if not holders:
            raise NotFoundError(f"no {kind} '{ref}' in any member's notebook", "list them with 'trapbook --group ... list'")
        raise TrapbookError(
            f"{len(holders)} members have a {kind} '{ref}'",
            "name one: " + ", ".join(m.label + REF_SEPARATOR + key for m in holders),
            field="ref",
            got=ref,
        )

    def review(self, screen_ref: str) -> dict:
        """The screen review of the member that holds the screen, labelled with that member."""
        from .review import review_screen

        m, key = self.find(screen_ref, "screen")
        return {"member": m.label, **review_screen(m.nb, key)}

    def write_report(self, ref: str, output: str | Path) -> dict:
        """The run or screen report, from the member that holds it (the file written is the report, not a notebook)."""
        from .reports import write_report

        try:
            m, key = self.find(ref, "run")
        except NotFoundError:
            m, key = self.find(ref, "screen")
        return {"member": m.label, **write_report(m.nb, key, output)}

    def strain_map(self) -> dict:
        """Strain against outcome over every member's runs: intermediates merged by structure,
        each run labelled MEMBER:ID, the best yield per trap across the group."""
        from .review import STRAIN_FIELDS, map_order, rank_by_kind, strain_map

        merged: dict[str, dict] = {}
        for m in self.readable():
            for x in strain_map(m.nb)["intermediates"]:
                g = merged.setdefault(x["smiles"], {**x, "runs": [], "traps": {}})
                g["name"] = g["name"] or x["name"]
                g["runs"].extend(m.label + REF_SEPARATOR + r for r in x["runs"])
                if x["strain_kcal_mol"] is not None and (
                    g["strain_kcal_mol"] is None or (g["strain_tier"] != "accurate" and x["strain_tier"] == "accurate")
                ):  # a member's accurate result wins
                    g.update({k: x[k] for k in STRAIN_FIELDS})
                for t in x["traps"]:
                    entry = {**t, "run_id": m.label + REF_SEPARATOR + t["run_id"]}
                    cur = g["traps"].get(t["trap"])
                    if cur is None or (
                        t["yield_pct"] is not None and (cur["yield_pct"] is None or t["yield_pct"] > cur["yield_pct"])
                    ):
                        g["traps"][t["trap"]] = entry
        out = []
        for g in merged.values():
            ys = [t["yield_pct"] for t in g["traps"].values() if t["yield_pct"] is not None]
            out.append({**g, "best_yield_pct": max(ys) if ys else None, "traps": [g["traps"][k] for k in sorted(g["traps"])]})
        out.sort(key=map_order)
        return {
            "intermediates": out,
            "ranking": rank_by_kind(out),
            "missing_strain": [e["smiles"] for e in out if e["strain_status"] == "not computed"],
        }


def _holds(nb: Notebook, key: str, kind: str) -> bool:
    try:
        if kind == "run":
            nb.run_meta(key)
        else:
            nb.get_screen(key)
        return True
    except NotFoundError:
        return False
