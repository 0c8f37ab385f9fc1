"""The experimental paragraph (`trapbook write`): read back, not snapshotted.

Every amount in a paragraph is worked out here from the run file's own quantities and molar
masses from molmass (an independent library, IUPAC atomic weights), then looked for in the
paragraph by a small parser; the order of additions and of the steps is read back from the
sentences. The .docx is opened with python-docx and must hold the same words.
"""

from __future__ import annotations

import html.parser
import json
import re
from pathlib import Path

import docx
import pytest
from click.testing import CliRunner
from molmass import Formula

from trapbook.cli import main
from trapbook.procedure import render, run_procedure, screen_procedure
from trapbook.records import load_run, load_screen

DEMO = Path(__file__).resolve().parents[1] / "demo_lab"

# Source: molmass (independent library; standard atomic weights, IUPAC). Formulas written by hand
# from the structures: 1-TMS-bicyclo[3.3.1]nonan-2-yl triflate is C9H14 + Si(CH3)3 + OSO2CF3.
FORMULAS = {
    "silyl triflate 331 (1-TMS-bicyclo[3.3.1]nonan-2-yl OTf)": "C13H23F3O3SSi",
    "silyl triflate 431 (1-TMS-bicyclo[4.3.1]decan-2-yl OTf)": "C14H25F3O3SSi",
    "anthracene": "C14H10",
    "CsF": "CsF",
    "TBAB": "C16H36BrN",
    "furan": "C4H4O",
    # anthracene adduct of bicyclo[3.3.1]non-1-ene: C9H14 + C14H10
    "anthracene adduct 331": "C23H24",
    "anthracene adduct 431": "C24H26",
    "furan adduct": "C13H18O",
}

#: Amount of a material in the paragraph: "name (… mg, … mmol, … equiv)", mass and µL optional.
AMOUNT = re.compile(
    r"(?P<name>[^,()]+(?:\([^()]*\))?[^,()]*?) \((?:(?P<mg>[\d.]+) mg, )?(?:(?P<ul>\d+) µL, )?"
    r"(?P<mmol>[\d.]+) mmol, (?P<equiv>[\d.]+) equiv\)"
)


def mw(key: str) -> float:
    return Formula(FORMULAS[key]).mass


def sig3(x: float) -> str:
    """Three significant figures with trailing zeros kept (0.100, 0.0709)."""
    return f"{x:#.3g}".rstrip(".")


def demo_run(run_id: str):
    return load_run(json.loads((DEMO / "runs" / f"{run_id}.json").read_text(encoding="utf-8")))


def paragraph_of(run) -> str:
    doc = run_procedure(run)
    return doc.blocks[1].text


def amounts_in(text: str) -> list[dict]:
    return [m.groupdict() for m in AMOUNT.finditer(text)]


def sentences(text: str) -> list[str]:
    return re.split(r"(?<=[.])\s+(?=[A-Z])", text)


@pytest.mark.parametrize(
    "run_id, precursor_key, adduct_key",
    [
        ("TB-0002", "silyl triflate 331 (1-TMS-bicyclo[3.3.1]nonan-2-yl OTf)", "anthracene adduct 331"),
        ("TB-0009", "silyl triflate 431 (1-TMS-bicyclo[4.3.1]decan-2-yl OTf)", "anthracene adduct 431"),
    ],
)
def test_anthracene_run_paragraph_has_every_reagent_with_its_numbers(run_id, precursor_key, adduct_key):
    data = json.loads((DEMO / "runs" / f"{run_id}.json").read_text(encoding="utf-8"))
    text = paragraph_of(load_run(data))
    scale = float(data["lines"][0]["amount"].split()[0])  # "0.100 mmol"
    equivs = {ln["name"]: float(ln["equiv"]) for ln in data["lines"] if "equiv" in ln}
    equivs[precursor_key] = 1.0
    found = {a["name"].strip().casefold(): a for a in amounts_in(text)}  # a sentence may open with the name
    for name, eq in equivs.items():
        key = name if name in FORMULAS else precursor_key
        mmol = scale * eq
        assert name.casefold() in found, (name, text)
        got = found[name.casefold()]
        assert got["mg"] == f"{mmol * mw(key):.1f}"  # mg to 0.1 (common practice, no source)
        assert got["mmol"] == sig3(mmol)  # mmol to 3 significant figures
        assert got["equiv"] == f"{eq:.1f}"  # equiv to one decimal
    # Order of additions: the step's own order, read back from the paragraph.
    first_step = data["steps"][0]["add"]
    shown_order = [a["name"].strip().casefold() for a in amounts_in(text)]
    wanted = [n.casefold() for n in first_step if n in equivs]
    assert [n for n in shown_order if n in wanted] == wanted
    # Solvent: 1.0 mL of MeCN holds 0.100 mmol of precursor -> 0.100 M (c = n / V).
    assert "MeCN (1.00 mL, 0.100 M)" in text
    # Steps in order: combined, then the sealed vessel heated at the step's temperature for its hold.
    said = sentences(text)
    combined = next(i for i, s in enumerate(said) if "were combined" in s)
    heated = next(i for i, s in enumerate(said) if "sealed" in s)
    assert combined < heated
    assert f"heated at {data['steps'][1]['temperature']} for {data['steps'][1]['hold']}" in said[heated]
    # Yield: isolated mass / M(adduct) against the limiting amount.
    mass = float(data["outcome"]["products"][0]["isolated_mass"].split()[0])
    n = mass / mw(adduct_key)
    assert f"({mass:.1f} mg, {sig3(n)} mmol, {100 * n / scale:.0f}%)" in text


def test_furan_run_steps_read_back_in_order():
    """TB-0001: combine, cool to −78 °C, add TBAF over 2 min, warm to 23 °C for 2 h."""
    data = json.loads((DEMO / "runs" / "TB-0001.json").read_text(encoding="utf-8"))
    text = paragraph_of(load_run(data))
    said = sentences(text)
    events = [
        "were combined at 23 °C under N2",
        "cooled to \u221278 °C and stirred for 5 min",
        "TBAF 1.0 M in THF (150 µL, 0.150 mmol, 1.5 equiv) was added over 2 min",
        "warmed to 23 °C and stirred for 2 h",
    ]
    where = [next(i for i, s in enumerate(said) if e in s) for e in events]
    assert where == sorted(where) and len(set(where)) == len(where)
    # Furan, a neat liquid: 10 equiv of 0.100 mmol; volume = mass / density (0.951 g/mL in the run file).
    mmol = 0.100 * 10
    mass = mmol * mw("furan")
    assert f"furan ({mass:.1f} mg, {mass / 0.951:.0f} µL, {sig3(mmol)} mmol, 10.0 equiv)" in text


def test_characterisation_block_has_hrms_calcd_found_and_the_record_words():
    data = json.loads((DEMO / "runs" / "TB-0001.json").read_text(encoding="utf-8"))
    data["steps"][-1] = {"temperature": "-78 °C to rt", "hold": "overnight"}
    data["outcome"] = {
        "workup": "The mixture was concentrated under reduced pressure.",
        "eluent": "pentane/Et2O 20:1",
        "products": [
            {
                "product": "furan adduct",
                "isolated_mass": "11.8 mg",
                "dr": "5:1",
                "appearance": "colourless oil",
                "rf": 0.42,
                "nmr_text": "1H NMR (400 MHz, CDCl3) δ 6.35 (dd, 1H)",
                "hrms": {"ion": "[M+Na]+", "found_mz": 213.1252},
            }
        ],
    }
    doc = run_procedure(load_run(data))
    text = doc.blocks[1].text
    assert "allowed to warm from \u221278 °C to rt and stirred overnight" in text  # the words as written
    said = sentences(text)
    workup = next(i for i, s in enumerate(said) if "concentrated under reduced pressure" in s)
    column = next(i for i, s in enumerate(said) if "Flash column chromatography (pentane/Et2O 20:1)" in s)
    assert workup < column and "dr 5:1" in said[column] and "as a colourless oil" in said[column]
    block = doc.blocks[2].text
    # Source: molmass monoisotopic mass of C13H18ONa, less one electron (CODATA 2018, 0.000548580 u).
    calcd = Formula("C13H18ONa").monoisotopic_mass - 0.000548579909
    assert f"calcd for C13H18NaO+ {calcd:.4f}, found 213.1252" in block
    assert "Rf = 0.42 (pentane/Et2O 20:1)" in block and "1H NMR (400 MHz, CDCl3) δ 6.35 (dd, 1H)" in block
    assert block.index("Colourless oil") < block.index("1H NMR") < block.index("HRMS")


def test_docx_opens_and_holds_the_same_words(tmp_path, demo_notebook_path):
    out = tmp_path / "p.docx"
    res = CliRunner().invoke(main, ["--db", str(demo_notebook_path), "write", "TB-0002", "--format", "docx", "-o", str(out)])
    assert res.exit_code == 0, res.output
    opened = docx.Document(str(out))
    words = [p.text for p in opened.paragraphs if p.text]
    text = CliRunner().invoke(main, ["--db", str(demo_notebook_path), "write", "TB-0002"]).stdout
    assert words == [block for block in text.strip().split("\n\n")]
    assert any("anthracene (53.5 mg, 0.300 mmol, 3.0 equiv)" in w for w in words)


def test_screen_markdown_has_the_conditions_table():
    screen = load_screen(json.loads((DEMO / "screens" / "SC-0001.json").read_text(encoding="utf-8")))
    runs = [demo_run(r) for r in screen.runs]
    md = render(screen_procedure(screen, runs), "md")
    rows = [ln for ln in md.splitlines() if ln.startswith("| ")]
    header = [c.strip() for c in rows[0].strip("|").split("|")]
    assert header[:4] == ["entry", "run", "trap", "temperature"]
    assert re.search(r"^\|(---\|)+$", md, re.M)
    body = [[c.strip() for c in r.strip("|").split("|")] for r in rows[1:]]
    assert [b[1] for b in body] == screen.runs
    for b, run in zip(body, runs):
        assert b[2:4] == [run.factors["trap"], run.factors["temperature"]]
    # TB-0018: 22.2 mg of C23H24 from 0.100 mmol -> 74 %.
    row = body[screen.runs.index("TB-0018")]
    mass = float(runs[-1].outcome.products[0].isolated_mass.magnitude)
    assert f"{100 * mass / mw('anthracene adduct 331') / 0.100:.0f}%" in row
    # The varied trap and temperature are not written as one run's values in the general procedure.
    general = md.split("*Table 1")[0]
    assert "the trap (Table 1)" in general and "the temperature given in Table 1" in general
    assert "furan (" not in general


def test_markdown_and_text_escape_stored_text():
    data = json.loads((DEMO / "runs" / "TB-0002.json").read_text(encoding="utf-8"))
    data["steps"][0]["note"] = "vial *7* | row_2 [a](http://x)"
    md = render(run_procedure(load_run(data)), "md")
    assert r"vial \*7\* \| row\_2 \[a\](http://x)" in md


def test_write_refuses_planned_runs_and_docx_to_the_terminal(tmp_path, demo_notebook_path):
    data = json.loads((DEMO / "runs" / "TB-0002.json").read_text(encoding="utf-8"))
    data.update(status="planned")
    data.pop("outcome")
    f = tmp_path / "planned.json"
    f.write_text(json.dumps(data), encoding="utf-8")
    runner = CliRunner()
    res = runner.invoke(main, ["--db", str(demo_notebook_path), "write", str(f)])
    assert res.exit_code == 2 and "finished run" in res.stderr
    res = runner.invoke(main, ["--db", str(demo_notebook_path), "write", "TB-0002", "--format", "docx"])
    assert res.exit_code == 2 and "-o FILE.docx" in res.stderr
    res = runner.invoke(main, ["--db", str(demo_notebook_path), "write", "NOPE-1", "--json"])
    assert res.exit_code == 2 and json.loads(res.stdout)["error"].startswith("no run or screen")


# --- reports: the raw data and the version's reason, escaped --------------------------------


class _Page(html.parser.HTMLParser):
    """Text and start tags of a page; a stored '<script>' that was escaped stays text."""

    def __init__(self):
        super().__init__()
        self.tags: list[str] = []
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)

    def handle_data(self, data):
        self.text.append(data)


def test_run_report_shows_raw_data_hrms_and_the_version_reason_escaped(notebook):
    from trapbook import reports

    data = json.loads((DEMO / "runs" / "TB-0004.json").read_text(encoding="utf-8"))
    data.pop("id")
    data["outcome"]["products"][0]["hrms"] = {"ion": "[M+Na]+", "found_mz": 415.2030}
    data["outcome"]["products"][0]["appearance"] = "<script>alert(1)</script> solid"
    data["outcome"]["workup"] = "filtered & concentrated <b>"
    rid = notebook.add_run(data, author="tester").run_id
    run = notebook.get_run(rid)
    notebook.save_run(run, 1, author="tester", reason="integrals re-read <i>after</i> phasing & baseline")
    page = _Page()
    page.feed(reports.run_report_html(notebook, rid))
    text = " ".join(" ".join(page.text).split())
    assert "script" not in page.tags  # the stored <script> stayed text
    assert "<script>alert(1)</script> solid" in text and "filtered & concentrated <b>" in text
    assert "Reason: integrals re-read <i>after</i> phasing & baseline" in text and "Version 2" in text
    q = data["outcome"]["products"][0]["qnmr"]
    assert f"product {q['integral']:g} for {q['protons']} H" in text
    assert f"{q['standard_integral']:g} for {q['standard_protons']} H" in text
    # Source: molmass, C29H28O (the DPIBF adduct of bicyclo[3.3.1]non-1-ene) + Na, less one electron
    # (CODATA 2018); ppm = (found - calcd) / calcd * 1e6.
    calcd = Formula("C29H28ONa").monoisotopic_mass - 0.000548579909
    ppm = (415.2030 - calcd) / calcd * 1e6
    assert f"{calcd:.4f} 415.2030 {ppm:+.1f}" in text


def test_screen_report_draws_the_adducts_and_lists_raw_masses(demo_notebook):
    from trapbook import reports

    page_html = reports.screen_report_html(demo_notebook, "SC-0001")
    screen = demo_notebook.get_screen("SC-0001")
    runs = demo_notebook.screen_runs(screen)
    products = {ln.smiles for r in runs for ln in r.lines if ln.role == "product"}
    page = _Page()
    page.feed(page_html)
    text = " ".join(" ".join(page.text).split())
    for smiles in products:
        assert smiles in text  # each adduct's drawing carries its SMILES as caption
    for r in runs:
        mass = r.outcome.products[0].isolated_mass.magnitude
        assert f"{r.id} {r.outcome.products[0].product} {mass:.1f}" in text


def test_screen_report_gives_each_runs_version_reason_escaped(tmp_path, demo_notebook_path):
    import shutil

    from trapbook import reports
    from trapbook.store import Notebook

    path = tmp_path / "demo.sqlite"
    shutil.copy(demo_notebook_path, path)
    with Notebook.open(path) as nb:
        run = nb.get_run("TB-0014")
        nb.save_run(run, nb.run_meta("TB-0014")["version"], author="tester", reason="mass re-weighed <dry> & checked")
        page = _Page()
        page.feed(reports.screen_report_html(nb, "SC-0001"))
    text = " ".join(" ".join(page.text).split())
    assert "v2: mass re-weighed <dry> & checked" in text and "dry" not in page.tags


@pytest.mark.parametrize("odd", ["\ufffe", "\uffff"])
def test_docx_shows_characters_xml_cannot_hold(odd, tmp_path):
    # Source: XML 1.0 (Fifth Edition), section 2.2, the Char production excludes U+FFFE and U+FFFF.
    data = json.loads((DEMO / "runs" / "TB-0009.json").read_text(encoding="utf-8"))
    data["steps"][0]["note"] = f"vial{odd}A"
    blob = render(run_procedure(load_run(data)), "docx")
    out = tmp_path / "odd.docx"
    out.write_bytes(blob)
    text = "\n".join(p.text for p in docx.Document(str(out)).paragraphs)
    assert f"vial\\u{ord(odd):04x}A" in text
