"""The experimental paragraph of one finished run, as a paper's Supporting Information has it."""

from __future__ import annotations

from .. import amounts
from ..errors import RecordError, TrapbookError
from ..records import Run
from .document import Document, Heading, Paragraph, clean
from .outcome import characterisation, outcome_sentences
from .steps import Varied, step_sentences


def amount_table(run: Run) -> tuple[amounts.AmountTable | None, list[str]]:
    """The run's amounts (from what was weighed, when recorded), or None with the reason as a note."""
    try:
        return amounts.compute(run), []
    except TrapbookError as exc:
        return None, [f"amounts cannot be worked out, so none are given: {exc.message}"]


def _title(run: Run) -> str:
    names = [ln.name for ln in run.lines_by_role("product")]
    made = [res.product for res in run.outcome.products] if run.outcome else []
    shown = made or names
    label = f" ({run.id})" if run.id else ""
    return (clean(", ".join(shown)) if shown else clean(run.title)) + label


def procedure_paragraph(
    run: Run, table: amounts.AmountTable | None, varied: Varied | None = None, with_outcome: bool = True
) -> tuple[Paragraph, list[str]]:
    """The one paragraph: additions in order, conditions, work-up, yields."""
    sentences, notes = step_sentences(run, table, varied)
    if with_outcome:
        more, more_notes = outcome_sentences(run, table)
        sentences += more
        notes += more_notes
    return Paragraph().add(" ".join(sentences)), notes


def cautions(nb, run: Run) -> Paragraph | None:
    """The cautions the bench checks give for this run (pressure, fluoride, solvents), once each:
    whoever repeats a procedure needs them as much as whoever planned it."""
    from ..findings import findings_for
    from ..materials import cautions_once

    text = cautions_once(finding.caution for finding in findings_for(nb, run))
    if not text:
        return None
    return Paragraph().add("Caution:", "bold").add(" ").add(text, "italic")


def run_procedure(run: Run, nb=None) -> Document:
    """Heading, procedure paragraph and characterisation of each product of a done (or failed) run,
    then the cautions for whoever repeats it (under the notebook's check settings when `nb` is given)."""
    if run.status not in ("done", "failed"):
        raise RecordError(
            f"run {run.id or run.title} is {run.status}; a procedure is written from a finished run",
            "record the outcome and set the status to done (or failed)",
            field="status",
        )
    table, notes = amount_table(run)
    doc = Document(_title(run))
    doc.blocks.append(Heading(doc.title))
    paragraph, more = procedure_paragraph(run, table)
    doc.blocks.append(paragraph)
    blocks, char_notes = characterisation(run)
    doc.blocks += blocks
    caution = cautions(nb, run)
    if caution is not None:
        doc.blocks.append(caution)
    doc.notes = notes + more + char_notes
    return doc
