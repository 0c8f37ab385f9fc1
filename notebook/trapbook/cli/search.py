"""`trapbook search`: find runs by structure, conditions and words."""

from __future__ import annotations

import click

from ..search_query import DEFAULT_TIME_LIMIT_S, MAX_LIMIT
from .core import Ctx, emit_json, json_option, main, pass_ctx, say


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
@click.option(
    "--text",
    help="Plain words: full text of titles, notes, observations and tags; a word that is a run id (TB-0012) "
    "or a chemist's name (Iyer) finds those runs too (the Logbook filter's plain words).",
)
@click.option("--limit", type=int, help=f"At most this many results (a whole number from 1 to {MAX_LIMIT}).")
@click.option(
    "--time-limit",
    "time_limit_s",
    type=float,
    default=DEFAULT_TIME_LIMIT_S,
    show_default=True,
    help="Seconds a substructure match may take before the search stops and says so.",
)
@click.option("--all", "include_withdrawn", is_flag=True, help="Include withdrawn runs.")
@json_option(
    help="Print a list of {run_id, title, score, matched} (under --group: {members, hits}, each hit also with member and ref MEMBER:ID)."
)
@click.argument("typed", nargs=-1)
@pass_ctx
def search_cmd(ctx: Ctx, as_json: bool, tags: tuple[str, ...], typed: tuple[str, ...], **filters) -> None:
    """Find runs; all filters given must hold (AND). Results name what matched.

    TYPED is the Logbook filter's own query, e.g. `trapbook search trap:furan 'temp:>100' Iyer`
    (quote what your shell would read, such as >); it combines with the options. Both run
    the same search, so the filter box and this command give the same runs.
    """
    from ..search import search
    from ..search_query import combined, parse_query, query_from_options

    query = query_from_options(tags=tags, **filters)
    if typed:
        query = combined(parse_query(" ".join(typed)), query)
    if ctx.group:  # the same Query on every member's notebook, hits labelled MEMBER:ID
        from .group_view import search_group

        return search_group(ctx, query, as_json)
    with ctx.notebook() as nb:
        hits = search(nb, query)
    if as_json:
        emit_json([h.to_dict() for h in hits])
        return
    if not hits:
        click.echo("no run matches")
        return
    for h in hits:
        say(f"{h.run_id:8} {h.score:5.2f}  {h.title}")
        for m in h.matched:
            say(f"             {m}")
    click.echo(f"{len(hits)} run(s)")


@main.command("reindex")
@json_option(help="Print {runs}.")
@pass_ctx
def reindex_cmd(ctx: Ctx, as_json: bool) -> None:
    """Rebuild the search tables (structures, fingerprints, full text, each run's findings) from the stored runs."""
    from ..search import reindex

    with ctx.notebook() as nb:
        n = reindex(nb)
    if as_json:
        emit_json({"runs": n})
    else:
        click.echo(f"indexed {n} run(s)")
