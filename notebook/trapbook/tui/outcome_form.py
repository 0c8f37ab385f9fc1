"""The Outcome tab's product rows: one result per product line, written one row at a time.

A run often gives more than one product (the adduct and its diastereomer, a dimer, a
solvent adduct), each with its own isolated mass or qNMR integrals and selectivity. The
form writes one row; `product_entry` turns what was typed into the stored shape, or says
what is missing, and never lets two rows speak for the same product. The `with_*` functions
are how the Workbench puts what the Outcome tab posts into the run it holds.
"""

from __future__ import annotations

import copy

from ..errors import TrapbookError

#: (key, label, placeholder) of the per-product form, in the order a chemist reads a result.
PRODUCT_FIELDS = (
    ("product", "Product", "product line (→ completes)"),
    ("isolated_mass", "Isolated", "mass obtained, e.g. 11.8 mg"),
    ("standard_integral", "qNMR IS ∫", "integral of the internal standard"),
    ("standard_protons", "IS protons", "protons of that signal"),
    ("integral", "Product ∫", "integral of the product signal"),
    ("protons", "Product H", "protons of that signal"),
    ("dr", "dr", "major:minor, e.g. 5:1"),
    ("er", "er", "major:minor, e.g. 95:5"),
    ("ee", "ee %", "if measured directly"),
)
QNMR_KEYS = ("standard_integral", "standard_protons", "integral", "protons")
#: Kept from the row being changed: parts of a result the form does not show.
KEPT = ("note", "hrms", "appearance", "rf", "nmr_text")
KEPT_QNMR = ("standard", "standard_amount")


def resolve_product(text: str, product_lines: list[str]) -> str | None:
    """The product line a name means: exact (any case), else a unique start of a name."""
    key = text.strip().casefold()
    exact = [n for n in product_lines if n.casefold() == key]
    if exact:
        return exact[0]
    starts = [n for n in product_lines if n.casefold().startswith(key)]
    return starts[0] if len(starts) == 1 else None


def product_entry(
    values: dict[str, str], product_lines: list[str], rows: list[dict], index: int | None
) -> tuple[dict | None, str | None]:
    """(stored product result, None) or (None, why not); (None, None) for an empty form.

    `rows` are the results already kept, `index` the one being changed (None for a new one).
    """
    from ..records import ProductResult, parse_ratio
    from ..units import parse_quantity

    v = {k: (values.get(k) or "").strip() for k, *_ in PRODUCT_FIELDS}
    if not any(v.values()):
        return None, None
    if not product_lines:
        return None, "add a product line on the Lines tab (f3) first"
    if v["product"]:
        name = resolve_product(v["product"], product_lines)
        if name is None:
            return None, f"no product line '{v['product']}': one of {', '.join(product_lines)}"
    elif len(product_lines) == 1:
        name = product_lines[0]
    else:
        return None, "name the product this row is for: " + ", ".join(product_lines)
    for i, other in enumerate(rows):
        if i != index and str(other.get("product", "")).casefold() == name.casefold():
            return None, f"'{name}' already has a result (row {i + 1}); pick that row to change it"
    old = rows[index] if index is not None and index < len(rows) else {}
    entry: dict = {"product": name}
    try:
        if v["isolated_mass"]:
            parse_quantity(v["isolated_mass"], "mass", "isolated mass")
            entry["isolated_mass"] = v["isolated_mass"]
        for k in ("dr", "er"):
            if v[k]:
                parse_ratio(v[k])
                entry[k] = v[k]
    except ValueError as exc:
        return None, str(exc)
    except TrapbookError as exc:
        return None, exc.message
    if v["ee"]:
        try:
            entry["ee"] = float(v["ee"].rstrip("% "))
        except ValueError:
            return None, f"ee '{v['ee']}' is not a number (percent)"
    given = [k for k in QNMR_KEYS if v[k]]
    if given and len(given) < len(QNMR_KEYS):
        return None, "qNMR needs all four: IS ∫, IS protons, product ∫, product H"
    if given:
        q, why = _qnmr(v, old.get("qnmr") or {})
        if q is None:
            return None, why
        entry["qnmr"] = q
    for k in KEPT:
        if k in old:
            entry[k] = old[k]
    if len(entry) == 1:
        return None, "give an isolated mass, qNMR integrals, dr, er or ee"
    try:
        ProductResult.model_validate(entry)
    except TrapbookError as exc:
        return None, exc.message
    except ValueError as exc:  # pydantic's ValidationError is a ValueError
        return None, "; ".join(e.get("msg", "invalid") for e in getattr(exc, "errors", lambda: [])()) or str(exc)
    return entry, None


def _qnmr(v: dict[str, str], old: dict) -> tuple[dict | None, str | None]:
    """The qNMR part of a row: the integrals typed, with the standard and its amount kept.

    Integrals that came from an attached spectrum keep their record (which bytes, regions
    and phases gave them) while they stand as stored; typed over, the record would vouch
    for numbers it did not give, so the row is refused with the way to change them.
    """
    if old.get("spectrum") and all(v[k] == form_values({"qnmr": old})[k] for k in QNMR_KEYS):
        return copy.deepcopy(old), None  # exactly as stored, not as read back from the form's text
    try:
        q = {k: (int(v[k]) if k.endswith("protons") else float(v[k])) for k in QNMR_KEYS}
    except ValueError:
        return None, "qNMR integrals are numbers and proton counts whole numbers"
    if old.get("spectrum"):
        name = old["spectrum"].get("attachment_name") or "the attached spectrum"
        return None, (
            f"these qNMR integrals came from {name}: integrate it again with 'trapbook nmr RUN', "
            "or empty the four qNMR boxes (Enter) before typing integrals of your own"
        )
    for k in KEPT_QNMR:
        if k in old:
            q[k] = old[k]
    return q, None


def form_values(entry: dict) -> dict[str, str]:
    """A kept result back into the form's text, for changing it."""
    from .text import qtext

    q = entry.get("qnmr") or {}
    out = {
        "product": entry.get("product", ""),
        "isolated_mass": qtext(entry.get("isolated_mass")),
        "dr": entry.get("dr") or "",
        "er": entry.get("er") or "",
        "ee": qtext(entry.get("ee")) if entry.get("ee") is not None else "",
    }
    for k in QNMR_KEYS:
        out[k] = qtext(q.get(k)) if q.get(k) is not None else ""
    return out


# --- the run the Workbench holds, changed by what the Outcome tab posts -------------------------
#: The outcome of the run as a whole (kept as typed, no Enter needed); the form's boxes are `out-<key>`.
RUN_OUTCOME_KEYS = ("recovered_precursor", "observations")


def with_result(data: dict, entry: dict, index: int | None) -> dict:
    """A copy of the run with the product result added (index None) or put in place of row `index`."""
    data = copy.deepcopy(data)
    products = data.setdefault("outcome", {}).setdefault("products", [])
    if index is None or index >= len(products):
        products.append(entry)
    else:
        products[index] = entry
    return data


def without_result(data: dict, index: int) -> dict:
    """A copy of the run without product result `index` (and without an outcome left empty)."""
    data = copy.deepcopy(data)
    products = (data.get("outcome") or {}).get("products") or []
    if 0 <= index < len(products):
        products.pop(index)
    return _tidy(data)


def with_result_moved(data: dict, index: int, to: int) -> dict:
    """A copy of the run with product results `index` and `to` changing places."""
    data = copy.deepcopy(data)
    products = (data.get("outcome") or {}).get("products") or []
    if 0 <= index < len(products) and 0 <= to < len(products):
        products[index], products[to] = products[to], products[index]
    return data


def with_run_outcome(data: dict, values: dict[str, str | None]) -> dict:
    """A copy of the run with the run-wide outcome fields as typed (None or empty: left out)."""
    data = copy.deepcopy(data)
    out = data.setdefault("outcome", {})
    for key in RUN_OUTCOME_KEYS:
        if values.get(key):
            out[key] = values[key]
        else:
            out.pop(key, None)
    return _tidy(data)


def _tidy(data: dict) -> dict:
    """No empty outcome is kept: a run with no result and no run-wide field has none."""
    out = data.get("outcome")
    if out is not None and not out.get("products") and not any(v for k, v in out.items() if k != "products"):
        data.pop("outcome", None)
    return data


def with_product_line(data: dict, name: str, smiles: str) -> tuple[dict, str, bool]:
    """(a copy of the run, the product line's name, whether it was added): the run's product line
    with that SMILES, else a new one named NAME (NAME 2, 3… when a line already has it)."""
    data = copy.deepcopy(data)
    lines = data.setdefault("lines", [])
    line = next((ln for ln in lines if ln.get("role") == "product" and ln.get("smiles") == smiles), None)
    if line is not None:
        return data, line["name"], False
    taken = {str(ln.get("name", "")).casefold() for ln in lines}
    n, candidate = 1, name
    while candidate.casefold() in taken:
        n += 1
        candidate = f"{name} {n}"
    lines.append({"role": "product", "name": candidate, "smiles": smiles})
    return data, candidate, True
