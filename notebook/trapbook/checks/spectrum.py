"""Integrals made from an attached spectrum: what the processing found wrong with them.

`trapbook nmr` stores its findings (an empty region, overlapping regions, a standard
signal bent by phase or baseline trouble) in the qNMR record's processing record; this
family shows them with the run's other findings, without processing the spectrum again.
"""

from __future__ import annotations

from .context import Context
from .finding import Finding

#: Codes the spectra module writes, and how loud each is.
SEVERITY = {
    "nmr-region-empty": "warn",
    "nmr-regions-overlap": "warn",
    "nmr-standard-distorted": "warn",
    "nmr-product-zero": "note",
    "nmr-processing-note": "note",
}
#: Longest stored message shown; a record written by hand may hold anything. Common practice, no source.
MAX_MESSAGE = 300


def check_spectrum(ctx: Context) -> list[Finding]:
    """The stored findings of every qNMR record that came from an attached spectrum."""
    run = ctx.run
    out: list[Finding] = []
    for res in run.outcome.products if run.outcome else []:
        rec = res.qnmr.spectrum if res.qnmr is not None else None
        if rec is None:
            continue
        stored = rec.processing.get("warnings") or []
        for item in stored if isinstance(stored, list) else [stored]:
            code = item.get("code") if isinstance(item, dict) else None
            message = str(item.get("message") if isinstance(item, dict) else item)[:MAX_MESSAGE]
            if code not in SEVERITY:
                code = "nmr-processing-note"
            out.append(
                Finding(
                    code,
                    SEVERITY[code],
                    f"{res.product} (from {rec.attachment_name or 'the spectrum'}): {message}",
                    [res.product],
                )
            )
    return out
