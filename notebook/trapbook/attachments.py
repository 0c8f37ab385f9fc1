"""Files kept with a run (spectra, photos, raw NMR data) in a content-addressed store.

The store is a folder beside the notebook file, ``<notebook>.files/sha256/ab/cdef…``:
a file is named by the SHA-256 of its bytes, so the same spectrum attached twice is
stored once, a changed byte is noticed on every read, and nothing in the store can be
overwritten by a different file. Attaching records the file (name, hash, size, media
type) in a new version of the run, with a reason, like any other edit.

Stored files are written read-only and never executed or opened with another program by
Trapbook. The one reader of their content is `trapbook nmr` (trapbook.spectra), which
unpacks a zipped FID into a temporary folder after judging every member, and only when
asked.
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import mimetypes
import os
import re
import tempfile
from dataclasses import dataclass
from pathlib import Path

from .errors import NotFoundError, RecordError, StoreError, TrapbookError

CHUNK = 1 << 20
MAX_BYTES = 2 * 1024**3  # a raw 2D NMR data set fits; a whole disk image does not
_SHA = re.compile(r"^[0-9a-f]{64}$")


@dataclass
class Stored:
    sha256: str
    size: int
    path: Path
    new: bool


def store_dir(nb_or_path) -> Path:
    """``<notebook file>.files`` for a Notebook or a notebook path."""
    p = Path(getattr(nb_or_path, "path", nb_or_path))
    return p.with_name(p.name + ".files")


def blob_path(root: Path, sha256: str) -> Path:
    if not _SHA.match(sha256 or ""):
        raise RecordError(f"'{sha256}' is not a SHA-256 digest", "give the 64 hex digits of the attachment's hash")
    return root / "sha256" / sha256[:2] / sha256[2:]


def sha256_of(path: Path) -> tuple[str, int]:
    h = hashlib.sha256()
    size = 0
    with path.open("rb") as fh:
        while chunk := fh.read(CHUNK):
            h.update(chunk)
            size += len(chunk)
    return h.hexdigest(), size


def put_file(root: Path, src: Path) -> Stored:
    """Copy `src` into the store (once per content); the copy is hashed as it is written."""
    src = Path(src)
    if not src.is_file():
        raise RecordError(f"no file {src}", "give the path of the file to attach")
    try:
        size = src.stat().st_size
    except OSError as exc:
        raise StoreError(f"cannot read {src}: {exc.strerror}", "check the file's permissions") from None
    if size > MAX_BYTES:
        raise RecordError(
            f"{src.name} is {size / 2**30:.1f} GB, over the {MAX_BYTES // 2**30} GB limit for an attachment",
            "keep the raw data elsewhere and attach a processed or zipped copy",
        )
    tmpdir = root / "tmp"
    try:
        tmpdir.mkdir(parents=True, exist_ok=True)
        fd, tmpname = tempfile.mkstemp(dir=tmpdir, prefix="incoming-")
    except OSError as exc:
        raise StoreError(
            f"cannot write the attachment store {root}: {exc.strerror}", "check the folder beside the notebook is writable"
        ) from None
    tmp = Path(tmpname)
    h = hashlib.sha256()
    n = 0
    try:
        with os.fdopen(fd, "wb") as out, src.open("rb") as fh:
            while chunk := fh.read(CHUNK):
                h.update(chunk)
                out.write(chunk)
                n += len(chunk)
            out.flush()
            os.fsync(out.fileno())
        digest = h.hexdigest()
        dest = blob_path(root, digest)
        if dest.exists():
            have, _ = sha256_of(dest)
            if have == digest:
                tmp.unlink()
                return Stored(digest, n, dest, False)
            # A damaged copy under this name: keep it for inspection, store the good one.
            dest.rename(dest.with_name(dest.name + f".damaged-{_stamp()}"))
        dest.parent.mkdir(parents=True, exist_ok=True)
        os.chmod(tmp, 0o444)  # read-only, never executable
        os.replace(tmp, dest)
        return Stored(digest, n, dest, True)
    except OSError as exc:
        raise StoreError(
            f"cannot copy {src.name} into the attachment store: {exc.strerror}", "check free space and permissions"
        ) from None
    finally:
        if tmp.exists():
            try:
                tmp.unlink()
            except OSError:
                pass


def _stamp() -> str:
    return _dt.datetime.now(_dt.UTC).strftime("%Y%m%dT%H%M%SZ")


def safe_name(name: str) -> str:
    """The file's own name without any folder part or control characters."""
    base = Path(str(name).replace("\\", "/")).name
    base = "".join(ch for ch in base if ch.isprintable()).strip()
    return base[:200] or "attachment"


def attach(
    nb, run_id: str, file: str | os.PathLike, author: str | None = None, reason: str | None = None, name: str | None = None
) -> dict:
    """Copy `file` into the store and record it in a new version of the run."""
    from .records import Attachment

    src = Path(file)
    meta = nb.run_meta(run_id)  # NotFoundError before any copying
    stored = put_file(store_dir(nb), src)
    fname = safe_name(name or src.name)
    media_type = mimetypes.guess_type(fname)[0]
    run = nb.get_run(run_id)
    if any(a.sha256 == stored.sha256 and a.name == fname for a in run.attachments):
        raise RecordError(f"{fname} (sha256 {stored.sha256[:12]}…) is already attached to {run_id}", "nothing was changed")
    att = Attachment(
        name=fname,
        sha256=stored.sha256,
        size=stored.size,
        media_type=media_type,
        added=_dt.datetime.now(_dt.UTC).isoformat(timespec="seconds"),
    )
    run = run.model_copy(update={"attachments": [*run.attachments, att]})
    res = nb.save_run(run, meta["version"], author=author, reason=reason or f"attached {fname}")
    return {
        "run_id": res.run_id,
        "version": res.version,
        "name": fname,
        "sha256": stored.sha256,
        "size": stored.size,
        "media_type": media_type,
        "stored_new": stored.new,
    }


def require_stored(nb, run, previous=None) -> None:
    """Refuse a run whose attachment records name files this notebook does not hold.

    A record without its file would fail 'verify' for good and could never be backed up
    whole, so it is refused when it arrives (a run file, an import, an edit), before
    anything is written. Records the run already had are not asked again: a file damaged
    later is verify's to report, and must not block an unrelated edit.
    """
    known = {a.sha256 for a in previous.attachments} if previous is not None else set()
    root = store_dir(nb)
    for att in run.attachments:
        if att.sha256 in known:
            continue
        path = blob_path(root, att.sha256)
        try:
            size = path.stat().st_size if path.is_file() else None
        except OSError:
            size = None
        if size is None or size != att.size:
            what = (
                "is not in this notebook's attachment store"
                if size is None
                else f"is {size} bytes in the store, the record says {att.size}"
            )
            raise RecordError(
                f"run {run.id or run.title!r}: attachment {att.name} (sha256 {att.sha256[:12]}…) {what}; "
                "a record cannot name a file the notebook does not hold",
                "attach the file itself with 'trapbook attach RUN FILE' (or import an RO-Crate, which carries the files), "
                "or drop the attachment record; nothing was saved",
            )


def read_verified(root: Path, sha256: str, expected_size: int | None = None) -> bytes:
    """The bytes of a stored file, or a StoreError if they no longer match their hash."""
    path = blob_path(root, sha256)
    if not path.exists():
        raise NotFoundError(f"attachment {sha256[:12]}… is missing from {root}", "restore the store folder from a backup")
    data = path.read_bytes()
    have = hashlib.sha256(data).hexdigest()
    if have != sha256 or (expected_size is not None and len(data) != expected_size):
        raise StoreError(
            f"attachment {sha256[:12]}… has changed on disk (its bytes no longer match their SHA-256)",
            "restore it from a backup; 'trapbook verify' lists every damaged file",
        )
    return data


def check_blob(root: Path, sha256: str, size: int | None = None) -> str | None:
    """None when the stored file is whole; otherwise what is wrong, in words."""
    try:
        path = blob_path(root, sha256)
    except TrapbookError as exc:
        return exc.message
    if not path.exists():
        return "file is missing from the attachment store"
    try:
        have, n = sha256_of(path)
    except OSError as exc:
        return f"file cannot be read ({exc.strerror})"
    if have != sha256:
        return "file's bytes no longer match its SHA-256"
    if size is not None and n != size:
        return f"file is {n} bytes, the record says {size}"
    return None


def export_file(nb, run_id: str, sha_or_name: str, dest: str | os.PathLike) -> Path:
    """Write a verified copy of one attachment of a run to `dest` (a file or folder).

    The bytes are streamed in chunks and hashed on the way, so a raw data set of any
    size needs no more memory than one chunk; a copy whose hash or size does not come
    out as recorded is deleted again and reported, never left behind as if good.
    """
    run = nb.get_run(run_id)
    att = next(
        (
            a
            for a in run.attachments
            if a.sha256 == sha_or_name or a.sha256.startswith(sha_or_name) and len(sha_or_name) >= 8 or a.name == sha_or_name
        ),
        None,
    )
    if att is None:
        raise NotFoundError(f"run {run_id} has no attachment '{sha_or_name}'", "list them with 'trapbook show RUN --json'")
    root = store_dir(nb)
    src = blob_path(root, att.sha256)
    if not src.exists():
        raise NotFoundError(f"attachment {att.sha256[:12]}… is missing from {root}", "restore the store folder from a backup")
    out = _export_target(Path(dest), str(dest), att.name)
    try:
        fh = open(out, "xb")  # never overwrite, even if the name appears meanwhile
    except OSError as exc:
        raise RecordError(
            f"cannot write {out}: {exc.strerror}", "choose a folder that exists and that you can write to"
        ) from None
    try:
        with fh, src.open("rb") as inp:
            digest, size = _stream_hashed(inp, fh)
    except OSError as exc:
        out.unlink(missing_ok=True)
        raise RecordError(f"cannot write {out}: {exc.strerror}", "check free space, then try again") from None
    if digest != att.sha256 or size != att.size:
        out.unlink(missing_ok=True)
        raise StoreError(
            f"attachment {att.sha256[:12]}… has changed on disk (its bytes no longer match their SHA-256); no copy was written",
            "restore it from a backup; 'trapbook verify' lists every damaged file",
        )
    return out


def _export_target(out: Path, given: str, name: str) -> Path:
    """The file an export writes: `out` itself, or the attachment's own name inside folder `out`."""
    if given.endswith(("/", os.sep)) and not out.exists():  # 'out/' names a folder to make, not a file
        try:
            out.mkdir(parents=True)
        except OSError as exc:
            raise RecordError(f"cannot create folder {out}: {exc.strerror}", "choose a writable folder") from None
    if out.is_dir():
        out = out / safe_name(name)
    if out.exists():
        raise RecordError(f"{out} already exists", "choose a new file name")
    return out


def _stream_hashed(inp, out) -> tuple[str, int]:
    """Copy one open file to another chunk by chunk; the SHA-256 and size of what was copied."""
    h = hashlib.sha256()
    n = 0
    while chunk := inp.read(CHUNK):
        h.update(chunk)
        out.write(chunk)
        n += len(chunk)
    out.flush()
    return h.hexdigest(), n


__all__ = [
    "attach",
    "store_dir",
    "blob_path",
    "put_file",
    "read_verified",
    "check_blob",
    "export_file",
    "sha256_of",
    "safe_name",
    "require_stored",
]
