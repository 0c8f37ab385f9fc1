"""What changed between two stored versions of a run, in words a chemist reads."""

from __future__ import annotations

import json
from typing import Any


def diff_runs(old: dict, new: dict, prefix: str = "") -> list[str]:
    """What changed between two stored versions, in words a chemist reads ("lines[furan].equiv: 5 → 10")."""
    changes: list[str] = []
    _diff(old, new, prefix, changes)
    return changes or ["no field changed"]


def _show(v: Any) -> str:
    if isinstance(v, dict) and set(v) <= {"value", "unit"} and "value" in v:
        return f"{v['value']:g} {v.get('unit', '')}".strip()
    s = json.dumps(v, ensure_ascii=False)
    return s if len(s) <= 60 else s[:57] + "..."


def _is_quantity(v: Any) -> bool:
    return isinstance(v, dict) and set(v) <= {"value", "unit"} and "value" in v


def _added(v: Any, path: str, out: list[str]) -> None:
    """A new field said leaf by leaf ("outcome.products[adduct].isolated_mass: added 21 mg"), not as JSON."""
    if isinstance(v, dict) and v and not _is_quantity(v):
        for k in v:
            _added(v[k], f"{path}.{k}", out)
    elif isinstance(v, list) and v and all(isinstance(x, dict) for x in v):
        for i, x in enumerate(v, 1):
            label = x.get("product") or x.get("name") or i
            _added(x, f"{path}[{label}]", out)
    else:
        out.append(f"{path}: added {_show(v)}")


def _diff(old: Any, new: Any, path: str, out: list[str]) -> None:
    if old == new:
        return
    if isinstance(old, dict) and isinstance(new, dict) and not (set(old) <= {"value", "unit"} and "value" in old):
        for k in sorted(set(old) | set(new), key=str):
            p = f"{path}.{k}" if path else str(k)
            if k not in old:
                _added(new[k], p, out)
            elif k not in new:
                out.append(f"{p}: removed (was {_show(old[k])})")
            else:
                _diff(old[k], new[k], p, out)
        return
    key = _list_key(old, new)
    if key is not None:
        on = {x[key]: x for x in old}
        nn = {x[key]: x for x in new}
        for name in list(on) + [n for n in nn if n not in on]:
            p = f"{path}[{name}]"
            if name not in nn:
                out.append(f"{p}: removed")
            elif name not in on:
                out.append(f"{p}: added")
            else:
                _diff(on[name], nn[name], p, out)
        return
    if isinstance(old, list) and isinstance(new, list) and len(old) == len(new) and all(isinstance(x, dict) for x in old + new):
        # Steps (and anything else without a name) are compared in order: "steps[2].hold: 1 h → 2 h".
        for i, (a, b) in enumerate(zip(old, new), 1):
            _diff(a, b, f"{path}[{i}]", out)
        return
    out.append(f"{path}: {_show(old)} → {_show(new)}")


def _list_key(old: Any, new: Any) -> str | None:
    """The field that names each item of a list (lines by name, products by product), if every item has it once."""
    if not (isinstance(old, list) and isinstance(new, list)):
        return None
    items = old + new
    for key in ("name", "product"):
        if (
            items
            and all(isinstance(x, dict) and key in x for x in items)
            and len({x[key] for x in old}) == len(old)
            and len({x[key] for x in new}) == len(new)
        ):
            return key
    return None
