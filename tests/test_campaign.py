"""Campaigns: the candidates a skeleton holds, their precursors, and the strain map computed
on a two-worker local Dask cluster, stored only by the client and resumable."""

from __future__ import annotations

import hashlib
import json
from pathlib import Path

import pytest
from click.testing import CliRunner
from rdkit import Chem
from rdkit.Chem import rdMolDescriptors

from trapbook import campaign as cp
from trapbook.chemistry import bridgehead as bh
from trapbook.chemistry.enumerate import KINDS, intermediates_of_skeleton, precursors_of
from trapbook.errors import ChemistryError

BICYCLO_222 = "C1CC2CCC1CC2"
ADAMANTANE = "C1C2CC3CC1CC(C2)C3"
BICYCLO_331 = "C1CC2CCCC(C1)C2"
BICYCLO_321 = "C1CC2CCC(C1)C2"


def _rdkit_bridgehead_bond_classes(smiles: str) -> int:
    """Independent count: ring bonds from a bridgehead (three ring bonds) to a neighbour in a
    bridge of at least one atom, merged by RDKit's symmetry classes of the two atoms."""
    mol = Chem.MolFromSmiles(smiles)
    ranks = list(Chem.CanonicalRankAtoms(mol, breakTies=False))
    ri = mol.GetRingInfo()
    heads = {a.GetIdx() for a in mol.GetAtoms() if sum(1 for b in a.GetBonds() if ri.NumBondRings(b.GetIdx())) >= 3}
    pairs = set()
    for h in heads:
        for nb in mol.GetAtomWithIdx(h).GetNeighbors():
            if nb.GetIdx() not in heads:  # a bond between two bridgeheads would be a zero-atom bridge
                pairs.add((ranks[h], ranks[nb.GetIdx()]))
    return len(pairs)


@pytest.mark.parametrize(
    ("skeleton", "expected"),
    [
        # Source: docs/sources.md "Campaigns" — bicyclo[2.2.2]octane: both bridgeheads and all three
        # two-carbon bridges are alike, so every bridgehead C=C is the same bicyclo[2.2.2]oct-1-ene.
        (BICYCLO_222, 1),
        # Source: docs/sources.md "Campaigns" — adamantane (Td): four equivalent CH bridgeheads, each
        # bonded to three equivalent CH2, so one bridgehead alkene (adamant-1-ene).
        (ADAMANTANE, 1),
        # Source: docs/sources.md "Campaigns" — bicyclo[3.3.1]nonane: toward a three-carbon bridge
        # (non-1-ene) or toward the one-carbon bridge (non-1(9)-ene): two.
        (BICYCLO_331, 2),
        # Source: docs/sources.md "Campaigns" — bicyclo[3.2.1]octane: toward the three-, the two- or the
        # one-carbon bridge (oct-1-ene, oct-1(7)-ene, oct-1(8)-ene): three.
        (BICYCLO_321, 3),
    ],
)
def test_bridgehead_alkenes_of_a_skeleton(skeleton, expected):
    found = intermediates_of_skeleton(skeleton)
    assert len(found) == expected
    assert len(found) == _rdkit_bridgehead_bond_classes(skeleton)  # RDKit's symmetry classes agree
    assert all(c.kind == bh.BRIDGEHEAD for c in found)
    assert len({c.smiles for c in found}) == expected  # distinct structures, not one counted twice


def test_bicyclo_331_alkenes_are_trans_in_an_eight_and_a_six_membered_ring():
    # Source: docs/sources.md "Strain" (Wiseman) — non-1-ene is trans in the 8-membered ring; the
    # non-1(9)-ene bond lies in the one-carbon bridge, trans in a six-membered ring; both S = 7.
    rows = [bh.perceive(c.smiles).best for c in intermediates_of_skeleton(BICYCLO_331)]
    assert sorted(r.trans_ring_size for r in rows) == [6, 8]
    assert {r.s_value for r in rows} == {7}


def test_allenes_and_alkynes_only_on_request_and_in_rings():
    plain = intermediates_of_skeleton(BICYCLO_331)
    more = intermediates_of_skeleton(BICYCLO_331, KINDS)
    assert {c.kind for c in plain} == {bh.BRIDGEHEAD}
    assert {c.kind for c in more} == {bh.BRIDGEHEAD, bh.ALLENE, bh.ALKYNE}
    for c in more:
        mol = Chem.MolFromSmiles(c.smiles)
        triple = [b for b in mol.GetBonds() if b.GetBondType() == Chem.BondType.TRIPLE]
        assert all(b.IsInRing() for b in triple)  # common practice, no source: a cycloalkyne's C≡C is in its ring


def test_a_skeleton_must_be_saturated():
    with pytest.raises(ChemistryError, match="saturated"):
        intermediates_of_skeleton("C1=CC2CCC1CC2")


def test_precursors_release_their_intermediate_with_balanced_atoms():
    # Source: docs/sources.md "Campaigns" — 1,2-elimination removes Me3Si and TfO, so the precursor's
    # formula is the intermediate's plus Me3SiOTf (C4H9F3O3SSi); formulas from RDKit.
    (cand,) = intermediates_of_skeleton(BICYCLO_222)
    precs = precursors_of(cand.smiles)
    # silyl on the bridgehead and triflate beside it, or the other way round
    assert len(precs) == 2
    reagent = Chem.MolFromSmiles("C[Si](C)(C)OS(=O)(=O)C(F)(F)F")
    combined = Chem.CombineMols(Chem.MolFromSmiles(cand.smiles), reagent)
    for p in precs:
        assert rdMolDescriptors.CalcMolFormula(Chem.MolFromSmiles(p.smiles)) == rdMolDescriptors.CalcMolFormula(combined)


# ---------------------------------------------------------------- on a two-worker cluster

CANDIDATES = [
    "# a comment line",
    "C12=CCC(CC1)CC2 bicyclo[2.2.2]oct-1-ene",
    "C1=C2CCCC(CC1)C2 bicyclo[3.3.1]non-1-ene",
    "C1#CCCCCCC1 cyclooctyne",
    "C1=C2CCC(C1)CC2.[U] no force field for uranium",
    "C1CC(  not a structure",
]


@pytest.fixture(scope="module")
def client():
    c = cp.open_client(n_workers=2)
    yield c
    cp.close_client(c)


def _file_record(tier: str = "fast"):
    return cp.plan("candidates.txt", tier=tier, precursors=False, lines=CANDIDATES)


def _db_hash(path: Path) -> str:
    h = hashlib.sha256()
    for p in sorted(path.parent.glob(path.name + "*")):
        h.update(p.read_bytes())
    return h.hexdigest()


def test_workers_never_write_the_notebook(notebook, client):
    record = _file_record()
    path = Path(notebook.path)
    notebook.conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    before = _db_hash(path)
    arrived = list(cp.stream_results(client, cp.tasks_of(record)))
    assert len(arrived) == 4  # every readable candidate came back
    assert _db_hash(path) == before  # the workers computed, nothing was written
    for task, outcome in arrived:
        cp.store_outcome(notebook, task, outcome)
    notebook.conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    assert _db_hash(path) != before  # the client stored what came back


def test_campaign_maps_records_failures_and_resumes(notebook, client):
    record = _file_record()
    seen = []
    first = cp.run_campaign(notebook, record, client=client, progress=lambda d, f, left: seen.append((d, f, left)))
    assert first["computed"] == 3 and first["from_cache"] == 0
    assert seen[-1] == (3, 1, 0)  # done, failed, left at the end
    failed = {f["candidate"]: f for f in cp.load_record(notebook, record["id"])["failed"]}
    assert "force-field" in failed["no force field for uranium"]["reason"]
    assert failed["not a structure"]["what"] == "structure"  # the unreadable line is kept, with its reason
    rows = {r["name"]: r for r in cp.campaign_table(notebook, cp.load_record(notebook, record["id"]))}
    # Source: docs/sources.md "Strain" (Fawcett S; Wiseman trans ring) — S 6 and 7, trans rings 6 and 8
    assert (rows["bicyclo[2.2.2]oct-1-ene"]["s_value"], rows["bicyclo[2.2.2]oct-1-ene"]["trans_ring_size"]) == (6, 6)
    assert (rows["bicyclo[3.3.1]non-1-ene"]["s_value"], rows["bicyclo[3.3.1]non-1-ene"]["trans_ring_size"]) == (7, 8)
    # Source: docs/sources.md "Strain" — a fast-tier prescreen is never classed
    assert all(r["stability_class"] is None for r in rows.values())
    assert rows["no force field for uranium"]["status"] == "failed"
    versions = len(notebook.setting_history(cp.RECORD_PREFIX + record["id"]))
    again = cp.run_campaign(notebook, record, client=client)
    assert (again["from_cache"], again["computed"], again["kept_failed"]) == (3, 0, 1)  # nothing computed
    assert [f["candidate"] for f in again["failed"]] == ["no force field for uranium"]
    assert len(notebook.setting_history(cp.RECORD_PREFIX + record["id"])) == versions  # nothing new to record
    retried = cp.run_campaign(notebook, record, client=client, retry_failed=True)
    assert (retried["computed"], retried["kept_failed"]) == (0, 0)
    assert [f["candidate"] for f in retried["failed"]] == ["no force field for uranium"]  # tried, failed again


def test_cli_campaign_json_and_report(tmp_path, notebook):
    from trapbook.cli import main

    listing = tmp_path / "cands.txt"
    listing.write_text("\n".join(CANDIDATES[:4]) + "\n", encoding="utf-8")
    report = tmp_path / "map.html"
    res = CliRunner().invoke(
        main,
        [
            "--db",
            str(notebook.path),
            "campaign",
            str(listing),
            "--tier",
            "fast",
            "--no-precursors",
            "--workers",
            "2",
            "--report",
            str(report),
            "--json",
        ],
    )
    assert res.exit_code == 0, res.output
    data = json.loads(res.output)
    # Source: docs/sources.md "Strain": olefin strain (alkenes) and ring strain (cycloalkynes) are
    # different quantities, so each kind is ranked on its own, least strained first
    by_kind: dict[str, list[dict]] = {}
    for r in data["rows"]:
        by_kind.setdefault(r["kind"], []).append(r)
    assert len(by_kind) == 2
    for kind, rows in by_kind.items():
        assert [r["rank"] for r in rows] == list(range(1, len(rows) + 1))
        assert {r["ranked_within"] for r in rows} == {kind}
        strains = [r["strain_kcal_mol"] for r in rows]
        assert strains == sorted(strains)
    assert sorted(len(v) for v in by_kind.values()) == [1, 2]  # two bridgehead alkenes, one cycloalkyne
    page = report.read_text(encoding="utf-8")
    assert "<svg" in page and "no class" in page


def test_cli_refuses_an_unsaturated_skeleton(notebook):
    from trapbook.cli import main

    res = CliRunner().invoke(main, ["--db", str(notebook.path), "campaign", "C1=CCCCC1", "--json"])
    assert res.exit_code == 2
    err = json.loads(res.output)
    assert "double" in err["error"] and "saturated" in err["hint"]


@pytest.mark.slow
def test_classes_of_enumerated_alkenes_match_the_bench():
    from trapbook.chemistry.strain import compute_strain
    from trapbook.stability import judge

    # Source: docs/sources.md "Strain" — bicyclo[3.3.1]non-1-ene is isolable; bicyclo[2.2.2]oct-1-ene
    # is known only by trapping
    non = next(c for c in intermediates_of_skeleton(BICYCLO_331) if bh.perceive(c.smiles).best.trans_ring_size == 8)
    (octene,) = intermediates_of_skeleton(BICYCLO_222)
    assert judge(compute_strain(non.smiles, "accurate")).stability == "isolable"
    assert judge(compute_strain(octene.smiles, "accurate")).stability == "unstable"


def test_only_the_campaign_module_imports_dask():
    # common practice, no source: one module owns the cluster, so the rest of the core stays light
    import ast

    import trapbook

    root = Path(trapbook.__file__).parent
    users = []
    for path in root.rglob("*.py"):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        names = {a.name.split(".")[0] for n in ast.walk(tree) if isinstance(n, ast.Import) for a in n.names}
        names |= {(n.module or "").split(".")[0] for n in ast.walk(tree) if isinstance(n, ast.ImportFrom) and n.level == 0}
        if names & {"dask", "distributed"}:
            users.append(path.relative_to(root).as_posix())
    assert users == ["campaign.py"]


def test_an_existing_scheduler_by_address(notebook, client):
    record = cp.plan("one.txt", tier="fast", precursors=False, lines=["C12=CCC(CC1)CC2 bicyclo[2.2.2]oct-1-ene"])
    out = cp.run_campaign(notebook, record, scheduler=client.scheduler.address)
    assert (out["computed"], out["failed"]) == (1, [])


def test_a_scheduler_address_is_checked_before_anything_is_written(notebook):
    record = cp.plan("one.txt", tier="fast", precursors=False, lines=["C12=CCC(CC1)CC2"])
    with pytest.raises(cp.TrapbookError, match="not a scheduler address"):
        cp.run_campaign(notebook, record, scheduler="foo\x1b[2J")
    assert cp.campaigns(notebook) == []  # no record was kept


def test_the_campaign_record_carries_the_sessions_author(notebook):
    # common practice, no source: a saved version names who saved it (--author over the default)
    record = cp.plan("cands.txt", tier="fast", precursors=False, lines=["C1CC(  not a structure"])
    summary = cp.run_campaign(notebook, record, author="R. Okafor")
    assert summary["tasks"] == 0  # nothing to compute: no cluster is started
    (version,) = notebook.setting_history(cp.RECORD_PREFIX + record["id"])
    assert version["author"] == "R. Okafor"
