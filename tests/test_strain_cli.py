"""`trapbook strain` and `trapbook alignment` as a chemist types them.

Sources of check values: docs/sources.md, "Strain".
"""

from __future__ import annotations

import copy
import json

import pytest
from click.testing import CliRunner

from samples import MINIMAL_RUN
from trapbook.cli import main

BENZYNE_PRECURSOR = "C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F"


@pytest.fixture
def cli(tmp_path):
    runner = CliRunner()
    db = str(tmp_path / "cli.sqlite")
    assert runner.invoke(main, ["--db", db, "init"]).exit_code == 0

    def invoke(*args):
        return runner.invoke(main, ["--db", db, "--author", "tester", *args], catch_exceptions=False)

    return invoke


def test_benzyne_json_is_an_aryne_that_needs_a_trap(cli):
    # Source: docs/sources.md, "Strain" (Arynes) — never isolable; strain strongly positive.
    res = cli("strain", "C1=CC=CC#C1", "--json", "--quiet")
    assert res.exit_code == 0, res.output
    r = json.loads(res.output)
    assert r["kind"] == "aryne"
    assert r["strain_kcal_mol"] > 30
    assert r["needs_trap"] is True and r["stability_class"] == "trapping only"
    assert "MMFF94" not in {sp["energy_method"] for sp in r["species"].values()}


def test_strain_of_a_precursor_names_the_intermediate_and_the_command(cli):
    # Source: docs/sources.md, "Strain" — 2-(trimethylsilyl)phenyl triflate releases benzyne.
    res = cli("strain", BENZYNE_PRECURSOR, "--json")
    assert res.exit_code == 0, res.output
    r = json.loads(res.output)
    assert r["precursor"] == BENZYNE_PRECURSOR
    assert r["command"] == f"trapbook strain '{r['intermediate']}'"
    assert "kind" not in r  # nothing was computed for the precursor's own rings
    text = cli("strain", BENZYNE_PRECURSOR).output
    assert "is a silyl precursor" in text and "trapbook strain" in text and "trapbook alignment" in text


def test_strain_of_a_stored_run_computes_its_derived_intermediate(cli, tmp_path):
    run = copy.deepcopy(MINIMAL_RUN)  # records a precursor only, no intermediate
    path = tmp_path / "run.json"
    path.write_text(json.dumps(run), encoding="utf-8")
    added = json.loads(cli("add", str(path), "--json").output)
    run_id = added.get("run_id") or added.get("id")
    res = cli("strain", run_id, "--json", "--quiet")
    assert res.exit_code == 0, res.output
    r = json.loads(res.output)
    assert r["run_id"] == run_id and r["kind"] == "aryne"
    assert r["intermediate_origin"].startswith("derived from the precursor")
    shown = cli("show", run_id).output
    assert "intermediate:" in shown and "derived from the precursor" in shown


def test_fast_tier_prints_no_class(cli):
    # Source: docs/sources.md, "Strain" — the fast tier is a prescreen and is never classed.
    res = cli("strain", "C12=CCCC(CCC1)C2", "--tier", "fast", "--quiet")
    assert res.exit_code == 0, res.output
    assert "no class" in res.output and "\n  class: " not in res.output


def test_alignment_help_explains_what_is_measured(cli):
    text = cli("alignment", "--help").output
    for words in ("Si–C–C–X dihedral", "Boltzmann", "Klyne–Prelog", "antiperiplanar", "synperiplanar", "diastereomer"):
        assert words in text


@pytest.mark.slow
def test_alignment_text_shows_diastereomers_side_by_side(cli):
    res = cli("alignment", "C[Si](C)(C)C1CCCCC1OS(=O)(=O)C(F)(F)F")
    assert res.exit_code == 0, res.output
    assert "warning: 2 diastereomers" in res.output
    assert "aligns after a ring flip" in res.output and "not periplanar" in res.output


def test_alignment_refuses_a_bad_temperature(cli):
    res = cli("alignment", BENZYNE_PRECURSOR, "--temperature", "-400", "--json")
    assert res.exit_code != 0
    assert "temperature" in json.loads(res.output)["error"].lower()
