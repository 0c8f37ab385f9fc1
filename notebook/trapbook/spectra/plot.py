"""The processed spectrum as a PNG, with the integrated regions shaded, for reports.

Drawn with matplotlib's Agg backend (no display needed); the ppm axis runs high to low,
as chemists read a 1H spectrum.
"""

from __future__ import annotations

import io

from .integrate import Integration
from .processing import ProcessedSpectrum


def spectrum_png(
    spec: ProcessedSpectrum,
    integration: Integration | None = None,
    title: str | None = None,
    width_in: float = 7.0,
    height_in: float = 3.0,
) -> bytes:
    """PNG bytes of the spectrum; the standard's region shaded blue, the product's orange."""
    from matplotlib.figure import Figure  # a bare Figure draws with Agg and touches no global backend

    fig = Figure(figsize=(width_in, height_in), dpi=100)
    ax = fig.add_subplot(1, 1, 1)
    ax.plot(spec.ppm, spec.intensity, color="black", linewidth=0.6)
    if integration is not None:
        for region, colour, label in (
            (integration.standard_region, "tab:blue", "standard"),
            (integration.product_region, "tab:orange", "product"),
        ):
            ax.axvspan(region.low, region.high, color=colour, alpha=0.25, label=f"{label} {region}")
        ax.legend(loc="upper left", fontsize=7, frameon=False)
    ax.set_xlim(float(spec.ppm.max()), float(spec.ppm.min()))
    ax.set_xlabel("δ (ppm)")
    ax.set_yticks([])
    if title:
        ax.set_title(title, fontsize=9)
    fig.tight_layout()
    out = io.BytesIO()
    fig.savefig(out, format="png")
    return out.getvalue()
