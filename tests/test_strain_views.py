"""Strain in the views: each kind shown with its own quantity and class, the run report naming
its intermediate, the alignment read at the run's temperature, and an untrapped aryne stopped
end to end through the command line."""

from __future__ import annotations

import json
import random

import pytest
from click.testing import CliRunner

from trapbook import review
from trapbook.cli import main
from trapbook.records import load_run
from trapbook.stability import ARYNE, BRIDGEHEAD, class_limits

BENZYNE = "C1=CC=CC#C1"
NONENE = "C12=CCCC(CCC1)C2"  # bicyclo[3.3.1]non-1-ene
# 2-(trimethylsilyl)phenyl triflate releases benzyne with fluoride.
# Source: Himeshima, Sonoda & Kobayashi, Chem. Lett. 1983, 12, 1211; docs/sources.md, "Strain views".
KOBAYASHI = "C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F"


def _run(title: str, intermediate: str | None, trap: bool, temperature: str = "23 °C") -> dict:
    lines = [
        {"role": "precursor", "name": "precursor", "smiles": KOBAYASHI, "amount": "0.200 mmol"},
        {"role": "fluoride source", "name": "CsF", "smiles": "[Cs+].[F-]", "equiv": 3.0},
        {"role": "solvent", "name": "MeCN", "smiles": "CC#N", "volume": "2.0 mL"},
    ]
    first = ["precursor", "MeCN"]
    if trap:
        lines.append({"role": "trap", "name": "furan", "smiles": "c1ccoc1", "equiv": 10, "density": "0.951 g/mL"})
        first.append("furan")
    run = {
        "title": title,
        "lines": lines,
        "steps": [{"add": first, "temperature": "23 °C"}, {"add": ["CsF"], "temperature": temperature, "hold": "1 h"}],
    }
    if intermediate:
        run["intermediate"] = intermediate
    return run


def _smiles(smiles: str) -> str:
    from rdkit import Chem  # an independent canonical form, not the project's own

    return Chem.MolToSmiles(Chem.MolFromSmiles(smiles))


@pytest.fixture(scope="module")
def two_kinds(tmp_path_factory):
    """A notebook with a benzyne run (intermediate derived from its precursor, no trap) and a
    bicyclo[3.3.1]non-1-ene run, both with the accurate tier cached as `trapbook strain` would."""
    from trapbook.store import Notebook
    from trapbook.strain_link import get_strain

    path = tmp_path_factory.mktemp("views") / "nb.sqlite"
    with Notebook.create(path) as nb:
        aryne_id = nb.add_run(_run("benzyne, no trap", None, trap=False)).run_id
        nonene_id = nb.add_run(_run("nonene, furan", NONENE, trap=True)).run_id
        results = {smi: get_strain(nb, smi, tier="accurate") for smi in (BENZYNE, NONENE)}
    return path, aryne_id, nonene_id, results


def test_strain_map_shows_each_kind_with_its_own_quantity_and_class(two_kinds):
    from trapbook.store import Notebook

    path, aryne_id, nonene_id, results = two_kinds
    with Notebook.open(path) as nb:
        entries = {x["smiles"]: x for x in review.strain_map(nb)["intermediates"]}
    aryne, nonene = entries[_smiles(BENZYNE)], entries[_smiles(NONENE)]
    assert aryne["runs"] == [aryne_id] and nonene["runs"] == [nonene_id]
    assert aryne["kind"] == ARYNE and aryne["strain_quantity"].startswith("aryne strain")
    assert aryne["strain_kcal_mol"] == results[BENZYNE]["aryne_strain_kcal_mol"]
    assert aryne["olefin_strain_kcal_mol"] is None  # an aryne's number is not an olefin strain
    # Source: docs/sources.md "Strain" — arynes are made in situ and trapped, none is isolable.
    assert aryne["stability_class"] == "trapping only" and aryne["needs_trap"] is True
    assert nonene["kind"] == BRIDGEHEAD and nonene["strain_quantity"] == "olefin strain"
    assert nonene["strain_kcal_mol"] == results[NONENE]["olefin_strain_kcal_mol"]
    # Source: docs/sources.md "Strain" — bicyclo[3.3.1]non-1-ene is isolable (Marshall & Faubl 1967; Wiseman 1967).
    assert nonene["stability_class"] == "isolable" and nonene["needs_trap"] is False


def test_cli_strain_map_prints_each_kind_in_its_own_words(two_kinds):
    path = two_kinds[0]
    r = CliRunner().invoke(main, ["--db", str(path), "strain-map"])
    assert r.exit_code == 0, r.output
    aryne_line = next(ln for ln in r.output.splitlines() if ln.startswith(_smiles(BENZYNE)))
    assert "aryne strain" in aryne_line and "trapping only" in aryne_line and "OS" not in aryne_line
    # Source: docs/sources.md "Strain" — bicyclo[3.3.1]non-1-ene is isolable.
    assert any("olefin strain" in ln and "isolable" in ln for ln in r.output.splitlines())


def test_strain_plot_draws_each_kind_against_its_own_classes(two_kinds):
    from trapbook.reports_strain import plot_panels, strain_plot_svg
    from trapbook.store import Notebook

    with Notebook.open(two_kinds[0]) as nb:
        smap = review.strain_map(nb)
    panels = {p["kind"]: p for p in plot_panels(smap)}
    assert set(panels) == {ARYNE, BRIDGEHEAD}
    # Source: docs/sources.md "Strain" — the aryne classes (trapping only) and the Maier–Schleyer olefin-strain classes.
    assert [b[2] for b in panels[ARYNE]["bands"]] == ["trapping only"]
    assert "isolable" in [b[2] for b in panels[BRIDGEHEAD]["bands"]]
    assert panels[ARYNE]["bands"] == class_limits(ARYNE) and panels[BRIDGEHEAD]["bands"] == class_limits(BRIDGEHEAD)
    for panel in panels.values():  # each point sits inside its own panel's axis
        lo, hi = panel["x_range"]
        assert all(lo < x["strain_kcal_mol"] < hi for x in panel["points"])
    svg = strain_plot_svg(smap)
    assert 'id="axes_1"' in svg and 'id="axes_2"' in svg  # one panel per kind


def test_a_prescreen_panel_draws_no_classes(tmp_path):
    from trapbook.reports_strain import plot_panels
    from trapbook.store import Notebook
    from trapbook.strain_link import get_strain

    with Notebook.create(tmp_path / "fast.sqlite") as nb:
        nb.add_run(_run("benzyne, fast only", BENZYNE, trap=True))
        get_strain(nb, BENZYNE, tier="fast")
        smap = review.strain_map(nb)
    (entry,) = smap["intermediates"]
    assert entry["strain_kcal_mol"] is not None and entry["strain_tier"] == "fast"
    assert entry["stability_class"] is None and entry["needs_trap"] is None  # a prescreen is never classed
    (panel,) = plot_panels(smap)
    assert panel["bands"] == []


def test_ranking_is_per_kind_and_matches_scipy():
    from scipy.stats import spearmanr

    rng = random.Random(7)
    entries = []
    for kind in (ARYNE, BRIDGEHEAD):
        for _ in range(6):
            entries.append({"kind": kind, "strain_kcal_mol": rng.uniform(0, 70), "best_yield_pct": rng.uniform(0, 100)})
    ranking = review.rank_by_kind(entries)
    assert ranking["spearman_rho"] is None and "per kind" in ranking["note"]  # never ranked across kinds
    for k in ranking["by_kind"]:
        mine = [(e["strain_kcal_mol"], e["best_yield_pct"]) for e in entries if e["kind"] == k["kind"]]
        # Source: SciPy's spearmanr, an independent implementation.
        assert k["n"] == 6 and k["spearman_rho"] == pytest.approx(spearmanr(*zip(*mine)).statistic, abs=1e-9)
    one = review.rank_by_kind([e for e in entries if e["kind"] == ARYNE])
    assert one["kind"] == ARYNE and one["spearman_rho"] == ranking["by_kind"][0]["spearman_rho"]


def test_run_report_names_the_intermediate_and_how_it_was_found(two_kinds):
    from trapbook import reports
    from trapbook.store import Notebook

    path, aryne_id, _, _ = two_kinds
    with Notebook.open(path) as nb:
        page = reports.run_report_html(nb, aryne_id)
    strain = page[page.index("<h2>Strain</h2>") :]
    assert f"<code>{_smiles(BENZYNE)}</code>" in strain  # derived: the run file names no intermediate
    assert "derived from the precursor" in strain and KOBAYASHI in strain
    assert "aryne strain" in strain and "trapping only" in strain and "OS " not in strain


def test_findings_read_the_alignment_at_the_runs_temperature(tmp_path):
    from trapbook.findings import cached_alignment, findings_for
    from trapbook.store import Notebook
    from trapbook.strain_link import run_temperature_c, store_alignment

    path = tmp_path / "cold.sqlite"
    with Notebook.create(path):
        pass
    r = CliRunner().invoke(main, ["--db", str(path), "alignment", KOBAYASHI, "--temperature", "-78", "--json"])
    assert r.exit_code == 0, r.output
    cold = load_run(_run("benzyne at -78 °C", None, trap=True, temperature="-78 °C"))
    warm = load_run(_run("benzyne at rt", None, trap=True))
    assert run_temperature_c(cold) == pytest.approx(-78.0)
    with Notebook.open(path) as nb:
        found = cached_alignment(nb, cold)
        assert found is not None and found["temperature_c"] == pytest.approx(-78.0)
        assert cached_alignment(nb, warm) is None  # nothing was computed at 23 °C
        # an entry that only the -78 °C key holds decides the cold run's findings, not the warm one's
        store_alignment(nb, KOBAYASHI, {**found, "verdict": "poor: not aligned"}, -78.0)
        assert "precursor-misaligned" in [f.code for f in findings_for(nb, cold)]
        assert "precursor-misaligned" not in [f.code for f in findings_for(nb, warm)]


def test_alignment_of_a_run_id_is_stored_where_its_checks_read(tmp_path):
    from trapbook.findings import cached_alignment
    from trapbook.store import Notebook

    path = tmp_path / "cold.sqlite"
    with Notebook.create(path) as nb:
        run_id = nb.add_run(_run("benzyne at -78 °C", None, trap=True, temperature="-78 °C")).run_id
    r = CliRunner().invoke(main, ["--db", str(path), "alignment", run_id, "--json"])
    assert r.exit_code == 0, r.output
    assert json.loads(r.output)["temperature_c"] == pytest.approx(-78.0)  # the step adding CsF, not room temperature
    with Notebook.open(path) as nb:
        assert cached_alignment(nb, nb.get_run(run_id)) == json.loads(r.output)
    for bad in ("nan", "inf", "-300"):
        r = CliRunner().invoke(main, ["--db", str(path), "alignment", run_id, "--temperature", bad])
        assert r.exit_code == 2 and "Traceback" not in r.output and "temperature" in r.output


def test_untrapped_benzyne_stops_once_its_strain_is_cached(tmp_path):
    path, run_file = tmp_path / "nb.sqlite", tmp_path / "run.json"
    run_file.write_text(json.dumps(_run("benzyne, no trap", BENZYNE, trap=False)), encoding="utf-8")
    cli = CliRunner()

    def invoke(*args):
        r = cli.invoke(main, ["--db", str(path), *args])
        assert r.exit_code == 0, r.output
        return r.output

    invoke("init")
    invoke("add", str(run_file))
    before = json.loads(invoke("check", str(run_file), "--json"))
    assert "strain-untrapped" not in [f["code"] for f in before]  # nothing known of its strain yet
    invoke("strain", BENZYNE, "--quiet")
    after = json.loads(invoke("check", str(run_file), "--json"))
    stop = [f for f in after if f["code"] == "strain-untrapped"]
    # Source: docs/sources.md "Strain" — arynes are made in situ and trapped, none is isolable: no trap is a stop.
    assert stop and stop[0]["severity"] == "stop" and after[0]["severity"] == "stop"
    (row,) = json.loads(invoke("list", "--json"))
    assert row["worst"] == "stop:strain-untrapped"  # the stored run was judged again when the strain arrived
