"""Bench checks: for every check a run where it fires and the nearest clean run where it does not."""

from __future__ import annotations

import copy
import json

import pytest

from samples import MINIMAL_RUN as MIN  # the minimal run file
from trapbook.checks import CHECK_CODES, CheckSettings, Finding, run_checks
from trapbook.chemistry import molecules
from trapbook.errors import TrapbookError
from trapbook.records import load_run

PRECURSOR = "aryne precursor A"
TBAF = "TBAF 1.0 M in THF"
ADDUCT = "C1=CC2c3ccccc3C1O2"  # 1,4-dihydro-1,4-epoxynaphthalene, the furan adduct of benzyne


def base() -> dict:
    return copy.deepcopy(MIN)


def line(d: dict, name: str) -> dict:
    return next(ln for ln in d["lines"] if ln["name"] == name)


def check(d: dict, **kw) -> list[Finding]:
    return run_checks(load_run(d), **kw)


def codes(d: dict, **kw) -> list[str]:
    return [f.code for f in check(d, **kw)]


def only(d: dict, code: str, **kw) -> Finding:
    found = [f for f in check(d, **kw) if f.code == code]
    assert len(found) == 1, [f.to_dict() for f in check(d, **kw)]
    return found[0]


def toluene_run(temp: str, sealed: bool, precursor: str = "C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F") -> dict:
    """CsF / anthracene in toluene: no volatile trap and no water, so only the temperature matters."""
    return {
        "title": "anthracene trap in toluene",
        "lines": [
            {"role": "precursor", "name": "P", "smiles": precursor, "amount": "0.200 mmol"},
            {"role": "fluoride source", "name": "CsF", "smiles": "[Cs+].[F-]", "equiv": 3},
            {"role": "trap", "name": "anthracene", "smiles": "c1ccc2cc3ccccc3cc2c1", "equiv": 3},
            {"role": "solvent", "name": "toluene", "volume": "2.0 mL"},
        ],
        "steps": [
            {"add": ["P", "anthracene", "toluene", "CsF"], "temperature": "23 °C"},
            {"temperature": temp, "hold": "16 h", "sealed": sealed},
        ],
    }


# --- the sample run -------------------------------------------------------------------------


def test_sample_run_gets_no_stop():
    found = check(base())
    assert found, "the sample run uses TBAF solution and THF, so it must get at least notes"
    assert [f for f in found if f.severity == "stop"] == []


def test_findings_sorted_most_severe_first_and_keys_exact():
    d = base()
    d["steps"] = [
        {"add": [PRECURSOR, "THF"], "temperature": "-78 °C"},
        {"add": [TBAF], "temperature": "-78 °C"},
        {"add": ["furan"], "temperature": "23 °C", "hold": "2 h"},
    ]
    found = check(d)
    ranks = [("stop", "warn", "note").index(f.severity) for f in found]
    assert ranks == sorted(ranks)
    assert {"stop", "warn", "note"} <= {f.severity for f in found}
    for f in found:
        assert set(f.to_dict()) == {"code", "severity", "message", "lines", "steps", "caution"}
        assert f.code in CHECK_CODES
    assert json.loads(json.dumps([f.to_dict() for f in found]))  # plain JSON types only


def test_order_within_severity_is_stable():
    d = base()
    d["steps"][0]["add"].append("no such line")
    first = [f.to_dict() for f in check(d)]
    assert first == [f.to_dict() for f in check(d)]


# --- trap order -----------------------------------------------------------------------------


def late_trap() -> dict:
    d = base()
    d["steps"] = [
        {"add": [PRECURSOR, "THF"], "temperature": "-78 °C"},
        {"add": [TBAF], "temperature": "-78 °C", "over": "5 min"},
        {"add": ["furan"], "temperature": "23 °C", "hold": "2 h"},
    ]
    return d


def test_trap_late_fires_first_and_plainly():
    found = check(late_trap())
    assert found[0].code == "trap-late" and found[0].severity == "stop"
    assert "trap was added after the fluoride source" in found[0].message
    assert found[0].steps == [2, 3]
    assert "furan" in found[0].lines and TBAF in found[0].lines


def test_trap_before_fluoride_is_clean():
    assert "trap-late" not in codes(base())


def test_trap_added_with_fluoride_in_one_step_is_fine():
    d = late_trap()
    d["steps"] = [
        {"add": [PRECURSOR, "THF"], "temperature": "-78 °C"},
        {"add": [TBAF, "furan"], "temperature": "-78 °C"},
        {"temperature": "23 °C", "hold": "2 h"},
    ]
    assert not {"trap-late", "trap-order-unknown"} & set(codes(d))


def test_fluoride_first_then_precursor_then_trap_is_late():
    d = base()
    d["steps"] = [
        {"add": [TBAF, "THF"], "temperature": "0 °C"},
        {"add": [PRECURSOR], "temperature": "0 °C"},
        {"add": ["furan"], "temperature": "0 °C", "hold": "1 h"},
    ]
    assert only(d, "trap-late").steps == [2, 3]


def test_trap_order_unknown_when_no_steps():
    d = base()
    d["steps"] = []
    f = only(d, "trap-order-unknown")
    assert f.severity == "warn" and "no steps" in f.message
    assert "trap-late" not in codes(d)


def test_trap_order_unknown_when_trap_not_in_any_step():
    d = base()
    d["steps"][0]["add"] = [PRECURSOR, "THF"]
    assert "'furan'" in only(d, "trap-order-unknown").message


def test_no_trap_line_warns_and_trap_line_does_not():
    d = base()
    d["lines"] = [ln for ln in d["lines"] if ln["role"] != "trap"]
    d["steps"][0]["add"] = [PRECURSOR, "THF"]
    assert only(d, "no-trap").severity == "warn"
    assert "no-trap" not in codes(base())


# --- strain and alignment -------------------------------------------------------------------

# Source: Maier & Schleyer, J. Am. Chem. Soc. 1981, 103, 1891: bridgehead alkenes above about 21 kcal/mol
# olefin strain are known only by trapping, below about 17 kcal/mol isolable (docs/sources.md, "Strain").
UNSTABLE = {"stability_class": "unstable", "olefin_strain_kcal_mol": 27.4, "kind": "bridgehead alkene", "tier": "accurate"}
ISOLABLE = dict(UNSTABLE, stability_class="isolable", olefin_strain_kcal_mol=12.0)


def test_unstable_without_trap_is_stop():
    d = base()
    d["lines"] = [ln for ln in d["lines"] if ln["role"] != "trap"]
    d["steps"][0]["add"] = [PRECURSOR, "THF"]
    f = only(d, "strain-untrapped", strain=UNSTABLE)
    assert f.severity == "stop" and "27.4" in f.message


def test_unstable_with_late_trap_is_stop():
    assert only(late_trap(), "strain-untrapped", strain=UNSTABLE).severity == "stop"


def test_unstable_with_trap_in_time_is_clean():
    found = check(base(), strain=UNSTABLE)
    assert "strain-untrapped" not in [f.code for f in found]
    assert not [f for f in found if f.severity == "stop"]


def test_isolable_gets_note_and_unstable_does_not():
    assert only(base(), "strain-isolable", strain=ISOLABLE).severity == "note"
    assert "strain-isolable" not in codes(base(), strain=UNSTABLE)


def test_the_class_comes_from_the_number_not_the_label():
    # 27.4 kcal/mol is unstable by the Maier-Schleyer limits whatever the stored label says.
    mislabelled = dict(UNSTABLE, stability_class="isolable")
    assert "strain-isolable" not in codes(base(), strain=mislabelled)


def test_a_fast_tier_prescreen_never_says_no_trap_is_needed():
    fast = dict(ISOLABLE, tier="fast")
    assert "strain-isolable" not in codes(base(), strain=fast)
    d = base()
    d["lines"] = [ln for ln in d["lines"] if ln["role"] != "trap"]
    d["steps"][0]["add"] = [PRECURSOR, "THF"]
    assert "no-trap" in codes(d, strain=fast)  # nothing judged, so the plain warning stays


def test_strain_dict_without_numbers_concludes_nothing():
    found = codes(late_trap(), strain={"stability_class": "isolable"})
    assert "strain-isolable" not in found and "strain-untrapped" not in found
    assert "trap-late" in found  # the other checks still run


def test_poor_alignment_warns_and_good_does_not():
    poor = {"verdict": "poorly aligned: Si-C-C-X far from 180°", "dihedral_deg": 62.0, "weighted_dihedral_deg": 65.3}
    good = {"verdict": "well aligned", "dihedral_deg": 178.0, "weighted_dihedral_deg": 175.0}
    f = only(base(), "precursor-misaligned", alignment=poor)
    assert f.severity == "warn" and "65" in f.message and f.lines == [PRECURSOR]
    assert "precursor-misaligned" not in codes(base(), alignment=good)


def test_strain_not_a_dict_is_a_clear_error():
    with pytest.raises(TrapbookError, match="strain"):
        run_checks(load_run(base()), strain="unstable")


# --- equivalents ----------------------------------------------------------------------------


@pytest.mark.parametrize("equiv, severity", [(0.5, "stop"), (1.5, "warn"), (2.0, None), (10, None)])
def test_trap_low_thresholds(equiv, severity):
    # Source: stoichiometry, one trap per intermediate (below 1 equiv is a stop);
    # 2 equiv working minimum: common practice, no source
    d = base()
    line(d, "furan")["equiv"] = equiv
    found = [f for f in check(d) if f.code == "trap-low"]
    assert [f.severity for f in found] == ([severity] if severity else [])


def test_trap_working_minimum_is_a_setting():
    d = base()
    line(d, "furan")["equiv"] = 1.5
    assert "trap-low" not in codes(d, settings=CheckSettings(trap_min_equiv=1.2))


def test_trap_by_volume_uses_density_on_file():
    d = base()
    fur = line(d, "furan")
    del fur["equiv"], fur["density"]
    fur["volume"] = "20 µL"  # 20 µL × 0.951 g/mL / 68.07 g/mol = 0.279 mmol = 1.4 equiv  # Source: docs/sources.md (density, M)
    assert only(d, "trap-low").severity == "warn"
    fur["volume"] = "1.0 mL"  # ~70 equiv  # Source: docs/sources.md (density, M), as above
    assert "trap-low" not in codes(d)


def test_trap_amount_unknown_for_unrecognised_trap_by_volume():
    d = base()
    d["lines"][2] = {"role": "trap", "name": "diene Q", "volume": "0.2 mL"}
    d["steps"][0]["add"] = [PRECURSOR, "diene Q", "THF"]
    assert only(d, "trap-amount-unknown").lines == ["diene Q"]
    assert "trap-amount-unknown" not in codes(base())


@pytest.mark.parametrize("equiv, fires", [(0.8, True), (1.0, False), (3.0, False)])
def test_fluoride_low_one_silyl(equiv, fires):
    # Source: stoichiometry of desilylation, one fluoride per Si–C bond cleaved (SETTING_SOURCES)
    d = base()
    line(d, TBAF)["equiv"] = equiv
    assert ("fluoride-low" in codes(d)) is fires


def test_fluoride_low_counts_every_silicon_on_the_precursor():
    d = base()
    line(d, PRECURSOR)["smiles"] = "C[Si](C)(C)c1ccc([Si](C)(C)C)cc1OS(=O)(=O)C(F)(F)F"
    line(d, TBAF)["equiv"] = 1.5
    # Source: hand calculation, 1.5 equiv x 0.200 mmol = 0.300 mmol F; 2 Si x 0.200 mmol = 0.400 mmol; 0.300/0.400 = 0.75
    msg = only(d, "fluoride-low").message
    assert "0.300 mmol fluoride for 0.400 mmol of silyl groups" in msg and "0.75 per silyl" in msg
    line(d, TBAF)["equiv"] = 2.0
    assert "fluoride-low" not in codes(d)


def test_tbat_delivers_one_fluoride_not_two():
    # TBAT gives one fluoride per formula (from memory), though the salt carries two F
    d = base()
    d["lines"][1] = {
        "role": "fluoride source",
        "name": "TBAT",
        "smiles": "CCCC[N+](CCCC)(CCCC)CCCC.F[Si-](F)(c1ccccc1)(c1ccccc1)c1ccccc1",
        "equiv": 0.8,
    }
    d["steps"][1]["add"] = ["TBAT"]
    assert molecules.fluoride_count(d["lines"][1]["smiles"]) == 2  # Source: formula C34H51F2NSi (docs/sources.md), two F
    assert "fluoride-low" in codes(d)
    d["lines"][1]["equiv"] = 1.2
    assert "fluoride-low" not in codes(d)


def test_no_fluoride_line():
    d = base()
    d["lines"] = [ln for ln in d["lines"] if ln["role"] != "fluoride source"]
    d["steps"][1]["add"] = []
    assert only(d, "no-fluoride").severity == "warn"
    assert "no-fluoride" not in codes(base())


def test_fluoride_uncounted_without_precursor_smiles():
    d = base()
    del line(d, PRECURSOR)["smiles"]
    assert only(d, "fluoride-uncounted").lines == [PRECURSOR]
    assert "fluoride-uncounted" not in codes(base())


def test_amounts_unknown_is_a_finding_not_an_exception():
    d = base()
    p = line(d, PRECURSOR)
    del p["amount"]
    p["equiv"] = 1
    f = only(d, "amounts-unknown")
    assert f.severity == "warn" and "equiv" in f.message
    assert "amounts-unknown" not in codes(base())


# --- water ----------------------------------------------------------------------------------


def test_commercial_tbaf_solution_water_warns_with_amount():
    # Source: docs/sources.md — 1.0 M TBAF in THF ~5 wt% water, about 2.5 mol water per mol fluoride
    f = only(base(), "water-brought")
    expected = 2.5 * 3.0  # mmol water per mmol precursor at 3 equiv TBAF
    assert f.severity == "warn"
    assert f"{expected:.2g} mmol per mmol" in f.message
    assert "anhydrous" in f.message and f.lines == [TBAF]


def test_small_amount_of_tbaf_solution_is_only_a_note():
    d = base()
    # Source: docs/sources.md, 2.5 mol water per mol fluoride (from memory): 0.3 x 2.5 = 0.75 mmol water
    # per mmol precursor, under the default 1.0 (common practice, no source)
    line(d, TBAF)["equiv"] = 0.3
    assert only(d, "water-brought").severity == "note"


def test_water_threshold_is_a_setting():
    assert only(base(), "water-brought", settings=CheckSettings(water_warn_per_precursor=10)).severity == "note"


def test_anhydrous_csf_brings_no_water():
    d = base()
    d["lines"][1] = {"role": "fluoride source", "name": "CsF", "smiles": "[Cs+].[F-]", "equiv": 3}
    d["steps"][1]["add"] = ["CsF"]
    assert "water-brought" not in codes(d)


def test_hydrate_water_from_smiles():
    d = base()
    d["lines"][1] = {
        "role": "fluoride source",
        "name": "TBAF trihydrate",
        "smiles": "CCCC[N+](CCCC)(CCCC)CCCC.[F-].O.O.O",
        "equiv": 1.5,
    }
    d["steps"][1]["add"] = ["TBAF trihydrate"]
    f = only(d, "water-brought")
    assert "4.5 mmol per mmol" in f.message  # Source: formula C16H42FNO3 (docs/sources.md): 3 H2O per formula × 1.5 equiv


def test_solution_with_stated_water_uses_the_stated_figure():
    d = base()
    line(d, TBAF)["water"] = "0.5 wt%"  # a tenth of the supplier figure
    f = only(d, "water-brought")
    # Source: docs/sources.md THF density 0.8876 g/mL (CRC); water 18.015 g/mol (IUPAC 2021 atomic weights):
    # 0.5 wt% × 0.8876 g/mL × 0.600 mL / 18.015 g/mol = 0.148 mmol; 0.74 per mmol, under the 1.0 warning level
    expected = 0.005 * 0.8876 * 600 / 18.015 / 0.200
    assert f.severity == "note" and f"{expected:.2g} mmol per mmol" in f.message


# --- temperature vs solvent -----------------------------------------------------------------


def test_above_bp_open_toluene():
    # Source: NASEM 2016 App. D — toluene bp 110.6 °C
    f = only(toluene_run("115 °C", sealed=False), "above-bp-open")
    assert f.severity == "warn" and f.steps == [2] and f.lines == ["toluene"] and f.caution is None
    assert "above-bp-open" not in codes(toluene_run("100 °C", sealed=False))


def test_above_bp_sealed_at_120_gives_pressure_caution():
    # Source: NASEM 2016 App. D — toluene bp 110.6 °C; Antoine constants: Reid, Prausnitz & Sherwood (1977)
    f = only(toluene_run("120 °C", sealed=True), "above-bp-sealed")
    assert f.caution and "pressure" in f.caution and "blast shield" in f.caution and "SDS" in f.caution
    assert "half" in f.caution  # fill limit
    assert "1.3 bar" in f.message  # ln P(mmHg) = 16.0137 − 3096.52/(393.15 − 53.67) → 1.31 bar
    assert "Me3SiF" in f.message  # trimethylsilyl precursor releases a gas
    # ideal gas, 0.200 mmol in 10 mL at 393.15 K; R = 8.314462618 J/(mol K)  # Source: CODATA 2018
    bar = 0.200e-3 * 8.314462618 * 393.15 / 10e-6 / 1e5
    assert f"{bar:.1f} bar more in an assumed 10 mL headspace" in f.message


def test_sealed_thf_at_120_is_extrapolated_and_says_so():
    d = base()
    d["steps"][2] = {"temperature": "120 °C", "hold": "2 h", "sealed": True}
    f = only(d, "above-bp-sealed")
    assert "THF" in f.lines and "furan" in f.lines  # both boil below 120 °C
    assert "extrapolated" in f.message and "NIST" in f.message


def test_sealed_below_bp_is_not_above_bp():
    assert "above-bp-sealed" not in codes(toluene_run("100 °C", sealed=True))


def test_sealed_gas_below_bp_with_trimethylsilyl_precursor():
    f = only(toluene_run("100 °C", sealed=True), "sealed-gas")
    assert f.caution and "Me3SiF" in f.message and f.steps == [2]


def test_no_gas_from_triethylsilyl_precursor_or_open_vessel():
    tes = "CC[Si](CC)(CC)c1ccccc1OS(=O)(=O)C(F)(F)F"
    assert "sealed-gas" not in codes(toluene_run("100 °C", sealed=True, precursor=tes))
    assert "sealed-gas" not in codes(toluene_run("100 °C", sealed=False))


def test_below_mp_dmso():
    # Source: NASEM 2016 App. D — DMSO mp 18.4 °C
    d = toluene_run("10 °C", sealed=False)
    d["lines"][3] = {"role": "solvent", "name": "DMSO", "volume": "2.0 mL"}
    d["steps"][0]["add"][2] = "DMSO"
    f = only(d, "below-mp")
    assert f.lines == ["DMSO"] and f.steps == [2] and "18.4" in f.message
    d["steps"][1]["temperature"] = "25 °C"
    assert "below-mp" not in codes(d)


def test_sample_run_at_minus_78_in_thf_does_not_freeze():
    # Source: NASEM 2016 App. D — THF mp −108.4 °C
    assert "below-mp" not in codes(base())


# --- concentration and steps ----------------------------------------------------------------


def test_concentration_too_dilute():
    d = base()
    # Source: c = n / V: 0.2 mmol in ~51 mL = 0.004 M, below the 0.01 M default (common practice, no source)
    line(d, "THF")["volume"] = "50 mL"
    assert only(d, "concentration-unusual").severity == "warn"
    assert "concentration-unusual" not in codes(base())  # 0.200 mmol / 2.743 mL = 0.073 M, inside 0.01-1.0 M


def test_concentration_range_is_a_setting():
    # the sample run's 0.073 M (c = n / V) lies below a 0.1 M lower bound set here
    found = codes(base(), settings=CheckSettings(concentration_low_M=0.1, concentration_high_M=1.0))
    assert "concentration-unusual" in found


def test_step_naming_missing_line():
    d = base()
    d["steps"][0]["add"].append("18-crown-6")
    f = only(d, "step-unknown-line")
    assert f.lines == ["18-crown-6"] and f.steps == [1]
    assert "step-unknown-line" not in codes(base())


def test_line_never_added():
    d = base()
    d["steps"][0]["add"] = [PRECURSOR, "furan"]
    assert only(d, "line-never-added").lines == ["THF"]
    assert "line-never-added" not in codes(base())


def test_internal_standard_and_product_need_no_step():
    d = base()
    d["lines"] += [
        {"role": "internal standard", "name": "TMB", "smiles": "COc1cc(OC)cc(OC)c1", "amount": "0.100 mmol"},
        {"role": "product", "name": "adduct", "smiles": ADDUCT},
    ]
    assert "line-never-added" not in codes(d)


def test_step_missing_temperature():
    d = base()
    del d["steps"][2]["temperature"]
    assert only(d, "step-no-temperature").steps == [3]
    assert "step-no-temperature" not in codes(base())


def test_step_missing_time():
    d = base()
    del d["steps"][2]["hold"]
    assert only(d, "step-no-time").steps == [3]
    assert "step-no-time" not in codes(base())  # quick successive additions need no time


# --- outcome --------------------------------------------------------------------------------


def with_product(**result) -> dict:
    d = base()
    d["lines"].append({"role": "product", "name": "adduct", "smiles": ADDUCT})
    d["outcome"] = {"products": [dict({"product": "adduct"}, **result)]}
    return d


def adduct_mg(fraction: float) -> str:
    return f"{0.200 * molecules.molar_mass(ADDUCT) * fraction:.2f} mg"


def test_yield_over_100():
    # Source: definition of yield (n_product / n_theoretical cannot exceed 100 %); 120 % fires, 80 % does not
    assert only(with_product(isolated_mass=adduct_mg(1.2)), "yield-over-100").lines == ["adduct"]
    assert "yield-over-100" not in codes(with_product(isolated_mass=adduct_mg(0.8)))


def test_mass_balance_over_105():
    d = with_product(isolated_mass=adduct_mg(0.6))
    prec_mg = 0.200 * molecules.molar_mass(MIN["lines"][0]["smiles"])
    # 105 % limit: common practice, no source (SETTING_SOURCES); 60 % + 50 % = 110 % is over it
    d["outcome"]["recovered_precursor"] = f"{prec_mg * 0.5:.2f} mg"  # 60 % + 50 % = 110 %
    assert only(d, "mass-balance-high").severity == "warn"
    d["outcome"]["recovered_precursor"] = f"{prec_mg * 0.4:.2f} mg"  # 100 %
    assert "mass-balance-high" not in codes(d)


QNMR = {"standard_integral": 3.00, "standard_protons": 3, "integral": 0.62, "protons": 1}


def test_qnmr_without_internal_standard():
    f = only(with_product(qnmr=QNMR), "qnmr-no-standard")
    assert f.lines == ["adduct"] and "internal standard" in f.message


def test_qnmr_with_internal_standard_is_clean_and_gives_62_percent():
    # Source: docs/sources.md worked check (qNMR practice; Pauli et al. 2014, from memory):
    # 0.100 mmol standard, 3H at 3.00, product 1H at 0.62 -> 0.0620 mmol = 62 % at 0.100 mmol scale
    d = with_product(qnmr=QNMR)
    d["lines"].append({"role": "internal standard", "name": "TMB", "smiles": "COc1cc(OC)cc(OC)c1", "amount": "0.100 mmol"})
    line(d, PRECURSOR)["amount"] = "0.100 mmol"
    found = codes(d)
    assert "qnmr-no-standard" not in found and "yield-over-100" not in found
    # the same integrals at a 0.050 mmol scale are a 124 % yield: the check must see it
    line(d, PRECURSOR)["amount"] = "0.050 mmol"
    assert "yield-over-100" in codes(d)


def test_yield_unknown_without_product_smiles():
    d = with_product(isolated_mass="20 mg")
    del line(d, "adduct")["smiles"]
    assert only(d, "yield-unknown").lines == ["adduct"]
    assert "yield-unknown" not in codes(with_product(isolated_mass="20 mg"))


def test_ee_out_of_range():
    # Source: ee = (er − 1)/(er + 1) (IUPAC Gold Book E02070) lies between 0 and 100 %; 120 cannot be
    # A negative ee loads (some write the minor enantiomer's sign) and is flagged; above 100 is refused on load.
    assert only(with_product(ee=-20), "ee-out-of-range").severity == "warn"
    assert "ee-out-of-range" not in codes(with_product(ee=90))
    with pytest.raises(TrapbookError):
        load_run(with_product(ee=120))


def test_ee_and_er_disagree():
    # Source: IUPAC Gold Book E02070 — ee = (er − 1)/(er + 1); er 19:1 → 90 % ee
    assert "ee-er-mismatch" not in codes(with_product(er="19:1", ee=90))
    assert "ee-er-mismatch" not in codes(with_product(er="95:5", ee=90))
    # 95:5 → 90 % ee; a recorded 80 is 10 points off, beyond the 2-point tolerance (common practice, no source)
    assert only(with_product(er="95:5", ee=80), "ee-er-mismatch").lines == ["adduct"]


def test_ratio_written_minor_first():
    assert only(with_product(dr="1:5"), "ratio-order").severity == "note"
    assert "ratio-order" not in codes(with_product(dr="5:1"))


# --- hazards --------------------------------------------------------------------------------


def test_one_caution_per_material_once_per_run():
    found = [f for f in check(base()) if f.code == "material-caution"]
    thf = [f for f in found if "THF" in f.lines]
    assert len(thf) == 1 and set(thf[0].lines) == {"THF", TBAF}  # solvent line and the solution's solvent
    assert len(found) == len({tuple(f.lines) for f in found})
    fluoride = [f for f in found if TBAF in f.lines and "calcium gluconate" in (f.caution or "")]
    assert len(fluoride) == 1
    assert all("SDS" in f.caution and "safety officer" in f.caution for f in found)
    furan = [f for f in found if f.lines == ["furan"]]
    assert furan and "peroxide" in furan[0].caution and "flammable" in furan[0].caution.lower()


def test_no_peroxide_caution_without_ethers_or_furans():
    found = check(toluene_run("100 °C", sealed=False))
    cautions = " ".join(f.caution or "" for f in found if f.code == "material-caution")
    assert "peroxide" not in cautions
    assert "calcium gluconate" in cautions  # CsF is still a fluoride salt


def test_unrecognised_fluoride_source_still_gets_fluoride_caution():
    d = base()
    d["lines"][1] = {"role": "fluoride source", "name": "house fluoride mix", "amount": "0.6 mmol"}
    d["steps"][1]["add"] = ["house fluoride mix"]
    f = [f for f in check(d) if f.code == "material-caution" and f.lines == ["house fluoride mix"]]
    assert len(f) == 1 and "calcium gluconate" in f[0].caution


def test_fluoride_with_acid():
    d = base()
    d["lines"].append({"role": "additive", "name": "AcOH", "smiles": "CC(=O)O", "equiv": 1})
    d["steps"][0]["add"].append("AcOH")
    f = only(d, "fluoride-acid")
    assert f.severity == "warn" and "hydrogen fluoride" in f.message and "calcium gluconate" in f.caution
    assert "fluoride-acid" not in codes(base())


# --- settings and API -----------------------------------------------------------------------


def test_settings_round_trip_and_unknown_keys():
    s = CheckSettings(trap_min_equiv=3, mass_balance_max_pct=110)
    assert CheckSettings.from_dict(s.to_dict()) == s
    assert CheckSettings.from_dict({}) == CheckSettings()
    with pytest.raises(TrapbookError, match="trap_min_equv"):
        CheckSettings.from_dict({"trap_min_equv": 3})


@pytest.mark.parametrize(
    "bad", [{"trap_min_equiv": "two"}, {"trap_min_equiv": -1}, {"concentration_low_M": 2.0}, {"yield_max_pct": float("nan")}]
)
def test_settings_bad_values_are_clear_errors(bad):
    with pytest.raises(TrapbookError):
        CheckSettings.from_dict(bad)


def test_settings_from_non_dict():
    with pytest.raises(TrapbookError):
        CheckSettings.from_dict(["trap_min_equiv", 2])


def test_every_setting_has_a_documented_source():
    from trapbook.checks import SETTING_SOURCES

    assert set(SETTING_SOURCES) == set(CheckSettings().to_dict())
    assert all(SETTING_SOURCES.values())


def test_run_checks_accepts_dict_and_rejects_other_things():
    assert [f.to_dict() for f in run_checks(base())] == [f.to_dict() for f in check(base())]
    with pytest.raises(TrapbookError):
        run_checks("a run")


def test_finding_rejects_unknown_code_or_severity():
    with pytest.raises(TrapbookError):
        Finding("made-up", "warn", "x")
    with pytest.raises(TrapbookError):
        Finding("trap-late", "fatal", "x")


def test_last_addition_step_without_time_is_noted():
    d = base()
    d["steps"] = d["steps"][:2]  # the fluoride goes in last and nothing says for how long
    assert only(d, "step-no-time").steps == [2]


# --- the demo lab (issue 4, "done when") ----------------------------------------------------

from pathlib import Path  # noqa: E402

DEMO_RUNS = Path(__file__).resolve().parents[1] / "demo_lab" / "runs"
LATE_TRAP_DEMO = "TB-0010.json"  # "[3.3.1] alkene, furan added after TBAF (failed)"
SEALED_120_DEMO = "TB-0002.json"  # "[3.3.1] alkene, anthracene, CsF/TBAB sealed 120 °C", MeCN


def _demo(name: str) -> dict:
    path = DEMO_RUNS / name
    if not path.exists():
        pytest.skip("demo lab run files not present")
    return json.loads(path.read_text(encoding="utf-8"))


def test_demo_late_trap_run_says_so_first():
    first = check(_demo(LATE_TRAP_DEMO))[0]
    assert first.code == "trap-late" and first.message.startswith("The trap was added after the fluoride source")


def test_demo_sealed_120_run_gets_pressure_caution():
    # Source: NASEM 2016 App. D — MeCN bp 81.6 °C, below 120 °C
    f = only(_demo(SEALED_120_DEMO), "above-bp-sealed")
    assert "blast shield" in f.caution and "MeCN" in f.lines


def test_no_other_demo_run_gets_a_stop():
    files = sorted(p.name for p in DEMO_RUNS.glob("*.json")) if DEMO_RUNS.exists() else []
    if not files:
        pytest.skip("demo lab run files not present")
    stopped = {n: [f.code for f in check(_demo(n)) if f.severity == "stop"] for n in files if n != LATE_TRAP_DEMO}
    assert {n: c for n, c in stopped.items() if c} == {}
