"""A screen planned from a run that records what was weighed (`actual`) starts from the plan:
no vial inherits the earlier flask's weighing. Before, a vial at 0.10 mmol scale said
"weigh 72.0 mg (0.238 mmol) ... weighed: 72 mg", the base run's own weighing.

Sources: docs/sources.md, "Amounts, molar masses and solvents" (molar masses from the IUPAC
atomic weights, here recomputed with molmass) and "Experimental paragraph and weighed
amounts" (what was weighed replaces the plan for that run only).
"""

from __future__ import annotations

import copy

import pytest
from molmass import Formula

from samples import MINIMAL_RUN
from trapbook import planning

PRECURSOR_MW = Formula("C10H13F3O3SSi").mass  # the aryne precursor, 298.35 g/mol


@pytest.fixture
def weighed_base() -> dict:
    base = copy.deepcopy(MINIMAL_RUN)
    base["status"] = "done"
    base["lines"][0]["actual"] = "71.6 mg"  # 0.240 mmol weighed against 0.200 mmol planned
    return base


def test_no_planned_vial_carries_the_base_runs_weighing(weighed_base):
    plan = planning.plan_screen(weighed_base, {"trap": ["furan", "anthracene"]}, scale="0.100 mmol")
    assert len(plan.runs) == 2
    for pr in plan.runs:
        assert all(ln.actual is None for ln in pr.run.lines)
        precursor = pr.amounts.line("aryne precursor A")
        assert precursor.mmol == pytest.approx(0.100)
        assert precursor.mass_mg == pytest.approx(0.100 * PRECURSOR_MW, abs=0.05)  # 29.8 mg
        assert not [f for f in pr.findings if f.code == "weighed-off-plan"]


def test_the_bench_sheet_leaves_the_weighed_box_empty(weighed_base):
    text = planning.bench_sheet_text(planning.plan_screen(weighed_base, {"trap": ["furan"]}, scale="0.100 mmol"))
    assert "71.6" not in text and "72 mg" not in text
    assert f"{0.100 * PRECURSOR_MW:.1f} mg" in text


def test_without_a_scale_the_plan_of_the_base_run_is_kept(weighed_base):
    pr = planning.plan_screen(weighed_base, {"trap": ["furan"]}).runs[0]
    assert pr.amounts.line("aryne precursor A").mmol == pytest.approx(0.200)
