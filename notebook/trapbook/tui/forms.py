"""What the editor's fields accept, and what each one says back while you type.

One "amount" box takes whatever the chemist has in hand — "10 equiv", "0.200 mmol",
"25 mg", "143 µL" — and the unit decides which of the line's four amount fields it is,
so nobody has to pick a field first. Likewise one box takes a density (neat liquid) or a
molarity (stock solution). Every check returns (ok, message) for the field's message.
"""

from __future__ import annotations

import datetime as _dt
import re

from pydantic import ValidationError

from ..errors import TrapbookError
from ..records import AMOUNT_FIELDS, ROLES, STATUSES  # noqa: F401  (re-exported for screens)

ROLE_WORDS = list(ROLES)


def which_amount(text: str) -> tuple[str, object]:
    """('equiv'|'amount'|'mass'|'volume', Quantity) for what was typed, or TrapbookError."""
    from ..units import parse_quantity

    if "%" in text:
        raise TrapbookError(f"'{text}' is a percentage, not an amount", "give equiv, mmol, mg or µL")
    last = None
    for kind in ("equiv", "amount", "mass", "volume"):
        try:
            q = parse_quantity(text, kind)
            if q.magnitude <= 0:
                raise TrapbookError(
                    f"'{text}' must be greater than zero",
                    "give a positive amount",
                    field=kind,
                    got=text,
                    expected="greater than zero",
                )
            return kind, q
        except TrapbookError as exc:
            last = exc
            if exc.field == kind:  # read as this kind, but the value is wrong: no other kind fits
                raise
    raise TrapbookError(f"'{text}' is not an amount", "write e.g. '10 equiv', '0.200 mmol', '25 mg' or '143 µL'") from last


def which_form(text: str) -> tuple[str, object]:
    """('molarity'|'density', Quantity): a stock solution's concentration or a liquid's density."""
    from ..units import parse_quantity

    for kind in ("molarity", "density"):
        try:
            return kind, parse_quantity(text, kind)
        except TrapbookError:
            continue
    raise TrapbookError(
        f"'{text}' is neither a molarity nor a density", "write e.g. '1.0 M' (solution) or '0.951 g/mL' (neat liquid)"
    )


def _words(exc: TrapbookError) -> str:
    """A refusal as a field says it: what is wrong, then what to write instead."""
    return exc.message + (f"; {exc.hint}" if exc.hint else "")


_BARE_C = re.compile(r"^\s*[-+−]?\d+(?:[.,]\d+)?\s*C\s*$")


def check_smiles(text: str) -> tuple[bool, str]:
    from ..chemistry import molecules

    try:
        mw = molecules.molar_mass(text)
        return True, f"{molecules.formula(text)} · {mw:.2f} g/mol"
    except TrapbookError as exc:
        return False, _words(exc)


def check_amount(text: str) -> tuple[bool, str]:
    try:
        kind, _ = which_amount(text)
        return True, f"given as {kind}"
    except TrapbookError as exc:
        return False, _words(exc)


def check_measured(text: str) -> tuple[bool, str]:
    """What was weighed or measured: read by the one rule the run file is (`units.parse_measured`)."""
    from ..units import measured_kind, parse_measured, shown_input

    try:
        q = parse_measured(text)
    except TrapbookError as exc:
        return False, _words(exc)
    if q.magnitude <= 0:  # as the line itself refuses it (records.Line), said where it was typed
        return False, f"'{shown_input(text)}' must be greater than zero"
    return True, f"weighed as {measured_kind(q)}"


def check_form(text: str) -> tuple[bool, str]:
    try:
        kind, _ = which_form(text)
        return True, "stock solution" if kind == "molarity" else "neat liquid"
    except TrapbookError as exc:
        return False, _words(exc)


def check_kind(kind: str, words: str):
    def check(text: str) -> tuple[bool, str]:
        from ..units import parse_quantity

        if kind == "temperature" and _BARE_C.match(text):  # a bare C is the coulomb to the unit parser
            return False, f"'{text}': a bare C is not a temperature; write '{text.strip()[:-1].strip()} °C' (or degC)"
        try:
            parse_quantity(text, kind)
            return True, ""
        except TrapbookError as exc:
            return False, _words(exc)

    check.__doc__ = f"Accepts {words}."
    return check


def check_role(text: str) -> tuple[bool, str]:
    from ..records import _ROLE_ALIASES

    key = text.strip().lower()
    if key in ROLES or key in _ROLE_ALIASES:
        return True, ""
    return False, "role is one of: " + ", ".join(ROLES)


def check_status(text: str) -> tuple[bool, str]:
    return (True, "") if text.strip().lower() in STATUSES else (False, "one of: " + ", ".join(STATUSES))


def check_date(text: str) -> tuple[bool, str]:
    try:
        _dt.date.fromisoformat(text.strip())
        return True, ""
    except ValueError:
        return False, "write the date as YYYY-MM-DD"


def check_ratio(text: str) -> tuple[bool, str]:
    from ..records import parse_ratio

    try:
        parse_ratio(text)
        return True, ""
    except ValueError as exc:
        return False, str(exc)


def check_number(positive: bool = False, integer: bool = False):
    def check(text: str) -> tuple[bool, str]:
        try:
            v = int(text) if integer else float(text)
        except ValueError:
            return False, "give a whole number" if integer else "give a number"
        if positive and v <= 0:
            return False, "must be greater than zero"
        if v < 0:
            return False, "cannot be negative"
        return True, ""

    return check


def resolve_adds(text: str, lines: list[dict]) -> tuple[list[str], list[str]]:
    """Names of the lines a step adds, from '1 + 3', 'precursor; furan' or role words.

    Tokens are split on ';' or '+' (names may hold commas, as in 2,5-dimethylfuran); each
    is a line number, a line name, a unique start of a name, or a role (all its lines).
    Returns (names, problems).
    """
    names: list[str] = []
    problems: list[str] = []
    tokens = [t.strip() for t in text.replace("+", ";").split(";") if t.strip()]
    for tok in tokens:
        found = _resolve_token(tok, lines)
        if not found:
            problems.append(f"no line '{tok}'")
        for name in found:
            if name not in names:
                names.append(name)
    return names, problems


def _resolve_token(tok: str, lines: list[dict]) -> list[str]:
    all_names = [ln.get("name", "") for ln in lines]
    if tok.isdigit():
        i = int(tok) - 1
        return [all_names[i]] if 0 <= i < len(all_names) else []
    key = tok.casefold()
    exact = [n for n in all_names if n.casefold() == key]
    if exact:
        return exact
    starts = [n for n in all_names if n.casefold().startswith(key)]
    if len(starts) == 1:
        return starts
    from ..records import _ROLE_ALIASES

    role = _ROLE_ALIASES.get(key, key)
    if role in ROLES:
        return [ln.get("name", "") for ln in lines if ln.get("role") == role]
    return []


def row_problem(model, row: dict) -> str | None:
    """Why a row a form wrote is not a valid `model` (a records model), or None if it is."""
    try:
        model.model_validate(row)
    except ValidationError as exc:
        return pydantic_words(exc)
    except TrapbookError as exc:
        return exc.message
    return None


def step_problem(step: dict, lines: list[dict]) -> str | None:
    """Why a step row is not valid as a step of this run, or None if it is.

    A step is checked in the context of the run's lines, the way `records.Run` checks it:
    'reflux' means the boiling point of the run's solvent, which a row alone cannot know.
    """
    from .. import bench_words
    from ..records import Step

    temperature = step.get("temperature")
    if isinstance(temperature, str) and "reflux" in temperature.lower():
        step = {**step, "_reflux": bench_words.run_reflux(lines)}
    return row_problem(Step, step)


def pydantic_words(exc: ValidationError) -> str:
    """A pydantic error as the words a form's message line shows: "field: what is wrong; ..."."""
    msgs = []
    for err in exc.errors():
        where = ".".join(str(x) for x in err.get("loc", ()) if isinstance(x, str))
        msg = str(err.get("msg", "invalid")).removeprefix("Value error, ")
        msgs.append(f"{where}: {msg}" if where else msg)
    return "; ".join(msgs)
