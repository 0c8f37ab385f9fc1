"""What the planner knows (traps, fluoride protocols, condition names) and how one level
changes a base run; see the package's docstring for the rules of each condition."""

from __future__ import annotations

from dataclasses import dataclass

from ..errors import RecordError, TrapbookError
from ..records import Run

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
    KnownTrap(
        "furan",
        "c1ccoc1",
        ("furane",),
        0.951,
        "CRC Handbook of Chemistry and Physics (from memory)",
        "bp 31 °C: volatile and peroxide-forming",
    ),
    KnownTrap("2,5-dimethylfuran", "Cc1ccc(C)o1", ("DMFu", "2,5-DMF"), 0.903, "supplier data sheet (from memory)"),
    KnownTrap("anthracene", "c1ccc2cc3ccccc3cc2c1", ()),
    KnownTrap(
        "1,3-diphenylisobenzofuran",
        "c1ccc(cc1)-c1oc(-c2ccccc2)c2ccccc12",
        ("DPIBF", "DPBF"),
        note="light-sensitive; weigh and keep in the dark",
    ),
    KnownTrap(
        "cyclopentadiene",
        "C1C=CC=C1",
        ("Cp", "CpH"),
        0.802,
        "CRC Handbook of Chemistry and Physics (from memory)",
        "dimerises at room temperature: crack freshly and keep cold",
    ),
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
        (
            {
                "role": "fluoride source",
                "name": "TBAF 1.0 M in THF",
                "smiles": "CCCC[N+](CCCC)(CCCC)CCCC.[F-]",
                "molarity": "1.0 M",
                "equiv": 1.5,
                "water": "5 wt%",
            },
        ),
        ("TBAF 1.0 M in THF", "TBAF/THF"),
        "commercial solution; about 5 wt% water (supplier specification, from memory)",
    ),
    FluorideProtocol(
        "CsF/TBAB",
        (
            {"role": "fluoride source", "name": "CsF", "smiles": "[Cs+].[F-]", "equiv": 5},
            {"role": "additive", "name": "TBAB", "smiles": "CCCC[N+](CCCC)(CCCC)CCCC.[Br-]", "equiv": 1.0},
        ),
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
        (
            {
                "role": "fluoride source",
                "name": "TBAT",
                "smiles": "CCCC[N+](CCCC)(CCCC)CCCC.F[Si-](F)(c1ccccc1)(c1ccccc1)c1ccccc1",
                "equiv": 1.5,
            },
        ),
        ("tetrabutylammonium difluorotriphenylsilicate",),
        "anhydrous, weighable fluoride source",
    ),
    FluorideProtocol(
        "KF/18-crown-6",
        (
            {"role": "fluoride source", "name": "KF", "smiles": "[K+].[F-]", "equiv": 5},
            {"role": "additive", "name": "18-crown-6", "smiles": "C1COCCOCCOCCOCCOCCO1", "equiv": 1.0},
        ),
        ("KF + 18-crown-6",),
        "KF is hygroscopic; 18-crown-6 is toxic — gloves",
    ),
)

FACTOR_NAMES = ("trap", "fluoride", "temperature", "time", "trap equiv", "solvent")
_FACTOR_ALIASES = {
    "temp": "temperature",
    "t": "temperature",
    "fluoride source": "fluoride",
    "protocol": "fluoride",
    "activator": "fluoride",
    "hold": "time",
    "duration": "time",
    "trap_equiv": "trap equiv",
    "trap-equiv": "trap equiv",
    "equiv": "trap equiv",
    "trap eq": "trap equiv",
}


def _key(text: str) -> str:
    return " ".join(str(text).replace("−", "-").split()).casefold()


def find_trap(text: str) -> KnownTrap | None:
    k = _key(text)
    return next((t for t in KNOWN_TRAPS if k in {_key(t.name), *(_key(a) for a in t.aliases)}), None)


def find_protocol(text: str) -> FluorideProtocol | None:
    k = _key(text).replace(" ", "")
    return next(
        (p for p in FLUORIDE_PROTOCOLS if k in {_key(p.name).replace(" ", ""), *(_key(a).replace(" ", "") for a in p.aliases)}),
        None,
    )


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
    from ..units import parse_quantity, to_canonical

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
    from ..units import parse_quantity

    q = parse_quantity(value, kind, what)
    return f"{q.magnitude:g} {q.units:~}".replace("degree_Celsius", "°C").replace("degC", "°C")


def _trap_equiv(base: Run, name: str) -> float:
    """Equiv of the base's trap line (whatever it was given in), else 10 — common practice, no source."""
    from .. import amounts

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
        raise RecordError(
            f"trap '{level}' is not a trap line of the base run nor one the planner knows",
            "use a trap of the base run, or one of: " + ", ".join(t.name for t in KNOWN_TRAPS),
        )
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
    from ..chemistry import molecules

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
        raise RecordError(
            f"fluoride protocol '{level}' is not known",
            "use a fluoride line of the base run, or one of: " + ", ".join(p.name for p in FLUORIDE_PROTOCOLS),
        )
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
    from .. import materials

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
        from ..units import parse_quantity, to_canonical

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
    from .. import amounts
    from ..units import parse_quantity, to_canonical

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
