"""A screen as a paper writes it: one general procedure, and the conditions varied from run
to run (with each run's yield) as a table."""

from __future__ import annotations

from dataclasses import dataclass

from .. import amounts
from ..display import DASH, fmt_equiv_paper, fmt_molarity, fmt_pct
from ..errors import TrapbookError
from ..phrases import hold_as_written, temperature_as_written
from ..records import Run, Screen
from .document import Document, Heading, Paragraph, Table
from .run import amount_table, procedure_paragraph
from .steps import Varied

TABLE_REF = "Table 1"


@dataclass
class RunFacts:
    """What the table needs of one run: its amounts (or None) and its best product's yields."""

    run: Run
    table: amounts.AmountTable | None
    best: amounts.ProductYield | None


def _facts(run: Run) -> RunFacts:
    try:
        table = amounts.compute(run)
        best = amounts.headline_product(amounts.product_yields(run, table))
    except TrapbookError:
        return RunFacts(run, None, None)
    return RunFacts(run, table, best)


def _base_run(screen: Screen, runs: list[Run]) -> Run:
    if screen.base_run:
        found = [r for r in runs if r.id == screen.base_run]
        if found:
            return found[0]
    done = [r for r in runs if r.status == "done"]
    return (done or runs)[0]


def _counterparts(base: Run, run: Run) -> dict[str, object]:
    """Each base line's counterpart in another run: the line of the same role at the same place."""
    out, seen = {}, {}
    for line in base.lines:
        k = seen.get(line.role, 0)
        seen[line.role] = k + 1
        same_role = run.lines_by_role(line.role)
        out[line.name.casefold()] = same_role[k] if k < len(same_role) else None
    return out


def _equiv(facts: RunFacts, line) -> float | None:
    row = facts.table.line(line.name) if facts.table is not None and line is not None else None
    return row.equiv if row is not None else None


def _varied(base: Run, facts: list[RunFacts]) -> tuple[Varied, list[tuple[str, str]]]:
    """What changes between the runs, and the extra table columns (label, base line key) it needs."""
    varied = Varied()
    columns: list[tuple[str, str]] = []
    parts = [_counterparts(base, f.run) for f in facts]
    for line in base.lines:
        key = line.name.casefold()
        others = [p[key] for p in parts]
        names = {o.name.casefold() for o in others if o is not None}
        equivs = {fmt_equiv_paper(_equiv(f, o)) for f, o in zip(facts, others) if o is not None and line.role != "solvent"}
        if len(names) <= 1 and len(equivs) <= 1:
            continue
        if len(equivs) > 1:
            columns.append((f"{line.role} (equiv)", key))
            varied.lines[key] = f"the {line.role} ({TABLE_REF})"
        else:
            varied.lines[key] = f"the {line.role} ({next(iter(equivs))} equiv, {TABLE_REF})"
    concentrations = {fmt_molarity(f.table.concentration_M) for f in facts if f.table is not None}
    varied.concentration_in_table = len(concentrations) > 1
    for i, _step in enumerate(base.steps):
        steps = [f.run.steps[i] for f in facts if i < len(f.run.steps)]
        if len({temperature_as_written(s) for s in steps}) > 1:
            varied.temperatures[i] = f"the temperature given in {TABLE_REF}"
        if len({hold_as_written(s) for s in steps}) > 1:
            varied.holds[i] = f"the time given in {TABLE_REF}"
    return varied, columns


def _row(n: int, f: RunFacts, factors: list[str], columns: list[tuple[str, str]], base: Run, with_c: bool) -> list[str]:
    run, best = f.run, f.best
    status = "" if run.status == "done" else f" ({run.status})"
    cells = [str(n), f"{run.id}{status}"] + [run.factors.get(name, DASH) for name in factors]
    parts = _counterparts(base, run)
    cells += [fmt_equiv_paper(_equiv(f, parts[key])) for _label, key in columns]
    if with_c:
        cells.append(fmt_molarity(f.table.concentration_M) if f.table is not None else DASH)
    cells += [
        fmt_pct(best.isolated_yield_pct) if best and best.isolated_yield_pct is not None else DASH,
        fmt_pct(best.nmr_yield_pct) if best and best.nmr_yield_pct is not None else DASH,
        best.dr if best and best.dr else DASH,
    ]
    return cells


def screen_procedure(screen: Screen, runs: list[Run]) -> Document:
    """General procedure (from the base run, varied conditions pointing to the table) and the table."""
    if not runs:
        raise TrapbookError(f"screen {screen.id or screen.name} has no runs", "add runs to the screen first")
    base = _base_run(screen, runs)
    facts = [_facts(r) for r in runs]
    table, notes = amount_table(base)
    varied, columns = _varied(base, facts)
    doc = Document(f"General procedure: {' '.join(screen.name.split())} ({screen.id})")
    doc.blocks.append(Heading(doc.title))
    paragraph, more = procedure_paragraph(base, table, varied, with_outcome=False)
    doc.blocks.append(paragraph)
    if base.outcome and base.outcome.workup:
        doc.blocks.append(Paragraph().add(" ".join(base.outcome.workup.split())))
    factors = list(screen.factors) or sorted({k for r in runs for k in r.factors})
    header = (
        ["entry", "run"]
        + factors
        + [label for label, _ in columns]
        + (["concentration (M)"] if varied.concentration_in_table else [])
        + ["isolated yield", "NMR yield", "dr"]
    )
    rows = [_row(n, f, factors, columns, base, varied.concentration_in_table) for n, f in enumerate(facts, 1)]
    caption = f"{TABLE_REF}. Conditions varied in screen {screen.id}; other amounts as in the general procedure ({base.id})."
    doc.blocks.append(Table(caption, header, rows))
    doc.notes = [f"general procedure written from {base.id}"] + notes + more
    if any(f.table is None for f in facts):
        notes_missing = [f.run.id for f in facts if f.table is None]
        doc.notes.append("amounts or yields cannot be worked out for " + ", ".join(str(x) for x in notes_missing))
    return doc
