"""RO-Crate archives of runs, written and read through the ``rocrate`` package.

A crate holds everything needed to put the runs back as they were: each run's stored
JSON (``runs/<id>.json``) with its version history beside it (``runs/<id>.history.jsonl``),
the screens (``screens/<id>.json``), the attached files by hash (``attachments/<sha256>``),
and an ORD dataset of the same runs (``ord/dataset.pbtxt``) for tools that read ORD.
The ``ro-crate-metadata.json`` describes each file, so the archive is readable without
Trapbook.

Import reads the run JSON, not the ORD file, so nothing is lost. A zip is unpacked by
this module, not by the library: every member name is checked to stay inside the
target folder, links are refused, and sizes are bounded, before anything is written.
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import json
import os
import stat
import tempfile
import zipfile
from pathlib import Path, PurePosixPath
from typing import Any

from ..errors import ExchangeError, RecordError, TrapbookError
from ..files import atomic_target
from ..json_text import loads_once
from ..records import Run, load_run, load_screen
from ..text_rules import quoted_in_reason

MAX_MEMBERS = 100_000
MAX_TOTAL_BYTES = 8 * 1024**3
MAX_RATIO = 200  # uncompressed / compressed, per member: beyond this it is a zip bomb
RUN_DIR, SCREEN_DIR, FILE_DIR, ORD_PATH = "runs", "screens", "attachments", "ord/dataset.pbtxt"
HISTORY_SUFFIX = ".history.jsonl"
MAX_HISTORY_BYTES = 256 * 1024**2


def _json_text(obj: Any) -> str:
    return json.dumps(obj, ensure_ascii=False, indent=2, sort_keys=True) + "\n"


def _safe_id(text: str) -> str:
    keep = "".join(ch if ch.isalnum() or ch in "-_." else "_" for ch in text)
    return keep.strip(".") or "run"


def _add_run(crate, work: Path, nb, run, store, seen_blobs: set[str]) -> None:
    """A run's record, its version history and every file any of its versions names."""
    from .. import attachments

    rid = _safe_id(run.id or run.title)
    src = work / f"{rid}.json"
    src.write_text(_json_text(run.to_json_dict()), encoding="utf-8")
    crate.add_file(
        src,
        f"{RUN_DIR}/{rid}.json",
        properties={
            "name": run.title,
            "encodingFormat": "application/json",
            "description": f"Trapbook run record {run.id or ''}".strip(),
            "identifier": run.id or "",
        },
    )
    history_atts = []
    if run.id:
        hist = work / f"{rid}.history.jsonl"
        text, history_atts = _history_jsonl(nb, run.id)
        hist.write_text(text, encoding="utf-8")
        crate.add_file(
            hist,
            f"{RUN_DIR}/{rid}.history.jsonl",
            properties={
                "name": f"version history of {run.id}",
                "encodingFormat": "application/x-ndjson",
            },
        )
    for att in [*run.attachments, *history_atts]:  # older versions keep their files too
        if att.sha256 in seen_blobs:
            continue
        blob = attachments.blob_path(store, att.sha256)
        problem = attachments.check_blob(store, att.sha256, att.size)
        if problem:
            raise ExchangeError(
                f"run {run.id} attachment {att.name}: {problem}",
                "run 'trapbook verify' and restore the file before exporting",
            )
        crate.add_file(
            blob,
            f"{FILE_DIR}/{att.sha256}",
            properties={
                "name": att.name,
                "encodingFormat": att.media_type or "application/octet-stream",
                "contentSize": str(att.size),
                "sha256": att.sha256,
            },
        )
        seen_blobs.add(att.sha256)


def _add_screen(crate, work: Path, sc) -> None:
    src = work / f"screen-{_safe_id(sc.id)}.json"
    src.write_text(_json_text(sc.model_dump(mode="json", exclude_none=True)), encoding="utf-8")
    crate.add_file(
        src,
        f"{SCREEN_DIR}/{_safe_id(sc.id)}.json",
        properties={
            "name": sc.name,
            "encodingFormat": "application/json",
            "description": "Trapbook screen record",
        },
    )


def _add_ord(crate, work: Path, nb, runs, screen) -> str | None:
    """The runs as an ORD dataset inside the crate; the reason when one cannot be written."""
    from . import ord as ordx

    try:
        ds, _report = ordx.build_dataset(runs, screen, email=ordx._email(nb), nb=nb)
    except TrapbookError as exc:
        return f"no ORD file: {exc.message}"
    src = work / "dataset.pbtxt"
    src.write_text(ordx.serialise(ds, src), encoding="utf-8")
    crate.add_file(
        src,
        ORD_PATH,
        properties={
            "name": "Open Reaction Database dataset",
            "encodingFormat": "text/plain",
            "description": "ord_schema Dataset message in protobuf text format",
        },
    )
    return None


def export(nb, runs, screen=None, output=None):
    """Registry entry: write a crate to `output` (.zip, or a folder); returns the path."""
    from rocrate.rocrate import ROCrate

    from .. import attachments

    if not output:
        raise ExchangeError("an RO-Crate is a zip archive or a folder, not text", "give a file name with -o, e.g. -o runs.zip")
    runs = list(runs)
    if not runs:
        raise ExchangeError("there are no runs to export", "add runs first, or pick another screen")
    out = Path(output)
    if out.exists() and (out.is_file() or any(out.iterdir())):
        raise ExchangeError(f"{out} already exists", "choose a new name; an export never overwrites a file")
    screens = [nb.get_screen(screen)] if screen else _screens_of(nb, runs)
    store = attachments.store_dir(nb)
    with tempfile.TemporaryDirectory(prefix="trapbook-crate-") as tmp:
        work = Path(tmp)
        crate = ROCrate()
        crate.name = f"Trapbook runs ({len(runs)})" if not screen else f"Trapbook screen {screens[0].id}: {screens[0].name}"
        crate.description = (
            "Trapping runs exported from a Trapbook notebook: each run's record (JSON), its version "
            "history, screens, attached files and an Open Reaction Database dataset."
        )
        crate.datePublished = _dt.datetime.now(_dt.UTC).isoformat(timespec="seconds")
        crate.root_dataset["keywords"] = ["trapping experiment", "strained intermediate", "lab notebook"]
        seen_blobs: set[str] = set()
        for run in runs:
            _add_run(crate, work, nb, run, store, seen_blobs)
        for sc in screens:
            _add_screen(crate, work, sc)
        note = _add_ord(crate, work, nb, runs, screens[0] if screen else None)
        if note:
            crate.root_dataset["comment"] = note
        try:
            if out.suffix.lower() == ".zip":
                with atomic_target(out) as part:
                    crate.write_zip(part)
            else:
                crate.write(out)
        except OSError as exc:
            raise ExchangeError(f"cannot write {out}: {exc.strerror}", "choose a writable path") from None
    return str(out)


def _screens_of(nb, runs: list[Run]) -> list:
    ids = sorted({r.screen for r in runs if r.screen})
    out = []
    for sid in ids:
        try:
            out.append(nb.get_screen(sid))
        except TrapbookError:
            continue
    return out


def _history_jsonl(nb, run_id: str):
    """The run's versions as JSON lines, and the attachments named by any of them."""
    from ..records import Attachment

    rows = nb.conn.execute(
        "SELECT version, author, time, reason, action, prev_hash, hash, data FROM versions WHERE run_id = ? ORDER BY version",
        (run_id,),
    ).fetchall()
    keys = ["version", "author", "time", "reason", "action", "prev_hash", "hash", "data"]
    atts = {}
    for row in rows:
        for a in json.loads(row[-1]).get("attachments") or []:
            atts.setdefault((a["sha256"], a["name"]), Attachment.model_validate(a))
    text = "".join(json.dumps(dict(zip(keys, row)), ensure_ascii=False, sort_keys=True) + "\n" for row in rows)
    return text, list(atts.values())


# --- reading ----------------------------------------------------------------------------------


def _member_target(root: Path, name: str) -> Path:
    """Where a zip member would land, or an ExchangeError if it would leave `root`."""
    if "\x00" in name or name.startswith(("/", "\\")) or (len(name) > 1 and name[1] == ":"):
        raise ExchangeError(f"archive member '{name[:80]}' has an absolute path", "the archive is unsafe; nothing was imported")
    parts = PurePosixPath(name.replace("\\", "/")).parts
    if any(p == ".." for p in parts):
        raise ExchangeError(
            f"archive member '{name[:80]}' points outside the archive", "the archive is unsafe; nothing was imported"
        )
    target = (root / Path(*parts)).resolve() if parts else root
    if target != root and root not in target.parents:
        raise ExchangeError(
            f"archive member '{name[:80]}' points outside the archive", "the archive is unsafe; nothing was imported"
        )
    return target


def safe_extract(zip_path: Path, dest: Path) -> None:
    """Unpack a zip into `dest`, refusing members that escape it, links and zip bombs."""
    root = dest.resolve()
    try:
        zf = zipfile.ZipFile(zip_path)
    except (zipfile.BadZipFile, OSError, ValueError, EOFError) as exc:
        raise ExchangeError(f"{zip_path.name} is not a readable zip archive ({exc})", "give an RO-Crate zip or folder") from None
    with zf:
        infos = zf.infolist()
        if len(infos) > MAX_MEMBERS:
            raise ExchangeError(f"{zip_path.name} has {len(infos)} members, more than {MAX_MEMBERS}", "nothing was imported")
        total = 0
        plan = []
        for info in infos:
            target = _member_target(root, info.filename)
            mode = info.external_attr >> 16
            if stat.S_ISLNK(mode):
                raise ExchangeError(
                    f"archive member '{info.filename[:80]}' is a symbolic link", "the archive is unsafe; nothing was imported"
                )
            total += info.file_size
            if total > MAX_TOTAL_BYTES:
                raise ExchangeError(f"{zip_path.name} unpacks to more than {MAX_TOTAL_BYTES // 2**30} GB", "nothing was imported")
            if info.file_size > 1_000_000 and info.compress_size and info.file_size / info.compress_size > MAX_RATIO:
                raise ExchangeError(
                    f"archive member '{info.filename[:80]}' is compressed {info.file_size // info.compress_size}:1, "
                    "which looks like a zip bomb",
                    "nothing was imported",
                )
            plan.append((info, target))
        try:
            for info, target in plan:
                if info.is_dir():
                    target.mkdir(parents=True, exist_ok=True)
                    continue
                target.parent.mkdir(parents=True, exist_ok=True)
                with zf.open(info) as src, open(target, "wb") as out:
                    written = 0
                    while chunk := src.read(1 << 20):
                        written += len(chunk)
                        if written > info.file_size:
                            raise ExchangeError(
                                f"archive member '{info.filename[:80]}' is longer than its header says", "nothing was imported"
                            )
                        out.write(chunk)
                os.chmod(target, 0o644)
        except (
            zipfile.BadZipFile,
            zipfile.LargeZipFile,
            OSError,
            EOFError,
            RuntimeError,
            ValueError,
            NotImplementedError,
        ) as exc:
            raise ExchangeError(f"{zip_path.name} cannot be unpacked ({exc})", "nothing was imported") from None


def _inside(root: Path, rel: str) -> Path:
    return _member_target(root.resolve(), rel)


def _read_crate(folder: Path) -> dict:
    """Run dicts, screen dicts and attachment paths listed by the crate's metadata."""
    from rocrate.rocrate import ROCrate

    meta = folder / "ro-crate-metadata.json"
    if not meta.is_file():
        raise ExchangeError(f"{folder.name} has no ro-crate-metadata.json", "give an RO-Crate zip or folder written by an export")
    try:
        crate = ROCrate(str(folder))
        ids = [e.id for e in crate.data_entities]
    except Exception as exc:  # the library raises many kinds on malformed metadata
        raise ExchangeError(
            f"the RO-Crate metadata cannot be read ({type(exc).__name__}: {str(exc)[:200]})", "nothing was imported"
        ) from None
    runs, screens, blobs, histories = [], [], {}, {}
    for eid in ids:
        if not isinstance(eid, str):
            continue
        if eid.startswith(f"{RUN_DIR}/") and eid.endswith(HISTORY_SUFFIX):
            histories[eid[: -len(HISTORY_SUFFIX)] + ".json"] = _inside(folder, eid)
        elif eid.startswith(f"{RUN_DIR}/") and eid.endswith(".json"):
            runs.append((eid, _inside(folder, eid)))
        elif eid.startswith(f"{SCREEN_DIR}/") and eid.endswith(".json"):
            screens.append((eid, _inside(folder, eid)))
        elif eid.startswith(f"{FILE_DIR}/"):
            blobs[eid[len(FILE_DIR) + 1 :]] = _inside(folder, eid)
    if not runs:
        raise ExchangeError("the RO-Crate lists no Trapbook run records (runs/*.json)", "nothing was imported")
    return {"runs": sorted(runs), "screens": sorted(screens), "blobs": blobs, "histories": histories}


def _load_json(path: Path, eid: str) -> Any:
    if not path.is_file():
        raise ExchangeError(f"the crate lists {eid} but the file is not in it", "nothing was imported")
    try:
        return loads_once(path.read_text(encoding="utf-8"), eid)
    except RecordError as exc:  # a key given twice
        raise ExchangeError(exc.message, f"{exc.hint}; nothing was imported", field=exc.field) from None
    except (ValueError, UnicodeDecodeError, OSError, RecursionError) as exc:
        raise ExchangeError(f"{eid} is not valid JSON ({str(exc)[:120]})", "nothing was imported") from None


def _load_history(path: Path, eid: str) -> list:
    """The version records of one run's history file (JSON lines), unchecked."""
    try:
        if path.stat().st_size > MAX_HISTORY_BYTES:
            raise ExchangeError(f"{eid} is over {MAX_HISTORY_BYTES // 2**20} MB", "nothing was imported")
        lines = path.read_text(encoding="utf-8").splitlines()
    except (OSError, UnicodeDecodeError) as exc:
        raise ExchangeError(f"{eid} cannot be read ({str(exc)[:120]})", "nothing was imported") from None
    out = []
    for n, raw in enumerate(lines, 1):
        if not raw.strip():
            continue
        try:
            out.append(json.loads(raw))
        except (ValueError, RecursionError) as exc:
            raise ExchangeError(f"{eid} line {n} is not valid JSON ({str(exc)[:80]})", "nothing was imported") from None
    return out


def _history_of(run: Run, listing: dict, eid: str) -> list | None:
    """The run's history from the crate, if it has one; it must end in the very record given."""
    from ..records import canonical_json

    path = listing["histories"].get(eid)
    if path is None or not run.id:
        return None
    hist_eid = eid[: -len(".json")] + HISTORY_SUFFIX
    if not path.is_file():
        raise ExchangeError(f"the crate lists {hist_eid} but the file is not in it", "nothing was imported")
    history = _load_history(path, hist_eid)
    last = history[-1] if history else None
    if not isinstance(last, dict) or last.get("data") != canonical_json(run.to_json_dict()):
        raise ExchangeError(
            f"{eid} and its version history {hist_eid} disagree (the last version is not this record)",
            "the archive was changed after it was written; nothing was imported",
        )
    return history


def _named_files(run: Run, history: list | None) -> list:
    """Every attachment the run names now or in any earlier version (verify asks for all)."""
    from ..records import Attachment

    found = {(a.sha256, a.name): a for a in run.attachments}
    for item in history or []:
        try:
            atts = json.loads(item.get("data", "{}")).get("attachments") or []
            for a in atts:
                found.setdefault((a["sha256"], a["name"]), Attachment.model_validate(a))
        except (ValueError, TypeError, KeyError, AttributeError, RecursionError):
            continue  # a damaged version is refused whole by the chain check
    return list(found.values())


def read_folder(folder: Path) -> tuple[list[Run], list, dict[str, Path], dict[str, list], list]:
    """Runs, screens, files by hash, histories by run id, and (run id, attachment) not in the crate."""
    listing = _read_crate(folder)
    runs, screens, histories, missing = [], [], {}, []
    for eid, path in listing["runs"]:
        data = _load_json(path, eid)
        try:
            run = load_run(data)
        except RecordError as exc:
            raise ExchangeError(f"{eid}: {exc.message}", "fix that record; nothing was imported") from None
        runs.append(run)
        history = _history_of(run, listing, eid)
        if history is not None:
            histories[run.id] = history
    for eid, path in listing["screens"]:
        data = _load_json(path, eid)
        try:
            screens.append(load_screen(data))
        except RecordError as exc:
            raise ExchangeError(f"{eid}: {exc.message}", "fix that record; nothing was imported") from None
    blobs: dict[str, Path] = {}
    for run in runs:
        for att in _named_files(run, histories.get(run.id)):
            path = listing["blobs"].get(att.sha256)
            if path is None or not path.is_file():
                missing.append((run.id, att))
                continue
            h = hashlib.sha256()
            with path.open("rb") as fh:
                while chunk := fh.read(1 << 20):
                    h.update(chunk)
            if h.hexdigest() != att.sha256:
                raise ExchangeError(
                    f"{run.id}: attachment {att.name} in the crate does not match its SHA-256",
                    "the archive is damaged; nothing was imported",
                )
            blobs[att.sha256] = path
    return runs, screens, blobs, histories, missing


def _refuse_missing_files(nb, missing: list) -> None:
    """A record whose file is neither in the crate nor already in this notebook is refused."""
    from .. import attachments

    store = attachments.store_dir(nb)
    for run_id, att in missing:
        path = attachments.blob_path(store, att.sha256)
        if not (path.is_file() and path.stat().st_size == att.size):
            raise ExchangeError(
                f"{run_id}: attachment {att.name} (sha256 {att.sha256[:12]}…) is not in the crate",
                "export the crate again from a notebook that holds the file; nothing was imported",
            )


def _store_runs(nb, runs: list[Run], histories: dict, author, reason: str) -> tuple[list, list[str]]:
    """Each run with its whole history when the crate has it, else as a new run; inside the caller's transaction."""
    results, notes = [], []
    for run in runs:
        history = histories.get(run.id)
        if history is None:
            res = nb.import_runs([run], author=author, reason=reason)[0]
            notes.append(f"{run.id or run.title}: the crate holds no version history; stored as a new run")
        else:
            try:
                res = nb.import_history(run.id, history)
            except RecordError as exc:
                raise ExchangeError(exc.message, exc.hint) from None
            if res.run_id != run.id:
                notes.append(
                    f"{run.id} was already taken; stored as {res.run_id} with its {res.version} version(s), "
                    "the chain re-keyed under the new id"
                )
        if run.id and res.run_id != run.id and history is None:
            notes.append(f"{run.id} was already taken; stored as {res.run_id}")
        results.append(res)
    return results, notes


def import_path(nb, path, author=None) -> dict:
    """Registry entry: import an RO-Crate (zip or folder) written by `export`; all or nothing.

    Every run comes back with its whole version history (authors, times, reasons, chain
    checked); the files every version names come with it, or the import is refused.
    """
    from .. import attachments

    path = Path(path)
    with tempfile.TemporaryDirectory(prefix="trapbook-crate-in-") as tmp:
        if path.is_dir():
            folder = path
        else:
            folder = Path(tmp) / "crate"
            folder.mkdir()
            safe_extract(path, folder)
            inner = [p for p in folder.iterdir()]
            if not (folder / "ro-crate-metadata.json").exists() and len(inner) == 1 and inner[0].is_dir():
                folder = inner[0]
        runs, screens, blobs, histories, missing = read_folder(folder)
        _refuse_missing_files(nb, missing)
        # Files first: content-addressed, so a copy the database never refers to is harmless.
        store = attachments.store_dir(nb)
        for sha, src in blobs.items():
            stored = attachments.put_file(store, src)
            if stored.sha256 != sha:  # pragma: no cover - checked in read_folder
                raise ExchangeError(f"attachment {sha[:12]}… changed while importing", "nothing was imported")
        reason = f"imported from RO-Crate {quoted_in_reason(path.name)}"
        with nb.transaction():
            results, notes = _store_runs(nb, runs, histories, author, reason)
            renamed = {r.id: res.run_id for r, res in zip(runs, results) if r.id and r.id != res.run_id}
            screen_ids = []
            for sc in screens:
                if sc.id and nb.conn.execute("SELECT 1 FROM screens WHERE id = ?", (sc.id,)).fetchone():
                    notes.append(f"screen {sc.id} is already in this notebook; not imported")
                    continue
                if renamed:
                    sc = sc.model_copy(update={"runs": [renamed.get(x, x) for x in sc.runs]})
                screen_ids.append(nb.add_screen(sc, author=author, reason=reason))
    return {
        "format": "rocrate",
        "imported": [r.run_id for r in results],
        "screens": screen_ids,
        "skipped": [],
        "attachments": len(blobs),
        "versions": sum(r.version for r in results),
        "notes": notes,
    }


__all__ = ["export", "import_path", "safe_extract", "read_folder"]
