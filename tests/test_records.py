"""Run files: the minimal format is accepted as it is, and every mistake is named."""

import json

import jsonschema
import pytest

from trapbook.errors import RecordError
from trapbook.records import Run, load_run, load_run_text
from trapbook.schema_files import generate, render

from pathlib import Path

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
        load_run_text("{\"title\": ")


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
