"""Planned against weighed: a worked example by hand, the finding beyond the lab's limit, the
paragraph and the bench sheet.

Worked example (TB-0001 of the demo, with two lines weighed):
  precursor C13H23F3O3SSi, M = 344.47 g/mol (molmass): planned 0.100 mmol = 34.45 mg,
      weighed 36.1 mg -> n = 36.1 / 344.47 = 0.1048 mmol (+4.8 % on the plan)
  furan C4H4O, M = 68.07 g/mol, density 0.951 g/mL: planned 10 equiv = 1.000 mmol = 68.07 mg = 71.6 µL,
      measured 80 µL -> 80 × 0.951 = 76.08 mg -> 1.1176 mmol -> 1.1176 / 0.1048 = 10.66 equiv (+11.8 %)
  TBAF 1.0 M, 1.5 equiv, not weighed -> 1.5 × 0.1048 = 0.1572 mmol -> 157.2 µL
  liquid: THF 1000 µL + furan 80 µL + TBAF 157.2 µL = 1237.2 µL -> c = 0.1048 / 1.2372 = 0.0847 M
  yield: 11.8 mg of C13H18O (M = 190.29) = 0.06201 mmol -> 0.06201 / 0.1048 = 59.2 % (planned basis: 62.0 %)
  with the lab's limit of 10 %, the furan (+11.8 %) is a finding and the precursor (+4.8 %) is not.
"""

from __future__ import annotations

import json

import pytest
from molmass import Formula

from conftest import ROOT
from trapbook import amounts, planning
from trapbook.checks import CheckSettings, run_checks
from trapbook.errors import RecordError
from trapbook.procedure import run_procedure
from trapbook.records import load_run
from trapbook.weighed import planned_vs_weighed

BASE = json.loads((ROOT / "demo_lab" / "runs" / "TB-0001.json").read_text(encoding="utf-8"))
# Source: molmass (independent library, IUPAC standard atomic weights).
M_PRECURSOR = Formula("C13H23F3O3SSi").mass
M_FURAN = Formula("C4H4O").mass
M_ADDUCT = Formula("C13H18O").mass
FURAN_DENSITY = 0.951  # g/mL, as written on the run's furan line


def weighed_run(precursor="36.1 mg", furan="80 µL"):
    data = json.loads(json.dumps(BASE))
    data["lines"][0]["actual"] = precursor
    data["lines"][1]["actual"] = furan
    return load_run(data)


def test_equiv_concentration_and_yield_come_from_what_was_weighed():
    run = weighed_run()
    table = amounts.compute(run)
    n_pre = 36.1 / M_PRECURSOR
    n_furan = 80 / 1000 * FURAN_DENSITY * 1000 / M_FURAN
    assert table.limiting_mmol == pytest.approx(n_pre, rel=1e-4)
    assert table.line("furan").equiv == pytest.approx(n_furan / n_pre, rel=1e-4)
    tbaf_ul = 1.5 * n_pre / 1.0 * 1000
    assert table.line("TBAF 1.0 M in THF").volume_ul == pytest.approx(tbaf_ul, rel=1e-4)
    assert table.concentration_M == pytest.approx(n_pre / ((1000 + 80 + tbaf_ul) / 1000), rel=1e-4)
    pct, kind = amounts.headline_yield(run)
    assert kind == "isolated" and pct == pytest.approx(100 * 11.8 / M_ADDUCT / n_pre, rel=1e-4)
    # The plan alone is still there: 10.0 equiv of furan on 0.100 mmol.
    plan = amounts.compute(run, planned=True)
    assert plan.limiting_mmol == pytest.approx(0.100) and plan.line("furan").equiv == pytest.approx(10.0)


def test_differences_in_the_kind_measured():
    rows = {w.name: w for w in planned_vs_weighed(weighed_run())}
    pre, furan = rows[BASE["lines"][0]["name"]], rows["furan"]
    assert (pre.unit, furan.unit) == ("mg", "µL")
    assert pre.planned == pytest.approx(0.100 * M_PRECURSOR, rel=1e-4)
    assert furan.planned == pytest.approx(10 * 0.100 * M_FURAN / FURAN_DENSITY, rel=1e-4)
    assert pre.difference_pct == pytest.approx(100 * (36.1 - pre.planned) / pre.planned, rel=1e-4)
    assert furan.difference_pct == pytest.approx(100 * (80 - furan.planned) / furan.planned, rel=1e-4)


def test_a_difference_beyond_the_lab_limit_is_a_finding():
    run = weighed_run()
    # common practice, no source: 10 % is the default limit; furan is +11.8 %, the precursor +4.8 %.
    found = [f for f in run_checks(run) if f.code == "weighed-off-plan"]
    assert [f.lines for f in found] == [["furan"]] and found[0].severity == "warn"
    assert not [f for f in run_checks(run, settings=CheckSettings(weighed_diff_max_pct=15)) if f.code == "weighed-off-plan"]
    assert not [f for f in run_checks(load_run(BASE)) if f.code == "weighed-off-plan"]  # nothing weighed, nothing said


def test_the_paragraph_gives_what_was_weighed():
    text = run_procedure(weighed_run()).blocks[1].text
    n_pre = 36.1 / M_PRECURSOR
    n_furan = 80 * FURAN_DENSITY / M_FURAN
    assert f"(36.1 mg, {n_pre:#.3g} mmol, 1.0 equiv)" in text
    assert f"furan ({80 * FURAN_DENSITY:.1f} mg, 80 µL, {n_furan:#.3g} mmol, {n_furan / n_pre:.1f} equiv)" in text


@pytest.mark.parametrize("bad", ["12", 12, "3 h", "nan mg", "-1 mg", "2 M"])
def test_unreadable_weighed_amounts_are_refused_in_words(bad):
    with pytest.raises(RecordError) as err:
        weighed_run(furan=bad)
    assert "furan" in err.value.message and "actual" in err.value.message


def test_a_product_line_has_nothing_weighed():
    data = json.loads(json.dumps(BASE))
    data["lines"][-1]["actual"] = "10 mg"
    with pytest.raises(RecordError, match="nothing weighed in"):
        load_run(data)


def test_bench_sheet_has_a_weighed_column():
    plan = planning.plan_screen(load_run(BASE), {"temperature": ["23 °C", "60 °C"]})
    page = planning.bench_sheet_html(plan)
    assert page.count("<th>weighed</th>") == len(plan.runs)
    text = planning.bench_sheet_text(plan)
    additions = sum(1 for pr in plan.runs for s in pr.run.steps for _ in s.add)
    assert text.count("weighed: ________") == additions  # a blank to fill in for each weighing or measuring


def test_run_report_shows_planned_and_weighed(notebook):
    from trapbook import reports

    data = json.loads(json.dumps(BASE))
    data.pop("id")
    data["lines"][1]["actual"] = "80 µL"
    rid = notebook.add_run(data, author="tester").run_id
    page = reports.run_report_html(notebook, rid)
    planned = 10 * 0.100 * M_FURAN / FURAN_DENSITY  # µL, worked out above
    row = f"<tr><td>furan</td><td class='n'>{planned:.0f} µL</td><td class='n'>80 µL</td>"
    assert row in page
    assert f"{100 * (80 - planned) / planned:+.1f} %" in page and "weighed-off-plan" in page


def test_editing_a_result_in_the_workbench_keeps_the_characterisation():
    """A form that does not show a recorded field must not drop it (the record is the chemist's)."""
    from trapbook.tui.outcome_form import PRODUCT_FIELDS, product_entry

    old = {
        "product": "furan adduct",
        "isolated_mass": "11.8 mg",
        "appearance": "colourless oil",
        "rf": 0.42,
        "nmr_text": "1H NMR δ 6.3",
        "hrms": {"ion": "[M+Na]+", "found_mz": 213.1250},
    }
    values = {k: "" for k, *_ in PRODUCT_FIELDS}
    values.update(product="furan adduct", isolated_mass="12.0 mg")
    entry, problem = product_entry(values, ["furan adduct"], [old], 0)
    assert problem is None and entry["isolated_mass"] == "12.0 mg"
    assert {k: entry[k] for k in ("appearance", "rf", "nmr_text", "hrms")} == {
        k: old[k] for k in ("appearance", "rf", "nmr_text", "hrms")
    }


def test_a_solvent_weighed_without_its_density_is_refused_not_dropped_from_the_volume():
    data = json.loads(json.dumps(BASE))
    data["lines"][3]["actual"] = "890 mg"  # THF by mass: without a density its volume, and so c, is unknown
    with pytest.raises(RecordError, match="needs its volume"):
        amounts.compute(load_run(data))
