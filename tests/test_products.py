"""Expected trapping products: cycloadducts with their stereoisomers, and the by-products,
checked against structures and formulas known outside Trapbook."""

from __future__ import annotations

import copy

import molmass
import pytest

from samples import MINIMAL_RUN
from trapbook import trapping
from trapbook.chemistry import products
from trapbook.chemistry.molecules import canonical
from trapbook.errors import ChemistryError, RecordError
from trapbook.records import load_run

FURAN = "c1ccoc1"
ANTHRACENE = "c1ccc2cc3ccccc3cc2c1"
BENZYNE = "C1#CC=CC=C1"
CYCLOHEXYNE = "C1#CCCCC1"
BICYCLONONENE = "C12=CCCC(C1)CCC2"  # bicyclo[3.3.1]non-1-ene


def _flat(smiles: str) -> str:
    from rdkit import Chem

    return Chem.MolToSmiles(Chem.MolFromSmiles(smiles), isomericSmiles=False)


@pytest.fixture(scope="module")
def bicyclononene_furan():
    return trapping.expected_products(BICYCLONONENE, FURAN)


def _adducts(intermediate, trap):
    return [p for p in trapping.expected_products(intermediate, trap) if p["kind"] == "adduct"]


def test_benzyne_and_anthracene_give_triptycene():
    found = _adducts(BENZYNE, ANTHRACENE)
    assert len(found) == 1
    # Source: triptycene, 9,10-dihydro-9,10-[1,2]benzenoanthracene, C20H14 (fact of the trade);
    # structure written by hand, mass from molmass.
    assert found[0]["smiles"] == canonical("c1ccc2c(c1)C1c3ccccc3C2c2ccccc12")
    assert found[0]["formula"] == "C20H14"
    assert found[0]["monoisotopic_mass"] == pytest.approx(molmass.Formula("C20H14").monoisotopic_mass, abs=1e-5)
    assert "aromatised" in found[0]["words"]


def test_benzyne_and_furan_give_the_epoxynaphthalene():
    found = _adducts(BENZYNE, FURAN)
    # Source: 1,4-dihydro-1,4-epoxynaphthalene (C10H8O), the classic benzyne/furan adduct (fact of the trade).
    assert [_flat(p["smiles"]) for p in found] == [_flat("C1=CC2OC1c1ccccc12")]
    assert found[0]["formula"] == "C10H8O"


def test_cyclohexyne_and_furan():
    found = _adducts(CYCLOHEXYNE, FURAN)
    # Source: cyclohexyne + furan gives 1,4-epoxy-1,4,5,6,7,8-hexahydronaphthalene, C10H12O
    # (fact of the trade); the two bridgeheads are forced cis, so one stereoisomer only.
    assert len(found) == 1
    assert _flat(found[0]["smiles"]) == _flat("C1=CC2OC1C1=C2CCCC1")
    assert found[0]["formula"] == "C10H12O"
    assert found[0]["monoisotopic_mass"] == pytest.approx(molmass.Formula("C10H12O").monoisotopic_mass, abs=1e-5)
    assert found[0]["ions"]["[M+Na]+"] == pytest.approx(
        molmass.Formula("C10H12ONa").monoisotopic_mass - molmass.ELECTRON.mass, abs=1e-5
    )


def test_furan_and_bicyclononene_give_exo_and_endo(bicyclononene_furan):
    # Source: docs/sources.md, "Exact masses" (stereoisomers of this adduct), reasoned here:
    # stereocentres of the adduct are C1 (bridgehead, now quaternary), C2, C5 (the other
    # bicyclononane bridgehead) and the two oxanorbornene bridgeheads. The cage fixes C1
    # against C5 (an in/out bicyclo[3.3.1]nonane is far too strained); the oxanorbornene's two
    # bridgeheads go together; the diene adds to one face of C1=C2 (suprafacial), which sets
    # C2 against C1 (the six-ring of the cage stays cis-fused). That leaves one choice: the
    # oxygen bridge on the side of the six-ring (exo) or under it (endo). Each is chiral and,
    # from an achiral start, racemic: 2 of the 32 stereo labellings RDKit could write.
    found = [p for p in bicyclononene_furan if p["kind"] == "adduct"]
    assert len(found) == 2
    assert sorted(p["stereo"] for p in found) == ["endo", "exo"]
    assert all(p["racemic"] for p in found)
    assert {_flat(p["smiles"]) for p in found} == {_flat("C1=CC2OC1C1CCC3CCCC21C3")}
    # Source: docs/sources.md, "Exact masses", worked check (from memory).
    assert {round(p["monoisotopic_mass"], 4) for p in found} == {190.1358}
    assert {round(p["ions"]["[M+Na]+"], 4) for p in found} == {213.1250}


def test_adducts_hold_the_atoms_of_both_partners():
    # Source: molmass formula arithmetic: a cycloadduct's formula is the sum of its partners'.
    cases = [
        (BICYCLONONENE, "CC#[N+][O-]", "C9H14", "C2H3NO"),
        ("C1#CCCCCCC1", "CN=[N+]=[N-]", "C8H12", "CH3N3"),
        ("C1=C=CCCC1", "C1=CCC=C1", "C6H8", "C5H6"),
    ]
    for inter, trap, f_inter, f_trap in cases:
        found = _adducts(inter, trap)
        assert found, (inter, trap)
        total = molmass.Formula(f_inter + f_trap).formula
        assert {p["formula"] for p in found} == {total}


def test_cyclooctyne_and_azide_give_an_aromatic_triazole():
    found = _adducts("C1#CCCCCCC1", "CN=[N+]=[N-]")
    # Source: strain-promoted azide-alkyne cycloaddition gives a 1,2,3-triazole (fact of the trade).
    assert [_flat(p["smiles"]) for p in found] == [_flat("Cn1nnc2c1CCCCCC2")]


def test_unsymmetric_allene_adds_at_either_double_bond():
    found = _adducts("CC1=C=CCCC1", FURAN)  # 1-methylcyclohexa-1,2-diene
    sites = {p["site"] for p in found}
    assert len(sites) == 2  # C1=C2 and C2=C3 of the allene both react
    assert len({_flat(p["smiles"]) for p in found}) == 2


def test_by_products_of_benzyne():
    side = {p["smiles"]: p for p in trapping.expected_products(BENZYNE, FURAN) if p["kind"] == "by-product"}
    # Source: biphenylene (C12H8) and triphenylene (C18H12) are the aryne dimer and trimer; phenol is
    # the water adduct (facts of the trade).
    assert canonical("c1ccc2c(c1)-c1ccccc1-2") in side
    assert canonical("c1ccc2c(c1)c1ccccc1c1ccccc21") in side
    assert canonical("Oc1ccccc1") in side
    assert all(p["words"].startswith("by-product") for p in side.values())


def test_run_lists_triflate_adduct_and_uses_the_derived_intermediate():
    run = load_run(copy.deepcopy(MINIMAL_RUN))  # no intermediate written: derived from the precursor
    report = trapping.products_report(run)
    assert report["intermediate"] == canonical(BENZYNE)
    assert report["leaving_group"] == "triflate"
    smiles = {p["smiles"] for p in report["products"]}
    # Source: phenyl triflate, the aryne + triflic acid adduct (C7H5F3O3S; fact of the trade).
    assert canonical("O=S(=O)(Oc1ccccc1)C(F)(F)F") in smiles
    assert canonical("C1=CC2OC1c1ccccc12") in {_flat(s) for s in smiles}


def test_results_are_deterministic_and_sorted():
    first = trapping.expected_products("C1=C=CCCC1", FURAN)
    second = trapping.expected_products("C1=C=CCCC1", FURAN)
    assert first == second
    adducts = [p["smiles"] for p in first if p["kind"] == "adduct"]
    assert adducts == sorted(adducts)


def test_unknown_trap_is_said_not_hidden():
    report = trapping.products_report(BICYCLONONENE, "CCO")
    assert not [p for p in report["products"] if p["kind"] == "adduct"]
    assert any("no cycloaddition known" in n for n in report["notes"])


@pytest.mark.parametrize("inter,trap", [("CCCC", FURAN), ("not a smiles", FURAN), (BICYCLONONENE, "C1CC"), (BICYCLONONENE, "")])
def test_bad_input_is_a_clear_error(inter, trap):
    with pytest.raises((ChemistryError, RecordError)) as exc:
        trapping.expected_products(inter, trap)
    assert exc.value.hint


def test_work_is_bounded():
    limits = products.Limits(max_isomers_per_adduct=2, max_products=3)
    result = products.expected_products(BICYCLONONENE, [(FURAN, None)], limits=limits)
    assert len(result.products) <= 3
    assert result.truncated and result.notes


def test_hrms_comparison_of_a_recorded_value():
    out = trapping.hrms_comparison("C1=CC2OC1C1CCC3CCCC21C3", "[M+Na]+", 213.1248)
    # Source: docs/sources.md, "Exact masses": [M+Na]+ 213.1250 (worked check, from memory).
    assert round(out["calcd_mz"], 4) == 213.1250
    # Source: molmass for the ion C13H18ONa+ (neutral atoms minus one electron).
    calcd = molmass.Formula("C13H18ONa").monoisotopic_mass - molmass.ELECTRON.mass
    assert out["ppm"] == pytest.approx((213.1248 - calcd) / calcd * 1e6, abs=0.01)
    assert out["ion_formula"] == "C13H18NaO+"


def test_expected_formulas_of_a_run():
    run = load_run(copy.deepcopy(MINIMAL_RUN))
    formulas = trapping.expected_formulas(run)
    # Source: benzyne C6H4 + furan C4H4O = C10H8O; phenol C6H6O (molmass formula arithmetic).
    assert formulas[molmass.Formula("C6H4C4H4O").formula].startswith("adduct of furan")
    assert "C6H6O" in formulas


def _run_with_product(smiles: str, hrms: dict | None):
    data = copy.deepcopy(MINIMAL_RUN)
    data["lines"].append({"role": "product", "name": "adduct", "smiles": smiles})
    data["outcome"] = {"products": [{"product": "adduct", **({"hrms": hrms} if hrms else {})}]}
    return load_run(data)


def _codes(run, **settings):
    from trapbook.checks import CheckSettings, run_checks

    return {f.code for f in run_checks(run, settings=CheckSettings(**settings))}


def test_hrms_finding_beyond_the_ppm_limit():
    # Source: molmass, C10H8O + Na - e (benzyne/furan adduct); docs/sources.md, "Exact masses": 5 ppm is
    # the usual journal limit (common practice, no source).
    calcd = molmass.Formula("C10H8ONa").monoisotopic_mass - molmass.ELECTRON.mass
    within = calcd * (1 + 3e-6)
    beyond = calcd * (1 + 8e-6)
    assert "hrms-off" not in _codes(_run_with_product("C1=CC2OC1c1ccccc12", {"ion": "[M+Na]+", "found_mz": within}))
    assert "hrms-off" in _codes(_run_with_product("C1=CC2OC1c1ccccc12", {"ion": "[M+Na]+", "found_mz": beyond}))
    # a lab that accepts 10 ppm sees no finding at 8 ppm
    assert "hrms-off" not in _codes(
        _run_with_product("C1=CC2OC1c1ccccc12", {"ion": "[M+Na]+", "found_mz": beyond}), hrms_ppm_max=10
    )


def test_unexpected_formula_is_a_finding_and_a_by_product_is_not():
    assert "product-formula-unexpected" not in _codes(_run_with_product("C1=CC2OC1c1ccccc12", None))
    # Source: phenol (C6H6O) is the water adduct of benzyne (fact of the trade): listed, so no finding.
    assert "product-formula-unexpected" not in _codes(_run_with_product("Oc1ccccc1", None))
    # naphthalene (C10H8) is neither benzyne + furan (C10H8O) nor a listed by-product
    assert "product-formula-unexpected" in _codes(_run_with_product("c1ccc2ccccc2c1", None))


def test_hrms_record_refuses_nonsense():
    for bad in (
        {"ion": "[M+Li]+", "found_mz": 167.0},
        {"ion": "[M+Na]+", "found_mz": float("nan")},
        {"ion": "[M+Na]+", "found_mz": -1},
        {"ion": "[M+Na]+", "found_mz": 1e12},
    ):
        with pytest.raises(RecordError):
            _run_with_product("C1=CC2OC1c1ccccc12", bad)


def test_cli_products_json_and_errors():
    import json

    from click.testing import CliRunner

    from trapbook.cli import main

    runner = CliRunner()
    res = runner.invoke(main, ["products", "--intermediate", CYCLOHEXYNE, "--trap", FURAN, "--json"])
    assert res.exit_code == 0, res.output
    data = json.loads(res.output)
    # Source: C10H12O, cyclohexyne + furan (fact of the trade; molmass for the mass).
    adduct = next(p for p in data["products"] if p["kind"] == "adduct")
    assert adduct["formula"] == "C10H12O"
    assert adduct["monoisotopic_mass"] == pytest.approx(molmass.Formula("C10H12O").monoisotopic_mass, abs=1e-5)
    text = runner.invoke(main, ["products", "--intermediate", CYCLOHEXYNE, "--trap", FURAN])
    assert text.exit_code == 0 and "C10H12O" in text.output and "[M+Na]+" in text.output
    for args in (
        ["products"],
        ["products", "--intermediate", CYCLOHEXYNE],
        ["products", "--intermediate", "C1C\x00", "--trap", FURAN],
    ):
        bad = runner.invoke(main, [*args, "--json"])
        assert bad.exit_code == 2 and json.loads(bad.output)["error"]
        assert "Traceback" not in bad.output
