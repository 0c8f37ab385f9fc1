"""The outcome: numbers that cannot be true (a yield over 100 %, ee outside 0-100 %, a mass
balance above the limit) are usually a wrong scale, molar mass or standard amount."""

from __future__ import annotations

from .. import amounts
from ..errors import TrapbookError
from ..records import Run, parse_ratio
from .context import Context
from .finding import Finding
from .settings import CheckSettings


def _qnmr_unreferenced(run: Run, res) -> bool:
    q = res.qnmr
    if q is None or q.standard_amount is not None or q.standard is not None:
        return False
    return len(run.lines_by_role("internal standard")) != 1


def _one_product_yield(ctx: Context, res):
    """The yield of one product, so one bad record does not hide the others."""
    sub = ctx.run.model_copy(update={"outcome": ctx.run.outcome.model_copy(update={"products": [res]})})
    return amounts.product_yields(sub, ctx.table)[0]


def check_outcome(ctx: Context) -> list[Finding]:
    """Numbers that cannot be true are usually a wrong scale, molar mass or standard amount."""
    run = ctx.run
    if run.outcome is None or ctx.table is None:
        return []
    out: list[Finding] = []
    s = ctx.settings
    for res in run.outcome.products:
        if _qnmr_unreferenced(run, res):
            n = len(run.lines_by_role("internal standard"))
            why = "no internal standard line" if n == 0 else f"{n} internal standard lines and the qNMR names none"
            msg = (
                f"Product '{res.product}' has qNMR integrals but {why}, so the NMR yield cannot be worked out. "
                "Add the internal standard as a line (with its mass and SMILES) or name it in the qNMR record."
            )
            out.append(Finding("qnmr-no-standard", "warn", msg, [res.product]))
            res = res.model_copy(update={"qnmr": None})
        try:
            py = _one_product_yield(ctx, res)
        except TrapbookError as exc:
            msg = f"The yield of '{res.product}' cannot be worked out: {exc.message}."
            out.append(Finding("yield-unknown", "note", msg, [res.product]))
            continue
        out += _yield_findings(res.product, py, s) + _selectivity_findings(res, py, s)
    out += _mass_balance(ctx)
    return out


def _yield_findings(name: str, py, s: CheckSettings) -> list[Finding]:
    out = _yield_agreement(name, py, s)
    for kind, pct in (("isolated", py.isolated_yield_pct), ("NMR", py.nmr_yield_pct)):
        if pct is not None and pct > s.yield_max_pct:
            msg = (
                f"The {kind} yield of '{name}' comes to {pct:.0f} %, above {s.yield_max_pct:g} %. Usually the "
                "scale, the product's SMILES (molar mass), residual solvent, or the standard's amount is off. "
                "Check them before trusting the number."
            )
            out.append(Finding("yield-over-100", "warn", msg, [name]))
    return out


def _yield_agreement(name: str, py, s: CheckSettings) -> list[Finding]:
    """Isolated and NMR yields of one product measure the same thing; a wide gap means one is wrong."""
    iso, nmr = py.isolated_yield_pct, py.nmr_yield_pct
    if iso is None or nmr is None or abs(iso - nmr) <= s.yield_disagree_pct:
        return []
    why = (
        "product lost in work-up or purification, or an NMR standard amount that is too high"
        if iso < nmr
        else "solvent or impurities in the isolated material, or an NMR standard amount that is too low"
    )
    msg = (
        f"The isolated yield of '{name}' ({iso:.0f} %) and its NMR yield ({nmr:.0f} %) differ by {abs(iso - nmr):.0f} "
        f"points, more than the limit of {s.yield_disagree_pct:g}. Usual causes: {why}. Check before reporting either."
    )
    return [Finding("yield-disagree", "warn", msg, [name])]


def _selectivity_findings(res, py, s: CheckSettings) -> list[Finding]:
    out = []
    if res.ee is not None and not 0 <= res.ee <= 100:
        msg = (
            f"The ee of '{res.product}' is recorded as {res.ee:g} %; ee runs from 0 to 100 %. Record it as a "
            "positive number (name the major enantiomer in a note), or give the er instead."
        )
        out.append(Finding("ee-out-of-range", "warn", msg, [res.product]))
    if res.ee is not None and res.er and py.ee_pct is not None and abs(abs(res.ee) - py.ee_pct) > s.ee_tolerance_pct:
        msg = (
            f"'{res.product}' has er {res.er}, which gives {py.ee_pct:.1f} % ee, but the ee is recorded as "
            f"{res.ee:g} %. ee = (er - 1)/(er + 1); one of the two is wrong. Correct it, or keep only the er."
        )
        out.append(Finding("ee-er-mismatch", "warn", msg, [res.product]))
    for label, text in (("dr", res.dr), ("er", res.er)):
        if text:
            a, b = parse_ratio(text)
            if a < b:
                msg = (
                    f"The {label} of '{res.product}' is written minor first ({text}); Trapbook reads it as "
                    f"{b:g}:{a:g}. Write the major isomer first to avoid confusion."
                )
                out.append(Finding("ratio-order", "note", msg, [res.product]))
    return out


def _mass_balance(ctx: Context) -> list[Finding]:
    try:
        mb = amounts.mass_balance_pct(ctx.run, ctx.table)
    except TrapbookError:
        return []  # the per-product findings already say why
    limit = ctx.settings.mass_balance_max_pct
    if mb is None or mb <= limit:
        return []
    msg = (
        f"Products plus recovered precursor add up to {mb:.0f} % of the limiting amount, above {limit:g} %. "
        "Material cannot appear from nowhere: check for residual solvent, impure fractions counted twice, "
        "or a wrong scale."
    )
    return [Finding("mass-balance-high", "warn", msg, [p.product for p in ctx.run.outcome.products])]
