"""ORD export: Trapbook runs and screens as validated ORD ``Reaction`` and ``Dataset`` messages.

Split from the importer because writing and reading ORD share only a vocabulary
(``ord_common``): this side turns one well-formed run into messages, the import side has
to cope with reactions any tool may have written.

A run becomes one ``Reaction``; a screen (or any set of runs) one ``Dataset``. The ORD
has a single temperature and time per reaction while a trapping run is a sequence of
steps, so the main block temperature (the hottest, or the only one) and the total hold
time go into the structured fields and every step is also written out in the
conditions' details, with ``addition_order`` on the inputs telling what went in when.
A line's ORD amount is what went into the flask: the weighed quantity when the line
records one (``Line.actual``), else the plan, each in the unit it was written in where the
ORD has that unit. What Trapbook knows and ORD has no field for (the role word, the plan
beside a weighed amount, the given equiv, stock molarity, density, purity, water content)
travels as compound *features*, and run fields as ``provenance.reaction_metadata``; the
vessel's volume goes in ``setup.vessel``. The outcome (products, analyses, work-up) is
written by ``ord_outcome``, beside the code that reads it back.

Every exported message is checked with ``ord_schema.validations.validate_message``; an
error stops the export (nothing is written), warnings are returned in the report.
"""

from __future__ import annotations

import datetime as _dt
import json
import math
import uuid
from pathlib import Path

from ..errors import ExchangeError, TrapbookError
from ..files import write_atomic
from ..phrases import step_phrases
from ..records import Run
from ..units import dump_quantity, to_canonical
from .ord_common import (
    _RUN_ID_DETAILS,
    _TITLE_DETAILS,
    AMOUNT_SLOTS,
    AS_WRITTEN_FEATURE,
    FINDINGS_METADATA,
    LINE_ORDER_METADATA,
    PLAIN_METADATA,
    PLANNED_FEATURES,
    QUANTITY_FEATURES,
    ROLE_TO_ORD,
    STEPS_METADATA,
    VESSEL_DETAILS,
    WEIGHED_FEATURE,
    _data,
    _f32,
    _pb,
    set_quantity,
)
from .ord_outcome import add_names, write_outcome

#: Namespace for the deterministic ORD ids made from Trapbook ids (a fixed UUID of our own).
_ID_NAMESPACE = uuid.UUID("6f1c2a52-8f0e-4c55-9d57-3a2b3f6e1d10")
_DEFAULT_EMAIL = "unknown@example.invalid"


def ord_reaction_id(run_id: str) -> str:
    return "ord-" + uuid.uuid5(_ID_NAMESPACE, f"run:{run_id}").hex


def ord_dataset_id(key: str) -> str:
    return "ord_dataset-" + uuid.uuid5(_ID_NAMESPACE, f"dataset:{key}").hex


def _set_amount(comp, line, row) -> str | None:
    """Fill comp.amount with what went into the flask: the weighed quantity when the line
    records one, else the plan (the computed mmol for an equiv line)."""
    from ..units import measured_kind

    if line.actual is not None:
        kind = measured_kind(line.actual)
        set_quantity(getattr(comp.amount, AMOUNT_SLOTS[kind][0]), line.actual, kind)
        return None
    given = line.given
    if given in AMOUNT_SLOTS:
        set_quantity(getattr(comp.amount, AMOUNT_SLOTS[given][0]), getattr(line, given), given)
    elif given == "equiv":
        if row is not None and row.mmol is not None and math.isfinite(row.mmol):
            comp.amount.moles.value = row.mmol
            comp.amount.moles.units = comp.amount.moles.MILLIMOLE
        else:
            comp.amount.unmeasured.type = comp.amount.unmeasured.CUSTOM
            comp.amount.unmeasured.details = f"{to_canonical(line.equiv, 'equiv'):g} equiv of an unknown limiting amount"
            return f"line '{line.name}': {to_canonical(line.equiv, 'equiv'):g} equiv could not be turned into mmol"
    return None


def _plan_features(comp, line) -> None:
    """The plan beside a weighed amount: the ORD amount is what was weighed, so the plan is Trapbook's own."""
    if line.equiv is not None:
        comp.features["equiv"].CopyFrom(_data(to_canonical(line.equiv, "equiv")))
    if line.actual is None:
        return
    comp.features[WEIGHED_FEATURE].CopyFrom(_data(True))
    if line.given in PLANNED_FEATURES:
        planned = dump_quantity(getattr(line, line.given))
        comp.features[PLANNED_FEATURES[line.given]].CopyFrom(_data(json.dumps(planned, ensure_ascii=False)))


def _quantity_features(comp, line) -> None:
    """Molarity, density, purity, water and molar mass as canonical numbers, and as written when that differs."""
    written = {}
    for field, kind, key, unit in QUANTITY_FEATURES:
        q = getattr(line, field)
        if q is None:
            continue
        value = to_canonical(q, kind)
        comp.features[key].CopyFrom(_data(value))
        if dump_quantity(q) != {"value": _f32(value), "unit": unit}:
            written[field] = dump_quantity(q)
    if written:
        comp.features[AS_WRITTEN_FEATURE].CopyFrom(_data(json.dumps(written, ensure_ascii=False, sort_keys=True)))


def _compound(line, row, limiting_name: str | None):
    r, _ = _pb()
    comp = r.Compound()
    add_names(comp, line.name, line.smiles)
    comp.reaction_role = r.ReactionRole.ReactionRoleType.Value(ROLE_TO_ORD[line.role])
    if limiting_name is not None and line.name.casefold() == limiting_name.casefold():
        comp.is_limiting = True
    note = _set_amount(comp, line, row)
    comp.features["trapbook_role"].CopyFrom(_data(line.role))
    _plan_features(comp, line)
    _quantity_features(comp, line)
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


def _safety_notes(run: Run, findings: list) -> str:
    """Cautions the bench findings attach to this run, each sentence once, with the usual closing line once."""
    from ..materials import caution_text, cautions_once

    cautions = [f.caution for f in findings if f.caution]
    if any(ln.role == "fluoride source" for ln in run.lines) and not any("fluoride" in c.lower() for c in cautions):
        cautions.append(caution_text(("fluoride",)))
    if any(s.sealed for s in run.steps) and not any("pressure" in c.lower() for c in cautions):
        cautions.append(caution_text(("sealed_pressure",)))
    return cautions_once(cautions)


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
            cond.temperature.control.type = (
                cond.temperature.control.AMBIENT if 15 <= main <= 30 else cond.temperature.control.ICE_BATH
            )
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


def _add_vessel(rxn, run: Run) -> None:
    """The vessel's inner volume (what the pressure and fill checks use); Trapbook records no vessel type."""
    if run.vessel is None:
        return
    vessel = rxn.setup.vessel
    vessel.type = vessel.CUSTOM
    vessel.details = VESSEL_DETAILS
    set_quantity(vessel.volume, run.vessel, "volume")


def _add_provenance(rxn, run: Run, email: str | None, record_time: str | None) -> None:
    """Who and when (ORD asks for an e-mail); Trapbook fields ORD has no place for go in reaction_metadata."""
    prov = rxn.provenance
    mail = email or _DEFAULT_EMAIL
    if run.chemist:
        prov.experimenter.name = run.chemist
        prov.experimenter.email = mail
    if run.date:
        prov.experiment_start.value = run.date.isoformat()
    created = record_time or _dt.datetime.now(_dt.UTC).isoformat(timespec="seconds")
    if run.date and created[:10] < run.date.isoformat():
        created = run.date.isoformat()  # a planned run dated ahead: the record cannot predate the experiment
    prov.record_created.time.value = created
    prov.record_created.person.name = run.chemist or "Trapbook user"
    prov.record_created.person.email = mail
    meta = {
        k: v
        for k, v in {
            **{key: getattr(run, key) for key in PLAIN_METADATA},
            "tags": json.dumps(run.tags, ensure_ascii=False) if run.tags else None,
            "factors": json.dumps(run.factors, ensure_ascii=False, sort_keys=True) if run.factors else None,
            "attachments": json.dumps([a.model_dump(mode="json", exclude_none=True) for a in run.attachments])
            if run.attachments
            else None,
            # The ORD has one temperature and time per reaction; the step sequence travels here.
            STEPS_METADATA: json.dumps([s.model_dump(mode="json", exclude_none=True) for s in run.steps], ensure_ascii=False)
            if run.steps
            else None,
            LINE_ORDER_METADATA: json.dumps([ln.name for ln in run.lines], ensure_ascii=False),
        }.items()
        if v
    }
    for k, v in meta.items():
        prov.reaction_metadata[k].CopyFrom(_data(v))


def run_to_reaction(run: Run, email: str | None = None, record_time: str | None = None, nb=None):
    """One run as an ORD Reaction, plus notes on what could not be expressed; its findings are
    judged under the settings of notebook `nb` (the documented defaults when None)."""
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
    _add_vessel(rxn, run)

    # Notes, with the cautions that apply; the stop and warn findings travel in the metadata.
    from ..findings import findings_for

    findings = findings_for(nb, run)
    flagged = [{"code": f.code, "severity": f.severity, "message": f.message} for f in findings if f.severity in ("stop", "warn")]
    if flagged:
        rxn.provenance.reaction_metadata[FINDINGS_METADATA].CopyFrom(_data(json.dumps(flagged, ensure_ascii=False)))
    safety = _safety_notes(run, findings)
    if safety:
        rxn.notes.safety_notes = safety
    if run.notes:
        rxn.notes.procedure_details = run.notes

    write_outcome(rxn, run, table, notes)
    _add_provenance(rxn, run, email, record_time)
    return rxn, notes


def validate(message) -> tuple[list[str], list[str]]:
    """(errors, warnings) from the ORD's own validator."""
    from ord_schema import validations

    out = validations.validate_message(message, raise_on_error=False)
    return list(out.errors), list(out.warnings)


def build_dataset(runs: list[Run], screen=None, email: str | None = None, name: str | None = None, nb=None):
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
        rxn, rnotes = run_to_reaction(run, email=email, nb=nb)
        if rxn.reaction_id in seen:  # unsaved runs with the same title
            rxn.reaction_id = ord_reaction_id(f"{run.id or run.title}#{i}")
        seen.add(rxn.reaction_id)
        notes += [f"{run.id or run.title}: {n}" for n in rnotes]
        ds.reactions.append(rxn)
    errors, warnings = validate(ds)
    if errors:
        raise ExchangeError(
            "the ORD export does not pass the ORD validator:\n  - " + "\n  - ".join(errors[:20]),
            "nothing was written; report this with the run ids",
        )
    if not email:
        notes.append(
            f"no e-mail is set for the ORD record; '{_DEFAULT_EMAIL}' was written "
            "(set one with the notebook setting 'email' or TRAPBOOK_EMAIL)"
        )
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
    ds, report = build_dataset(list(runs), sc, email=_email(nb), nb=nb)
    path = Path(output) if output else None
    payload = serialise(ds, path)
    if path is None:
        return payload
    write_atomic(path, payload)
    return str(path)
