"""Run files: the minimal format is accepted as it is, and every mistake is named."""

import json
from pathlib import Path

import jsonschema
import pytest

from trapbook.errors import RecordError
from trapbook.records import Run, load_run, load_run_text
from trapbook.schema_files import generate, render

ROOT = Path(__file__).resolve().parents[1]


def test_minimal_file_is_accepted_as_is(minimal_run):
    run = load_run(minimal_run)
    assert [ln.role for ln in run.lines] == ["precursor", "fluoride source", "trap", "solvent"]
    assert run.steps[2].hold is not None


def test_stored_form_round_trips(minimal_run):
    run = load_run(minimal_run)
    again = Run.model_validate(json.loads(json.dumps(run.to_json_dict())))
    assert again.to_json_dict() == run.to_json_dict()
    assert run.to_json_dict()["lines"][0]["amount"] == {"value": 0.2, "unit": "mmol"}


def test_wrong_unit_names_line_and_field(minimal_run):
    minimal_run["lines"][2]["volume"] = "2 mg"
    del minimal_run["lines"][2]["equiv"]
    with pytest.raises(RecordError) as err:
        load_run(minimal_run)
    assert "line 'furan': volume '2 mg' is a mass" in err.value.message


def test_every_problem_listed(minimal_run):
    minimal_run["lines"][0]["mass"] = "3 mg"  # two amounts
    minimal_run["lines"][1]["role"] = "base"  # unknown role
    minimal_run["lines"][2]["smiles"] = "c1ccoc"  # bad SMILES
    minimal_run["steps"][0]["temperature"] = "5 mL"
    with pytest.raises(RecordError) as err:
        load_run(minimal_run)
    msg = err.value.message
    assert "4 problems" in msg
    assert "line 'aryne precursor A'" in msg and "exactly one" in msg
    assert "'base' is not one of" in msg
    assert "line 'furan'" in msg and "SMILES" in msg
    assert "step 1: temperature '5 mL' is a volume" in msg


@pytest.mark.parametrize(
    "mutate,needle",
    [
        (lambda d: d["lines"].append(dict(d["lines"][2])), "two lines are called 'furan'"),
        (lambda d: d["lines"][2].update(equiv=-1), "greater than zero"),
        (lambda d: d["lines"][2].update(purity="150 %"), "purity"),
        (lambda d: d.update(limiting="nothing"), "limiting line 'nothing'"),
        (lambda d: d.update(colour="red"), "not a field"),
        (lambda d: d.pop("lines"), "lines: is required"),
    ],
)
def test_record_rules(minimal_run, mutate, needle):
    mutate(minimal_run)
    with pytest.raises(RecordError, match=needle):
        load_run(minimal_run)


def test_bad_json_text_is_a_record_error():
    with pytest.raises(RecordError, match="not valid JSON"):
        load_run_text('{"title": ')


def test_committed_schemas_match_models():
    for filename, schema in generate().items():
        committed = (ROOT / "schemas" / filename).read_text(encoding="utf-8")
        assert committed == render(schema), f"schemas/{filename} is stale: run python -m trapbook.schema_files"


def test_schema_is_valid_and_accepts_minimal_and_demo_files(minimal_run):
    # Source: the JSON Schema 2020-12 meta-schema, checked by the independent jsonschema package
    schema = json.loads((ROOT / "schemas" / "run.schema.json").read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator.check_schema(schema)
    jsonschema.validate(minimal_run, schema)
    files = sorted((ROOT / "demo_lab" / "runs").glob("*.json"))
    assert len(files) >= 16
    for f in files:
        jsonschema.validate(json.loads(f.read_text(encoding="utf-8")), schema)


def test_schema_rejects_unknown_role(minimal_run):
    schema = json.loads((ROOT / "schemas" / "run.schema.json").read_text(encoding="utf-8"))
    minimal_run["lines"][0]["role"] = "catalyst"
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.validate(minimal_run, schema)


# --- the bench's own words ---------------------------------------------------------------

from trapbook.records import BenchWords, validate_run_id, with_bench_words  # noqa: E402
from trapbook.units import to_canonical  # noqa: E402


def _step3(minimal_run, words=None, **step):
    minimal_run["steps"][2] = step
    return load_run(minimal_run, words).steps[2]


@pytest.mark.parametrize("written", ["rt", "r.t.", "RT", "room temperature", "Room temp."])
def test_rt_is_kept_as_written_with_the_labs_nominal(minimal_run, written):
    step = _step3(minimal_run, temperature=written, hold="2 h")
    assert step.temperature_written == written
    # Source: docs/sources.md (Bench words): rt is 23 °C unless the lab says otherwise (common practice, no source)
    assert to_canonical(step.temperature, "temperature") == pytest.approx(23.0)
    stored = load_run(minimal_run).to_json_dict()["steps"][2]
    assert stored["temperature_written"] == written and stored["temperature"] == {"value": 23.0, "unit": "°C"}


def test_the_notebooks_room_temperature_and_overnight_are_used(minimal_run):
    step = _step3(minimal_run, BenchWords(room_temperature_c=20.0, overnight_h=14.0), temperature="rt", hold="o/n")
    assert to_canonical(step.temperature, "temperature") == 20.0  # the lab's own setting, as given
    assert to_canonical(step.hold, "duration") == 14 * 60  # Source: SI Brochure Table 8, 1 h = 60 min
    assert step.hold_written == "o/n"


def test_a_run_read_before_its_notebook_takes_the_notebooks_words(minimal_run):
    minimal_run["steps"][2] = {"temperature": "0 °C to rt", "hold": "overnight"}
    run = with_bench_words(load_run(minimal_run), BenchWords(room_temperature_c=20.0, overnight_h=12.0))
    step = run.steps[2]
    assert (step.min_temp_c(), step.max_temp_c()) == (0.0, 20.0)
    assert to_canonical(step.hold, "duration") == 12 * 60  # Source: SI Brochure Table 8, 1 h = 60 min
    assert step.temperature_written == "0 °C to rt" and step.hold_written == "overnight"


def test_overnight_defaults_to_sixteen_hours(minimal_run):
    step = _step3(minimal_run, temperature="23 °C", hold="overnight")
    assert to_canonical(step.hold, "duration") == 16 * 60  # Source: docs/sources.md (Bench words), common practice, no source


@pytest.mark.parametrize(
    "solvent,smiles,low,high",
    [
        ("THF", "C1CCOC1", 65.0, 67.0),  # Source: docs/sources.md solvent table, THF bp 66 °C
        ("toluene", "Cc1ccccc1", 110.0, 111.5),  # Source: docs/sources.md solvent table, toluene bp 110.6 °C
        ("acetonitrile", None, 81.0, 82.5),  # Source: docs/sources.md solvent table, MeCN bp 81.6 °C
    ],
)
def test_reflux_is_the_solvents_boiling_point_shown_as_computed(minimal_run, solvent, smiles, low, high):
    minimal_run["lines"][3] = {"role": "solvent", "name": solvent, "volume": "2.0 mL", **({"smiles": smiles} if smiles else {})}
    minimal_run["steps"][0]["add"] = ["aryne precursor A", "furan", solvent]
    step = _step3(minimal_run, temperature="reflux", hold="2 h")
    assert low <= to_canonical(step.temperature, "temperature") <= high
    assert step.temperature_written == "reflux"
    assert "boiling point" in step.temperature_basis and "(" in step.temperature_basis  # with its source


def test_reflux_without_a_known_solvent_asks_for_a_temperature(minimal_run):
    del minimal_run["lines"][3]
    minimal_run["steps"][0]["add"] = ["aryne precursor A", "furan"]
    minimal_run["steps"][2] = {"temperature": "reflux", "hold": "2 h"}
    with pytest.raises(RecordError) as err:
        load_run(minimal_run)
    assert "step 3" in err.value.message and "no solvent" in err.value.message
    assert "write the temperature" in err.value.message
    minimal_run["steps"][2]["temperature"] = "reflux (82 °C)"
    step = load_run(minimal_run).steps[2]
    assert to_canonical(step.temperature, "temperature") == 82.0 and step.temperature_written == "reflux (82 °C)"


def test_a_ramp_keeps_both_ends_and_gives_its_highest_to_the_checks(minimal_run):
    step = _step3(minimal_run, temperature="\u221278 °C to rt", hold="1 h")
    # Source: NIST SP 811, 4.2.1.1 (°C scale); room temperature 23 °C, common practice, no source
    assert step.temperatures_c() == [-78.0, 23.0]
    assert step.max_temp_c() == 23.0 and step.min_temp_c() == -78.0
    again = Run.model_validate(json.loads(json.dumps(load_run(minimal_run).to_json_dict())))
    assert again.steps[2].max_temp_c() == 23.0 and again.steps[2].temperature_written == "\u221278 °C to rt"
    assert _step3(minimal_run, temperature="0 to 25 °C").temperatures_c() == [0.0, 25.0]


def test_words_and_numbers_for_the_same_temperature_are_refused(minimal_run):
    minimal_run["steps"][2] = {"temperature": "rt", "temperature_end": "40 °C"}
    with pytest.raises(RecordError, match="written in words"):
        load_run(minimal_run)


@pytest.mark.parametrize("hold", ["0 min", "-1 h", "-5 s"])
def test_a_hold_of_no_time_or_less_is_refused(minimal_run, hold):
    minimal_run["steps"][2]["hold"] = hold
    with pytest.raises(RecordError, match="hold must be longer than zero"):
        load_run(minimal_run)


# --- hostile text, absurd numbers, ids -----------------------------------------------------

_SET_TEXT = {
    "title": lambda d, v: d.update(title=v),
    "chemist": lambda d, v: d.update(chemist=v),
    "page": lambda d, v: d.update(page=v),
    "tag": lambda d, v: d.update(tags=[v]),
    "factor": lambda d, v: d.update(factors={"trap": v}),
    "factor key": lambda d, v: d.update(factors={v: "furan"}),
    "line name": lambda d, v: d["lines"][3].update(name=v),
    "lot": lambda d, v: d["lines"][3].update(lot=v),
    "SMILES": lambda d, v: d["lines"][2].update(smiles="c1ccoc1" + v),
    "step addition": lambda d, v: d["steps"][2].update(add=[v]),
    "atmosphere": lambda d, v: d["steps"][2].update(atmosphere=v),
    "intermediate name": lambda d, v: d.update(intermediate_name=v),
}
_HOSTILE = ["\x1b]52;c;aGVsbG8=\x07", "a\nfake row", "\x00", "\u202eevil", "x\x9by", "a\u2028b", "tab\there"]


@pytest.mark.parametrize("field", sorted(_SET_TEXT))
@pytest.mark.parametrize("bad", _HOSTILE)
def test_control_characters_in_single_line_fields_are_refused(minimal_run, field, bad):
    _SET_TEXT[field](minimal_run, "ok " + bad + " ok")
    with pytest.raises(RecordError) as err:
        load_run(minimal_run)
    msg = err.value.message
    assert "contains" in msg or "id" in msg
    assert not any(ch in msg for ch in "\x1b\x07\x00\u202e\x9b\u2028\t")  # quoted harmlessly


@pytest.mark.parametrize("where", ["notes", "observations", "line note", "step note"])
def test_notes_keep_line_breaks_but_refuse_nul_escape_and_size(minimal_run, where):
    def put(d, v):
        if where == "notes":
            d["notes"] = v
        elif where == "observations":
            d["outcome"] = {"products": [], "observations": v}
        elif where == "line note":
            d["lines"][0]["note"] = v
        else:
            d["steps"][0]["note"] = v

    put(minimal_run, "first line\n\tsecond line")
    load_run(minimal_run)
    for bad, needle in [("a\x00b", "NUL"), ("a\x1b[2Jb", "escape"), ("a\u202eb", "direction"), ("x" * 20_001, "20,000")]:
        put(minimal_run, bad)
        with pytest.raises(RecordError, match=needle):
            load_run(minimal_run)


@pytest.mark.parametrize("field,limit", [("title", 300), ("chemist", 200)])
def test_single_line_fields_have_a_size_limit(minimal_run, field, limit):
    minimal_run[field] = "x" * limit
    load_run(minimal_run)
    minimal_run[field] = "x" * (limit + 1)
    with pytest.raises(RecordError, match="characters long"):
        load_run(minimal_run)


@pytest.mark.parametrize("bad", ["../../x", "TB\x1b-1", "TB\n1", "T" * 5000, "-TB", "a..b", "TB 1", "", "TB/1"])
def test_one_id_rule_refuses_paths_controls_and_floods(minimal_run, bad):
    with pytest.raises(ValueError):
        validate_run_id(bad)
    minimal_run["id"] = bad
    with pytest.raises(RecordError) as err:
        load_run(minimal_run)
    assert "id" in err.value.message and len(err.value.message) < 600


@pytest.mark.parametrize("good", ["TB-0001", "SC-0001", "run_1.a", "A" * 64])
def test_one_id_rule_accepts_the_notebooks_own_ids(minimal_run, good):
    assert validate_run_id(good) == good
    minimal_run["id"] = good
    minimal_run["screen"] = good
    assert load_run(minimal_run).id == good


def test_screen_ids_follow_the_same_rule():
    from trapbook.records import load_screen

    with pytest.raises(RecordError, match="id"):
        load_screen({"name": "s", "runs": ["TB-0001", "../../etc"]})
    assert load_screen({"id": "SC-0002", "name": "s", "runs": ["TB-0001"]}).runs == ["TB-0001"]


@pytest.mark.parametrize(
    "mutate,needle",
    [
        (lambda d: d["lines"][0].update(amount="1e308 mmol"), "too large"),
        (lambda d: d["lines"][2].update(equiv=1e308), "too large"),
        (lambda d: d["lines"][0].update(amount={"value": 10**400, "unit": "mmol"}), "finite"),
        (lambda d: d["lines"][0].update(amount="9" * 400 + " mmol"), "finite"),
        (lambda d: d["steps"][2].update(temperature="nan °C"), "temperature"),
    ],
)
def test_absurd_numbers_in_a_run_are_refused(minimal_run, mutate, needle):
    mutate(minimal_run)
    with pytest.raises(RecordError, match=needle):
        load_run(minimal_run)


def _with_product(d, **result):
    d["lines"].append({"role": "product", "name": "adduct", "smiles": "C1=CC2OC1c1ccccc12"})
    d["lines"].append({"role": "internal standard", "name": "TMB", "smiles": "COc1cc(OC)cc(OC)c1", "mass": "16.8 mg"})
    d["outcome"] = {"products": [{"product": "adduct", **result}]}


@pytest.mark.parametrize(
    "result",
    [
        {"qnmr": {"standard_integral": 5e-324, "standard_protons": 3, "integral": 1, "protons": 1}},
        {"qnmr": {"standard_integral": 1e300, "standard_protons": 3, "integral": 1, "protons": 1}},
        {"ee": 1e308},
        {"ee": -101},
        {"dr": "1e400:1"},
    ],
)
def test_absurd_outcome_numbers_are_refused(minimal_run, result):
    _with_product(minimal_run, **result)
    with pytest.raises(RecordError):
        load_run(minimal_run)


@pytest.mark.parametrize(
    "text",
    [
        '{"title": "x", "lines": [{"role": "precursor", "name": "p", "amount": {"value": 1e999, "unit": "mmol"}}]}',
        '{"title": "x", "lines": [{"role": "precursor", "name": "p", "amount": {"value": ' + "9" * 5000 + ', "unit": "mmol"}}]}',
        '{"title": "x", "lines": [{"role": "precursor", "name": "p", "amount": {"value": NaN, "unit": "mmol"}}]}',
    ],
)
def test_run_file_text_with_unreadable_numbers_is_a_record_error(text):
    with pytest.raises(RecordError):
        load_run_text(text)


def test_the_notebook_setting_gives_rt_and_overnight_their_numbers(notebook, minimal_run):
    from trapbook.errors import TrapbookError
    from trapbook.settings import notebook_bench_words, update_check_settings

    minimal_run["steps"][2] = {"temperature": "rt", "hold": "overnight"}
    update_check_settings(notebook, ["room_temperature_c=21", "overnight_h=18"], author="tester")
    res = notebook.add_run(with_bench_words(load_run(minimal_run), notebook_bench_words(notebook)), author="tester")
    step = notebook.get_run(res.run_id).steps[2]
    assert to_canonical(step.temperature, "temperature") == 21.0  # the lab's own values, as set
    assert to_canonical(step.hold, "duration") == 18 * 60  # Source: SI Brochure Table 8, 1 h = 60 min
    assert "notebook" in step.temperature_basis
    with pytest.raises(TrapbookError, match="room temperature"):
        update_check_settings(notebook, ["room_temperature_c=60"], author="tester")
