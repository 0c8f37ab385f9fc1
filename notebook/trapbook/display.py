"""How a number is written for a chemist: the one rule for every table, screen and report.

Bench practice (common practice, no source): masses to 0.1 mg (what an analytical
balance reads), volumes to 1 µL (what a syringe or pipette delivers), amounts of
substance to 3 significant figures, equivalents to one or two decimals. Numbers of bench
size are written plainly; only values no bench could hold (a unit typo such as 1e300
equiv) fall back to exponent notation, so they still fit a table column. A missing value
is a dash.
"""

from __future__ import annotations

import math

DASH = "—"

#: Magnitudes written without an exponent when given to significant figures.
_PLAIN_MIN, _PLAIN_MAX = 1e-6, 1e7


def fmt_fixed(x: float | None, decimals: int, unit: str = "") -> str:
    """`x` to a fixed number of decimals (exponent only beyond bench size), with `unit` appended."""
    if x is None:
        return DASH
    if not math.isfinite(x):
        return str(x)
    if abs(x) >= _PLAIN_MAX:
        return f"{x:.3g}{unit}"
    return f"{x:.{decimals}f}{unit}"


def fmt_sig(x: float | None, digits: int = 3) -> str:
    """`x` to `digits` significant figures, trailing zeros kept (0.200, 1.50, 1530)."""
    if x is None:
        return DASH
    if not math.isfinite(x):
        return str(x)
    if x == 0:
        return "0"
    mag = abs(x)
    if mag >= 1e6:  # no bench amount: short enough for a column
        text = f"{x:.{digits}g}"
        return text if len(text) <= 8 else f"{x:.0e}"
    if mag < _PLAIN_MIN:
        return f"{x:.{max(digits - 1, 0)}e}"
    rounded = float(f"{mag:.{max(digits - 1, 0)}e}")  # 99.96 -> 100.0: count digits after rounding
    exponent = math.floor(math.log10(rounded))
    decimals = digits - 1 - exponent
    if decimals <= 0:
        return f"{round(x, decimals):.0f}"
    return f"{x:.{decimals}f}"


def fmt_mmol(x: float | None) -> str:
    """Amount of substance in mmol, to 3 significant figures."""
    return fmt_sig(x, 3)


def fmt_molarity(x: float | None) -> str:
    """Concentration in mol/L, to 3 significant figures (0.100 M)."""
    return fmt_sig(x, 3)


def fmt_mg(x: float | None) -> str:
    """Mass in mg, to 0.1 mg."""
    return fmt_fixed(x, 1)


def fmt_ul(x: float | None) -> str:
    """Volume in µL, to 1 µL."""
    return fmt_fixed(x, 0)


def fmt_equiv(x: float | None) -> str:
    """Equivalents with one or two decimals: 1.0, 1.25, 2.5, 10.0; catalytic amounts to 2
    significant figures (0.005, 0.0012); whole numbers from 1000 on."""
    if x is None:
        return DASH
    if not math.isfinite(x):
        return str(x)
    mag = abs(x)
    if mag >= 1e6:
        return f"{x:.0e}"
    if mag >= 1000:
        return f"{x:.0f}"
    if 0 < mag < 0.01:
        return f"{x:.2g}"
    if x == int(x):
        return f"{x:.1f}"
    return f"{x:.2f}".rstrip("0").rstrip(".")


def fmt_pct(x: float | None, unit: str = "%") -> str:
    """A yield or ee in whole percent (72%)."""
    return fmt_fixed(x, 0, unit)


def fmt_temp_c(c: float | None) -> str:
    """A temperature in whole °C (−78 °C, 120 °C)."""
    return DASH if c is None else f"{c:.0f} °C"


def fmt_minutes(m: float | None) -> str:
    """A duration given in minutes: minutes below an hour, then hours (30 min, 2 h, 1.5 h)."""
    if m is None:
        return DASH
    if m >= 60:
        h = m / 60
        return f"{h:.0f} h" if abs(h - round(h)) < 1e-9 else f"{h:.1f} h"
    return f"{m:.0f} min"


def fmt_yield(pct: float | None, kind: str | None = None) -> str:
    """A headline yield in whole percent; an NMR yield is marked ⁿ (isolated is unmarked)."""
    if pct is None:
        return DASH
    return f"{pct:.0f} %" + ("ⁿ" if kind == "NMR" else "")


def fmt_volume(ul: float | None) -> str:
    """A volume with its unit: µL to 1 µL below a millilitre, then mL to 3 significant figures
    (150 µL, 1.00 mL, 12.5 mL) — how a paper writes a syringe and a solvent volume."""
    if ul is None:
        return DASH
    if abs(ul) < 1000:
        return f"{fmt_ul(ul)} µL"
    return f"{fmt_sig(ul / 1000.0, 3)} mL"


def fmt_equiv_paper(x: float | None) -> str:
    """Equivalents as a paper writes them: one decimal (10.0, 1.5, 3.1); below 0.1 equiv, two
    significant figures (0.05). Bench tables keep `fmt_equiv`'s two decimals to tell 1.25
    from 1.3 while weighing; a published procedure rounds to one (common practice, no source)."""
    if x is None:
        return DASH
    if not math.isfinite(x):
        return str(x)
    if 0 < abs(x) < 0.1:
        return fmt_sig(x, 2)
    if abs(x) >= 1e6:
        return f"{x:.0e}"
    return f"{x:.1f}"
