"""The bench's own words for temperatures and times: rt, reflux, overnight, "0 °C to rt".

Chemists write "stir at rt overnight" and "warm from −78 °C to rt", not "23 °C for 960 min".
A step keeps what was written (``temperature_written``, ``hold_written``) beside the
number the checks and amounts use: the lab's nominal room temperature, the solvent's
boiling point (with its source) for reflux, the lab's overnight, the highest and lowest
temperature of a ramp. The nominal values are the notebook's (`BenchWords`); the
defaults below apply when a notebook sets none.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Any

from .errors import TrapbookError, UnitError
from .units import Q_, dump_quantity, parse_quantity, shown_input, to_canonical, unit_text

#: Room temperature a record means by "rt" when the notebook sets none. Common practice, no source.
ROOM_TEMPERATURE_C = 23.0
#: Hours "overnight" means when the notebook sets none. Common practice, no source.
OVERNIGHT_H = 16.0
#: What a notebook may set them to. Common practice, no source.
ROOM_TEMPERATURE_RANGE_C = (15.0, 30.0)
OVERNIGHT_RANGE_H = (6.0, 24.0)

#: The key a notebook's own values are passed under in a pydantic validation context.
CONTEXT_KEY = "bench_words"

_RT = r"(?:rt|r\.\s?t\.?|room\s+temp(?:erature|\.)?)"
_REFLUX = r"(?:at\s+)?reflux(?:ing)?"
_EXPLICIT = r"\s*\(\s*(?P<value>[^()]+?)\s*\)"  # "rt (20 °C)", "reflux (70 °C)"
_OVERNIGHT = re.compile(r"(?:overnight|over\s+night|o/n)", re.I)
_RAMP = re.compile(r"\s+to\s+|\s*(?:→|->)\s*", re.I)
_BARE_NUMBER = re.compile(r"[-+\u2212\u2013]?\s*(?:\d+\.?\d*|\.\d+)")


@dataclass(frozen=True)
class BenchWords:
    """What this lab means by "rt" and "overnight"; `source` says whose value it is."""

    room_temperature_c: float = ROOM_TEMPERATURE_C
    overnight_h: float = OVERNIGHT_H
    source: str = "Trapbook's default"

    def __post_init__(self) -> None:
        lo, hi = ROOM_TEMPERATURE_RANGE_C
        if not lo <= self.room_temperature_c <= hi:
            raise TrapbookError(
                f"room temperature {self.room_temperature_c:g} °C is outside {lo:g} to {hi:g} °C",
                "set the lab's room temperature in °C, e.g. 22",
            )
        lo, hi = OVERNIGHT_RANGE_H
        if not lo <= self.overnight_h <= hi:
            raise TrapbookError(
                f"overnight of {self.overnight_h:g} h is outside {lo:g} to {hi:g} h",
                "set how many hours the lab means by overnight, e.g. 16",
            )

    @classmethod
    def from_context(cls, context: Any) -> BenchWords:
        """The notebook's words when a caller passed them to validation, else the defaults."""
        words = context.get(CONTEXT_KEY) if isinstance(context, dict) else None
        return words if isinstance(words, cls) else cls()


@dataclass(frozen=True)
class Reflux:
    """What "reflux" means in one run: a boiling point and its source, or why none is known.

    Made by the run (which knows its solvent) for each of its steps; a run file cannot
    make one, since it is not a JSON value.
    """

    bp_c: float | None
    basis: str
    problem: str | None = None


def run_reflux(lines: Any) -> Reflux:
    """The reflux temperature of a run from its solvent lines (raw run-file dicts)."""
    solvents = (
        [
            ln
            for ln in lines
            if isinstance(ln, dict)
            and isinstance(ln.get("role"), str)
            and ln["role"].strip().lower() == "solvent"
            and isinstance(ln.get("name"), str)
        ]
        if isinstance(lines, list)
        else []
    )
    if not solvents:
        return Reflux(None, "", "the run has no solvent line, so its reflux temperature is not known")
    from . import materials  # materials data (and RDKit behind it) only when reflux is written

    known, unknown = {}, []
    for ln in solvents:
        smiles = ln.get("smiles") if isinstance(ln.get("smiles"), str) else None
        try:
            mat = materials.find(ln["name"], smiles)
        except TrapbookError:
            mat = None
        if mat is None or mat.bp_c is None:
            unknown.append(ln["name"])
        else:
            known[mat.key] = mat
    if unknown:
        return Reflux(None, "", f"Trapbook does not know the boiling point of {shown_input(unknown[0], 40)}")
    if len(known) > 1:
        names = ", ".join(m.name for m in known.values())
        return Reflux(None, "", f"the run has more than one solvent ({names}), so reflux is not one boiling point")
    mat = next(iter(known.values()))
    return Reflux(mat.bp_c.value, f"reflux: boiling point of {mat.name}, {mat.bp_c.value:g} °C ({mat.bp_c.source})")


def _term(text: str, words: BenchWords, reflux: Reflux | None, field: str):
    """One temperature as written -> (Quantity, basis or None, whether it was words)."""
    m = re.fullmatch(_RT + f"(?:{_EXPLICIT})?", text, re.I)
    if m:
        if m.group("value"):
            q = parse_quantity(m.group("value"), "temperature", field)
            return q, f"rt: {m.group('value')} as written", True
        q = Q_(words.room_temperature_c, "degC")
        return q, f"rt: room temperature, {words.room_temperature_c:g} °C ({words.source})", True
    m = re.fullmatch(_REFLUX + f"(?:{_EXPLICIT})?", text, re.I)
    if m:
        if m.group("value"):
            q = parse_quantity(m.group("value"), "temperature", field)
            return q, f"reflux: {m.group('value')} as written", True
        if reflux is None or reflux.bp_c is None:
            why = reflux.problem if reflux is not None else "reflux needs the run's solvent to know its boiling point"
            raise ValueError(f"{field} '{shown_input(text, 40)}': {why}; write the temperature, e.g. 'reflux (66 °C)' or '66 °C'")
        return Q_(reflux.bp_c, "degC"), reflux.basis, True
    return parse_quantity(text, "temperature", field), None, False


def _unit_of(text: str) -> str:
    m = _BARE_NUMBER.match(text.strip())
    return text.strip()[m.end() :].strip() if m else ""


def read_temperature(text: str, words: BenchWords, reflux: Reflux | None) -> dict | None:
    """The stored fields for a written temperature, or None when it is one plain value.

    "rt" -> 23 °C with basis; "0 °C to rt" -> 0 °C rising to 23 °C; "0 to 25 °C" takes
    the unit of the end for the start.
    """
    text = text.strip()
    parts = _RAMP.split(text)
    if len(parts) > 2:
        raise ValueError(
            f"temperature '{shown_input(text, 40)}' has more than two ends; "
            "split it into steps, one ramp (e.g. '0 °C to rt') per step"
        )
    if len(parts) == 1:
        if not re.fullmatch(f"(?:{_RT}|{_REFLUX})(?:{_EXPLICIT})?", text, re.I):
            return None  # one plain value: the field's own parser reads it
        q, basis, _ = _term(text, words, reflux, "temperature")
        return {"temperature": dump_quantity(q), "temperature_written": text, "temperature_basis": basis}
    start, end = (p.strip() for p in parts)
    if _BARE_NUMBER.fullmatch(start) and _unit_of(end):
        start = f"{start} {_unit_of(end)}"
    q0, basis0, _ = _term(start, words, reflux, "temperature (start of the ramp)")
    q1, basis1, _ = _term(end, words, reflux, "temperature (end of the ramp)")
    basis = "; ".join(b for b in (basis0, basis1) if b) or None
    return {
        "temperature": dump_quantity(q0),
        "temperature_end": dump_quantity(q1),
        "temperature_written": text,
        "temperature_basis": basis,
    }


def read_hold(text: str, words: BenchWords) -> dict | None:
    """The stored fields for a written hold ("overnight", "o/n"), or None for a plain time."""
    text = text.strip()
    if not _OVERNIGHT.fullmatch(text):
        return None
    return {"hold": dump_quantity(Q_(words.overnight_h, "h")), "hold_written": text}


def expand_step(data: dict, words: BenchWords, reflux: Reflux | None) -> dict:
    """A step as written -> the same step with its words kept and their numbers filled in."""
    out = dict(data)
    for key, reader in (("temperature", lambda t: read_temperature(t, words, reflux)), ("hold", lambda t: read_hold(t, words))):
        value = out.get(key)
        if not isinstance(value, str):
            continue
        try:
            fields = reader(value)
        except UnitError as exc:  # said as the step's own problem, not as a bare quantity
            raise ValueError(f"{exc.message}; {exc.hint}") from None
        if fields is None:
            continue
        given = [k for k in out if k.startswith(key + "_") and out.get(k) is not None]
        if given:
            raise ValueError(
                f"{key} '{shown_input(value, 40)}' is written in words and {', '.join(given)} is "
                "given too; give the words alone (Trapbook fills in the rest)"
            )
        out.update(fields)
    return out


def temperature_words(step) -> str:
    """How a step's temperature is said: as written, with the number it stands for."""
    if step.temperature is None:
        return ""
    start = f"{step.temperature.magnitude:g} {unit_text(step.temperature)}"
    end = f"{step.temperature_end.magnitude:g} {unit_text(step.temperature_end)}" if step.temperature_end is not None else None
    shown = f"{start} → {end}" if end else start
    if step.temperature_written and step.temperature_written != shown:
        return f"{step.temperature_written} ({shown})"
    return shown


def hold_words(step) -> str:
    """How a step's hold is said: 'overnight (16 h)' when written so."""
    if step.hold is None:
        return ""
    shown = f"{step.hold.magnitude:g} {unit_text(step.hold)}"
    return f"{step.hold_written} ({shown})" if step.hold_written else shown


def step_temperatures_c(step) -> list[float]:
    """Every temperature a step goes through (both ends of a ramp), in °C."""
    return [to_canonical(q, "temperature") for q in (step.temperature, step.temperature_end) if q is not None]
