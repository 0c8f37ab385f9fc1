"""`trapbook write`: the experimental paragraph of a finished run, or a screen's general
procedure with its table, as text, Markdown or a .docx."""

from __future__ import annotations

import click

from .core import Ctx, _names_a_file, emit_json, json_option, main, pass_ctx, read_run_file, say


def _document(ctx: Ctx, ref: str):
    from ..procedure import procedure_for

    if ref == "-" or _names_a_file(ref) or ref.endswith(".json"):
        run = read_run_file(ref)
        nb = ctx.optional_notebook()  # its check settings, for the cautions; none is needed
        try:
            return procedure_for(nb, run)
        finally:
            if nb is not None:
                nb.close()
    with ctx.notebook() as nb:
        return procedure_for(nb, ref)


@main.command("write")
@click.argument("ref", metavar="RUN|SCREEN")
@click.option(
    "--format",
    "fmt",
    type=click.Choice(["text", "md", "docx"]),
    default="text",
    show_default=True,
    help="Plain text, Markdown (a screen's conditions as a pipe table) or a Word .docx (needs -o).",
)
@click.option("-o", "--output", help="Write to this file instead of the terminal.")
@json_option(help="Print {title, blocks: [{heading} | {paragraph} | {table: {caption, header, rows}}], notes, path}.")
@pass_ctx
def write_cmd(ctx: Ctx, ref: str, fmt: str, output: str | None, as_json: bool) -> None:
    """Write the procedure as a paper's Supporting Information has it.

    RUN (a stored id such as TB-0001, or a run file) must be done or failed: the additions
    in the order of its steps, each material with mg, µL, mmol and equiv (from what was
    weighed, when recorded), solvent volume and concentration, temperatures and times as
    written, sealed vessel, work-up and chromatography, yields with mass, dr, and each
    product's characterisation (appearance, Rf, NMR as entered, formula, HRMS calcd and
    found), then the cautions. SCREEN (SC-0001 or its name) gives a general procedure
    and the varied conditions with each run's yield as a table. Notes on what the record
    lacks (no NMR text, no HRMS) go to stderr.
    """
    from ..procedure import write_procedure

    doc = _document(ctx, ref)
    written = write_procedure(doc, fmt, output)
    if as_json:
        emit_json({**doc.to_dict(), "path": str(written) if output else None})
        return
    if output:
        say(f"wrote {doc.title} to {output}", err=True)
    else:  # text and md are made with stored text already escaped (procedure/document.py)
        click.echo(written, nl=False)
    for note in doc.notes:
        say(f"note: {note}", err=True)
