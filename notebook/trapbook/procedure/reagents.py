"""How one material is named in a procedure: 'furan (68.1 mg, 73 µL, 1.00 mmol, 10.0 equiv)'.

Numbers come from the run's amount table (amounts.compute, which uses what was actually
weighed when it is recorded) and are written by display.py: mg to 0.1, µL to 1, mmol to
3 significant figures, equiv to one decimal.
"""

from __future__ import annotations

import re

from ..amounts import AmountTable, LineAmounts
from ..display import fmt_equiv_paper, fmt_mg, fmt_mmol, fmt_molarity, fmt_volume
from .document import clean

_STATES_MOLARITY = re.compile(r"\d\s*(?:M|mol/L)\b")


def amount_bits(row: LineAmounts, concentration_M: float | None = None) -> list[str]:
    """The parenthesised numbers of one line, in the order papers give them."""
    bits: list[str] = []
    if row.form == "solvent":
        if row.volume_ul is not None:
            bits.append(fmt_volume(row.volume_ul))
        if concentration_M is not None:
            bits.append(f"{fmt_molarity(concentration_M)} M")
        return bits
    if row.form == "solution":
        if row.molarity_M is not None and not _STATES_MOLARITY.search(row.name):
            bits.append(f"{fmt_molarity(row.molarity_M)} M")
        if row.volume_ul is not None:
            bits.append(fmt_volume(row.volume_ul))
    else:
        if row.mass_mg is not None:
            bits.append(f"{fmt_mg(row.mass_mg)} mg")
        if row.form == "neat liquid" and row.volume_ul is not None:
            bits.append(fmt_volume(row.volume_ul))
    if row.mmol is not None:
        bits.append(f"{fmt_mmol(row.mmol)} mmol")
    if row.equiv is not None:
        bits.append(f"{fmt_equiv_paper(row.equiv)} equiv")
    return bits


def reagent_phrase(name: str, table: AmountTable | None, concentration_for: str | None = None) -> str:
    """'name (numbers)'; the solvent named in `concentration_for` also carries the run's concentration."""
    row = table.line(name) if table is not None else None
    if row is None:
        return clean(name)
    conc = table.concentration_M if concentration_for is not None and row.name == concentration_for else None
    bits = amount_bits(row, conc)
    return f"{clean(row.name)} ({', '.join(bits)})" if bits else clean(row.name)


def join_words(items: list[str]) -> str:
    """'a', 'a and b', 'a, b and c'."""
    if len(items) <= 1:
        return "".join(items)
    return ", ".join(items[:-1]) + " and " + items[-1]
