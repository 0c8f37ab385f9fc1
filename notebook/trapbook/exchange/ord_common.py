"""What the ORD export and the ORD import must agree on, kept in one place.

A Trapbook-to-Trapbook trip through ORD keeps a run as written only if the reader looks
for exactly what the writer wrote: the same role map, the same identifier details, the
same encoding of a feature value, the same units and the same ``reaction_metadata``
keys. ``ord_export`` and ``ord_import`` take those from here. The feature and metadata
keys the import accepts as Trapbook's own are listed here too: a key the export starts
writing belongs in these lists, or the import reports it as not kept. Nothing here
builds or reads a whole reaction.
"""

from __future__ import annotations

import hashlib
import math
from typing import Any

from ..errors import ExchangeError

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

#: ORD ReactionRole name -> Trapbook role, for a component without a "trapbook_role" feature.
_ROLE_FROM_ORD = {
    "REACTANT": "trap",
    "REAGENT": "additive",
    "SOLVENT": "solvent",
    "CATALYST": "additive",
    "INTERNAL_STANDARD": "internal standard",
    "WORKUP": "additive",
}

#: The ``details`` of the custom reaction identifiers that carry the run id and title.
_RUN_ID_DETAILS = "trapbook run id"
_TITLE_DETAILS = "trapbook title"

#: A line that records what was weighed has the weighed quantity as the ORD amount (the
#: ORD describes what was done); the feature "weighed" says so, and the plan travels as
#: "equiv" or as one of these, each the stored form of the planned quantity as JSON.
WEIGHED_FEATURE = "weighed"
PLANNED_FEATURES = {"amount": "planned_amount", "mass": "planned_mass", "volume": "planned_volume"}

#: Line quantities kept as number features in the canonical unit: (line field, unit kind,
#: feature, the unit the number is read back in).
QUANTITY_FEATURES = (
    ("molarity", "molarity", "molarity_M", "M"),
    ("density", "density", "density_g_mL", "g/mL"),
    ("purity", "fraction", "purity", ""),
    ("water", "fraction", "water_fraction", ""),
    ("molar_mass", "molar_mass", "molar_mass_g_mol", "g/mol"),
)
#: Those of them written otherwise than the number feature gives back ('97 %', '1000 mM', more
#: digits than single precision holds), as {field: stored form} JSON, so they return as written.
AS_WRITTEN_FEATURE = "as_written"

#: Compound features a Trapbook export writes on an input component.
COMPONENT_FEATURES = frozenset(
    {
        "trapbook_role",
        "equiv",
        "marked_limiting",
        "note",
        WEIGHED_FEATURE,
        AS_WRITTEN_FEATURE,
        *PLANNED_FEATURES.values(),
        *(q[2] for q in QUANTITY_FEATURES),
    }
)

#: ``provenance.reaction_metadata`` keys: run fields kept as text, run fields kept as JSON,
#: and the step sequence and line order (the ORD has one temperature and time per reaction).
PLAIN_METADATA = ("page", "screen", "status", "intermediate", "intermediate_name", "limiting")
JSON_METADATA = ("tags", "factors", "attachments")
STEPS_METADATA = "trapbook_steps"
LINE_ORDER_METADATA = "trapbook_line_order"
#: The run's stop and warn findings under the exporting notebook's settings, as JSON. They
#: are derived, so the import reads past them: the receiving notebook judges the run anew.
FINDINGS_METADATA = "trapbook_findings"
METADATA_KEYS = PLAIN_METADATA + JSON_METADATA + (STEPS_METADATA, LINE_ORDER_METADATA, FINDINGS_METADATA)

#: Product features: the appearance as written (the ORD colour and texture hold its parts),
#: the product line's note and the result's note, and the mark of the recovered precursor.
PRODUCT_FEATURES = frozenset({"molar_mass_g_mol", "note", "result_note", "appearance", "recovered_precursor"})
#: ``data`` key of a qNMR analysis holding how its integrals were made from an attached FID
#: (``QNMR.spectrum``) as JSON; the ORD has no field for a processing record.
SPECTRUM_DATA = "trapbook_spectrum"
#: The flash-chromatography workup writes its eluent after this, so it reads back as ``Outcome.eluent``.
ELUENT_PREFIX = "eluent: "
#: Details of the ORD vessel when Trapbook knows only its volume.
VESSEL_DETAILS = "reaction vessel (inner volume as recorded; type not recorded)"

#: ORD unit name <-> the unit a Trapbook record writes, so a quantity keeps the unit it was
#: written in (2.0 mL comes back as 2.0 mL, not 2000 µL).
ORD_UNIT_TEXT = {
    "MOLE": "mol",
    "MILLIMOLE": "mmol",
    "MICROMOLE": "µmol",
    "NANOMOLE": "nmol",
    "KILOGRAM": "kg",
    "GRAM": "g",
    "MILLIGRAM": "mg",
    "MICROGRAM": "µg",
    "LITER": "L",
    "MILLILITER": "mL",
    "MICROLITER": "µL",
    "NANOLITER": "nL",
}
#: The ORD amount field for each Trapbook quantity kind, and the ORD unit of its canonical unit.
AMOUNT_SLOTS = {"amount": ("moles", "MILLIMOLE"), "mass": ("mass", "MILLIGRAM"), "volume": ("volume", "MICROLITER")}

#: ORD unit name -> factor to Trapbook's canonical unit (mmol, mg, µL, min); the export
#: writes the units whose factor is 1.
_MOLES = {"MOLE": 1e3, "MILLIMOLE": 1.0, "MICROMOLE": 1e-3, "NANOMOLE": 1e-6}
_MASS = {"KILOGRAM": 1e6, "GRAM": 1e3, "MILLIGRAM": 1.0, "MICROGRAM": 1e-3}
_VOLUME = {"LITER": 1e6, "MILLILITER": 1e3, "MICROLITER": 1.0, "NANOLITER": 1e-3}
_TIME = {"DAY": 1440.0, "HOUR": 60.0, "MINUTE": 1.0, "SECOND": 1 / 60}


def _pb():
    import importlib.util

    if importlib.util.find_spec("ord_schema") is None:  # a hard dependency: say so plainly rather than a bare ImportError
        raise ExchangeError("the ord-schema package is not installed", "pip install ord-schema")
    from ord_schema.proto import dataset_pb2, reaction_pb2

    return reaction_pb2, dataset_pb2


def _data(value: Any):
    """An ORD Data message: a bool as the string "true"/"false", a number as a float, else a string."""
    r, _ = _pb()
    d = r.Data()
    if isinstance(value, bool):
        d.string_value = "true" if value else "false"
    elif isinstance(value, (int, float)):
        d.float_value = float(value)
    else:
        d.string_value = str(value)
    return d


def _data_value(d):
    kind = d.WhichOneof("kind")
    if kind == "float_value":
        return d.float_value
    if kind == "integer_value":
        return d.integer_value
    if kind == "string_value":
        return d.string_value
    return None


def _f32(v: float) -> float:
    """ORD stores single-precision floats: 0.1 comes back as 0.10000000149; keep 7 digits."""
    return float(f"{v:.7g}")


def _num(v) -> float | None:
    if isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v):
        return _f32(float(v))
    try:
        f = float(v)
    except (TypeError, ValueError):
        return None
    return f if math.isfinite(f) else None


def set_quantity(msg, q, kind: str) -> None:
    """An ORD Mass/Volume/Moles message from a Trapbook quantity, in its own unit when the ORD has it."""
    from ..units import to_canonical, unit_text

    text = unit_text(q)
    unit = next(
        (name for name, t in ORD_UNIT_TEXT.items() if t == text and msg.DESCRIPTOR.enum_types[0].values_by_name.get(name)), None
    )
    if unit is None:
        msg.value, unit = to_canonical(q, kind), AMOUNT_SLOTS[kind][1]
    else:
        msg.value = float(q.magnitude)
    msg.units = msg.DESCRIPTOR.enum_types[0].values_by_name[unit].number


def quantity_of(msg, table: dict) -> dict | None:
    """A Trapbook stored quantity ({"value", "unit"}) from an ORD unit message, in the unit it was written in."""
    unit = type(msg).DESCRIPTOR.enum_types[0].values_by_number.get(msg.units)
    if unit is None or unit.name not in table or not math.isfinite(msg.value):
        return None
    return {"value": _f32(msg.value), "unit": ORD_UNIT_TEXT[unit.name]}


def _unit_value(msg, table: dict) -> float | None:
    unit = type(msg).DESCRIPTOR.enum_types[0].values_by_number.get(msg.units)
    factor = table.get(unit.name) if unit is not None else None
    if factor is None or not math.isfinite(msg.value):
        return None
    return _f32(msg.value) * factor


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


def identifiers(msg) -> tuple[str | None, str | None, list[str]]:
    """(name, SMILES, every other identifier as text) of an ORD compound or product."""
    name = smiles = None
    other = []
    for ident in msg.identifiers:
        tname = type(ident).CompoundIdentifierType.Name(ident.type)
        if tname == "NAME" and name is None:
            name = ident.value.strip() or None
        elif tname == "SMILES" and smiles is None:
            smiles = ident.value.strip() or None
        elif tname == "CXSMILES" and smiles is None:
            # the SMILES before its "|...|" extension is the structure; the whole text is kept beside it
            smiles = ident.value.strip().split(None, 1)[0] if ident.value.strip() else None
            other.append(f"{tname} {ident.value[:40]}")
        else:
            other.append(f"{tname} {ident.value[:40]}")
    return name, smiles, other


def digest(message) -> str:
    return hashlib.sha256(message.SerializeToString(deterministic=True)).hexdigest()
