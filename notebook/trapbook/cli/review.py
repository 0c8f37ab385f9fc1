"""Screens from the command line: plan one, list them, review one, map strain, write reports."""

from __future__ import annotations

from pathlib import Path

import click

from ..display import fmt_pct
from ..errors import TrapbookError
from .core import Ctx, emit_json, json_option, load_run_arg, main, pass_ctx, say

_pct = fmt_pct  # yields and ee in whole percent, as everywhere


@main.group("screen")
def screen_group() -> None:
    """Plan condition screens (see also 'screens', 'review' and 'report')."""


@screen_group.command("plan")
@click.argument("base")
@click.option(
    "--vary",
    "vary",
    multiple=True,
    required=True,
    help="CONDITION=LEVEL,LEVEL (trap, fluoride, temperature, time, 'trap equiv', solvent); repeat per condition. "
    "A comma between digits stays in the level ('2,5-dimethylfuran'); use ';' to separate levels with other commas.",
)
@click.option("--scale", help="Amount of the limiting line in every vial, e.g. '0.10 mmol' (default: as in the base run).")
@click.option("--name", help="Screen name (default: from the base run and the conditions).")
@click.option("--vials", help="Only these vials of the full grid, numbered from 1 in grid order, e.g. '1,4,6'.")
@click.option("--sheet", "sheet", help="Write the bench sheet to this file (.html for a printable page, else plain text).")
@click.option("--dry-run", is_flag=True, help="Plan and print; store nothing.")
@json_option(
    help="Print {screen_id, name, factors, scale, base_run, run_ids, runs: [{vial, factors, title, run, amounts, "
    "amounts_problem, findings}], totals: [{line, role, vials, mass_mg, volume_ul, mmol}]}."
)
@pass_ctx
def screen_plan(
    ctx: Ctx,
    base: str,
    vary: tuple[str, ...],
    scale: str | None,
    name: str | None,
    vials: str | None,
    sheet: str | None,
    dry_run: bool,
    as_json: bool,
) -> None:
    """Plan a screen around BASE (a run file or a stored run id): one planned run per vial, with a bench sheet."""
    from .. import planning

    factors = planning.parse_vary(list(vary))
    subset = None
    if vials:
        try:
            subset = [int(x) for x in vials.replace(" ", "").split(",") if x]
        except ValueError:
            raise TrapbookError(f"--vials '{vials}' is not a list of vial numbers", "e.g. --vials 1,3,5") from None
    run = load_run_arg(ctx, base)
    if dry_run and not ctx.db_path().exists():  # nothing to store in, and no settings: the documented defaults
        plan = planning.make_screen(None, run, factors, scale=scale, subset=subset, name=name, store=False)
    elif dry_run:  # the notebook's own settings judge the vials, but nothing is stored
        with ctx.notebook() as nb:
            plan = planning.make_screen(nb, run, factors, scale=scale, subset=subset, name=name, store=False)
    else:
        with ctx.notebook() as nb:
            plan = planning.make_screen(nb, run, factors, scale=scale, subset=subset, name=name, author=ctx.author)
    if sheet:
        text = planning.bench_sheet_html(plan) if sheet.lower().endswith((".html", ".htm")) else planning.bench_sheet_text(plan)
        try:
            Path(sheet).write_text(text, encoding="utf-8")
        except OSError as exc:
            raise TrapbookError(f"cannot write {sheet}: {exc.strerror}", "choose a writable path for --sheet") from None
    if as_json:
        emit_json(plan.to_dict())
        return
    say(planning.bench_sheet_text(plan), multiline=True)
    if plan.screen_id:
        say(f"stored screen {plan.screen_id} with {len(plan.run_ids)} planned run(s): {', '.join(plan.run_ids)}")
    else:
        say("dry run: nothing stored")
    if sheet:
        say(f"bench sheet written to {sheet}")


@main.command("screens")
@json_option(help="Print a list of {id, name, factors, runs, base_run, chemist, scale, description}.")
@pass_ctx
def screens_cmd(ctx: Ctx, as_json: bool) -> None:
    """List the screens of the notebook."""
    with ctx.notebook() as nb:
        screens = nb.list_screens()
    if as_json:
        emit_json([s.model_dump(mode="json") for s in screens])
        return
    if not screens:
        say("no screens yet: plan one with 'trapbook screen plan BASE.json --vary trap=furan,anthracene'")
        return
    for s in screens:
        varied = "; ".join(f"{k}: {', '.join(v)}" for k, v in s.factors.items())
        say(f"{s.id:8} {s.name}")
        say(f"         {len(s.runs)} run(s) · {varied}")


@main.command("review")
@click.argument("screen")
@json_option(
    help="Print {screen_id, name, factors, rows: [{run_id, title, status, factors, isolated_yield_pct, nmr_yield_pct, "
    "dr, ee_pct, yield_pct, yield_kind, findings}], levels: {condition: {level: {runs, isolated, nmr, headline: "
    "{n, mean_pct, best_pct, best_run}}}}, best, failed, not_done, matrix, yield_rule}."
)
@pass_ctx
def review_cmd(ctx: Ctx, screen: str, as_json: bool) -> None:
    """Review a screen: yields by condition, per-level mean and best, the best run, failures and why."""
    from ..review import review_screen

    if ctx.group:  # SCREEN as MEMBER:SC-…, or an id only one member has
        from .group_view import review_group

        rv = review_group(ctx, screen, as_json)
        if rv is None:
            return
    else:
        with ctx.notebook() as nb:
            rv = review_screen(nb, screen)
    if as_json:
        emit_json(rv)
        return
    say(f"{rv['screen_id']}  {rv['name']}")
    names = list(rv["factors"])
    head = "  ".join(f"{n[:16]:16}" for n in names)
    click.echo()
    say(f"{'run':8} {head}  {'status':8} {'isolated':>8} {'NMR':>6} {'dr':>7} {'ee':>5}")
    for r in rv["rows"]:
        cells = "  ".join(f"{(r['factors'].get(n) or '—')[:16]:16}" for n in names)
        say(
            f"{r['run_id']:8} {cells}  {r['status']:8} {_pct(r['isolated_yield_pct']):>8} {_pct(r['nmr_yield_pct']):>6} "
            f"{(r['dr'] or '—'):>7} {_pct(r['ee_pct']):>5}"
        )
    click.echo()
    say("per level (headline yield: isolated, else NMR):")
    for n, lv in rv["levels"].items():
        for level, s in lv.items():
            h = s["headline"]
            say(
                f"  {n:12} {level:22} n={h['n']}  mean {_pct(h['mean_pct']):>5}  best {_pct(h['best_pct']):>5}"
                + (f" ({h['best_run']})" if h["best_run"] else "")
            )
    b = rv["best"]
    if b:
        click.echo()
        say(
            f"best: {b['run_id']} — "
            + ", ".join(f"{k} {v}" for k, v in b["factors"].items())
            + f": {_pct(b['yield_pct'])} ({b['yield_kind']})"
        )
        if b.get("note"):
            say(f"  note: {b['note']}")
    if rv["failed"]:
        click.echo()
        say("failed:")
        for f in rv["failed"]:
            why = "; ".join(f"{x['severity']} {x['code']}" for x in f["findings"]) or "no bench check explains it"
            say(f"  {f['run_id']} {f['title']}: {why}")
    if rv["not_done"]:
        click.echo()
        say(f"not done yet: {', '.join(rv['not_done'])}")


@main.command("strain-map")
@json_option(
    help="Print {intermediates: [{smiles, name, runs, kind, strain_quantity, strain_kcal_mol, strain_tier, "
    "olefin_strain_kcal_mol, stability_class, needs_trap, strain_method, strain_status, best_yield_pct, "
    "traps: [{trap, yield_pct, yield_kind, run_id}]}], ranking: {method, n, spearman_rho, kind, "
    "by_kind: [{kind, strain_quantity, n, spearman_rho}], note}, missing_strain}."
)
@pass_ctx
def strain_map_cmd(ctx: Ctx, as_json: bool) -> None:
    """Strain against outcome: each intermediate's cached strain (its kind's own quantity) and class
    beside its best yield per trap."""
    from ..review import strain_map

    if ctx.group:  # every member's runs; intermediates merged by structure, runs as MEMBER:ID
        from .group_view import strain_map_group

        sm = strain_map_group(ctx, as_json)
        if sm is None:
            return
    else:
        with ctx.notebook() as nb:
            sm = strain_map(nb)
    if as_json:
        emit_json(sm)
        return
    for x in sm["intermediates"]:
        say(f"{(x['name'] or x['smiles'])[:34]:34} {_strain_text(x):58} best {_pct(x['best_yield_pct'])}")
        for t in x["traps"]:
            say(f"    {t['trap'][:32]:32} {_pct(t['yield_pct']):>5} {t['yield_kind'] or '':10} {t['run_id']}")
    rk = sm["ranking"]
    click.echo()
    say(f"ranking: {rk['method']}")
    if rk["spearman_rho"] is not None:
        say(f"  rho = {rk['spearman_rho']:.2f} over {rk['n']} intermediates ({rk['kind']})")
    else:
        say(f"  {rk['note']}")
        for k in rk.get("by_kind") or []:
            rho = f"rho = {k['spearman_rho']:.2f}" if k["spearman_rho"] is not None else "no rho"
            say(f"    {k['kind']}: {rho} over {k['n']}")
    if sm["missing_strain"]:
        say(f"  strain not computed for {len(sm['missing_strain'])}: run 'trapbook strain SMILES' for each")


def _strain_text(x: dict) -> str:
    """An entry's strain in its kind's own words; a prescreen says so and has no class."""
    if x["strain_kcal_mol"] is None:
        return "strain not computed" if x["strain_status"] == "not computed" else "no strain number (see 'trapbook strain')"
    cls = x["stability_class"] or ("fast prescreen, not classed" if x["strain_tier"] != "accurate" else "not classed")
    return f"{x['kind']}: {x['strain_quantity'].split(' (')[0]} {x['strain_kcal_mol']:.1f} kcal/mol ({cls})"


@main.command("report")
@click.argument("ref")
@click.option("-o", "--output", required=True, help="HTML file to write (one self-contained page).")
@json_option(help="Print {path, kind, id, bytes}.")
@pass_ctx
def report_cmd(ctx: Ctx, ref: str, output: str, as_json: bool) -> None:
    """Write a printable HTML report of a run (TB-…) or a screen (SC-… or its name)."""
    from ..reports import write_report

    if ctx.group:  # REF as MEMBER:TB-… / MEMBER:SC-…; only the report file is written
        from .group_view import report_group

        info = report_group(ctx, ref, output)
    else:
        with ctx.notebook() as nb:
            info = write_report(nb, ref, output)
    if as_json:
        emit_json(info)
    else:
        say(
            f"wrote {info['kind']} report of {(info['member'] + ':') if info.get('member') else ''}{info['id']} to {info['path']}"
        )
