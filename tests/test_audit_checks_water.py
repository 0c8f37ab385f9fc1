"""Water is counted per mmol of precursor, as its threshold says, even when a precious trap
is the limiting line.

Sources: docs/sources.md, "Amounts, molar masses and solvents" (TBAF trihydrate carries three
waters per formula unit) and "Yields and selectivity" (at most 1 mmol water per mmol
precursor: common practice, no source).
"""

from __future__ import annotations

import copy
import re

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


# --- water as its own line ------------------------------------------------------------------
# Source: docs/sources.md, "Water": 18.015 g/mol (IUPAC 2021), 0.9982 g/mL at 20 °C and bp 100 °C
# (CRC Handbook, from memory); a line of water brings its whole amount as water.


def _with_water(minimal_run: dict, line: dict) -> dict:
    minimal_run["lines"].append(line)
    minimal_run["steps"][0]["add"].append(line["name"])
    return minimal_run


@pytest.mark.parametrize(
    ("line", "mmol"),
    [
        ({"role": "additive", "name": "water", "volume": "18.0 µL"}, 18.0e-3 * 0.9982 * 1000 / 18.015),  # 0.997
        ({"role": "additive", "name": "H2O", "mass": "36.0 mg"}, 36.0 / 18.015),  # 2.00
        ({"role": "solvent", "name": "water", "volume": "0.100 mL"}, 0.100 * 0.9982 * 1000 / 18.015),  # 5.54
        ({"role": "additive", "name": "water", "amount": "0.500 mmol"}, 0.500),
    ],
)
def test_a_line_of_water_is_counted_whole(minimal_run, line, mmol):
    # TBAF 1.0 M in THF, 3 equiv on 0.200 mmol: 2.5 × 0.600 = 1.50 mmol water (docs/sources.md,
    # "Commercial TBAF"), plus the water line itself
    finding = _water(_with_water(minimal_run, line))
    total = 1.50 + mmol
    assert f"'{line['name']}' about " in finding.message
    said = re.search(r"bring about ([0-9.]+) mmol water", finding.message)
    assert said and float(said.group(1)) == pytest.approx(total, rel=0.01)  # shown to 3 significant figures
    assert finding.severity == "warn"  # well above 1 mmol water per mmol precursor
    assert line["name"] in finding.lines


def _sealed_hot(minimal_run: dict) -> dict:
    """The run in DMSO (bp 189 °C), no furan or THF, heated sealed to 120 °C: only water boils."""
    minimal_run["lines"] = [
        minimal_run["lines"][0],
        {"role": "fluoride source", "name": "CsF", "smiles": "[Cs+].[F-]", "equiv": 3.0},
        {"role": "trap", "name": "anthracene", "smiles": "c1ccc2cc3ccccc3cc2c1", "equiv": 3.0},
        {"role": "solvent", "name": "DMSO", "volume": "2.0 mL"},
    ]
    minimal_run["steps"] = [
        {"add": ["aryne precursor A", "CsF", "anthracene", "DMSO"], "temperature": "23 °C"},
        {"hold": "2 h", "temperature": "120 °C", "sealed": True},
    ]
    return minimal_run


def test_a_sealed_vessel_heated_past_100_c_warns_for_a_water_line(minimal_run):
    dry = [f for f in run_checks(load_run(_sealed_hot(copy.deepcopy(minimal_run)))) if f.code == "above-bp-sealed"]
    assert dry == []  # DMSO alone stays below its boiling point
    wet = _with_water(_sealed_hot(minimal_run), {"role": "additive", "name": "water", "volume": "50 µL"})
    found = [f for f in run_checks(load_run(wet)) if f.code == "above-bp-sealed"]
    assert len(found) == 1 and found[0].lines == ["water"]
    assert "water (bp 100 °C" in found[0].message and "water: about" in found[0].message
    assert "blast shield" in found[0].caution
