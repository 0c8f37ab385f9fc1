"""What came of a run, in ORD terms and back: products, analyses, work-up and purification.

Writer and reader of the outcome sit side by side because a run survives an ORD trip
only if each ORD field is read exactly as it was written: isolated masses and yields as
product measurements; qNMR integrals, TLC Rf, NMR text and HRMS as ``analyses`` linked
to their product; colour and texture on the product compound; the work-up and the
chromatography eluent as ``workups``. What the ORD has no field for (the appearance as
written, a qNMR spectrum's processing record) rides along under Trapbook-only keys from
``ord_common``. The reader also takes outcomes written by other tools and lists in the
notes whatever it cannot place.
"""

from __future__ import annotations

import json
from typing import Any

from ..errors import TrapbookError
from ..units import to_canonical
from .ord_common import (
    _MASS,
    ELUENT_PREFIX,
    PRODUCT_FEATURES,
    SPECTRUM_DATA,
    _data,
    _data_value,
    _f32,
    _num,
    _pb,
    identifiers,
    quantity_of,
    set_quantity,
)

#: The last word of an appearance -> ORD texture ("white solid" is colour "white", texture SOLID).
_TEXTURES = {
    "solid": "SOLID",
    "oil": "OIL",
    "powder": "POWDER",
    "crystals": "CRYSTAL",
    "foam": "FOAM",
    "wax": "WAX",
    "liquid": "LIQUID",
    "gas": "GAS",
}
_QNMR_DATA = ("standard_integral", "standard_protons", "integral", "protons")


# -- writing ------------------------------------------------------------------------------


def add_names(msg, name: str, smiles: str | None) -> None:
    """A NAME identifier on a compound or product, and a SMILES one when there is a SMILES."""
    ident = msg.identifiers.add()
    ident.type = ident.NAME
    ident.value = name
    if smiles:
        ident = msg.identifiers.add()
        ident.type = ident.SMILES
        ident.value = smiles


def _yields_by_product(run, table, notes: list[str]) -> dict:
    from .. import amounts

    if run.outcome is None or table is None:
        return {}
    try:
        return {y.product.casefold(): y for y in amounts.product_yields(run, table)}
    except TrapbookError as exc:
        notes.append(f"yields could not be computed ({exc.message}); written without yields")
        return {}


def _measurement(prod, kind: str, analysis_key: str):
    m = prod.measurements.add()
    m.type = type(m).ProductMeasurementType.Value(kind)
    m.analysis_key = analysis_key
    return m


def _write_isolated(out, prod, res, y) -> None:
    r, _ = _pb()
    if res.isolated_mass is None:
        return
    out.analyses["isolated"].type = r.Analysis.WEIGHT
    m = _measurement(prod, "AMOUNT", "isolated")
    set_quantity(m.amount.mass, res.isolated_mass, "mass")
    if y is not None and y.isolated_yield_pct is not None:
        _measurement(prod, "YIELD", "isolated").percentage.value = y.isolated_yield_pct


def _write_qnmr(out, prod, name: str, q, y, has_standard: bool, notes: list[str]) -> None:
    """The integrals behind an NMR yield, the yield itself, and how an attached FID was processed."""
    r, _ = _pb()
    key = f"qnmr {name}"
    an = out.analyses[key]
    an.type = r.Analysis.NMR_1H
    an.details = "internal standard " + (q.standard or "(the run's internal standard)")
    for k in _QNMR_DATA:
        an.data[k].CopyFrom(_data(getattr(q, k)))
    if q.standard:
        an.data["standard"].CopyFrom(_data(q.standard))
    if q.standard_amount is not None:
        an.data["standard_amount_mmol"].CopyFrom(_data(to_canonical(q.standard_amount, "amount")))
    if q.spectrum is not None:
        an.data[SPECTRUM_DATA].CopyFrom(
            _data(json.dumps(q.spectrum.model_dump(mode="json", exclude_none=True), ensure_ascii=False, sort_keys=True))
        )
    if y is not None and y.nmr_yield_pct is not None:
        m = _measurement(prod, "YIELD", key)
        m.uses_internal_standard = True
        m.percentage.value = y.nmr_yield_pct
    elif not has_standard:
        notes.append(f"product '{name}': qNMR integrals kept, but without an internal standard line no NMR yield")


def _selectivity_analysis(out) -> str:
    r, _ = _pb()
    out.analyses["selectivity"].type = r.Analysis.CUSTOM
    out.analyses["selectivity"].details = "as recorded in the notebook"
    return "selectivity"


def _write_selectivity(out, prod, name: str, res, y, notes: list[str]) -> None:
    for kind, text in (("DR", res.dr), ("ER", res.er)):
        if text:  # written as recorded (major:minor); the record has checked it parses
            m = _measurement(prod, "SELECTIVITY", _selectivity_analysis(out))
            m.selectivity.type = m.selectivity.SelectivityType.Value(kind)
            m.string_value = text
            m.details = "major:minor as recorded"
    ee = y.ee_pct if (y is not None and y.ee_pct is not None) else res.ee
    if ee is not None:
        m = _measurement(prod, "SELECTIVITY", _selectivity_analysis(out))
        m.selectivity.type = m.selectivity.EE
        m.percentage.value = ee
        m.details = "from er" if res.er else "as recorded"
        if not 0 <= ee <= 100:
            notes.append(f"product '{name}': ee {ee:g} % lies outside 0-100 %")


def _nmr_type(text: str) -> str:
    head = text.lstrip().lower()
    return "NMR_1H" if head.startswith("1h") else "NMR_13C" if head.startswith("13c") else "NMR_OTHER"


def _write_identity(out, prod, name: str, res, eluent: str | None) -> None:
    """TLC Rf, NMR data as written and HRMS: analyses that confirm the product, linked by IDENTITY."""
    r, _ = _pb()
    if res.rf is not None:
        an = out.analyses[f"tlc {name}"]
        an.type = r.Analysis.TLC
        an.details = f"Rf {res.rf:g}" + (f" ({eluent})" if eluent else "")
        an.data["rf"].CopyFrom(_data(res.rf))
        _measurement(prod, "IDENTITY", f"tlc {name}")
    if res.nmr_text:
        an = out.analyses[f"nmr {name}"]
        an.type = r.Analysis.AnalysisType.Value(_nmr_type(res.nmr_text))
        an.details = res.nmr_text
        _measurement(prod, "IDENTITY", f"nmr {name}")
    if res.hrms is not None:
        an = out.analyses[f"hrms {name}"]
        an.type = r.Analysis.HRMS
        mz = repr(res.hrms.found_mz)  # as text: ORD numbers are single precision, an m/z has more digits
        an.details = f"{res.hrms.ion} found {mz}"
        an.data["ion"].CopyFrom(_data(res.hrms.ion))
        an.data["found_mz"].CopyFrom(_data(mz))
        _measurement(prod, "IDENTITY", f"hrms {name}")


def _write_appearance(prod, text: str | None) -> None:
    """Colour and texture where the words give them; the words themselves as a feature."""
    if not text:
        return
    words = text.split()
    texture = _TEXTURES.get(words[-1].strip(".,;").lower())
    if texture:
        prod.texture.type = prod.texture.TextureType.Value(texture)
        if len(words) > 1:
            prod.isolated_color = " ".join(words[:-1])
    else:
        prod.texture.type = prod.texture.CUSTOM
        prod.texture.details = text
    prod.features["appearance"].CopyFrom(_data(text))


def _write_product(out, line, res, y, ctx: dict) -> None:
    r, _ = _pb()
    prod = out.products.add()
    add_names(prod, line.name, line.smiles)
    prod.reaction_role = r.ReactionRole.PRODUCT
    prod.is_desired_product = ctx["first"]
    ctx["first"] = False
    if line.molar_mass is not None:
        prod.features["molar_mass_g_mol"].CopyFrom(_data(to_canonical(line.molar_mass, "molar_mass")))
    if line.note:
        prod.features["note"].CopyFrom(_data(line.note))
    if res is None:
        return
    _write_isolated(out, prod, res, y)
    if res.qnmr is not None:
        _write_qnmr(out, prod, line.name, res.qnmr, y, ctx["has_standard"], ctx["notes"])
    _write_selectivity(out, prod, line.name, res, y, ctx["notes"])
    _write_identity(out, prod, line.name, res, ctx["eluent"])
    _write_appearance(prod, res.appearance)
    if res.note:
        prod.features["result_note"].CopyFrom(_data(res.note))


def _write_recovered(out, run) -> None:
    r, _ = _pb()
    lim = next(iter(run.lines_by_role("precursor")), None)
    prod = out.products.add()
    add_names(prod, lim.name if lim else "recovered precursor", lim.smiles if lim is not None else None)
    prod.reaction_role = r.ReactionRole.REACTANT
    prod.features["recovered_precursor"].CopyFrom(_data(True))
    out.analyses["isolated"].type = r.Analysis.WEIGHT
    set_quantity(_measurement(prod, "AMOUNT", "isolated").amount.mass, run.outcome.recovered_precursor, "mass")


def _write_workups(rxn, outcome) -> None:
    """The work-up as one described step, then the flash chromatography with its eluent."""
    if outcome.workup:
        wk = rxn.workups.add()
        wk.type = wk.CUSTOM
        wk.details = outcome.workup
    if outcome.eluent:
        wk = rxn.workups.add()
        wk.type = wk.FLASH_CHROMATOGRAPHY
        wk.details = ELUENT_PREFIX + outcome.eluent


def write_outcome(rxn, run, table, notes: list[str]) -> None:
    """The run's outcome as an ORD ReactionOutcome, observations and workups."""
    out = rxn.outcomes.add()
    hold = sum(to_canonical(s.hold, "duration") for s in run.steps if s.hold is not None)
    if hold > 0:
        out.reaction_time.value = hold
        out.reaction_time.units = out.reaction_time.MINUTE
    yields = _yields_by_product(run, table, notes)
    outcome = run.outcome
    if outcome is not None and outcome.observations:
        rxn.observations.add().comment = outcome.observations
    results = {p.product.casefold(): p for p in (outcome.products if outcome else [])}
    ctx = {
        "first": True,
        "notes": notes,
        "eluent": outcome.eluent if outcome else None,
        "has_standard": bool(run.lines_by_role("internal standard")),
    }
    for line in run.lines_by_role("product"):
        key = line.name.casefold()
        _write_product(out, line, results.get(key), yields.get(key), ctx)
    if outcome is not None and outcome.recovered_precursor is not None:
        _write_recovered(out, run)
    if outcome is not None:
        _write_workups(rxn, outcome)


# -- reading ------------------------------------------------------------------------------


def _read_selectivity(m, res: dict, pwhere: str, notes: list[str]) -> None:
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


def _read_spectrum(d: dict, pwhere: str, notes: list[str]) -> dict | None:
    raw = d.get(SPECTRUM_DATA)
    if not isinstance(raw, str):
        return None
    try:
        spectrum = json.loads(raw)
    except (ValueError, RecursionError):
        spectrum = None
    if not isinstance(spectrum, dict):
        notes.append(f"{pwhere}: the qNMR spectrum record is not readable JSON; not kept")
        return None
    return spectrum


def _read_yield(m, outc, res: dict, has_mass: bool, pwhere: str, notes: list[str]) -> None:
    """A yield comes back as the data behind it (qNMR integrals); a bare percentage is reported."""
    an = outc.analyses[m.analysis_key] if m.analysis_key in outc.analyses else None
    d = {k: _data_value(x) for k, x in an.data.items()} if an is not None else {}
    if all(_num(d.get(k)) is not None for k in _QNMR_DATA):
        q: dict[str, Any] = {k: _num(d[k]) for k in ("standard_integral", "integral")}
        q.update({k: int(_num(d[k])) for k in ("standard_protons", "protons")})
        if isinstance(d.get("standard"), str):
            q["standard"] = d["standard"]
        if _num(d.get("standard_amount_mmol")) is not None:
            q["standard_amount"] = {"value": _num(d["standard_amount_mmol"]), "unit": "mmol"}
        spectrum = _read_spectrum(d, pwhere, notes)
        if spectrum is not None:
            q["spectrum"] = spectrum
        res["qnmr"] = q
    elif not has_mass or m.uses_internal_standard:
        shown = f"{_f32(m.percentage.value):g} % " if m.WhichOneof("value") == "percentage" else ""
        notes.append(
            f"{pwhere}: a {shown}yield without the data behind it "
            "(isolated mass or NMR integrals) is not kept; Trapbook recomputes yields"
        )


def _read_identity(m, outc, res: dict, pwhere: str, notes: list[str]) -> None:
    """TLC Rf, NMR text and HRMS from the analysis an IDENTITY measurement points at."""
    an = outc.analyses[m.analysis_key] if m.analysis_key in outc.analyses else None
    if an is None:
        notes.append(f"{pwhere}: identity measurement without its analysis not kept")
        return
    kind = type(an).AnalysisType.Name(an.type)
    d = {k: _data_value(x) for k, x in an.data.items()}
    if kind == "TLC" and _num(d.get("rf")) is not None and "rf" not in res:
        res["rf"] = _num(d["rf"])
    elif kind.startswith("NMR") and an.details:  # several NMR analyses (1H, 13C) join one text
        res["nmr_text"] = f"{res['nmr_text']}\n{an.details}" if res.get("nmr_text") else an.details
    elif kind == "HRMS" and isinstance(d.get("ion"), str) and _num(d.get("found_mz")) is not None and "hrms" not in res:
        res["hrms"] = {"ion": d["ion"], "found_mz": _num(d["found_mz"])}
    else:
        notes.append(
            f"{pwhere}: {kind} analysis '{m.analysis_key}' not kept (a product holds one Rf, NMR text "
            "and one HRMS ion with a finite m/z; this one is missing, unreadable or a second)"
        )


def _read_measurements(prod, outc, res: dict, pwhere: str, notes: list[str]) -> None:
    masses = [m for m in prod.measurements if m.type == m.AMOUNT and m.amount.WhichOneof("kind") == "mass"]
    if masses:
        q = quantity_of(masses[0].amount.mass, _MASS)
        if q is not None:
            res["isolated_mass"] = q
    for m in prod.measurements:
        mtype = type(m).ProductMeasurementType.Name(m.type)
        if mtype == "SELECTIVITY":
            _read_selectivity(m, res, pwhere, notes)
        elif mtype == "YIELD":
            _read_yield(m, outc, res, bool(masses), pwhere, notes)
        elif mtype == "IDENTITY":
            _read_identity(m, outc, res, pwhere, notes)
        elif mtype != "AMOUNT":
            notes.append(f"{pwhere}: {mtype} measurement not kept")


def _read_appearance(prod, features: dict) -> str | None:
    if isinstance(features.get("appearance"), str):
        return features["appearance"]
    texture = type(prod.texture).TextureType.Name(prod.texture.type) if prod.HasField("texture") else "UNSPECIFIED"
    word = prod.texture.details if texture == "CUSTOM" else next((w for w, t in _TEXTURES.items() if t == texture), "")
    text = " ".join(p for p in (prod.isolated_color.strip(), word.strip()) if p)
    return text or None


def _read_product(prod, outc, pwhere: str, notes: list[str]) -> tuple[dict, dict]:
    """(product line, product result) from an ORD product compound."""
    name, smiles, other = identifiers(prod)
    if other:
        notes.append(f"{pwhere}: identifiers not kept: {', '.join(other)}")
    features = {k: _data_value(v) for k, v in prod.features.items()}
    line: dict[str, Any] = {"role": "product", "name": name or smiles or pwhere}
    if smiles:
        line["smiles"] = smiles
    v = _num(features.get("molar_mass_g_mol"))
    if v is not None:
        line["molar_mass"] = {"value": v, "unit": "g/mol"}
    if isinstance(features.get("note"), str):
        line["note"] = features["note"]
    res: dict[str, Any] = {}
    _read_measurements(prod, outc, res, pwhere, notes)
    appearance = _read_appearance(prod, features)
    if appearance:
        res["appearance"] = appearance
    if isinstance(features.get("result_note"), str):
        res["note"] = features["result_note"]
    extra = sorted(k for k in features if k not in PRODUCT_FEATURES)
    if extra:
        notes.append(f"{pwhere}: features not kept: {', '.join(extra)}")
    return line, res


def _recovered_mass(prod) -> dict | None:
    masses = [m for m in prod.measurements if m.type == m.AMOUNT and m.amount.WhichOneof("kind") == "mass"]
    return quantity_of(masses[0].amount.mass, _MASS) if masses else None


def read_products(rxn, where: str, notes: list[str]) -> tuple[list[dict], list[dict], dict | None]:
    """(product lines, product results, recovered precursor mass) of the first ORD outcome."""
    lines: list[dict] = []
    products: list[dict] = []
    recovered = None
    if not rxn.outcomes:
        return lines, products, recovered
    outc = rxn.outcomes[0]
    for j, prod in enumerate(outc.products):
        if "recovered_precursor" in prod.features and _data_value(prod.features["recovered_precursor"]) == "true":
            recovered = _recovered_mass(prod)
            continue
        line, res = _read_product(prod, outc, f"{where} product {j + 1}", notes)
        lines.append(line)
        products.append(res)
    if outc.HasField("conversion"):
        notes.append(f"{where}: conversion {outc.conversion.value:g} % not kept")
    return lines, products, recovered


def read_workups(wk, k: int, where: str, outcome: dict, notes: list[str]) -> None:
    """A workup without materials: the eluent of a flash column, else the work-up text."""
    kind = type(wk).ReactionWorkupType.Name(wk.type)
    details = wk.details.strip()
    if kind == "FLASH_CHROMATOGRAPHY" and details.startswith(ELUENT_PREFIX.strip()) and "eluent" not in outcome:
        outcome["eluent"] = details[len(ELUENT_PREFIX.strip()) :].strip()
        return
    if kind == "CUSTOM" and details:
        text = details
    elif details:
        text = f"{kind.lower().replace('_', ' ')}: {details}"
    else:
        notes.append(f"{where}: workup {k + 1} ({kind}) has no details; kept as its type only")
        text = kind.lower().replace("_", " ")
    outcome["workup"] = f"{outcome['workup']}\n{text}" if outcome.get("workup") else text
