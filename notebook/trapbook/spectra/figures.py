"""The spectra behind a run's NMR yields, drawn again from their stored processing records.

A qNMR record made from an attached FID keeps the file's SHA-256, the regions and every
processing parameter with the phases found; drawing it again uses exactly those (the
phases given back as found), so the picture in a report, and the plot in the Workbench's
Outcome tab, is the spectrum that gave the number: both come from `stored_spectrum`. A file
that cannot be read back is said where the picture would be, never left out quietly.
"""

from __future__ import annotations

import base64
import html

from ..attachments import read_verified, store_dir
from ..errors import SpectrumError, TrapbookError
from .integrate import Integration, Region, integrate
from .plot import spectrum_png
from .processing import ProcessedSpectrum, Processing, process
from .readers import read_bytes


def processing_from_record(record: dict) -> Processing:
    """The Processing that reproduces a stored record: its parameters with the phases it found."""
    try:
        params = dict(record.get("parameters") or {})
        params["phase0_deg"] = record.get("phase0_deg", params.get("phase0_deg"))
        params["phase1_deg"] = record.get("phase1_deg", params.get("phase1_deg"))
        return Processing.from_dict(params)
    except (TypeError, ValueError) as exc:  # a record not written by this version of Trapbook
        raise SpectrumError(
            f"the stored processing record cannot be read ({exc})", "integrate the spectrum again with 'trapbook nmr RUN'"
        ) from None


def stored_spectrum(nb, run, result) -> tuple[ProcessedSpectrum, Integration]:
    """The spectrum and integrals behind one product result's qNMR record, made again from it.

    The one way a stored record is drawn (the HTML report's PNG, the Workbench's plot): its
    attachment read back and checked against its SHA-256, processed with the stored
    parameters and the phases it found, integrated over its regions with its proton counts.
    """
    q = result.qnmr
    rec = q.spectrum if q is not None else None
    if rec is None:
        raise SpectrumError(
            f"the result for {result.product} has no spectrum record", "integrate the spectrum with 'trapbook nmr RUN'"
        )
    size = next((a.size for a in run.attachments if a.sha256 == rec.attachment_sha256), None)
    data = read_verified(store_dir(nb), rec.attachment_sha256, size)
    std, prod = Region.of(*rec.standard_region), Region.of(*rec.product_region)
    spec = process(
        read_bytes(data, rec.attachment_name or "attachment"),
        processing_from_record(rec.processing),
        keep_out=[rec.standard_region, rec.product_region],
    )
    return spec, integrate(spec, std, prod, q.standard_protons, q.protons)


def run_spectra_html(nb, run) -> str:
    """<figure> elements (PNG inline) for each product whose integrals came from a spectrum."""
    out = []
    for res in run.outcome.products if run.outcome else []:
        rec = res.qnmr.spectrum if res.qnmr is not None else None
        if rec is None:
            continue
        caption = f"{res.product}: {rec.attachment_name or rec.attachment_sha256[:12]} (sha256 {rec.attachment_sha256[:12]}…)"
        try:
            spec, integ = stored_spectrum(nb, run, res)
        except TrapbookError as exc:
            out.append(f"<p class='warn'>The spectrum of {html.escape(caption)} cannot be drawn: {html.escape(exc.message)}</p>")
            continue
        png = base64.b64encode(spectrum_png(spec, integ)).decode("ascii")
        out.append(
            f"<figure><img alt='1H spectrum' src='data:image/png;base64,{png}'>"
            f"<figcaption>{html.escape(caption)}; standard {integ.standard_region} ppm, product {integ.product_region} ppm</figcaption></figure>"
        )
    return "\n".join(out)
