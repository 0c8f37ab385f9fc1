"""A run as the editor holds it: stored JSON with every quantity as the text a field shows.

The Workbench keeps what the chemist typed ("10 equiv", "-78 °C") rather than parsed
quantities, so a half-typed value is never lost; `clean` strips the empty bits before
`records.load_run` decides whether the whole is a valid run.
"""

from __future__ import annotations

import copy
import datetime as _dt

from .text import qtext


def form_data(stored: dict) -> dict:
    """A stored run dict with every quantity turned into the text a field shows."""
    data = copy.deepcopy(stored)
    for line in data.get("lines", []):
        for k, v in list(line.items()):
            if isinstance(v, dict):
                line[k] = qtext(v)
    for step in data.get("steps", []):
        for k, v in list(step.items()):
            if isinstance(v, dict):
                step[k] = qtext(v)
    out = data.get("outcome") or {}
    if isinstance(out.get("recovered_precursor"), dict):
        out["recovered_precursor"] = qtext(out["recovered_precursor"])
    for p in out.get("products", []):
        if isinstance(p.get("isolated_mass"), dict):
            p["isolated_mass"] = qtext(p["isolated_mass"])
        q = p.get("qnmr") or {}
        if isinstance(q.get("standard_amount"), dict):
            q["standard_amount"] = qtext(q["standard_amount"])
    return data


def clean(value):
    """Drop empty text and empty optional containers, so load_run sees only what was given."""
    if isinstance(value, dict):
        out = {}
        for k, v in value.items():
            v = clean(v)
            if v is None or v == "" or (v == [] and k != "lines") or (v == {} and k != "factors"):
                continue
            out[k] = v
        return out
    if isinstance(value, list):
        return [clean(v) for v in value]
    if isinstance(value, str):
        return value.strip()
    return value


def plan_from(stored: dict) -> dict:
    """An earlier run as the plan of a new one: same lines and steps; what happened to the
    earlier flask (id, outcome, files, weighings) stays with it (`planning.not_yet_happened`,
    the same rule a screen's vials are planned by)."""
    from ..planning import not_yet_happened

    data = not_yet_happened(copy.deepcopy(stored))
    data["status"] = "planned"
    data["date"] = _dt.date.today().isoformat()
    data["title"] = f"Plan from {stored.get('id', 'earlier run')}: {stored.get('title', '')}"[:300]
    return data


def build_run(nb, data: dict):
    """The run as typed, with 'rt' and 'overnight' in this notebook's meaning.

    Saving goes through here, so the Workbench prepares a run for the store with the same
    core step as the CLI (`settings.in_lab_words`); a line's preview in the Lines tab goes
    through it too, so what a line comes to while typed is what will be saved.
    """
    from ..records import load_run
    from ..settings import in_lab_words

    return in_lab_words(nb, load_run(clean(data)))


def with_line(data: dict, line: dict, index: int | None) -> dict:
    """A copy of the run with `line` added (index None) or put in place of line `index`.

    One limiting line: a line that takes the mark takes it from every other. Renaming a line
    renames it in the steps that add it and the product results that name it, since line
    names are the run's handles.
    """
    data = copy.deepcopy(data)
    lines = data.setdefault("lines", [])
    if line.get("limiting"):
        for other in lines:
            other.pop("limiting", None)
        data.pop("limiting", None)
    if index is None:
        lines.append(line)
        return data
    old = lines[index].get("name")
    if not line.get("limiting") and old and (data.get("limiting") or "").casefold() == old.casefold():
        data.pop("limiting", None)  # unticked: the run-level mark goes too
    lines[index] = line
    if old and old != line["name"]:
        for step in data.get("steps", []):
            step["add"] = [line["name"] if n == old else n for n in step.get("add", [])]
        for p in (data.get("outcome") or {}).get("products", []):
            if p.get("product") == old:
                p["product"] = line["name"]
    return data


def is_limiting(data: dict, index: int) -> bool:
    """Whether line `index` carries the limiting mark, on the line or by name on the run."""
    line = data["lines"][index]
    return bool(line.get("limiting")) or (data.get("limiting") or "").casefold() == str(line.get("name", "")).casefold()


def with_limiting(data: dict, index: int, marked: bool) -> dict:
    """A copy of the run with line `index` marked limiting (and no other), or with no mark at all."""
    data = copy.deepcopy(data)
    for other in data.get("lines", []) if marked else [data["lines"][index]]:
        other.pop("limiting", None)
    data.pop("limiting", None)
    if marked:
        data["lines"][index]["limiting"] = True
    return data


def with_step(data: dict, step: dict, index: int | None) -> dict:
    """A copy of the run with `step` added (index None) or put in place of step `index`."""
    data = copy.deepcopy(data)
    steps = data.setdefault("steps", [])
    if index is None or index >= len(steps):
        steps.append(step)
    else:
        steps[index] = step
    return data
