"""What a report shows of a run's outcome beyond percentages: the raw data the yields came
from (isolated and recovered masses, qNMR integrals and proton counts, dr, er, ee, HRMS
found against calculated with the ppm error), the version on the page and why it was
saved, and the products drawn.

Every piece of stored text is HTML-escaped here; numbers are written by display.py,
HRMS numbers come from trapping.run_hrms (the one place the ppm error is worked out).
"""

from __future__ import annotations

import html

from .display import DASH, fmt_mg, fmt_mmol
from .errors import TrapbookError
from .units import to_canonical

e = html.escape


def _q(q, kind: str, fmt) -> str:
    return DASH if q is None else fmt(to_canonical(q, kind))


def _qnmr_cells(res) -> str:
    q = res.qnmr
    if q is None:
        return "<td>—</td>"
    std = e(q.standard or "the run's internal standard")
    amount = (
        f", {fmt_mmol(to_canonical(q.standard_amount, 'amount'))} mmol in the sample" if q.standard_amount is not None else ""
    )
    source = " (integrated from the attached FID)" if q.spectrum is not None else ""
    return (
        f"<td>product {e(f'{q.integral:g}')} for {q.protons} H; standard {std}{e(amount)} "
        f"{e(f'{q.standard_integral:g}')} for {q.standard_protons} H{e(source)}</td>"
    )


def outcome_data_html(run) -> str:
    """A table of each product's raw data, then recovered precursor and HRMS found/calcd/ppm."""
    if run.outcome is None:
        return ""
    from .trapping import run_hrms

    out = [
        "<h3>Raw data</h3><table><tr><th>product</th><th>isolated mass (mg)</th><th>qNMR integrals</th>"
        "<th>dr</th><th>er</th><th>ee (%)</th><th>appearance</th><th>Rf</th></tr>"
    ]
    for res in run.outcome.products:
        ee = DASH if res.ee is None else f"{res.ee:g}"
        rf = DASH if res.rf is None else f"{res.rf:.2f}"
        out.append(
            f"<tr><td>{e(res.product)}</td><td class='n'>{_q(res.isolated_mass, 'mass', fmt_mg)}</td>"
            f"{_qnmr_cells(res)}<td>{e(res.dr or DASH)}</td><td>{e(res.er or DASH)}</td>"
            f"<td class='n'>{e(ee)}</td><td>{e(res.appearance or DASH)}</td><td class='n'>{rf}</td></tr>"
        )
    out.append("</table>")
    oc = run.outcome
    if oc.recovered_precursor is not None:
        out.append(f"<p>Recovered precursor: {_q(oc.recovered_precursor, 'mass', fmt_mg)} mg.</p>")
    if oc.workup:
        out.append(f"<p><b>Work-up:</b> {e(oc.workup)}</p>")
    if oc.eluent:
        out.append(f"<p><b>Chromatography eluent:</b> {e(oc.eluent)}</p>")
    out.append(_hrms_html(run, run_hrms))
    for res in oc.products:
        if res.nmr_text:
            out.append(f"<p><b>NMR of {e(res.product)}:</b> {e(res.nmr_text)}</p>")
    return "\n".join(x for x in out if x)


def _hrms_html(run, run_hrms) -> str:
    try:
        rows = run_hrms(run)
    except TrapbookError as exc:
        return f"<p class='warn'>HRMS cannot be compared: {e(exc.message)}</p>"
    if not rows:
        return ""
    out = [
        "<table><tr><th>HRMS of</th><th>ion</th><th>calcd for</th><th>calcd m/z</th><th>found m/z</th><th>error (ppm)</th></tr>"
    ]
    for row in rows:
        if "problem" in row:
            out.append(
                f"<tr><td>{e(row['product'])}</td><td>{e(row['ion'])}</td><td colspan='2'>{e(row['problem'])}</td>"
                f"<td class='n'>{row['found_mz']:.4f}</td><td>—</td></tr>"
            )
            continue
        out.append(
            f"<tr><td>{e(row['product'])}</td><td>{e(row['ion'])}</td><td>{e(row['ion_formula'])}</td>"
            f"<td class='n'>{row['calcd_mz']:.4f}</td><td class='n'>{row['found_mz']:.4f}</td>"
            f"<td class='n'>{row['ppm']:+.1f}</td></tr>"
        )
    out.append("</table>")
    return "\n".join(out)


def version_html(nb, run_id: str) -> str:
    """The version on the page: its number, who saved it and when, its reason and what changed."""
    history = nb.history(run_id)
    v = history[-1]
    changes = "; ".join(v.changes) if v.changes else "—"
    earlier = f" ({len(history) - 1} earlier version{'s' if len(history) != 2 else ''} kept)" if len(history) > 1 else ""
    return (
        f"<p class='meta'>Version {v.version}{e(earlier)}, saved {e(v.time[:19].replace('T', ' '))} UTC by "
        f"{e(v.author)}. <b>Reason:</b> {e(v.reason or '—')}. <b>Changed:</b> {e(changes)}.</p>"
    )


def screen_products(runs) -> list[tuple[str, str, str]]:
    """The products of a screen's runs to draw beside precursors and traps (each structure once)."""
    return [("product", ln.name, ln.smiles) for run in runs for ln in run.lines if ln.role == "product" and ln.smiles]


def _version_words(nb, run_id: str | None) -> str:
    """'v2: integrals re-read' — the run's current version and why it was saved."""
    if nb is None or run_id is None:
        return DASH
    v = nb.history(run_id)[-1]
    return f"v{v.version}: {v.reason or DASH}"


def screen_raw_rows_html(runs, nb=None) -> str:
    """One row per product of each run: isolated mass, qNMR integrals, dr, er, HRMS found/calcd/ppm,
    and the run's version with the reason it was saved."""
    from .trapping import run_hrms

    out = [
        "<table><tr><th>run</th><th>product</th><th>isolated mass (mg)</th><th>qNMR integrals</th><th>dr</th><th>er</th>"
        "<th>HRMS found / calcd (ppm)</th><th>version: reason</th></tr>"
    ]
    for run in runs:
        if run.outcome is None:
            continue
        version = e(_version_words(nb, run.id))
        try:
            hrms = {r["product"].casefold(): r for r in run_hrms(run)}
        except TrapbookError as exc:
            hrms, problem = {}, exc.message
        else:
            problem = None
        for res in run.outcome.products:
            row = hrms.get(res.product.casefold())
            if row is None:
                ms = e(problem) if problem else DASH
            elif "problem" in row:
                ms = e(f"{row['ion']} found {row['found_mz']:.4f}; {row['problem']}")
            else:
                ms = e(f"{row['ion']} {row['found_mz']:.4f} / {row['calcd_mz']:.4f} ({row['ppm']:+.1f})")
            out.append(
                f"<tr><td>{e(run.id or '')}</td><td>{e(res.product)}</td>"
                f"<td class='n'>{_q(res.isolated_mass, 'mass', fmt_mg)}</td>{_qnmr_cells(res)}"
                f"<td>{e(res.dr or DASH)}</td><td>{e(res.er or DASH)}</td><td>{ms}</td><td>{version}</td></tr>"
            )
    out.append("</table>")
    return "\n".join(out)


def weighed_html(run, nb=None) -> str:
    """Planned and weighed side by side for each line that records what went in ('' when none does);
    a difference beyond the notebook's `weighed_diff_max_pct` is marked."""
    from .display import fmt_ul
    from .settings import notebook_check_settings
    from .weighed import planned_vs_weighed

    limit_pct = notebook_check_settings(nb).weighed_diff_max_pct

    try:
        rows = planned_vs_weighed(run)
    except TrapbookError as exc:
        return f"<p class='warn'>Planned and weighed cannot be compared: {e(exc.message)}</p>"
    if not rows:
        return ""
    fmt = {"mg": fmt_mg, "µL": fmt_ul, "mmol": fmt_mmol}
    out = [
        "<p class='meta'>Equiv, concentration and yields above are worked out from what was weighed.</p>",
        "<table><tr><th>line</th><th>planned</th><th>weighed</th><th>difference</th></tr>",
    ]
    for w in rows:
        f = fmt[w.unit]
        diff = DASH if w.difference_pct is None else f"{w.difference_pct:+.1f} %"
        flag = (
            " class='warn'"
            if limit_pct is not None and w.difference_pct is not None and abs(w.difference_pct) > limit_pct
            else ""
        )
        out.append(
            f"<tr><td>{e(w.name)}</td><td class='n'>{f(w.planned)} {e(w.unit)}</td>"
            f"<td class='n'>{f(w.weighed)} {e(w.unit)}</td><td class='n'{flag}>{e(diff)}</td></tr>"
        )
    out.append("</table>")
    return "\n".join(out)
