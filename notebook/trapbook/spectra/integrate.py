"""Integrals over ppm ranges, and what the chemist should hear about them.

The internal standard's region is set to its proton count (the usual calibration), so the
product's integral reads directly in protons of product per molecule of standard; the
raw areas are kept in the record too. The yield itself is never worked out here: the
integrals go into the run's qNMR record and `trapbook.amounts` applies the one qNMR rule.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field

import numpy as np

from ..errors import SpectrumError
from .processing import ProcessedSpectrum

#: A peak must rise this many noise widths above the baseline to count as there (the
#: signal-to-noise ratio of a detection limit). Source: ICH Q2(R1), S/N 3 for detection.
DETECT_SN = 3.0
#: A dip below the baseline deeper than this share of the standard's height means phase
#: trouble; a region edge higher than this share means baseline trouble or a cut-off wing.
#: Common practice, no source.
DIP_SHARE = 0.05
EDGE_SHARE = 0.02
#: Left and right halves of the standard's signal differing by more than this share of the
#: whole mean the phase is off by a few degrees (about 2 % on the product's integral when a
#: strong standard sits near it). Common practice, no source.
LOPSIDED_SHARE = 0.10

_RANGE = re.compile(r"^\s*(-?\d+(?:\.\d+)?)\s*\.\.\s*(-?\d+(?:\.\d+)?)\s*$")


@dataclass(frozen=True)
class Region:
    """A ppm range, stored low to high whatever order it was typed in."""

    low: float
    high: float

    @classmethod
    def parse(cls, text: str, what: str = "region") -> Region:
        m = _RANGE.match(str(text))
        if not m:
            raise SpectrumError(f"{what} '{text}' is not a ppm range", "write it as LOW..HIGH, e.g. 6.00..6.20", field=what)
        return cls.of(float(m.group(1)), float(m.group(2)), what)

    @classmethod
    def of(cls, a: float, b: float, what: str = "region") -> Region:
        lo, hi = sorted((float(a), float(b)))
        if not (math.isfinite(lo) and math.isfinite(hi)) or not -50 <= lo < hi <= 250:
            raise SpectrumError(
                f"{what} {a:g}..{b:g} ppm is not a usable range (two different shifts within -50..250 ppm)",
                "write it as LOW..HIGH, e.g. 6.00..6.20",
                field=what,
            )
        return cls(lo, hi)

    def overlaps(self, other: Region) -> bool:
        return self.low < other.high and other.low < self.high

    def __str__(self) -> str:
        return f"{self.low:.3f}..{self.high:.3f}"


@dataclass
class Integration:
    """The standard's and product's integrals of one spectrum, with the findings about them."""

    standard_region: Region
    product_region: Region
    standard_area: float
    product_area: float
    standard_protons: int
    product_protons: int
    warnings: list[dict] = field(default_factory=list)

    @property
    def standard_integral(self) -> float:
        """The standard calibrated to its proton count."""
        return float(self.standard_protons)

    @property
    def product_integral(self) -> float:
        return self.product_area / self.standard_area * self.standard_protons

    @property
    def ratio(self) -> float:
        """Molecules of product per molecule of standard: (I_P/N_P)/(I_IS/N_IS)."""
        return (self.product_area / self.product_protons) / (self.standard_area / self.standard_protons)

    def to_dict(self) -> dict:
        return {
            "standard_region": [self.standard_region.low, self.standard_region.high],
            "product_region": [self.product_region.low, self.product_region.high],
            "standard_area": self.standard_area,
            "product_area": self.product_area,
            "standard_integral": self.standard_integral,
            "product_integral": self.product_integral,
            "standard_protons": self.standard_protons,
            "product_protons": self.product_protons,
            "ratio": self.ratio,
            "warnings": list(self.warnings),
        }


def area(spec: ProcessedSpectrum, region: Region, what: str) -> float:
    """Sum of the points inside the region times the point spacing (intensity × ppm)."""
    inside = _inside(spec, region, what)
    return float(np.sum(spec.intensity[inside])) * spec.step_ppm


def _inside(spec: ProcessedSpectrum, region: Region, what: str) -> np.ndarray:
    top, bottom = float(spec.ppm.max()), float(spec.ppm.min())
    if region.low < bottom or region.high > top:
        raise SpectrumError(
            f"the {what} region {region} ppm reaches outside the spectrum ({bottom:.2f}..{top:.2f} ppm)",
            "choose a region inside the spectral window",
            field=what,
        )
    inside = np.nonzero((spec.ppm >= region.low) & (spec.ppm <= region.high))[0]
    if inside.size < 3:
        raise SpectrumError(f"the {what} region {region} ppm holds fewer than 3 points", "widen it", field=what)
    return inside


def integrate(
    spec: ProcessedSpectrum, standard: Region, product: Region, standard_protons: int, product_protons: int
) -> Integration:
    """Integrate both regions; refuse what cannot give a yield, warn about what may give a wrong one."""
    for what, n in (("standard protons", standard_protons), ("product protons", product_protons)):
        if not isinstance(n, int) or not 1 <= n <= 100:
            raise SpectrumError(
                f"{what} {n!r} is not a whole number from 1 to 100", "count the protons of the integrated signal", field=what
            )
    found = findings(spec, standard, product)
    s_area, p_area = area(spec, standard, "standard"), area(spec, product, "product")
    noise_area = _area_noise(spec, _inside(spec, product, "product").size)
    if s_area <= DETECT_SN * _area_noise(spec, _inside(spec, standard, "standard").size):
        raise SpectrumError(
            f"the standard's region {standard} ppm integrates to no signal above the noise",
            "check the region holds the internal standard's peak, and the phase",
            field="standard",
        )
    if p_area < 0:
        if -p_area > DETECT_SN * noise_area:
            raise SpectrumError(
                f"the product region {product} ppm integrates below zero ({p_area / s_area:.1%} of the standard)",
                "phase or baseline trouble: give the phases by hand, or choose a flatter region",
                field="product",
            )
        found.append(
            {
                "code": "nmr-product-zero",
                "message": f"the product region {product} ppm integrates to within noise of zero, slightly below it; stored as 0",
            }
        )
        p_area = 0.0
    result = Integration(standard, product, s_area, p_area, standard_protons, product_protons, found)
    # what is stored (the standard set to its protons, the product read against it) must give back the ratio
    stored = (result.product_integral / product_protons) / (result.standard_integral / standard_protons)
    if not (math.isfinite(result.ratio) and math.isclose(stored, result.ratio, rel_tol=1e-9, abs_tol=1e-12)):
        raise SpectrumError(
            f"the integrals do not give back their own ratio ({stored!r} against {result.ratio!r})",
            "nothing was saved; please report this with the data set",
        )
    return result


def _lopsidedness(y: np.ndarray) -> float:
    """(left − right)/(left + right) of the signal about its top: 0 for a well-phased singlet
    (the usual internal standards give one), growing fast as dispersion creeps in."""
    centre = int(np.argmax(np.abs(y)))
    half = min(centre, y.size - 1 - centre)
    left, right = float(np.sum(y[centre - half : centre])), float(np.sum(y[centre + 1 : centre + half + 1]))
    return (left - right) / (left + right) if left + right > 0 else math.inf


def _area_noise(spec: ProcessedSpectrum, width: int) -> float:
    """How much an integral of `width` points scatters where there is no signal: the robust
    spread of the integrals of all such windows across the spectrum (neighbouring points of
    a zero-filled, broadened spectrum are not independent, so sqrt(width) times the point
    noise would understate it)."""
    sums = np.add.reduceat(spec.intensity, np.arange(0, spec.intensity.size - width + 1, width))
    spread = 1.4826 * float(np.median(np.abs(sums - np.median(sums))))
    return spread * spec.step_ppm


def findings(spec: ProcessedSpectrum, standard: Region, product: Region) -> list[dict]:
    """Empty regions, overlapping regions, and a standard signal that phase or baseline has bent."""
    out: list[dict] = [{"code": "nmr-processing-note", "message": w} for w in spec.warnings]
    if standard.overlaps(product):
        out.append(
            {
                "code": "nmr-regions-overlap",
                "message": f"the standard's region {standard} and the product's {product} overlap: a signal is counted twice",
            }
        )
    for what, region in (("standard", standard), ("product", product)):
        inside = _inside(spec, region, what)
        if area(spec, region, what) < DETECT_SN * _area_noise(spec, inside.size):
            out.append(
                {
                    "code": "nmr-region-empty",
                    "message": f"the {what} region {region} ppm holds no peak: its integral is within the noise",
                }
            )
    inside = _inside(spec, standard, "standard")
    y = spec.intensity[inside]
    top = float(y.max())
    if top > 0:
        if float(y.min()) < -DIP_SHARE * top:
            out.append(
                {
                    "code": "nmr-standard-distorted",
                    "message": f"the standard's signal dips {-y.min() / top:.0%} of its height "
                    "below the baseline: phase trouble; check the phase",
                }
            )
        lopsided = _lopsidedness(y)
        if abs(lopsided) > LOPSIDED_SHARE:
            out.append(
                {
                    "code": "nmr-standard-distorted",
                    "message": f"the standard's signal is lopsided (its halves differ by "
                    f"{abs(lopsided):.0%} of its area): the phase is off by a few degrees or more; check the phase",
                }
            )
        edge = max(1, inside.size // 20)
        rim = max(float(np.mean(y[:edge])), float(np.mean(y[-edge:])))
        if rim > EDGE_SHARE * top:
            out.append(
                {
                    "code": "nmr-standard-distorted",
                    "message": f"the standard's region ends {rim / top:.0%} of the peak's "
                    "height above the baseline: the region cuts the peak or the baseline is not flat",
                }
            )
    return out
