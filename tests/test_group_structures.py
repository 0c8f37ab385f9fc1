"""Structure searches over a group: the members' distinct structures screened once, together.

Outside references: each member searched alone (its own notebook, no group), RDKit's
HasSubstructMatch and Morgan TanimotoSimilarity run brute-force over the structures read
with plain SQL (sqlite3) from each file, and SHA-256 (hashlib) of every member file before
and after. Sources: docs/sources.md, "Group structure search".
"""

from __future__ import annotations

import copy
import hashlib
import shutil
import sqlite3
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest
from rdkit import Chem, DataStructs
from rdkit.Chem import rdFingerprintGenerator

from samples import MINIMAL_RUN
from trapbook import search as S
from trapbook import search_structures, structure_pool, structure_pool_file
from trapbook.chemistry import fingerprints
from trapbook.errors import TrapbookError
from trapbook.group import Group
from trapbook.search_query import query_from_options
from trapbook.store import Notebook

TMS_TRIFLATE = "C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F"
METHYL_TRIFLATE = "Cc1ccc(OS(=O)(=O)C(F)(F)F)c([Si](C)(C)C)c1"
METHOXY_TRIFLATE = "COc1ccc(OS(=O)(=O)C(F)(F)F)c([Si](C)(C)C)c1"
FURAN, METHYLFURAN, ANTHRACENE = "c1ccoc1", "Cc1ccco1", "c1ccc2cc3ccccc3cc2c1"
EPOXYNAPHTHALENE = "C1=CC2OC1c1ccccc12"  # the furan–benzyne [4+2] adduct, 1,4-dihydro-1,4-epoxynaphthalene (C10H8O)
TRIPTYCENE = "c1ccc2c(c1)C1c3ccccc3C2c2ccccc21"  # the benzyne–anthracene adduct (C20H14)
# (precursor, trap, product or None) of each member's runs: the members share most structures.
MEMBERS = {
    "alice": [(TMS_TRIFLATE, FURAN, EPOXYNAPHTHALENE), (TMS_TRIFLATE, ANTHRACENE, None), (METHYL_TRIFLATE, FURAN, None)],
    "bob": [(TMS_TRIFLATE, FURAN, EPOXYNAPHTHALENE), (METHYL_TRIFLATE, METHYLFURAN, None), (METHOXY_TRIFLATE, FURAN, None)],
    "carol": [(METHOXY_TRIFLATE, ANTHRACENE, None), (TMS_TRIFLATE, METHYLFURAN, None), (METHYL_TRIFLATE, FURAN, None)],
}
QUERIES = [
    dict(substructure=FURAN),
    dict(substructure="C(F)(F)F"),
    dict(substructure="[#6]1~[#6]~[#6]~[#6]~[#6]~[#6]~1"),
    dict(substructure="c1ccc2cc3ccccc3cc2c1"),
    dict(similar=METHYLFURAN, min_similarity=0.3),
    dict(similar=TMS_TRIFLATE, min_similarity=0.5),
]


def _run(precursor: str, trap: str, product: str | None, title: str) -> dict:
    run = copy.deepcopy(MINIMAL_RUN)
    run["title"] = title
    for line in run["lines"]:
        if line["role"] == "precursor":
            line["smiles"] = precursor
        if line["role"] == "trap":
            line.update(smiles=trap, name=f"trap {trap}")
            line.pop("density", None)
    run["steps"][0]["add"] = [run["lines"][0]["name"], f"trap {trap}", "THF"]
    if product:
        run["lines"].append({"role": "product", "name": "adduct", "smiles": product})
    return run


@pytest.fixture(autouse=True)
def pool_files(tmp_path, monkeypatch) -> Path:
    """Pool files of read-only notebooks go to this test's own cache folder."""
    monkeypatch.setenv("TRAPBOOK_CACHE_DIR", str(tmp_path / "cache"))
    return tmp_path / "cache" / "structure-pools"


@pytest.fixture(scope="module")
def lab(tmp_path_factory) -> Path:
    folder = tmp_path_factory.mktemp("structures")
    for member, runs in MEMBERS.items():
        with Notebook.create(folder / f"{member}.sqlite") as nb:
            for i, (p, t, prod) in enumerate(runs):
                nb.add_run(_run(p, t, prod, f"{member} run {i + 1}"))
    for p in folder.glob("*.sqlite-shm"):
        p.unlink()
    return folder


def _files(folder: Path) -> list[Path]:
    return [folder / f"{m}.sqlite" for m in MEMBERS]


def _sha_all(folder: Path) -> dict[str, str]:
    """SHA-256 of each notebook and its write-ahead log (an absent log hashes as empty bytes)."""
    out = {}
    for p in sorted(folder.glob("*.sqlite")):
        wal = p.with_name(p.name + "-wal")
        out[p.name] = hashlib.sha256(p.read_bytes()).hexdigest()
        out[wal.name] = hashlib.sha256(wal.read_bytes() if wal.exists() else b"").hexdigest()
    return out


def _sql(path: Path, query: str) -> list[tuple]:
    conn = sqlite3.connect(f"file:{path}?mode=ro", uri=True)
    try:
        return conn.execute(query).fetchall()
    finally:
        conn.close()


def _alone(path: Path, options: dict) -> set[str]:
    """The member searched on its own notebook, nothing kept from any other search."""
    S.clear_caches()
    with Notebook.open(path) as nb:
        return {h.run_id for h in S.search(nb, query_from_options(**options))}


def _brute(path: Path, options: dict) -> set[str]:
    """Source: RDKit HasSubstructMatch / Morgan (radius 2, 2048 bits) TanimotoSimilarity over every
    stored structure, run ids from the structure links, all read with plain SQL."""
    links = _sql(path, "SELECT rs.run_id, s.smiles FROM run_structures rs JOIN structures s ON s.id = rs.structure_id")
    if "substructure" in options:
        q = Chem.MolFromSmarts(options["substructure"])
        return {rid for rid, smi in links if Chem.MolFromSmiles(smi).HasSubstructMatch(q)}
    gen = rdFingerprintGenerator.GetMorganGenerator(radius=2, fpSize=2048)
    ref = gen.GetFingerprint(Chem.MolFromSmiles(options["similar"]))
    return {
        rid
        for rid, smi in links
        if DataStructs.TanimotoSimilarity(ref, gen.GetFingerprint(Chem.MolFromSmiles(smi))) >= options["min_similarity"]
    }


def _tanimoto_by_smiles(smiles, query: str) -> dict[str, float]:
    """Source: RDKit Morgan (radius 2, 2048 bits) TanimotoSimilarity of each SMILES with the query."""
    gen = rdFingerprintGenerator.GetMorganGenerator(radius=2, fpSize=2048)
    ref = gen.GetFingerprint(Chem.MolFromSmiles(query))
    return {s: round(DataStructs.TanimotoSimilarity(ref, gen.GetFingerprint(Chem.MolFromSmiles(s))), 6) for s in smiles}


def _distinct_smiles(paths: list[Path]) -> tuple[int, int]:
    """(structure rows summed over the files, distinct SMILES among them), by plain SQL."""
    rows = [smi for p in paths for (smi,) in _sql(p, "SELECT smiles FROM structures")]
    return len(rows), len(set(rows))


@pytest.mark.parametrize("options", QUERIES, ids=lambda o: next(iter(o.values())))
def test_group_structure_search_is_the_union_of_each_member_alone(lab, options):
    before = _sha_all(lab)
    alone = {(m, rid) for m, p in zip(MEMBERS, _files(lab)) for rid in _alone(p, options)}
    brute = {(m, rid) for m, p in zip(MEMBERS, _files(lab)) for rid in _brute(p, options)}
    S.clear_caches()
    with Group.open(_files(lab)) as group:
        hits = group.search(query_from_options(**options))
    assert {(h["member"], h["run_id"]) for h in hits} == alone == brute
    assert alone and len({m for m, _ in alone}) >= 2  # a real union: more than one member answers
    assert all(h["ref"] == f"{h['member']}:{h['run_id']}" for h in hits)
    assert _sha_all(lab) == before


def test_each_distinct_smiles_is_screened_and_matched_once(lab, monkeypatch):
    total, distinct = _distinct_smiles(_files(lab))
    assert total > distinct  # the members do share structures
    asked: list[list[str]] = []
    real = fingerprints.matching_indices

    def spy(smiles, query_text, time_limit_s):
        asked.append(list(smiles))
        return real(smiles, query_text, time_limit_s)

    monkeypatch.setattr(fingerprints, "matching_indices", spy)
    S.clear_caches()
    with Group.open(_files(lab)) as group:
        members = [m.nb for m in group.readable()]
        # screen=False hands every structure of the pool to the matcher: each distinct SMILES once
        stats = [search_structures.substructure_ids(nb, "[#6]", screen=False)[1] for nb in members]
        assert [s["structures"] for s in stats] == [distinct] * 3 and [s["screened_in"] for s in stats] == [distinct] * 3
        assert len(asked) == 1 and len(asked[0]) == len(set(asked[0])) == distinct
        asked.clear()
        group.search(query_from_options(substructure=FURAN))  # the screened way: one matcher call for the group
        assert len(asked) == 1 and len(asked[0]) == len(set(asked[0]))
        assert set(asked[0]) <= {smi for p in _files(lab) for (smi,) in _sql(p, "SELECT smiles FROM structures")}


def test_the_time_limit_holds_for_the_whole_group(tmp_path):
    # Source: see docs/sources.md, Search, "A costly pattern" (measured here, minutes per match).
    branched = "OC" + "C(C)(C)" * 22 + "C"
    pattern = "*" + "~*(~*)(~*)" * 22 + "~[#8]~[#1]"
    paths = []
    for k in range(3):  # each member a different costly molecule: nothing is shared to skip
        run = _run(TMS_TRIFLATE, FURAN, branched.replace("OC", "O" + "C" * (k + 1), 1), f"member {k}")
        paths.append(tmp_path / f"m{k}.sqlite")
        with Notebook.create(paths[-1]) as nb:
            nb.add_run(run)
    S.clear_caches()
    with Group.open(paths) as group:
        start = time.monotonic()
        with pytest.raises(TrapbookError) as info:
            group.search(query_from_options(substructure=pattern, time_limit_s=1))
        took = time.monotonic() - start
    assert took < 4  # one limit for the group, plus the time to stop the worker; not one per member
    assert "stopped after 1 s" in info.value.message


def test_a_failing_member_is_left_out_of_the_pool(lab, tmp_path):
    folder = tmp_path / "lab"
    folder.mkdir()
    for p in _files(lab):
        shutil.copy(p, folder / p.name)
    conn = sqlite3.connect(folder / "carol.sqlite")
    conn.execute("UPDATE versions SET data = replace(data, 'carol', 'Carol') WHERE version = 1")
    conn.commit()
    conn.close()
    options = dict(substructure="C(F)(F)F")
    S.clear_caches()
    with Group.open(_files(folder)) as group:
        assert [m.label for m in group.failing()] == ["carol"]
        hits = {(h["member"], h["run_id"]) for h in group.search(query_from_options(**options))}
        alice = group.member("alice").nb
        stats = search_structures.substructure_ids(alice, "[#6]", screen=False)[1]
    good = [folder / "alice.sqlite", folder / "bob.sqlite"]
    assert hits == {(p.stem, rid) for p in good for rid in _alone(p, options)} and hits
    assert stats["structures"] == _distinct_smiles(good)[1]  # carol's structures are not even read


def test_a_member_written_elsewhere_is_read_again(lab, tmp_path):
    folder = tmp_path / "lab"
    folder.mkdir()
    for p in _files(lab):
        shutil.copy(p, folder / p.name)
    substructure = dict(substructure=ANTHRACENE)
    similar = dict(similar=METHOXY_TRIFLATE, min_similarity=0.5)
    S.clear_caches()
    with Group.open(_files(folder)) as group:
        group.search(query_from_options(**substructure))  # the pool is read, with its screen bits
        with Notebook.open(folder / "bob.sqlite") as bob:  # bob saves at the bench meanwhile
            data = bob.get_run("TB-0001").to_json_dict()
            data["lines"].append({"role": "product", "name": "triptycene", "smiles": TRIPTYCENE})  # new in every member
            bob.save_run(data, 1, reason="second product")
        reindexed = subprocess.run(  # in another process: structure ids handed out afresh, those after the new one moved up
            [sys.executable, "-m", "trapbook", "--db", str(folder / "bob.sqlite"), "reindex"], capture_output=True, timeout=120
        )
        assert reindexed.returncode == 0, reindexed.stderr
        carol = group.member("carol").nb
        mine = search_structures.similar_ids(carol, METHOXY_TRIFLATE, 0.0)  # carol asks before bob, for every value
        hits = {(h["member"], h["run_id"]) for h in group.search(query_from_options(**substructure))}
        sims = {(h["member"], h["run_id"]) for h in group.search(query_from_options(**similar))}
    names = dict(_sql(folder / "carol.sqlite", "SELECT id, smiles FROM structures"))
    assert {names[sid]: round(v, 6) for sid, v in mine.items()} == _tanimoto_by_smiles(names.values(), METHOXY_TRIFLATE)
    for got, options in ((hits, substructure), (sims, similar)):
        assert got == {(m, rid) for m, p in zip(MEMBERS, _files(folder)) for rid in _brute(p, options)}
    assert ("carol", "TB-0001") in sims  # carol's methoxy precursor, whose bits bob's file lends the pool


def test_the_pool_reads_bit_strings_of_the_width_fingerprints_writes():
    # common practice, no source: the pool's fixed matrix width must be the one the fingerprints are made with
    assert structure_pool._WORDS * 64 == fingerprints.PATTERN_BITS == fingerprints.MORGAN_BITS
    assert np.dtype(np.uint64).itemsize * 8 == 64


def test_bits_of_another_fingerprint_scheme_are_made_again(lab, tmp_path):
    folder = tmp_path / "lab"
    folder.mkdir()
    for p in _files(lab):
        shutil.copy(p, folder / p.name)
    conn = sqlite3.connect(folder / "bob.sqlite")  # as if indexed by another RDKit: its stored bits cannot be trusted
    conn.execute("UPDATE structures SET scheme = 'an older scheme', pattern = zeroblob(256), morgan = zeroblob(8)")
    conn.commit()
    conn.close()
    for options in (dict(substructure=FURAN), dict(similar=METHOXY_TRIFLATE, min_similarity=0.5)):
        want = {(m, rid) for m, p in zip(MEMBERS, _files(folder)) for rid in _brute(p, options)}
        assert {("bob", rid) for rid in _alone(folder / "bob.sqlite", options)} == {w for w in want if w[0] == "bob"}
        for order in (["bob", "alice", "carol"], ["alice", "bob", "carol"]):  # bob lends every row, or some
            S.clear_caches()
            with Group.open([folder / f"{m}.sqlite" for m in order]) as group:
                assert {(h["member"], h["run_id"]) for h in group.search(query_from_options(**options))} == want


def test_the_next_process_reads_the_pool_file_not_the_members(lab, pool_files, monkeypatch):
    before = _sha_all(lab)
    members_folder = sorted(p.name for p in lab.iterdir())
    options = dict(substructure=FURAN)
    want = {(m, rid) for m, p in zip(MEMBERS, _files(lab)) for rid in _brute(p, options)}
    S.clear_caches()
    with Group.open(_files(lab)) as group:
        assert {(h["member"], h["run_id"]) for h in group.search(query_from_options(**options))} == want
    assert len(list(pool_files.glob("pool-*.npz"))) == 1  # in the cache folder, not beside the notebooks
    reads = []
    real = structure_pool.read_pool
    monkeypatch.setattr(structure_pool, "read_pool", lambda *a: reads.append(a) or real(*a))
    S.clear_caches()  # as a new process starts
    with Group.open(_files(lab)) as group:
        assert {(h["member"], h["run_id"]) for h in group.search(query_from_options(**options))} == want
        similar = dict(similar=METHYLFURAN, min_similarity=0.3)  # a bit string the file did not hold yet: read, then kept
        assert {(h["member"], h["run_id"]) for h in group.search(query_from_options(**similar))} == {
            (m, rid) for m, p in zip(MEMBERS, _files(lab)) for rid in _brute(p, similar)
        }
    assert reads == []
    assert _sha_all(lab) == before and sorted(p.name for p in lab.iterdir()) == members_folder


def test_a_pool_file_that_does_not_fit_is_not_used(lab, pool_files, tmp_path):
    folder = tmp_path / "lab"
    folder.mkdir()
    for p in _files(lab):
        shutil.copy(p, folder / p.name)
    options = dict(substructure="C(F)(F)F")
    want = {(m, rid) for m, p in zip(MEMBERS, _files(folder)) for rid in _brute(p, options)}
    S.clear_caches()
    with Group.open(_files(folder)) as group:
        group.search(query_from_options(**options))
    (kept,) = pool_files.glob("pool-*.npz")
    with np.load(kept) as data:
        arrays = dict(data.items())
    arrays["bits_pattern"] = np.zeros_like(arrays["bits_pattern"])  # every bit cleared: nothing would pass the screen
    arrays["rows0"] = arrays["rows0"] + len(arrays["smiles"])  # and rows outside the pool: refused on reading
    with open(kept, "wb") as fh:
        np.savez(fh, **arrays)
    S.clear_caches()
    with Group.open(_files(folder)) as group:
        assert {(h["member"], h["run_id"]) for h in group.search(query_from_options(**options))} == want
    kept.write_bytes(b"not a pool at all")
    S.clear_caches()
    with Group.open(_files(folder)) as group:
        assert {(h["member"], h["run_id"]) for h in group.search(query_from_options(**options))} == want
    with np.load(kept) as data:  # replaced by one read from the notebooks
        assert int(data["format"]) == structure_pool_file.FORMAT


def test_a_notebook_that_can_be_written_keeps_no_pool_file(lab, pool_files, tmp_path):
    path = tmp_path / "mine.sqlite"
    shutil.copy(lab / "alice.sqlite", path)
    S.clear_caches()
    with Notebook.open(path) as nb:
        assert {h.run_id for h in S.search(nb, query_from_options(substructure=FURAN))} == _brute(path, dict(substructure=FURAN))
    assert not pool_files.exists() or not list(pool_files.iterdir())


def test_a_cache_folder_that_cannot_be_written_is_said_and_the_answer_stands(lab, tmp_path, monkeypatch):
    blocker = tmp_path / "not-a-folder"
    blocker.write_text("a file where the cache folder would go")
    monkeypatch.setenv("TRAPBOOK_CACHE_DIR", str(blocker))
    options = dict(substructure=ANTHRACENE)
    S.clear_caches()
    with pytest.warns(UserWarning, match="could not be kept"), Group.open(_files(lab)) as group:  # said by closing at the latest
        hits = {(h["member"], h["run_id"]) for h in group.search(query_from_options(**options))}
    assert hits == {(m, rid) for m, p in zip(MEMBERS, _files(lab)) for rid in _brute(p, options)} != set()
