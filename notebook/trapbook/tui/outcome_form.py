"""The Outcome tab's product rows: one result per product line, written one row at a time.

A run often gives more than one product (the adduct and its diastereomer, a dimer, a
solvent adduct), each with its own isolated mass or qNMR integrals and selectivity. The
form writes one row; `product_entry` turns what was typed into the stored shape, or says
what is missing, and never lets two rows speak for the same product.
"""

from __future__ import annotations

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
        try:
            q = {k: (int(v[k]) if k.endswith("protons") else float(v[k])) for k in QNMR_KEYS}
        except ValueError:
            return None, "qNMR integrals are numbers and proton counts whole numbers"
        for k in KEPT_QNMR:
            if k in (old.get("qnmr") or {}):
                q[k] = old["qnmr"][k]
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
