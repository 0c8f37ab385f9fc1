"""The command line: parse arguments, make one core call, print text or --json.

Every data command takes --json and prints stable keys (documented in its --help).
A TrapbookError becomes a message on stderr and exit code 2 — never a traceback.
"""

from __future__ import annotations

import functools
import json
import sys
from pathlib import Path
from typing import Any, Callable

import click

from .. import __version__
from ..errors import TrapbookError


# --- plumbing ----------------------------------------------------------------------------


def emit_json(data: Any) -> None:
    click.echo(json.dumps(data, indent=2, ensure_ascii=False, default=str))


def fail(exc: TrapbookError) -> None:
    click.echo(f"error: {exc.message}", err=True)
    if exc.hint:
        click.echo(f"  what to do: {exc.hint}", err=True)
    sys.exit(2)


def guarded(fn: Callable) -> Callable:
    """Turn TrapbookError (and stray bugs) into a message and an exit code, never a traceback."""

    @functools.wraps(fn)
    def wrapper(*args, **kwargs):
        try:
            return fn(*args, **kwargs)
        except TrapbookError as exc:
            fail(exc)
        except (click.exceptions.Exit, click.exceptions.Abort, click.ClickException, SystemExit):
            raise
        except KeyboardInterrupt:
            click.echo("interrupted", err=True)
            sys.exit(130)
        except BrokenPipeError:
            sys.exit(0)
        except Exception as exc:  # a bug: say so plainly, keep the record safe (nothing half-written)
            click.echo(f"error: unexpected {type(exc).__name__}: {exc}", err=True)
            click.echo("  what to do: nothing was saved by this command; please report it with the command you ran", err=True)
            sys.exit(1)

    return wrapper


class Ctx:
    """What every command needs: where the notebook is and who is writing."""

    def __init__(self, db: str | None, author: str | None):
        self.db = db
        self.author = author

    def db_path(self) -> Path:
        from ..store import default_path

        return Path(self.db).expanduser() if self.db else default_path()

    def notebook(self, create: bool = False):
        from ..store import Notebook

        return Notebook.open(self.db_path(), create=create)


_pass_obj = click.make_pass_decorator(Ctx)


def pass_ctx(fn: Callable) -> Callable:
    """Pass the Ctx, and accept --db/--author after the command name as well as before it."""

    @functools.wraps(fn)
    def wrapper(ctx: Ctx, *args, db_local: str | None = None, author_local: str | None = None, **kwargs):
        if db_local:
            ctx.db = db_local
        if author_local:
            ctx.author = author_local
        return fn(ctx, *args, **kwargs)

    wrapper = click.option("--author", "author_local", help="Name recorded on saved versions.", hidden=True)(wrapper)
    wrapper = click.option("--db", "db_local", help="Notebook file (same as the global --db).", hidden=True)(wrapper)
    return _pass_obj(wrapper)


def read_run_file(path: str):
    """A Run from a run file path ('-' for stdin), or a TrapbookError naming the file."""
    from ..errors import RecordError
    from ..records import load_run_text

    if path == "-":
        text = sys.stdin.read()
        source = "standard input"
    else:
        p = Path(path)
        if not p.exists():
            raise RecordError(f"no file {path}", "give the path of a run file (JSON)")
        try:
            text = p.read_text(encoding="utf-8")
        except (OSError, UnicodeDecodeError) as exc:
            raise RecordError(f"cannot read {path}: {exc}", "give a UTF-8 JSON run file") from None
        source = path
    return load_run_text(text, source)


def load_run_arg(ctx: Ctx, ref: str):
    """A run from a file path or a notebook id (TB-0001), with its id if stored."""
    if ref == "-" or Path(ref).exists() or ref.endswith(".json"):
        return read_run_file(ref)
    with ctx.notebook() as nb:
        return nb.get_run(ref)


# --- the group ---------------------------------------------------------------------------


@click.group(invoke_without_command=True, context_settings={"help_option_names": ["-h", "--help"]})
@click.option("--db", envvar="TRAPBOOK_DB", help="Notebook file (default: $TRAPBOOK_DB, then the per-user data directory).")
@click.option("--author", help="Name recorded on saved versions (default: your OS user name).")
@click.version_option(__version__, prog_name="trapbook")
@click.pass_context
def main(cctx: click.Context, db: str | None, author: str | None) -> None:
    """Trapbook: plan, record and review trapping runs of strained intermediates.

    With no command, opens the notebook in the terminal UI.
    """
    cctx.obj = Ctx(db, author)
    if cctx.invoked_subcommand is None:
        cctx.invoke(open_cmd)


@main.command("open")
@click.argument("path", required=False)
@pass_ctx
@guarded
def open_cmd(ctx: Ctx, path: str | None = None) -> None:
    """Open a notebook (PATH or the default) in the terminal UI."""
    if path:
        ctx.db = path
    _open_ui(ctx.db_path())


def _open_ui(path: Path) -> None:
    try:
        from ..tui.app import run_app
    except ImportError:
        raise TrapbookError("the terminal UI is not available in this installation", "use the commands listed by 'trapbook --help'")
    run_app(path)


@main.command()
@click.argument("path", required=False)
@click.option("--json", "as_json", is_flag=True, help="Print {path, schema_version, existed}.")
@pass_ctx
@guarded
def init(ctx: Ctx, path: str | None, as_json: bool) -> None:
    """Create a notebook at PATH (or the default place)."""
    from ..store import Notebook

    p = Path(path).expanduser() if path else ctx.db_path()
    existed = p.exists()
    with Notebook.create(p) as nb:
        version = nb.schema_version
    if as_json:
        emit_json({"path": str(p), "schema_version": version, "existed": existed})
    else:
        click.echo(f"{'opened existing' if existed else 'created'} notebook {p} (schema {version})")


def _findings_for(run, nb=None) -> list:
    try:
        from .. import checks
    except ImportError:
        return []
    settings = None
    strain = None
    if nb is not None:
        from ..strain_link import settings_for, strain_for_run

        settings = settings_for(nb)
        strain = strain_for_run(nb, run)
    return checks.run_checks(run, strain=strain, settings=settings)


def _print_findings(findings: list) -> None:
    if not findings:
        click.echo("checks: nothing to flag")
        return
    click.echo("checks:")
    for f in findings:
        lines = f" [{', '.join(f.lines)}]" if f.lines else ""
        steps = f" (step {', '.join(map(str, f.steps))})" if f.steps else ""
        click.echo(f"  {f.severity.upper():5} {f.code}{lines}{steps}: {f.message}")
        if f.caution:
            click.echo(f"        caution: {f.caution}")


@main.command()
@click.argument("runfile")
@click.option("--reason", default="created", show_default=True, help="Reason recorded on the first version.")
@click.option("--json", "as_json", is_flag=True, help="Print {run_id, version, hash, findings}.")
@pass_ctx
@guarded
def add(ctx: Ctx, runfile: str, reason: str, as_json: bool) -> None:
    """Validate RUNFILE (JSON, '-' for stdin), store it as a new run and print its id."""
    run = read_run_file(runfile)
    with ctx.notebook(create=True) as nb:
        res = nb.add_run(run, author=ctx.author, reason=reason)
        findings = _findings_for(nb.get_run(res.run_id), nb)
    if as_json:
        emit_json({"run_id": res.run_id, "version": res.version, "hash": res.hash, "findings": [f.to_dict() for f in findings]})
        return
    click.echo(res.run_id)
    _print_findings(findings)


@main.command()
@click.argument("run_id")
@click.argument("runfile")
@click.option("--reason", required=True, help="Why the run changes (recorded in its history).")
@click.option("--from-version", type=int, help="Version the edit was made from (default: the current one).")
@click.option("--json", "as_json", is_flag=True, help="Print {run_id, version, hash}.")
@pass_ctx
@guarded
def update(ctx: Ctx, run_id: str, runfile: str, reason: str, from_version: int | None, as_json: bool) -> None:
    """Save RUNFILE as a new version of RUN_ID; earlier versions stay readable."""
    run = read_run_file(runfile).model_copy(update={"id": run_id})
    with ctx.notebook() as nb:
        base = from_version if from_version is not None else nb.run_meta(run_id)["version"]
        res = nb.save_run(run, base, author=ctx.author, reason=reason)
    if as_json:
        emit_json({"run_id": res.run_id, "version": res.version, "hash": res.hash})
    else:
        click.echo(f"{res.run_id} version {res.version}")


@main.command()
@click.argument("run_id")
@click.option("--reason", required=True, help="Why the run is withdrawn.")
@click.option("--undo", is_flag=True, help="Bring a withdrawn run back.")
@click.option("--json", "as_json", is_flag=True, help="Print {run_id, version, hash, withdrawn}.")
@pass_ctx
@guarded
def withdraw(ctx: Ctx, run_id: str, reason: str, undo: bool, as_json: bool) -> None:
    """Withdraw a run (it is kept and stays readable; nothing is deleted)."""
    with ctx.notebook() as nb:
        res = nb.withdraw_run(run_id, reason, author=ctx.author, restore=undo)
    if as_json:
        emit_json({"run_id": res.run_id, "version": res.version, "hash": res.hash, "withdrawn": not undo})
        return
    click.echo(f"{res.run_id} {'restored' if undo else 'withdrawn'} (version {res.version})")


@main.command()
@click.argument("run_id")
@click.option("--version", "version", type=int, help="Show an earlier version.")
@click.option("--json", "as_json", is_flag=True,
              help="Print {meta, run, amounts, amounts_problem, yields, findings, version_shown} (meta describes the current version).")
@pass_ctx
@guarded
def show(ctx: Ctx, run_id: str, version: int | None, as_json: bool) -> None:
    """Show one run: lines with amounts, steps, outcome and checks."""
    from .. import amounts
    from ..reports_text import run_text

    with ctx.notebook() as nb:
        run = nb.get_run(run_id, version)
        meta = nb.run_meta(run_id)
        findings = _findings_for(run, nb)
    table, yields, problem = None, [], None
    try:
        table = amounts.compute(run)
        yields = amounts.product_yields(run, table)
    except TrapbookError as exc:
        problem = exc.message
    if as_json:
        emit_json({
            "meta": meta,
            "run": run.to_json_dict(),
            "amounts": table.to_dict() if table else None,
            "amounts_problem": problem,
            "yields": [y.to_dict() for y in yields],
            "findings": [f.to_dict() for f in findings],
            "version_shown": version if version is not None else meta["version"],
        })
        return
    if version is not None and version != meta["version"]:
        meta = {**meta, "version": version, "current_version": meta["version"]}
    click.echo(run_text(run, meta, table, yields, problem))
    _print_findings(findings)


@main.command("list")
@click.option("--all", "include_withdrawn", is_flag=True, help="Include withdrawn runs.")
@click.option("--screen", help="Only runs of this screen.")
@click.option("--json", "as_json", is_flag=True, help="Print a list of {id, title, chemist, date, status, trap, fluoride, solvent, temp_max_c, time_min, yield_pct, yield_kind, worst, ...}.")
@pass_ctx
@guarded
def list_cmd(ctx: Ctx, include_withdrawn: bool, screen: str | None, as_json: bool) -> None:
    """List the runs in the notebook."""
    with ctx.notebook() as nb:
        rows = nb.list_runs(include_withdrawn=include_withdrawn, screen=screen)
    if as_json:
        emit_json(rows)
        return
    if not rows:
        click.echo("no runs yet: add one with 'trapbook add RUNFILE'")
        return
    from ..reports_text import run_rows_text

    click.echo(run_rows_text(rows))


@main.command("amounts")
@click.argument("runfile")
@click.option("--json", "as_json", is_flag=True, help="Print {limiting, lines: [{name, role, mw_g_mol, equiv, mmol, mass_mg, volume_ul}], ...}.")
@pass_ctx
@guarded
def amounts_cmd(ctx: Ctx, runfile: str, as_json: bool) -> None:
    """Print the reagent table of RUNFILE (or a stored run id): mmol, equiv, mg, µL."""
    from .. import amounts
    from ..reports_text import amounts_text

    run = load_run_arg(ctx, runfile)
    table = amounts.compute(run)
    if as_json:
        emit_json(table.to_dict())
        return
    click.echo(amounts_text(table))


@main.command()
@click.argument("run_id")
@click.option("--json", "as_json", is_flag=True, help="Print a list of {version, author, time, reason, action, hash, prev_hash, changes}.")
@pass_ctx
@guarded
def history(ctx: Ctx, run_id: str, as_json: bool) -> None:
    """Every version of a run: who, when, why and what changed."""
    with ctx.notebook() as nb:
        versions = nb.history(run_id)
    if as_json:
        emit_json([v.to_dict() for v in versions])
        return
    for v in versions:
        click.echo(f"v{v.version}  {v.time[:19].replace('T', ' ')} UTC  {v.author}  {v.action}: {v.reason}")
        for c in v.changes:
            click.echo(f"      {c}")


@main.command()
@click.argument("ref")
@click.option("--json", "as_json", is_flag=True, help="Print a list of {code, severity, message, lines, steps, caution}.")
@pass_ctx
@guarded
def check(ctx: Ctx, ref: str, as_json: bool) -> None:
    """Bench checks of a run file or stored run: most severe first (exit 0 even with findings)."""
    run = load_run_arg(ctx, ref)
    nb = None
    try:
        nb = ctx.notebook() if ctx.db_path().exists() else None
    except TrapbookError:
        nb = None
    try:
        findings = _findings_for(run, nb)
    finally:
        if nb is not None:
            nb.close()
    if as_json:
        emit_json([f.to_dict() for f in findings])
        return
    _print_findings(findings)


@main.command("export")
@click.option("--format", "fmt", default="jsonl", show_default=True,
              help="jsonl (one run per line), ord, rocrate, csv, xlsx, or a plugin's (see 'trapbook formats').")
@click.option("--screen", help="Only the runs of this screen.")
@click.option("-o", "--output", help="Write to this file instead of stdout.")
@click.option("--all", "include_withdrawn", is_flag=True, help="Include withdrawn runs.")
@pass_ctx
@guarded
def export_cmd(ctx: Ctx, fmt: str, screen: str | None, output: str | None, include_withdrawn: bool) -> None:
    """Export runs (JSON lines by default)."""
    from ..exchange import export_runs

    with ctx.notebook() as nb:
        text_or_path = export_runs(nb, fmt, screen=screen, output=output, include_withdrawn=include_withdrawn)
    if output is None and isinstance(text_or_path, str):
        click.echo(text_or_path, nl=False)
    elif output:
        click.echo(f"wrote {output}", err=True)


@main.command("import")
@click.argument("path")
@click.option("--json", "as_json", is_flag=True, help="Print {format, imported: [run ids], screens: [...], skipped: [...], notes: [...]}.")
@pass_ctx
@guarded
def import_cmd(ctx: Ctx, path: str, as_json: bool) -> None:
    """Import runs from a file, or JSON lines on stdin with '-' (all or nothing; errors name the record and field)."""
    from ..exchange.jsonl import import_path, import_text

    text = sys.stdin.read() if path == "-" else None
    with ctx.notebook(create=True) as nb:
        report = import_text(nb, text, author=ctx.author) if text is not None else import_path(nb, Path(path), author=ctx.author)
    if as_json:
        emit_json(report)
        return
    click.echo(f"imported {len(report['imported'])} run(s): {', '.join(report['imported'])}")
    for note in report.get("notes", []):
        click.echo(f"  note: {note}")


@main.command()
@click.option("--no-ui", is_flag=True, help="Only build the demo notebook and print a summary.")
@click.option("--strain", "strain_tier", type=click.Choice(["none", "fast", "accurate"]), default="accurate", show_default=True,
              help="Compute the strain of the demo intermediates (accurate: GFN2-xTB, about 15 s).")
@click.option("--json", "as_json", is_flag=True, help="Print {path, runs, screens, source, strain: [...]} (implies --no-ui).")
@pass_ctx
@guarded
def demo(ctx: Ctx, no_ui: bool, strain_tier: str, as_json: bool) -> None:
    """Build the demo lab's notebook (in the per-user data directory) and open it."""
    from ..demo import build_demo

    def progress(stage: str, fraction: float) -> None:
        if not as_json:
            click.echo(f"  {fraction * 100:3.0f}%  {stage}", err=True)

    summary = build_demo(Path(ctx.db).expanduser() if ctx.db else None,
                         strain_tier=None if strain_tier == "none" else strain_tier, progress=progress)
    if as_json:
        emit_json(summary)
        return
    click.echo(f"demo notebook: {summary['path']}")
    click.echo(f"  {summary['runs']} runs, {summary['screens']} screen(s) from {summary['source']}")
    if no_ui or not sys.stdout.isatty():
        from ..store import Notebook
        from ..reports_text import run_rows_text

        with Notebook.open(summary["path"]) as nb:
            click.echo(run_rows_text(nb.list_runs()))
        return
    _open_ui(Path(summary["path"]))


# Commands of other areas live in sibling modules of this package (cli/strain.py, ...)
# and register themselves on `main` when cli/__init__.py imports them.


@main.command()
@click.option("--set", "assignments", multiple=True, metavar="NAME=VALUE", help="Change a check threshold for this notebook.")
@click.option("--reset", is_flag=True, help="Go back to the documented defaults.")
@click.option("--json", "as_json", is_flag=True, help="Print {name: value} of every check threshold in force.")
@pass_ctx
@guarded
def settings(ctx: Ctx, assignments: tuple[str, ...], reset: bool, as_json: bool) -> None:
    """Check thresholds of this notebook (trap minimum, water, concentration, ...)."""
    from ..settings import notebook_check_settings, update_check_settings

    with ctx.notebook(create=True) as nb:
        if reset or assignments:
            current = update_check_settings(nb, assignments, reset=reset)
        else:
            current = notebook_check_settings(nb)
    data = current.to_dict()
    if as_json:
        emit_json(data)
        return
    from ..checks import SETTING_SOURCES

    for name, value in data.items():
        click.echo(f"{name:36} {value:g}    ({SETTING_SOURCES.get(name, '')})")
