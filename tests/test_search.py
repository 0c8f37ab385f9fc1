"""Search against independent references: RDKit's own matcher and Tanimoto run brute-force
over every structure of every run, and the demo lab's run files read directly."""

from __future__ import annotations

import json
import re
import shutil

import pytest
from rdkit import Chem, DataStructs
from rdkit.Chem import rdFingerprintGenerator

from conftest import ROOT
from trapbook.errors import TrapbookError
from trapbook.search import search

DEMO_RUNS = sorted((ROOT / "demo_lab" / "runs").glob("*.json"))

# Generic bicyclo[3.3.1]nonane skeleton (any bond order): matches the [3.3.1] core in
# precursor, alkene and adducts.
CORE_331 = "[#6]1~[#6]~[#6]2~[#6]~[#6]~[#6]~[#6](~[#6]1)~[#6]2"

QUERIES = [
    CORE_331,
    "c1ccoc1",  # furan ring (aromatic) — only in furan itself
    "C=C",  # any C=C
    "[Si](C)(C)C",  # trimethylsilyl
    "OS(=O)(=O)C(F)(F)F",  # triflate
    "c1ccc2cc3ccccc3cc2c1",  # anthracene
    "C1OC=CC1",  # a dihydrofuran ring as SMILES read as SMARTS
    "[R2;X4]",  # sp3 ring-fusion atom
    "C12=CCCC(CC1)C2",  # bicyclo[3.2.1]oct-1-ene given as SMILES
]


def _parts(data: dict) -> list[str]:
    smi = [ln["smiles"] for ln in data["lines"] if ln["role"] in ("precursor", "trap", "product") and ln.get("smiles")]
    if data.get("intermediate"):
        smi.append(data["intermediate"])
    return smi


def _demo_records() -> list[dict]:
    return [json.loads(p.read_text(encoding="utf-8")) for p in DEMO_RUNS]


def _brute_substructure(query: str) -> set[str]:
    """Source: RDKit HasSubstructMatch over every part of every demo run file (no fingerprints)."""
    q = Chem.MolFromSmarts(query) or Chem.MolFromSmiles(query)
    out = set()
    for d in _demo_records():
        if any(Chem.MolFromSmiles(s).HasSubstructMatch(q) for s in _parts(d)):
            out.add(d["id"])
    return out


@pytest.mark.parametrize("query", QUERIES)
def test_substructure_equals_brute_force_rdkit(demo_notebook, query):
    got = {h.run_id for h in search(demo_notebook, substructure=query)}
    assert got == _brute_substructure(query)


def _morgan(smiles: str):
    gen = rdFingerprintGenerator.GetMorganGenerator(radius=2, fpSize=2048)
    return gen.GetFingerprint(Chem.MolFromSmiles(smiles))


@pytest.mark.parametrize("query,threshold", [("C12=CCCC(CCC1)C2", 0.6), ("C12=CCCC(CC1)C2", 0.3), ("c1ccoc1", 0.2)])
def test_similarity_equals_brute_force_tanimoto(demo_notebook, query, threshold):
    # Source: RDKit DataStructs.TanimotoSimilarity on RDKit's Morgan bit vectors, per run its best part.
    qfp = _morgan(query)
    want = {}
    for d in _demo_records():
        best = max(DataStructs.TanimotoSimilarity(qfp, _morgan(s)) for s in _parts(d))
        if best >= threshold:
            want[d["id"]] = best
    hits = search(demo_notebook, similar=query, min_similarity=threshold)
    assert {h.run_id for h in hits} == set(want)
    for h in hits:
        assert h.score == pytest.approx(want[h.run_id], abs=1e-4)
    scores = [h.score for h in hits]
    assert scores == sorted(scores, reverse=True)


def test_fingerprint_screen_never_drops_a_true_match():
    # Source: RDKit HasSubstructMatch, brute force; the screen may keep extra molecules, never lose one.
    from trapbook.chemistry import fingerprints, molecules

    smiles = sorted({s for d in _demo_records() for s in _parts(d)})
    for query in QUERIES + ["*~*", "[#8]", "C#C", "C=C=C"]:
        q = molecules.substructure_query(query)
        qbits = fingerprints.query_pattern(q)
        for s in smiles:
            if Chem.MolFromSmiles(s).HasSubstructMatch(q):
                need = int.from_bytes(qbits, "little")
                have = int.from_bytes(fingerprints.structure_bits(s).pattern, "little")
                assert need & have == need, (query, s)  # every bit the query sets is set in the molecule


def test_demo_every_run_of_the_331_core(demo_notebook):
    # Source: the demo lab's run files, by their recorded intermediate name.
    want = {d["id"] for d in _demo_records() if d.get("intermediate_name") == "bicyclo[3.3.1]non-1-ene"}
    hits = search(demo_notebook, substructure=CORE_331)
    assert {h.run_id for h in hits} == want
    assert len(want) == 11  # Source: the demo lab's run files (11 runs of bicyclo[3.3.1]non-1-ene)
    assert all(any(m.startswith("precursor: ") for m in h.matched) for h in hits)


def test_demo_every_run_with_anthracene(demo_notebook):
    # Source: the demo lab's run files, by trap line name.
    want = {d["id"] for d in _demo_records() if any(ln["role"] == "trap" and ln["name"] == "anthracene" for ln in d["lines"])}
    by_name = {h.run_id for h in search(demo_notebook, trap="anthracene")}
    by_structure = {h.run_id for h in search(demo_notebook, trap="c1ccc2cc3ccccc3cc2c1")}
    assert by_name == want == by_structure
    assert all("trap: anthracene" in h.matched for h in search(demo_notebook, trap="Anthracene"))


def test_trap_by_common_abbreviation(demo_notebook):
    want = {d["id"] for d in _demo_records() if any(ln["role"] == "trap" and "isobenzofuran" in ln["name"] for ln in d["lines"])}
    assert {h.run_id for h in search(demo_notebook, trap="DPIBF")} == want != set()


def test_demo_every_late_trap_run(demo_notebook):
    pytest.importorskip("trapbook.checks", reason="trap-late comes from the bench checks (checks.py)")
    # Source: the demo lab's own notes: TB-0010 is the run whose furan went in 30 min after the TBAF.
    late = [d["id"] for d in _demo_records() if "after" in d["title"] and "TBAF" in d["title"]]
    assert late == ["TB-0010"]
    assert [h.run_id for h in search(demo_notebook, finding="trap-late")] == late


def _max_temp(d: dict) -> float | None:
    # common practice, no source: the run's temperature is the highest one its steps reach
    from pint import UnitRegistry

    u = UnitRegistry()
    ts = []
    for s in d.get("steps", []):
        t = s.get("temperature")
        if t:
            value = float(re.match(r"\s*(-?[\d.]+)", t).group(1))
            ts.append(u.Quantity(value, "degC").to("degC").magnitude)
    return max(ts) if ts else None


def test_condition_filters_combine_with_and(demo_notebook):
    want = {
        d["id"]
        for d in _demo_records()
        if any(ln["role"] == "trap" and ln["name"] == "furan" for ln in d["lines"])
        and (_max_temp(d) or -999) >= 100
        and any(ln["role"] == "fluoride source" and "CsF" in ln["name"] for ln in d["lines"])
    }
    got = {h.run_id for h in search(demo_notebook, trap="furan", temp_min="100 °C", fluoride="csf")}
    assert got == want == {"TB-0014"}
    assert got == (
        {h.run_id for h in search(demo_notebook, trap="furan")}
        & {h.run_id for h in search(demo_notebook, temp_min=100)}
        & {h.run_id for h in search(demo_notebook, fluoride="CsF")}
    )


def test_structure_and_condition_and_screen(demo_notebook):
    got = {h.run_id for h in search(demo_notebook, substructure=CORE_331, screen="SC-0001", trap="anthracene")}
    want = {
        d["id"] for d in _demo_records() if d.get("screen") == "SC-0001" and any(ln["name"] == "anthracene" for ln in d["lines"])
    }
    assert got == want == {"TB-0017", "TB-0018"}


def test_chemist_date_and_tag(demo_notebook):
    recs = _demo_records()
    want = {d["id"] for d in recs if d["chemist"] == "M. Okafor" and "2026-09-12" <= d["date"] <= "2026-09-30"}
    assert {h.run_id for h in search(demo_notebook, chemist="okafor", date_from="2026-09-12", date_to="2026-09-30")} == want
    tagged = {d["id"] for d in recs if "anti-Bredt" in d.get("tags", [])}
    assert {h.run_id for h in search(demo_notebook, tags=["anti-bredt"])} == tagged


def test_yield_range_uses_stored_yields(demo_notebook):
    # Source: isolated mass / molar mass (molmass, independent of RDKit) / 0.100 mmol for TB-0001.
    from molmass import Formula

    y = 11.8 / Formula("C13H18O").mass / 0.100 * 100
    hits = {h.run_id for h in search(demo_notebook, yield_min=y - 0.5, yield_max=y + 0.5)}
    assert "TB-0001" in hits


def test_full_text(demo_notebook):
    want = {
        d["id"]
        for d in _demo_records()
        if re.search(r"\boligomers\b", " ".join([d.get("notes") or "", (d.get("outcome") or {}).get("observations") or ""]))
    }
    hits = search(demo_notebook, text="oligomers")
    assert {h.run_id for h in hits} == want == {"TB-0010"}
    assert hits[0].matched[-1].startswith("text: ")
    # Unbalanced FTS syntax falls back to plain words instead of failing.
    assert {h.run_id for h in search(demo_notebook, text='"oligomers')} == want


def test_inchikey_exact(demo_notebook):
    key = Chem.MolToInchiKey(Chem.MolFromSmiles("c1ccc2cc3ccccc3cc2c1"))  # Source: RDKit's InChI
    want = {d["id"] for d in _demo_records() if any(ln.get("smiles") == "c1ccc2cc3ccccc3cc2c1" for ln in d["lines"])}
    assert {h.run_id for h in search(demo_notebook, inchikey=key)} == want
    assert {h.run_id for h in search(demo_notebook, inchikey=key[:14])} == want


@pytest.mark.parametrize(
    "kwargs",
    [
        {"substructure": "C1CC("},
        {"similar": "not a smiles"},
        {"inchikey": "XYZ"},
        {"temp_min": "hot"},
        {"date_from": "last week"},
        {"similar": "CC", "min_similarity": 1.5},
        {"screen": "SC-9999"},
        {"text": "  "},
    ],
)
def test_bad_queries_are_trapbook_errors(demo_notebook, kwargs):
    with pytest.raises(TrapbookError) as info:
        search(demo_notebook, **kwargs)
    assert info.value.message and info.value.hint


def test_old_notebook_is_indexed_on_first_search(demo_notebook_path, tmp_path):
    from trapbook.store import Notebook

    p = tmp_path / "old.sqlite"
    shutil.copy(demo_notebook_path, p)
    with Notebook.open(p) as nb:
        with nb.transaction():
            for t in ("run_structures", "search_state", "run_text", "structures"):
                nb.conn.execute(f"DELETE FROM {t}")
        assert search(nb, substructure=CORE_331) != []
        assert len({h.run_id for h in search(nb, substructure=CORE_331)}) == 11  # Source: demo lab run files, as above
        assert nb.conn.execute("SELECT count(*) FROM search_state").fetchone()[0] == nb.count_runs()


def test_withdrawn_runs_are_left_out(demo_notebook_path, tmp_path):
    from trapbook.store import Notebook

    p = tmp_path / "w.sqlite"
    shutil.copy(demo_notebook_path, p)
    with Notebook.open(p) as nb:
        nb.withdraw_run("TB-0002", reason="test")
        assert "TB-0002" not in {h.run_id for h in search(nb, trap="anthracene")}
        assert "TB-0002" in {h.run_id for h in search(nb, trap="anthracene", include_withdrawn=True)}


def test_saving_an_edit_reindexes_structures(demo_notebook_path, tmp_path):
    from trapbook.store import Notebook

    p = tmp_path / "e.sqlite"
    shutil.copy(demo_notebook_path, p)
    with Notebook.open(p) as nb:
        run = nb.get_run("TB-0012")
        data = run.to_json_dict()
        for ln in data["lines"]:
            if ln["role"] == "trap":
                ln.update({"name": "anthracene", "smiles": "c1ccc2cc3ccccc3cc2c1"})
                ln.pop("density", None)
        data["steps"][0]["add"] = [("anthracene" if a == "furan" else a) for a in data["steps"][0]["add"]]
        nb.save_run(data, nb.run_meta("TB-0012")["version"], reason="trap was anthracene")
        assert "TB-0012" in {h.run_id for h in search(nb, substructure="c1ccc2cc3ccccc3cc2c1")}
        assert "TB-0012" not in {h.run_id for h in search(nb, substructure="c1ccoc1")}


def test_cli_json_keys(demo_notebook_path):
    from click.testing import CliRunner

    from trapbook.cli import main

    res = CliRunner().invoke(main, ["--db", str(demo_notebook_path), "search", "--trap", "anthracene", "--json"])
    assert res.exit_code == 0, res.output
    data = json.loads(res.output)
    assert data and all(set(d) == {"run_id", "title", "score", "matched"} for d in data)
    bad = CliRunner().invoke(main, ["--db", str(demo_notebook_path), "search", "--substructure", "C1CC("])
    assert bad.exit_code == 2 and "Traceback" not in bad.output
