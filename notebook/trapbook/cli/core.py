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
        """The notebook at --db. Only `create=True` (--create) makes a new one, and removes it
        again if the command fails before saving anything in it: a mistyped path is an error
        naming it, never a new empty notebook (or folders)."""
        from ..store import Notebook
        from ..store.made_for_command import notebook_made_for_command

        if create:
            return notebook_made_for_command(self.db_path())
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
    from ..records import load_run_text, read_text_limited

    text = read_text_limited(path, stream=sys.stdin)
    return load_run_text(text, "standard input" if path == "-" else path)


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


# Commands of other areas live in sibling modules of this package (cli/runs.py,
# cli/strain.py, ...) and register themselves on `main` when cli/__init__.py imports them.
