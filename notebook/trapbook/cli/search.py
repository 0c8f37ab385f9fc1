"""`trapbook search`: find runs by structure, conditions and words."""

from __future__ import annotations

import click

from .core import Ctx, emit_json, guarded, main, pass_ctx


@main.command("search")
@click.option("--substructure", "-s", help="SMILES or SMARTS contained in the precursor, intermediate, trap or a product.")
@click.option("--similar", help="SMILES; rank runs by Morgan/Tanimoto similarity of those parts.")
@click.option("--min", "min_similarity", type=float, default=0.6, show_default=True, help="Tanimoto threshold for --similar.")
@click.option("--inchikey", help="Exact structure by InChIKey (or its first 14-letter block).")
@click.option("--trap", help="Trap by name (furan, DPIBF, ...) or SMILES.")
@click.option("--fluoride", help="Fluoride source name contains this (TBAF, CsF, ...).")
@click.option("--additive", help="Additive name contains this.")
@click.option("--solvent", help="Solvent name contains this.")
@click.option("--temp-min", help="Highest temperature of the run at least this (°C, or with unit).")
@click.option("--temp-max", help="Highest temperature of the run at most this.")
@click.option("--time-min", help="Total hold time at least this (min, or '2 h').")
@click.option("--time-max", help="Total hold time at most this.")
@click.option("--yield-min", type=float, help="Best yield at least this (%).")
@click.option("--yield-max", type=float, help="Best yield at most this (%).")
@click.option("--chemist", help="Chemist name contains this.")
@click.option("--date-from", help="On or after YYYY-MM-DD.")
@click.option("--date-to", help="On or before YYYY-MM-DD.")
@click.option("--screen", help="Runs of this screen (id or name).")
@click.option("--tag", "tags", multiple=True, help="Runs carrying this tag (repeat for several).")
@click.option("--finding", help="Runs with this bench-check finding code, e.g. trap-late.")
@click.option("--text", help="Full-text query over titles, notes and observations.")
@click.option("--limit", type=int, help="At most this many results.")
@click.option("--all", "include_withdrawn", is_flag=True, help="Include withdrawn runs.")
@click.option("--json", "as_json", is_flag=True, help="Print a list of {run_id, title, score, matched}.")
@pass_ctx
@guarded
def search_cmd(ctx: Ctx, as_json: bool, tags: tuple[str, ...], **filters) -> None:
    """Find runs; all filters given must hold (AND). Results name what matched."""
    from ..search import search

    with ctx.notebook() as nb:
        hits = search(nb, tags=list(tags) or None, **filters)
    if as_json:
        emit_json([h.to_dict() for h in hits])
        return
    if not hits:
        click.echo("no run matches")
        return
    for h in hits:
        click.echo(f"{h.run_id:8} {h.score:5.2f}  {h.title}")
        for m in h.matched:
            click.echo(f"             {m}")
    click.echo(f"{len(hits)} run(s)")


@main.command("reindex")
@click.option("--json", "as_json", is_flag=True, help="Print {runs}.")
@pass_ctx
@guarded
def reindex_cmd(ctx: Ctx, as_json: bool) -> None:
    """Rebuild the search tables (structures, fingerprints, full text, each run's findings) from the stored runs."""
    from ..search import reindex

    with ctx.notebook() as nb:
        n = reindex(nb)
    if as_json:
        emit_json({"runs": n})
    else:
        click.echo(f"indexed {n} run(s)")
