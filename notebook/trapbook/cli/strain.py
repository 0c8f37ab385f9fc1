"""`trapbook strain` and `trapbook alignment`: the strain engine from the command line."""

from __future__ import annotations

import sys

import click

from ..errors import TrapbookError
from .core import Ctx, emit_json, guarded, main, pass_ctx


def _progress(quiet: bool):
    if quiet:
        return None

    def report(stage: str, fraction: float) -> None:
        width = 24
        filled = int(round(max(0.0, min(1.0, fraction)) * width))
        sys.stderr.write(f"\r[{'#' * filled}{'.' * (width - filled)}] {fraction * 100:3.0f}%  {stage[:50]:50}")
        if fraction >= 1.0:
            sys.stderr.write("\n")
        sys.stderr.flush()

    return report


def _open_optional(ctx: Ctx):
    """The notebook for caching, if there is one; strain works without it."""
    try:
        return ctx.notebook(create=True)
    except TrapbookError:
        return None


@main.command()
@click.argument("smiles")
@click.option("--tier", type=click.Choice(["fast", "accurate"]), default="accurate", show_default=True,
              help="fast = MMFF94 prescreen (rough); accurate = GFN2-xTB on MMFF conformers.")
@click.option("--refresh", is_flag=True, help="Recompute even if the notebook has a cached result.")
@click.option("--quiet", is_flag=True, help="No progress on stderr.")
@click.option("--json", "as_json", is_flag=True,
              help="Print {smiles, kind, bridges, s_value, trans_ring_size, olefin_strain_kcal_mol, stability_class, "
                   "twist_deg, pyramidalization_deg, bond_length_angstrom, tier, method, conformers, seconds, reference, ...}.")
@pass_ctx
@guarded
def strain(ctx: Ctx, smiles: str, tier: str, refresh: bool, quiet: bool, as_json: bool) -> None:
    """Strain of a strained intermediate (bridgehead alkene, cyclic allene, cycloalkyne)."""
    from ..strain_link import get_strain

    nb = _open_optional(ctx)
    try:
        result = get_strain(nb, smiles, tier=tier, progress=_progress(quiet), refresh=refresh)
    finally:
        if nb is not None:
            nb.close()
    if as_json:
        emit_json(result)
        return
    click.echo(_strain_text(result))


def _fmt(v, spec: str, unit: str = "") -> str:
    return "—" if v is None else f"{v:{spec}}{unit}"


_BOND_WORD = {"cycloalkyne": "C≡C", "cyclic allene": "C=C=C"}


def _strain_text(r: dict) -> str:
    lines = [f"{r.get('smiles')}  ({r.get('kind')})"]
    if r.get("kind") in (None, "none"):
        lines.append(f"  {r.get('message') or 'no strained unsaturation found'}")
        return "\n".join(lines)
    if r.get("bridges"):
        b = r["bridges"]
        n = r.get("trans_ring_size")
        article = "an" if n in (8, 11, 18) else "a"
        lines.append(f"  bicyclo[{'.'.join(map(str, b))}], S = {r.get('s_value')}, trans in {article} {n}-membered ring (Wiseman)")
    elif r.get("ring_size"):
        lines.append(f"  in a {r['ring_size']}-membered ring")
    what = "olefin strain" if r.get("kind") == "bridgehead alkene" else "pi-bond strain"
    lines.append(f"  {what}: {_fmt(r.get('olefin_strain_kcal_mol'), '.1f', ' kcal/mol')} -> {r.get('stability_class')}")
    lines.append(f"  twist {_fmt(r.get('twist_deg'), '.1f', '°')}, pyramidalization {_fmt(r.get('pyramidalization_deg'), '.1f', '°')}, "
                 f"{_BOND_WORD.get(r.get('kind'), 'C=C')} {_fmt(r.get('bond_length_angstrom'), '.3f', ' Å')}"
                 + (f", Wiberg {r['wiberg_bond_order']:.2f}" if r.get("wiberg_bond_order") is not None else ""))
    ref = r.get("reference")
    if isinstance(ref, dict) and ref.get("unsaturated"):
        u, sat = ref["unsaturated"], ref.get("saturated") or {}
        lines.append(f"  reference pair: {u.get('name')} / {sat.get('name')} ({ref.get('substitution', '')})")
    elif ref:
        lines.append(f"  reference pair: {ref}")
    lines.append(f"  method: {r.get('method')}; {r.get('conformers')} conformers; {_fmt(r.get('seconds'), '.1f', ' s')}"
                 + (" (from the notebook's cache)" if r.get("cached") else ""))
    if r.get("rough"):
        lines.append("  note: fast tier is a rough prescreen; MMFF94 overestimates the strain of twisted alkenes")
    return "\n".join(lines)


@main.command()
@click.argument("smiles")
@click.option("--json", "as_json", is_flag=True, help="Print {dihedral_deg, weighted_dihedral_deg, verdict, conformers, ...}.")
@pass_ctx
@guarded
def alignment(ctx: Ctx, smiles: str, as_json: bool) -> None:
    """Si–C–C–X alignment of a silyl precursor (can this diastereomer fire?)."""
    from ..chemistry.strain import precursor_alignment

    result = precursor_alignment(smiles)
    if as_json:
        emit_json(result)
        return
    click.echo(f"{smiles}")
    click.echo(f"  Si–C–C–X dihedral: {_fmt(result.get('dihedral_deg'), '.0f', '°')} in the lowest conformer, "
               f"{_fmt(result.get('weighted_dihedral_deg'), '.0f', '°')} Boltzmann-weighted over {result.get('conformers')} conformers")
    click.echo(f"  verdict: {result.get('verdict')}")
