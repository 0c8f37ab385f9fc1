"""Screen planning: the grid, amounts at scale checked by hand, the bench sheet lists every
amount, and storing is all or nothing."""

from __future__ import annotations

import html.parser
import json

import pytest
from molmass import Formula

from conftest import ROOT
from trapbook import planning
from trapbook.errors import TrapbookError
from trapbook.records import load_run

BASE = json.loads((ROOT / "demo_lab" / "runs" / "TB-0001.json").read_text(encoding="utf-8"))


def _base():
    return load_run(BASE)


def test_full_grid_and_levels():
    plan = planning.plan_screen(
        _base(), {"trap": ["furan", "anthracene"], "temperature": ["23 °C", "60 °C"], "fluoride": ["TBAF", "CsF/TBAB"]}
    )
    assert len(plan.runs) == 2 * 2 * 2  # a full factorial grid: the product of the level counts
    combos = {tuple(sorted(pr.run.factors.items())) for pr in plan.runs}
    assert len(combos) == 8
    assert all(pr.run.status == "planned" and pr.run.outcome is None for pr in plan.runs)
    for pr in plan.runs:
        f = pr.run.factors
        assert [ln.name for ln in pr.run.lines_by_role("trap")] == [f["trap"]]
        names = {ln.name for ln in pr.run.lines}
        assert all(a in names for s in pr.run.steps for a in s.add)  # every addition names a line of the run
        hot = max(s.temperature.magnitude for s in pr.run.steps if s.temperature is not None)
        assert f"{hot:g} °C" == f["temperature"]
        fl = {ln.name for ln in pr.run.lines_by_role("fluoride source")}
        assert fl == ({"TBAF 1.0 M in THF"} if f["fluoride"] == "TBAF" else {"CsF"})
        assert ("TBAB" in names) == (f["fluoride"] == "CsF/TBAB")


def test_subset_by_vial_number_and_by_levels():
    factors = {"trap": ["furan", "anthracene"], "temperature": ["23 °C", "60 °C"]}
    a = planning.plan_screen(_base(), factors, subset=[1, 4])
    assert [pr.run.factors for pr in a.runs] == [
        {"trap": "furan", "temperature": "23 °C"},
        {"trap": "anthracene", "temperature": "60 °C"},
    ]
    b = planning.plan_screen(_base(), factors, subset=[{"trap": "anthracene"}])
    assert {pr.run.factors["temperature"] for pr in b.runs} == {"23 °C", "60 °C"}
    with pytest.raises(TrapbookError):
        planning.plan_screen(_base(), factors, subset=[5])


def test_amounts_at_scale_by_hand():
    plan = planning.plan_screen(_base(), {"trap": ["furan", "anthracene"]}, scale="0.250 mmol")
    mw_prec = Formula("C13H23F3O3SSi").mass  # Source: molmass (IUPAC atomic weights), precursor formula
    for pr in plan.runs:
        t = pr.amounts
        assert t.limiting_mmol == pytest.approx(0.250)
        assert t.line(pr.run.lines_by_role("precursor")[0].name).mass_mg == pytest.approx(0.250 * mw_prec, rel=1e-4)
        # Source: c = n / V kept constant: 1.0 mL at 0.100 mmol (the base run) → 2.5 mL at 0.250 mmol.
        assert t.line("THF").volume_ul == pytest.approx(2500.0)
        trap = t.line(pr.run.factors["trap"])
        assert trap.equiv == pytest.approx(10.0)  # the base's 10 equiv is kept
        if pr.run.factors["trap"] == "furan":
            # Source: docs/sources.md furan M 68.07 g/mol, density 0.951 g/mL (CRC, from memory): 2.50 mmol → 178.9 µL
            assert trap.volume_ul == pytest.approx(2.50 * 68.07 / 0.951, rel=1e-3)
        else:
            # Source: docs/sources.md anthracene M 178.23 g/mol: 2.50 mmol → 445.6 mg, weighed
            assert trap.mass_mg == pytest.approx(2.50 * 178.23, rel=1e-3)
        tbaf = t.line("TBAF 1.0 M in THF")
        # Source: docs/sources.md equiv_i = n_i / n_limiting and n = c V: 1.5 equiv (the base run's) of a 1.0 M solution
        assert tbaf.volume_ul == pytest.approx(1.5 * 0.250 / 1.0 * 1000)


def test_bench_sheet_lists_every_amount_in_order():
    from trapbook.units import fmt_mg, fmt_ul

    plan = planning.plan_screen(_base(), {"trap": ["furan", "anthracene"], "temperature": ["23 °C", "60 °C"]}, scale="0.10 mmol")
    text = planning.bench_sheet_text(plan)
    blocks = text.split("\n[V")[1:]
    assert len(blocks) == 4
    for pr, block in zip(plan.runs, blocks):
        for row in pr.amounts.lines:
            if row.role == "product":
                continue
            shown = f"{fmt_mg(row.mass_mg)} mg" if row.form == "solid" else f"{fmt_ul(row.volume_ul)} µL"
            assert f"{shown}  {row.name}" in block, (row.name, block)
        order = [ln for s in pr.run.steps for ln in s.add]
        pos = [block.index(f"  {name}") for name in order]
        assert pos == sorted(pos)  # additions appear in the order of the steps
    assert "SDS" in text and "safety officer" in text


def test_bench_sheet_html_parses_and_warns():
    checks = pytest.importorskip("trapbook.checks", reason="flags come from the bench checks")
    assert checks
    plan = planning.plan_screen(_base(), {"temperature": ["23 °C", "60 °C"]})
    page = planning.bench_sheet_html(plan)

    class P(html.parser.HTMLParser):
        rows = 0

        def handle_starttag(self, tag, attrs):
            if tag == "tr":
                P.rows += 1

    P().feed(page)
    assert P.rows >= sum(len(planning.vial_instructions(pr)) for pr in plan.runs)
    # Source: NASEM 2016 App. D, furan bp 31.4 °C: the 60 °C open vial is flagged, the 23 °C one is not for that.
    codes = [{f.code for f in pr.findings} for pr in plan.runs]
    assert any(c.startswith("above-bp") for c in codes[1]) and not any(c.startswith("above-bp") for c in codes[0])


def test_store_plan_is_atomic_and_listed(notebook):
    plan = planning.make_screen(notebook, _base(), {"trap": ["furan", "anthracene"]}, scale="0.10 mmol", name="trap pair")
    sc = notebook.get_screen(plan.screen_id)
    assert sc.runs == plan.run_ids and len(sc.runs) == 2
    assert sc.factors == {"trap": ["furan", "anthracene"]}
    runs = notebook.screen_runs(sc)
    assert [r.status for r in runs] == ["planned", "planned"] and all(r.screen == sc.id for r in runs)
    n_runs, n_screens = notebook.count_runs(), len(notebook.list_screens())
    with pytest.raises(TrapbookError):
        planning.make_screen(notebook, _base(), {"trap": ["furan", "unobtainium"]})
    assert (notebook.count_runs(), len(notebook.list_screens())) == (n_runs, n_screens)


@pytest.mark.parametrize(
    "factors",
    [
        {"colour": ["red"]},
        {"trap": []},
        {"trap": ["furan", "Furan"]},
        {"temperature": ["hot"]},
        {"fluoride": ["magic"]},
        {"trap equiv": ["lots"]},
    ],
)
def test_bad_factors_are_trapbook_errors(factors):
    with pytest.raises(TrapbookError) as info:
        planning.plan_screen(_base(), factors)
    assert info.value.hint


def test_split_levels_keeps_locant_commas():
    assert planning.split_levels("furan,2,5-dimethylfuran,1,3-diphenylisobenzofuran") == [
        "furan",
        "2,5-dimethylfuran",
        "1,3-diphenylisobenzofuran",
    ]
    assert planning.split_levels("5,10") == ["5", "10"]
    assert planning.split_levels("23 °C,60 °C") == ["23 °C", "60 °C"]
    assert planning.parse_vary(["temp=23 °C,60 °C", "equiv=5,10"]) == {
        "temperature": ["23 °C", "60 °C"],
        "trap equiv": ["5", "10"],
    }


def test_known_traps_match_reference_masses():
    # Source: docs/sources.md molar masses (IUPAC 2021), via molmass from the table's SMILES formulas.
    from rdkit import Chem
    from rdkit.Chem import rdMolDescriptors

    ref = {"furan": 68.07, "2,5-dimethylfuran": 96.13, "anthracene": 178.23, "1,3-diphenylisobenzofuran": 270.33}
    for name, mw in ref.items():
        t = planning.find_trap(name)
        assert Formula(rdMolDescriptors.CalcMolFormula(Chem.MolFromSmiles(t.smiles))).mass == pytest.approx(mw, abs=0.02)


def test_cli_plan_dry_run_and_store(tmp_path):
    from click.testing import CliRunner

    from trapbook.cli import main

    db = tmp_path / "nb.sqlite"
    base = ROOT / "demo_lab" / "runs" / "TB-0001.json"
    r = CliRunner().invoke(
        main,
        [
            "--db",
            str(db),
            "screen",
            "plan",
            str(base),
            "--vary",
            "trap=furan,anthracene",
            "--vary",
            "temperature=23 °C,60 °C",
            "--scale",
            "0.10 mmol",
            "--dry-run",
            "--json",
        ],
    )
    assert r.exit_code == 0, r.output
    data = json.loads(r.output)
    assert data["screen_id"] is None and len(data["runs"]) == 4
    assert {"vial", "factors", "title", "run", "amounts", "amounts_problem", "findings"} <= set(data["runs"][0])
    assert not db.exists()  # a dry run stores nothing, not even an empty notebook
    assert CliRunner().invoke(main, ["--db", str(db), "init"]).exit_code == 0
    sheet = tmp_path / "sheet.html"
    r = CliRunner().invoke(
        main, ["--db", str(db), "screen", "plan", str(base), "--vary", "trap=furan,anthracene", "--sheet", str(sheet)]
    )
    assert r.exit_code == 0, r.output
    assert "stored screen SC-0001" in r.output and sheet.read_text(encoding="utf-8").startswith("<!DOCTYPE html>")
    r = CliRunner().invoke(main, ["--db", str(db), "screens", "--json"])
    assert [s["id"] for s in json.loads(r.output)] == ["SC-0001"]
    r = CliRunner().invoke(main, ["--db", str(db), "screen", "plan", str(base), "--vary", "colour=red"])
    assert r.exit_code == 2 and "Traceback" not in r.output
