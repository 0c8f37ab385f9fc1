"""One query language: the Logbook filter and `trapbook search` give the same runs.

A corpus of queries is typed into the Logbook's filter box (Textual's pilot) and given as
options to `trapbook search --json` (click's CliRunner) on the demo notebook; the run ids
must be identical. Where the answer can be read straight from the demo lab's run files
(demo_lab/runs/*.json, a source outside the search code), it is checked against them too.
"""

from __future__ import annotations

import json
import re
import shutil

import pytest
from click.testing import CliRunner

from conftest import ROOT
from trapbook.cli import main
from trapbook.errors import TrapbookError
from trapbook.search_query import FILTER_KEYS, Query, keys_markdown, parse_query

pytest.importorskip("textual")

SIZE = (120, 40)
DEMO_RUNS = sorted((ROOT / "demo_lab" / "runs").glob("*.json"))

#: (typed in the Logbook filter, the same query as `trapbook search` options)
CORPUS = [
    ("trap:furan", ["--trap", "furan"]),
    ("trap:anthracene", ["--trap", "anthracene"]),
    ("trap:DPIBF", ["--trap", "DPIBF"]),
    ("trap:c1ccoc1", ["--trap", "c1ccoc1"]),
    ("fluoride:CsF", ["--fluoride", "CsF"]),
    ("fluoride:tbaf", ["--fluoride", "tbaf"]),
    ("solvent:THF", ["--solvent", "THF"]),
    ("solvent:MeCN", ["--solvent", "MeCN"]),
    ('chemist:"S. Iyer"', ["--chemist", "S. Iyer"]),
    ("chemist:okafor", ["--chemist", "okafor"]),
    ("chemist:%", ["--chemist", "%"]),
    ("solvent:_", ["--solvent", "_"]),
    ("screen:SC-0001", ["--screen", "SC-0001"]),
    ("finding:trap-late", ["--finding", "trap-late"]),
    ("temp:>=100", ["--temp-min", "100"]),
    ("temp:<=23", ["--temp-max", "23"]),
    ("temp:80..100", ["--temp-min", "80", "--temp-max", "100"]),
    ("yield:50..80", ["--yield-min", "50", "--yield-max", "80"]),
    ("yield:<=20", ["--yield-max", "20"]),
    ("date:2026-09-12..2026-09-30", ["--date-from", "2026-09-12", "--date-to", "2026-09-30"]),
    ("date:2026-10", ["--date-from", "2026-10", "--date-to", "2026-10"]),
    ("glovebox", ["--text", "glovebox"]),
    ("oligomers", ["--text", "oligomers"]),
    ("TB-0012", ["--text", "TB-0012"]),
    ("Iyer", ["--text", "Iyer"]),
    ('"L. Brandt" anthracene', ["--text", '"L. Brandt" anthracene']),
    ("tag:anti-Bredt", ["--tag", "anti-Bredt"]),
    ("sub:c1ccoc1", ["--substructure", "c1ccoc1"]),
    ("sub:C12=CCCC(CC1)C2", ["--substructure", "C12=CCCC(CC1)C2"]),
    ("similar:C12=CCCC(CCC1)C2 min:0.3", ["--similar", "C12=CCCC(CCC1)C2", "--min", "0.3"]),
    ("trap:furan temp:>=80 fluoride:CsF", ["--trap", "furan", "--temp-min", "80", "--fluoride", "CsF"]),
    (
        "sub:[#6]1~[#6]~[#6]2~[#6]~[#6]~[#6]~[#6](~[#6]1)~[#6]2 screen:SC-0001 trap:anthracene",
        ["--substructure", "[#6]1~[#6]~[#6]2~[#6]~[#6]~[#6]~[#6](~[#6]1)~[#6]2", "--screen", "SC-0001", "--trap", "anthracene"],
    ),
]


@pytest.fixture
def demo_copy(demo_notebook_path, tmp_path):
    path = tmp_path / "demo.sqlite"
    shutil.copy(demo_notebook_path, path)
    return path


def _records() -> list[dict]:
    return [json.loads(p.read_text(encoding="utf-8")) for p in DEMO_RUNS]


def _max_temp_c(d: dict) -> float | None:
    # common practice, no source: a run's temperature is the highest one its steps reach
    temps = [float(re.match(r"\s*(-?[\d.]+)\s*°C", s["temperature"]).group(1)) for s in d["steps"] if s.get("temperature")]
    return max(temps) if temps else None


def _words(d: dict) -> str:
    """The run's own words: title, notes, step notes, observations and tags."""
    parts = [
        d.get("title") or "",
        d.get("notes") or "",
        *(s.get("note") or "" for s in d["steps"]),
        (d.get("outcome") or {}).get("observations") or "",
        " ".join(d.get("tags") or []),
    ]
    return " ".join(parts).casefold()


def cli_ids(path, args: list[str]) -> list[str]:
    res = CliRunner().invoke(main, ["--db", str(path), "search", *args, "--json"])
    assert res.exit_code == 0, res.output
    return sorted(h["run_id"] for h in json.loads(res.output))


async def _filter(pilot, text: str):
    """Type a filter into the Logbook and wait for the core's answer; (shown ids, screen)."""
    from textual.widgets import DataTable, Input

    screen = pilot.app.screen
    box = screen.filter_box
    await pilot.press("slash")
    screen.query_one("#filter", Input).value = text
    await pilot.press("enter")
    for _ in range(200):  # the search runs in the filter's worker; its answer comes back to the screen
        await pilot.app.workers.wait_for_complete()
        await pilot.pause(0.02)
        if box.error is not None or box.answered == text.strip():
            break
    table = screen.query_one("#runs", DataTable)
    in_table = sorted(k.value for k in table.rows)
    assert in_table == sorted(r["id"] for r in screen.shown)
    return in_table, screen


async def test_corpus_gives_the_same_runs_in_the_logbook_and_the_cli(demo_copy):
    from trapbook.tui.app import TrapbookApp

    app = TrapbookApp(demo_copy, author="pilot", warm=False)
    tui: dict[str, list[str]] = {}
    async with app.run_test(size=SIZE) as pilot:
        for text, _ in CORPUS:
            ids, screen = await _filter(pilot, text)
            assert screen.filter_box.error is None, (text, screen.filter_box.error)
            tui[text] = ids
    total = len(_records())
    for text, args in CORPUS:
        assert tui[text] == cli_ids(demo_copy, args), text
    # The corpus is worth comparing: most queries narrow the runs, and most find some.
    assert sum(1 for ids in tui.values() if 0 < len(ids) < total) >= 20


def test_answers_agree_with_the_run_files(demo_copy):
    """Source: the demo lab's run files, read directly (no notebook, no index)."""
    recs = _records()
    trap_names = {d["id"]: [ln["name"] for ln in d["lines"] if ln["role"] == "trap"] for d in recs}
    furan = sorted(rid for rid, names in trap_names.items() if "furan" in names)
    by_name_part = sorted(rid for rid, names in trap_names.items() if any("furan" in n for n in names))
    assert cli_ids(demo_copy, ["--trap", "furan"]) == furan
    assert len(by_name_part) > len(furan)  # 2,5-dimethylfuran and DPIBF runs are not furan runs
    assert cli_ids(demo_copy, ["--text", "glovebox"]) == sorted(d["id"] for d in recs if re.search(r"\bglovebox\b", _words(d)))
    assert cli_ids(demo_copy, ["--chemist", "%"]) == sorted(d["id"] for d in recs if "%" in d["chemist"]) == []
    assert cli_ids(demo_copy, ["--solvent", "_"]) == []  # no solvent name holds an underscore
    assert cli_ids(demo_copy, ["--date-from", "2026-10", "--date-to", "2026-10"]) == sorted(
        d["id"] for d in recs if d["date"].startswith("2026-10")
    )


@pytest.mark.parametrize(
    "text,keep",
    [
        ("temp:>100", lambda t: t is not None and t > 100),
        ("temp:<80", lambda t: t is not None and t < 80),
        ("temp:>=80", lambda t: t is not None and t >= 80),
        ("temp:80", lambda t: t == 80),
        ("temp:-78..23", lambda t: t is not None and -78 <= t <= 23),
    ],
)
def test_temperature_comparisons_follow_the_run_files(demo_notebook, text, keep):
    """Source: each run file's highest step temperature (°C), read directly."""
    from trapbook.search import search

    want = sorted(d["id"] for d in _records() if keep(_max_temp_c(d)))
    assert sorted(h.run_id for h in search(demo_notebook, parse_query(text))) == want
    assert want  # each comparison selects something in the demo lab


def test_strict_and_inclusive_date_bounds(demo_notebook):
    """Source: the run files' dates; a month bound covers the whole month."""
    from trapbook.search import search

    recs = _records()
    for text, keep in (
        ("date:>2026-09", lambda d: d > "2026-09-99"),
        ("date:<2026-09-12", lambda d: d < "2026-09-12"),
        ("date:<=2026-09", lambda d: d[:7] <= "2026-09"),
        ("date:2026-09-12", lambda d: d == "2026-09-12"),
    ):
        want = sorted(r["id"] for r in recs if keep(r["date"]))
        assert sorted(h.run_id for h in search(demo_notebook, parse_query(text))) == want, text


async def test_unknown_key_is_said_in_the_status_line_and_filters_nothing(demo_copy):
    from textual.widgets import Static

    from trapbook.tui.app import TrapbookApp

    app = TrapbookApp(demo_copy, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        ids, screen = await _filter(pilot, "tmp:>100")
        status = str(screen.query_one("#filter-status", Static).render())
    assert len(ids) == len(_records())  # not "zero runs": the filter was not applied
    assert "filter not applied" in status and "tmp" in status
    assert "temp:" in status  # the hint lists the keys there are


async def test_bracket_atoms_survive_in_the_status_line(demo_copy):
    from textual.widgets import Static

    from trapbook.tui.app import TrapbookApp

    app = TrapbookApp(demo_copy, author="pilot", warm=False)
    async with app.run_test(size=SIZE) as pilot:
        ids, screen = await _filter(pilot, "sub:c1cc[nH]c1")
        status = str(screen.query_one("#filter-status", Static).render())
    assert "c1cc[nH]c1" in status
    assert ids == cli_ids(demo_copy, ["--substructure", "c1cc[nH]c1"])


@pytest.mark.parametrize(
    "text",
    [
        "tmp:100",
        "trap:furan trap:anthracene",
        "temp:hot",
        "yield:80..50",
        "date:2026-13",
        "trap:",
        "min:high",
        "temp:>inf",
        "min:0.5",
        "temp:..",
    ],
)
def test_unreadable_filters_are_errors_with_a_hint(text):
    with pytest.raises(TrapbookError) as info:
        parse_query(text)
    assert info.value.message and info.value.hint


def test_unknown_key_hint_lists_every_key():
    with pytest.raises(TrapbookError) as info:
        parse_query("temprature:100")
    assert all(f"{k.name}:" in info.value.hint for k in FILTER_KEYS)


def test_typed_parts_and_words():
    q = parse_query('chemist:"S. Iyer" tag:screen tag:anti-Bredt sub:[#6]:[#6] glovebox "silyl triflate"')
    assert q.chemist == "S. Iyer" and q.tags == ("screen", "anti-Bredt") and q.substructure == "[#6]:[#6]"
    assert q.text == 'glovebox "silyl triflate"'
    assert parse_query("") == Query()
    assert parse_query("temp:>373.15K").temp_c.low == pytest.approx(100.0)  # Source: 0 °C = 273.15 K (SI brochure)
    assert parse_query("time:>=2h").time_min.low == pytest.approx(120.0)  # Source: 1 h = 60 min (SI brochure)
    assert parse_query("temp:\u221278..0").temp_c.low == -78.0  # the typeset minus sign (U+2212) is a minus


def test_readme_lists_the_parser_keys():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    block = re.search(r"<!-- filter-keys:[^>]*-->\n(.*?)\n<!-- /filter-keys -->", readme, re.S)
    assert block, "README has no filter-keys block"
    assert block.group(1) == keys_markdown(), "README's filter keys are stale: paste trapbook.search_query.keys_markdown()"


def test_every_key_fills_a_query_field_and_names_a_real_search_option():
    from trapbook.cli.search import search_cmd

    options = {opt for p in search_cmd.params for opt in p.opts}
    for k in FILTER_KEYS:
        assert k.field in Query.__dataclass_fields__, k.name
        assert all(o in options for o in k.option.split("/")), k.option
