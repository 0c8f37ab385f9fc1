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
    """An earlier run as the plan of a new one: same lines and steps, no id or outcome."""
    data = copy.deepcopy(stored)
    for key in ("id", "outcome", "attachments", "page"):
        data.pop(key, None)
    data["status"] = "planned"
    data["date"] = _dt.date.today().isoformat()
    data["title"] = f"Plan from {stored.get('id', 'earlier run')}: {stored.get('title', '')}"[:300]
    return data
