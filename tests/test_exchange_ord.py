"""ORD export and import, judged by the ORD project's own validator and message builders."""

from __future__ import annotations

import copy
import json

import molmass
import pytest
from google.protobuf import json_format, text_format
from ord_schema import message_helpers, validations
from ord_schema import units as ord_units
from ord_schema.proto import dataset_pb2, reaction_pb2
from rdkit import Chem

from trapbook import amounts
from trapbook.errors import ExchangeError
from trapbook.exchange import export_runs, import_path
from trapbook.exchange import ord as ordx
from trapbook.records import load_run


def _component(rxn, name):
    for inp in rxn.inputs.values():
        for c in inp.components:
            if message_helpers.get_compound_name(c) == name:
                return c, inp
    for wk in rxn.workups:
        for c in wk.input.components:
            if message_helpers.get_compound_name(c) == name:
                return c, None
    raise AssertionError(f"no component {name}")


def test_screen_export_passes_the_ord_validator(demo_notebook, tmp_path):
    out = tmp_path / "screen.pb"
    export_runs(demo_notebook, "ord", screen="SC-0001", output=str(out))
    ds = dataset_pb2.Dataset()
    ds.ParseFromString(out.read_bytes())
    assert len(ds.reactions) == 6
    # Source: ord_schema.validations (the ORD's own validator), the check ORD submissions must pass
    validations.validate_datasets({"screen.pb": ds})  # raises ValidationError on any error
    for rxn in ds.reactions:
        res = validations.validate_message(rxn, raise_on_error=False)
        assert res.errors == []
    assert ds.name.startswith("331 trap")


def test_every_demo_run_exports_without_validation_errors(demo_notebook):
    runs = list(demo_notebook.iter_runs())
    ds, report = ordx.build_dataset(runs)
    # Source: ord_schema.validations.validate_message
    out = validations.validate_message(ds, raise_on_error=False)
    assert out.errors == []
    assert report["reactions"] == len(runs) == 18  # the demo lab's 18 run files


def test_roles_amounts_and_order(minimal_run):
    run = load_run(dict(minimal_run, id="TB-0042"))
    rxn, notes = ordx.run_to_reaction(run, email="ada@example.org")
    R = reaction_pb2.ReactionRole
    pre, inp_pre = _component(rxn, "aryne precursor A")
    furan, inp_furan = _component(rxn, "furan")
    tbaf, inp_tbaf = _component(rxn, "TBAF 1.0 M in THF")
    thf, _ = _component(rxn, "THF")
    assert pre.reaction_role == R.REACTANT and pre.is_limiting
    assert furan.reaction_role == R.REACTANT  # the trap ends up in the product
    assert tbaf.reaction_role == R.REAGENT
    assert thf.reaction_role == R.SOLVENT
    # Source: docs/sources.md, equiv_i = n_i / n_limiting: 10 equiv of furan on 0.200 mmol is 2.00 mmol
    assert furan.amount.moles.value == pytest.approx(2.0, rel=1e-6)
    assert furan.amount.moles.units == reaction_pb2.Moles.MILLIMOLE
    assert tbaf.amount.moles.value == pytest.approx(0.6, rel=1e-6)  # Source: as above, 3.0 equiv on 0.200 mmol
    # Source: ord_schema.units.UnitResolver (the ORD's own unit parser) reads the run file's "2.0 mL" as this
    assert thf.amount.volume == ord_units.UnitResolver().resolve("2.0 mL")
    # The trap is in the flask before the fluoride (addition_order), as the run file says.
    assert inp_pre is inp_furan and inp_furan.addition_order < inp_tbaf.addition_order
    # Source: ORD schema, ReactionInput.addition_temperature is the temperature of the addition
    assert inp_tbaf.addition_temperature.value == pytest.approx(-78.0)
    # Source: the run's 2 h hold; 1 h = 60 min (SI Brochure, 9th ed., Table 8)
    assert rxn.outcomes[0].reaction_time.value == pytest.approx(120.0)
    # common practice, no source: a fluoride source calls for the HF / calcium gluconate caution
    assert "calcium gluconate" in rxn.notes.safety_notes and "SDS" in rxn.notes.safety_notes
    assert rxn.provenance.record_created.person.email == "ada@example.org"
    assert validations.validate_message(rxn, raise_on_error=False).errors == []


def test_qnmr_yield_against_the_reference_formula(demo_notebook):
    run = demo_notebook.get_run("TB-0004")
    rxn, _ = ordx.run_to_reaction(run)
    prod = rxn.outcomes[0].products[0]
    y = [m for m in prod.measurements if m.type == m.YIELD]
    assert len(y) == 1 and y[0].uses_internal_standard
    # Source: docs/sources.md qNMR relation n_P = n_IS (I_P/N_P)/(I_IS/N_IS) (Pauli et al. 2014, from memory);
    # 16.8 mg 1,3,5-trimethoxybenzene C9H12O3 (M by molmass), I_IS 3.00 for 3 H, product 0.771 for 1 H, 0.100 mmol scale
    n_is = 16.8 / molmass.Formula("C9H12O3").mass
    expected = 100.0 * n_is * (0.771 / 1) / (3.00 / 3) / 0.100
    assert y[0].percentage.value == pytest.approx(expected, rel=1e-4)
    # ORD requires an INTERNAL_STANDARD component when a measurement uses one
    assert validations.reaction_has_internal_standard(rxn)


def test_isolated_yield_dr_and_ee(minimal_run):
    data = copy.deepcopy(minimal_run)
    data["lines"].append({"role": "product", "name": "adduct", "smiles": "C1=CC2OC1c1ccccc12"})
    data["outcome"] = {"products": [{"product": "adduct", "isolated_mass": "20.0 mg", "dr": "3:1", "er": "95:5"}]}
    rxn, _ = ordx.run_to_reaction(load_run(data))
    prod = rxn.outcomes[0].products[0]
    by_type = {}
    for m in prod.measurements:
        by_type.setdefault(reaction_pb2.ProductMeasurement.ProductMeasurementType.Name(m.type), []).append(m)
    # Source: yield = n_product / n_theoretical (IUPAC Gold Book "yield"); C10H8O mass by molmass
    expected = 100.0 * (20.0 / molmass.Formula("C10H8O").mass) / 0.200
    assert by_type["YIELD"][0].percentage.value == pytest.approx(expected, rel=1e-4)
    assert by_type["AMOUNT"][0].amount.mass.value == pytest.approx(20.0)
    sel = {
        reaction_pb2.ProductMeasurement.Selectivity.SelectivityType.Name(m.selectivity.type): m for m in by_type["SELECTIVITY"]
    }
    assert sel["DR"].string_value == "3:1"
    # Source: IUPAC Gold Book E02070, ee = (er - 1)/(er + 1); 95:5 -> 90 % ee
    assert sel["EE"].percentage.value == pytest.approx(90.0)
    assert validations.validate_message(rxn, raise_on_error=False).errors == []


def test_trapbook_to_ord_and_back_keeps_amounts_yields_and_steps(demo_notebook, tmp_path, notebook):
    out = tmp_path / "all.pbtxt"
    export_runs(demo_notebook, "ord", output=str(out))
    text_format.Parse(out.read_text(encoding="utf-8"), dataset_pb2.Dataset())  # protobuf's own parser reads it
    report = import_path(notebook, out)
    assert report["format"] == "ord" and len(report["imported"]) == 18
    for orig in demo_notebook.iter_runs():
        back = notebook.get_run(orig.id)
        assert [ln.name for ln in back.lines] == [ln.name for ln in orig.lines]
        assert [ln.role for ln in back.lines] == [ln.role for ln in orig.lines]
        assert [ln.given for ln in back.lines] == [ln.given for ln in orig.lines]
        assert len(back.steps) == len(orig.steps)
        ta, tb = amounts.compute(orig), amounts.compute(back)
        for a, b in zip(ta.lines, tb.lines):
            assert (a.mmol is None) == (b.mmol is None)
            if a.mmol is not None:
                # ORD stores single-precision floats (about 7 digits)
                assert b.mmol == pytest.approx(a.mmol, rel=1e-6)
        ya = [y.best_yield_pct for y in amounts.product_yields(orig)]
        yb = [y.best_yield_pct for y in amounts.product_yields(back)]
        assert yb == pytest.approx(ya, rel=1e-6)
        assert back.to_json_dict() == orig.to_json_dict()  # and every field as written


def test_import_of_a_reaction_built_by_ord_tools(notebook, tmp_path):
    # A reaction made with ord_schema's own builders, as another tool would write it.
    rxn = reaction_pb2.Reaction()
    rxn.inputs["precursor"].components.add().CopyFrom(
        message_helpers.build_compound(
            smiles="C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F",
            name="aryne precursor",
            role="reactant",
            amount="0.5 mmol",
            is_limiting=True,
        )
    )
    rxn.inputs["precursor"].addition_order = 1
    rxn.inputs["furan"].components.add().CopyFrom(
        message_helpers.build_compound(smiles="c1ccoc1", name="furan", role="reactant", amount="5 mmol")
    )
    rxn.inputs["furan"].addition_order = 1
    rxn.inputs["CsF"].components.add().CopyFrom(
        message_helpers.build_compound(smiles="[Cs+].[F-]", name="CsF", role="reagent", amount="228 mg")
    )
    rxn.inputs["CsF"].addition_order = 2
    rxn.inputs["MeCN"].components.add().CopyFrom(
        message_helpers.build_compound(smiles="CC#N", name="MeCN", role="solvent", amount="5 mL")
    )
    rxn.conditions.temperature.setpoint.CopyFrom(reaction_pb2.Temperature(value=353.15, units=reaction_pb2.Temperature.KELVIN))
    out = rxn.outcomes.add()
    out.reaction_time.CopyFrom(reaction_pb2.Time(value=2, units=reaction_pb2.Time.HOUR))
    prod = message_helpers.build_compound(smiles="C1=CC2OC1c1ccccc12", name="oxabenzonorbornadiene")
    p = out.products.add()
    p.identifiers.extend(prod.identifiers)
    m = p.measurements.add()
    m.type = m.YIELD
    m.percentage.value = 64.0
    path = tmp_path / "other.json"
    ds = dataset_pb2.Dataset(name="x", description="y")
    ds.reactions.append(rxn)
    path.write_text(json_format.MessageToJson(ds), encoding="utf-8")

    report = import_path(notebook, path)
    run = notebook.get_run(report["imported"][0])
    roles = {ln.name: ln.role for ln in run.lines}
    assert roles == {
        "aryne precursor": "precursor",
        "furan": "trap",
        "CsF": "fluoride source",
        "MeCN": "solvent",
        "oxabenzonorbornadiene": "product",
    }
    assert run.line("CsF").mass.to("mg").magnitude == pytest.approx(228.0)
    assert run.line("MeCN").volume.to("mL").magnitude == pytest.approx(5.0)
    # Source: 353.15 K = 80 °C (definition of the Celsius scale)
    assert run.steps[-1].temperature.to("degC").magnitude == pytest.approx(80.0, abs=1e-3)
    assert run.steps[-1].hold.to("min").magnitude == pytest.approx(120.0)  # Source: 2 h; 1 h = 60 min (SI Brochure, Table 8)
    # what did not map is reported, not dropped silently
    assert any("64 % yield" in n for n in report["notes"])
    # Source: docs/sources.md equiv_i = n_i / n_limiting: 5 mmol furan on 0.5 mmol limiting is 10 equiv
    assert amounts.compute(run).line("furan").equiv == pytest.approx(10.0)


def test_a_cxsmiles_identifier_gives_its_structure_and_keeps_its_extension(notebook, tmp_path):
    # Source: ORD's CompoundIdentifier type CXSMILES (ord_schema reaction.proto): a SMILES followed
    # by a space and a "|...|" extension; RDKit reads the part before the space as the structure.
    cx = "C[Si](C)(C)[C@@H]1CCCC[C@H]1OS(=O)(=O)C(F)(F)F |&1:4,9|"
    rxn = reaction_pb2.Reaction()
    comp = rxn.inputs["precursor"].components.add()
    comp.identifiers.add(type=reaction_pb2.CompoundIdentifier.CXSMILES, value=cx)
    comp.identifiers.add(type=reaction_pb2.CompoundIdentifier.NAME, value="silyl triflate")
    comp.reaction_role = reaction_pb2.ReactionRole.REACTANT
    comp.amount.moles.value = 0.2
    comp.amount.moles.units = reaction_pb2.Moles.MILLIMOLE
    comp.is_limiting = True
    ds = dataset_pb2.Dataset(name="x", description="y")
    ds.reactions.append(rxn)
    path = tmp_path / "cx.json"
    path.write_text(json_format.MessageToJson(ds), encoding="utf-8")
    report = import_path(notebook, path)
    run = notebook.get_run(report["imported"][0])
    kept = run.line("silyl triflate").smiles
    assert Chem.MolToSmiles(Chem.MolFromSmiles(kept)) == Chem.MolToSmiles(Chem.MolFromSmiles(cx.split(" ")[0]))
    assert any("CXSMILES" in n for n in report["notes"]) or "CXSMILES" in json.dumps(run.model_dump(mode="json"))


@pytest.mark.parametrize(
    "payload,name",
    [
        (b"\x00\x01garbage\xff", "bad.pb"),
        (b"reactions { inputs { key: 1 } }", "bad.pbtxt"),
        (b'{"reactions": [{"inputs": 5}]}', "bad.json"),
        (b"", "empty.pb"),
    ],
)
def test_malformed_ord_files_write_nothing(notebook, tmp_path, payload, name):
    path = tmp_path / name
    path.write_bytes(payload)
    before = notebook.count_runs()
    with pytest.raises(ExchangeError) as exc:
        import_path(notebook, path)
    assert exc.value.message and exc.value.hint
    assert notebook.count_runs() == before


def test_deeply_nested_metadata_is_reported_not_raised(notebook, tmp_path, minimal_run):
    rxn, _ = ordx.run_to_reaction(load_run(minimal_run))
    rxn.provenance.reaction_metadata["trapbook_steps"].string_value = "[" * 100_000
    rxn.provenance.reaction_metadata["tags"].string_value = "[" * 100_000
    path = tmp_path / "deep.pb"
    path.write_bytes(rxn.SerializeToString())
    report = import_path(notebook, path)
    assert any("not readable JSON" in n for n in report["notes"])


def test_bad_reaction_is_named_and_nothing_written(notebook, tmp_path, minimal_run):
    ds, _ = ordx.build_dataset([load_run(minimal_run), load_run(minimal_run)])
    # Reaction 2 gets a negative amount, which Trapbook refuses (and names).
    comp = next(iter(ds.reactions[1].inputs.values())).components[0]
    comp.amount.moles.value = -1.0
    comp.features.clear()
    path = tmp_path / "two.pb"
    path.write_bytes(ds.SerializeToString())
    with pytest.raises(ExchangeError) as exc:
        import_path(notebook, path)
    assert "reaction 2" in exc.value.message and "amount" in exc.value.message
    assert notebook.count_runs() == 0


@pytest.mark.parametrize("suffix", [".pb", ".pbtxt", ".json"])
def test_a_lone_reaction_file_imports(notebook, tmp_path, minimal_run, suffix):
    rxn, _ = ordx.run_to_reaction(load_run(dict(minimal_run, id="TB-0077")))
    path = tmp_path / f"one{suffix}"
    payload = ordx.serialise(rxn, path)
    path.write_bytes(payload) if isinstance(payload, bytes) else path.write_text(payload, encoding="utf-8")
    report = import_path(notebook, path)
    assert report["imported"] == ["TB-0077"]
    assert notebook.get_run("TB-0077").title == minimal_run["title"]


# A run that records every field the ORD exchange must carry: weighed amounts beside the plan,
# the vessel, bench words and a ramp, the work-up and eluent, appearance, Rf, NMR text, HRMS
# and the processing record of an integrated FID. Its numbers are test inputs, not chemistry.
def _weighed_run(minimal_run) -> dict:
    data = copy.deepcopy(minimal_run)
    data.update(id="TB-0099", vessel="15 mL", tags=["weighed"], factors={"fluoride": "TBAF"})
    for line, actual in zip(data["lines"], ("52.1 mg", "610 µL", "0.145 mL", "2.1 mL")):
        line["actual"] = actual
    data["lines"][0]["purity"] = "97 %"
    data["lines"][1]["molarity"] = "1000 mM"  # written otherwise than the canonical 1.0 M
    data["lines"] += [
        {"role": "internal standard", "name": "TMB", "smiles": "COc1cc(OC)cc(OC)c1", "mass": "16.8 mg", "actual": "16.9 mg"},
        {"role": "product", "name": "adduct", "smiles": "C1=CC2OC1c1ccccc12", "note": "the expected cycloadduct"},
    ]
    data["steps"] = [
        {"add": ["aryne precursor A", "furan", "THF"], "temperature": "-78 °C", "atmosphere": "Ar"},
        {"add": ["TBAF 1.0 M in THF"], "temperature": "-78 °C to rt", "over": "10 min"},
        {"hold": "overnight", "temperature": "rt"},
    ]
    spectrum = {
        "attachment_sha256": "0" * 64,
        "attachment_name": "crude-1H.fid.zip",
        "standard_region": [6.0, 6.2],
        "product_region": [5.6, 5.8],
        "processing": {"line_broadening_hz": 0.3, "phase_deg": [12.5, -3.0]},
    }
    data["outcome"] = {
        "workup": "filtered through a silica plug (Et2O), concentrated",
        "eluent": "pentane/Et2O 20:1",
        "observations": "turned yellow on warming",
        "recovered_precursor": "5.0 mg",
        "products": [
            {
                "product": "adduct",
                "isolated_mass": "0.0200 g",
                "dr": "3:1",
                "er": "95:5",
                "appearance": "pale yellow oil",
                "rf": 0.35,
                "nmr_text": "1H NMR (400 MHz, CDCl3) δ 7.25 (m, 2H)",
                "hrms": {"ion": "[M+Na]+", "found_mz": 1234.56789},
                "note": "one spot by TLC",
                "qnmr": {
                    "standard": "TMB",
                    "standard_integral": 3.0,
                    "standard_protons": 3,
                    "integral": 0.771,
                    "protons": 1,
                    "spectrum": spectrum,
                },
            }
        ],
    }
    return data


@pytest.mark.parametrize("suffix", [".pb", ".pbtxt", ".json"])
def test_a_run_with_every_field_comes_back_identical(minimal_run, tmp_path, suffix):
    run = load_run(_weighed_run(minimal_run))
    ds, report = ordx.build_dataset([run], email="ada@example.org")
    # Source: ord_schema.validations.validate_message, the ORD's own validator
    assert validations.validate_message(ds, raise_on_error=False).errors == []
    path = tmp_path / f"run{suffix}"
    payload = ordx.serialise(ds, path)
    path.write_bytes(payload) if isinstance(payload, bytes) else path.write_text(payload, encoding="utf-8")
    runs, notes = ordx.read_path(path)
    assert notes == []  # nothing Trapbook wrote is reported as not kept
    assert runs[0].to_json_dict() == run.to_json_dict()


def test_weighed_amounts_and_outcome_are_where_ord_readers_look(minimal_run):
    run = load_run(_weighed_run(minimal_run))
    rxn, _ = ordx.run_to_reaction(run, email="ada@example.org")
    resolve = ord_units.UnitResolver().resolve  # Source: ord_schema.units, the ORD's own unit parser
    pre, _ = _component(rxn, "aryne precursor A")
    tbaf, _ = _component(rxn, "TBAF 1.0 M in THF")
    assert pre.amount.mass == resolve("52.1 mg")  # the ORD amount is what went into the flask
    assert tbaf.amount.volume == resolve("610 uL")  # the resolver spells µL as uL
    assert tbaf.features["equiv"].float_value == pytest.approx(3.0)  # the plan rides along
    assert rxn.setup.vessel.volume == resolve("15 mL")
    prod = rxn.outcomes[0].products[0]
    # Source: ORD schema, ProductCompound.isolated_color and Texture.TextureType
    assert prod.isolated_color == "pale yellow" and prod.texture.type == reaction_pb2.Texture.OIL
    assert prod.measurements[0].amount.mass == resolve("0.0200 g")
    analyses = rxn.outcomes[0].analyses
    A = reaction_pb2.Analysis
    assert analyses["hrms adduct"].type == A.HRMS and "[M+Na]+" in analyses["hrms adduct"].details
    assert analyses["tlc adduct"].type == A.TLC and analyses["tlc adduct"].data["rf"].float_value == pytest.approx(0.35)
    assert analyses["nmr adduct"].type == A.NMR_1H
    W = reaction_pb2.ReactionWorkup
    assert [(w.type, w.details) for w in rxn.workups if not w.input.components] == [
        (W.CUSTOM, "filtered through a silica plug (Et2O), concentrated"),
        (W.FLASH_CHROMATOGRAPHY, "eluent: pentane/Et2O 20:1"),
    ]
    # the ramp and the bench words reach a reader of the ORD fields alone
    assert "-78 °C to rt" in rxn.conditions.details and "overnight" in rxn.conditions.details


def test_weighed_amounts_keep_the_yields_they_give(minimal_run, notebook, tmp_path):
    run = load_run(_weighed_run(minimal_run))
    path = tmp_path / "weighed.pb"
    ds, _ = ordx.build_dataset([run])
    path.write_bytes(ordx.serialise(ds, path))
    back = notebook.get_run(import_path(notebook, path)["imported"][0])
    # Source: yield = n_product / n_theoretical (IUPAC Gold Book "yield"); C10H8O by molmass; the
    # limiting amount is what was weighed: 52.1 mg of C10H13F3O3SSi (97 %)
    n_lim = 52.1 * 0.97 / molmass.Formula("C10H13F3O3SSi").mass
    expected = 100.0 * (20.0 / molmass.Formula("C10H8O").mass) / n_lim
    assert amounts.product_yields(back)[0].isolated_yield_pct == pytest.approx(expected, rel=1e-5)
    assert back.to_json_dict() == run.to_json_dict()


def test_foreign_workups_appearance_and_vessel_are_kept_or_reported(notebook, tmp_path):
    rxn = reaction_pb2.Reaction()
    rxn.inputs["precursor"].components.add().CopyFrom(
        message_helpers.build_compound(
            smiles="C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F",
            name="aryne precursor",
            role="reactant",
            amount="0.5 mmol",
            is_limiting=True,
        )
    )
    rxn.setup.vessel.type = reaction_pb2.Vessel.ROUND_BOTTOM_FLASK
    rxn.setup.vessel.volume.CopyFrom(ord_units.UnitResolver().resolve("25 mL"))
    for kind, details in (("CONCENTRATION", "rotary evaporator"), ("FLASH_CHROMATOGRAPHY", "silica, hexanes")):
        wk = rxn.workups.add()
        wk.type = reaction_pb2.ReactionWorkup.ReactionWorkupType.Value(kind)
        wk.details = details
    prod = rxn.outcomes.add().products.add()
    prod.CopyFrom(reaction_pb2.ProductCompound(isolated_color="colourless", texture={"type": "CRYSTAL"}))
    prod.identifiers.add(type=reaction_pb2.CompoundIdentifier.NAME, value="adduct")
    path = tmp_path / "other.pbtxt"
    path.write_text(text_format.MessageToString(rxn), encoding="utf-8")
    report = import_path(notebook, path)
    run = notebook.get_run(report["imported"][0])
    assert run.vessel.to("mL").magnitude == pytest.approx(25.0)
    assert run.outcome.workup == "concentration: rotary evaporator\nflash chromatography: silica, hexanes"
    assert run.outcome.eluent is None  # not written as Trapbook writes an eluent, so kept in the work-up text
    assert run.outcome.products[0].appearance == "colourless crystals"
    assert any("ROUND_BOTTOM_FLASK" in n for n in report["notes"])


def test_an_unreadable_plan_is_reported_and_the_weighed_amount_kept(minimal_run, notebook, tmp_path):
    rxn, _ = ordx.run_to_reaction(load_run(_weighed_run(minimal_run)))
    pre, _ = _component(rxn, "aryne precursor A")
    pre.features["planned_amount"].string_value = "[" * 10_000
    path = tmp_path / "bad-plan.pb"
    path.write_bytes(rxn.SerializeToString())
    report = import_path(notebook, path)
    run = notebook.get_run(report["imported"][0])
    assert any("planned amount is not readable" in n for n in report["notes"])
    assert run.line("aryne precursor A").mass.to("mg").magnitude == pytest.approx(52.1)
