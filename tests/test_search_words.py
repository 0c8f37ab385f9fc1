"""Plain words find runs by id and by chemist too, the same in the Logbook filter and
`trapbook search --text`; `--limit` takes only a sensible number of results.

The reference for ids, chemists and words is the demo lab's run files (demo_lab/runs/*.json),
read directly, without the notebook or its search tables (docs/sources.md, "Search").
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
from trapbook.search import search
from trapbook.search_query import MAX_LIMIT, Query, parse_query

RUNS = [json.loads(p.read_text(encoding="utf-8")) for p in sorted((ROOT / "demo_lab" / "runs").glob("*.json"))]


@pytest.fixture
def demo_copy(demo_notebook_path, tmp_path):
    path = tmp_path / "demo.sqlite"
    shutil.copy(demo_notebook_path, path)
    return path


def _cli(path, *args: str):
    return CliRunner().invoke(main, ["--db", str(path), "search", *args, "--json"])


def _cli_ids(path, text: str) -> list[str]:
    res = _cli(path, "--text", text)
    assert res.exit_code == 0, res.output
    return sorted(h["run_id"] for h in json.loads(res.output))


def _surname_runs(surname: str) -> list[str]:
    # Source: demo_lab/runs/*.json, the chemist field ("S. Iyer"): a surname is a whole word of it
    return sorted(d["id"] for d in RUNS if surname.casefold() in re.findall(r"\w+", d["chemist"].casefold()))


def _words(d: dict) -> str:
    parts = [d.get("title") or "", d.get("notes") or "", *(s.get("note") or "" for s in d["steps"])]
    parts += [(d.get("outcome") or {}).get("observations") or "", " ".join(d.get("tags") or [])]
    return " ".join(parts).casefold()


def test_a_run_id_finds_that_run(demo_copy):
    some = [RUNS[0]["id"], RUNS[11]["id"], RUNS[-1]["id"]]  # TB-0001, TB-0012, TB-0018 from the files
    for rid in some:
        assert _cli_ids(demo_copy, rid) == [rid]
        assert _cli_ids(demo_copy, rid.lower()) == [rid]  # ids are typed in either case


@pytest.mark.parametrize("surname", ["Iyer", "Okafor", "brandt"])
def test_a_chemists_name_finds_their_runs(demo_copy, surname):
    want = _surname_runs(surname)
    assert want, surname
    assert _cli_ids(demo_copy, surname) == want


def test_a_full_name_in_quotes_and_a_word_beside_it(demo_copy):
    iyer = _surname_runs("Iyer")
    assert _cli_ids(demo_copy, '"S. Iyer"') == iyer
    # every word must hold: Iyer's runs whose own words say furan
    want = sorted(d["id"] for d in RUNS if d["id"] in iyer and re.search(r"\bfuran\b", _words(d)))
    assert want and len(want) < len(iyer)
    assert _cli_ids(demo_copy, "Iyer furan") == want


def test_part_of_a_name_or_an_initial_names_nobody(demo_notebook):
    assert not any(re.search(r"\biy\b", _words(d)) for d in RUNS)  # not in any run's words either
    assert [h.run_id for h in search(demo_notebook, text="Iy")] == []
    assert not any(m.startswith("chemist:") for h in search(demo_notebook, text="S.") for m in h.matched)


def test_the_hit_says_what_matched(demo_notebook):
    (hit,) = search(demo_notebook, parse_query("TB-0012"))
    assert hit.run_id == "TB-0012" and "id: TB-0012" in hit.matched
    hits = search(demo_notebook, parse_query("Okafor"))
    assert hits and all("chemist: M. Okafor" in h.matched for h in hits)


@pytest.mark.parametrize("text", ["TB-0012", "Iyer", "Brandt anthracene"])
async def test_the_logbook_filter_gives_the_cli_runs(demo_copy, text):
    from textual.widgets import Input

    from trapbook.tui.app import TrapbookApp

    app = TrapbookApp(demo_copy, author="pilot", warm=False)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = app.screen
        box = screen.filter_box
        await pilot.press("slash")
        screen.query_one("#filter", Input).value = text
        await pilot.press("enter")
        for _ in range(200):
            await app.workers.wait_for_complete()
            await pilot.pause(0.02)
            if box.answered == text:
                break
        assert box.error is None
        shown = sorted(r["id"] for r in screen.shown)
    assert shown == _cli_ids(demo_copy, text) and shown


# --- --limit ----------------------------------------------------------------------------------


@pytest.mark.parametrize("limit", ["0", "-1", "-1000", str(10**30), str(MAX_LIMIT + 1)])
def test_a_limit_out_of_range_is_refused_with_a_hint(demo_copy, limit):
    res = CliRunner().invoke(main, ["--db", str(demo_copy), "search", "--trap", "furan", "--limit", limit])
    assert res.exit_code == 2
    assert "limit" in res.output and "what to do:" in res.output and "Traceback" not in res.output
    assert len(res.output) < 400  # a 31-digit number is not echoed back whole
    res = _cli(demo_copy, "--trap", "furan", "--limit", limit)
    err = json.loads(res.output)
    assert res.exit_code == 2 and err["field"] == "limit" and err["hint"]


def test_a_limit_in_range_caps_the_answer(demo_copy):
    # Source: demo_lab/runs/*.json, the trap lines named furan
    furan = [d["id"] for d in RUNS if any(ln["role"] == "trap" and ln["name"] == "furan" for ln in d["lines"])]
    assert len(furan) > 2
    res = _cli(demo_copy, "--trap", "furan", "--limit", "2")
    assert res.exit_code == 0 and len(json.loads(res.output)) == 2
    res = _cli(demo_copy, "--trap", "furan", "--limit", str(MAX_LIMIT))
    assert sorted(h["run_id"] for h in json.loads(res.output)) == sorted(furan)


@pytest.mark.parametrize("limit", [0, -5, 10**30, True, 2.5, "3"])
def test_the_api_refuses_the_same_limits(demo_notebook, limit):
    with pytest.raises(TrapbookError) as info:
        search(demo_notebook, trap="furan", limit=limit)
    assert info.value.field == "limit" and info.value.hint
    with pytest.raises(TrapbookError):
        Query(limit=limit)


def test_the_key_list_names_the_filters_keys_and_examples_as_typed():
    import io

    from rich.console import Console

    from trapbook.search_query import FILTER_KEYS
    from trapbook.tui.screens.keys import key_table

    console = Console(width=120, record=True, color_system=None, file=io.StringIO())
    console.print(key_table())
    text = console.export_text()
    assert "Logbook filter box (/)" in text and "Esc/↓" in text and "Enter too" in text
    assert "TB-0012" in text and "Iyer" in text  # the plain-word row
    # an example is shown as typed (a SMARTS's [nH] is not read as markup); the column is 16 wide
    for key in FILTER_KEYS:
        if len(key.example) <= 16:
            assert key.example in text, key.example


def _max_temp_c(d: dict) -> float:
    # Source: demo_lab/runs/*.json step temperatures as written ("80 °C", "-78 °C", "rt" = 23 °C by default)
    temps = []
    for s in d["steps"]:
        t = str(s.get("temperature") or "").replace("−", "-")
        m = re.match(r"\s*(-?\d+(?:\.\d+)?)\s*°?\s*C", t)
        if m:
            temps.append(float(m.group(1)))
    return max(temps) if temps else float("nan")


def test_the_filter_typed_on_the_command_line_equals_the_options(demo_copy):
    # The same question asked three ways gives one answer: typed as in the Logbook filter, as
    # --options, and read from the run files themselves.
    furan_hot = sorted(
        d["id"]
        for d in RUNS
        if any(ln["role"] == "trap" and ln["name"].casefold() == "furan" for ln in d["lines"]) and _max_temp_c(d) >= 100
    )
    typed = CliRunner().invoke(main, ["--db", str(demo_copy), "search", "trap:furan", "temp:>=100", "--json"])
    options = CliRunner().invoke(main, ["--db", str(demo_copy), "search", "--trap", "furan", "--temp-min", "100", "--json"])
    assert typed.exit_code == 0 and options.exit_code == 0, typed.output + options.output
    ids = sorted(h["run_id"] for h in json.loads(typed.output))
    assert ids == sorted(h["run_id"] for h in json.loads(options.output)) == furan_hot
    assert furan_hot  # the demo holds such runs
    # a typed run id, as the Logbook filter's plain word
    rid = RUNS[11]["id"]
    one = CliRunner().invoke(main, ["--db", str(demo_copy), "search", rid, "--json"])
    assert [h["run_id"] for h in json.loads(one.output)] == [rid]


def test_a_part_given_typed_and_as_an_option_is_refused_not_overridden(demo_copy):
    res = CliRunner().invoke(main, ["--db", str(demo_copy), "search", "trap:furan", "--trap", "anthracene", "--json"])
    assert res.exit_code == 2
    err = json.loads(res.output)
    assert err["field"] == "trap" and "one way" in err["hint"]
    # tags from both add up
    from trapbook.search_query import combined, query_from_options

    q = combined(parse_query("tag:glovebox"), query_from_options(tags=("screen",)))
    assert set(q.tags) == {"glovebox", "screen"}
