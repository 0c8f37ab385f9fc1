"""The planned runs of a screen: every combination of levels, each with its amounts and its
bench findings under the notebook's settings, stored together in one transaction."""

from __future__ import annotations

import itertools
import re
from dataclasses import dataclass, field

from ..errors import RecordError, TrapbookError
from ..records import Run, Screen, load_run
from .levels import _key, _scale_to, apply_level, factor_name

# --- the plan --------------------------------------------------------------------------------


@dataclass
class PlannedRun:
    vial: str
    run: Run
    amounts: object | None
    findings: list
    problem: str | None = None

    def to_dict(self) -> dict:
        return {
            "vial": self.vial,
            "factors": dict(self.run.factors),
            "title": self.run.title,
            "run": self.run.to_json_dict(),
            "amounts": self.amounts.to_dict() if self.amounts is not None else None,
            "amounts_problem": self.problem,
            "findings": [f.to_dict() for f in self.findings],
        }


@dataclass
class PlannedScreen:
    screen: Screen
    base: Run
    runs: list[PlannedRun] = field(default_factory=list)
    screen_id: str | None = None
    run_ids: list[str] = field(default_factory=list)

    def to_dict(self) -> dict:
        return {
            "screen_id": self.screen_id,
            "name": self.screen.name,
            "factors": self.screen.factors,
            "scale": self.screen.scale,
            "base_run": self.screen.base_run,
            "run_ids": self.run_ids,
            "runs": [r.to_dict() for r in self.runs],
            "totals": totals(self),
        }


def _levels(factors: dict[str, list[str]]) -> dict[str, list[str]]:
    out: dict[str, list[str]] = {}
    for name, levels in factors.items():
        key = factor_name(name)
        if isinstance(levels, str):
            levels = [x.strip() for x in levels.split(",")]
        levels = [str(x).strip() for x in levels if str(x).strip()]
        if not levels:
            raise RecordError(f"condition '{name}' has no levels", f"give levels, e.g. --vary {key}=a,b")
        if len({_key(x) for x in levels}) != len(levels):
            raise RecordError(f"condition '{name}' lists a level twice", "give each level once")
        if key in out:
            raise RecordError(f"condition '{key}' is given twice", "give each condition once, with all its levels")
        out[key] = levels
    if not out:
        raise RecordError("no condition to vary", "give at least one, e.g. --vary trap=furan,anthracene")
    return out


def _combos(levels: dict[str, list[str]], subset) -> list[dict[str, str]]:
    grid = [dict(zip(levels, combo)) for combo in itertools.product(*levels.values())]
    if subset is None:
        return grid
    chosen = []
    for item in subset:
        if isinstance(item, int):
            if not 1 <= item <= len(grid):
                raise RecordError(f"vial {item} is not in the grid of {len(grid)}", f"choose vials 1–{len(grid)}")
            chosen.append(grid[item - 1])
        elif isinstance(item, dict):
            want = {factor_name(k): str(v) for k, v in item.items()}
            match = [g for g in grid if all(_key(g.get(k, "")) == _key(v) for k, v in want.items())]
            if not match:
                raise RecordError(f"no combination of the grid has {want}", "use levels listed in the factors")
            chosen.extend(m for m in match if m not in chosen)
        else:
            raise RecordError(
                f"subset entry {item!r} is neither a vial number nor a set of levels", "give e.g. [1, 3] or [{'trap': 'furan'}]"
            )
    return chosen


#: What a run planned from another cannot carry over: it has not happened yet.
HAPPENED_KEYS = ("id", "outcome", "attachments", "page", "date")


def not_yet_happened(data: dict) -> dict:
    """A stored run's dict made the plan of a new run: no id, outcome, files, page or date, and
    no line keeps what was weighed for the earlier run (`actual`), or the new vial would be
    worked out from, and its bench sheet filled in with, another flask's weighings."""
    data = {k: v for k, v in data.items() if k not in HAPPENED_KEYS}
    data["lines"] = [{k: v for k, v in ln.items() if k != "actual"} for ln in data.get("lines", [])]
    return data


def plan_screen(
    base: Run, factors: dict[str, list[str]], scale=None, subset=None, name: str | None = None, nb=None
) -> PlannedScreen:
    """The planned runs of a screen: every combination of levels (or `subset`: vial numbers
    from 1, or dicts of levels), each with its amounts at `scale` and its bench findings under
    the settings of notebook `nb` (the documented defaults when None), as stored later."""
    from ..findings import findings_for

    base = load_run(base)
    levels = _levels(factors)
    combos = _combos(levels, subset)
    sc_name = name or f"{base.title}: " + " × ".join(levels)
    screen = Screen(
        name=sc_name[:200],
        factors=levels,
        base_run=base.id,
        chemist=base.chemist,
        scale=str(scale) if scale is not None else None,
        description=f"planned from {'run ' + base.id if base.id else 'a base run file'}: {base.title}",
    )
    plan = PlannedScreen(screen, base)
    for n, combo in enumerate(combos, 1):
        data = not_yet_happened(base.to_json_dict())
        if scale is not None:
            _scale_to(data, base, scale)
        for f, level in combo.items():
            apply_level(data, f, level, base)
        data.update(
            {
                "title": f"{sc_name[:150]} — " + ", ".join(f"{k} {v}" for k, v in combo.items()),
                "status": "planned",
                "factors": combo,
                "tags": sorted(set(base.tags) | {"planned"}),
            }
        )
        try:
            run = load_run(data)
        except RecordError as exc:
            raise RecordError(f"vial {n} ({', '.join(f'{k} {v}' for k, v in combo.items())}): {exc.message}", exc.hint) from None
        table, problem = None, None
        try:
            from .. import amounts

            table = amounts.compute(run)
        except TrapbookError as exc:
            problem = exc.message
        plan.runs.append(PlannedRun(f"V{n}", run, table, findings_for(nb, run), problem))
    return plan


def store_plan(nb, plan: PlannedScreen, author: str | None = None) -> PlannedScreen:
    """Save the screen and its planned runs in one transaction (all or none)."""
    with nb.transaction():
        sid = nb.add_screen(plan.screen, author=author, reason="planned")
        ids = []
        for pr in plan.runs:
            run = pr.run.model_copy(update={"screen": sid})
            res = nb.add_run(run, author=author, reason=f"planned in screen {sid} as vial {pr.vial}")
            ids.append(res.run_id)
            pr.run = run.model_copy(update={"id": res.run_id})
        nb.save_screen(plan.screen.model_copy(update={"id": sid, "runs": ids}), author=author, reason="planned runs added")
    plan.screen_id, plan.run_ids = sid, ids
    plan.screen = plan.screen.model_copy(update={"id": sid, "runs": ids})
    return plan


def totals(plan: PlannedScreen) -> list[dict]:
    """What to have at hand for the whole screen, per material (sum over vials, no excess added)."""
    acc: dict[str, dict] = {}
    for pr in plan.runs:
        if pr.amounts is None:
            continue
        for row in pr.amounts.lines:
            if row.role == "product":
                continue
            d = acc.setdefault(
                row.name,
                {"line": row.name, "role": row.role, "form": row.form, "vials": 0, "mass_mg": 0.0, "volume_ul": 0.0, "mmol": 0.0},
            )
            d["vials"] += 1
            d["mass_mg"] += row.mass_mg or 0.0
            d["volume_ul"] += row.volume_ul or 0.0
            d["mmol"] += row.mmol or 0.0
    return list(acc.values())


# --- what the command line hands in ------------------------------------------------------------

_LOCANTS = re.compile(r"\d+(?:,\d+)+-")


def split_levels(text: str) -> list[str]:
    """'furan,anthracene' → two levels; commas of locants stay ('2,5-dimethylfuran'), while
    '5,10' is two levels; with ';' or '|' in the text, only those separate."""
    if ";" in text or "|" in text:
        parts = re.split(r"[;|]", text)
    else:
        guarded = _LOCANTS.sub(lambda m: m.group(0).replace(",", "\0"), text)
        parts = [p.replace("\0", ",") for p in guarded.split(",")]
    return [p.strip() for p in parts if p.strip()]


def parse_vary(items: list[str]) -> dict[str, list[str]]:
    """['trap=furan,anthracene', 'temperature=23 °C,60 °C'] → {'trap': [...], 'temperature': [...]}."""
    out: dict[str, list[str]] = {}
    for item in items:
        name, sep, levels = item.partition("=")
        if not sep or not name.strip():
            raise RecordError(f"'{item}' is not written CONDITION=LEVEL,LEVEL", "e.g. --vary trap=furan,anthracene")
        key = factor_name(name)
        if key in out:
            raise RecordError(f"condition '{key}' is given twice", "give each condition once, with all its levels")
        out[key] = split_levels(levels)
    return out


def make_screen(
    nb, base, factors, *, scale=None, subset=None, name: str | None = None, store: bool = True, author: str | None = None
) -> PlannedScreen:
    """Plan a screen and, unless store is False (a dry run), save it with its planned runs."""
    plan = plan_screen(base, factors, scale=scale, subset=subset, name=name, nb=nb)
    if store:
        if nb is None:
            raise TrapbookError("no notebook to store the screen in", "give --db, or use --dry-run to only print the plan")
        store_plan(nb, plan, author=author)
    return plan
