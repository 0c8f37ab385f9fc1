"""Plan a condition screen from one base run, and print what to put in which vial.

A chemist writes the run they would do anyway (the base), then says what to vary —
trap, fluoride protocol, temperature, time, trap equiv, solvent — and at which levels.
Every combination (or a chosen subset) becomes a planned run with its own amounts at
the screen's scale and its own bench checks, so a vial that would be heated above the
boiling point of its solvent is flagged before it is made, not after.

How a level changes the base run:

- ``trap``: the base's trap line is replaced (amount in equiv kept) by a trap line of
  the base with that name, or by a trap from the table below. Product lines that
  belong to the old trap are dropped; add the new adduct when it is known.
- ``fluoride``: the fluoride source (and its helper salt) is replaced by a protocol of
  ``FLUORIDE_PROTOCOLS`` or a fluoride line of the base with that name.
- ``temperature`` / ``time``: the reaction step — the step after the fluoride source
  goes in with the longest hold (the last step with a temperature if none holds) —
  takes the new temperature or hold.
- ``trap equiv``: the equiv of every trap line.
- ``solvent``: the solvent line's compound (same volume).
"""

from __future__ import annotations

import html
import itertools
import re
from dataclasses import dataclass, field

from .phrases import step_phrases
from .errors import RecordError, TrapbookError
from .records import Run, Screen, load_run

# --- what the planner knows ------------------------------------------------------------------


@dataclass(frozen=True)
class KnownTrap:
    """A trapping agent the planner can add by name: structure and, for liquids, density."""

    name: str
    smiles: str
    aliases: tuple[str, ...] = ()
    density_g_ml: float | None = None
    density_source: str | None = None
    note: str | None = None


#: Common traps for strained alkenes, allenes and alkynes; densities of the neat liquids.
KNOWN_TRAPS: tuple[KnownTrap, ...] = (
    KnownTrap("furan", "c1ccoc1", ("furane",), 0.951, "CRC Handbook of Chemistry and Physics (from memory)",
              "bp 31 °C: volatile and peroxide-forming"),
    KnownTrap("2,5-dimethylfuran", "Cc1ccc(C)o1", ("DMFu", "2,5-DMF"), 0.903, "supplier data sheet (from memory)"),
    KnownTrap("anthracene", "c1ccc2cc3ccccc3cc2c1", ()),
    KnownTrap("1,3-diphenylisobenzofuran", "c1ccc(cc1)-c1oc(-c2ccccc2)c2ccccc12", ("DPIBF", "DPBF"),
              note="light-sensitive; weigh and keep in the dark"),
    KnownTrap("cyclopentadiene", "C1C=CC=C1", ("Cp", "CpH"), 0.802, "CRC Handbook of Chemistry and Physics (from memory)",
              "dimerises at room temperature: crack freshly and keep cold"),
    KnownTrap("N-tert-butyl-alpha-phenylnitrone", "CC(C)(C)[N+]([O-])=Cc1ccccc1", ("PBN", "N-tert-butyl-α-phenylnitrone")),
)


@dataclass(frozen=True)
class FluorideProtocol:
    """A fluoride source with its helper salt, each in equiv of the limiting line."""

    name: str
    lines: tuple[dict, ...]
    aliases: tuple[str, ...] = ()
    note: str | None = None


#: Equiv below are the usual starting points, common practice, no source; edit the base to change them.
FLUORIDE_PROTOCOLS: tuple[FluorideProtocol, ...] = (
    FluorideProtocol(
        "TBAF",
        ({"role": "fluoride source", "name": "TBAF 1.0 M in THF", "smiles": "CCCC[N+](CCCC)(CCCC)CCCC.[F-]",
          "molarity": "1.0 M", "equiv": 1.5, "water": "5 wt%"},),
        ("TBAF 1.0 M in THF", "TBAF/THF"),
        "commercial solution; about 5 wt% water (supplier specification, from memory)",
    ),
    FluorideProtocol(
        "CsF/TBAB",
        ({"role": "fluoride source", "name": "CsF", "smiles": "[Cs+].[F-]", "equiv": 5},
         {"role": "additive", "name": "TBAB", "smiles": "CCCC[N+](CCCC)(CCCC)CCCC.[Br-]", "equiv": 1.0}),
        ("CsF + TBAB", "CsF-TBAB"),
        "slow release; CsF is hygroscopic: dry it and weigh it in a glovebox",
    ),
    FluorideProtocol(
        "CsF",
        ({"role": "fluoride source", "name": "CsF", "smiles": "[Cs+].[F-]", "equiv": 5},),
        (),
        "hygroscopic: dry it and weigh it in a glovebox",
    ),
    FluorideProtocol(
        "TBAT",
        ({"role": "fluoride source", "name": "TBAT", "smiles": "CCCC[N+](CCCC)(CCCC)CCCC.F[Si-](F)(c1ccccc1)(c1ccccc1)c1ccccc1",
          "equiv": 1.5},),
        ("tetrabutylammonium difluorotriphenylsilicate",),
        "anhydrous, weighable fluoride source",
    ),
    FluorideProtocol(
        "KF/18-crown-6",
        ({"role": "fluoride source", "name": "KF", "smiles": "[K+].[F-]", "equiv": 5},
         {"role": "additive", "name": "18-crown-6", "smiles": "C1COCCOCCOCCOCCOCCO1", "equiv": 1.0}),
        ("KF + 18-crown-6",),
        "KF is hygroscopic; 18-crown-6 is toxic — gloves",
    ),
)

FACTOR_NAMES = ("trap", "fluoride", "temperature", "time", "trap equiv", "solvent")
_FACTOR_ALIASES = {
    "temp": "temperature", "t": "temperature", "fluoride source": "fluoride", "protocol": "fluoride",
    "activator": "fluoride", "hold": "time", "duration": "time", "trap_equiv": "trap equiv",
    "trap-equiv": "trap equiv", "equiv": "trap equiv", "trap eq": "trap equiv",
}


def _key(text: str) -> str:
    return " ".join(str(text).replace("−", "-").split()).casefold()


def find_trap(text: str) -> KnownTrap | None:
    k = _key(text)
    return next((t for t in KNOWN_TRAPS if k in {_key(t.name), *(_key(a) for a in t.aliases)}), None)


def find_protocol(text: str) -> FluorideProtocol | None:
    k = _key(text).replace(" ", "")
    return next((p for p in FLUORIDE_PROTOCOLS
                 if k in {_key(p.name).replace(" ", ""), *(_key(a).replace(" ", "") for a in p.aliases)}), None)


def factor_name(text: str) -> str:
    k = _key(text)
    k = _FACTOR_ALIASES.get(k, k)
    if k not in FACTOR_NAMES:
        raise RecordError(f"'{text}' is not a condition the planner can vary", f"vary one of: {', '.join(FACTOR_NAMES)}")
    return k


# --- applying one level ------------------------------------------------------------------------


def _rename_in_steps(steps: list, old: list[str], new: list[str]) -> None:
    """Put the new line names where the old ones were added (first old name → all new names)."""
    olds = {o.casefold() for o in old}
    for s in steps:
        adds, placed = [], False
        for name in s["add"] if "add" in s else []:
            if name.casefold() in olds:
                if not placed:
                    adds.extend(new)
                    placed = True
            else:
                adds.append(name)
        if "add" in s:
            s["add"] = adds


def _reaction_step(data: dict) -> int:
    """Index of the step whose temperature and hold define the reaction (see module notes)."""
    steps = data.get("steps", [])
    if not steps:
        raise RecordError("the base run has no steps", "add the steps of the base run, so a temperature or time can be varied")
    fluoride = {ln["name"].casefold() for ln in data["lines"] if ln["role"] == "fluoride source"}
    start = next((i for i, s in enumerate(steps) if any(a.casefold() in fluoride for a in s.get("add", []))), 0)
    from .units import parse_quantity, to_canonical

    def hold(s: dict) -> float:
        h = s.get("hold")
        if h is None:
            return -1.0
        return to_canonical(parse_quantity(h, "duration", "hold"), "duration") if not isinstance(h, (int, float)) else float(h)

    later = list(range(start, len(steps)))
    holding = [i for i in later if steps[i].get("hold") is not None]
    if holding:
        return max(holding, key=lambda i: (hold(steps[i]), i))
    with_t = [i for i in later if steps[i].get("temperature") is not None]
    return with_t[-1] if with_t else len(steps) - 1


def _quantity_text(value, kind: str, what: str) -> str:
    from .units import parse_quantity

    q = parse_quantity(value, kind, what)
    return f"{q.magnitude:g} {q.units:~}".replace("degree_Celsius", "°C").replace("degC", "°C")


def _trap_equiv(base: Run, name: str) -> float:
    """Equiv of the base's trap line (whatever it was given in), else 10 — common practice, no source."""
    from . import amounts

    try:
        row = amounts.compute(base).line(name)
    except TrapbookError:
        row = None
    return row.equiv if row is not None and row.equiv else 10.0


def _apply_trap(data: dict, level: str, base: Run) -> None:
    traps = [ln for ln in data["lines"] if ln["role"] == "trap"]
    if not traps:
        raise RecordError("the base run has no trap line to vary", "add a trap line to the base run")
    if len(traps) == 1 and _key(traps[0]["name"]) == _key(level):
        return
    known = find_trap(level)
    if known is None:
        raise RecordError(f"trap '{level}' is not a trap line of the base run nor one the planner knows",
                          "use a trap of the base run, or one of: " + ", ".join(t.name for t in KNOWN_TRAPS))
    if len(traps) == 1 and traps[0].get("smiles") and _same_structure(traps[0]["smiles"], known.smiles):
        return
    new = {"role": "trap", "name": known.name, "smiles": known.smiles, "equiv": round(_trap_equiv(base, traps[0]["name"]), 6)}
    if known.density_g_ml is not None:
        new["density"] = f"{known.density_g_ml} g/mL"
    names = [t["name"] for t in traps]
    products = {ln["name"] for ln in data["lines"] if ln["role"] == "product"}
    data["lines"] = [ln for ln in data["lines"] if ln["role"] not in ("trap", "product")] + [new]
    _rename_in_steps(data.get("steps", []), names, [known.name])
    for s in data.get("steps", []):
        if "add" in s:
            s["add"] = [a for a in s["add"] if a not in products]
    data.pop("outcome", None)


def _same_structure(a: str, b: str) -> bool:
    from .chemistry import molecules

    try:
        return molecules.canonical(a) == molecules.canonical(b)
    except TrapbookError:
        return False


def _apply_fluoride(data: dict, level: str) -> None:
    olds = [ln for ln in data["lines"] if ln["role"] == "fluoride source"]
    if not olds:
        raise RecordError("the base run has no fluoride source to replace", "add the fluoride line to the base run and its step")
    if any(ln["name"].casefold() == level.casefold() for ln in olds) and len(olds) == 1:
        return
    proto = find_protocol(level)
    if proto is None:
        raise RecordError(f"fluoride protocol '{level}' is not known",
                          "use a fluoride line of the base run, or one of: " + ", ".join(p.name for p in FLUORIDE_PROTOCOLS))
    helper_names = {_key(ln["name"]) for p in FLUORIDE_PROTOCOLS for ln in p.lines if ln["role"] == "additive"}
    helpers = [ln for ln in data["lines"] if ln["role"] == "additive" and _key(ln["name"]) in helper_names]
    old_names = [ln["name"] for ln in olds + helpers]
    keep = [ln for ln in data["lines"] if ln["name"] not in old_names]
    new = [dict(ln) for ln in proto.lines]
    taken = {ln["name"].casefold() for ln in keep}
    new = [ln for ln in new if ln["name"].casefold() not in taken]
    data["lines"] = keep + new
    _rename_in_steps(data.get("steps", []), old_names, [ln["name"] for ln in new])


def _apply_solvent(data: dict, level: str) -> None:
    from . import materials

    solvents = [ln for ln in data["lines"] if ln["role"] == "solvent"]
    if not solvents:
        raise RecordError("the base run has no solvent line to vary", "add a solvent line to the base run")
    mat = materials.find(name=level)
    old = solvents[0]
    new = {"role": "solvent", "name": level}
    if mat is not None and mat.smiles:
        new["smiles"] = mat.smiles
    for f in ("volume", "mass", "amount", "equiv"):
        if f in old:
            new[f] = old[f]
            break
    data["lines"] = [new if ln is old else ln for ln in data["lines"]]
    _rename_in_steps(data.get("steps", []), [old["name"]], [level])


def apply_level(data: dict, factor: str, level: str, base: Run) -> None:
    """Change the run dict `data` so that `factor` is at `level` (see the module notes)."""
    factor = factor_name(factor)
    if factor == "trap":
        _apply_trap(data, level, base)
    elif factor == "fluoride":
        _apply_fluoride(data, level)
    elif factor == "solvent":
        _apply_solvent(data, level)
    elif factor == "trap equiv":
        from .units import parse_quantity, to_canonical

        eq = to_canonical(parse_quantity(level, "equiv", "trap equiv"), "equiv")
        traps = [ln for ln in data["lines"] if ln["role"] == "trap"]
        if not traps:
            raise RecordError("the base run has no trap line", "add a trap line to the base run")
        for ln in traps:
            for f in ("amount", "mass", "volume"):
                ln.pop(f, None)
            ln["equiv"] = eq
    elif factor in ("temperature", "time"):
        i = _reaction_step(data)
        kind, key = ("temperature", "temperature") if factor == "temperature" else ("duration", "hold")
        data["steps"][i][key] = _quantity_text(level, kind, factor)


def _scale_to(data: dict, base: Run, scale) -> None:
    """Set the limiting line to `scale` (mmol) and every absolute amount in proportion."""
    from . import amounts
    from .units import parse_quantity, to_canonical

    target = to_canonical(parse_quantity(scale, "amount", "scale"), "amount")
    if target <= 0:
        raise RecordError("the scale must be above zero", "give e.g. --scale '0.10 mmol'")
    table = amounts.compute(base)
    factor = target / table.limiting_mmol
    lim = table.limiting
    for ln in data["lines"]:
        if ln["name"] == lim:
            for f in ("mass", "volume", "equiv"):
                ln.pop(f, None)
            ln["amount"] = f"{target:.6g} mmol"
            continue
        for f, kind in (("amount", "amount"), ("mass", "mass"), ("volume", "volume")):
            if f in ln:
                q = parse_quantity(ln[f], kind, f)
                ln[f] = f"{q.magnitude * factor:.6g} {q.units:~}"


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
            raise RecordError(f"subset entry {item!r} is neither a vial number nor a set of levels", "give e.g. [1, 3] or [{'trap': 'furan'}]")
    return chosen


def _run_checks(run: Run) -> list:
    try:
        from . import checks
    except ImportError:
        return []
    try:
        return checks.run_checks(run)
    except TrapbookError:
        return []


def plan_screen(base: Run, factors: dict[str, list[str]], scale=None, subset=None, name: str | None = None) -> PlannedScreen:
    """The planned runs of a screen: every combination of levels (or `subset`: vial numbers
    from 1, or dicts of levels), each with its amounts at `scale` and its bench checks."""
    base = load_run(base)
    levels = _levels(factors)
    combos = _combos(levels, subset)
    sc_name = name or f"{base.title}: " + " × ".join(levels)
    screen = Screen(name=sc_name[:200], factors=levels, base_run=base.id, chemist=base.chemist,
                    scale=str(scale) if scale is not None else None,
                    description=f"planned from {'run ' + base.id if base.id else 'a base run file'}: {base.title}")
    plan = PlannedScreen(screen, base)
    for n, combo in enumerate(combos, 1):
        data = base.to_json_dict()
        for k in ("id", "outcome", "attachments", "page", "date"):  # a planned run has not happened yet
            data.pop(k, None)
        if scale is not None:
            _scale_to(data, base, scale)
        for f, level in combo.items():
            apply_level(data, f, level, base)
        data.update({
            "title": f"{sc_name[:150]} — " + ", ".join(f"{k} {v}" for k, v in combo.items()),
            "status": "planned",
            "factors": combo,
            "tags": sorted(set(base.tags) | {"planned"}),
        })
        try:
            run = load_run(data)
        except RecordError as exc:
            raise RecordError(f"vial {n} ({', '.join(f'{k} {v}' for k, v in combo.items())}): {exc.message}", exc.hint) from None
        table, problem = None, None
        try:
            from . import amounts

            table = amounts.compute(run)
        except TrapbookError as exc:
            problem = exc.message
        plan.runs.append(PlannedRun(f"V{n}", run, table, _run_checks(run), problem))
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


# --- the bench sheet --------------------------------------------------------------------------


def _how(row) -> tuple[str, str]:
    """('weigh', '12.3 mg') or ('measure', '95 µL') — what the chemist does for one line."""
    from .units import fmt_mg, fmt_ul

    if row.form == "solid":
        return ("weigh", f"{fmt_mg(row.mass_mg)} mg") if row.mass_mg is not None else ("weigh", "amount unknown")
    if row.volume_ul is not None:
        return "measure", f"{fmt_ul(row.volume_ul)} µL"
    if row.mass_mg is not None:
        return "weigh", f"{fmt_mg(row.mass_mg)} mg"
    return "add", "amount unknown"


def vial_instructions(pr: PlannedRun) -> list[dict]:
    """Ordered actions for one vial: each addition with every amount, then heating and holds."""
    from .units import fmt_mmol

    out: list[dict] = []
    table = pr.amounts
    added: set[str] = set()
    steps = pr.run.steps or []
    for i, s in enumerate(steps, 1):
        for name in s.add:
            row = table.line(name) if table is not None else None
            added.add(name.casefold())
            if row is None:
                out.append({"step": i, "action": "add", "line": name, "quantity": "see run (amount unknown)"})
                continue
            verb, qty = _how(row)
            extra = []
            if row.mmol is not None:
                extra.append(f"{fmt_mmol(row.mmol)} mmol")
            if row.equiv is not None:
                extra.append(f"{row.equiv:.3g} equiv")
            if row.molarity_M:
                extra.append(f"{row.molarity_M:g} M solution")
            out.append({"step": i, "action": verb, "line": name, "role": row.role, "quantity": qty, "detail": ", ".join(extra)})
        cond = step_phrases(s.model_copy(update={"note": None}), with_additions=False)
        if cond or s.note:
            out.append({"step": i, "action": "conditions", "line": "", "quantity": "; ".join(cond), "detail": s.note or ""})
    if table is not None:
        for row in table.lines:
            if row.role != "product" and row.name.casefold() not in added:
                verb, qty = _how(row)
                out.append({"step": None, "action": verb, "line": row.name, "role": row.role, "quantity": qty,
                            "detail": "not named in any step — decide when it goes in"})
    return out


def totals(plan: PlannedScreen) -> list[dict]:
    """What to have at hand for the whole screen, per material (sum over vials, no excess added)."""
    acc: dict[str, dict] = {}
    for pr in plan.runs:
        if pr.amounts is None:
            continue
        for row in pr.amounts.lines:
            if row.role == "product":
                continue
            d = acc.setdefault(row.name, {"line": row.name, "role": row.role, "form": row.form, "vials": 0,
                                          "mass_mg": 0.0, "volume_ul": 0.0, "mmol": 0.0})
            d["vials"] += 1
            d["mass_mg"] += row.mass_mg or 0.0
            d["volume_ul"] += row.volume_ul or 0.0
            d["mmol"] += row.mmol or 0.0
    return list(acc.values())


_SAFETY = (
    "Before you start: read the SDS of every material; follow your local rules and ask the lab's safety officer "
    "when unsure. Fluoride salts and solutions are toxic and give HF with acid — gloves, no acid nearby, calcium "
    "gluconate gel at hand. Sealed vials heated above the solvent's boiling point build pressure — rated vials, "
    "blast shield, fill at most half full. Furans and ethers form peroxides and are volatile — fresh bottles, fume hood."
)


def _total_text(t: dict) -> str:
    """A liquid's total as a volume, a solid's as a mass."""
    from .units import fmt_mg, fmt_ul

    if t["form"] in ("neat liquid", "solution", "solvent") and t["volume_ul"]:
        return f"{fmt_ul(t['volume_ul'])} µL"
    if t["mass_mg"]:
        return f"{fmt_mg(t['mass_mg'])} mg"
    return f"{fmt_ul(t['volume_ul'])} µL" if t["volume_ul"] else "—"


def bench_sheet_text(plan: PlannedScreen) -> str:
    lines = [f"BENCH SHEET — {plan.screen.name}" + (f" ({plan.screen_id})" if plan.screen_id else "")]
    lines.append("varied: " + "; ".join(f"{k}: {', '.join(v)}" for k, v in plan.screen.factors.items()))
    if plan.screen.scale:
        lines.append(f"scale: {plan.screen.scale} of the limiting line")
    lines.append("")
    lines.append("safety: " + _SAFETY)
    lines.append("")
    lines.append("have at hand (sum over vials, add your own excess):")
    for t in totals(plan):
        amt = _total_text(t)
        lines.append(f"  {t['line'][:40]:40} {t['role']:17} {amt:>12}  in {t['vials']} vial(s)")
    for i, pr in enumerate(plan.runs):
        rid = plan.run_ids[i] if i < len(plan.run_ids) else ""
        lines.append("")
        lines.append(f"[{pr.vial}] {rid}  " + ", ".join(f"{k}: {v}" for k, v in pr.run.factors.items()))
        if pr.problem:
            lines.append(f"   amounts cannot be worked out: {pr.problem}")
        for ins in vial_instructions(pr):
            step = f"{ins['step']}." if ins["step"] else "?."
            if ins["action"] == "conditions":
                lines.append(f"   {step:4} {ins['quantity']}" + (f" ({ins['detail']})" if ins["detail"] else ""))
            else:
                lines.append(f"   {step:4} [ ] {ins['action']:7} {ins['quantity']:>12}  {ins['line']}" + (f"  ({ins['detail']})" if ins.get("detail") else ""))
        for f in pr.findings:
            if f.severity in ("stop", "warn"):
                lines.append(f"   ! {f.severity.upper()} {f.code}: {f.message}")
                if f.caution:
                    lines.append(f"     caution: {f.caution}")
    return "\n".join(lines) + "\n"


def bench_sheet_html(plan: PlannedScreen) -> str:
    """A printable page: one block per vial with check boxes, in the order of addition."""
    e = html.escape
    out = ["<!DOCTYPE html><html lang='en'><head><meta charset='utf-8'>",
           f"<title>Bench sheet — {e(plan.screen.name)}</title>",
           "<style>body{font-family:system-ui,sans-serif;margin:1.5rem;color:#222}"
           "h1{font-size:1.3rem}h2{font-size:1.05rem;margin:1.2rem 0 .3rem;border-bottom:2px solid #5a6f3c}"
           "table{border-collapse:collapse;width:100%;font-size:.9rem}td,th{border:1px solid #bbb;padding:.25rem .4rem;text-align:left}"
           "td.n{text-align:right;font-variant-numeric:tabular-nums}.box{width:1.2rem}.vial{break-inside:avoid}"
           ".warn{color:#7a3b00}.stop{color:#a00000;font-weight:bold}.safety{border:1px solid #a06000;padding:.5rem;background:#fff8ec}"
           "@media print{body{margin:.5cm}}</style></head><body>"]
    out.append(f"<h1>Bench sheet — {e(plan.screen.name)}{' (' + e(plan.screen_id) + ')' if plan.screen_id else ''}</h1>")
    out.append("<p>Varied: " + "; ".join(f"<b>{e(k)}</b>: {e(', '.join(v))}" for k, v in plan.screen.factors.items()) + "</p>")
    if plan.screen.scale:
        out.append(f"<p>Scale: {e(plan.screen.scale)} of the limiting line.</p>")
    out.append(f"<p class='safety'>{e(_SAFETY)}</p>")
    out.append("<h2>Have at hand</h2><table><tr><th>material</th><th>role</th><th>total</th><th>vials</th></tr>")
    for t in totals(plan):
        amt = _total_text(t)
        out.append(f"<tr><td>{e(t['line'])}</td><td>{e(t['role'])}</td><td class='n'>{e(amt)}</td><td class='n'>{t['vials']}</td></tr>")
    out.append("</table>")
    for i, pr in enumerate(plan.runs):
        rid = plan.run_ids[i] if i < len(plan.run_ids) else ""
        out.append(f"<div class='vial'><h2>{e(pr.vial)} {e(rid)} — " + e(", ".join(f"{k}: {v}" for k, v in pr.run.factors.items())) + "</h2>")
        if pr.problem:
            out.append(f"<p class='stop'>Amounts cannot be worked out: {e(pr.problem)}</p>")
        out.append("<table><tr><th class='box'>✓</th><th>step</th><th>do</th><th>amount</th><th>line</th><th>detail</th></tr>")
        for ins in vial_instructions(pr):
            out.append(f"<tr><td class='box'>☐</td><td>{ins['step'] or '?'}</td><td>{e(ins['action'])}</td>"
                       f"<td class='n'>{e(ins['quantity'])}</td><td>{e(ins['line'])}</td><td>{e(ins.get('detail') or '')}</td></tr>")
        out.append("</table>")
        for f in pr.findings:
            if f.severity in ("stop", "warn"):
                out.append(f"<p class='{e(f.severity)}'>{e(f.severity.upper())} {e(f.code)}: {e(f.message)}"
                           + (f"<br><i>caution: {e(f.caution)}</i>" if f.caution else "") + "</p>")
        out.append("</div>")
    out.append("</body></html>")
    return "\n".join(out)


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


def make_screen(nb, base, factors, *, scale=None, subset=None, name: str | None = None, store: bool = True,
                author: str | None = None) -> PlannedScreen:
    """Plan a screen and, unless store is False (a dry run), save it with its planned runs."""
    plan = plan_screen(base, factors, scale=scale, subset=subset, name=name)
    if store:
        if nb is None:
            raise TrapbookError("no notebook to store the screen in", "give --db, or use --dry-run to only print the plan")
        store_plan(nb, plan, author=author)
    return plan
