"""A pool of read-only notebooks kept in a file of this user's cache, for the next process.

Reading twenty members' structure lists costs more than reading one notebook's (every
member's copy of a shared structure is read to find that it is shared), and a one-shot
`trapbook --group ... search` starts with nothing in memory. A pool made from notebooks
this process cannot write (a group's members, a read-only session) is therefore also
written to a file in the user's cache folder, never beside or into a notebook. Its name
is made of each notebook's file and search token (a fresh random value on every write a
search depends on) and the fingerprint scheme, so a file is found only while every one of
those notebooks is unchanged; its contents are checked against the same values again on
reading. A notebook that can be written (saved to at the bench, pool changing each time)
keeps its pool in memory only.

A file that cannot be read back as a pool of those notebooks is not used: the pool is
read from the notebooks instead and the file replaced, so what a search answers always
comes from the notebooks as they are.
"""

from __future__ import annotations

import atexit
import hashlib
import json
import os
import time
import warnings
import zipfile
from pathlib import Path

import numpy as np

from .structure_pool import COLUMNS, Pool, Share

FORMAT = 1
_KEEP_FILES = 8  # pool files kept; the oldest go first


def folder() -> Path:
    """Where pool files are kept: $TRAPBOOK_CACHE_DIR, else the user's cache folder for trapbook."""
    given = os.environ.get("TRAPBOOK_CACHE_DIR")
    if given:
        return Path(given).expanduser() / "structure-pools"
    import platformdirs

    return Path(platformdirs.user_cache_dir("trapbook", appauthor=False)) / "structure-pools"


def _name(sources: list[tuple]) -> str:
    from .chemistry import fingerprints

    stamp = json.dumps([FORMAT, fingerprints.SCHEME, [[key, token] for _, key, token in sources]])
    return "pool-" + hashlib.sha256(stamp.encode()).hexdigest()[:32] + ".npz"


def kept_on_disk(sources: list[tuple]) -> bool:
    """Only pools of notebooks this process cannot write, each with a search token, go to a file."""
    return bool(sources) and all(token and getattr(nb, "read_only", False) for nb, _, token in sources)


def load(sources: list[tuple]) -> Pool | None:
    """The pool kept for exactly these (notebook, file key, token) sources, or None if there is none usable."""
    path = folder() / _name(sources)
    if not path.is_file():
        return None
    try:
        with np.load(path, allow_pickle=False) as data:
            return _pool_from(dict(data.items()), sources)
    except (OSError, ValueError, KeyError, zipfile.BadZipFile):  # unreadable: not used; read from the notebooks
        return None


def _pool_from(data: dict, sources: list[tuple]) -> Pool | None:
    """The pool the arrays describe, if they describe one of these sources (else None)."""
    keys = [str(k) for k in data["keys"]]
    tokens = [str(t) for t in data["tokens"]]
    if int(data["format"]) != FORMAT or keys != [k for _, k, _ in sources] or tokens != [t for _, _, t in sources]:
        return None
    smiles = bytes(data["smiles"]).decode("utf-8").split("\n") if len(data["smiles"]) else []
    shares: dict[str, Share] = {}
    lent = 0
    for i, (key, token) in enumerate(zip(keys, tokens)):
        ids, rows, lends = data[f"ids{i}"], data[f"rows{i}"], data[f"lends{i}"]
        if not (len(ids) == len(rows) == len(lends)) or (len(rows) and (rows.min() < 0 or rows.max() >= len(smiles))):
            return None
        shares[key] = Share(key, token, ids.astype(np.int64), rows.astype(np.int64), lends.astype(bool))
        lent += int(lends.sum())
    if lent != len(smiles):  # each distinct structure lent by exactly one notebook
        return None
    pool = Pool(shares, smiles)
    for column in COLUMNS:
        bits = data.get(f"bits_{column}")
        if bits is not None:
            if bits.dtype != np.uint64 or bits.shape[0] != len(smiles):
                return None
            pool.bits[column] = bits
    return pool


def save(pool: Pool, sources: list[tuple]) -> None:
    """Write the pool for these sources (whole, then renamed into place: a reader never sees half a file)."""
    _write(_arrays(pool, sources), folder() / _name(sources))


def _arrays(pool: Pool, sources: list[tuple]) -> dict[str, np.ndarray]:
    """What the file holds, taken from the pool now (a later query may add a column to the pool)."""
    arrays = {
        "format": np.array(FORMAT),
        "keys": np.array([k for _, k, _ in sources]),
        "tokens": np.array([t for _, _, t in sources]),
        "smiles": np.frombuffer("\n".join(pool.smiles).encode("utf-8"), dtype=np.uint8),
    }
    for i, share in enumerate(pool.shares[k] for _, k, _ in sources):
        arrays.update({f"ids{i}": share.ids, f"rows{i}": share.rows, f"lends{i}": share.lends})
    arrays.update({f"bits_{c}": b for c, b in list(pool.bits.items())})
    return arrays


def _write(arrays: dict[str, np.ndarray], path: Path) -> None:
    path.parent.mkdir(parents=True, exist_ok=True, mode=0o700)
    part = path.with_name(f"{path.stem}.{os.getpid()}.part")
    with open(part, "wb") as fh:
        np.savez(fh, **arrays)
    os.replace(part, path)
    _prune(path.parent)


def save_or_warn(pool: Pool, sources: list[tuple]) -> None:
    """`save`, or a warning that says why not: the search's answer stands either way (it came from
    the notebooks), only the next process will read them again."""
    _write_or_warn(_arrays(pool, sources), folder() / _name(sources))


def _write_or_warn(arrays: dict[str, np.ndarray], path: Path) -> None:
    try:
        _write(arrays, path)
    except OSError as exc:
        warnings.warn(
            f"the structure pool could not be kept in {path.parent} ({exc}); the next search reads the notebooks "
            "again. Set TRAPBOOK_CACHE_DIR to a folder you can write.",
            stacklevel=2,
        )


_PENDING: dict[str, tuple[Pool, list[tuple]]] = {}


def save_later(pool: Pool, sources: list[tuple]) -> None:
    """Keep the pool to be written by `settle`: when the group is closed or the process ends.

    The search that read the pool answers without writing a file of several megabytes that
    only the next process needs (a file written at once, or by a thread beside the search,
    costs the search its time). Written at the end it also holds every bit string the
    process read meanwhile."""
    _PENDING[_name(sources)] = (pool, list(sources))


def settle() -> None:
    """Write every pool kept for writing (`save_or_warn` each: a file that cannot be written is said)."""
    while _PENDING:
        _, (pool, sources) = _PENDING.popitem()
        save_or_warn(pool, sources)


atexit.register(settle)


def _prune(where: Path) -> None:
    """Keep the newest pool files only (each notebook change makes a new one), and no stale halves."""
    files = sorted(where.glob("pool-*.npz"), key=lambda p: p.stat().st_mtime, reverse=True)
    halves = [p for p in where.glob("pool-*.part") if time.time() - p.stat().st_mtime > 600]
    for old in files[_KEEP_FILES:] + halves:
        old.unlink(missing_ok=True)
