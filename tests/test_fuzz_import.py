"""Property-based tests of the importers (JSON lines, ORD, RO-Crate).

Whatever the file holds, an import either stores every run or raises an ExchangeError
with a message — never another exception — and a refused import writes nothing.
"""

from __future__ import annotations

import copy
import json
import shutil
import tempfile
from pathlib import Path

import pytest
from hypothesis import HealthCheck, example, given, settings
from hypothesis import strategies as st

from trapbook.errors import ExchangeError, TrapbookError
from trapbook.exchange import import_path
from trapbook.exchange import ord as ordx
from trapbook.records import load_run
from trapbook.store import Notebook

EXAMPLES = settings(
    max_examples=1000, deadline=None, suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture]
)

BASE = {
    "title": "import fuzz run",
    "chemist": "A. Tester",
    "lines": [
        {"role": "precursor", "name": "precursor", "smiles": "C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F", "amount": "0.200 mmol"},
        {"role": "fluoride source", "name": "TBAF", "smiles": "CCCC[N+](CCCC)(CCCC)CCCC.[F-]", "equiv": 1.5, "molarity": "1.0 M"},
        {"role": "trap", "name": "furan", "smiles": "c1ccoc1", "equiv": 10},
        {"role": "solvent", "name": "THF", "volume": "2.0 mL"},
        {"role": "internal standard", "name": "TMB", "smiles": "COc1cc(OC)cc(OC)c1", "mass": "16.8 mg"},
        {"role": "product", "name": "adduct", "smiles": "C1=CC2OC1c1ccccc12"},
    ],
    "steps": [
        {"add": ["precursor", "furan", "THF"], "temperature": "-78 °C"},
        {"add": ["TBAF"], "temperature": "-78 °C", "over": "5 min"},
        {"temperature": "23 °C", "hold": "1 h"},
    ],
    "outcome": {
        "products": [
            {
                "product": "adduct",
                "isolated_mass": "20 mg",
                "dr": "3:1",
                "qnmr": {"standard": "TMB", "standard_integral": 3, "standard_protons": 3, "integral": 0.6, "protons": 1},
            }
        ]
    },
}

JSON = st.recursive(
    st.none() | st.booleans() | st.floats() | st.integers() | st.text(max_size=12),
    lambda children: st.lists(children, max_size=4) | st.dictionaries(st.text(max_size=8), children, max_size=4),
    max_leaves=10,
)
PATHS = [
    ("title",),
    ("lines",),
    ("lines", 0),
    ("lines", 0, "amount"),
    ("lines", 1, "equiv"),
    ("lines", 2, "smiles"),
    ("lines", 3, "volume"),
    ("lines", 4, "role"),
    ("steps",),
    ("steps", 0, "add"),
    ("steps", 1, "temperature"),
    ("outcome",),
    ("outcome", "products", 0, "qnmr"),
    ("outcome", "products", 0, "dr"),
    ("date",),
    ("extra",),
]


def _set(data, path, value):
    node = data
    for key in path[:-1]:
        node = node[key]
    node[path[-1]] = value


def _refused_cleanly(nb, path, before):
    """Import; on refusal, check the error is ours, has a message, and nothing was written."""
    try:
        report = import_path(nb, path)
    except ExchangeError as exc:
        assert exc.message and exc.hint
        assert nb.count_runs() == before
        return None
    except TrapbookError as exc:  # a store-level refusal is allowed too, and still writes nothing
        assert exc.message
        assert nb.count_runs() == before
        return None
    assert nb.count_runs() == before + len(report["imported"])
    return report


@pytest.fixture(scope="module")
def fuzz_nb(tmp_path_factory):
    nb = Notebook.create(tmp_path_factory.mktemp("fuzz") / "fuzz.sqlite")
    yield nb
    nb.close()


JSONL_CASE = dict(
    bad_line=st.integers(min_value=0, max_value=3),
    path=st.sampled_from(PATHS),
    value=JSON,
    raw=st.one_of(st.none(), st.text(max_size=40)),
)


def _jsonl_case(fuzz_nb, tmp_path_factory, bad_line, path, value, raw):
    lines = [json.dumps(BASE) for _ in range(4)]
    if raw is not None:
        lines[bad_line] = raw
    else:
        data = copy.deepcopy(BASE)
        _set(data, path, value)
        lines[bad_line] = json.dumps(data)
    f = Path(tempfile.mkstemp(suffix=".jsonl", dir=tmp_path_factory.getbasetemp())[1])
    f.write_text("\n".join(lines) + "\n", encoding="utf-8")
    before = fuzz_nb.count_runs()
    try:
        import_path(fuzz_nb, f)
    except ExchangeError as exc:
        assert fuzz_nb.count_runs() == before
        # a bad record is named by its line number (blank lines are skipped, so the number is the file's)
        assert f"line {bad_line + 1}" in exc.message or "no runs" in exc.message or "not valid JSON" in exc.message
    else:
        assert fuzz_nb.count_runs() > before
    finally:
        f.unlink()


# Each accepted file stores four runs (with their index rows), so 1000 examples take 12-25 s
# alone and more beside other tests: the default run keeps 200, the slow job runs 1000.
@settings(EXAMPLES, max_examples=200)
@example(bad_line=2, path=("title",), value=None, raw="[" * 100_000)  # once a RecursionError
@given(**JSONL_CASE)
def test_jsonl_import(fuzz_nb, tmp_path_factory, **case):
    _jsonl_case(fuzz_nb, tmp_path_factory, **case)


@pytest.mark.slow
@EXAMPLES
@example(bad_line=2, path=("title",), value=None, raw="[" * 100_000)
@given(**JSONL_CASE)
def test_jsonl_import_1000(fuzz_nb, tmp_path_factory, **case):
    _jsonl_case(fuzz_nb, tmp_path_factory, **case)


def _ord_bytes() -> bytes:
    ds, _ = ordx.build_dataset([load_run(BASE), load_run(dict(BASE, title="second"))])
    return ds.SerializeToString(deterministic=True)


ORD_BYTES = _ord_bytes()


@st.composite
def mutated_bytes(draw, base: bytes):
    data = bytearray(base)
    for _ in range(draw(st.integers(min_value=1, max_value=8))):
        op = draw(st.sampled_from(["flip", "cut", "insert", "delete"]))
        if not data:
            break
        i = draw(st.integers(min_value=0, max_value=len(data) - 1))
        if op == "flip":
            data[i] = draw(st.integers(min_value=0, max_value=255))
        elif op == "cut":
            del data[i:]
        elif op == "insert":
            data[i:i] = draw(st.binary(min_size=1, max_size=8))
        else:
            del data[i : i + draw(st.integers(min_value=1, max_value=16))]
    return bytes(data)


@EXAMPLES
@given(payload=st.one_of(mutated_bytes(ORD_BYTES), st.binary(max_size=200)))
def test_ord_import_of_damaged_binary(fuzz_nb, tmp_path_factory, payload):
    f = Path(tempfile.mkstemp(suffix=".pb", dir=tmp_path_factory.getbasetemp())[1])
    f.write_bytes(payload)
    try:
        _refused_cleanly(fuzz_nb, f, fuzz_nb.count_runs())
    finally:
        f.unlink()


def _leaves(msg, path=()):
    """Every set scalar field of a message, as (message, field, index) triples."""
    out = []
    for field, value in msg.ListFields():
        if field.type == field.TYPE_MESSAGE:
            if field.message_type.GetOptions().map_entry:
                for v in value.values():
                    if hasattr(v, "ListFields"):
                        out += _leaves(v)
            elif field.label == field.LABEL_REPEATED:
                for v in value:
                    out += _leaves(v)
            else:
                out += _leaves(value)
        elif field.label != field.LABEL_REPEATED:
            out.append((msg, field))
    return out


@st.composite
def mutated_dataset(draw):
    from ord_schema.proto import dataset_pb2

    ds = dataset_pb2.Dataset()
    ds.ParseFromString(ORD_BYTES)
    leaves = _leaves(ds)
    for _ in range(draw(st.integers(min_value=1, max_value=4))):
        msg, field = draw(st.sampled_from(leaves))
        t = field.type
        if t in (field.TYPE_FLOAT, field.TYPE_DOUBLE):
            v = draw(st.floats(width=32 if t == field.TYPE_FLOAT else 64))
        elif t == field.TYPE_ENUM:
            v = draw(st.integers(min_value=0, max_value=40))
        elif t == field.TYPE_BOOL:
            v = draw(st.booleans())
        elif t == field.TYPE_STRING:
            v = draw(st.one_of(st.text(max_size=30), JSON.map(json.dumps), st.sampled_from(["", "[]", "{}", "[1]"])))
        elif t in (field.TYPE_INT32, field.TYPE_INT64):
            v = draw(st.integers(min_value=-(2**31), max_value=2**31 - 1))
        else:
            continue
        setattr(msg, field.name, v)
    return ds.SerializeToString()


def _odd_dataset(fuzz_nb, tmp_path_factory, payload):
    f = Path(tempfile.mkstemp(suffix=".pb", dir=tmp_path_factory.getbasetemp())[1])
    f.write_bytes(payload)
    try:
        _refused_cleanly(fuzz_nb, f, fuzz_nb.count_runs())
    finally:
        f.unlink()


# Most of these datasets import (two runs each), so 1000 examples take 12-36 s: 200 by default.
@settings(EXAMPLES, max_examples=200)
@given(payload=mutated_dataset())
def test_ord_import_of_a_dataset_with_odd_values(fuzz_nb, tmp_path_factory, payload):
    _odd_dataset(fuzz_nb, tmp_path_factory, payload)


@pytest.mark.slow
@EXAMPLES
@given(payload=mutated_dataset())
def test_ord_import_of_a_dataset_with_odd_values_1000(fuzz_nb, tmp_path_factory, payload):
    _odd_dataset(fuzz_nb, tmp_path_factory, payload)


ORD_TEXT = ordx.serialise(ordx.build_dataset([load_run(BASE)])[0], Path("x.pbtxt"))


@EXAMPLES
@given(payload=mutated_bytes(ORD_TEXT.encode()), suffix=st.sampled_from([".pbtxt", ".json"]))
def test_ord_import_of_damaged_text(fuzz_nb, tmp_path_factory, payload, suffix):
    f = Path(tempfile.mkstemp(suffix=suffix, dir=tmp_path_factory.getbasetemp())[1])
    f.write_bytes(payload if suffix == ".pbtxt" else b'{"reactions": ' + payload + b"}")
    try:
        _refused_cleanly(fuzz_nb, f, fuzz_nb.count_runs())
    finally:
        f.unlink()


@pytest.fixture(scope="module")
def crate_template(tmp_path_factory, demo_notebook_path):
    from trapbook.exchange import export_runs

    out = tmp_path_factory.mktemp("crate") / "crate"
    with Notebook.open(demo_notebook_path) as nb:
        export_runs(nb, "rocrate", screen="SC-0001", output=str(out))
    return out


CRATE_TARGETS = st.sampled_from(
    ["ro-crate-metadata.json", "runs/TB-0013.json", "screens/SC-0001.json", "runs/TB-0013.history.jsonl"]
)  # one version: one JSON object on one line


CRATE_CASE = dict(
    target=CRATE_TARGETS,
    how=st.sampled_from(["json", "field", "bytes"]),
    value=JSON,
    key=st.sampled_from(
        [
            "@graph",
            "@context",
            "lines",
            "title",
            "runs",
            "name",
            "id",
            "factors",
            "author",
            "reason",
            "time",
            "version",
            "hash",
            "prev_hash",
            "data",
        ]
    ),
    junk=st.binary(max_size=60),
)


def _damaged_crate(fuzz_nb, tmp_path_factory, crate_template, target, how, value, key, junk):
    work = Path(tempfile.mkdtemp(dir=tmp_path_factory.getbasetemp()))
    crate = work / "crate"
    shutil.copytree(crate_template, crate)
    f = crate / target
    if how == "json":
        f.write_text(json.dumps(value), encoding="utf-8")
    elif how == "field":
        data = json.loads(f.read_text(encoding="utf-8"))
        data[key] = value
        f.write_text(json.dumps(data), encoding="utf-8")
    else:
        f.write_bytes(junk)
    try:
        _refused_cleanly(fuzz_nb, crate, fuzz_nb.count_runs())
    finally:
        shutil.rmtree(work)


# One example copies and parses a whole crate (~12-28 ms), so 1000 of them take 12-30 s:
# the default run keeps 200, the slow job runs the full 1000.
@settings(EXAMPLES, max_examples=200)
@given(**CRATE_CASE)
def test_rocrate_import_of_damaged_crate(fuzz_nb, tmp_path_factory, crate_template, **case):
    _damaged_crate(fuzz_nb, tmp_path_factory, crate_template, **case)


@pytest.mark.slow
@EXAMPLES
@given(**CRATE_CASE)
def test_rocrate_import_of_damaged_crate_1000(fuzz_nb, tmp_path_factory, crate_template, **case):
    _damaged_crate(fuzz_nb, tmp_path_factory, crate_template, **case)


# --- one id rule for every format ----------------------------------------------------------

BAD_IDS = ["../../x", "TB\x1b]52;c;aGk=\x07", "TB-1\nTB-2", "T" * 5000, ".hidden", "a..b"]


def _refused_naming_the_id(nb, path):
    before = nb.count_runs()
    with pytest.raises(TrapbookError) as err:
        import_path(nb, path)
    assert "id" in err.value.message and err.value.hint
    assert "\x1b" not in err.value.message and "\n" not in err.value.message.split(":", 1)[0]
    assert len(err.value.message) < 1000  # 5,000 characters are cut when quoted
    assert nb.count_runs() == before


@pytest.mark.parametrize("bad", BAD_IDS)
def test_jsonl_import_refuses_ids_outside_the_rule(fuzz_nb, tmp_path, bad):
    path = tmp_path / "runs.jsonl"
    path.write_text(json.dumps(dict(BASE, id="TB-0500")) + "\n" + json.dumps(dict(BASE, id=bad)) + "\n", encoding="utf-8")
    _refused_naming_the_id(fuzz_nb, path)


@pytest.mark.parametrize("bad", BAD_IDS)
def test_ord_import_refuses_ids_outside_the_rule(fuzz_nb, tmp_path, bad):
    from trapbook.exchange.ord_common import _RUN_ID_DETAILS

    ds, _ = ordx.build_dataset([load_run(dict(BASE, id="TB-0500"))])
    for ident in ds.reactions[0].identifiers:
        if ident.details == _RUN_ID_DETAILS:
            ident.value = bad
    path = tmp_path / "runs.pb"
    path.write_bytes(ds.SerializeToString(deterministic=True))
    _refused_naming_the_id(fuzz_nb, path)


@pytest.mark.parametrize("bad", BAD_IDS)
def test_rocrate_import_refuses_ids_outside_the_rule(fuzz_nb, tmp_path, crate_template, bad):
    crate = tmp_path / "crate"
    shutil.copytree(crate_template, crate)
    f = crate / "runs" / "TB-0013.json"
    data = json.loads(f.read_text(encoding="utf-8"))
    data["id"] = bad
    f.write_text(json.dumps(data), encoding="utf-8")
    _refused_naming_the_id(fuzz_nb, crate)
