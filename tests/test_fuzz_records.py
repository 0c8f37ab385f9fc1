"""Property-based tests of the SMILES fields and the run-file loader: a Run or a RecordError, nothing else."""

from __future__ import annotations

import copy
import json

from hypothesis import HealthCheck, example, given, settings
from hypothesis import strategies as st
from rdkit import Chem, RDLogger

from trapbook.errors import RecordError
from trapbook.records import Run, load_run, load_run_text

RDLogger.DisableLog("rdApp.*")
EXAMPLES = settings(max_examples=1000, deadline=None, suppress_health_check=[HealthCheck.too_slow])

BASE = {
    "title": "fuzz base run",
    "lines": [
        {"role": "precursor", "name": "precursor", "smiles": "C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F", "amount": "0.200 mmol"},
        {"role": "fluoride source", "name": "CsF", "smiles": "[Cs+].[F-]", "equiv": 3},
        {"role": "trap", "name": "furan", "smiles": "c1ccoc1", "equiv": 10, "density": "0.951 g/mL"},
        {"role": "solvent", "name": "MeCN", "volume": "2.0 mL"},
        {"role": "product", "name": "adduct", "smiles": "C1=CC2OC1c1ccccc12"},
    ],
    "steps": [{"add": ["precursor", "furan", "CsF", "MeCN"], "temperature": "80 °C", "hold": "2 h", "sealed": True}],
    "outcome": {"products": [{"product": "adduct", "isolated_mass": "20 mg", "dr": "3:1"}]},
}

SMILES_ALPHABET = "CNOSPFIcnosp()[]=#@+-.%0123456789/\\HBrlia "
SMILESISH = st.one_of(st.text(alphabet=SMILES_ALPHABET, max_size=30), st.text(max_size=20))


@EXAMPLES
@given(smiles=SMILESISH)
def test_smiles_field_agrees_with_rdkit(smiles):
    data = copy.deepcopy(BASE)
    data["lines"][2]["smiles"] = smiles
    try:
        run = load_run(data)
    except RecordError as exc:
        assert exc.message
        # Source: RDKit's own parser: what Trapbook refuses is blank or unreadable to RDKit too
        assert not smiles.strip() or Chem.MolFromSmiles(smiles.strip()) is None
        return
    kept = run.line("furan").smiles
    if kept:
        # Source: RDKit's own parser: what Trapbook keeps, RDKit reads
        assert Chem.MolFromSmiles(kept) is not None


JSON = st.recursive(
    st.none() | st.booleans() | st.floats(allow_nan=False) | st.integers() | st.text(max_size=12),
    lambda children: st.lists(children, max_size=4) | st.dictionaries(st.text(max_size=8), children, max_size=4),
    max_leaves=12,
)

# Places in the run file where a value may be replaced.
PATHS = [("title",), ("date",), ("status",), ("tags",), ("intermediate",), ("factors",), ("limiting",),
         ("lines",), ("lines", 0), ("lines", 0, "role"), ("lines", 0, "amount"), ("lines", 1, "equiv"),
         ("lines", 2, "density"), ("lines", 2, "smiles"), ("lines", 3, "volume"), ("lines", 1, "water"),
         ("lines", 1, "purity"), ("lines", 0, "name"), ("steps",), ("steps", 0, "add"), ("steps", 0, "temperature"),
         ("steps", 0, "hold"), ("steps", 0, "sealed"), ("outcome",), ("outcome", "products", 0, "dr"),
         ("outcome", "products", 0, "isolated_mass"), ("outcome", "products", 0, "product"),
         ("outcome", "products", 0, "qnmr"), ("attachments",), ("unknown_field",), ("lines", 0, "unknown")]


def _set(data, path, value):
    node = data
    for key in path[:-1]:
        node = node[key]
    node[path[-1]] = value


@EXAMPLES
@given(path=st.sampled_from(PATHS), value=JSON)
def test_mutated_run_file_gives_a_run_or_a_named_record_error(path, value):
    data = copy.deepcopy(BASE)
    _set(data, path, value)
    try:
        run = load_run_text(json.dumps(data), "fuzz.json")
    except RecordError as exc:
        assert exc.message and exc.hint
        return
    assert isinstance(run, Run)
    # what was accepted is stable: storing and reading it again gives the same record
    assert load_run(run.to_json_dict()).to_json_dict() == run.to_json_dict()


@EXAMPLES
@example(text="[" * 100_000)  # found while writing this suite: json.loads raised RecursionError
@example(text='{"title": "deep", "lines": ' + "[" * 5000 + "]" * 5000 + "}")
@given(text=st.one_of(st.text(max_size=200), JSON.map(json.dumps),
                      st.binary(max_size=100).map(lambda b: b.decode("latin-1"))))
def test_any_text_gives_a_run_or_a_record_error(text):
    try:
        run = load_run_text(text, "fuzz.json")
    except RecordError as exc:
        assert exc.message
        return
    assert isinstance(run, Run)
