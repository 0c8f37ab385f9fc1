"""Runs as spreadsheet rows: CSV and xlsx with the unit of every number in its column header.

A spreadsheet loses units the moment a number is pasted, so every numeric column says
its unit ("limiting amount (mmol)", "T max (°C)") and holds plain numbers at full
precision in that unit. One row per run; the xlsx file adds a sheet with one row per
line (what was weighed or measured) and, for a screen, a sheet of the varied levels.
"""

from __future__ import annotations

import csv
import io
from pathlib import Path

from ..errors import ExchangeError, TrapbookError
from ..files import write_atomic

RUN_COLUMNS = (
    "run id",
    "title",
    "chemist",
    "date",
    "status",
    "screen",
    "tags",
    "intermediate",
    "intermediate SMILES",
    "precursor",
    "trap",
    "trap equiv",
    "fluoride source",
    "fluoride equiv",
    "additive",
    "solvent",
    "limiting amount (mmol)",
    "concentration (M)",
    "T max (°C)",
    "T min (°C)",
    "time (min)",
    "sealed",
    "isolated yield (%)",
    "NMR yield (%)",
    "dr",
    "ee (%)",
    "worst finding",
)
LINE_COLUMNS = (
    "run id",
    "line",
    "role",
    "SMILES",
    "given as",
    "MW (g/mol)",
    "equiv",
    "amount (mmol)",
    "mass (mg)",
    "volume (µL)",
    "molarity (M)",
    "purity (fraction)",
)


#: A cell whose text starts with one of these is read as a formula by spreadsheet programs
#: (OWASP, "CSV Injection"); docs/sources.md, "Records, files and exchange formats".
FORMULA_START = ("=", "+", "-", "@", "\t", "\r")


def inert(value):
    """Stored text as a CSV cell a spreadsheet shows and never runs.

    A title such as '=HYPERLINK(...)' is a chemist's text, not a formula: the leading quote
    is the spreadsheet's own mark for "this is text". Numbers and other text pass unchanged.
    """
    if isinstance(value, str) and value.startswith(FORMULA_START):
        return "'" + value
    return value


def _append_text_safe(sheet, values: list) -> None:
    """Append a row whose text cells are stored as text, so none becomes a formula."""
    sheet.append(values)
    for cell in sheet[sheet.max_row]:
        if isinstance(cell.value, str):
            cell.data_type = "s"


def _names(run, role: str) -> str:
    return "; ".join(ln.name for ln in run.lines_by_role(role))


def _equiv(table, run, role: str):
    rows = [table.line(ln.name) for ln in run.lines_by_role(role)] if table else []
    vals = [r.equiv for r in rows if r is not None and r.equiv is not None]
    return vals[0] if len(vals) == 1 else ("; ".join(f"{v:g}" for v in vals) if vals else None)


def run_row(run, index_row: dict | None = None) -> dict:
    """One spreadsheet row of a run; numbers stay numbers, in the unit of their header."""
    from .. import amounts
    from ..store.index import _temps, _time

    table = None
    try:
        table = amounts.compute(run)
    except TrapbookError:
        table = None
    try:
        ys = amounts.product_yields(run, table) if table else []
    except TrapbookError:
        ys = []
    best = amounts.headline_product(ys)
    try:
        tmin, tmax = _temps(run)
        tsum = _time(run)
    except TrapbookError:
        tmin = tmax = tsum = None
    factors = {f"level: {k}": v for k, v in run.factors.items()}
    row = {
        "run id": run.id,
        "title": run.title,
        "chemist": run.chemist,
        "date": run.date.isoformat() if run.date else None,
        "status": run.status,
        "screen": run.screen,
        "tags": ", ".join(run.tags),
        "intermediate": run.intermediate_name,
        "intermediate SMILES": run.intermediate,
        "precursor": _names(run, "precursor"),
        "trap": _names(run, "trap"),
        "trap equiv": _equiv(table, run, "trap"),
        "fluoride source": _names(run, "fluoride source"),
        "fluoride equiv": _equiv(table, run, "fluoride source"),
        "additive": _names(run, "additive"),
        "solvent": _names(run, "solvent"),
        "limiting amount (mmol)": table.limiting_mmol if table else None,
        "concentration (M)": table.concentration_M if table else None,
        "T max (°C)": tmax,
        "T min (°C)": tmin,
        "time (min)": tsum,
        "sealed": any(s.sealed for s in run.steps),
        "isolated yield (%)": best.isolated_yield_pct if best else None,
        "NMR yield (%)": best.nmr_yield_pct if best else None,
        "dr": best.dr if best else None,
        "ee (%)": best.ee_pct if best else None,
        "worst finding": (index_row or {}).get("worst"),
    }
    row.update(factors)
    return row


def line_rows(run) -> list[dict]:
    from .. import amounts

    try:
        table = amounts.compute(run)
    except TrapbookError:
        return [
            {"run id": run.id, "line": ln.name, "role": ln.role, "SMILES": ln.smiles, "given as": ln.given} for ln in run.lines
        ]
    out = []
    for ln, x in zip(run.lines, table.lines):
        out.append(
            {
                "run id": run.id,
                "line": x.name,
                "role": x.role,
                "SMILES": ln.smiles,
                "given as": x.given,
                "MW (g/mol)": x.mw_g_mol,
                "equiv": x.equiv,
                "amount (mmol)": x.mmol,
                "mass (mg)": x.mass_mg,
                "volume (µL)": x.volume_ul,
                "molarity (M)": x.molarity_M,
                "purity (fraction)": x.purity,
            }
        )
    return out


def _index_rows(nb) -> dict[str, dict]:
    if nb is None:
        return {}
    return {r["id"]: r for r in nb.list_runs(include_withdrawn=True)}


def _columns(rows: list[dict]) -> list[str]:
    extra = sorted({k for r in rows for k in r if k not in RUN_COLUMNS})
    return list(RUN_COLUMNS) + extra


def runs_csv(nb, runs, screen=None) -> str:
    idx = _index_rows(nb)
    rows = [run_row(r, idx.get(r.id)) for r in runs]
    buf = io.StringIO()
    w = csv.DictWriter(buf, fieldnames=_columns(rows), extrasaction="ignore", lineterminator="\n")
    w.writeheader()
    for r in rows:
        w.writerow({k: ("" if v is None else inert(v)) for k, v in r.items()})
    return buf.getvalue()


def export_csv(nb, runs, screen=None, output=None):
    """CSV text (returned) or a file (its path returned), one row per run."""
    text = runs_csv(nb, runs, screen)
    if output is None:
        return text
    write_atomic(Path(output), text.encode("utf-8-sig"))  # the BOM makes spreadsheet programs read µ and ° right
    return str(output)


def export_xlsx(nb, runs, screen=None, output=None):
    """An .xlsx workbook: sheets 'runs', 'lines' and, for a screen, 'screen'. Needs an output path."""
    if not output:
        raise ExchangeError("an xlsx export needs a file", "add -o FILE.xlsx")
    from openpyxl import Workbook
    from openpyxl.styles import Font

    idx = _index_rows(nb)
    rows = [run_row(r, idx.get(r.id)) for r in runs]
    wb = Workbook()
    ws = wb.active
    ws.title = "runs"
    cols = _columns(rows)
    ws.append(cols)
    for r in rows:
        _append_text_safe(ws, [r.get(c) for c in cols])
    ws2 = wb.create_sheet("lines")
    ws2.append(list(LINE_COLUMNS))
    for run in runs:
        for lr in line_rows(run):
            _append_text_safe(ws2, [lr.get(c) for c in LINE_COLUMNS])
    if screen and nb is not None:
        sc = nb.get_screen(screen)
        ws3 = wb.create_sheet("screen")
        _append_text_safe(ws3, ["screen id", sc.id])
        _append_text_safe(ws3, ["name", sc.name])
        _append_text_safe(ws3, ["scale", sc.scale])
        for k, v in sc.factors.items():
            _append_text_safe(ws3, [f"levels: {k}", ", ".join(v)])
    for sheet in wb.worksheets:
        for cell in sheet[1]:
            cell.font = Font(bold=True)
        sheet.freeze_panes = "A2"
    buf = io.BytesIO()
    wb.save(buf)
    write_atomic(Path(output), buf.getvalue())
    return str(output)


EXPORTERS = {"csv": export_csv, "xlsx": export_xlsx}
