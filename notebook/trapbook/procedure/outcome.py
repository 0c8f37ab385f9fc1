"""What came out of a run, as a paper says it: work-up and purification as recorded, each
product with mass, mmol and yield (and dr, ee), then its characterisation block —
appearance, Rf, NMR as entered, formula and HRMS calcd/found.

Yields come from amounts.product_yields (the one rule), HRMS from trapping.run_hrms, the
formula and exact mass from trapping.with_masses.
"""

from __future__ import annotations

from ..amounts import AmountTable, ProductYield, product_yields
from ..display import fmt_fixed, fmt_mg, fmt_mmol, fmt_pct
from ..errors import TrapbookError
from ..records import Run
from ..trapping import run_hrms, with_masses
from ..units import to_canonical
from .document import Paragraph, clean, sentence


def _yield_bits(y: ProductYield, mass_mg: float | None) -> list[str]:
    bits = []
    if y.isolated_yield_pct is not None:
        bits += [f"{fmt_mg(mass_mg)} mg", f"{fmt_mmol(y.isolated_mmol)} mmol", fmt_pct(y.isolated_yield_pct)]
    if y.dr:
        bits.append(f"dr {y.dr}")
    if y.ee_pct is not None:
        bits.append(f"{fmt_pct(y.ee_pct)} ee")
    return bits


def outcome_sentences(run: Run, table: AmountTable | None) -> tuple[list[str], list[str]]:
    """(sentences, notes) from the work-up to the yields."""
    out: list[str] = []
    notes: list[str] = []
    oc = run.outcome
    if oc is None:
        return [], ["the run has no outcome recorded"]
    if oc.workup:
        out.append(sentence(oc.workup))
    try:
        yields = product_yields(run, table) if table is not None else []
    except TrapbookError as exc:
        return out, [f"yields cannot be worked out: {exc.message}"]
    lead = f"Flash column chromatography ({clean(oc.eluent)}) gave" if oc.eluent else "This gave"
    for res, y in zip(oc.products, yields):
        mass = to_canonical(res.isolated_mass, "mass") if res.isolated_mass is not None else None
        bits = _yield_bits(y, mass)
        if mass == 0:
            out.append(sentence(f"No {clean(y.product)} was isolated"))
        elif y.isolated_yield_pct is not None:
            look = f" as a {clean(res.appearance)}" if res.appearance else ""
            out.append(sentence(f"{lead} {clean(y.product)} ({', '.join(bits)}){look}"))
            lead = "It also gave" if not oc.eluent else "Further elution gave"
        if y.nmr_yield_pct is not None:
            std = clean(res.qnmr.standard) if res.qnmr and res.qnmr.standard else "the internal standard"
            extra = "" if y.isolated_yield_pct is not None else "".join(f", {b}" for b in bits)
            out.append(
                sentence(
                    f"The yield of {clean(y.product)} by 1H NMR against {std} was "
                    f"{fmt_pct(y.nmr_yield_pct)} ({fmt_mmol(y.nmr_mmol)} mmol{extra})"
                )
            )
        if y.isolated_yield_pct is None and y.nmr_yield_pct is None:
            notes.append(f"no isolated mass or NMR yield is recorded for '{clean(y.product)}'")
    if not oc.products:
        products = [ln.name for ln in run.lines_by_role("product")]
        out.append(sentence(f"No {clean(products[0])} was obtained" if products else "No product was obtained"))
    return out, notes


def characterisation(run: Run) -> tuple[list[Paragraph], list[str]]:
    """One block per recorded product: appearance, Rf, NMR as entered, formula, HRMS calcd/found."""
    blocks: list[Paragraph] = []
    notes: list[str] = []
    oc = run.outcome
    if oc is None:
        return blocks, notes
    hrms = {row["product"].casefold(): row for row in run_hrms(run)}
    for res in oc.products:
        line = run.line(res.product)
        p = Paragraph().add(clean(line.name if line else res.product), "bold").add(": ")
        parts = []
        if res.appearance:
            parts.append(sentence(res.appearance))
        if res.rf is not None:
            parts.append(f"Rf = {res.rf:.2f}" + (f" ({clean(oc.eluent)})." if oc.eluent else "."))
        if res.nmr_text:
            parts.append(sentence(res.nmr_text))
        else:
            notes.append(f"no NMR text is recorded for '{clean(res.product)}' (nmr_text in its outcome)")
        if line is not None and line.smiles:
            try:
                m = with_masses({"smiles": line.smiles})
                parts.append(
                    f"Formula {m['formula']}, M = {fmt_fixed(m['molar_mass'], 2)} g/mol, "
                    f"exact mass {fmt_fixed(m['monoisotopic_mass'], 4)}."
                )
            except TrapbookError as exc:
                notes.append(f"no formula for '{clean(res.product)}': {exc.message}")
        row = hrms.get(res.product.casefold())
        if row is not None and "problem" not in row:
            parts.append(
                f"HRMS m/z: {row['ion']} calcd for {row['ion_formula']} {row['calcd_mz']:.4f}, found {row['found_mz']:.4f}."
            )
        elif row is not None:
            notes.append(f"HRMS of '{clean(res.product)}': {row['problem']}")
        else:
            notes.append(f"no HRMS is recorded for '{clean(res.product)}'")
        p.add(" ".join(parts) if parts else "no characterisation recorded.")
        blocks.append(p)
    return blocks, notes
