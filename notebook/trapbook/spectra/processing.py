"""From FID to a phased, flat, referenced 1H spectrum, with every choice written down.

The chain is the usual one for quantitative 1H work: digital-filter removal (Bruker),
exponential line broadening, zero filling to a power of two, half-weighting of the first
point, Fourier transform, phase correction (read off the internal standard's signal, or
by nmrglue's ACME or peak-minima search, unless the chemist gives the phases), a polynomial baseline fitted to the
points that hold no signal, and referencing to a known signal. `Processing` holds what
was asked; `ProcessedSpectrum.record` holds what was done (the phases found, the shift
applied, the sizes), so saving the record and processing the same bytes again gives the
same integrals to the last digit: every step is deterministic.
"""

from __future__ import annotations

import functools
import math
from dataclasses import asdict, dataclass, field

import numpy as np

from ..errors import SpectrumError
from .readers import RawFID, remove_bruker_filter

PHASE_METHODS = ("tallest-peak", "acme", "acme+p1", "peak_minima")
#: Half-width of the window around the tallest peak that sets its phase. Common practice, no source.
PEAK_WINDOW_PPM = 0.015
#: Points above this many noise widths count as signal when the baseline is fitted.
#: Common practice, no source.
SIGNAL_SIGMAS = 4.0


@dataclass(frozen=True)
class Processing:
    """What to do to an FID. A phase left as None is found automatically (and recorded)."""

    line_broadening_hz: float = 0.3
    zero_fill_factor: int = 2
    phase0_deg: float | None = None
    phase1_deg: float | None = None
    phase_method: str = "tallest-peak"
    baseline_order: int = 3
    #: where the reference signal belongs (ppm), and where to look for it before referencing
    reference_ppm: float | None = None
    reference_region: tuple[float, float] | None = None
    remove_digital_filter: bool = True
    #: where the tallest-peak phase is read (ppm); None: the whole spectrum. `analyse` sets the
    #: standard's region, whose singlet is sharp and never saturated like a solvent peak can be
    phase_region: tuple[float, float] | None = None
    #: spectrometers store the FID so that the spectrum comes out high ppm last; flip it
    reverse: bool = True

    def __post_init__(self) -> None:
        numbers = {
            "line broadening": self.line_broadening_hz,
            "phase 0": self.phase0_deg,
            "phase 1": self.phase1_deg,
            "reference ppm": self.reference_ppm,
        }
        for what, v in numbers.items():
            if not _number(v) and (v is not None or what == "line broadening"):
                raise SpectrumError(f"{what} {v!r} is not a finite number", "give a plain number", field=what)
        for what, rng in (("reference region", self.reference_region), ("phase region", self.phase_region)):
            if rng is not None and not (isinstance(rng, tuple) and len(rng) == 2 and all(_number(v) for v in rng)):
                raise SpectrumError(f"{what} {rng!r} is not a ppm range of two numbers", "write it as LOW..HIGH", field=what)
        for what, flag in (("remove_digital_filter", self.remove_digital_filter), ("reverse", self.reverse)):
            if not isinstance(flag, bool):
                raise SpectrumError(f"{what} {flag!r} is not true or false", "give true or false", field=what)
        for what, v in (("baseline order", self.baseline_order), ("zero-fill factor", self.zero_fill_factor)):
            if not isinstance(v, int) or isinstance(v, bool):
                raise SpectrumError(f"{what} {v!r} is not a whole number", "use the default", field=what)
        if not 0 <= self.line_broadening_hz <= 50:
            raise SpectrumError(
                f"line broadening {self.line_broadening_hz} Hz is outside 0-50 Hz",
                "0.3 Hz is usual for a 1H qNMR spectrum",
                field="line_broadening_hz",
            )
        if self.zero_fill_factor not in (1, 2, 4, 8):
            raise SpectrumError(
                f"zero-fill factor {self.zero_fill_factor} is not 1, 2, 4 or 8", "use 2", field="zero_fill_factor"
            )
        if self.phase_method not in PHASE_METHODS:
            raise SpectrumError(
                f"phase method '{self.phase_method}' is not one of {', '.join(PHASE_METHODS)}", "use acme", field="phase_method"
            )
        if not 0 <= self.baseline_order <= 6:
            raise SpectrumError(f"baseline order {self.baseline_order} is outside 0-6", "use 3", field="baseline_order")
        if (self.reference_ppm is None) != (self.reference_region is None):
            raise SpectrumError(
                "referencing needs both the target ppm and the region to look for the signal in",
                "give both, or neither",
                field="reference_ppm",
            )

    @classmethod
    def from_dict(cls, d: dict) -> Processing:
        """The Processing a stored `to_dict` came from (ranges come back from JSON as lists)."""
        d = dict(d)
        for key in ("reference_region", "phase_region"):
            if d.get(key) is not None:
                d[key] = tuple(d[key])
        return cls(**d)

    def to_dict(self) -> dict:
        d = asdict(self)
        for key in ("reference_region", "phase_region"):
            if d[key] is not None:
                d[key] = list(d[key])
        return d


def _number(v) -> bool:
    return isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v)


@dataclass
class ProcessedSpectrum:
    """The real spectrum on a ppm axis (high ppm first) and the record of how it was made."""

    ppm: np.ndarray
    intensity: np.ndarray
    noise: float
    record: dict = field(default_factory=dict)
    warnings: list[str] = field(default_factory=list)

    @property
    def step_ppm(self) -> float:
        return abs(float(self.ppm[0] - self.ppm[1]))


def process(
    raw: RawFID, params: Processing | None = None, keep_out: list[tuple[float, float]] | None = None
) -> ProcessedSpectrum:
    """Process one FID; `keep_out` are ppm ranges the baseline fit must not touch (the regions)."""
    import nmrglue as ng

    p = params or Processing()
    fid = raw.fid
    filt = "none in the parameters"
    if raw.digital_filter and p.remove_digital_filter:
        fid = remove_bruker_filter(raw)
        filt = "removed"
    n = fid.size
    t = np.arange(n) / raw.sw_hz
    fid = fid * np.exp(-math.pi * p.line_broadening_hz * t)
    size = 1 << math.ceil(math.log2(n * p.zero_fill_factor))
    fid = np.concatenate([fid, np.zeros(size - n, dtype=complex)])
    fid[0] *= 0.5  # the first point counts half, or the baseline gets an offset
    spec = np.fft.fftshift(np.fft.fft(fid))
    if p.reverse:
        spec = spec[::-1]
    freq = (size / 2 - 1 - np.arange(size)) * raw.sw_hz / size if p.reverse else (np.arange(size) - size / 2) * raw.sw_hz / size
    ppm = raw.carrier_ppm + freq / raw.observe_mhz
    if not p.reverse:
        ppm, spec = ppm[::-1].copy(), spec[::-1].copy()
    p0, p1, how = _phases(spec, p, ppm)
    real = np.ascontiguousarray(ng.proc_base.ps(spec, p0=p0, p1=p1).real)
    shift = 0.0
    if p.reference_ppm is not None:
        shift = _reference_shift(ppm, real, p.reference_region, p.reference_ppm)
        ppm = ppm + shift
    real, noise, used = _baseline(ppm, real, p.baseline_order, keep_out or [])
    record = {
        "parameters": p.to_dict(),
        "source": raw.describe(),
        "digital_filter": filt,
        "points_transformed": size,
        "phase0_deg": round(p0, 6),
        "phase1_deg": round(p1, 6),
        "phase_found_by": how,
        "reference_shift_ppm": round(shift, 6),
        "baseline_points_used": round(used, 4),
        "noise": noise,
        "nmrglue": ng.__version__,
    }
    return ProcessedSpectrum(ppm, real, noise, record, list(raw.notes))


def _phases(spec: np.ndarray, p: Processing, ppm: np.ndarray) -> tuple[float, float, str]:
    """The zero- and first-order phases: as given, or found by nmrglue's autops (signal upright).

    "tallest-peak" (the default) reads the zero-order phase off the tallest peak; with
    method "acme" only the zero-order phase is searched (the first-order phase is the
    one given, default 0: removing the digital filter leaves almost none, and a free
    first-order phase lets the search trade one peak's phase against another's);
    "acme+p1" and "peak_minima" search both, as nmrglue does.
    """
    import nmrglue as ng

    if p.phase0_deg is not None:
        return float(p.phase0_deg), float(p.phase1_deg or 0.0), "given"
    # the search sees a spectrum scaled to its tallest point, so its tolerances mean the same for every sample
    scaled = spec / np.max(np.abs(spec))
    fixed_p1 = float(p.phase1_deg or 0.0)
    if p.phase_method == "tallest-peak":
        where = "" if p.phase_region is None else f" in {min(p.phase_region):g}..{max(p.phase_region):g} ppm"
        return _tallest_peak_phase(scaled, fixed_p1, ppm, p.phase_region), fixed_p1, f"automatic (tallest-peak{where})"
    if p.phase_method == "acme":
        fn = functools.partial(_acme_zero_order, p1=fixed_p1)
    else:
        fn = "acme" if p.phase_method == "acme+p1" else p.phase_method
    _, (p0, p1) = ng.proc_autophase.autops(scaled, fn, p0=0.0, p1=fixed_p1, return_phases=True, disp=False)
    p0, p1 = float(p0), (fixed_p1 if p.phase_method == "acme" or p.phase1_deg is not None else float(p1))
    if np.sum(ng.proc_base.ps(scaled, p0=p0, p1=p1).real) < 0:  # the search can land on the upside-down solution
        p0 += 180.0
    p0 = (p0 + 180.0) % 360.0 - 180.0
    return p0, p1, f"automatic ({p.phase_method})"


def _tallest_peak_phase(spec: np.ndarray, p1: float, ppm: np.ndarray, region: tuple[float, float] | None) -> float:
    """Zero-order phase from the tallest peak (of the region): summed over a window symmetric
    about its top, a Lorentzian's dispersion part cancels and what is left points along its phase."""
    import nmrglue as ng

    turned = ng.proc_base.ps(spec, p0=0.0, p1=p1)
    size = np.abs(turned)
    if region is not None:
        inside = (ppm >= min(region)) & (ppm <= max(region))
        if inside.sum() < 3:
            raise SpectrumError(
                f"the phase region {min(region):g}..{max(region):g} ppm is not inside the spectrum",
                "give a region that holds a sharp signal, or another phase method",
                field="phase_region",
            )
        size = np.where(inside, size, -1.0)
    top = int(np.argmax(size))
    half = max(3, int(PEAK_WINDOW_PPM / abs(float(ppm[0] - ppm[1]))))
    lo, hi = max(0, top - half), min(spec.size, top + half + 1)
    half = min(top - lo, hi - 1 - top)
    total = np.sum(turned[top - half : top + half + 1])
    return float(-np.degrees(np.angle(total)))


def _acme_zero_order(ph, data: np.ndarray, p1: float) -> float:
    """ACME score (entropy of the first derivative plus a penalty on negative intensity) at
    zero-order phase ph[0]. Source: Chen et al., J. Magn. Reson. 2002, 158, 164."""
    import nmrglue as ng

    real = ng.proc_base.ps(data, p0=float(ph[0]), p1=p1).real
    d = np.abs(np.diff(real))
    share = d / np.sum(d)
    share[share == 0] = 1
    entropy = float(-np.sum(share * np.log(share)))
    negative = real[real < 0]
    penalty = 1000.0 * float(np.sum(negative**2)) if negative.size else 0.0
    return (entropy + penalty) / real.size / float(np.max(real)) if np.max(real) > 0 else math.inf


def _reference_shift(ppm: np.ndarray, real: np.ndarray, region: tuple[float, float], target: float) -> float:
    lo, hi = sorted(region)
    inside = np.nonzero((ppm >= lo) & (ppm <= hi))[0]
    if inside.size < 3:
        raise SpectrumError(
            f"the reference region {lo:g}..{hi:g} ppm is not inside the spectrum",
            "give a region where the reference signal is",
            field="reference_region",
        )
    i = int(inside[np.argmax(real[inside])])
    peak = float(ppm[i])
    if 0 < i < ppm.size - 1:  # a parabola through the top three points finds the top between points
        a, b, c = real[i - 1], real[i], real[i + 1]
        den = a - 2 * b + c
        if den != 0:
            peak += 0.5 * (a - c) / den * float(ppm[i + 1] - ppm[i])
    return target - peak


def _baseline(
    ppm: np.ndarray, real: np.ndarray, order: int, keep_out: list[tuple[float, float]]
) -> tuple[np.ndarray, float, float]:
    """Subtract a polynomial fitted to the signal-free points; return it with the noise level.

    The noise comes from point-to-point differences (blind to a smooth baseline and to
    sparse peaks). A point is signal-free when it lies outside the integral regions and
    within a few noise widths of the current fit, widened so a peak's shoulders go with
    it; at least the quietest third of the spectrum is always used, so a very strong
    sample cannot leave the fit with nothing to stand on.
    """
    x = (ppm - ppm.mean()) / (np.ptp(ppm) / 2)
    sigma = 1.4826 * float(np.median(np.abs(np.diff(real) - np.median(np.diff(real))))) / math.sqrt(2)
    base = np.ones(ppm.size, dtype=bool)
    for lo, hi in keep_out:
        base &= ~((ppm >= min(lo, hi)) & (ppm <= max(lo, hi)))
    if base.sum() < 4 * (order + 1):
        raise SpectrumError(
            "too few points outside the integral regions to fit a baseline",
            "use smaller integral regions or a lower baseline order",
            field="baseline_order",
        )
    free = base.copy()
    for _ in range(4):
        coef = np.polynomial.polynomial.polyfit(x[free], real[free], order)
        resid = np.abs(real - np.polynomial.polynomial.polyval(x, coef))
        limit = max(SIGNAL_SIGMAS * sigma, float(np.quantile(resid[base], 1 / 3)))
        signal = np.convolve(resid > limit, np.ones(9), mode="same") > 0  # a peak's shoulders belong to it
        free = base & ~signal
        if free.sum() < 4 * (order + 1):
            free = base & (resid <= limit)
    flat = real - np.polynomial.polynomial.polyval(x, coef)
    return flat, sigma, float(free.mean())
