"""Commands that move runs and files in and out: export, import, attach, attachment, formats.

The formats that export and import reach are dispatched by trapbook.exchange.registry.
"""

from __future__ import annotations

import sys
from pathlib import Path

import click

from ..errors import TrapbookError
from ..text_safety import printable
from .core import Ctx, emit_json, json_option, main, pass_ctx, say


@main.command("export")
@click.option(
    "--format",
    "fmt",
    default="jsonl",
    show_default=True,
    help="jsonl (one run per line), ord, rocrate, csv, xlsx, or a plugin's (see 'trapbook formats').",
)
@click.option("--screen", help="Only the runs of this screen.")
@click.option("-o", "--output", help="Write to this file instead of stdout.")
@click.option("--all", "include_withdrawn", is_flag=True, help="Include withdrawn runs.")
@pass_ctx
def export_cmd(ctx: Ctx, fmt: str, screen: str | None, output: str | None, include_withdrawn: bool) -> None:
    """Export runs (JSON lines by default)."""
    from ..exchange import export_runs

    with ctx.notebook() as nb:
        text_or_path = export_runs(nb, fmt, screen=screen, output=output, include_withdrawn=include_withdrawn)
    if output is None and isinstance(text_or_path, str):
        # Piped, the export is the data itself, byte for byte; on a terminal it is escaped.
        click.echo(printable(text_or_path, multiline=True) if sys.stdout.isatty() else text_or_path, nl=False)
    elif output:
        click.echo(f"wrote {output}", err=True)


@main.command("import")
@click.argument("path")
@json_option(
    help="Print {format, imported: [run ids], screens: [...], skipped: [...], notes: [...]}; "
    "an RO-Crate also gives attachments and versions (every version of each run comes back)."
)
@click.option("--create", is_flag=True, help="Create the notebook first if there is none at --db.")
@pass_ctx
def import_cmd(ctx: Ctx, path: str, create: bool, as_json: bool) -> None:
    """Import runs from a file, or JSON lines on stdin with '-' (all or nothing; errors name the record and field)."""
    from ..exchange.jsonl import import_path, import_text, read_import_text

    text = read_import_text("-", stream=sys.stdin) if path == "-" else None
    with ctx.notebook(create=create, offer_create=True) as nb:
        report = import_text(nb, text, author=ctx.author) if text is not None else import_path(nb, Path(path), author=ctx.author)
    if as_json:
        emit_json(report)
        return
    say(f"imported {len(report['imported'])} run(s): {', '.join(report['imported'])}")
    for note in report.get("notes", []):
        say(f"  note: {note}")


@main.command()
@click.argument("run_id")
@click.argument("file", type=click.Path(dir_okay=False))
@click.option("--reason", help="Reason recorded on the new version (default: 'attached NAME').")
@click.option("--name", help="Name to record (default: the file's own name).")
@json_option(help='Print {"run_id", "version", "name", "sha256", "size", "media_type", "stored_new"}.')
@pass_ctx
def attach(ctx: Ctx, run_id: str, file: str, reason: str | None, name: str | None, as_json: bool) -> None:
    """Attach FILE (spectrum, photo, raw NMR data) to RUN_ID.

    The file is copied into the store beside the notebook under its SHA-256 and
    recorded in a new version of the run. It is read back as bytes, checked against its
    hash, and never run; only 'trapbook nmr' reads raw NMR data inside it, when asked.
    """
    from ..attachments import attach as do_attach

    with ctx.notebook() as nb:
        res = do_attach(nb, run_id, file, author=ctx.author, reason=reason, name=name)
    if as_json:
        emit_json(res)
    else:
        say(
            f"{res['run_id']} version {res['version']}: attached {res['name']} "
            f"({res['size']} bytes, sha256 {res['sha256'][:12]}…)"
        )


@main.command("attachment")
@click.argument("run_id")
@click.argument("which")
@click.option("-o", "--output", required=True, help="File or folder to write the verified copy to (never overwritten).")
@json_option(help='Print {"path"}.')
@pass_ctx
def attachment_cmd(ctx: Ctx, run_id: str, which: str, output: str, as_json: bool) -> None:
    """Write a verified copy of one attachment of RUN_ID (WHICH: its name or SHA-256)."""
    from ..attachments import export_file

    with ctx.notebook() as nb:
        path = export_file(nb, run_id, which, output)
    if as_json:
        emit_json({"path": str(path)})
    else:
        say(f"wrote {path}")


@main.command("formats")
@json_option(help='Print a list of {"name", "import", "problem"} (problem: why a plugin cannot be loaded, else null).')
def formats_cmd(as_json: bool) -> None:
    """List the export formats (built in, and added by installed plugins).

    A plugin that fails to load is listed with its problem, so the failure is seen
    rather than hidden; the other formats stay usable.
    """
    from ..exchange import registry

    rows = []
    for name in registry.known_formats():
        if name == "jsonl":
            rows.append({"name": name, "import": True, "problem": None})
            continue
        try:
            rows.append({"name": name, "import": bool(registry.spec(name).get("import")), "problem": None})
        except Exception as exc:  # a broken plugin: shown as broken, with why
            problem = exc.message if isinstance(exc, TrapbookError) else f"{type(exc).__name__}: {exc}"
            rows.append({"name": name, "import": False, "problem": problem})
    if as_json:
        emit_json(rows)
    else:
        for r in rows:
            line = f"{r['name']:10} export{' + import' if r['import'] else ''}"
            say(line if not r["problem"] else f"{r['name']:10} BROKEN: {r['problem']}")
