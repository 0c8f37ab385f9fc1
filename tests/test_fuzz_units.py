"""Property-based tests of the quantity parser: any input gives a Quantity or a UnitError, nothing else."""

from __future__ import annotations

import math

import pint
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from trapbook.errors import TrapbookError, UnitError
from trapbook.units import KINDS, LIMITS, parse_quantity, to_canonical

EXAMPLES = settings(max_examples=1000, deadline=None, suppress_health_check=[HealthCheck.too_slow])

_UNITISH = st.sampled_from(
    [
        "mg",
        "g",
        "kg",
        "µg",
        "ug",
        "mL",
        "µL",
        "uL",
        "L",
        "mmol",
        "µmol",
        "mol",
        "M",
        "mM",
        "°C",
        "degC",
        "K",
        "°F",
        "min",
        "h",
        "hrs",
        "s",
        "equiv",
        "eq",
        "%",
        "wt%",
        "g/mL",
        "g/mol",
        "bar",
        "",
        " ",
        "mg/0",
        "m**99999",
        "1/0",
        "(",
        "°",
        "µ",
        "furan",
        "NaN",
        "mg mg",
        "e",
        "e5",
        "--",
        "mmol/mL",
        "mol/L",
        "degK",
        "Δ",
        "\x00",
    ]
)
_NUMBERISH = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True),
    st.integers(min_value=-(10**30), max_value=10**30),
    st.sampled_from(
        [
            "1e400",
            "-0",
            "0x10",
            "1_000",
            "½",
            "١٢",
            ".",
            "1.2.3",
            "inf",
            "nan",
            "+5",
            "1e-400",
            "1e308",
            "5e-324",
            "9" * 400,
            "\u221278",
            "\u2013 5",
            "1e-320",
            "-1e308",
        ]
    ),
    st.floats(min_value=1e-320, max_value=1e-300),  # subnormal and near it
)


def _text_quantity():
    return st.builds(lambda n, u, sep: f"{n}{sep}{u}", _NUMBERISH, _UNITISH, st.sampled_from(["", " ", "  ", "\t"]))


ANY_VALUE = st.one_of(
    st.text(max_size=40),
    _text_quantity(),
    _NUMBERISH,
    st.booleans(),
    st.none(),
    st.dictionaries(
        st.sampled_from(["value", "unit", "units", "magnitude"]),
        st.one_of(_NUMBERISH, _UNITISH, st.text(max_size=10), st.none(), st.booleans(), st.lists(st.integers(), max_size=2)),
        max_size=3,
    ),
    st.lists(st.integers(), max_size=3),
)


@EXAMPLES
@given(value=ANY_VALUE, kind=st.sampled_from(sorted(KINDS)))
def test_parser_gives_a_quantity_or_a_unit_error(value, kind):
    try:
        q = parse_quantity(value, kind, field="test field")
    except UnitError as exc:
        assert exc.message and "test field" in exc.message  # the error names the field
        return
    except TrapbookError as exc:  # pragma: no cover - any other kind would be a surprise, but allowed
        assert exc.message
        return
    assert isinstance(q, pint.Quantity)
    assert math.isfinite(float(q.magnitude))
    value = to_canonical(q, kind)  # a parsed quantity can always be brought to the stored unit
    low, high = LIMITS[kind]
    assert math.isfinite(value)
    if kind == "temperature":
        assert low <= value <= high
    else:  # nothing absurd gets through: within the bounds, or exactly zero
        assert value == 0 or low <= abs(value) <= high


# Source: SI prefixes (BIPM SI Brochure, 9th ed.): m = 1e-3, µ = 1e-6, k = 1e3
_MASS_MG = {"mg": 1.0, "g": 1e3, "kg": 1e6, "µg": 1e-3, "ug": 1e-3}
_VOLUME_UL = {"µL": 1.0, "uL": 1.0, "mL": 1e3, "L": 1e6}
_AMOUNT_MMOL = {"mmol": 1.0, "µmol": 1e-3, "mol": 1e3}


@EXAMPLES
@given(
    x=st.floats(min_value=1e-3, max_value=1e3, allow_nan=False),  # inside units.LIMITS for every prefix
    pair=st.sampled_from(
        [("mass", u, f) for u, f in _MASS_MG.items()]
        + [("volume", u, f) for u, f in _VOLUME_UL.items()]
        + [("amount", u, f) for u, f in _AMOUNT_MMOL.items()]
    ),
    sep=st.sampled_from(["", " "]),
)
def test_prefixed_units_scale_by_the_si_factor(x, pair, sep):
    kind, unit, factor = pair
    q = parse_quantity(f"{x!r}{sep}{unit}", kind)
    assert math.isclose(to_canonical(q, kind), x * factor, rel_tol=1e-9)


@EXAMPLES
@given(c=st.floats(min_value=-273.0, max_value=1000, allow_nan=False))  # 1e-14 K is refused as a typo
def test_celsius_kelvin_fahrenheit_agree(c):
    # Source: definitions of the Celsius and Fahrenheit scales: K = °C + 273.15, °F = °C × 9/5 + 32
    k = parse_quantity(f"{c + 273.15!r} K", "temperature")
    f = parse_quantity(f"{c * 9 / 5 + 32!r} °F", "temperature")
    assert math.isclose(to_canonical(k, "temperature"), c, abs_tol=1e-6)
    assert math.isclose(to_canonical(f, "temperature"), c, abs_tol=1e-6)


@EXAMPLES
@given(
    c=st.floats(min_value=0, max_value=273.15, allow_nan=False).filter(lambda c: c == 0 or c > 1e-6),
    unit=st.sampled_from(["°C", "ºC", "degC", "˚C"]),
    minus=st.sampled_from(["\u2212", "\u2013", "-"]),
    gap=st.sampled_from(["", " "]),
)
def test_any_typed_minus_and_degree_sign_read_alike(c, unit, minus, gap):
    # Source: NIST SP 811, 4.2.1.1 (t/°C = T/K − 273.15); U+2212 is the minus sign (Unicode Standard)
    q = parse_quantity(f"{minus}{gap}{c!r} {unit}", "temperature")
    assert to_canonical(q, "temperature") == -c
    assert math.isclose(q.to("K").magnitude, 273.15 - c, abs_tol=1e-9)


@EXAMPLES
@given(x=st.floats(min_value=0.001, max_value=1000, allow_nan=False))
def test_mol_percent_is_a_hundredth_of_an_equivalent(x):
    # Source: docs/sources.md (Units): percent = 0.01 (ISO 80000-1), mol% counted on the limiting line
    assert math.isclose(to_canonical(parse_quantity(f"{x!r} mol%", "equiv"), "equiv"), x / 100, rel_tol=1e-12)
