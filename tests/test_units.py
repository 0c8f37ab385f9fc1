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
        # Source: docs/sources.md (Units): equiv_i = n_i / n_limiting, a plain number
        ("3 equiv", "equiv", 3.0),
        ("3 eq", "equiv", 3.0),
        # Source: docs/sources.md (Units): mol% is hundredths of the limiting amount (percent = 0.01, ISO 80000-1)
        ("5 mol%", "equiv", 0.05),
        ("5 mol %", "equiv", 0.05),
        ("0.5 mol%", "equiv", 0.005),
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
        # Source: NIST SP 811 (Guide for the Use of the SI), 4.2.1.1: t/°C = T/K − 273.15; the minus
        # sign as typeset is U+2212 (Unicode Standard, Mathematical Operators); º (U+00BA) and ˚ (U+02DA)
        # are what keyboards give for the degree sign
        ("\u221278 °C", -78.0),
        ("\u2212 78 °C", -78.0),
        ("\u201378 °C", -78.0),
        ("-78 ºC", -78.0),
        ("-78 ˚C", -78.0),
        ("-78 deg C", -78.0),
        ("\u221240 °F", -40.0),
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


@pytest.mark.parametrize("text", ["\u221278 °C", "−78 ºC", "–78 °C"])
def test_typeset_minus_gives_the_kelvin_value(text):
    # Source: NIST SP 811, 4.2.1.1: T/K = t/°C + 273.15, so −78 °C = 195.15 K
    assert parse_quantity(text, "temperature").to("K").magnitude == pytest.approx(195.15)


def test_en_dash_between_numbers_is_a_range_not_a_minus():
    with pytest.raises(UnitError) as err:
        parse_quantity("0\u201325 °C", "temperature", field="temperature")
    assert "range" in err.value.message and "to" in err.value.hint


def test_mol_percent_is_stored_as_written():
    stored = dump_quantity(parse_quantity("5 mol%", "equiv"))
    assert stored == {"value": 5.0, "unit": "mol%"}
    # Source: docs/sources.md (Units): 5 mol% = 0.05 equiv
    assert to_canonical(parse_quantity(stored, "equiv"), "equiv") == pytest.approx(0.05)


@pytest.mark.parametrize(
    "value,kind,needle",
    [
        ("1e308 mg", "mass", "too large"),
        ("1e308 g", "mass", "too large"),  # finite as typed, infinite in mg
        (1e308, "equiv", "too large"),
        ("1" * 400 + " mg", "mass", "finite"),
        ({"value": 10**400, "unit": "mg"}, "mass", "finite"),
        ("5e-324 mg", "mass", "too small"),  # a subnormal float
        ("1e-400 mg", "mass", "too small"),  # underflows to 0 when read
        (float("inf"), "equiv", "finite"),
        (float("nan"), "fraction", "finite"),
        ("inf mmol", "amount", ""),
        ("3000 °C", "temperature", "outside"),
        ("200 M", "molarity", "too large"),
        ("50 g/mL", "density", "too large"),
    ],
)
def test_absurd_values_are_refused_with_the_field_named(value, kind, needle):
    with pytest.raises(UnitError) as err:
        parse_quantity(value, kind, field="the field")
    assert "the field" in err.value.message and needle in err.value.message
    assert err.value.hint
    assert len(err.value.message) < 300  # a 400-digit number is cut when quoted


def test_bench_scale_extremes_are_still_accepted():
    # common practice, no source: 1 µg and 5 kg, 0.1 µL and 20 L, a week, liquid-nitrogen cold
    for text, kind in [
        ("1 ug", "mass"),
        ("5 kg", "mass"),
        ("0.1 uL", "volume"),
        ("20 L", "volume"),
        ("7 d", "duration"),
        ("-196 °C", "temperature"),
        ("0.001 mol%", "equiv"),
    ]:
        parse_quantity(text, kind)


def test_hostile_text_is_quoted_harmlessly():
    with pytest.raises(UnitError) as err:
        parse_quantity("\x1b]52;c;aGVsbG8=\x07 mg", "mass", field="mass")
    assert "\x1b" not in err.value.message and "\x07" not in err.value.message
    assert "\\u001b" in err.value.message  # spelled out, so the user can find it
