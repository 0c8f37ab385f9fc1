"""The one pint registry and the quantity types every record uses.

Chemists type amounts the way they write them in the notebook ("0.20 mmol", "143 µL",
"-78 °C", "3 eq"). This module turns such text (or a stored ``{"value", "unit"}`` pair)
into a pint Quantity of the right dimension, or raises a `UnitError` that says which
field got what and what it expects. Temperatures are offset units, so they are always
built with ``Q_(x, "degC")`` and never multiplied.
"""

from __future__ import annotations

import math
import re
from typing import Annotated, Any

import pint
from pydantic import BeforeValidator, PlainSerializer, WithJsonSchema

from .errors import UnitError
from .text_safety import printable


def _registry() -> pint.UnitRegistry:
    """The registry, from pint's on-disk definition cache when it can be used (start-up speed)."""
    try:
        return pint.UnitRegistry(autoconvert_offset_to_baseunit=True, cache_folder=":auto:")
    except Exception:  # an unwritable cache folder must not stop the program
        return pint.UnitRegistry(autoconvert_offset_to_baseunit=True)


ureg = _registry()
ureg.define("equiv = [] = eq = equivalent = equivalents = equiv.")
ureg.define("weight_percent = 0.01")
# mol% of a catalytic line: hundredths of an equivalent of the limiting line (IUPAC Green Book, 1 % = 0.01).
ureg.define("mol_percent = 0.01 * equiv = mol%")
Q_ = ureg.Quantity

#: Lab spellings pint does not read as such, rewritten before parsing. The degree sign is
#: also typed as the masculine ordinal (º, U+00BA) or the ring above (˚, U+02DA).
_SPELLINGS = [
    (re.compile(r"µ|μ"), "u"),
    (re.compile(r"[°º˚]\s*C\b"), "degC"),
    (re.compile(r"\bdeg\s+C\b"), "degC"),
    (re.compile(r"[°º˚]\s*F\b"), "degF"),
    (re.compile(r"[°º˚]\s*K\b"), "K"),
    (re.compile(r"(?<![A-Za-z])℃"), "degC"),
    (re.compile(r"\bmol\s*%"), "mol_percent"),
    (re.compile(r"\bwt\s*%"), "weight_percent"),
    (re.compile(r"\bw/w\b"), ""),
    (re.compile(r"\bhrs?\b"), "h"),
    (re.compile(r"\bmins\b"), "min"),
    (re.compile(r"\bsec\b"), "s"),
    (re.compile(r"\bmol/L\b"), "M"),
    (re.compile(r"\bmmol/mL\b"), "M"),
]

#: What each field kind expects, in words and as a pint dimensionality.
KINDS: dict[str, tuple[str, str, str]] = {
    # kind: (dimensionality, words, examples)
    "amount": ("[substance]", "an amount of substance", "mmol, µmol, mol"),
    "mass": ("[mass]", "a mass", "mg, g"),
    "volume": ("[length] ** 3", "a volume", "µL, mL, L"),
    "molarity": ("[substance] / [length] ** 3", "a concentration", "M, mM"),
    "density": ("[mass] / [length] ** 3", "a density", "g/mL"),
    "temperature": ("[temperature]", "a temperature", "°C, K"),
    "duration": ("[time]", "a time", "min, h"),
    "molar_mass": ("[mass] / [substance]", "a molar mass", "g/mol"),
    "equiv": ("", "a number of equivalents", "equiv, eq"),
    "fraction": ("", "a fraction or percentage", "98 %, 0.98, 5 wt%"),
    "pressure": ("[pressure]", "a pressure", "bar, kPa"),
}

#: Unit each kind is stored and compared in.
CANONICAL_UNITS = {
    "amount": "mmol",
    "mass": "mg",
    "volume": "uL",
    "molarity": "M",
    "density": "g/mL",
    "temperature": "degC",
    "duration": "min",
    "molar_mass": "g/mol",
    "equiv": "equiv",
    "fraction": "dimensionless",
    "pressure": "bar",
}


def _describe(q: pint.Quantity) -> str:
    """Name the dimension a quantity actually has, for the error message."""
    for kind, (_dim, words, _) in KINDS.items():
        if kind in ("equiv", "fraction"):
            continue
        if q.dimensionality == ureg.parse_expression("1 " + _probe_unit(kind)).dimensionality:
            return words
    if q.dimensionless:
        return "a plain number"
    return f"of dimension {q.dimensionality}"


def _probe_unit(kind: str) -> str:
    return {
        "amount": "mol",
        "mass": "g",
        "volume": "L",
        "molarity": "M",
        "density": "g/mL",
        "temperature": "K",
        "duration": "s",
        "molar_mass": "g/mol",
        "pressure": "Pa",
    }[kind]


def _label(field: str | None) -> str:
    return f"{field} " if field else ""


def shown_input(value: Any, limit: int = 60) -> str:
    """What the user gave, safe to quote in an error: control characters spelled out, long text cut.

    Refusals quote the input so the user can find it; hostile input (an escape sequence, a
    newline faking a second message, 5,000 characters) must not act or flood when quoted.
    """
    text = value if isinstance(value, str) else repr(value)
    cut = len(text) > limit
    text = printable(text[:limit])  # the one rule for showing hostile text (text_safety)
    return text + (f"… ({len(value if isinstance(value, str) else repr(value)):,} characters)" if cut else "")


#: The smallest non-zero and the largest magnitude accepted for each kind, in its canonical
#: unit. They lie far beyond any bench (a typo of many orders of magnitude, a subnormal
#: float, 1e308), so only absurd values are refused, and every product of two accepted
#: values stays a finite float. Common practice, no source.
LIMITS: dict[str, tuple[float, float]] = {
    "amount": (1e-9, 1e7),  # mmol: 1 pmol to 10 kmol
    "mass": (1e-6, 1e9),  # mg: 1 ng to 1 t
    "volume": (1e-6, 1e9),  # µL: 1 pL to 1 m³
    "molarity": (1e-12, 100.0),  # M: 1 pM to 100 M (water is 55 M)
    "density": (1e-6, 30.0),  # g/mL: a thin gas to beyond osmium (22.6)
    "temperature": (-273.15, 2000.0),  # °C: absolute zero to a furnace
    "duration": (1e-3, 5.3e6),  # min: 0.06 s to about ten years
    "molar_mass": (1.0, 1e7),  # g/mol: a hydrogen atom to a large polymer
    "equiv": (1e-9, 1e6),
    "fraction": (1e-12, 1e3),  # 0.1 ppt to 100 000 %
    "pressure": (1e-12, 1e5),  # bar
}


def _check_limits(q: pint.Quantity, kind: str, field: str | None, shown: str) -> None:
    """Refuse a value outside LIMITS with the bound in the stored unit."""
    from .stored_reading import input_rules_apply

    if not input_rules_apply():
        return
    low, high = LIMITS[kind]
    unit = CANONICAL_UNITS[kind]
    try:
        value = to_canonical(q, kind)
    except (OverflowError, ValueError, ArithmeticError):
        value = math.inf
    words = KINDS[kind][1]
    shown_unit = "" if unit == "dimensionless" else f" {_UNIT_TEXT.get(str(ureg.Unit(unit)), unit)}"
    if kind == "temperature":
        typed = abs(float(q.magnitude))  # as given: a conversion may leave 1e-14 where 32 °F means 0 °C
        if 0 < typed < 1e-9:  # a subnormal or 1e-200 is a typo too
            raise UnitError(
                f"{_label(field)}'{shown}' is too close to zero to be a temperature that was meant",
                "check the exponent, or give 0",
                field=field,
            )
        if math.isfinite(value) and low <= value <= high:
            return
        raise UnitError(
            f"{_label(field)}'{shown}' is outside {low:g} to {high:g} °C, not a temperature a run can have",
            "check the sign, the number and the unit",
            field=field,
        )
    if not math.isfinite(value) or abs(value) > high:
        raise UnitError(
            f"{_label(field)}'{shown}' is far too large for {words} (at most {high:g}{shown_unit})",
            "check the number and the unit: this looks like a typo of many orders of magnitude",
            field=field,
        )
    if value != 0 and abs(value) < low:
        raise UnitError(
            f"{_label(field)}'{shown}' is too small to be {words} that was meant (below {low:g}{shown_unit})",
            "check the number and the unit, or give 0 if nothing was used",
            field=field,
        )


#: The minus sign as typeset (U+2212) and the en dash typed for it; only a leading dash is a
#: minus (inside "0–25 °C" the en dash is a range, which is not a quantity).
_LEADING_MINUS = re.compile(r"^[-\u2212\u2013\u2012\ufe63\uff0d]\s*(?=[\d.])")


def _normalise_text(text: str) -> str:
    t = _LEADING_MINUS.sub("-", text.strip().replace("\u2212", "-"))
    for pattern, repl in _SPELLINGS:
        t = pattern.sub(repl, t)
    t = re.sub(r"(?<=\d)\s*%$", " percent", t)
    return t


def parse_quantity(value: Any, kind: str, field: str | None = None) -> pint.Quantity:
    """Read what a chemist typed (or a stored pair) as a Quantity of the kind's dimension.

    Accepts a Quantity, a ``{"value": v, "unit": u}`` mapping, a string such as
    ``"0.20 mmol"``, or — only for dimensionless kinds — a bare number.
    """
    if kind not in KINDS:
        raise ValueError(f"unknown quantity kind {kind!r}")
    dim, words, examples = KINDS[kind]
    shown = shown_input(value)
    if isinstance(value, pint.Quantity):
        q = value
    elif isinstance(value, dict):
        q, shown = _from_mapping(value, field, words, examples)
    elif isinstance(value, bool):
        raise UnitError(f"{_label(field)}{shown} is not a quantity", f"give {words} ({examples})", field=field)
    elif isinstance(value, (int, float)):
        if not dim:
            try:
                q = Q_(float(value), "equiv" if kind == "equiv" else "dimensionless")
            except OverflowError:
                raise UnitError(
                    f"{_label(field)}{shown} is not a finite number", f"give {words} ({examples})", field=field
                ) from None
        else:
            raise UnitError(
                f"{_label(field)}'{value}' has no unit; expected {words}",
                f"add a unit, e.g. '{value} {examples.split(',')[0]}'",
                field=field,
            )
    elif isinstance(value, str):
        q = _parse_text(value, field, examples, words, dim)
    else:
        raise UnitError(f"{_label(field)}{shown} is not a quantity", f"give {words} ({examples})", field=field)

    mag = q.magnitude
    if isinstance(mag, complex) or not isinstance(mag, (int, float)) or not math.isfinite(float(mag)):
        raise UnitError(f"{_label(field)}'{shown}' is not a finite number", f"give {words} ({examples})", field=field)

    _check_dimension(q, kind, dim, field, shown, words, examples)
    if kind == "temperature":
        kelvin = q.to("K").magnitude
        if kelvin < 0:
            raise UnitError(f"{_label(field)}'{shown}' is below absolute zero", "check the sign and unit", field=field)
    _check_limits(q, kind, field, shown)
    return q


def _from_mapping(value: dict, field: str | None, words: str, examples: str) -> tuple[pint.Quantity, str]:
    """A stored {"value", "unit"} pair: refused whole if it carries anything else, so a typo'd key never passes as a number."""
    shown = shown_input(value)
    if set(value) - {"value", "unit"} or "value" not in value:
        raise UnitError(
            f"{_label(field)}{shown} is not a quantity",
            'write it as {"value": 1.5, "unit": "mmol"} or as text such as "1.5 mmol"',
            field=field,
        )
    v = value["value"]
    unit = value.get("unit") or ""
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        raise UnitError(f"{_label(field)}value {shown_input(v)} is not a number", "give a number", field=field)
    if not isinstance(unit, str):
        raise UnitError(f"{_label(field)}unit {shown_input(unit)} is not text", f"give a unit such as {examples}", field=field)
    shown = shown_input(f"{v} {unit}".strip())
    try:
        number = float(v)
    except OverflowError:  # an integer of hundreds of digits
        raise UnitError(
            f"{_label(field)}value {shown_input(str(v))} is not a finite number", f"give {words} ({examples})", field=field
        ) from None
    q = _build(number, unit, field, shown, examples)
    return q, shown


def _check_dimension(q: pint.Quantity, kind: str, dim: Any, field: str | None, shown: str, words: str, examples: str) -> None:
    """The quantity must be of the kind's dimension: 2 mL where a mass belongs is refused, not converted."""
    if dim:
        expected = ureg.parse_expression("1 " + _probe_unit(kind)).dimensionality
        if q.dimensionality != expected:
            raise UnitError(
                f"{_label(field)}'{shown}' is {_describe(q)}, not {words}",
                f"give {words} ({examples})",
                field=field,
                got=str(q.dimensionality),
                expected=str(expected),
            )
    elif not q.dimensionless:
        raise UnitError(
            f"{_label(field)}'{shown}' is {_describe(q)}, not {words}",
            f"give {words} ({examples})",
            field=field,
            got=str(q.dimensionality),
            expected="dimensionless",
        )


def _build(v: float, unit: str, field: str | None, shown: str, examples: str) -> pint.Quantity:
    unit = _normalise_text(unit) if unit else ""
    try:
        if unit in ("", "dimensionless"):
            return Q_(v, "dimensionless")
        if unit == "percent":
            return Q_(v, "percent")
        return Q_(v, unit)
    except Exception as exc:  # pint raises many kinds (even AssertionError) on odd text
        raise UnitError(
            f"{_label(field)}unit '{shown_input(unit)}' in '{shown}' is not known", f"use one of {examples}", field=field
        ) from exc


def _parse_text(text: str, field: str | None, examples: str, words: str, dim: str) -> pint.Quantity:
    t = _normalise_text(text)
    m = re.fullmatch(r"([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*)", t)
    if not m:
        raise UnitError(
            f"{_label(field)}'{shown_input(text)}' is not a number with a unit",
            f"write a number then a unit, e.g. '1.5 {examples.split(',')[0].strip()}'",
            field=field,
        )
    number, unit = float(m.group(1)), m.group(2).strip()
    if number == 0 and re.search(r"[1-9]", m.group(1).split("e")[0].split("E")[0]):
        raise UnitError(
            f"{_label(field)}'{shown_input(text)}' is too small to be {words} that was meant",
            "check the exponent, or give 0 if nothing was used",
            field=field,
        )
    if re.match(r"[-\u2013\u2014]\s*\d", unit):
        raise UnitError(
            f"{_label(field)}'{shown_input(text)}' reads as a range of two numbers",
            "give one value; a temperature that changes is written as a ramp, e.g. '0 °C to 25 °C'",
            field=field,
        )
    if not unit and dim:
        raise UnitError(
            f"{_label(field)}'{shown_input(text)}' has no unit; expected {words}",
            f"add a unit, e.g. '{m.group(1)} {examples.split(',')[0].strip()}'",
            field=field,
        )
    return _build(number, unit, field, shown_input(text), examples)


def to_canonical(q: pint.Quantity, kind: str) -> float:
    """Magnitude in the unit the project stores and compares this kind in."""
    unit = CANONICAL_UNITS[kind]
    if kind == "fraction":
        return float(q.to("dimensionless").magnitude)
    if kind == "equiv":
        return float(q.to("equiv").magnitude) if not q.unitless else float(q.magnitude)
    return float(q.to(unit).magnitude)


_UNIT_TEXT = {
    "microliter": "µL",
    "milliliter": "mL",
    "liter": "L",
    "nanoliter": "nL",
    "millimole": "mmol",
    "micromole": "µmol",
    "mole": "mol",
    "nanomole": "nmol",
    "milligram": "mg",
    "gram": "g",
    "microgram": "µg",
    "kilogram": "kg",
    "degree_Celsius": "°C",
    "kelvin": "K",
    "degree_Fahrenheit": "°F",
    "hour": "h",
    "minute": "min",
    "second": "s",
    "day": "d",
    "molar": "M",
    "millimolar": "mM",
    "micromolar": "µM",
    "equiv": "equiv",
    "percent": "%",
    "weight_percent": "wt%",
    "dimensionless": "",
    "gram / milliliter": "g/mL",
    "gram / mole": "g/mol",
    "gram / liter": "g/L",
    "gram / centimeter ** 3": "g/cm³",
    "kilogram / liter": "kg/L",
    "bar": "bar",
    "kilopascal": "kPa",
    "pascal": "Pa",
    "atmosphere": "atm",
    "psi": "psi",
    "mole / liter": "M",
    "millimole / milliliter": "M",
    "millimole / liter": "mM",
}


def unit_text(q: pint.Quantity) -> str:
    """The unit as a chemist writes it (µL, °C, mmol), for storage and display."""
    name = str(q.units)
    if name in _UNIT_TEXT:
        return _UNIT_TEXT[name]
    return f"{q.units:~}".replace(" ", "")


def dump_quantity(q: pint.Quantity | None) -> dict | None:
    """The stored form: ``{"value": 1.5, "unit": "mmol"}`` (full precision)."""
    if q is None:
        return None
    unit = unit_text(q)
    if unit in ("", "dimensionless"):
        unit = ""
    return {"value": float(q.magnitude), "unit": unit}


def quantity_type(kind: str):
    """An annotated pydantic type for one kind: parses lab text, dumps a value/unit pair."""

    def _validate(v: Any, info=None) -> pint.Quantity:
        return parse_quantity(v, kind)

    schema = {
        "anyOf": [
            {"type": "string", "description": f"{KINDS[kind][1]} written with its unit, e.g. '{KINDS[kind][2].split(',')[0]}'"},
            {
                "type": "object",
                "properties": {"value": {"type": "number"}, "unit": {"type": "string"}},
                "required": ["value"],
                "additionalProperties": False,
            },
        ]
    }
    if not KINDS[kind][0]:
        schema["anyOf"].insert(0, {"type": "number"})
    return Annotated[
        Any,
        BeforeValidator(lambda v: _validate(v)),
        PlainSerializer(dump_quantity, return_type=dict | None, when_used="always"),
        WithJsonSchema(schema),
    ]


Amount = quantity_type("amount")
Mass = quantity_type("mass")
Volume = quantity_type("volume")
Molarity = quantity_type("molarity")
Density = quantity_type("density")
Temperature = quantity_type("temperature")
Duration = quantity_type("duration")
MolarMass = quantity_type("molar_mass")
Fraction = quantity_type("fraction")
Equiv = quantity_type("equiv")

#: The kinds a bench measurement can be: what a balance, a syringe or a count of moles reads.
MEASURED_KINDS = ("mass", "volume", "amount")


def parse_measured(value: Any) -> pint.Quantity:
    """A weighed or measured quantity: a mass, a volume or an amount of substance, by its unit."""
    if isinstance(value, (int, float)) or (isinstance(value, str) and not re.search(r"[A-Za-zµμ]", value)):
        raise UnitError(
            f"'{shown_input(value)}' has no unit; a weighed or measured amount needs one",
            "write it with its unit, e.g. '31.2 mg', '150 µL' or '0.105 mmol'",
            field="actual",
        )
    for kind in MEASURED_KINDS:
        try:
            return parse_quantity(value, kind)
        except UnitError as exc:
            if exc.expected is None and exc.got is None:  # not a dimension mismatch: the value itself is wrong
                raise
    raise UnitError(
        f"'{shown_input(value)}' is not a mass, a volume or an amount of substance",
        "write what was weighed or measured, e.g. '31.2 mg', '150 µL' or '0.105 mmol'",
        field="actual",
    )


Measured = Annotated[
    Any,
    BeforeValidator(parse_measured),
    PlainSerializer(dump_quantity, return_type=dict | None, when_used="always"),
    WithJsonSchema(
        {
            "anyOf": [
                {"type": "string", "description": "a mass, volume or amount written with its unit, e.g. '31.2 mg', '150 µL'"},
                {
                    "type": "object",
                    "properties": {"value": {"type": "number"}, "unit": {"type": "string"}},
                    "required": ["value"],
                    "additionalProperties": False,
                },
            ]
        }
    ),
]


def measured_kind(q: pint.Quantity) -> str:
    """Which of mass, volume or amount a measured quantity is."""
    for kind in MEASURED_KINDS:
        if q.dimensionality == ureg.parse_expression("1 " + _probe_unit(kind)).dimensionality:
            return kind
    raise UnitError(f"{q:~} is not a mass, a volume or an amount", "give one of mg, µL or mmol")


# Number display lives in display.py (one rule for every view); these names stay importable here.
from .display import fmt_equiv, fmt_mg, fmt_mmol, fmt_ul  # noqa: E402,F401
