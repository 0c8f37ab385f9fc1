"""The quantity parser against SI definitions and the spellings chemists type."""

import pytest

from trapbook.errors import UnitError
from trapbook.units import dump_quantity, parse_quantity, to_canonical


@pytest.mark.parametrize(
    "text,kind,expected",
    [
        # Source: SI prefixes (BIPM SI Brochure, 9th ed.): micro = 1e-6, milli = 1e-3
        ("0.20 mmol", "amount", 0.20),
        ("200 µmol", "amount", 0.20),
        ("200 umol", "amount", 0.20),
        ("0.0002 mol", "amount", 0.20),
        ("143 µL", "volume", 143.0),
        ("143 uL", "volume", 143.0),
        ("0.143 mL", "volume", 143.0),
        ("1.5 g", "mass", 1500.0),
        ("59.7 mg", "mass", 59.7),
        ("1.0 M", "molarity", 1.0),
        ("250 mM", "molarity", 0.25),
        # Source: SI Brochure, 9th ed., Table 8 (non-SI units accepted for use): 1 h = 60 min
        ("2 h", "duration", 120.0),
        ("30 min", "duration", 30.0),
        # Source: REFERENCE.md, equiv_i = n_i / n_limiting (a plain number)
        ("3 equiv", "equiv", 3.0),
        ("3 eq", "equiv", 3.0),
        # Source: ISO 80000-1, percent = 0.01
        ("98 %", "fraction", 0.98),
        ("5 wt%", "fraction", 0.05),
        # Source: identity, g/mL is the stored unit of density
        ("0.951 g/mL", "density", 0.951),
    ],
)
def test_lab_spellings_convert(text, kind, expected):
    assert to_canonical(parse_quantity(text, kind), kind) == pytest.approx(expected)


@pytest.mark.parametrize(
    "text,celsius",
    [
        # Source: SI definition, T/°C = T/K − 273.15
        ("-78 °C", -78.0),
        ("-78 degC", -78.0),
        ("195.15 K", -78.0),
        ("373.15 K", 100.0),
        ("23 °C", 23.0),
    ],
)
def test_temperatures_are_offset_safe(text, celsius):
    assert to_canonical(parse_quantity(text, "temperature"), "temperature") == pytest.approx(celsius)


def test_round_trip_through_stored_form():
    for text, kind in [("143 µL", "volume"), ("-78 °C", "temperature"), ("0.200 mmol", "amount"), ("5 wt%", "fraction")]:
        q = parse_quantity(text, kind)
        stored = dump_quantity(q)
        assert set(stored) == {"value", "unit"}
        assert to_canonical(parse_quantity(stored, kind), kind) == pytest.approx(to_canonical(q, kind))


def test_wrong_dimension_names_field_and_both_kinds():
    with pytest.raises(UnitError) as err:
        parse_quantity("2 mg", "volume", field="volume")
    msg = err.value.message
    assert "volume" in msg and "'2 mg'" in msg and "a mass" in msg
    assert err.value.hint


@pytest.mark.parametrize("bad", ["abc", "5", "", "1e400 mg", "nan mg", "5 mg/", "-- 5 mg", {"value": "x"}, True, None, [1]])
def test_bad_quantities_raise_unit_errors_only(bad):
    with pytest.raises(UnitError):
        parse_quantity(bad, "mass", field="mass")


def test_below_absolute_zero_is_refused():
    with pytest.raises(UnitError, match="absolute zero"):
        parse_quantity("-300 °C", "temperature")
