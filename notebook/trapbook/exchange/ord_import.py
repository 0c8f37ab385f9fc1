"""ORD import: runs from an ORD ``Dataset`` or ``Reaction``, with notes on what did not map.

Split from the exporter because reading has to take reactions written by any tool, with
units, roles and measurements Trapbook never writes, and must say what it leaves out
rather than drop it; the vocabulary it shares with the export is in ``ord_common``.

A reaction written by a Trapbook export comes back as written (roles, equiv, the plan
beside a weighed amount, stock molarity, density, purity and water content from the
compound features, steps with their bench words and ramps and the line order from
``provenance.reaction_metadata``, the vessel from ``setup``, the outcome through
``ord_outcome``). A reaction made by another tool is read
from the ORD fields alone; whatever cannot be placed in a run is listed in the import
report's notes, never silently dropped. Import is all or nothing.
"""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

from ..errors import ExchangeError, RecordError, TrapbookError
from ..records import Run, load_run
from ..text_rules import quoted_in_reason
from .ord_common import (
    _MASS,
    _MOLES,
    _ROLE_FROM_ORD,
    _RUN_ID_DETAILS,
    _TIME,
    _TITLE_DETAILS,
    _VOLUME,
    AMOUNT_SLOTS,
    AS_WRITTEN_FEATURE,
    COMPONENT_FEATURES,
    JSON_METADATA,
    LINE_ORDER_METADATA,
    METADATA_KEYS,
    PLAIN_METADATA,
    PLANNED_FEATURES,
    QUANTITY_FEATURES,
    ROLE_TO_ORD,
    STEPS_METADATA,
    VESSEL_DETAILS,
    WEIGHED_FEATURE,
    _celsius,
    _data_value,
    _num,
    _pb,
    _unit_value,
    identifiers,
    quantity_of,
)
from .ord_outcome import read_products, read_workups

#: ORD amount field -> its unit table.
_TABLES = {"moles": _MOLES, "mass": _MASS, "volume": _VOLUME}

MAX_IMPORT_BYTES = 200 * 1024 * 1024


def parse_bytes(raw: bytes, name: str):
    """A Dataset (a lone Reaction is wrapped in one) from the bytes of a .pb, .pbtxt or .json file."""
    from google.protobuf import json_format, text_format
    from google.protobuf import message as pbmessage

    r, d = _pb()
    lower = name.lower()
    errors = []
    if lower.endswith(".pb"):
        kinds = ("binary",)
    elif lower.endswith(".json"):
        kinds = ("json",)
    else:
        kinds = ("text",)
    for kind in kinds:
        for cls in (d.Dataset, r.Reaction):
            msg = cls()
            try:
                if kind == "binary":
                    msg.ParseFromString(raw)
                elif kind == "json":
                    json_format.Parse(raw.decode("utf-8"), msg)
                else:
                    text_format.Parse(raw.decode("utf-8"), msg)
            except (
                pbmessage.DecodeError,
                json_format.ParseError,
                text_format.ParseError,
                UnicodeDecodeError,
                ValueError,
                TypeError,
                KeyError,
                IndexError,
                RecursionError,
                OverflowError,
                AttributeError,
            ) as exc:
                errors.append(f"{cls.__name__}: {str(exc)[:200]}")
                continue
            if cls is d.Dataset:
                if not msg.reactions:
                    errors.append("Dataset: holds no reactions")
                    continue
                if kind == "binary" and not any(rx.inputs or rx.outcomes for rx in msg.reactions):
                    # binary carries no type: a lone Reaction can also parse as a (meaningless) Dataset
                    errors.append("Dataset: its reactions have no inputs or outcomes")
                    continue
                return msg
            ds = d.Dataset()
            ds.reactions.append(msg)
            return ds
    raise ExchangeError(
        f"{name} is not an ORD Dataset or Reaction ({'; '.join(errors)[:400]})",
        "give an ORD file written as binary (.pb), text (.pbtxt) or JSON (.json); nothing was imported",
    )


def _trapbook_steps(meta: dict, lines: list[dict], where: str, notes: list[str]) -> list[dict] | None:
    """The step sequence written by a Trapbook export, if it is there and fits the lines."""
    raw = meta.get(STEPS_METADATA)
    if not isinstance(raw, str):
        return None
    try:
        steps = json.loads(raw)
    except (ValueError, RecursionError):
        notes.append(f"{where}: the Trapbook step list is not readable JSON; steps rebuilt from the ORD fields")
        return None
    names = {ln["name"].casefold() for ln in lines}
    if not isinstance(steps, list) or not all(isinstance(s, dict) for s in steps):
        notes.append(f"{where}: the Trapbook step list is malformed; steps rebuilt from the ORD fields")
        return None
    for s in steps:
        add = s.get("add", [])
        if not isinstance(add, list) or any(not isinstance(a, str) or a.casefold() not in names for a in add):
            notes.append(
                f"{where}: the Trapbook step list names lines the ORD inputs do not have; steps rebuilt from the ORD fields"
            )
            return None
    return steps


def _in_order(lines: list[dict], meta: dict) -> list[dict]:
    raw = meta.get(LINE_ORDER_METADATA)
    try:
        order = json.loads(raw) if isinstance(raw, str) else None
    except (ValueError, RecursionError):
        order = None
    if not isinstance(order, list):
        return lines
    rank = {str(n).casefold(): i for i, n in enumerate(order)}
    return sorted(lines, key=lambda ln: rank.get(ln["name"].casefold(), len(rank)))


def _amount_fields(amount, where: str, notes: list[str]) -> dict:
    """{"amount" | "mass" | "volume": quantity} from an ORD Amount, in the unit it was written in."""
    kind = amount.WhichOneof("kind")
    for field, (slot, _) in AMOUNT_SLOTS.items():
        if kind == slot:
            q = quantity_of(getattr(amount, slot), _TABLES[slot])
            if q is not None:
                return {field: q}
    if kind == "unmeasured":
        notes.append(f"{where}: unmeasured amount ({amount.unmeasured.details or 'no detail'}) has no Trapbook form")
        return {}
    notes.append(f"{where}: amount missing or in a unit Trapbook does not read")
    return {}


def _planned(features: dict, where: str, notes: list[str]) -> dict:
    """The plan of a line whose ORD amount is what was weighed: {"amount" | "mass" | "volume": quantity}."""
    for field, key in PLANNED_FEATURES.items():
        raw = features.get(key)
        if not isinstance(raw, str):
            continue
        try:
            q = json.loads(raw)
        except (ValueError, RecursionError):
            q = None
        if isinstance(q, dict):
            return {field: q}
        notes.append(f"{where}: the planned {field} is not readable; the weighed amount is kept as the plan")
    return {}


def _line_amounts(comp, features: dict, where: str, notes: list[str]) -> dict:
    """The given amount and, for a line Trapbook wrote as weighed, what was weighed (`actual`)."""
    measured = _amount_fields(comp.amount, where, notes)
    equiv = _num(features.get("equiv"))
    plan = {"equiv": equiv} if equiv is not None and not comp.is_limiting else {}
    if features.get(WEIGHED_FEATURE) != "true":
        return plan or measured
    plan = plan or _planned(features, where, notes)
    if not plan:
        return measured
    return {**plan, "actual": next(iter(measured.values()))} if measured else plan


def _role_of(comp, smiles: str | None) -> str:
    features = {k: _data_value(v) for k, v in comp.features.items()}
    role = features.get("trapbook_role")
    if isinstance(role, str) and role in ROLE_TO_ORD:
        return role
    rname = type(comp).DESCRIPTOR.fields_by_name["reaction_role"].enum_type.values_by_number[comp.reaction_role].name
    if rname == "REACTANT" and comp.is_limiting:
        return "precursor"
    if rname == "REAGENT" and smiles and "F-" in smiles:
        return "fluoride source"
    return _ROLE_FROM_ORD.get(rname, "additive")


def _quantities(features: dict, where: str, notes: list[str]) -> dict:
    """Molarity, density, purity, water and molar mass: as written where the export kept that, else the numbers."""
    out = {}
    for field, _kind, key, unit in QUANTITY_FEATURES:
        v = _num(features.get(key))
        if v is not None:
            out[field] = {"value": v, "unit": unit}
    raw = features.get(AS_WRITTEN_FEATURE)
    if isinstance(raw, str):
        try:
            written = json.loads(raw)
        except (ValueError, RecursionError):
            written = None
        if not isinstance(written, dict):
            notes.append(f"{where}: the quantities as written are not readable; kept as numbers in their base units")
            written = {}
        out.update({field: q for field, q in written.items() if field in out and isinstance(q, dict)})
    return out


def _line_from_component(comp, where: str, notes: list[str]) -> dict:
    name, smiles, other = identifiers(comp)
    if other:
        notes.append(f"{where}: identifiers not kept: {', '.join(other)}")
    features = {k: _data_value(v) for k, v in comp.features.items()}
    role = _role_of(comp, smiles)
    line: dict[str, Any] = {"role": role, "name": name or smiles or where}
    if smiles:
        line["smiles"] = smiles
    line.update(_line_amounts(comp, features, where, notes))
    line.update(_quantities(features, where, notes))
    if features.get("marked_limiting") == "true":
        line["limiting"] = True
    if isinstance(features.get("note"), str):
        line["note"] = features["note"]
    if comp.source.lot:
        line["lot"] = comp.source.lot
    extra = [k for k in features if k not in COMPONENT_FEATURES]
    if extra:
        notes.append(f"{where}: features not kept: {', '.join(sorted(extra))}")
    if comp.preparations:
        notes.append(f"{where}: compound preparations not kept")
    return line


def _unique_name(line: dict, taken: set[str]) -> None:
    base = line["name"][:190]
    name, n = base, 2
    while name.casefold() in taken:
        name = f"{base} ({n})"
        n += 1
    line["name"] = name
    taken.add(name.casefold())


def _run_fields(rxn, where: str, notes: list[str]) -> tuple[dict, dict]:
    """(run fields from identifiers, provenance and setup; the reaction metadata as read)."""
    data: dict[str, Any] = {}
    title = run_id = None
    for ident in rxn.identifiers:
        if ident.details == _RUN_ID_DETAILS:
            run_id = ident.value
        elif ident.details == _TITLE_DETAILS:
            title = ident.value
        else:
            notes.append(f"{where}: reaction identifier {type(ident).ReactionIdentifierType.Name(ident.type)} not kept")
    data["title"] = (title or f"ORD reaction {rxn.reaction_id or where}")[:300]
    if run_id:
        data["id"] = run_id
    meta = {k: _data_value(v) for k, v in rxn.provenance.reaction_metadata.items()}
    for key in PLAIN_METADATA:
        if isinstance(meta.get(key), str):
            data[key] = meta[key]
    for key in JSON_METADATA:
        if isinstance(meta.get(key), str):
            try:
                data[key] = json.loads(meta[key])
            except (ValueError, RecursionError):
                notes.append(f"{where}: metadata '{key}' is not readable JSON; not kept")
    extra = [k for k in meta if k not in METADATA_KEYS]
    if extra:
        notes.append(f"{where}: provenance metadata not kept: {', '.join(sorted(extra))}")
    if rxn.provenance.experimenter.name:
        data["chemist"] = rxn.provenance.experimenter.name
    start = rxn.provenance.experiment_start.value
    if start:
        data["date"] = start[:10]
    data.update(_vessel(rxn, where, notes))
    return data, meta


def _vessel(rxn, where: str, notes: list[str]) -> dict:
    if not rxn.HasField("setup") or not rxn.setup.HasField("vessel"):
        if rxn.HasField("setup"):
            notes.append(f"{where}: reaction setup (other than the vessel volume) not kept")
        return {}
    vessel = rxn.setup.vessel
    if vessel.type != vessel.CUSTOM or vessel.details != VESSEL_DETAILS:
        kind = type(vessel).VesselType.Name(vessel.type)
        notes.append(
            f"{where}: vessel type {kind}{' (' + vessel.details + ')' if vessel.details else ''} not kept; "
            "a run records the vessel's volume only"
        )
    q = quantity_of(vessel.volume, _VOLUME) if vessel.HasField("volume") else None
    return {"vessel": q} if q is not None else {}


def _input_step(inp, names: list[str]) -> dict:
    step: dict[str, Any] = {"add": names}
    if inp.HasField("addition_temperature"):
        c = _celsius(inp.addition_temperature)
        if c is not None:
            step["temperature"] = {"value": c, "unit": "°C"}
    if inp.HasField("addition_duration"):
        v = _unit_value(inp.addition_duration, _TIME)
        if v is not None:
            step["over"] = {"value": v, "unit": "min"}
    return step


def _input_lines(rxn, where: str, taken: set[str], notes: list[str]) -> tuple[list[dict], list[dict]]:
    """(lines, one step per ordered input) from the reaction inputs, in addition order."""
    lines: list[dict] = []
    steps: list[dict] = []
    ordered = sorted(rxn.inputs.items(), key=lambda kv: (kv[1].addition_order or 10**9, kv[0]))
    for key, inp in ordered:
        step_names = []
        for j, comp in enumerate(inp.components):
            line = _line_from_component(comp, f"{where} input '{key}' component {j + 1}", notes)
            _unique_name(line, taken)
            lines.append(line)
            step_names.append(line["name"])
        if inp.crude_components:
            notes.append(f"{where} input '{key}': crude components (from another reaction) not kept")
        if inp.addition_order and step_names:
            steps.append(_input_step(inp, step_names))
    return lines, steps


def _workups(rxn, where: str, taken: set[str], notes: list[str]) -> tuple[list[dict], dict]:
    """(lines from workup materials, the work-up text and eluent) from the reaction workups."""
    lines: list[dict] = []
    outcome: dict[str, Any] = {}
    for k, wk in enumerate(rxn.workups):
        for j, comp in enumerate(wk.input.components):
            line = _line_from_component(comp, f"{where} workup {k + 1} component {j + 1}", notes)
            if line["role"] != "internal standard":
                notes.append(f"{where} workup {k + 1}: a workup material ('{line['name']}') kept as an additive line")
                line["role"] = "additive"
            _unique_name(line, taken)
            lines.append(line)
        if not wk.input.components:
            read_workups(wk, k, where, outcome, notes)
    return lines, outcome


def _final_step(rxn, steps: list[dict]) -> dict:
    """The reaction-wide setpoint, time, seal and atmosphere as one last step (the first step takes the atmosphere)."""
    cond = rxn.conditions
    main_t = _celsius(cond.temperature.setpoint) if cond.temperature.HasField("setpoint") else None
    atm_type = cond.pressure.atmosphere.type
    atm = None
    if atm_type:
        atm = {"NITROGEN": "N2", "ARGON": "Ar", "AIR": "air"}.get(
            type(cond.pressure.atmosphere).AtmosphereType.Name(atm_type), cond.pressure.atmosphere.details or None
        )
    hold = None
    if rxn.outcomes and rxn.outcomes[0].HasField("reaction_time"):
        hold = _unit_value(rxn.outcomes[0].reaction_time, _TIME)
    final: dict[str, Any] = {}
    if main_t is not None:
        final["temperature"] = {"value": main_t, "unit": "°C"}
    if hold is not None and hold > 0:
        final["hold"] = {"value": hold, "unit": "min"}
    if cond.pressure.control.type == cond.pressure.control.SEALED:
        final["sealed"] = True
    if atm:
        if steps:
            steps[0]["atmosphere"] = atm
        else:
            final["atmosphere"] = atm
    return final


def _steps_and_notes(rxn, meta: dict, lines: list[dict], steps: list[dict], where: str, notes: list[str]) -> tuple[list, str]:
    """The Trapbook step list when the export wrote one, else the steps rebuilt from the ORD fields;
    and the run notes (the ORD step text joins them when the steps had to be rebuilt)."""
    final = _final_step(rxn, steps)
    if final:
        steps.append(final)
    cond = rxn.conditions
    kept_steps = _trapbook_steps(meta, lines, where, notes)
    if kept_steps is not None:
        steps = kept_steps
    elif cond.details:
        notes.append(f"{where}: step-by-step conditions are kept only as text in the run notes")
    notes_text = []
    if rxn.notes.procedure_details:
        notes_text.append(rxn.notes.procedure_details)
    if cond.details and kept_steps is None:
        notes_text.append("ORD conditions: " + cond.details)
    return steps, "\n".join(notes_text)


def _outcome(rxn, where: str, lines: list[dict], taken: set[str], workup: dict, notes: list[str]) -> dict | None:
    """The run's outcome: products (their lines join `lines`), recovered precursor, observations, work-up."""
    if len(rxn.outcomes) > 1:
        notes.append(f"{where}: only the first of {len(rxn.outcomes)} outcomes kept")
    product_lines, results, recovered = read_products(rxn, where, notes)
    products = []
    for line, res in zip(product_lines, results):
        _unique_name(line, taken)
        lines.append(line)
        if res:
            products.append({"product": line["name"], **res})
    outcome: dict[str, Any] = {"products": products} if products or recovered is not None else {}
    if recovered is not None:
        outcome["recovered_precursor"] = recovered
    obs = [o.comment for o in rxn.observations if o.comment]
    if obs:
        outcome["observations"] = "\n".join(obs)
    outcome.update(workup)
    if outcome:
        outcome.setdefault("products", [])
    return outcome or None


def reaction_to_run(rxn, where: str) -> tuple[dict, list[str]]:
    """A run file dict from an ORD Reaction and notes on what did not map."""
    notes: list[str] = []
    data, meta = _run_fields(rxn, where, notes)
    taken: set[str] = set()
    lines, steps = _input_lines(rxn, where, taken, notes)
    workup_lines, workup = _workups(rxn, where, taken, notes)
    lines += workup_lines
    steps, notes_text = _steps_and_notes(rxn, meta, lines, steps, where, notes)
    if notes_text:
        data["notes"] = notes_text
    outcome = _outcome(rxn, where, lines, taken, workup, notes)
    if outcome is not None:
        data["outcome"] = outcome
    data["lines"] = _in_order(lines, meta)
    data["steps"] = steps
    if not data.get("limiting"):
        lim = [ln["name"] for ln in lines if ln["role"] == "precursor" and "equiv" not in ln]
        if not lim:
            notes.append(f"{where}: no limiting reactant marked; amounts are kept as given")
    return data, notes


def runs_from_dataset(ds, source: str) -> tuple[list[Run], list[str]]:
    """Runs from every reaction of a dataset, or an ExchangeError naming the first bad one."""
    runs, notes = [], []
    for i, rxn in enumerate(ds.reactions, 1):
        where = f"reaction {i}" + (f" ({rxn.reaction_id})" if rxn.reaction_id else "")
        try:
            data, rnotes = reaction_to_run(rxn, where)
        except TrapbookError:
            raise
        except (ValueError, TypeError, KeyError, IndexError, AttributeError, RecursionError) as exc:
            raise ExchangeError(f"{source} {where} cannot be read ({exc})", "nothing was imported") from None
        if not data["lines"]:
            raise ExchangeError(f"{source} {where}: has no input components, so no run lines", "nothing was imported")
        try:
            runs.append(load_run(data))
        except RecordError as exc:
            raise ExchangeError(f"{source} {where}: {exc.message}", "fix that reaction; nothing was imported") from None
        notes += rnotes
    return runs, notes


def read_path(path: Path) -> tuple[list[Run], list[str]]:
    try:
        size = path.stat().st_size
        if size > MAX_IMPORT_BYTES:
            raise ExchangeError(f"{path} is larger than {MAX_IMPORT_BYTES // 2**20} MB", "split the dataset")
        raw = path.read_bytes()
    except OSError as exc:
        raise ExchangeError(f"cannot read {path}: {exc.strerror}", "check the path") from None
    ds = parse_bytes(raw, path.name)
    return runs_from_dataset(ds, str(path.name))


def import_path(nb, path, author=None) -> dict:
    """Registry entry: import every reaction of an ORD file as runs (all or nothing)."""
    path = Path(path)
    runs, notes = read_path(path)
    results = nb.import_runs(runs, author=author, reason=f"imported from ORD file {quoted_in_reason(path.name)}")
    notes = [
        f"{r.id} was already taken; stored as {res.run_id}" for r, res in zip(runs, results) if r.id and r.id != res.run_id
    ] + notes
    return {"format": "ord", "imported": [r.run_id for r in results], "screens": [], "skipped": [], "notes": notes}
