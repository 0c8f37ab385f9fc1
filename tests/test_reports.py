"""HTML reports parse with the standard library's parser and carry their structures and plot;
CSV/xlsx exports read back with the standard csv module and openpyxl, units in the headers."""

from __future__ import annotations

import csv
import html.parser
import io
import json
import shutil

import pytest
from molmass import Formula

from trapbook import reports


class Page(html.parser.HTMLParser):
    """Counts tags and collects attributes and text; fails the test on a parse error."""

    def __init__(self):
        super().__init__()
        self.tags: dict[str, int] = {}
        self.attrs: list[tuple[str, str, str]] = []
        self.text: list[str] = []
        self.ids: set[str] = set()

    def handle_starttag(self, tag, attrs):
        self.tags[tag] = self.tags.get(tag, 0) + 1
        for k, v in attrs:
            self.attrs.append((tag, k, v or ""))
            if k == "id" and v:
                self.ids.add(v)

    def handle_data(self, data):
        self.text.append(data)


def _parse(text: str) -> Page:
    p = Page()
    p.feed(text)
    p.close()
    return p


def _self_contained(p: Page) -> None:
    assert "script" not in p.tags
    for tag, k, v in p.attrs:
        if k in ("src", "href") and tag != "a":
            assert not v.startswith(("http:", "https:", "//")), (tag, k, v)


def test_run_report_has_structures_amounts_and_outcome(demo_notebook):
    page = reports.run_report_html(demo_notebook, "TB-0001")
    p = _parse(page)
    _self_contained(p)
    run = demo_notebook.get_run("TB-0001")
    n_structs = len({ln.smiles for ln in run.lines if ln.role in ("precursor", "trap", "product")}) + 1  # + intermediate
    assert p.tags.get("svg", 0) >= n_structs
    text = " ".join(p.text)
    for name in [ln.name for ln in run.lines]:
        assert name in text
    for head in ("Amounts", "Steps", "Bench checks", "Outcome", "Strain"):
        assert head in text
    # Source: molmass M(C13H18O); 11.8 mg at 0.100 mmol → isolated yield printed to 0 decimals.
    y = 11.8 / Formula("C13H18O").mass / 0.100 * 100
    assert f"{y:.0f}" in text


def test_screen_report_has_heat_map_structures_and_plot(demo_notebook):
    page = reports.screen_report_html(demo_notebook, "SC-0001")
    p = _parse(page)
    _self_contained(p)
    assert p.tags.get("svg", 0) >= 1 + 1 + 3 + 1  # precursor, intermediate, three traps, the plot (demo SC-0001 files)
    assert "figure_1" in p.ids  # matplotlib's SVG root group: the strain-vs-outcome plot is inline
    cells = [v for tag, k, v in p.attrs if tag == "td" and k == "style" and v.startswith("background:")]
    assert len(cells) == 6  # 3 traps × 2 temperatures  # Source: the demo lab's SC-0001 run files
    text = " ".join(p.text)
    # Source: the demo lab's run files: TB-0018 (anthracene, 120 °C) has the highest isolated yield of
    # SC-0001, mass / M (molmass) / 0.100 mmol, as test_review.test_demo_review_names_the_best_conditions derives
    assert "Best run:" in text and "TB-0018" in text


def test_screen_report_plot_uses_cached_strain(demo_notebook_path, tmp_path):
    from trapbook.store import Notebook
    from trapbook.strain_link import get_strain

    path = tmp_path / "s.sqlite"
    shutil.copy(demo_notebook_path, path)
    with Notebook.open(path) as nb:
        for smi in ("C12=CCCC(CCC1)C2", "C12=CCCC(CC1)C2", "C12=CCC(CC1)CC2"):
            get_strain(nb, smi, tier="fast")
        smap = __import__("trapbook.review", fromlist=["strain_map"]).strain_map(nb)
        svg = reports.strain_plot_svg(smap)
        p = _parse(svg)
        # One marker path per (intermediate, trap) point with a yield, drawn by scatter as <use> elements.
        points = sum(
            1 for x in smap["intermediates"] if x["strain_kcal_mol"] is not None for t in x["traps"] if t["yield_pct"] is not None
        )
        assert p.tags.get("use", 0) >= points > 0
        run_page = reports.run_report_html(nb, "TB-0001")
        assert "kcal/mol" in run_page and "MMFF94" in run_page


def test_yield_colours_darken_with_yield():
    # common practice, no source: relative luminance (Rec. 709 weights) should fall as the yield rises
    def lum(hex_colour):
        r, g, b = (int(hex_colour[i : i + 2], 16) for i in (1, 3, 5))
        return 0.2126 * r + 0.7152 * g + 0.0722 * b

    values = [lum(reports.yield_colour(p)[0]) for p in range(0, 101, 5)]
    assert all(a > b for a, b in zip(values, values[1:]))
    assert reports.yield_colour(None)[0] == "#ffffff"


def test_report_cli_writes_file_and_refuses_bad_names(demo_notebook_path, tmp_path):
    from click.testing import CliRunner

    from trapbook.cli import main

    out = tmp_path / "sc.html"
    r = CliRunner().invoke(main, ["--db", str(demo_notebook_path), "report", "SC-0001", "-o", str(out), "--json"])
    assert r.exit_code == 0, r.output
    info = json.loads(r.output)
    assert info["kind"] == "screen" and out.exists() and info["bytes"] == len(out.read_bytes())
    r = CliRunner().invoke(main, ["--db", str(demo_notebook_path), "report", "TB-0404", "-o", str(tmp_path / "x.html")])
    assert r.exit_code == 2 and "Traceback" not in r.output
    r = CliRunner().invoke(main, ["--db", str(demo_notebook_path), "report", "TB-0001", "-o", str(tmp_path / "x.pdf")])
    assert r.exit_code == 2


def test_csv_export_has_units_in_headers_and_reads_back(demo_notebook):
    from trapbook.exchange import export_runs

    text = export_runs(demo_notebook, "csv", screen="SC-0001")
    rows = list(csv.DictReader(io.StringIO(text)))
    assert len(rows) == 6
    heads = rows[0].keys()
    for h in ("limiting amount (mmol)", "T max (°C)", "time (min)", "isolated yield (%)", "NMR yield (%)", "ee (%)"):
        assert h in heads
    r13 = next(r for r in rows if r["run id"] == "TB-0013")
    # Source: molmass M(C13H18O); demo TB-0013: 7.2 mg furan adduct at 0.100 mmol.
    assert float(r13["isolated yield (%)"]) == pytest.approx(7.2 / Formula("C13H18O").mass / 0.100 * 100, rel=1e-3)
    # Source: demo TB-0013's own steps (80 °C, 16 h); 1 h = 60 min (SI Brochure, Table 8)
    assert float(r13["T max (°C)"]) == 80.0 and float(r13["time (min)"]) == 16 * 60
    assert r13["level: trap"] == "furan"


def test_xlsx_export_reads_back_with_openpyxl(demo_notebook, tmp_path):
    from openpyxl import load_workbook

    from trapbook.exchange import export_runs

    out = tmp_path / "runs.xlsx"
    export_runs(demo_notebook, "xlsx", screen="SC-0001", output=str(out))
    wb = load_workbook(out)
    assert wb.sheetnames == ["runs", "lines", "screen"]
    ws = wb["runs"]
    head = [c.value for c in ws[1]]
    assert "isolated yield (%)" in head and ws.max_row == 7
    lines = wb["lines"]
    lhead = [c.value for c in lines[1]]
    assert {"mass (mg)", "volume (µL)", "amount (mmol)", "MW (g/mol)"} <= set(lhead)
    # Source: docs/sources.md caesium fluoride 151.90 g/mol; 5 equiv at 0.100 mmol → 75.95 mg weighed.
    cs = [dict(zip(lhead, [c.value for c in row])) for row in lines.iter_rows(min_row=2) if row[1].value == "CsF"]
    assert cs and all(r["mass (mg)"] == pytest.approx(0.5 * 151.90, rel=1e-3) for r in cs)
