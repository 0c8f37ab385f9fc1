"""Stoichiometry and yields against hand calculations from published constants."""

import molmass
import pytest

from trapbook import amounts
from trapbook.errors import RecordError
from trapbook.records import load_run


def _line(table, name):
    row = table.line(name)
    assert row is not None
    return row


def test_minimal_run_amounts(minimal_run):
    table = amounts.compute(load_run(minimal_run))
    assert table.limiting == "aryne precursor A"
    # Source: docs/sources.md furan M = 68.07 g/mol, density 0.951 g/mL (CRC, from memory):
    # 0.200 mmol x 10 equiv x 68.07 mg/mmol / 0.951 mg/µL = 143 µL
    furan = _line(table, "furan")
    assert furan.volume_ul == pytest.approx(0.200 * 10 * 68.07 / 0.951, rel=1e-3)
    assert round(furan.volume_ul) == 143
    # Source: docs/sources.md, equiv_i = n_i / n_limiting, and the definition of molarity (n = c V):
    # 3.0 equiv of a 1.0 M solution on 0.200 mmol = 0.600 mmol = 600 µL
    tbaf = _line(table, "TBAF 1.0 M in THF")
    assert tbaf.volume_ul == pytest.approx(600.0)
    assert tbaf.mass_mg is None  # a solution is dispensed by volume, not weighed
    # Source: molmass (IUPAC atomic weights, independent of RDKit), precursor formula C10H13F3O3SSi
    pre = _line(table, "aryne precursor A")
    assert pre.mass_mg == pytest.approx(0.200 * molmass.Formula("C10H13F3O3SSi").mass, rel=1e-4)
    assert pre.equiv == pytest.approx(1.0)  # Source: docs/sources.md, equiv = n_i / n_limiting (1 for the limiting line)
    # Source: definition of molar concentration, c = n / V, V the total liquid volume: 2000 + 600 + 143 µL
    assert table.concentration_M == pytest.approx(0.200 / (2.0 + 0.600 + furan.volume_ul / 1000), rel=1e-6)
    assert "total liquid" in table.concentration_basis


def test_mass_given_with_purity_gives_mmol(minimal_run):
    # Source: purity as mass fraction, n = m x purity / M (docs/sources.md qNMR relation); M by molmass:
    # 59.67 mg at 95 % purity of a 298.36 g/mol solid = 0.190 mmol
    minimal_run["lines"][0] = {
        "role": "precursor",
        "name": "aryne precursor A",
        "smiles": "C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F",
        "mass": "59.67 mg",
        "purity": "95 %",
    }
    table = amounts.compute(load_run(minimal_run))
    mw = molmass.Formula("C10H13F3O3SSi").mass
    assert table.limiting_mmol == pytest.approx(59.67 * 0.95 / mw, rel=1e-4)
    # Source: docs/sources.md, equiv_i = n_i / n_limiting: equiv lines scale with the limiting amount
    assert _line(table, "furan").mmol == pytest.approx(10 * 59.67 * 0.95 / mw, rel=1e-4)


def test_hydrate_weighed_by_its_own_molar_mass(minimal_run):
    # Source: docs/sources.md, TBAF trihydrate 315.51 g/mol; 3.0 equiv on 0.200 mmol = 189.3 mg
    minimal_run["lines"][1] = {
        "role": "fluoride source",
        "name": "TBAF·3H2O",
        "smiles": "CCCC[N+](CCCC)(CCCC)CCCC.[F-].O.O.O",
        "equiv": 3.0,
    }
    minimal_run["steps"][1]["add"] = ["TBAF·3H2O"]
    table = amounts.compute(load_run(minimal_run))
    row = _line(table, "TBAF·3H2O")
    assert row.mass_mg == pytest.approx(0.600 * 315.51, abs=0.05)
    # Source: formula C16H42FNO3 (docs/sources.md), three waters per formula unit
    assert row.water_mmol == pytest.approx(3 * 0.600)


def test_neat_liquid_given_by_volume(minimal_run):
    minimal_run["lines"][2] = {"role": "trap", "name": "furan", "smiles": "c1ccoc1", "volume": "143 µL", "density": "0.951 g/mL"}
    table = amounts.compute(load_run(minimal_run))
    # Source: docs/sources.md furan constants; 143 µL x 0.951 / 68.07 = 1.998 mmol = 9.99 equiv
    assert _line(table, "furan").equiv == pytest.approx(143 * 0.951 / 68.07 / 0.200, rel=2e-3)


def test_qnmr_worked_example():
    # Source: docs/sources.md worked check (qNMR practice, Pauli et al. 2014, from memory):
    # 0.100 mmol standard (3H, I = 3.00), product 1H with I = 0.62 -> 0.0620 mmol; 62 % at 0.100 mmol
    assert amounts.nmr_mmol(0.100, 0.62, 1, 3.00, 3) == pytest.approx(0.0620)
    run = load_run(
        {
            "title": "qNMR check",
            "lines": [
                {"role": "precursor", "name": "P", "smiles": "C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F", "amount": "0.100 mmol"},
                {"role": "internal standard", "name": "TMB", "smiles": "COc1cc(OC)cc(OC)c1", "amount": "0.100 mmol"},
                {"role": "product", "name": "adduct", "smiles": "C1=CC2OC1c1ccccc12"},
            ],
            "outcome": {
                "products": [
                    {
                        "product": "adduct",
                        "qnmr": {"standard_integral": 3.00, "standard_protons": 3, "integral": 0.62, "protons": 1},
                    }
                ]
            },
        }
    )
    (y,) = amounts.product_yields(run)
    assert y.nmr_yield_pct == pytest.approx(62.0)
    assert y.isolated_yield_pct is None


def test_isolated_yield_and_mass_balance():
    # Source: yield = n_product / n_theoretical (IUPAC Gold Book, "yield"); 1,4-epoxy-1,4-dihydronaphthalene C10H8O, M by molmass
    m_adduct = molmass.Formula("C10H8O").mass
    m_pre = molmass.Formula("C10H13F3O3SSi").mass
    run = load_run(
        {
            "title": "yield check",
            "lines": [
                {"role": "precursor", "name": "P", "smiles": "C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F", "amount": "0.200 mmol"},
                {"role": "product", "name": "adduct", "smiles": "C1=CC2OC1c1ccccc12"},
            ],
            "outcome": {
                "products": [{"product": "adduct", "isolated_mass": f"{0.124 * m_adduct:.4f} mg", "dr": "1:4", "er": "19:1"}],
                "recovered_precursor": f"{0.040 * m_pre:.4f} mg",
            },
        }
    )
    (y,) = amounts.product_yields(run)
    assert y.isolated_yield_pct == pytest.approx(62.0, abs=0.01)  # 0.124 / 0.200 mmol, by the definition above
    # Source: ee = (er - 1)/(er + 1); er 19:1 -> 90 % ee (IUPAC Gold Book E02070)
    assert y.ee_pct == pytest.approx(90.0)
    # Source: dr as major:minor (DESIGN.md yields); 4:1 -> major fraction 4/5 = 0.8
    assert y.dr == "4:1" and y.dr_major_fraction == pytest.approx(0.8)
    # Source: mass balance = product yield + recovered precursor; 0.040 / 0.200 mmol = 20 % (molmass M above)
    assert amounts.mass_balance_pct(run) == pytest.approx(62.0 + 20.0, abs=0.01)


def test_limiting_line_in_equiv_is_refused(minimal_run):
    minimal_run["lines"][0]["equiv"] = 1.0
    del minimal_run["lines"][0]["amount"]
    with pytest.raises(RecordError, match="limiting line"):
        amounts.compute(load_run(minimal_run))


def test_equiv_line_without_structure_says_what_to_add(minimal_run):
    del minimal_run["lines"][2]["smiles"]
    with pytest.raises(RecordError, match="SMILES"):
        amounts.compute(load_run(minimal_run))


def _solid_by_volume_run(fluoride_line):
    return {
        "title": "a solid given by volume",
        "lines": [
            {"role": "precursor", "name": "P", "smiles": "C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F", "amount": "0.100 mmol"},
            fluoride_line,
            {"role": "solvent", "name": "MeCN", "volume": "1.0 mL"},
        ],
    }


@pytest.mark.parametrize(
    "line",
    [
        {"role": "fluoride source", "name": "CsF", "smiles": "[Cs+].[F-]", "volume": "5 mL"},
        {"role": "fluoride source", "name": "CsF", "volume": "5 mL"},  # known by name
        {"role": "additive", "name": "KF", "smiles": "[K+].[F-]", "volume": "0.5 mL"},
    ],
)
def test_a_solid_given_by_volume_is_refused_not_counted_as_liquid(line):
    with pytest.raises(RecordError) as err:
        amounts.compute(load_run(_solid_by_volume_run(line)))
    assert f"line '{line['name']}'" in err.value.message and "volume" in err.value.message
    assert "salt" in err.value.message and "mass" in err.value.hint and "molarity" in err.value.hint


def test_the_same_solid_by_mass_gives_the_concentration_of_the_liquid_alone():
    table = amounts.compute(
        load_run(_solid_by_volume_run({"role": "fluoride source", "name": "CsF", "smiles": "[Cs+].[F-]", "equiv": 3}))
    )
    # Source: c = n / V (IUPAC Green Book, amount concentration): 0.100 mmol in 1.0 mL = 0.100 M
    assert table.concentration_M == pytest.approx(0.100)


def test_a_stock_solution_by_volume_is_still_fine():
    table = amounts.compute(
        load_run(
            _solid_by_volume_run(
                {
                    "role": "fluoride source",
                    "name": "TBAF",
                    "smiles": "CCCC[N+](CCCC)(CCCC)CCCC.[F-]",
                    "volume": "0.30 mL",
                    "molarity": "1.0 M",
                }
            )
        )
    )
    # Source: n = c V (IUPAC Green Book): 0.30 mL x 1.0 M = 0.30 mmol = 3.0 equiv on 0.100 mmol
    assert table.line("TBAF").equiv == pytest.approx(3.0)


def test_mol_percent_of_a_catalytic_line_is_mmol_of_the_limiting_line(minimal_run):
    minimal_run["lines"].append({"role": "additive", "name": "18-crown-6", "smiles": "C1COCCOCCOCCOCCOCCO1", "equiv": "10 mol%"})
    minimal_run["steps"][0]["add"].append("18-crown-6")
    table = amounts.compute(load_run(minimal_run))
    row = table.line("18-crown-6")
    # Source: docs/sources.md (Units): 10 mol% of 0.200 mmol = 0.0200 mmol; M of C12H24O6 by molmass
    assert row.mmol == pytest.approx(0.0200)
    assert row.mass_mg == pytest.approx(0.0200 * molmass.Formula("C12H24O6").mass, rel=1e-4)
    assert load_run(minimal_run).to_json_dict()["lines"][-1]["equiv"] == {"value": 10.0, "unit": "mol%"}  # as written
