"""A known liquid given without a density (furan, 20 equiv) is measured with the density on
file: its µL is in the reagent table and its volume counts in the concentration and in a
sealed vessel's fill. Counted as a solid, 358 µL of furan dropped out and a 68 % full vial
passed as 50 %.

Sources: docs/sources.md, "Amounts, molar masses and solvents" (furan C4H4O, 68.07 g/mol;
0.951 g/mL; the worked check of 20 equiv on 0.250 mmol) and "Checks" (fill of a sealed
vessel at most 50 %: common practice, no source).
"""

from __future__ import annotations

import pytest
from molmass import Formula

from trapbook import amounts
from trapbook.checks import run_checks
from trapbook.records import load_run

FURAN_MW = Formula("C4H4O").mass  # 68.07 g/mol, IUPAC atomic weights
FURAN_DENSITY = 0.951  # g/mL


def _run(furan: dict) -> dict:
    return {
        "title": "furan in a sealed vial",
        "vessel": "2 mL",
        "lines": [
            {
                "role": "precursor",
                "name": "silyl triflate",
                "smiles": "C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F",
                "amount": "0.250 mmol",
            },
            {"role": "trap", "name": "furan", "smiles": "c1ccoc1", **furan},
            {"role": "fluoride source", "name": "CsF", "smiles": "[Cs+].[F-]", "equiv": 3},
            {"role": "solvent", "name": "MeCN", "smiles": "CC#N", "volume": "1.0 mL"},
        ],
        "steps": [
            {"add": ["silyl triflate", "furan", "CsF", "MeCN"], "temperature": "23 °C"},
            {"temperature": "80 °C", "hold": "4 h", "sealed": True},
        ],
    }


def test_furan_by_equiv_gets_its_volume_from_the_density_on_file():
    table = amounts.compute(load_run(_run({"equiv": 20})))
    furan = table.line("furan")
    mmol = 20 * 0.250
    assert furan.form == "neat liquid"
    assert furan.mmol == pytest.approx(mmol)
    assert furan.mass_mg == pytest.approx(mmol * FURAN_MW, abs=0.05)  # 340.4 mg
    assert furan.volume_ul == pytest.approx(mmol * FURAN_MW / FURAN_DENSITY, abs=0.5)  # 358 µL
    total_ml = 1.0 + mmol * FURAN_MW / FURAN_DENSITY / 1000
    assert table.total_volume_ml == pytest.approx(total_ml, rel=1e-3)  # 1.36 mL
    assert table.concentration_M == pytest.approx(0.250 / total_ml, rel=1e-3)  # 0.184 M


def test_the_sealed_vial_is_seen_to_be_over_half_full():
    findings = {f.code: f for f in run_checks(load_run(_run({"equiv": 20})))}
    assert "vessel-overfilled" in findings
    assert "68 %" in findings["vessel-overfilled"].message


def test_furan_by_volume_gets_its_amount_and_equiv():
    furan = amounts.compute(load_run(_run({"volume": "20 µL"}))).line("furan")
    mmol = 0.020 * FURAN_DENSITY * 1000 / FURAN_MW  # 0.279 mmol
    assert furan.mmol == pytest.approx(mmol, rel=1e-3)
    assert furan.equiv == pytest.approx(mmol / 0.250, rel=1e-3)


def test_a_density_the_run_gives_wins():
    furan = amounts.compute(load_run(_run({"equiv": 20, "density": "1.000 g/mL"}))).line("furan")
    assert furan.volume_ul == pytest.approx(20 * 0.250 * FURAN_MW / 1.000, abs=0.5)


def test_a_solvent_line_stays_a_volume_and_a_solid_stays_a_solid():
    table = amounts.compute(load_run(_run({"equiv": 20})))
    assert table.line("MeCN").form == "solvent"
    assert table.line("MeCN").mmol is None
    assert table.line("CsF").form == "solid"
    assert table.line("CsF").volume_ul is None
