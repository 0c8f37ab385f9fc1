"""Writing a file so that a reader never sees half of it: the one "write beside, then rename".

An export, a report, a backup or a copied attachment is first written to NAME.part in
the same folder, flushed to disk, and only then renamed over NAME (a rename within one
folder is atomic on POSIX and Windows). A crash or a full disk leaves the old file (or
none) and a stray .part, never a truncated NAME.
"""

from __future__ import annotations

import contextlib
import os
from collections.abc import Iterator
from pathlib import Path

from .errors import ExchangeError, TrapbookError


def part_path(path: Path) -> Path:
    """Where `path` is written before it is renamed into place."""
    return path.with_name(path.name + ".part")


@contextlib.contextmanager
def atomic_target(path: str | os.PathLike) -> Iterator[Path]:
    """Yield the .part path to write; on success it is synced and renamed to `path`.

    For writers that need a path of their own (SQLite's backup, a zip writer, a file copy).
    If the block raises, the .part is removed and the error passes on unchanged.
    """
    target = Path(path)
    part = part_path(target)
    for stale in (part, Path(str(part) + "-journal")):  # left by an earlier crash
        if stale.exists():
            stale.unlink()
    try:
        yield part
        fd = os.open(part, os.O_RDONLY)  # read-only is enough for fsync, and works on a 0444 copy
        try:
            os.fsync(fd)
        finally:
            os.close(fd)
        os.replace(part, target)
    except BaseException:
        with contextlib.suppress(OSError):
            part.unlink()
        raise


def write_atomic(path: str | os.PathLike, data: str | bytes, error: type[TrapbookError] = ExchangeError) -> Path:
    """Write `data` (text as UTF-8) to `path` through a .part file; an OSError becomes `error`."""
    target = Path(path)
    try:
        with atomic_target(target) as part:
            if isinstance(data, str):
                part.write_text(data, encoding="utf-8")
            else:
                part.write_bytes(data)
    except OSError as exc:
        raise error(f"cannot write {target}: {exc.strerror or exc}", "choose a writable path with enough space") from None
    return target
