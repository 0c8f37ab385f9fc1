"""HRMS and the product's formula: a found m/z far from the calculated one, or a product
whose formula is neither intermediate + trap nor one of the listed by-products, usually
means a wrong structure, a wrong ion, or a product nobody expected (worth a second look)."""

from __future__ import annotations

from ..trapping import expected_formulas, run_hrms
from .context import Context
from .finding import Finding


def check_hrms(ctx: Context) -> list[Finding]:
    """Found against calculated m/z, with the lab's threshold (`hrms_ppm_max`)."""
    out: list[Finding] = []
    limit = ctx.settings.hrms_ppm_max
    for row in run_hrms(ctx.run):
        if "problem" in row:
            msg = (
                f"HRMS is recorded for '{row['product']}' ({row['ion']} found {row['found_mz']:.4f}), but {row['problem']}. "
                "Add the product's SMILES to its line."
            )
            out.append(Finding("hrms-uncalculable", "note", msg, [row["product"]]))
        elif abs(row["ppm"]) > limit:
            msg = (
                f"HRMS of '{row['product']}': {row['ion']} calcd for {row['ion_formula']} {row['calcd_mz']:.4f}, "
                f"found {row['found_mz']:.4f}, {row['ppm']:+.1f} ppm, beyond the lab's limit of {limit:g} ppm. "
                "Check the ion, the product's structure and the spectrometer's calibration."
            )
            out.append(Finding("hrms-off", "warn", msg, [row["product"]]))
    return out


def check_product_formula(ctx: Context) -> list[Finding]:
    """A recorded product's formula against the adduct and the listed by-products."""
    from ..chemistry.masses import element_counts, hill_formula

    run = ctx.run
    lines = [run.line(res.product) for res in (run.outcome.products if run.outcome else [])]
    lines = [ln for ln in lines if ln is not None and ln.smiles]
    if not lines or not run.lines_by_role("trap"):
        return []
    expected = expected_formulas(run)
    out = []
    for line in lines:
        formula = hill_formula(element_counts(line.smiles))
        if formula not in expected:
            adducts = ", ".join(f"{f} ({what})" for f, what in sorted(expected.items()) if what.startswith("adduct"))
            others = ", ".join(f for f, what in sorted(expected.items()) if not what.startswith("adduct"))
            msg = (
                f"The product '{line.name}' is {formula}, which is neither intermediate + trap ({adducts}) nor a "
                f"listed by-product ({others}). Check its SMILES; if it is right, it is an unexpected product "
                "worth a second look ('trapbook products' lists the expected ones)."
            )
            out.append(Finding("product-formula-unexpected", "warn", msg, [line.name]))
    return out
