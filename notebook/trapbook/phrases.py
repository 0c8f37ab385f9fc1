"""How a step and a yield are said in words — once, for every place that shows them
(CLI tables, the UI's preview and editor, bench sheets, ORD notes)."""

from __future__ import annotations

import re

from .bench_words import hold_words, temperature_words
from .units import unit_text


def quantity_words(q) -> str:
    """'2 h', '-78 °C': the value in the unit the chemist wrote it in."""
    if q is None:
        return ""
    return f"{q.magnitude:g} {unit_text(q)}".strip()


def step_phrases(step, with_additions: bool = True) -> list[str]:
    """What happens in one step: additions, addition time, temperature, hold, vessel, atmosphere, note."""
    parts = []
    if with_additions and step.add:
        parts.append("add " + ", ".join(step.add))
    if step.over is not None:
        parts.append(f"over {quantity_words(step.over)}")
    if step.temperature is not None:
        parts.append(f"at {temperature_words(step)}")  # as written ('rt (23 °C)', '0 °C → 23 °C')
    if step.hold is not None:
        parts.append(f"hold {hold_words(step)}")
    if step.sealed:
        parts.append("sealed vessel")
    if step.atmosphere:
        parts.append(f"under {step.atmosphere}")
    if step.note:
        parts.append(f"({step.note})")
    return parts


def yield_phrases(y, digits: int = 0, with_mmol: bool = False) -> list[str]:
    """One product's yields (isolated and NMR kept apart) and selectivity."""
    bits = []
    if y.isolated_yield_pct is not None:
        mmol = f" ({y.isolated_mmol:.3g} mmol)" if with_mmol and y.isolated_mmol is not None else ""
        bits.append(f"{y.isolated_yield_pct:.{digits}f} % isolated{mmol}")
    if y.nmr_yield_pct is not None:
        mmol = f" ({y.nmr_mmol:.3g} mmol)" if with_mmol and y.nmr_mmol is not None else ""
        bits.append(f"{y.nmr_yield_pct:.{digits}f} % NMR{mmol}")
    if y.dr:
        bits.append(f"dr {y.dr}")
    if y.ee_pct is not None:
        source = f" ({y.ee_source})" if y.ee_source else ""
        bits.append(f"ee {y.ee_pct:.{digits}f} %{source}")
    return bits


def paper_quantity(q) -> str:
    """A quantity as printed in a paper: '−78 °C', '2 h' (a true minus sign, the unit as written)."""
    return quantity_words(q).replace("-", "\u2212", 1) if q is not None and q.magnitude < 0 else quantity_words(q)


def temperature_as_written(step) -> str:
    """The step's temperature in the chemist's own words for a paper: 'rt', '0 °C to rt', '−78 °C'."""
    if step.temperature is None:
        return ""
    if step.temperature_written:
        return re.sub(r"(?<![\w.])-(?=\s?\d)", "\u2212", step.temperature_written)
    if step.temperature_end is not None:
        return f"{paper_quantity(step.temperature)} to {paper_quantity(step.temperature_end)}"
    return paper_quantity(step.temperature)


def hold_as_written(step) -> str:
    """The step's hold in the chemist's own words for a paper: 'overnight', '2 h'."""
    if step.hold is None:
        return ""
    return step.hold_written or paper_quantity(step.hold)
