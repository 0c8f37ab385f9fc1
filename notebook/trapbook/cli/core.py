"""The command line: parse arguments, make one core call, print text or --json.

Every data command takes --json and prints stable keys (documented in its --help).
A TrapbookError becomes a message on stderr and exit code 2 (under --json, a JSON object
{error, hint, field} on stdout) — never a traceback; TrapbookGroup is the one place that
does it. Stored text is printed through `say` / text_safety.printable.
"""

from __future__ import annotations

import functools
import json
import os
import sys
from collections.abc import Callable
from pathlib import Path
from typing import Any

import click

from .. import __version__
from ..errors import TrapbookError
from ..findings import findings_for
from ..settings import in_lab_words
from ..text_safety import json_safe, printable

# --- plumbing ----------------------------------------------------------------------------


def emit_json(data: Any) -> None:
    """Print `data` as JSON; stored text cannot reach the terminal raw (see text_safety)."""
    click.echo(json_safe(json.dumps(data, indent=2, ensure_ascii=False, default=str)))


def say(text: Any, multiline: bool = False, err: bool = False) -> None:
    """Print stored text (titles, names, reasons, ids) with control characters made visible."""
    click.echo(printable(text, multiline=multiline), err=err)


_JSON_META = "trapbook.json"


def _remember_json(cctx: click.Context, _param: click.Parameter, value: bool) -> bool:
    if value:
        cctx.meta[_JSON_META] = True  # meta is shared by the whole context tree
    return value


def json_option(help: str) -> Callable:
    """The --json flag of a data command; `help` names the keys it prints.

    Under --json an error is printed as JSON too (see TrapbookGroup), so a script reads
    stdout either way.
    """
    return click.option("--json", "as_json", is_flag=True, callback=_remember_json, help=help)


def render_error(exc: TrapbookError, as_json: bool) -> None:
    """A TrapbookError in words on stderr, or as {"error", "hint", "field"} on stdout."""
    if as_json:
        emit_json(exc.to_dict())
        return
    say(f"error: {exc.message}", multiline=True, err=True)
    if exc.hint:
        say(f"  what to do: {exc.hint}", multiline=True, err=True)


class TrapbookGroup(click.Group):
    """The one place where a command's failure becomes a message and an exit code.

    TrapbookError: the message and hint, exit 2. A usage mistake (unknown option): exit 2,
    as JSON under --json. Ctrl-C: exit 130. A closed pipe (`| head`): exit 0, quietly.
    Anything else is a bug: said plainly, exit 1, never a traceback.
    """

    def parse_args(self, cctx: click.Context, args: list[str]) -> list[str]:
        cctx.meta["trapbook.argv"] = list(args)
        return super().parse_args(cctx, args)

    @staticmethod
    def _wants_json(cctx: click.Context) -> bool:
        if cctx.meta.get(_JSON_META):
            return True
        argv = cctx.meta.get("trapbook.argv", [])
        return "--json" in argv[: argv.index("--")] if "--" in argv else "--json" in argv

    def invoke(self, cctx: click.Context) -> Any:
        try:
            return super().invoke(cctx)
        except TrapbookError as exc:
            render_error(exc, self._wants_json(cctx))
            cctx.exit(2)
        except click.UsageError as exc:
            if not self._wants_json(cctx):
                raise
            render_error(TrapbookError(exc.format_message(), "see the command's --help"), as_json=True)
            cctx.exit(exc.exit_code)
        except (click.exceptions.Exit, click.exceptions.Abort, click.ClickException):
            raise
        except KeyboardInterrupt:
            click.echo("interrupted", err=True)
            cctx.exit(130)
        except BrokenPipeError:
            _quiet_stdout()
            cctx.exit(0)
        except Exception as exc:  # a bug: say so plainly (nothing is half-written: saves are transactions)
            bug = TrapbookError(
                f"unexpected {type(exc).__name__}: {exc}",
                "nothing was saved by this command; please report it with the command you ran",
            )
            render_error(bug, self._wants_json(cctx))
            cctx.exit(1)


def _quiet_stdout() -> None:
    """After the reader of a pipe went away, send what is left to /dev/null (no second error at exit)."""
    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
    except (OSError, ValueError):  # stdout is not a real file (e.g. under a test runner)
        pass


class Ctx:
    """What every command needs: where the notebook is and who is writing."""

    def __init__(self, db: str | None, author: str | None, group: tuple[str, ...] = ()):
        self.db = db
        self.author = author
        #: --group paths: several members' notebooks read together (cli/group_view.py); () for one notebook.
        self.group = tuple(group)

    def db_path(self) -> Path:
        from ..store import default_path

        return Path(self.db).expanduser() if self.db else default_path()

    def notebook(self, create: bool = False, offer_create: bool = False):
        """The notebook at --db. Only `create=True` (init, --create) makes a new one: a
        mistyped path is an error naming it, never a new empty notebook (or folders)."""
        from ..store import Notebook

        if create:
            return Notebook.create(self.db_path())
        return Notebook.open(self.existing_path(offer_create))

    def existing_path(self, offer_create: bool = False) -> Path:
        """The --db path, or the error that names it when there is no file there."""
        from ..errors import StoreError

        path = self.db_path()
        if not path.exists():
            hint = f"create it with 'trapbook init {path}'" + (", or add --create to this command" if offer_create else "")
            raise StoreError(f"no notebook at {path}", hint + "; or check --db / TRAPBOOK_DB", field="db", got=str(path))
        return path

    def optional_notebook(self):
        """The notebook for settings and caches when a command also works without one:
        None only when no --db / TRAPBOOK_DB was given and the default notebook does not
        exist yet. A path that was given must exist."""
        if self.db is None and not self.db_path().exists():
            return None
        return self.notebook()


_pass_obj = click.make_pass_decorator(Ctx)


def refuse_db_with_group(group: tuple[str, ...], db: str | None) -> None:
    """--db names one notebook and --group several: given both, which one is meant is unclear."""
    if group and db:
        raise TrapbookError(
            f"both --db {db} and --group were given",
            "use --db FILE for one notebook, or --group for several read together (add that file as another --group)",
            field="db",
            got=db,
        )


def pass_ctx(fn: Callable) -> Callable:
    """Pass the Ctx, and accept --db/--author after the command name as well as before it."""

    @functools.wraps(fn)
    def wrapper(ctx: Ctx, *args, db_local: str | None = None, author_local: str | None = None, **kwargs):
        if db_local:
            refuse_db_with_group(ctx.group, db_local)
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


def _names_a_file(ref: str) -> bool:
    """Whether REF is an existing path; a name the system cannot hold as a path (too long, a NUL) is not one."""
    try:
        return Path(ref).exists()
    except (OSError, ValueError):
        return False


def load_run_arg(ctx: Ctx, ref: str):
    """A run from a file path or a notebook id (TB-0001), with its id if stored."""
    if ref == "-" or _names_a_file(ref) or ref.endswith(".json"):
        return read_run_file(ref)
    with ctx.notebook() as nb:
        return nb.get_run(ref)


# --- the group ---------------------------------------------------------------------------


@click.group(cls=TrapbookGroup, invoke_without_command=True, context_settings={"help_option_names": ["-h", "--help"]})
@click.option("--db", envvar="TRAPBOOK_DB", help="Notebook file (default: $TRAPBOOK_DB, then the per-user data directory).")
@click.option(
    "--group",
    "group",
    multiple=True,
    metavar="PATH",
    help="Read several members' notebooks together instead of --db (repeat it; a folder means every *.sqlite "
    "in it): list, search, review, strain-map, report, open and serve; nothing is written.",
)
@click.option("--author", help="Name recorded on saved versions (default: your OS user name).")
@click.version_option(__version__, prog_name="trapbook")
@click.pass_context
def main(cctx: click.Context, db: str | None, group: tuple[str, ...], author: str | None) -> None:
    """Trapbook: plan, record and review trapping runs of strained intermediates.

    With no command, opens the notebook in the terminal UI.
    """
    if group:
        from click.core import ParameterSource

        if cctx.get_parameter_source("db") != ParameterSource.ENVIRONMENT:  # $TRAPBOOK_DB yields to --group
            refuse_db_with_group(group, db)
        db = None
        from .group_view import refuse_outside_group

        refuse_outside_group(cctx.invoked_subcommand)
    cctx.obj = Ctx(db, author, group)
    if cctx.invoked_subcommand is None:
        cctx.invoke(open_cmd)


@main.command("open")
@click.argument("path", required=False)
@click.option("--read-only", is_flag=True, help="Open for reading only: nothing is written, keys that would write are hidden.")
@pass_ctx
def open_cmd(ctx: Ctx, path: str | None = None, read_only: bool = False) -> None:
    """Open a notebook (PATH or the default) in the terminal UI; under --group, every member's runs, read-only."""
    if ctx.group:
        from .group_view import open_group_ui

        return open_group_ui(ctx, path)
    if path:
        ctx.db = path
    if read_only:
        ctx.existing_path()
    else:
        with ctx.notebook():
            pass
    _open_ui(ctx.db_path(), ctx.author, read_only)


def _open_ui(path: Path, author: str | None = None, read_only: bool = False) -> None:
    import importlib.util

    if importlib.util.find_spec("textual") is None:
        raise TrapbookError(
            "the terminal UI is not available in this installation", "use the commands listed by 'trapbook --help'"
        )
    from ..tui.app import run_app

    run_app(path, author=author, read_only=read_only)  # --author, for this session, over the notebook's "you are" name


@main.command()
@click.argument("path", required=False)
@json_option(help="Print {path, schema_version, existed}.")
@pass_ctx
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


def _print_findings(findings: list) -> None:
    if not findings:
        click.echo("checks: nothing to flag")
        return
    click.echo("checks:")
    for f in findings:
        lines = f" [{', '.join(f.lines)}]" if f.lines else ""
        steps = f" (step {', '.join(map(str, f.steps))})" if f.steps else ""
        say(f"  {f.severity.upper():5} {f.code}{lines}{steps}: {f.message}")
        if f.caution:
            say(f"        caution: {f.caution}")


@main.command()
@click.argument("runfile")
@click.option("--reason", default="created", show_default=True, help="Reason recorded on the first version.")
@click.option("--create", is_flag=True, help="Create the notebook first if there is none at --db.")
@json_option(help="Print {run_id, version, hash, findings}.")
@pass_ctx
def add(ctx: Ctx, runfile: str, reason: str, create: bool, as_json: bool) -> None:
    """Validate RUNFILE (JSON, '-' for stdin), store it as a new run and print its id."""
    run = read_run_file(runfile)
    with ctx.notebook(create=create, offer_create=True) as nb:
        res = nb.add_run(in_lab_words(nb, run), author=ctx.author, reason=reason)
        findings = findings_for(nb, nb.get_run(res.run_id))
    if as_json:
        emit_json({"run_id": res.run_id, "version": res.version, "hash": res.hash, "findings": [f.to_dict() for f in findings]})
        return
    say(res.run_id)
    _print_findings(findings)


@main.command()
@click.argument("run_id")
@click.argument("runfile")
@click.option("--reason", required=True, help="Why the run changes (recorded in its history).")
@click.option(
    "--from-version", type=click.IntRange(min=1, max=2**63 - 1), help="Version the edit was made from (default: the current one)."
)
@json_option(help="Print {run_id, version, hash}.")
@pass_ctx
def update(ctx: Ctx, run_id: str, runfile: str, reason: str, from_version: int | None, as_json: bool) -> None:
    """Save RUNFILE as a new version of RUN_ID; earlier versions stay readable."""
    run = read_run_file(runfile).model_copy(update={"id": run_id})
    with ctx.notebook() as nb:
        # without --from-version the current version is read under the write lock (never falsely stale)
        res = nb.save_run(in_lab_words(nb, run), from_version, author=ctx.author, reason=reason)
    if as_json:
        emit_json({"run_id": res.run_id, "version": res.version, "hash": res.hash})
    else:
        say(f"{res.run_id} version {res.version}")


@main.command()
@click.argument("run_id")
@click.option("--reason", required=True, help="Why the run is withdrawn.")
@click.option("--undo", is_flag=True, help="Bring a withdrawn run back.")
@json_option(help="Print {run_id, version, hash, withdrawn}.")
@pass_ctx
def withdraw(ctx: Ctx, run_id: str, reason: str, undo: bool, as_json: bool) -> None:
    """Withdraw a run (it is kept and stays readable; nothing is deleted)."""
    with ctx.notebook() as nb:
        res = nb.withdraw_run(run_id, reason, author=ctx.author, restore=undo)
    if as_json:
        emit_json({"run_id": res.run_id, "version": res.version, "hash": res.hash, "withdrawn": not undo})
        return
    say(f"{res.run_id} {'restored' if undo else 'withdrawn'} (version {res.version})")


@main.command()
@click.argument("run_id")
@click.option("--version", "version", type=click.IntRange(min=1), help="Show an earlier version.")
@json_option(
    help="Print {meta, run, amounts, amounts_problem, yields, findings, version_shown, intermediate} (meta describes the current version; intermediate: {smiles, how}, as recorded on the run or derived from its precursor, else null)."
)
@pass_ctx
def show(ctx: Ctx, run_id: str, version: int | None, as_json: bool) -> None:
    """Show one run: lines with amounts, steps, outcome and checks."""
    from .. import amounts
    from ..reports_text import run_text

    with ctx.notebook() as nb:
        meta = nb.run_meta(run_id)
        if version is not None and version > meta["version"]:  # also keeps a 20-digit number out of SQLite
            from ..errors import NotFoundError

            raise NotFoundError(
                f"no version {version} of {run_id} (it has {meta['version']})",
                f"see its versions with 'trapbook history {run_id}'",
            )
        run = nb.get_run(run_id, version)
        findings = findings_for(nb, run)
    from ..strain_link import intermediate_of_run

    derived = intermediate_of_run(run)
    table, yields, problem = None, [], None
    try:
        table = amounts.compute(run)
        yields = amounts.product_yields(run, table)
    except TrapbookError as exc:
        problem = exc.message
    if as_json:
        emit_json(
            {
                "meta": meta,
                "run": run.to_json_dict(),
                "amounts": table.to_dict() if table else None,
                "amounts_problem": problem,
                "yields": [y.to_dict() for y in yields],
                "findings": [f.to_dict() for f in findings],
                "version_shown": version if version is not None else meta["version"],
                "intermediate": {"smiles": derived[0], "how": derived[1]} if derived else None,
            }
        )
        return
    if version is not None and version != meta["version"]:
        meta = {**meta, "version": version, "current_version": meta["version"]}
    click.echo(run_text(run, meta, table, yields, problem))
    if derived and not run.intermediate:
        say(f"  intermediate: {derived[0]} ({derived[1]})")
    _print_findings(findings)


@main.command("list")
@click.option("--all", "include_withdrawn", is_flag=True, help="Include withdrawn runs.")
@click.option("--screen", help="Only runs of this screen.")
@json_option(
    help="Print a list of {id, title, chemist, date, status, trap, fluoride, solvent, temp_max_c, time_min, yield_pct, yield_kind, worst, ...} "
    "(under --group: {members: [{member, path, owner, ok, runs, problems}], runs}, each run also with member and ref MEMBER:ID)."
)
@pass_ctx
def list_cmd(ctx: Ctx, include_withdrawn: bool, screen: str | None, as_json: bool) -> None:
    """List the runs in the notebook (under --group: {members, runs}, each run with member and ref)."""
    if ctx.group:
        from .group_view import list_group

        return list_group(ctx, include_withdrawn, screen, as_json)
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
@json_option(help="Print {limiting, lines: [{name, role, mw_g_mol, equiv, mmol, mass_mg, volume_ul}], ...}.")
@pass_ctx
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
@json_option(help="Print a list of {version, author, time, reason, action, hash, prev_hash, changes}.")
@pass_ctx
def history(ctx: Ctx, run_id: str, as_json: bool) -> None:
    """Every version of a run: who, when, why and what changed."""
    with ctx.notebook() as nb:
        versions = nb.history(run_id)
    if as_json:
        emit_json([v.to_dict() for v in versions])
        return
    for v in versions:
        say(f"v{v.version}  {v.time[:19].replace('T', ' ')} UTC  {v.author}  {v.action}: {v.reason}")
        for c in v.changes:
            say(f"      {c}")


@main.command()
@click.argument("ref")
@json_option(help="Print a list of {code, severity, message, lines, steps, caution}.")
@pass_ctx
def check(ctx: Ctx, ref: str, as_json: bool) -> None:
    """Bench checks of a run file or stored run: most severe first (exit 0 even with findings)."""
    run = load_run_arg(ctx, ref)
    nb = ctx.optional_notebook()
    try:
        findings = findings_for(nb, run)
    finally:
        if nb is not None:
            nb.close()
    if as_json:
        emit_json([f.to_dict() for f in findings])
        return
    _print_findings(findings)


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
    from ..exchange.jsonl import import_path, import_text

    text = sys.stdin.read() if path == "-" else None
    with ctx.notebook(create=create, offer_create=True) as nb:
        report = import_text(nb, text, author=ctx.author) if text is not None else import_path(nb, Path(path), author=ctx.author)
    if as_json:
        emit_json(report)
        return
    say(f"imported {len(report['imported'])} run(s): {', '.join(report['imported'])}")
    for note in report.get("notes", []):
        say(f"  note: {note}")


@main.command()
@click.option("--no-ui", is_flag=True, help="Only build the demo notebook and print a summary.")
@click.option(
    "--strain",
    "strain_tier",
    type=click.Choice(["none", "fast", "accurate"]),
    default="accurate",
    show_default=True,
    help="Compute the strain of the demo intermediates (accurate: GFN2-xTB, about 15 s).",
)
@click.option(
    "--fresh",
    is_flag=True,
    help="Rebuild even when the demo notebook holds runs you added: it is kept first as demo-YYYYmmdd-HHMMSS.sqlite beside it.",
)
@json_option(help="Print {path, runs, screens, source, strain: [...], rebuilt, user_work, backup, notice} (implies --no-ui).")
@pass_ctx
def demo(ctx: Ctx, no_ui: bool, strain_tier: str, fresh: bool, as_json: bool) -> None:
    """Build the demo lab's notebook (in the per-user data directory) and open it.

    A demo notebook that holds runs you added (or changed) is not rebuilt: it is opened
    as it is. With --fresh it is kept as a dated backup beside it, and a new demo built.
    """
    from ..demo import build_demo

    def progress(stage: str, fraction: float) -> None:
        if not as_json:
            click.echo(f"  {fraction * 100:3.0f}%  {stage}", err=True)

    summary = build_demo(
        Path(ctx.db).expanduser() if ctx.db else None,
        strain_tier=None if strain_tier == "none" else strain_tier,
        progress=progress,
        fresh=fresh,
    )
    if as_json:
        emit_json(summary)
        return
    if summary.get("notice"):
        say(f"note: {summary['notice']}", err=True)
    say(f"demo notebook: {summary['path']}{'' if summary.get('rebuilt', True) else ' (kept as it is)'}")
    click.echo(f"  {summary['runs']} runs, {summary['screens']} screen(s) from {summary['source']}")
    if no_ui or not sys.stdout.isatty():
        from ..reports_text import run_rows_text
        from ..store import Notebook

        with Notebook.open(summary["path"]) as nb:
            click.echo(run_rows_text(nb.list_runs()))
        return
    _open_ui(Path(summary["path"]), ctx.author)


# Commands of other areas live in sibling modules of this package (cli/strain.py, ...)
# and register themselves on `main` when cli/__init__.py imports them.


@main.command()
@click.option("--set", "assignments", multiple=True, metavar="NAME=VALUE", help="Change a check threshold for this notebook.")
@click.option("--reset", is_flag=True, help="Go back to the documented defaults.")
@click.option(
    "--reason",
    default="settings changed",
    show_default=True,
    help="Why the thresholds change (recorded with your name in the notebook's history).",
)
@click.option("--history", is_flag=True, help="List every change of the thresholds: version, time, author, reason.")
@json_option(
    help="Print {name: value} of every check threshold in force (with --history: [{version, value, author, time, reason}])."
)
@pass_ctx
def settings(ctx: Ctx, assignments: tuple[str, ...], reset: bool, reason: str, history: bool, as_json: bool) -> None:
    """Check thresholds of this notebook (trap minimum, water, concentration, ...).

    Every change is kept as a version (who, when, why) that `verify` checks.
    """
    from ..settings import CHECKS_KEY, notebook_check_settings, update_check_settings

    with ctx.notebook() as nb:
        if history:
            versions = nb.setting_history(CHECKS_KEY)
            if as_json:
                emit_json(versions)
            for v in [] if as_json else versions:
                say(f"v{v['version']}  {v['time'][:19].replace('T', ' ')} UTC  {v['author']}: {v['reason']}")
            if not versions and not as_json:
                say("the documented defaults are in force; no change was ever saved")
            return
        if reset or assignments:
            current = update_check_settings(nb, assignments, reset=reset, author=ctx.author, reason=reason)
        else:
            current = notebook_check_settings(nb)
    data = current.to_dict()
    if as_json:
        emit_json(data)
        return
    from ..checks import SETTING_SOURCES

    for name, value in data.items():
        click.echo(f"{name:36} {value:g}    ({SETTING_SOURCES.get(name, '')})")
