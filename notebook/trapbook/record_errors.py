"""Validation errors in words a chemist recognises: which line, step or product, which field, what is wrong.

pydantic reports locations as paths of keys and indexes; a chemist thinks of "line 'furan':
volume". Names and keys from the input are quoted through `shown_input`, so a hostile
name cannot act on the terminal that shows the refusal.
"""

from __future__ import annotations

from typing import Any

from pydantic import ValidationError

from .errors import RecordError, UnitError
from .units import shown_input


def _locate(data: Any, loc: tuple) -> str:
    """Turn a pydantic error location into words a chemist recognises ("line 'furan': volume")."""
    parts: list[str] = []
    node = data
    i = 0
    while i < len(loc):
        key = loc[i]
        if key == "lines" and i + 1 < len(loc) and isinstance(loc[i + 1], int):
            idx = loc[i + 1]
            name = None
            try:
                name = node["lines"][idx].get("name")
            except Exception:
                pass
            parts.append(f"line '{shown_input(name, 40)}'" if isinstance(name, str) and name else f"line {idx + 1}")
            try:
                node = node["lines"][idx]
            except Exception:
                node = None
            i += 2
            continue
        if key == "steps" and i + 1 < len(loc) and isinstance(loc[i + 1], int):
            parts.append(f"step {loc[i + 1] + 1}")
            try:
                node = node["steps"][loc[i + 1]]
            except Exception:
                node = None
            i += 2
            continue
        if key == "products" and i + 1 < len(loc) and isinstance(loc[i + 1], int):
            name = None
            try:
                name = node["products"][loc[i + 1]].get("product")
            except Exception:
                pass
            parts.append(f"product '{shown_input(name, 40)}'" if isinstance(name, str) and name else f"product {loc[i + 1] + 1}")
            try:
                node = node["products"][loc[i + 1]]
            except Exception:
                node = None
            i += 2
            continue
        if isinstance(key, str) and not key.startswith("function-"):
            parts.append(shown_input(key, 40))
        try:
            node = node[key] if node is not None else None
        except Exception:
            node = None
        i += 1
    return ": ".join(parts[:1] + [" ".join(parts[1:])]) if len(parts) > 1 else (parts[0] if parts else "record")


def explain(exc: ValidationError, data: Any, what: str = "run") -> RecordError:
    """One RecordError listing every problem, each named by record and field."""
    problems = []
    fields: list[str] = []
    for err in exc.errors():
        where = _locate(data, tuple(err.get("loc", ())))
        path = ".".join(shown_input(str(k), 40) for k in err.get("loc", ()) if not str(k).startswith("function-"))
        if path and path not in fields:
            fields.append(path)
        ctx = err.get("ctx") or {}
        cause = ctx.get("error")
        if isinstance(cause, UnitError):
            problems.append(f"{where} {cause.message}")
            continue
        msg = err.get("msg", "invalid")
        msg = msg.removeprefix("Value error, ")
        if err.get("type") == "extra_forbidden":
            msg = "is not a field Trapbook knows (check the spelling)"
        elif err.get("type") == "missing":
            msg = "is required"
        elif err.get("type") == "literal_error" and where.endswith("role"):
            expected = str((err.get("ctx") or {}).get("expected", "")).replace("'", "")
            msg = f"'{shown_input(err.get('input'), 40)}' is not one of: {expected}"
        problems.append(f"{where}: {msg}" if where else msg)
    title = data.get("title") if isinstance(data, dict) else None
    head = f"{what} '{shown_input(title, 60)}'" if isinstance(title, str) and title.strip() else what
    field = ", ".join(fields) or None  # for code: e.g. "steps.0.hold" (the words above are for people)
    if len(problems) == 1:
        return RecordError(f"{head}: {problems[0]}", "correct the field and try again", field=field)
    return RecordError(
        f"{head} has {len(problems)} problems:\n  - " + "\n  - ".join(problems), "correct the fields and try again", field=field
    )
