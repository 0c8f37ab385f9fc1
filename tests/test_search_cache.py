"""Answers kept between searches must never outlive the data they came from.

Every check compares a search made after a change with RDKit's own matcher run brute-force
over the records as stored at that moment (no fingerprints, no search tables, no kept work).
"""

from __future__ import annotations

import shutil

import pytest
from rdkit import Chem

from trapbook import search as S
from trapbook.search import search
from trapbook.store import Notebook

ANTHRACENE = "c1ccc2cc3ccccc3cc2c1"
FURAN = "c1ccoc1"


def _brute(nb: Notebook, query: str) -> set[str]:
    """Source: RDKit HasSubstructMatch over every structure of every stored, not withdrawn run."""
    q = Chem.MolFromSmarts(query)
    out = set()
    for run in nb.iter_runs(include_withdrawn=False):
        smiles = [ln.smiles for ln in run.lines if ln.role in ("precursor", "trap", "product") and ln.smiles]
        if run.intermediate:
            smiles.append(run.intermediate)
        if any(Chem.MolFromSmiles(s).HasSubstructMatch(q) for s in smiles):
            out.add(run.id)
    return out


def _swap_trap_to_anthracene(nb: Notebook, run_id: str) -> None:
    data = nb.get_run(run_id).to_json_dict()
    for ln in data["lines"]:
        if ln["role"] == "trap":
            old = ln["name"]
            ln.update({"name": "anthracene", "smiles": ANTHRACENE})
            ln.pop("density", None)
    for step in data["steps"]:
        step["add"] = [("anthracene" if a == old else a) for a in step.get("add", [])]
    nb.save_run(data, nb.run_meta(run_id)["version"], reason="trap was anthracene")


@pytest.fixture
def copy_path(demo_notebook_path, tmp_path):
    p = tmp_path / "cache.sqlite"
    shutil.copy(demo_notebook_path, p)
    return p


def test_repeated_search_equals_fresh_search(copy_path):
    with Notebook.open(copy_path) as nb:
        for kwargs in (
            {"substructure": "[#6]1~[#6]~[#6]2~[#6]~[#6]~[#6]~[#6](~[#6]1)~[#6]2"},
            {"similar": "C12=CCCC(CCC1)C2", "min_similarity": 0.3},
            {"text": "oligomers"},
            {"substructure": FURAN, "trap": "furan"},
        ):
            S.clear_caches()
            fresh = [h.to_dict() for h in search(nb, **kwargs)]
            again = [h.to_dict() for h in search(nb, **kwargs)]
            assert fresh == again != []
            # a kept answer is not handed out for the caller to change
            search(nb, **kwargs)[0].matched.append("changed by the caller")
            assert [h.to_dict() for h in search(nb, **kwargs)] == fresh


def test_a_save_on_the_same_connection_is_seen(copy_path):
    with Notebook.open(copy_path) as nb:
        before = {h.run_id for h in search(nb, substructure=ANTHRACENE)}
        assert before == _brute(nb, ANTHRACENE)
        target = sorted(_brute(nb, FURAN) - before)[0]
        _swap_trap_to_anthracene(nb, target)
        after = {h.run_id for h in search(nb, substructure=ANTHRACENE)}
        assert after == _brute(nb, ANTHRACENE) == before | {target}


def test_a_save_from_another_connection_is_seen(copy_path):
    with Notebook.open(copy_path) as reader, Notebook.open(copy_path) as writer:
        before = {h.run_id for h in search(reader, substructure=ANTHRACENE)}
        target = sorted(_brute(reader, FURAN) - before)[0]
        _swap_trap_to_anthracene(writer, target)
        after = {h.run_id for h in search(reader, substructure=ANTHRACENE)}
        assert target in after
        assert after == _brute(reader, ANTHRACENE)
        writer.withdraw_run(target, reason="test")
        assert target not in {h.run_id for h in search(reader, substructure=ANTHRACENE)}


def test_reindex_from_scratch_gives_the_same_answers(copy_path):
    with Notebook.open(copy_path) as nb:
        want = [h.to_dict() for h in search(nb, substructure=FURAN)]
        S.reindex(nb)
        assert [h.to_dict() for h in search(nb, substructure=FURAN)] == want
        assert {h["run_id"] for h in want} == _brute(nb, FURAN)


def test_every_search_source_table_changes_the_token(copy_path):
    # common practice, no source: each write a search reads must invalidate what was kept
    from trapbook.store.schema import SEARCH_SOURCES

    with Notebook.open(copy_path) as nb:

        def token():
            return nb.conn.execute("SELECT token FROM search_token").fetchone()[0]

        triggers = {r[0] for r in nb.conn.execute("SELECT tbl_name FROM sqlite_master WHERE type = 'trigger'")}
        assert set(SEARCH_SOURCES) <= triggers
        t0 = token()
        nb.withdraw_run("TB-0003", reason="test")
        assert token() != t0


def test_notebook_without_the_token_table_still_searches(copy_path):
    with Notebook.open(copy_path) as nb:
        nb.conn.execute("DROP TABLE search_token")  # as if opened by a reader that skipped migrations
        for table in ("runs", "run_structures", "structures", "search_state"):
            for event in ("insert", "update", "delete"):
                nb.conn.execute(f"DROP TRIGGER IF EXISTS search_token_{table}_{event}")
        got = {h.run_id for h in search(nb, substructure=ANTHRACENE)}
        assert got == _brute(nb, ANTHRACENE) != set()
