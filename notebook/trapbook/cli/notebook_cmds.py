"""Commands about the notebook as a whole: demo (build and open the demo lab's notebook)
and settings (its check thresholds, versioned)."""

from __future__ import annotations

import sys
from pathlib import Path

import click

from .core import Ctx, _open_ui, emit_json, json_option, main, pass_ctx, say


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
    from ..checks import SETTING_SOURCES, CheckSettings

    for name, value in data.items():
        low, high, unit = CheckSettings.allowed_range(name)
        click.echo(f"{name:36} {value:g}    [{low:g} to {high:g} {unit}]    ({SETTING_SOURCES.get(name, '')})")
