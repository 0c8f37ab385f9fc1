"""Campaign tasks: the order workers start them in, the client's batched store (a stopped
campaign keeps what it was told and resumes with the rest), and precursor diastereomers
that cannot exist, named by the plan instead of failing on a worker."""

from __future__ import annotations

import pytest
from rdkit import Chem

from trapbook import campaign as cp

BICYCLO_222 = "C1CC2CCC1CC2"

# fast-tier candidates of different ring systems, each a few tenths of a second
SMALL = [
    "C1#CCCCCCC1 cyclooctyne",
    "C12=CCC(CC1)CC2 bicyclo[2.2.2]oct-1-ene",
    "C1=C2CCCC(CC1)C2 bicyclo[3.3.1]non-1-ene",
    "C1=C2CCCC1CCC2 bicyclo[3.3.1]non-1(9)-ene",
    "C1=C2CCC(C1)CC2 bicyclo[2.2.1]hept-1-ene",
    "C1#CCCCCCCC1 cyclononyne",
]


def _ring_atoms(smiles: str) -> int:
    mol = Chem.MolFromSmiles(smiles)
    return sum(1 for a in mol.GetAtoms() if a.IsInRing())


# ---------------------------------------------------------------- the order of the tasks


def test_longest_tasks_are_started_first():
    record = cp.plan("mixed", tier="fast", precursors=False, lines=[*SMALL, "C1=C2CCCCCC(CCCC1)C2 bicyclo[5.3.1]undec-1-ene"])
    strain = cp.longest_first(cp.tasks_of(record))
    # common practice, no source: a conformer search grows with the ring system, so among
    # candidates of one kind the larger ring systems (counted by RDKit) go first
    by_kind: dict[str, list[int]] = {}
    kinds = {c["smiles"]: c["kind"] for c in record["candidates"]}
    for t in strain:
        by_kind.setdefault(kinds[t.smiles], []).append(_ring_atoms(t.smiles))
    assert all(sizes == sorted(sizes, reverse=True) for sizes in by_kind.values())
    assert _ring_atoms(strain[0].smiles) == max(_ring_atoms(t.smiles) for t in strain)
    # an alignment (60+ conformers of a precursor with its silyl and triflate) outweighs a
    # fast-tier strain of the same ring system (common practice, no source)
    align = cp.Task("alignment", "C[Si](C)(C)C12CCC(CC1)CC2OS(=O)(=O)C(F)(F)F", "alignment", "x")
    assert cp.longest_first([*strain, align])[0] == align
    assert sorted(t.key for t in strain) == sorted(t.key for t in cp.tasks_of(record))  # none lost, none added


def test_one_worker_runs_the_tasks_in_the_order_given():
    record = cp.plan("small", tier="fast", precursors=False, lines=SMALL[:4])
    order = cp.longest_first(cp.tasks_of(record))
    client = cp.open_client(n_workers=1)
    try:
        arrived = [task.key for task, _ in cp.stream_results(client, order)]
    finally:
        cp.close_client(client)
    assert arrived == [t.key for t in order]


# ---------------------------------------------------------------- the batched store


@pytest.fixture(scope="module")
def client():
    c = cp.open_client(n_workers=2)
    yield c
    cp.close_client(c)


class Stop(Exception):
    """Stands for Ctrl-C in the middle of a campaign."""


def test_a_stopped_campaign_keeps_every_result_it_reported_and_resumes(notebook, client):
    record = cp.plan("small", tier="fast", precursors=False, lines=SMALL)
    tasks = cp.tasks_of(record)
    told: list[int] = []

    def stop_after_the_first(done, failed, left):
        told.append(done)
        if done >= 1:
            raise Stop

    with pytest.raises(Stop):
        cp.run_campaign(notebook, record, client=client, progress=stop_after_the_first)
    kept = [t for t in tasks if cp.cached(notebook, t) is not None]
    assert len(kept) == told[-1] >= 1  # every result reported done was committed before the report
    assert len(kept) < len(tasks)  # stopped before the end
    resumed = cp.run_campaign(notebook, record, client=client)
    assert (resumed["from_cache"], resumed["computed"], resumed["failed"]) == (len(kept), len(tasks) - len(kept), [])
    assert all(cp.cached(notebook, t) is not None for t in tasks)


def test_results_arriving_together_are_stored_in_one_transaction(notebook, client, monkeypatch):
    record = cp.plan("small", tier="fast", precursors=False, lines=SMALL[:3])
    arrivals = list(cp.stream_results(client, cp.tasks_of(record)))
    assert all(o["ok"] for _, o in arrivals)
    monkeypatch.setattr(cp, "stream_batches", lambda client, todo: iter([arrivals]))
    began = []
    real = type(notebook).transaction

    def counting(nb):
        began.append(nb.conn.in_transaction)
        return real(nb)

    monkeypatch.setattr(type(notebook), "transaction", counting)
    out = cp.run_campaign(notebook, record, client=client)
    assert out["computed"] == 3
    # one outer transaction for the batch; the three stores join it
    outer = [b for b in began if not b]
    assert len(outer) == 1 + 2  # the batch, plus the campaign record saved before and after
    assert all(cp.cached(notebook, t) is not None for t in cp.tasks_of(record))


# ---------------------------------------------------------------- diastereomers that cannot exist


def _bridgehead_double_bond(smiles: str) -> bool:
    """Independent of the enumerator: does a C=C touch an atom with three ring bonds (RDKit)?"""
    mol = Chem.MolFromSmiles(smiles)
    ri = mol.GetRingInfo()

    def bridgehead(atom) -> bool:
        return sum(1 for b in atom.GetBonds() if ri.NumBondRings(b.GetIdx())) >= 3

    return any(
        b.GetBondType() == Chem.BondType.DOUBLE and (bridgehead(b.GetBeginAtom()) or bridgehead(b.GetEndAtom()))
        for b in mol.GetBonds()
    )


@pytest.fixture(scope="module")
def allene_plan():
    return cp.plan(BICYCLO_222, tier="fast", kinds=("allene",))


def test_allene_precursors_with_a_bridgehead_double_bond_cannot_exist(allene_plan):
    # Reasoned by hand. Bicyclo[2.2.2]octa-1,2-diene (C1=C2=C3, C1 a bridgehead) is released by
    # 1,2-elimination from a precursor that keeps one of its two double bonds. Keeping C2=C3
    # gives an ordinary bicyclo[2.2.2]oct-2-ene (silyl and triflate on C1 and C2, either way
    # round): it can be built. Keeping C1=C2 leaves a bicyclo[2.2.2]oct-1-ene, a C=C at the
    # bridgehead, trans in a six-membered ring (S = 6): Bredt's rule, and Wiseman's trans-ring
    # reading, put it far below what can exist as a bench compound (it is known only by
    # trapping). So two precursors (silyl on C2 or C3) cannot exist and two can.
    # Source: docs/sources.md "Strain" (bridgehead alkenes at the bench; Fawcett S, Wiseman) and
    # "Campaigns" (precursors that cannot exist).
    (allene,) = allene_plan["candidates"]
    precursors = allene["precursors"]
    assert len(precursors) == 4
    impossible = [p for p in precursors if not p["diastereomers"]]
    possible = [p for p in precursors if p["diastereomers"]]
    assert len(impossible) == 2 and len(possible) == 2
    assert all(_bridgehead_double_bond(p["smiles"]) for p in impossible)
    assert not any(_bridgehead_double_bond(p["smiles"]) for p in possible)
    assert all(p["impossible_diastereomers"] for p in impossible)  # named, not dropped


def test_impossible_diastereomers_are_no_tasks_and_the_table_says_why(allene_plan, notebook):
    aligned = {t.smiles for t in cp.tasks_of(allene_plan) if t.what == "alignment"}
    named = {d for p in allene_plan["candidates"][0]["precursors"] for d in p["impossible_diastereomers"]}
    assert aligned and named and not aligned & named
    (row,) = cp.campaign_table(notebook, allene_plan)
    assert {i["smiles"] for i in row["impossible_diastereomers"]} == named
    assert all(i["why"] == cp.NO_STRUCTURE for i in row["impossible_diastereomers"])
    assert row["status"] == "not computed" and row["reason"] is None  # not a failure of the tool


def test_a_diastereomer_forced_far_above_its_best_is_shown_impossible_and_never_best():
    # Hand-made sides of one precursor: the second lies 70 kcal/mol above the first (an in/out
    # bridgehead that embedding forced into shape), far beyond any diastereomer energy gap; it
    # must not be chosen even though it looks better aligned.
    # Source: docs/sources.md "Campaigns" (precursors that cannot exist)
    real = {"smiles": "real", "mmff_energy_kcal_mol": 131.0, "aligned_fraction": 0.2, "best_aligned": None}
    forced = {"smiles": "forced", "mmff_energy_kcal_mol": 201.0, "aligned_fraction": 1.0, "best_aligned": None}
    assert cp.real_diastereomers([real, forced]) == [real]
    assert cp.best_diastereomer(cp.real_diastereomers([real, forced]))["smiles"] == "real"
    (why,) = cp._split_forced([real, forced])[1]
    assert why["smiles"] == "forced" and "70 kcal/mol" in why["why"] and "cannot exist" in why["why"]


def test_the_screen_detail_names_each_impossible_diastereomer(allene_plan, notebook):
    # The Campaigns screen writes what the core's table holds: every impossible diastereomer with
    # its reason (docs/sources.md "Campaigns"), and the kind the rank is counted within.
    from trapbook.tui.widgets.campaign_rows import detail

    (row,) = cp.campaign_table(notebook, allene_plan)
    text = detail(row, allene_plan).plain
    for side in row["impossible_diastereomers"]:
        assert side["smiles"] in text and side["why"] in text
    assert f"among {row['kind']}" in text
