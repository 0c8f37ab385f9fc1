"""What a trapping run should give: the expected adducts and by-products with their masses,
and the HRMS comparison of a recorded product against them.

The one place the CLI, the TUI and the bench checks ask "which products, which formula,
which m/z, how many ppm off". The chemistry (reaction templates, stereo, masses) lives in
chemistry/; this module only gathers the run's intermediate, traps and leaving group and
adds the numbers to each product.
"""

from __future__ import annotations

from .errors import RecordError, TrapbookError


def _run_inputs(run) -> tuple[str, str, list[tuple[str, str | None]], tuple[str, str] | None]:
    """The run's intermediate (recorded or derived) and where it came from, its traps and
    the leaving group its precursor releases."""
    from .strain_link import intermediate_of_run

    found = intermediate_of_run(run)
    label = run.id or run.title
    if not found:
        raise RecordError(
            f"run {label} names no intermediate and none can be derived from its precursor",
            "write the intermediate's SMILES on the run, or give the precursor's SMILES",
            field="intermediate",
        )
    traps = [(ln.smiles, ln.name) for ln in run.lines_by_role("trap") if ln.smiles]
    if not traps:
        raise RecordError(
            f"run {label} has no trap line with a SMILES",
            "add the trap's SMILES to its line (e.g. furan 'c1ccoc1')",
            field="trap",
        )
    return found[0], found[1], traps, _leaving_group(run)


def _leaving_group(run) -> tuple[str, str] | None:
    from .chemistry.by_products import released_acid

    for line in run.lines_by_role("precursor"):
        if line.smiles:
            try:
                return released_acid(line.smiles)
            except TrapbookError:
                continue  # another precursor line may carry the silyl group
    return None


def _inputs(subject, trap: str | None):
    if isinstance(subject, str):
        if not trap:
            raise RecordError("an intermediate without a trap gives no adduct", "give the trap's SMILES as well", field="trap")
        return subject, "as given", [(trap, None)], None
    intermediate, origin, traps, leaving = _run_inputs(subject)
    if trap:
        traps = [(trap, None)]
    return intermediate, origin, traps, leaving


def with_masses(product: dict) -> dict:
    """The product with formula, molar mass, exact mass and the m/z of each listed ion."""
    from .chemistry.masses import mass_summary

    return {**product, **mass_summary(product["smiles"])}


def products_report(subject, trap: str | None = None, limits=None) -> dict:
    """Every expected product of a run (or of an intermediate SMILES with a trap SMILES),
    with masses, plus the notes that say what was dropped or cut and why."""
    from .chemistry.products import expected_products as enumerate_products

    intermediate, origin, traps, leaving = _inputs(subject, trap)
    result = enumerate_products(intermediate, traps, leaving_group=leaving, limits=limits)
    return {
        "intermediate": result.intermediate,
        "intermediate_origin": origin,
        "intermediate_kind": result.kind,
        "traps": [{"smiles": s, "name": n} for s, n in traps],
        "leaving_group": leaving[1] if leaving else None,
        "products": [with_masses(p) for p in result.products],
        "hrms": [] if isinstance(subject, str) else run_hrms(subject),
        "notes": result.notes,
        "truncated": result.truncated,
    }


def expected_products(subject, trap: str | None = None) -> list[dict]:
    """The expected products alone; `products_report` also gives the notes and truncation."""
    return products_report(subject, trap)["products"]


def hrms_comparison(smiles: str, ion: str, found_mz: float) -> dict:
    """Calculated m/z of the ion of a product and the error of the value found, in ppm."""
    from .chemistry.ions import ion_name
    from .chemistry.masses import element_counts, hill_formula, ion_counts, ion_mz, ppm_error

    name = ion_name(ion)
    counts = element_counts(smiles)
    calcd = ion_mz(counts, name)
    atoms, charge = ion_counts(counts, name)
    return {
        "ion": name,
        "ion_formula": hill_formula(atoms) + ("+" if charge > 0 else "-"),
        "calcd_mz": calcd,
        "found_mz": float(found_mz),
        "ppm": ppm_error(calcd, found_mz),
    }


def expected_formulas(run) -> dict[str, str]:
    """Formula -> what it would be (adduct with a trap, or a listed by-product), for checking a
    recorded product without enumerating stereoisomers."""
    from .chemistry.masses import element_counts, hill_formula
    from .chemistry.products import listed_by_products

    intermediate, _origin, traps, leaving = _run_inputs(run)
    base = element_counts(intermediate)
    out: dict[str, str] = {}
    for smiles, name in traps:
        total = dict(base)
        for k, v in element_counts(smiles).items():
            total[k] = total.get(k, 0) + v
        out.setdefault(hill_formula(total), f"adduct of {name}")
    for p in listed_by_products(intermediate, leaving):
        out.setdefault(hill_formula(element_counts(p["smiles"])), p["words"])
    return out


def run_hrms(run) -> list[dict]:
    """Each outcome product with an HRMS record: calculated m/z of its ion and the ppm error,
    or `problem` in words when the product line has no SMILES to calculate from."""
    out = []
    for res in run.outcome.products if run.outcome else []:
        if res.hrms is None:
            continue
        line = run.line(res.product)
        if line is None or not line.smiles:
            out.append(
                {
                    "product": res.product,
                    "ion": res.hrms.ion,
                    "found_mz": res.hrms.found_mz,
                    "problem": "the product line has no SMILES, so no m/z can be calculated",
                }
            )
            continue
        out.append({"product": res.product, **hrms_comparison(line.smiles, res.hrms.ion, res.hrms.found_mz)})
    return out
