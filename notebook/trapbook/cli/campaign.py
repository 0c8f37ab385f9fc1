"""`trapbook campaign`: enumerate candidates, compute their strain on a Dask cluster, print the map."""

from __future__ import annotations

import sys
from pathlib import Path

import click

from ..errors import TrapbookError
from .core import Ctx, emit_json, json_option, main, pass_ctx, say

_MAX_FILE_BYTES = 2_000_000


def _progress_line(quiet: bool):
    if quiet:
        return None

    def show(done: int, failed: int, left: int) -> None:
        total = max(done + failed + left, 1)
        width = 24
        filled = int(round((done + failed) / total * width))
        sys.stderr.write(f"\r[{'#' * filled}{'.' * (width - filled)}] done {done}, failed {failed}, left {left}   ")
        if left == 0:
            sys.stderr.write("\n")
        sys.stderr.flush()

    return show


def _file_lines(path: Path) -> list[str]:
    if path.stat().st_size > _MAX_FILE_BYTES:
        raise TrapbookError(
            f"{path} is larger than {_MAX_FILE_BYTES // 1_000_000} MB", "a candidate file holds one SMILES a line"
        )
    try:
        text = path.read_text(encoding="utf-8")
    except UnicodeDecodeError:
        raise TrapbookError(f"{path} is not UTF-8 text", "save the candidate list as plain text, one SMILES a line") from None
    if "\x00" in text:
        raise TrapbookError(f"{path} holds NUL characters", "save the candidate list as plain text, one SMILES a line")
    return text.splitlines()


def _kinds(text: str) -> tuple[str, ...]:
    kinds = tuple(dict.fromkeys(k.strip() for k in text.split(",") if k.strip()))
    return kinds or ("bridgehead",)


@main.command("campaign")
@click.argument("source", metavar="SKELETON|FILE")
@click.option(
    "--tier",
    type=click.Choice(["fast", "accurate"]),
    default="accurate",
    show_default=True,
    help="accurate = GFN2-xTB (classed); fast = MMFF94 prescreen, never classed.",
)
@click.option(
    "--kinds",
    default="bridgehead",
    show_default=True,
    metavar="LIST",
    help="What to place in the skeleton: bridgehead, allene, alkyne (comma-separated).",
)
@click.option(
    "--leaving-group",
    "leaving_groups",
    multiple=True,
    type=click.Choice(["OTf", "Cl", "Br", "I"]),
    help="Leaving group of the precursors (repeatable; default OTf).",
)
@click.option("--no-precursors", is_flag=True, help="Strain only: skip the precursors and their alignment.")
@click.option("--scheduler", metavar="ADDR", help="An existing Dask scheduler (tcp://host:8786); default: a local cluster.")
@click.option("--workers", type=click.IntRange(1, 256), help="Workers of the local cluster (default: one per core).")
@click.option(
    "--retry-failed", is_flag=True, help="Try again the tasks that failed in an earlier run (kept with their reason otherwise)."
)
@click.option("--report", "report_path", metavar="FILE.html", help="Also write the campaign's HTML map.")
@json_option(
    help="Print {id, source, tier, tasks, computed, from_cache, failed: [{candidate, smiles, what, reason}], "
    "rows: [{rank (within its kind), ranked_within, name, smiles, kind, s_value, trans_ring_size, strain_kcal_mol, stability_class, "
    "twist_deg, pyramidalization_deg, best_precursor {smiles, verdict, aligned_fraction}, "
    "impossible_diastereomers: [{smiles, why}], status, reason}]}."
)
@pass_ctx
def campaign_cmd(
    ctx: Ctx,
    source: str,
    tier: str,
    kinds: str,
    leaving_groups: tuple[str, ...],
    no_precursors: bool,
    scheduler: str | None,
    workers: int | None,
    retry_failed: bool,
    report_path: str | None,
    as_json: bool,
) -> None:
    """Map the strain of every candidate intermediate of a skeleton, or of a file's list.

    SKELETON is a saturated polycycle's SMILES: every symmetry-unique bridgehead alkene is
    placed in it (and with --kinds allene,alkyne its cyclic allenes and cycloalkynes).
    FILE holds one candidate SMILES a line, optionally followed by a name. Each
    candidate's silyl triflate precursors (silyl on either carbon) are aligned, every
    diastereomer judged. The work runs on a local Dask cluster (one worker per core) or on
    --scheduler; results are stored in the notebook as they arrive, so a re-run computes
    only what is missing. See docs/campaigns.md for a Slurm cluster.
    """
    from ..campaign import campaign_table, load_record, plan, run_campaign

    path = Path(source).expanduser()
    lines = _file_lines(path) if path.is_file() else None
    record = plan(
        source if lines is None else str(path),
        tier=tier,
        kinds=_kinds(kinds),
        leaving_groups=leaving_groups or ("OTf",),
        precursors=not no_precursors,
        lines=lines,
    )
    with ctx.notebook() as nb:
        summary = run_campaign(
            nb,
            record,
            scheduler=scheduler,
            n_workers=workers,
            progress=_progress_line(as_json),
            retry_failed=retry_failed,
            author=ctx.author,
        )
        rows = campaign_table(nb, load_record(nb, record["id"]))
        if report_path:
            from ..reports import write_report

            summary["report"] = write_report(nb, record["id"], report_path)
    if as_json:
        emit_json({**summary, "source": record["source"], "tier": tier, "rows": rows})
        return
    _print_table(record, summary, rows)


def _n(v, spec: str = ".1f") -> str:
    return "—" if v is None else format(v, spec)


def _print_table(record: dict, summary: dict, rows: list[dict]) -> None:
    say(
        f"campaign {record['id']}: {record['source']} ({record['tier']} tier) — {len(rows)} candidates, "
        f"{summary['computed']} task(s) computed, {summary['from_cache']} from the notebook's cache"
    )
    if record["tier"] != "accurate":
        say("  fast tier: an MMFF94 prescreen, no class is given; run --tier accurate before acting on it")
    say(
        f"{'#':>2} {'name':10} {'S':>2} {'trans':>5} {'strain':>7} {'class':14} {'twist':>6} {'pyr':>6}  best precursor (alignment)"
    )
    kind = None
    for r in rows:
        if r["kind"] != kind:
            kind = r["kind"]
            say(f"-- {kind}: ranked among themselves by {r.get('strain_quantity') or 'strain'}")
        best = r["best_precursor"]
        align = f"{best['smiles']} ({best['verdict']}, {(best['aligned_fraction'] or 0) * 100:.0f} % aligned)" if best else "—"
        say(
            f"{r['rank']:>2} {r['name'][:10]:10} {_n(r['s_value'] or r['ring_size'], 'd'):>2} {_n(r['trans_ring_size'], 'd'):>5} "
            f"{_n(r['strain_kcal_mol']):>7} {(r['stability_class'] or 'no class')[:14]:14} {_n(r['twist_deg']):>6} "
            f"{_n(r['pyramidalization_deg']):>6}  {align}"
        )
        say(f"   {r['smiles']}  {r['kind']}" + (f"  [{r['status']}: {r['reason']}]" if r["status"] != "done" else ""))
        if r.get("impossible_diastereomers"):
            n = len(r["impossible_diastereomers"])
            say(f"   {n} precursor diastereomer(s) cannot exist (listed under --json and in the report)")
    for f in summary["failed"]:
        say(f"failed: {f['candidate']} {f['what']} {f['smiles']}: {f['reason']}")
    if summary["kept_failed"]:
        say(f"  {summary['kept_failed']} failure(s) kept from an earlier run; --retry-failed tries them again")
    if summary.get("report"):
        say(f"wrote the campaign's map to {summary['report']['path']}")
