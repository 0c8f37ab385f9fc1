"""The ions an HRMS line quotes, as atoms added to M and a charge (no RDKit here).

Kept apart from the mass arithmetic so a record can check an ion's name without loading
the chemistry toolkit, and so there is one list of ions for records, masses and views.
"""

from __future__ import annotations

from ..errors import ChemistryError

ELECTRON_MASS_U = 0.00054858  # CODATA 2018 electron mass in u, to 8 decimals

# Each ion: the atoms added to the neutral M (negative: removed) and its charge.
ION_RECIPES: dict[str, tuple[dict[str, int], int]] = {
    "[M+H]+": ({"H": 1}, +1),
    "[M+Na]+": ({"Na": 1}, +1),
    "[M+NH4]+": ({"N": 1, "H": 4}, +1),
    "[M+K]+": ({"K": 1}, +1),
    "[M-H]-": ({"H": -1}, -1),
}
ION_NAMES = tuple(ION_RECIPES)

# Typographic minus signs and spaces people paste from a paper or a spectrometer report.
_MINUS = str.maketrans({"\u2212": "-", "\u2013": "-", "\u2012": "-", "\u207a": "+", "\u207b": "-"})


def ion_name(ion: object) -> str:
    """The ion's name as stored ('[M+Na]+'), or a ChemistryError naming the ions known."""
    key = "".join(ion.translate(_MINUS).split()) if isinstance(ion, str) else ""
    lookup = {name.casefold(): name for name in ION_NAMES}
    if key.casefold() not in lookup:
        shown = repr(ion)[:40]
        raise ChemistryError(
            f"unknown ion {shown}", f"use one of {', '.join(ION_NAMES)}", field="ion", got=shown, expected=list(ION_NAMES)
        )
    return lookup[key.casefold()]
