"""Open Reaction Database (ORD) export and import, through the ``ord-schema`` package.

A run becomes one ``Reaction``; a screen (or any set of runs) one ``Dataset``. The ORD
has a single temperature and time per reaction while a trapping run is a sequence of
steps, so the main block temperature (the hottest, or the only one) and the total hold
time go into the structured fields and every step is also written out in the
conditions' details, with ``addition_order`` on the inputs telling what went in when.

What Trapbook knows and ORD has no field for (the role word, the given equiv, stock
molarity, density, purity, water content) travels as compound *features*, so that a
Trapbook-to-Trapbook trip through ORD keeps the amounts as written. A reaction made by
another tool is read from the ORD fields alone; whatever cannot be placed in a run is
listed in the import report's notes, never silently dropped.

Every exported message is checked with ``ord_schema.validations.validate_message``; an
error stops the export (nothing is written), warnings are returned in the report.
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import json
import math
import uuid
from pathlib import Path
from typing import Any

from ..phrases import step_phrases
from ..errors import ExchangeError, RecordError, TrapbookError
from ..records import Run, load_run
from ..units import to_canonical

#: Trapbook role -> ORD ReactionRole name. The trap is incorporated into the product, so
#: it is a reactant beside the precursor; the feature "trapbook_role" tells them apart.
ROLE_TO_ORD = {
    "precursor": "REACTANT",
    "trap": "REACTANT",
    "fluoride source": "REAGENT",
    "additive": "REAGENT",
    "solvent": "SOLVENT",
    "internal standard": "INTERNAL_STANDARD",
}

#: Namespace for the deterministic ORD ids made from Trapbook ids (a fixed UUID of our own).
_ID_NAMESPACE = uuid.UUID("6f1c2a52-8f0e-4c55-9d57-3a2b3f6e1d10")
_DEFAULT_EMAIL = "unknown@example.invalid"
_RUN_ID_DETAILS = "trapbook run id"
_TITLE_DETAILS = "trapbook title"
_CAUTION_TAIL = "These notes do not replace the SDS, local rules or the lab's safety officer."


def _pb():
    try:
        from ord_schema.proto import dataset_pb2, reaction_pb2
    except ImportError as exc:  # pragma: no cover - ord-schema is a dependency
        raise ExchangeError(f"the ord-schema package is not available ({exc})", "pip install ord-schema") from None
    return reaction_pb2, dataset_pb2


# --- export -----------------------------------------------------------------------------------


def ord_reaction_id(run_id: str) -> str:
    return "ord-" + uuid.uuid5(_ID_NAMESPACE, f"run:{run_id}").hex


def ord_dataset_id(key: str) -> str:
    return "ord_dataset-" + uuid.uuid5(_ID_NAMESPACE, f"dataset:{key}").hex


def _data(value: Any):
    r, _ = _pb()
    d = r.Data()
    if isinstance(value, bool):
        d.string_value = "true" if value else "false"
    elif isinstance(value, (int, float)):
        d.float_value = float(value)
    else:
        d.string_value = str(value)
    return d


def _set_amount(comp, line, row) -> str | None:
    """Fill comp.amount from the line's given amount (computed mmol for equiv lines)."""
    given = line.given
    if given == "amount":
        comp.amount.moles.value = to_canonical(line.amount, "amount")
        comp.amount.moles.units = comp.amount.moles.MILLIMOLE
    elif given == "mass":
        comp.amount.mass.value = to_canonical(line.mass, "mass")
        comp.amount.mass.units = comp.amount.mass.MILLIGRAM
    elif given == "volume":
        comp.amount.volume.value = to_canonical(line.volume, "volume")
        comp.amount.volume.units = comp.amount.volume.MICROLITER
    elif given == "equiv":
        if row is not None and row.mmol is not None and math.isfinite(row.mmol):
            comp.amount.moles.value = row.mmol
            comp.amount.moles.units = comp.amount.moles.MILLIMOLE
        else:
            comp.amount.unmeasured.type = comp.amount.unmeasured.CUSTOM
            comp.amount.unmeasured.details = f"{to_canonical(line.equiv, 'equiv'):g} equiv of an unknown limiting amount"
            return f"line '{line.name}': {to_canonical(line.equiv, 'equiv'):g} equiv could not be turned into mmol"
    return None


def _compound(line, row, limiting_name: str | None):
    r, _ = _pb()
    comp = r.Compound()
    ident = comp.identifiers.add()
    ident.type = ident.NAME
    ident.value = line.name
    if line.smiles:
        ident = comp.identifiers.add()
        ident.type = ident.SMILES
        ident.value = line.smiles
    comp.reaction_role = r.ReactionRole.ReactionRoleType.Value(ROLE_TO_ORD[line.role])
    if limiting_name is not None and line.name.casefold() == limiting_name.casefold():
        comp.is_limiting = True
    note = _set_amount(comp, line, row)
    comp.features["trapbook_role"].CopyFrom(_data(line.role))
    if line.equiv is not None:
        comp.features["equiv"].CopyFrom(_data(to_canonical(line.equiv, "equiv")))
    for field, kind, key in (("molarity", "molarity", "molarity_M"), ("density", "density", "density_g_mL"),
                             ("purity", "fraction", "purity"), ("water", "fraction", "water_fraction"),
                             ("molar_mass", "molar_mass", "molar_mass_g_mol")):
        q = getattr(line, field)
        if q is not None:
            comp.features[key].CopyFrom(_data(to_canonical(q, kind)))
    if line.limiting:
        comp.features["marked_limiting"].CopyFrom(_data(True))
    if line.note:
        comp.features["note"].CopyFrom(_data(line.note))
    if line.lot:
        comp.source.lot = line.lot
    return comp, note


def _temperature_msg(msg, celsius: float) -> None:
    msg.value = celsius
    msg.units = msg.CELSIUS


def _step_words(i: int, step) -> str:
    parts = step_phrases(step)
    return f"step {i}: " + ("; ".join(parts) if parts else "(no detail)")


_ATMOSPHERES = {"n2": "NITROGEN", "nitrogen": "NITROGEN", "ar": "ARGON", "argon": "ARGON", "air": "AIR"}


def _safety_notes(run: Run) -> list[str]:
    """Cautions the bench checks attach to this run, once each, with the usual closing line."""
    cautions: list[str] = []
    try:
        from .. import checks

        for f in checks.run_checks(run):
            if f.caution and f.caution not in cautions:
                cautions.append(f.caution)
    except Exception:  # checks are advisory; an export never fails because of them
        pass
    if any(ln.role == "fluoride source" for ln in run.lines):
        text = ("Fluoride sources give hydrogen fluoride with acid: wear suitable gloves and keep calcium gluconate "
                "gel at hand.")
        if not any("fluoride" in c.lower() for c in cautions):
            cautions.append(text)
    if any(s.sealed for s in run.steps) and not any("pressure" in c.lower() for c in cautions):
        cautions.append("A sealed vessel heated above the solvent's boiling point builds pressure: use a rated vessel behind a shield.")
    if cautions and not any("SDS" in c for c in cautions):
        cautions.append(_CAUTION_TAIL)
    return cautions


def _add_inputs(rxn, run: Run, table, limiting_name: str | None, notes: list[str]) -> None:
    """Inputs in addition order (one per step that adds something; lines never added get their own)."""
    added: set[str] = set()
    order = 0
    for i, step in enumerate(run.steps, 1):
        if not step.add:
            continue
        order += 1
        key = f"step {i}"
        inp = rxn.inputs[key]
        inp.addition_order = order
        if step.over is not None:
            inp.addition_duration.value = to_canonical(step.over, "duration")
            inp.addition_duration.units = inp.addition_duration.MINUTE
        if step.temperature is not None:
            _temperature_msg(inp.addition_temperature, to_canonical(step.temperature, "temperature"))
        for name in step.add:
            line = run.line(name)
            if line is None or line.role in ("product", "internal standard"):
                notes.append(f"step {i} adds '{name}', which is not an input line; left out of the ORD inputs")
                continue
            comp, note = _compound(line, table.line(line.name) if table else None, limiting_name)
            if note:
                notes.append(note)
            inp.components.append(comp)
            added.add(line.name.casefold())
        if not inp.components:
            del rxn.inputs[key]
    for line in run.lines:
        if line.role in ("product", "internal standard") or line.name.casefold() in added:
            continue
        comp, note = _compound(line, table.line(line.name) if table else None, limiting_name)
        if note:
            notes.append(note)
        rxn.inputs[line.name].components.append(comp)

    # Internal standard: added to the crude for the NMR, so a workup addition.
    for line in run.lines_by_role("internal standard"):
        wk = rxn.workups.add()
        wk.type = wk.ADDITION
        comp, note = _compound(line, table.line(line.name) if table else None, None)
        if note:
            notes.append(note)
        wk.input.components.append(comp)


def _add_conditions(rxn, run: Run) -> None:
    """Main temperature, sealed vessel, atmosphere; every step in words, since ORD has one setpoint."""
    temps = [to_canonical(s.temperature, "temperature") for s in run.steps if s.temperature is not None]
    cond = rxn.conditions
    if temps:
        main = max(temps, key=lambda t: abs(t - 23.0))  # the block or bath temperature, not room temperature
        _temperature_msg(cond.temperature.setpoint, main)
        if -5.0 <= main <= 30.0 and main == max(temps) and min(temps) >= -5.0:
            cond.temperature.control.type = cond.temperature.control.AMBIENT if 15 <= main <= 30 else cond.temperature.control.ICE_BATH
    if any(s.sealed for s in run.steps):
        cond.pressure.control.type = cond.pressure.control.SEALED
    atm = next((s.atmosphere for s in run.steps if s.atmosphere), None)
    if atm:
        kind = _ATMOSPHERES.get(atm.strip().lower())
        if kind:
            cond.pressure.atmosphere.type = cond.pressure.atmosphere.AtmosphereType.Value(kind)
        else:
            cond.pressure.atmosphere.type = cond.pressure.atmosphere.CUSTOM
            cond.pressure.atmosphere.details = atm
    if run.steps:
        cond.conditions_are_dynamic = True
        cond.details = "; ".join(_step_words(i, s) for i, s in enumerate(run.steps, 1))


def _add_outcome(rxn, run: Run, table, notes: list[str]) -> None:
    """Products with isolated mass, isolated and NMR yields (with their integrals) and selectivities."""
    from .. import amounts

    r, _ = _pb()
    out = rxn.outcomes.add()
    hold = sum(to_canonical(s.hold, "duration") for s in run.steps if s.hold is not None)
    if hold > 0:
        out.reaction_time.value = hold
        out.reaction_time.units = out.reaction_time.MINUTE
    yields = {}
    if run.outcome is not None:
        try:
            yields = {y.product.casefold(): y for y in amounts.product_yields(run, table)} if table else {}
        except TrapbookError as exc:
            notes.append(f"yields could not be computed ({exc.message}); written without yields")
    if run.outcome is not None and run.outcome.observations:
        obs = rxn.observations.add()
        obs.comment = run.outcome.observations
    results = {p.product.casefold(): p for p in (run.outcome.products if run.outcome else [])}
    first = True
    for line in run.lines_by_role("product"):
        prod = out.products.add()
        ident = prod.identifiers.add()
        ident.type = ident.NAME
        ident.value = line.name
        if line.smiles:
            ident = prod.identifiers.add()
            ident.type = ident.SMILES
            ident.value = line.smiles
        prod.reaction_role = r.ReactionRole.PRODUCT
        prod.is_desired_product = first
        first = False
        if line.molar_mass is not None:
            prod.features["molar_mass_g_mol"].CopyFrom(_data(to_canonical(line.molar_mass, "molar_mass")))
        if line.note:
            prod.features["note"].CopyFrom(_data(line.note))
        res = results.get(line.name.casefold())
        if res is None:
            continue
        y = yields.get(line.name.casefold())
        if res.isolated_mass is not None:
            out.analyses["isolated"].type = r.Analysis.WEIGHT
            m = prod.measurements.add()
            m.type = m.AMOUNT
            m.analysis_key = "isolated"
            m.amount.mass.value = to_canonical(res.isolated_mass, "mass")
            m.amount.mass.units = m.amount.mass.MILLIGRAM
            if y is not None and y.isolated_yield_pct is not None:
                m = prod.measurements.add()
                m.type = m.YIELD
                m.analysis_key = "isolated"
                m.percentage.value = y.isolated_yield_pct
        if res.qnmr is not None:
            key = f"qnmr {line.name}"
            an = out.analyses[key]
            an.type = r.Analysis.NMR_1H
            q = res.qnmr
            an.details = "internal standard " + (q.standard or "(the run's internal standard)")
            for k in ("standard_integral", "standard_protons", "integral", "protons"):
                an.data[k].CopyFrom(_data(getattr(q, k)))
            if q.standard:
                an.data["standard"].CopyFrom(_data(q.standard))
            if q.standard_amount is not None:
                an.data["standard_amount_mmol"].CopyFrom(_data(to_canonical(q.standard_amount, "amount")))
            if y is not None and y.nmr_yield_pct is not None:
                m = prod.measurements.add()
                m.type = m.YIELD
                m.analysis_key = key
                m.uses_internal_standard = True
                m.percentage.value = y.nmr_yield_pct
            elif not run.lines_by_role("internal standard"):
                notes.append(f"product '{line.name}': qNMR integrals kept, but without an internal standard line no NMR yield")
        for kind, text in (("DR", res.dr), ("ER", res.er)):
            if text:  # written as recorded (major:minor); the record has checked it parses
                m = prod.measurements.add()
                m.type = m.SELECTIVITY
                m.selectivity.type = m.selectivity.SelectivityType.Value(kind)
                m.string_value = text
                m.details = "major:minor as recorded"
                key = "selectivity"
                out.analyses[key].type = r.Analysis.CUSTOM
                out.analyses[key].details = "as recorded in the notebook"
                m.analysis_key = key
        ee = y.ee_pct if (y is not None and y.ee_pct is not None) else res.ee
        if ee is not None:
            m = prod.measurements.add()
            m.type = m.SELECTIVITY
            m.selectivity.type = m.selectivity.EE
            m.percentage.value = ee
            m.details = "from er" if res.er else "as recorded"
            out.analyses["selectivity"].type = r.Analysis.CUSTOM
            out.analyses["selectivity"].details = "as recorded in the notebook"
            m.analysis_key = "selectivity"
            if not 0 <= ee <= 100:
                notes.append(f"product '{line.name}': ee {ee:g} % lies outside 0-100 %")
        if res.note:
            prod.features["note"].CopyFrom(_data(res.note))
    if run.outcome is not None and run.outcome.recovered_precursor is not None:
        lim = next(iter(run.lines_by_role("precursor")), None)
        prod = out.products.add()
        ident = prod.identifiers.add()
        ident.type = ident.NAME
        ident.value = lim.name if lim else "recovered precursor"
        if lim is not None and lim.smiles:
            ident = prod.identifiers.add()
            ident.type = ident.SMILES
            ident.value = lim.smiles
        prod.reaction_role = r.ReactionRole.REACTANT
        prod.features["recovered_precursor"].CopyFrom(_data(True))
        out.analyses["isolated"].type = r.Analysis.WEIGHT
        m = prod.measurements.add()
        m.type = m.AMOUNT
        m.analysis_key = "isolated"
        m.amount.mass.value = to_canonical(run.outcome.recovered_precursor, "mass")
        m.amount.mass.units = m.amount.mass.MILLIGRAM


def _add_provenance(rxn, run: Run, email: str | None, record_time: str | None) -> None:
    """Who and when (ORD asks for an e-mail); Trapbook fields ORD has no place for go in reaction_metadata."""
    prov = rxn.provenance
    mail = email or _DEFAULT_EMAIL
    if run.chemist:
        prov.experimenter.name = run.chemist
        prov.experimenter.email = mail
    if run.date:
        prov.experiment_start.value = run.date.isoformat()
    created = record_time or _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds")
    if run.date and created[:10] < run.date.isoformat():
        created = run.date.isoformat()  # a planned run dated ahead: the record cannot predate the experiment
    prov.record_created.time.value = created
    prov.record_created.person.name = run.chemist or "Trapbook user"
    prov.record_created.person.email = mail
    meta = {k: v for k, v in {
        "page": run.page, "screen": run.screen, "status": run.status,
        "intermediate": run.intermediate, "intermediate_name": run.intermediate_name,
        "limiting": run.limiting,
        "tags": json.dumps(run.tags, ensure_ascii=False) if run.tags else None,
        "factors": json.dumps(run.factors, ensure_ascii=False, sort_keys=True) if run.factors else None,
        "attachments": json.dumps([a.model_dump(mode="json", exclude_none=True) for a in run.attachments]) if run.attachments else None,
        # The ORD has one temperature and time per reaction; the step sequence travels here.
        "trapbook_steps": json.dumps([s.model_dump(mode="json", exclude_none=True) for s in run.steps], ensure_ascii=False) if run.steps else None,
        "trapbook_line_order": json.dumps([ln.name for ln in run.lines], ensure_ascii=False),
    }.items() if v}
    for k, v in meta.items():
        prov.reaction_metadata[k].CopyFrom(_data(v))


def run_to_reaction(run: Run, email: str | None = None, record_time: str | None = None):
    """One run as an ORD Reaction, plus notes on what could not be expressed."""
    from .. import amounts

    r, _ = _pb()
    notes: list[str] = []
    rxn = r.Reaction()
    rxn.reaction_id = ord_reaction_id(run.id or run.title)
    if run.id:
        ident = rxn.identifiers.add()
        ident.type = ident.CUSTOM
        ident.details = _RUN_ID_DETAILS
        ident.value = run.id
    ident = rxn.identifiers.add()
    ident.type = ident.CUSTOM
    ident.details = _TITLE_DETAILS
    ident.value = run.title

    try:
        table = amounts.compute(run)
        limiting_name = table.limiting
    except TrapbookError as exc:
        table, limiting_name = None, run.limiting
        notes.append(f"amounts could not be computed ({exc.message}); equiv lines are written without mmol")

    _add_inputs(rxn, run, table, limiting_name, notes)
    _add_conditions(rxn, run)

    # Notes, with the cautions that apply.
    safety = _safety_notes(run)
    if safety:
        rxn.notes.safety_notes = " ".join(safety)
    if run.notes:
        rxn.notes.procedure_details = run.notes

    _add_outcome(rxn, run, table, notes)
    _add_provenance(rxn, run, email, record_time)
    return rxn, notes


def validate(message) -> tuple[list[str], list[str]]:
    """(errors, warnings) from the ORD's own validator."""
    from ord_schema import validations

    out = validations.validate_message(message, raise_on_error=False)
    return list(out.errors), list(out.warnings)


def build_dataset(runs: list[Run], screen=None, email: str | None = None, name: str | None = None):
    """A Dataset of the runs, validated; (dataset, report)."""
    _, d = _pb()
    if not runs:
        raise ExchangeError("there are no runs to export", "add runs first, or pick another screen")
    ds = d.Dataset()
    if screen is not None:
        ds.name = screen.name
        ds.description = screen.description or f"Trapbook screen {screen.id}: {screen.name}"
        ds.dataset_id = ord_dataset_id(f"screen:{screen.id}")
    else:
        ds.name = name or "Trapbook runs"
        ds.description = f"{len(runs)} run(s) exported from a Trapbook notebook"
        ds.dataset_id = ord_dataset_id("runs:" + ",".join(sorted(r.id or r.title for r in runs)))
    notes: list[str] = []
    seen: set[str] = set()
    for i, run in enumerate(runs, 1):
        rxn, rnotes = run_to_reaction(run, email=email)
        if rxn.reaction_id in seen:  # unsaved runs with the same title
            rxn.reaction_id = ord_reaction_id(f"{run.id or run.title}#{i}")
        seen.add(rxn.reaction_id)
        notes += [f"{run.id or run.title}: {n}" for n in rnotes]
        ds.reactions.append(rxn)
    errors, warnings = validate(ds)
    if errors:
        raise ExchangeError("the ORD export does not pass the ORD validator:\n  - " + "\n  - ".join(errors[:20]),
                            "nothing was written; report this with the run ids")
    if not email:
        notes.append(f"no e-mail is set for the ORD record; '{_DEFAULT_EMAIL}' was written "
                     "(set one with the notebook setting 'email' or TRAPBOOK_EMAIL)")
    return ds, {"reactions": len(runs), "warnings": warnings, "notes": notes}


def _email(nb) -> str | None:
    import os

    mail = os.environ.get("TRAPBOOK_EMAIL")
    if not mail and nb is not None:
        try:
            mail = nb.get_setting("email")
        except TrapbookError:
            mail = None
    return mail or None


def serialise(message, path: Path | None) -> bytes | str:
    """Binary for .pb, JSON for .json, protobuf text otherwise."""
    from google.protobuf import json_format, text_format

    name = path.name.lower() if path else ""
    if name.endswith(".pb"):
        return message.SerializeToString(deterministic=True)
    if name.endswith(".json"):
        return json_format.MessageToJson(message, sort_keys=True) + "\n"
    return text_format.MessageToString(message)


def export(nb, runs, screen=None, output=None):
    """Registry entry: a validated Dataset as text (stdout) or to `output`."""
    sc = nb.get_screen(screen) if screen else None
    ds, report = build_dataset(list(runs), sc, email=_email(nb))
    path = Path(output) if output else None
    payload = serialise(ds, path)
    if path is None:
        return payload
    _write_atomic(path, payload)
    return str(path)


def _write_atomic(path: Path, payload: bytes | str) -> None:
    tmp = path.with_name(path.name + ".part")
    try:
        if isinstance(payload, str):
            tmp.write_text(payload, encoding="utf-8")
        else:
            tmp.write_bytes(payload)
        tmp.replace(path)
    except OSError as exc:
        raise ExchangeError(f"cannot write {path}: {exc.strerror}", "choose a writable path") from None


# --- import -----------------------------------------------------------------------------------

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


def _data_value(d):
    kind = d.WhichOneof("kind")
    if kind == "float_value":
        return d.float_value
    if kind == "integer_value":
        return d.integer_value
    if kind == "string_value":
        return d.string_value
    return None


def _num(v) -> float | None:
    if isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v):
        return _f32(float(v))
    try:
        f = float(v)
    except (TypeError, ValueError):
        return None
    return f if math.isfinite(f) else None


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


_MOLES = {"MOLE": 1e3, "MILLIMOLE": 1.0, "MICROMOLE": 1e-3, "NANOMOLE": 1e-6}
_MASS = {"KILOGRAM": 1e6, "GRAM": 1e3, "MILLIGRAM": 1.0, "MICROGRAM": 1e-3}
_VOLUME = {"LITER": 1e6, "MILLILITER": 1e3, "MICROLITER": 1.0, "NANOLITER": 1e-3}
_TIME = {"DAY": 1440.0, "HOUR": 60.0, "MINUTE": 1.0, "SECOND": 1 / 60}


def _f32(v: float) -> float:
    """ORD stores single-precision floats: 0.1 comes back as 0.10000000149; keep 7 digits."""
    return float(f"{v:.7g}")


def _unit_value(msg, table: dict) -> float | None:
    unit = type(msg).DESCRIPTOR.enum_types[0].values_by_number.get(msg.units)
    factor = table.get(unit.name) if unit is not None else None
    if factor is None or not math.isfinite(msg.value):
        return None
    return _f32(msg.value) * factor


def _trapbook_steps(meta: dict, lines: list[dict], where: str, notes: list[str]) -> list[dict] | None:
    """The step sequence written by a Trapbook export, if it is there and fits the lines."""
    raw = meta.get("trapbook_steps")
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
    raw = meta.get("trapbook_line_order")
    try:
        order = json.loads(raw) if isinstance(raw, str) else None
    except (ValueError, RecursionError):
        order = None
    if not isinstance(order, list):
        return lines
    rank = {str(n).casefold(): i for i, n in enumerate(order)}
    return sorted(lines, key=lambda ln: rank.get(ln["name"].casefold(), len(rank)))


def _celsius(msg) -> float | None:
    if not msg.units or not math.isfinite(msg.value):
        return None
    unit = type(msg).TemperatureUnit.Name(msg.units)
    v = _f32(msg.value)
    if unit == "CELSIUS":
        return v
    if unit == "KELVIN":
        return v - 273.15
    if unit == "FAHRENHEIT":
        return (v - 32.0) * 5.0 / 9.0
    return None


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


_ROLE_FROM_ORD = {"REACTANT": "trap", "REAGENT": "additive", "SOLVENT": "solvent", "CATALYST": "additive",
                  "INTERNAL_STANDARD": "internal standard", "WORKUP": "additive"}


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
    known = {"trapbook_role", "equiv", "molarity_M", "density_g_mL", "molar_mass_g_mol", "purity", "water_fraction",
             "marked_limiting", "note"}
    extra = [k for k in features if k not in known]
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
    for key in ("page", "screen", "status", "intermediate", "intermediate_name", "limiting"):
        if isinstance(meta.get(key), str):
            data[key] = meta[key]
    for key in ("tags", "factors", "attachments"):
        if isinstance(meta.get(key), str):
            try:
                data[key] = json.loads(meta[key])
            except (ValueError, RecursionError):
                notes.append(f"{where}: metadata '{key}' is not readable JSON; not kept")
    extra = [k for k in meta if k not in ("page", "screen", "status", "intermediate", "intermediate_name", "limiting",
                                          "tags", "factors", "attachments", "trapbook_steps", "trapbook_line_order")]
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


def digest(message) -> str:
    return hashlib.sha256(message.SerializeToString(deterministic=True)).hexdigest()


__all__ = ["run_to_reaction", "build_dataset", "validate", "export", "import_path", "parse_bytes",
           "runs_from_dataset", "reaction_to_run", "read_path", "ROLE_TO_ORD"]
