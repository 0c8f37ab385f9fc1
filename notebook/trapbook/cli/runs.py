"""Commands on single runs: init, add, update, withdraw, show, list, amounts, history, check.

Each parses its arguments, makes one core call and prints text or --json (see cli/core.py).
"""

from __future__ import annotations

from pathlib import Path

import click

from ..errors import TrapbookError
from ..findings import findings_for
from ..settings import in_lab_words
from .core import Ctx, emit_json, json_option, load_run_arg, main, pass_ctx, read_run_file, say


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
