"""The structure digest (store/structure_digest.py): what it holds, when it is trusted, and that
a pool read through it answers exactly as one read through the SMILES themselves."""

from __future__ import annotations

import hashlib
import shutil
import sqlite3
import struct
from pathlib import Path

import numpy as np
import pytest

from test_group_structures import MEMBERS, QUERIES, _run
from trapbook import search as S
from trapbook import structure_pool
from trapbook.errors import TrapbookError
from trapbook.group import Group, open_member
from trapbook.search_query import query_from_options
from trapbook.store import Notebook, structure_digest
from trapbook.store.schema import MIGRATIONS


@pytest.fixture(autouse=True)
def pool_files(tmp_path, monkeypatch):
    monkeypatch.setenv("TRAPBOOK_CACHE_DIR", str(tmp_path / "cache"))


def _lab(folder: Path) -> list[Path]:
    paths = []
    for member, runs in MEMBERS.items():
        path = folder / f"{member}.sqlite"
        with Notebook.create(path) as nb:
            for i, (p, t, prod) in enumerate(runs):
                nb.add_run(_run(p, t, prod, f"{member} run {i + 1}"))
        paths.append(path)
    return paths


def _entries(path: Path) -> dict[int, bytes]:
    """id → 16-byte key, unpacked from the stored blobs by struct (the layout the module documents)."""
    conn = sqlite3.connect(path)
    try:
        blobs = [b for (b,) in conn.execute("SELECT entries FROM structure_digest")]
    finally:
        conn.close()
    out = {}
    for blob in blobs:
        assert len(blob) % 24 == 0
        for sid, key in struct.iter_unpack("<q16s", blob):
            assert sid not in out
            out[sid] = key
    return out


def _member(path: Path):
    """The notebook opened as a group opens a member: read-only, no migration."""
    from contextlib import closing

    return closing(open_member(path))


def _sha(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def _sql(path: Path, query: str, args=()) -> list[tuple]:
    conn = sqlite3.connect(path)
    try:
        rows = conn.execute(query, args).fetchall()
        conn.commit()
        return rows
    finally:
        conn.close()


def _group_answers(paths: list[Path]) -> list[set[tuple]]:
    S.clear_caches()
    with Group.open(paths) as group:
        return [{(h["member"], h["run_id"]) for h in group.search(query_from_options(**q))} for q in QUERIES]


def test_each_stored_structure_has_the_sha256_of_its_smiles_as_key(tmp_path):
    """Source: docs/sources.md "The structure digest": hashlib SHA-256 of each stored canonical SMILES, read by plain SQL."""
    path = _lab(tmp_path)[0]
    stored = dict(_sql(path, "SELECT id, smiles FROM structures"))
    assert _entries(path) == {sid: hashlib.sha256(smi.encode()).digest()[:16] for sid, smi in stored.items()}
    with Notebook.open(path) as nb:
        entries = structure_digest.read(nb.conn)
    assert sorted(entries["id"].tolist()) == sorted(stored)


def test_a_pool_read_through_digests_answers_as_one_read_through_smiles(tmp_path):
    paths = _lab(tmp_path / "with")
    shutil.copytree(tmp_path / "with", tmp_path / "without")
    plain = sorted((tmp_path / "without").glob("*.sqlite"))
    for p in plain:
        _sql(p, "DELETE FROM structure_digest")  # no trigger on the digest itself: the token stands
    with _member(plain[0]) as nb:
        assert structure_digest.read(nb.conn) is None  # so the SMILES are read and keyed in the pool
    assert _group_answers(paths) == _group_answers(sorted(plain, key=lambda p: [x.name for x in paths].index(p.name)))
    assert all(_group_answers(paths))  # every query found something: the comparison is not of empty sets


def test_a_structure_stored_without_its_entry_makes_the_digest_unused_and_is_still_found(tmp_path):
    paths = _lab(tmp_path)
    row = _sql(paths[0], "SELECT inchikey, morgan, pattern, mol, scheme FROM structures LIMIT 1")[0]
    _sql(paths[0], "INSERT INTO structures (smiles, inchikey, morgan, pattern, mol, scheme) VALUES ('C#N', ?,?,?,?,?)", row)
    with _member(paths[0]) as nb:
        assert structure_digest.read(nb.conn) is None
    S.clear_caches()
    with Group.open(paths) as group:
        pool_sizes = []
        original = structure_pool.read_pool

        def counting(sources, column):
            pool = original(sources, column)
            pool_sizes.append(len(pool.smiles))
            return pool

        structure_pool.read_pool = counting
        try:
            group.search(query_from_options(substructure="C#N"))
        finally:
            structure_pool.read_pool = original
    distinct = {s for p in paths for (s,) in _sql(p, "SELECT smiles FROM structures")}
    assert pool_sizes == [len(distinct)]  # the extra row counted: the pool read it through its SMILES


@pytest.mark.parametrize("change", ["UPDATE structures SET inchikey = inchikey", "DELETE FROM structures WHERE id = 1"])
def test_a_changed_or_deleted_structure_row_clears_the_digest(tmp_path, change):
    path = _lab(tmp_path)[0]
    assert _entries(path)
    _sql(path, change)
    assert _entries(path) == {}


def test_reindex_writes_the_digest_again(tmp_path):
    path = _lab(tmp_path)[0]
    with Notebook.open(path) as nb:
        before = dict(nb.conn.execute("SELECT smiles, id FROM structures"))
        S.reindex(nb)
        entries = structure_digest.read(nb.conn)
        after = dict(nb.conn.execute("SELECT id, smiles FROM structures"))
    assert entries is not None and set(after.values()) == set(before)
    assert {int(i): bytes(k) for i, k in zip(entries["id"], entries["key"])} == {
        sid: hashlib.sha256(s.encode()).digest()[:16] for sid, s in after.items()
    }


def test_a_notebook_from_before_the_digest_gets_one_when_opened_for_writing(tmp_path):
    path = _lab(tmp_path)[0]
    want = _entries(path)
    newest = MIGRATIONS[-1][0]
    assert MIGRATIONS[-1][2].__name__ == "_v6_structure_digest"
    _sql(path, "DROP TABLE structure_digest")
    for event in ("delete", "update"):
        _sql(path, f"DROP TRIGGER structure_digest_cleared_on_{event}")
    _sql(path, "DELETE FROM migrations WHERE version = ?", (newest,))
    before = _sha(path)
    S.clear_caches()
    with Group.open([path]) as group:  # a group reads it as it is (not left out as old): no digest, SMILES read
        assert all(m.ok for m in group.members)
        assert group.search(query_from_options(substructure="c1ccoc1"))
    assert _sha(path) == before
    with Notebook.open(path):
        pass
    assert _entries(path) == want


def test_two_keys_that_agree_in_one_half_only_are_refused_not_merged(tmp_path):
    paths = _lab(tmp_path)
    entries = _entries(paths[1])
    victim = next(iter(entries))
    first_word_of_another = next(k for k in _entries(paths[0]).values() if k not in entries.values())[:8]
    forged = {**entries, victim: first_word_of_another + b"\x00" * 8}
    _sql(paths[1], "DELETE FROM structure_digest")
    _sql(
        paths[1],
        "INSERT INTO structure_digest (part, entries) VALUES (0, ?)",
        (b"".join(struct.pack("<q16s", i, k) for i, k in forged.items()),),
    )
    S.clear_caches()
    with Group.open(paths) as group, pytest.raises(TrapbookError) as err:
        group.search(query_from_options(substructure="c1ccoc1"))
    assert "share half a search key" in str(err.value)


def test_keys_worked_out_in_the_pool_equal_the_stored_ones(tmp_path):
    path = _lab(tmp_path)[0]
    rows = _sql(path, "SELECT id, smiles FROM structures")
    keys = structure_digest.keys_of([s.encode() for _, s in rows])
    stored = _entries(path)
    assert np.array_equal(keys, np.frombuffer(b"".join(stored[i] for i, _ in rows), dtype="<u8").reshape(-1, 2))


def test_verify_finds_a_key_that_differs_from_its_smiles(tmp_path):
    from trapbook import integrity

    path = _lab(tmp_path)[0]
    assert not [p for p in integrity.verify_path(path, check_files=False).problems if p.code == "structure-mismatch"]
    entries = _entries(path)
    victim = min(entries)
    forged = {**entries, victim: hashlib.sha256(b"C#N").digest()[:16]}
    _sql(path, "DELETE FROM structure_digest")
    blob = b"".join(struct.pack("<q16s", i, k) for i, k in forged.items())
    _sql(path, "INSERT INTO structure_digest (part, entries) VALUES (0, ?)", (blob,))
    found = [p for p in integrity.verify_path(path, check_files=False).problems if p.code == "structure-mismatch"]
    assert [p.record for p in found] == [f"structure {victim}"]
