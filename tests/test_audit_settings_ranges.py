"""Each check setting has a range a lab may set it within: a value far outside it (1e308 equiv
of trap, a 1e-300 mL headspace, NaN, a negative count) is refused with the setting, its range
and what to do; a value a notebook stored before the ranges were checked is still read.

Source: docs/sources.md, "Ranges of the check settings" (common practice, no source; a vessel
cannot be filled past 100 % and a yield limit below 100 % would refuse a perfect yield: the
definitions of fill and yield). The largest finite double is about 1.8e308 (IEEE 754 binary64,
docs/sources.md "Bench words, input limits and ids").
"""

from __future__ import annotations

import dataclasses
import json

import pytest
from click.testing import CliRunner

from trapbook.checks import CheckSettings
from trapbook.cli import main
from trapbook.errors import TrapbookError
from trapbook.settings import CHECKS_KEY, notebook_check_settings, update_check_settings
from trapbook.store import Notebook


@pytest.fixture
def db(tmp_path):
    path = tmp_path / "nb.sqlite"
    assert CliRunner().invoke(main, ["--db", str(path), "init"]).exit_code == 0
    return path


@pytest.mark.parametrize(
    ("assignment", "name"),
    [
        ("trap_min_equiv=1e308", "trap_min_equiv"),
        ("headspace_ml=1e-300", "headspace_ml"),
        ("bp_margin_c=-1e300", "bp_margin_c"),
        ("vessel_fill_max_pct=250", "vessel_fill_max_pct"),  # a vessel cannot be filled past 100 %
        ("yield_max_pct=50", "yield_max_pct"),  # a perfect yield is 100 % by definition
        ("trap_min_equiv=nan", "trap_min_equiv"),
        ("fluoride_min_per_silyl=-1", "fluoride_min_per_silyl"),
    ],
)
def test_an_absurd_value_is_refused_with_its_range(db, assignment, name):
    res = CliRunner().invoke(main, ["--db", str(db), "settings", "--set", assignment])
    assert res.exit_code == 2, res.output
    low, high, unit = CheckSettings.allowed_range(name)
    assert name in res.stderr and f"{low:g} to {high:g} {unit}" in res.stderr
    assert "what to do:" in res.stderr and f"{name}=" in res.stderr
    assert "Traceback" not in res.output
    with Notebook.open(db) as nb:
        assert nb.setting_history(CHECKS_KEY) == []  # nothing written


def test_under_json_the_refusal_names_the_field(db):
    res = CliRunner().invoke(main, ["--db", str(db), "settings", "--set", "headspace_ml=1e-300", "--json"])
    assert res.exit_code == 2
    out = json.loads(res.stdout)
    assert out["field"] == "headspace_ml" and "0.1 to 10000 mL" in out["error"]


def test_every_default_lies_in_its_own_range():
    for f in dataclasses.fields(CheckSettings):
        low, high, _unit = CheckSettings.allowed_range(f.name)
        assert low <= f.default <= high, f.name


def test_values_in_range_are_accepted(db):
    res = CliRunner().invoke(main, ["--db", str(db), "settings", "--set", "trap_min_equiv=20", "--set", "headspace_ml=25"])
    assert res.exit_code == 0, res.output
    with Notebook.open(db) as nb:
        s = notebook_check_settings(nb)
    assert (s.trap_min_equiv, s.headspace_ml) == (20.0, 25.0)


def test_a_value_stored_before_the_ranges_is_still_read(db, minimal_run_file):
    """Written straight into the store, as an earlier Trapbook accepted it."""
    assert CliRunner().invoke(main, ["--db", str(db), "add", str(minimal_run_file)]).exit_code == 0
    with Notebook.open(db) as nb:
        nb.set_check_settings({"trap_min_equiv": 1e308, "headspace_ml": 1e-300}, author="earlier", reason="old")
    listing = CliRunner().invoke(main, ["--db", str(db), "settings", "--json"])
    assert listing.exit_code == 0, listing.output
    assert json.loads(listing.stdout)["trap_min_equiv"] == 1e308
    shown = CliRunner().invoke(main, ["--db", str(db), "show", "TB-0001", "--json"])
    assert shown.exit_code == 0, shown.output
    assert "trap-low" in shown.stdout  # judged under the stored threshold: 10 equiv of furan is below 1e308
    # an unrelated change keeps the stored value and is not refused for it
    with Notebook.open(db) as nb:
        kept = update_check_settings(nb, ["ee_tolerance_pct=3"], author="tester")
        assert (kept.ee_tolerance_pct, kept.trap_min_equiv) == (3.0, 1e308)
        # writing the absurd value anew is refused
        with pytest.raises(TrapbookError) as err:
            update_check_settings(nb, ["headspace_ml=1e-300"], author="tester")
        assert err.value.field == "headspace_ml"


def test_the_python_api_refuses_out_of_range_too():
    with pytest.raises(TrapbookError, match="trap_min_equiv"):
        CheckSettings(trap_min_equiv=1e308)
