"""One rule, one answer: the notebook's check settings reach every view that shows findings,
the headline yield is the same in every list, and a failing check is never a clean run."""

from __future__ import annotations

import copy
import json
import subprocess
import sys

import pytest
from click.testing import CliRunner

from conftest import ROOT
from samples import MINIMAL_RUN
from trapbook.cli import main

# The minimal run puts 10 equiv of furan on its limiting line. A lab that asks for 20 equiv
# must see trap-low everywhere; with the default minimum (2 equiv) nowhere.
# common practice, no source: 20 equiv is just a lab threshold above the run's 10 equiv.
STRICT = "trap_min_equiv=20"


def _cli(db):
    runner = CliRunner()

    def invoke(*args, ok=True):
        res = runner.invoke(main, ["--db", str(db), "--author", "tester", *args], catch_exceptions=False)
        if ok:
            assert res.exit_code == 0, res.output
        return res

    return invoke


def _views(tmp_path, strict: bool) -> dict[str, bool]:
    """Whether each view flags trap-low for the minimal run."""
    db = tmp_path / "nb.sqlite"
    cli = _cli(db)
    cli("init")
    if strict:
        cli("settings", "--set", STRICT)
    run = tmp_path / "run.json"
    run.write_text(json.dumps(MINIMAL_RUN), encoding="utf-8")
    rid = cli("add", str(run)).output.split()[0]
    out = {"check": "trap-low" in [f["code"] for f in json.loads(cli("check", rid, "--json").output)]}
    sheet = tmp_path / "sheet.html"
    plan = json.loads(cli("screen", "plan", rid, "--vary", "temperature=-78 °C,-40 °C", "--sheet", str(sheet), "--json").output)
    out["bench sheet"] = "trap-low" in sheet.read_text(encoding="utf-8")
    out["planned runs (plan)"] = all("trap-low" in [f["code"] for f in r["findings"]] for r in plan["runs"])
    stored = json.loads(cli("list", "--json").output)
    planned = [r for r in stored if r["id"] in plan["run_ids"]]
    assert len(planned) == 2
    out["planned runs (stored)"] = all(_stored_codes(db, r["id"]) for r in planned)
    ord_file = tmp_path / "out.pbtxt"
    cli("export", "--format", "ord", "-o", str(ord_file))
    out["ORD export"] = "trap-low" in ord_file.read_text(encoding="utf-8")
    return out


def _stored_codes(db, run_id) -> bool:
    from trapbook.store import Notebook

    with Notebook.open(db) as nb:
        row = nb.conn.execute("SELECT findings FROM run_index WHERE run_id = ?", (run_id,)).fetchone()
    return "trap-low" in json.loads(row[0] or "[]")  # the summary row keeps the codes


def test_the_trap_minimum_set_for_the_notebook_reaches_every_view(tmp_path):
    strict = _views(tmp_path / "strict", strict=True)
    assert strict == {k: True for k in strict}, strict


def test_with_the_default_minimum_no_view_flags_ten_equiv(tmp_path):
    relaxed = _views(tmp_path / "default", strict=False)
    assert relaxed == {k: False for k in relaxed}, relaxed


# --- a failing check is an error, never a clean run --------------------------------------------


def test_check_exits_non_zero_when_the_checks_cannot_load(tmp_path):
    db = tmp_path / "nb.sqlite"
    cli = _cli(db)
    cli("init")
    run = tmp_path / "run.json"
    run.write_text(json.dumps(MINIMAL_RUN), encoding="utf-8")
    # A fresh interpreter whose bench checks fail to import, as a broken installation would.
    code = (
        "import sys, trapbook.checks.runner as r\n"
        "def broken(*a, **k):\n    raise ImportError('the checks module is broken')\n"
        "r.run_checks = broken\nimport trapbook.checks\ntrapbook.checks.run_checks = broken\n"
        "from trapbook.cli import main\nsys.exit(main(['--db', sys.argv[1], 'check', sys.argv[2]]))\n"
    )
    proc = subprocess.run([sys.executable, "-c", code, str(db), str(run)], capture_output=True, text=True, cwd=ROOT)
    assert proc.returncode != 0
    assert "nothing to flag" not in proc.stdout
    assert "error" in proc.stderr and "checks module is broken" in proc.stderr


def test_the_html_report_never_reads_clean_when_checks_raise(monkeypatch, tmp_path):
    from trapbook import reports
    from trapbook.errors import TrapbookError
    from trapbook.records import load_run
    from trapbook.store import Notebook

    with Notebook.create(tmp_path / "nb.sqlite") as nb:
        rid = nb.add_run(load_run(copy.deepcopy(MINIMAL_RUN)), author="t", reason="created").run_id

        def broken(*a, **k):
            raise TrapbookError("the water check failed")

        monkeypatch.setattr("trapbook.checks.run_checks", broken)
        page = reports.run_report_html(nb, rid)
    assert "Nothing to flag" not in page
    assert "could not run: the water check failed" in page


# --- the headline yield ------------------------------------------------------------------------

# 1,4-dihydro-1,4-epoxynaphthalene, the furan adduct of benzyne: C10H8O.
# Source: IUPAC standard atomic weights (C 12.011, H 1.008, O 15.999) -> 144.173 g/mol.
ADDUCT_MW = 10 * 12.011 + 8 * 1.008 + 15.999


def yield_run(isolated_pct: float, nmr_pct: float) -> dict:
    """The minimal run with its adduct: an isolated mass and a qNMR record giving these yields.

    qNMR: n_P = n_IS (I_P/N_P)/(I_IS/N_IS) (the internal-standard relation); with 0.200 mmol
    standard, one proton each and I_IS = 1, the product integral is the fraction of 0.200 mmol.
    """
    d = copy.deepcopy(MINIMAL_RUN)
    d["lines"].append({"role": "product", "name": "adduct", "smiles": "C1=CC2OC1c1ccccc12"})
    mass_mg = isolated_pct / 100 * 0.200 * ADDUCT_MW
    d["outcome"] = {
        "products": [
            {
                "product": "adduct",
                "isolated_mass": f"{mass_mg:.4f} mg",
                "qnmr": {
                    "standard_amount": "0.200 mmol",
                    "standard_integral": 1.0,
                    "standard_protons": 1,
                    "integral": nmr_pct / 100,
                    "protons": 1,
                },
            }
        ]
    }
    return d


def test_headline_yield_is_isolated_in_every_view(tmp_path):
    from trapbook import review
    from trapbook.amounts import headline_yield
    from trapbook.store import Notebook

    d = yield_run(70.0, 72.0)
    d["intermediate"] = "C1=CC#CC=C1"
    d["intermediate_name"] = "benzyne"
    d["screen"] = None
    db = tmp_path / "nb.sqlite"
    cli = _cli(db)
    cli("init")
    f = tmp_path / "run.json"
    f.write_text(json.dumps({k: v for k, v in d.items() if v is not None}), encoding="utf-8")
    rid = cli("add", str(f)).output.split()[0]
    with Notebook.open(db) as nb:
        run = nb.get_run(rid)
        core = headline_yield(run)
        index = nb.conn.execute("SELECT yield_pct, yield_kind FROM run_index WHERE run_id = ?", (rid,)).fetchone()
        smap = review.strain_map(nb)
    listed = [r for r in json.loads(cli("list", "--json").output) if r["id"] == rid][0]
    mapped = smap["intermediates"][0]["traps"][0]
    shown = json.loads(cli("strain-map", "--json").output)["intermediates"][0]["traps"][0]
    assert core[1] == "isolated" and core[0] == pytest.approx(70.0, abs=0.01)
    for view in (
        (index[0], index[1]),
        (listed["yield_pct"], listed["yield_kind"]),
        (mapped["yield_pct"], mapped["yield_kind"]),
        (shown["yield_pct"], shown["yield_kind"]),
    ):
        assert view[1] == "isolated" and view[0] == pytest.approx(70.0, abs=0.01), view


def test_isolated_and_nmr_yields_far_apart_are_flagged():
    from trapbook.checks import run_checks
    from trapbook.records import load_run

    # 66 % isolated against 36 % by NMR: 30 points apart, above the 15-point default.
    # common practice, no source (the 15-point limit; docs/sources.md, "Checks")
    far = [f for f in run_checks(load_run(yield_run(66.0, 36.0))) if f.code == "yield-disagree"]
    assert len(far) == 1 and far[0].severity == "warn" and "66" in far[0].message and "36" in far[0].message
    near = [f for f in run_checks(load_run(yield_run(70.0, 72.0))) if f.code == "yield-disagree"]
    assert near == []
