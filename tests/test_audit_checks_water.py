"""Water is counted per mmol of precursor, as its threshold says, even when a precious trap
is the limiting line.

Sources: docs/sources.md, "Amounts, molar masses and solvents" (TBAF trihydrate carries three
waters per formula unit) and "Yields and selectivity" (at most 1 mmol water per mmol
precursor: common practice, no source).
"""

from __future__ import annotations

import pytest

from trapbook.checks import run_checks
from trapbook.records import load_run

TBAF_TRIHYDRATE = "CCCC[N+](CCCC)(CCCC)CCCC.[F-].O.O.O"


def _run(precursor_equiv: float, tbaf_equiv: float) -> dict:
    """DPIBF limiting (0.100 mmol), the precursor and TBAF trihydrate in equiv of it."""
    return {
        "title": "precious trap, excess precursor",
        "lines": [
            {
                "role": "trap",
                "name": "DPIBF",
                "smiles": "c1ccc(cc1)-c1oc(-c2ccccc2)c2ccccc12",
                "amount": "0.100 mmol",
                "limiting": True,
            },
            {
                "role": "precursor",
                "name": "aryne precursor",
                "smiles": "C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F",
                "equiv": precursor_equiv,
            },
            {"role": "fluoride source", "name": "TBAF trihydrate", "smiles": TBAF_TRIHYDRATE, "equiv": tbaf_equiv},
            {"role": "solvent", "name": "THF", "smiles": "C1CCOC1", "volume": "2.0 mL"},
        ],
        "steps": [{"add": ["DPIBF", "aryne precursor", "THF"], "temperature": "23 °C"}, {"add": ["TBAF trihydrate"]}],
    }


def _water(run: dict):
    found = [f for f in run_checks(load_run(run)) if f.code == "water-brought"]
    assert len(found) == 1
    return found[0]


@pytest.mark.parametrize(
    ("precursor_equiv", "tbaf_equiv", "per_precursor", "severity"),
    [
        # 3 × 0.6 × 0.100 = 0.180 mmol water on 0.200 mmol precursor: 0.9 per precursor (1.8 per trap)
        (2.0, 0.6, "0.9", "note"),
        # 3 × 1.0 × 0.100 = 0.300 mmol water on 0.150 mmol precursor: 2 per precursor
        (1.5, 1.0, "2", "warn"),
    ],
)
def test_water_is_judged_per_precursor_not_per_limiting_trap(precursor_equiv, tbaf_equiv, per_precursor, severity):
    finding = _water(_run(precursor_equiv, tbaf_equiv))
    assert finding.severity == severity
    assert f"{per_precursor} mmol per mmol of 'aryne precursor'" in finding.message


def test_with_the_precursor_limiting_nothing_changes(minimal_run):
    """The usual run: precursor limiting, so per precursor is per limiting line."""
    minimal_run["lines"][1]["smiles"] = TBAF_TRIHYDRATE
    minimal_run["lines"][1].pop("molarity")
    minimal_run["lines"][1]["equiv"] = 0.2  # 3 × 0.2 = 0.6 mmol water per mmol precursor
    finding = _water(minimal_run)
    assert finding.severity == "note"
    assert "0.6 mmol per mmol of 'aryne precursor A'" in finding.message
