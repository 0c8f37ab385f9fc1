"""Backups and restores of a notebook file and its attachment store.

A backup uses SQLite's online backup API, which copies a consistent snapshot even while
another process (the terminal UI, a script) has the notebook open and is saving; the
attached files are copied beside the backup. The copy is verified before it is reported
as done.

A restore never destroys anything: the source is verified first (a damaged backup is
refused), and a notebook already at the target is itself backed up under a dated name
before it is replaced.
"""

from __future__ import annotations

import datetime as _dt
import os
import shutil
import sqlite3
from pathlib import Path

from .errors import StoreError
from .files import atomic_target
from .store.connect import uri


def _stamp() -> str:
    return _dt.datetime.now(_dt.UTC).strftime("%Y%m%dT%H%M%S%fZ")


def _copy_db(src: Path, dest: Path) -> None:
    """Consistent snapshot of `src` into a new file `dest` (written beside it, then renamed)."""
    try:
        with atomic_target(dest) as part:
            s = sqlite3.connect(uri(src, "mode=ro"), uri=True, timeout=30.0)
            s.execute("PRAGMA busy_timeout=30000")
            d = sqlite3.connect(str(part))
            try:
                s.backup(d, pages=1024)
                d.execute("PRAGMA journal_mode=DELETE")  # a backup is one self-contained file
                d.commit()
            finally:
                d.close()
                s.close()
    except sqlite3.DatabaseError as exc:
        raise StoreError(f"cannot copy {src}: {exc}", "check the file is a Trapbook notebook") from None
    except OSError as exc:
        raise StoreError(f"cannot write {dest}: {exc.strerror}", "choose a writable place with enough space") from None


def _copy_files(src_root: Path, dest_root: Path) -> int:
    """Copy the content-addressed files not yet at the destination; returns how many."""
    from . import attachments

    base = src_root / "sha256"
    if not base.is_dir():
        return 0
    n = 0
    for sub in sorted(base.iterdir()):
        if not sub.is_dir():
            continue
        for f in sorted(sub.iterdir()):
            if not f.is_file() or len(sub.name + f.name) != 64:
                continue
            target = dest_root / "sha256" / sub.name / f.name
            if target.exists() and attachments.check_blob(dest_root, sub.name + f.name) is None:
                continue
            target.parent.mkdir(parents=True, exist_ok=True)
            with atomic_target(target) as tmp:
                shutil.copyfile(f, tmp)
                os.chmod(tmp, 0o444)
            n += 1
    return n


def backup(nb_path: str | os.PathLike, dest: str | os.PathLike) -> dict:
    """Copy the notebook (and its files) to `dest`, a new file or an existing folder."""
    from . import attachments, integrity

    src = Path(nb_path).expanduser()
    if not src.exists():
        raise StoreError(f"no notebook at {src}", "check --db")
    out = Path(dest).expanduser()
    if out.is_dir():
        out = out / f"{src.stem}-{_stamp()}{src.suffix or '.sqlite'}"
    if out.exists():
        raise StoreError(f"{out} already exists", "give a new file name or a folder; a backup never overwrites")
    if out.resolve() == src.resolve():
        raise StoreError("the backup would replace the notebook itself", "give another file name")
    try:
        out.parent.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise StoreError(f"cannot create {out.parent}: {exc.strerror}", "choose a writable place") from None
    _copy_db(src, out)
    files = _copy_files(attachments.store_dir(src), attachments.store_dir(out))
    problems = _damage(integrity.verify_path(out))
    return {"path": str(out), "files_copied": files, "verified": not problems, "problems": [p.to_dict() for p in problems]}


def _refuse_newer(path: Path, what: str) -> None:
    """A file written by a newer Trapbook is neither restored nor replaced by this one."""
    from .store.connect import newer_schema_problem, open_read_only

    try:
        conn = open_read_only(path)
    except sqlite3.DatabaseError:
        return  # not readable as SQLite: verify says so in its own words
    try:
        problem = newer_schema_problem(conn, path)
    except sqlite3.DatabaseError:
        problem = None
    finally:
        conn.close()
    if problem is not None:
        raise StoreError(f"cannot {what}: {problem.message}; nothing was changed", problem.hint)


def restore(src: str | os.PathLike, target: str | os.PathLike, force: bool = False) -> dict:
    """Put the backup `src` in place at `target`; the notebook already there is kept first."""
    from . import attachments, integrity

    src_p = Path(src).expanduser()
    tgt = Path(target).expanduser()
    if not src_p.is_file():
        raise StoreError(f"no backup file {src_p}", "give the path of a backup made with 'trapbook backup'")
    if tgt.exists() and src_p.resolve() == tgt.resolve():
        raise StoreError("the backup and the target are the same file", "give another --db")
    _refuse_newer(src_p, "restore this backup")
    if tgt.exists():
        _refuse_newer(tgt, "replace this notebook")
    damage = _damage(integrity.verify_path(src_p))
    if damage and not force:
        first = damage[0]
        raise StoreError(
            f"the backup {src_p.name} does not pass verify ({len(damage)} problem(s), first: {first.record}: {first.message})",
            "run 'trapbook verify --db BACKUP' to see them; nothing was changed",
        )
    kept = None
    if tgt.exists():
        kept = tgt.with_name(f"{tgt.stem}.before-restore-{_stamp()}{tgt.suffix or '.sqlite'}")
        _copy_db(tgt, kept)
        _copy_files(attachments.store_dir(tgt), attachments.store_dir(kept))
    tgt.parent.mkdir(parents=True, exist_ok=True)
    # Into the target through the backup API as well: a process that has the target open
    # sees the restored content on its next read instead of a file swapped under it.
    try:
        s = sqlite3.connect(uri(src_p, "mode=ro"), uri=True, timeout=30.0)
        d = sqlite3.connect(str(tgt), timeout=30.0)
        try:
            d.execute("PRAGMA busy_timeout=30000")
            s.backup(d, pages=1024)
        finally:
            d.close()
            s.close()
    except sqlite3.DatabaseError as exc:
        raise StoreError(
            f"cannot restore into {tgt}: {exc}", f"the earlier notebook is kept at {kept}" if kept else "check the path"
        ) from None
    files = _copy_files(attachments.store_dir(src_p), attachments.store_dir(tgt))
    _bring_up_to_date(tgt)
    after = integrity.verify_path(tgt)
    return {
        "path": str(tgt),
        "from": str(src_p),
        "previous_kept_at": str(kept) if kept else None,
        "files_copied": files,
        "verified": after.ok,
        "problems": [p.to_dict() for p in after.problems],
    }


def _bring_up_to_date(path: Path) -> None:
    """A backup made by an earlier Trapbook gets this Trapbook's layout once it is in place."""
    from .store import Notebook, schema
    from .store.connect import open_read_only

    conn = open_read_only(path)
    try:
        needs = schema.applied_versions(conn) is not None and bool(schema.pending(conn))
    finally:
        conn.close()
    if needs:
        Notebook.open(path).close()


def _damage(report) -> list:
    """Problems that mean damage; a notebook not yet upgraded to this Trapbook's layout is not damaged."""
    return [p for p in report.problems if p.code != "old-schema"]


__all__ = ["backup", "restore"]
