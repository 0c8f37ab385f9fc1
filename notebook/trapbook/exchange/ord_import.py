"""ORD import: runs from an ORD ``Dataset`` or ``Reaction``, with notes on what did not map.

Split from the exporter because reading has to take reactions written by any tool, with
units, roles and measurements Trapbook never writes, and must say what it leaves out
rather than drop it; the vocabulary it shares with the export is in ``ord_common``.

A reaction written by a Trapbook export comes back as written (roles, equiv, stock
molarity, density, purity and water content from the compound features, steps and line
order from ``provenance.reaction_metadata``). A reaction made by another tool is read
from the ORD fields alone; whatever cannot be placed in a run is listed in the import
report's notes, never silently dropped. Import is all or nothing.
"""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

from ..errors import ExchangeError, RecordError, TrapbookError
from ..records import Run, load_run
from .ord_common import (COMPONENT_FEATURES, JSON_METADATA, LINE_ORDER_METADATA, METADATA_KEYS, PLAIN_METADATA,
                         ROLE_TO_ORD, STEPS_METADATA, _MASS, _MOLES, _ROLE_FROM_ORD, _RUN_ID_DETAILS, _TIME,
                         _TITLE_DETAILS, _VOLUME, _celsius, _data_value, _f32, _num, _pb, _unit_value)

MAX_IMPORT_BYTES = 200 * 1024 * 1024


def parse_bytes(raw: bytes, name: str):
    """A Dataset (a lone Reaction is wrapped in one) from the bytes of a .pb, .pbtxt or .json file."""
    from google.protobuf import json_format, message as pbmessage, text_format

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
            except (pbmessage.DecodeError, json_format.ParseError, text_format.ParseError, UnicodeDecodeError,
                    ValueError, TypeError, KeyError, IndexError, RecursionError, OverflowError, AttributeError) as exc:
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
    raise ExchangeError(f"{name} is not an ORD Dataset or Reaction ({'; '.join(errors)[:400]})",
                        "give an ORD file written as binary (.pb), text (.pbtxt) or JSON (.json); nothing was imported")


def _identifiers(msg) -> tuple[str | None, str | None, list[str]]:
    name = smiles = None
    other = []
    for ident in msg.identifiers:
        tname = type(ident).CompoundIdentifierType.Name(ident.type)
        if tname == "NAME" and name is None:
            name = ident.value.strip() or None
        elif tname in ("SMILES", "CXSMILES") and smiles is None:
            smiles = ident.value.strip() or None
        else:
            other.append(f"{tname} {ident.value[:40]}")
    return name, smiles, other


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
            notes.append(f"{where}: the Trapbook step list names lines the ORD inputs do not have; steps rebuilt from the ORD fields")
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
    kind = amount.WhichOneof("kind")
    if kind == "moles":
        v = _unit_value(amount.moles, _MOLES)
        if v is not None:
            return {"amount": {"value": v, "unit": "mmol"}}
    elif kind == "mass":
        v = _unit_value(amount.mass, _MASS)
        if v is not None:
            return {"mass": {"value": v, "unit": "mg"}}
    elif kind == "volume":
        v = _unit_value(amount.volume, _VOLUME)
        if v is not None:
            return {"volume": {"value": v, "unit": "µL"}}
    elif kind == "unmeasured":
        notes.append(f"{where}: unmeasured amount ({amount.unmeasured.details or 'no detail'}) has no Trapbook form")
        return {}
    notes.append(f"{where}: amount missing or in a unit Trapbook does not read")
    return {}


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


def _line_from_component(comp, where: str, notes: list[str]) -> dict:
    name, smiles, other = _identifiers(comp)
    if other:
        notes.append(f"{where}: identifiers not kept: {', '.join(other)}")
    features = {k: _data_value(v) for k, v in comp.features.items()}
    role = _role_of(comp, smiles)
    line: dict[str, Any] = {"role": role, "name": name or smiles or where}
    if smiles:
        line["smiles"] = smiles
    equiv = _num(features.get("equiv"))
    if equiv is not None and not comp.is_limiting:
        line["equiv"] = equiv
    else:
        line.update(_amount_fields(comp.amount, where, notes))
    for key, field, unit in (("molarity_M", "molarity", "M"), ("density_g_mL", "density", "g/mL"),
                             ("molar_mass_g_mol", "molar_mass", "g/mol")):
        v = _num(features.get(key))
        if v is not None:
            line[field] = {"value": v, "unit": unit}
    for key, field in (("purity", "purity"), ("water_fraction", "water")):
        v = _num(features.get(key))
        if v is not None:
            line[field] = {"value": v, "unit": ""}
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


def reaction_to_run(rxn, where: str) -> tuple[dict, list[str]]:
    """A run file dict from an ORD Reaction and notes on what did not map."""
    notes: list[str] = []
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

    lines: list[dict] = []
    taken: set[str] = set()
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
            step: dict[str, Any] = {"add": step_names}
            if inp.HasField("addition_temperature"):
                c = _celsius(inp.addition_temperature)
                if c is not None:
                    step["temperature"] = {"value": c, "unit": "°C"}
            if inp.HasField("addition_duration"):
                v = _unit_value(inp.addition_duration, _TIME)
                if v is not None:
                    step["over"] = {"value": v, "unit": "min"}
            steps.append(step)
    for k, wk in enumerate(rxn.workups):
        for j, comp in enumerate(wk.input.components):
            line = _line_from_component(comp, f"{where} workup {k + 1} component {j + 1}", notes)
            if line["role"] != "internal standard":
                notes.append(f"{where} workup {k + 1}: a workup material ('{line['name']}') kept as an additive line")
                line["role"] = "additive"
            _unique_name(line, taken)
            lines.append(line)
        if not wk.input.components:
            notes.append(f"{where}: workup {k + 1} ({type(wk).ReactionWorkupType.Name(wk.type)}) not kept")

    cond = rxn.conditions
    main_t = _celsius(cond.temperature.setpoint) if cond.temperature.HasField("setpoint") else None
    sealed = cond.pressure.control.type == cond.pressure.control.SEALED
    atm_type = cond.pressure.atmosphere.type
    atm = None
    if atm_type:
        atm = {"NITROGEN": "N2", "ARGON": "Ar", "AIR": "air"}.get(
            type(cond.pressure.atmosphere).AtmosphereType.Name(atm_type), cond.pressure.atmosphere.details or None)
    hold = None
    if rxn.outcomes and rxn.outcomes[0].HasField("reaction_time"):
        hold = _unit_value(rxn.outcomes[0].reaction_time, _TIME)
    final: dict[str, Any] = {}
    if main_t is not None:
        final["temperature"] = {"value": main_t, "unit": "°C"}
    if hold is not None and hold > 0:
        final["hold"] = {"value": hold, "unit": "min"}
    if sealed:
        final["sealed"] = True
    if atm:
        if steps:
            steps[0]["atmosphere"] = atm
        else:
            final["atmosphere"] = atm
    if final:
        steps.append(final)
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
    if notes_text:
        data["notes"] = "\n".join(notes_text)
    if len(rxn.outcomes) > 1:
        notes.append(f"{where}: only the first of {len(rxn.outcomes)} outcomes kept")

    products: list[dict] = []
    recovered = None
    if rxn.outcomes:
        outc = rxn.outcomes[0]
        for j, prod in enumerate(outc.products):
            pwhere = f"{where} product {j + 1}"
            name, smiles, other = _identifiers(prod)
            features = {k: _data_value(v) for k, v in prod.features.items()}
            masses = [m for m in prod.measurements if m.type == m.AMOUNT and m.amount.WhichOneof("kind") == "mass"]
            if features.get("recovered_precursor") == "true":
                if masses:
                    v = _unit_value(masses[0].amount.mass, _MASS)
                    if v is not None:
                        recovered = {"value": v, "unit": "mg"}
                continue
            line: dict[str, Any] = {"role": "product", "name": name or smiles or pwhere}
            if smiles:
                line["smiles"] = smiles
            v = _num(features.get("molar_mass_g_mol"))
            if v is not None:
                line["molar_mass"] = {"value": v, "unit": "g/mol"}
            _unique_name(line, taken)
            lines.append(line)
            res: dict[str, Any] = {"product": line["name"]}
            if masses:
                v = _unit_value(masses[0].amount.mass, _MASS)
                if v is not None:
                    res["isolated_mass"] = {"value": v, "unit": "mg"}
            for m in prod.measurements:
                mtype = type(m).ProductMeasurementType.Name(m.type)
                if mtype == "SELECTIVITY":
                    stype = type(m.selectivity).SelectivityType.Name(m.selectivity.type)
                    if stype in ("DR", "ER") and m.string_value:
                        res[stype.lower()] = m.string_value
                    elif stype in ("DR", "ER") and m.WhichOneof("value") == "float_value":
                        res[stype.lower()] = f"{_f32(m.float_value.value):g}:1"
                    elif stype == "EE" and m.WhichOneof("value") == "percentage":
                        if "er" not in res and (m.details != "from er"):
                            res["ee"] = _f32(m.percentage.value)
                    else:
                        notes.append(f"{pwhere}: selectivity {stype} not kept")
                elif mtype == "YIELD":
                    an = outc.analyses[m.analysis_key] if m.analysis_key in outc.analyses else None
                    d = {k: _data_value(x) for k, x in an.data.items()} if an is not None else {}
                    if all(_num(d.get(k)) is not None for k in ("standard_integral", "standard_protons", "integral", "protons")):
                        q: dict[str, Any] = {k: _num(d[k]) for k in ("standard_integral", "integral")}
                        q.update({k: int(_num(d[k])) for k in ("standard_protons", "protons")})
                        if isinstance(d.get("standard"), str):
                            q["standard"] = d["standard"]
                        if _num(d.get("standard_amount_mmol")) is not None:
                            q["standard_amount"] = {"value": _num(d["standard_amount_mmol"]), "unit": "mmol"}
                        res["qnmr"] = q
                    elif not masses or m.uses_internal_standard:
                        shown = f"{_f32(m.percentage.value):g} % " if m.WhichOneof("value") == "percentage" else ""
                        notes.append(f"{pwhere}: a {shown}yield without the data behind it "
                                     "(isolated mass or NMR integrals) is not kept; Trapbook recomputes yields")
                elif mtype != "AMOUNT":
                    notes.append(f"{pwhere}: {mtype} measurement not kept")
            if isinstance(features.get("note"), str):
                res["note"] = features["note"]
            if len(res) > 1:
                products.append(res)
        if outc.HasField("conversion"):
            notes.append(f"{where}: conversion {outc.conversion.value:g} % not kept")
    if products or recovered is not None:
        data["outcome"] = {"products": products}
        if recovered is not None:
            data["outcome"]["recovered_precursor"] = recovered
    obs = [o.comment for o in rxn.observations if o.comment]
    if obs:
        data.setdefault("outcome", {"products": []})["observations"] = "\n".join(obs)
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
    results = nb.import_runs(runs, author=author, reason=f"imported from ORD file {path.name}")
    notes = [f"{r.id} was already taken; stored as {res.run_id}" for r, res in zip(runs, results) if r.id and r.id != res.run_id] + notes
    return {"format": "ord", "imported": [r.run_id for r in results], "screens": [], "skipped": [], "notes": notes}
