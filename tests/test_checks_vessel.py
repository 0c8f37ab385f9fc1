"""The vessel is part of the run: its volume sets the headspace of the gas estimate and the
fill check of a sealed vessel."""

from __future__ import annotations

import pytest

from test_checks import toluene_run
from trapbook.checks import run_checks
from trapbook.errors import TrapbookError
from trapbook.records import load_run

# Source: CODATA 2018, R = 8.314462618 J/(mol K); ideal gas p = nRT/V.
R = 8.314462618


def found(d, code):
    return [f for f in run_checks(load_run(d)) if f.code == code]


def test_the_vessel_sets_the_headspace_of_the_gas_estimate():
    d = toluene_run("120 °C", sealed=True)
    d["vessel"] = "15 mL"
    f = found(d, "above-bp-sealed")[0]
    # 0.200 mmol Me3SiF at 393.15 K in 15 mL less 2.0 mL of toluene
    bar = 0.200e-3 * R * 393.15 / 13.0e-6 / 1e5
    assert f"{bar:.1f} bar more in the 13 mL left above 2 mL of liquid in the 15 mL vessel" in f.message
    assert "assumed" not in f.message


def test_without_a_vessel_the_headspace_is_said_to_be_assumed():
    f = found(toluene_run("120 °C", sealed=True), "above-bp-sealed")[0]
    assert "assumed 10 mL headspace" in f.message


@pytest.mark.parametrize("vessel, severity", [("10 mL", None), ("3 mL", "warn"), ("1.5 mL", "stop")])
def test_fill_of_a_sealed_vessel(vessel, severity):
    # common practice, no source: a sealed vessel is filled to at most half (docs/sources.md, "Checks");
    # 2.0 mL of toluene is 20 % of 10 mL, 67 % of 3 mL, and does not fit in 1.5 mL.
    d = toluene_run("120 °C", sealed=True)
    d["vessel"] = vessel
    got = found(d, "vessel-overfilled")
    assert [f.severity for f in got] == ([severity] if severity else [])
    if got:
        assert "blast shield" in got[0].caution and got[0].steps == [2]


def test_an_open_flask_has_no_fill_limit():
    d = toluene_run("100 °C", sealed=False)
    d["vessel"] = "3 mL"
    assert found(d, "vessel-overfilled") == []


@pytest.mark.parametrize("bad", ["0 mL", "-5 mL", "5 g", "inf mL"])
def test_a_vessel_volume_that_cannot_be_is_refused_on_load(bad):
    d = toluene_run("100 °C", sealed=True)
    d["vessel"] = bad
    with pytest.raises(TrapbookError):
        load_run(d)
