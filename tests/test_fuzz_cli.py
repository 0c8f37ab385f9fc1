"""The command line end to end with hostile input: run files, ids, versions, searches and imports.

Every example runs real commands (click's CliRunner, the same entry point as the shell) and
counts what a user must never see: a traceback (an exception escaping the command), an
"unexpected" error (a bug caught by the last-resort handler), an exit code other than 0
or 2, NaN/Infinity in --json output, or a control character from the input echoed back.
The target for every count is 0.
"""

from __future__ import annotations

import copy
import json
import re
from collections import Counter

import pytest
from click.testing import CliRunner
from hypothesis import HealthCheck, example, given, settings
from hypothesis import strategies as st

from samples import MINIMAL_RUN
from trapbook.cli import main

EXAMPLES = settings(
    max_examples=200, deadline=None, suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture]
)

#: What each run of the suite saw; printed by the last test (run with -s to read it).
TALLY: Counter = Counter()

_ECHOED = re.compile(r"[\x00-\x08\x0b-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069]")

HOSTILE_TEXT = st.one_of(
    st.sampled_from(
        [
            "\x1b]52;c;aGVsbG8=\x07",
            "\x1b[2J\x1b[H",
            "ok\nTB-9999  forged row",
            "\x00",
            "\u202egnp.exe",
            "../../x",
            "x" * 5000,
            "%",
            "_",
            "rt",
            "reflux",
            "o/n",
            "\u221278 °C to rt",
            "0 °C to reflux",
            "5 mol%",
            "1e308 mg",
            "9" * 400 + " mg",
            "5e-324 mg",
            "NaN",
            "-inf °C",
            "0–25 °C",
            "\ud7ff",
        ]
    ),
    st.text(max_size=30),
)
HOSTILE_NUMBER = st.one_of(
    st.floats(), st.sampled_from([1e308, -1e308, 5e-324, 10**400, 0, -1]), st.integers(min_value=-(10**30), max_value=10**30)
)

TEXT_PATHS = [
    ("title",),
    ("chemist",),
    ("id",),
    ("screen",),
    ("notes",),
    ("tags",),
    ("lines", 0, "name"),
    ("lines", 2, "smiles"),
    ("lines", 1, "equiv"),
    ("lines", 0, "amount"),
    ("lines", 3, "volume"),
    ("steps", 0, "add", 0),
    ("steps", 2, "temperature"),
    ("steps", 2, "hold"),
    ("steps", 1, "note"),
    ("lines", 3, "role"),
]
NUMBER_PATHS = [
    ("lines", 1, "equiv"),
    ("lines", 2, "equiv"),
    ("lines", 0, "amount"),
    ("steps", 2, "hold"),
    ("steps", 2, "temperature"),
]


def _set(data, path, value):
    node = data
    for key in path[:-1]:
        node = node[key]
    node[path[-1]] = value


@pytest.fixture(scope="module")
def cli(tmp_path_factory):
    folder = tmp_path_factory.mktemp("fuzz_cli")
    db = str(folder / "nb.sqlite")
    runner = CliRunner()
    assert runner.invoke(main, ["--db", db, "init"]).exit_code == 0
    assert runner.invoke(main, ["--db", db, "add", _write(folder, "base.json", json.dumps(MINIMAL_RUN))]).exit_code == 0

    def invoke(*args, input=None):
        return runner.invoke(main, ["--db", db, "--author", "fuzz", *args], input=input, catch_exceptions=True)

    invoke.folder = folder
    return invoke


def _write(folder, name: str, text: str) -> str:
    path = folder / name
    path.write_text(text, encoding="utf-8", errors="surrogatepass")
    return str(path)


def _judge(res, args, given: str = "") -> None:
    """Count what the user would see, then fail on anything that must never happen."""
    TALLY["commands"] += 1
    out = res.output
    traceback = res.exception is not None and not isinstance(res.exception, SystemExit)
    unexpected = "unexpected" in out
    TALLY["tracebacks"] += traceback
    TALLY["unexpected"] += unexpected
    TALLY["refused"] += res.exit_code == 2
    shown = [a[:80] for a in args]
    assert not traceback, f"{shown}: {res.exception!r}"[:2000]
    assert not unexpected, f"{shown}: {out}"[:2000]
    assert res.exit_code in (0, 2), f"{shown}: exit {res.exit_code}: {out}"[:2000]
    if res.exit_code == 2:
        assert "error" in out.lower() or "usage" in out.lower()
    if res.exit_code == 0 and "--json" in args:

        def refuse(name):  # NaN / Infinity are not JSON; a reader would choke on them
            raise AssertionError(f"{args}: {name} in --json output")

        json.loads(res.stdout, parse_constant=refuse)
    bad_in_input = set(_ECHOED.findall(given))
    echoed = bad_in_input & set(_ECHOED.findall(out))
    assert not echoed, f"{args}: echoed {sorted(map(hex, map(ord, echoed)))}"


def _run_file_commands(cli, data) -> None:
    try:
        text = json.dumps(data, ensure_ascii=False)
    except (ValueError, OverflowError):
        return
    path = _write(cli.folder, "fuzz.json", text)
    for args in (["add", path, "--json"], ["amounts", path, "--json"], ["check", path, "--json"], ["amounts", path]):
        _judge(cli(*args), args, text)
    TALLY["run files"] += 1


@EXAMPLES
@example(path=("title",), value="\x1b]52;c;aGVsbG8=\x07")
@example(path=("id",), value="../../x")
@example(path=("steps", 2, "temperature"), value="\u221278 °C to rt")
@given(path=st.sampled_from(TEXT_PATHS), value=HOSTILE_TEXT)
def test_run_files_with_hostile_text(cli, path, value):
    data = copy.deepcopy(MINIMAL_RUN)
    _set(data, path, value)
    _run_file_commands(cli, data)


@EXAMPLES
@example(path=("lines", 1, "equiv"), value=1e308)
@example(path=("lines", 0, "amount"), value={"value": 10**400, "unit": "mmol"})
@given(
    path=st.sampled_from(NUMBER_PATHS),
    value=st.one_of(
        HOSTILE_NUMBER,
        st.builds(
            lambda v, u: {"value": v, "unit": u}, HOSTILE_NUMBER, st.sampled_from(["mmol", "mg", "°C", "h", "equiv", "mol%", ""])
        ),
    ),
)
def test_run_files_with_absurd_numbers(cli, path, value):
    data = copy.deepcopy(MINIMAL_RUN)
    _set(data, path, value)
    _run_file_commands(cli, data)


@EXAMPLES
@given(
    raw=st.one_of(
        st.text(max_size=200),
        st.binary(max_size=100).map(lambda b: b.decode("latin-1")),
        st.sampled_from(["[" * 100_000, '{"title": 1e999}', "NaN", "\x00" * 10]),
    )
)
def test_run_files_that_are_not_json(cli, raw):
    path = _write(cli.folder, "raw.json", raw)
    for args in (["add", path], ["amounts", path, "--json"]):
        _judge(cli(*args), args, raw)


@EXAMPLES
@example(ident="TB-0001", version="99999999999999999999")
@example(ident="\x1b]52;c;aGk=\x07", version="1")
@given(
    ident=HOSTILE_TEXT,
    version=st.one_of(st.integers(min_value=-(10**25), max_value=10**25).map(str), st.sampled_from(["NaN", "1e308", "", "0x10"])),
)
def test_ids_and_versions_on_the_command_line(cli, ident, version):
    for args in (
        ["show", ident, "--version", version, "--json"],
        ["show", ident],
        ["history", ident, "--json"],
        ["check", ident],
        ["show", "TB-0001", "--version", version],
    ):
        _judge(cli(*args), args, ident)


@EXAMPLES
@given(
    option=st.sampled_from(["--chemist", "--solvent", "--trap", "--temp-min", "--time-max", "--date-from", "--fluoride"]),
    value=HOSTILE_TEXT,
)
def test_searches_with_hostile_text(cli, option, value):
    args = ["search", option, value, "--json"]
    _judge(cli(*args), args, value)


@EXAMPLES
@example(ident="../../x")
@example(ident="T" * 5000)
@given(ident=HOSTILE_TEXT)
def test_imported_ids_follow_the_one_id_rule(cli, ident):
    record = dict(copy.deepcopy(MINIMAL_RUN), id=ident)
    path = _write(cli.folder, "in.jsonl", json.dumps(record) + "\n")
    res = cli("import", path, "--json")
    _judge(res, ["import", "<jsonl>", "--json"], ident)
    core = ident.strip()  # records strip surrounding white space before any rule
    ok = re.fullmatch(r"[A-Za-z0-9][A-Za-z0-9._-]{0,63}", core) and ".." not in core
    if not ok:  # the one id rule, written out again here: anything else is refused with the field named
        assert res.exit_code == 2 and "id" in res.output


def test_zz_figures():
    """Print the tally (pytest -s shows it); nothing the user must never see was seen."""
    print(
        f"\nCLI fuzz: {TALLY['commands']} commands ({TALLY['run files']} hostile run files through add/amounts/"
        f"check), {TALLY['refused']} refused with a message, {TALLY['tracebacks']} tracebacks, "
        f"{TALLY['unexpected']} unexpected errors"
    )
    assert TALLY["tracebacks"] == 0 and TALLY["unexpected"] == 0
