"""`trapbook strain` and `trapbook alignment`: the strain engine from the command line."""

from __future__ import annotations

import re
import sys

import click

from ..errors import TrapbookError
from .core import Ctx, emit_json, json_option, main, pass_ctx, say


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
    """The notebook for caching, if there is one; strain works without it (and never creates one)."""
    return ctx.optional_notebook()


_RUN_ID = re.compile(r"^[A-Za-z]{1,8}-\d+$")  # e.g. TB-0002: letters cannot make such a SMILES


def _stored_run(nb, ref: str):
    """The stored run with this id, or None when the notebook has no such run."""
    if nb is None or not ref or any(ch in ref for ch in "=#()[]@"):
        return None
    try:
        return nb.get_run(ref)
    except TrapbookError:
        return None


@main.command()
@click.argument("target", metavar="SMILES_OR_RUN")
@click.option(
    "--tier",
    type=click.Choice(["fast", "accurate"]),
    default="accurate",
    show_default=True,
    help="accurate = GFN2-xTB on MMFF94 conformers (classed); fast = MMFF94 prescreen, never classed.",
)
@click.option("--refresh", is_flag=True, help="Recompute even if the notebook has a cached result.")
@click.option("--quiet", is_flag=True, help="No progress on stderr.")
@json_option(
    help="Print {smiles, kind, strain_quantity, strain_kcal_mol, olefin_strain_kcal_mol, ring_strain_kcal_mol, "
    "excess_strain_kcal_mol, aryne_strain_kcal_mol, stability_class, needs_trap, judgement, schemes, "
    "twist_deg, tier, method, species, ...}; for a precursor {precursor, intermediate, how, command}."
)
@pass_ctx
def strain(ctx: Ctx, target: str, tier: str, refresh: bool, quiet: bool, as_json: bool) -> None:
    """Strain of a strained intermediate: bridgehead alkene, cyclic allene, cycloalkyne or aryne.

    SMILES_OR_RUN is the intermediate's SMILES or a stored run id (TB-0002), whose
    intermediate (as recorded, or derived from its silyl precursor) is computed. Given a
    silyl precursor's SMILES, it names the intermediate the precursor releases and prints
    the command that computes it.
    """
    from ..strain_link import get_strain, intermediate_of_run, precursor_release

    nb = _open_optional(ctx)
    try:
        run = _stored_run(nb, target)
        origin = None
        if run is not None:
            found = intermediate_of_run(run)
            if found is None:
                raise TrapbookError(
                    f"run {target} names no intermediate and has no silyl precursor to derive it from",
                    f"record the intermediate's SMILES on the run (field 'intermediate'), then run 'trapbook strain {target}'",
                )
            smiles, origin = found
        else:
            if _RUN_ID.match(target):
                raise TrapbookError(
                    f"no run {target} in this notebook, and {target!r} is not a SMILES either",
                    "list the runs with 'trapbook list', or give the intermediate's SMILES",
                )
            release = precursor_release(target)
            if release is not None:
                _print_release(release, as_json)
                return
            smiles = target
        result = get_strain(nb, smiles, tier=tier, progress=_progress(quiet), refresh=refresh)
    finally:
        if nb is not None:
            nb.close()
    if origin is not None:
        result = {**result, "run_id": target, "intermediate_origin": origin}
    if as_json:
        emit_json(result)
        return
    say(_strain_text(result), multiline=True)


def _print_release(release: dict, as_json: bool) -> None:
    if as_json:
        emit_json(release)
        return
    say(f"{release['precursor']} is a silyl precursor, not the intermediate.")
    say(f"  it releases {release['intermediate']} ({release['how']})")
    say(f"  compute that intermediate's strain with:  {release['command']}")
    say(f"  and the precursor's Si–C–C–X alignment with:  trapbook alignment '{release['precursor']}'")


def _fmt(v, spec: str, unit: str = "") -> str:
    return "—" if v is None else f"{v:{spec}}{unit}"


_BOND_WORD = {"cycloalkyne": "C≡C", "cyclic allene": "C=C=C", "aryne": "C≡C (formal)"}


def _strain_text(r: dict) -> str:
    lines = [f"{r.get('smiles')}  ({r.get('kind')})"]
    if r.get("intermediate_origin"):
        lines.append(f"  intermediate of {r.get('run_id')}: {r['intermediate_origin']}")
    if r.get("kind") in (None, "none"):
        lines.append(f"  {r.get('message') or 'no strained unsaturation found'}")
        return "\n".join(lines)
    if r.get("bridges"):
        b = r["bridges"]
        n = r.get("trans_ring_size")
        article = "an" if n in (8, 11, 18) else "a"
        lines.append(
            f"  bicyclo[{'.'.join(map(str, b))}], S = {r.get('s_value')}, trans in {article} {n}-membered ring (Wiseman)"
        )
    elif r.get("ring_size"):
        lines.append(f"  in a {r['ring_size']}-membered ring")
    lines.extend(_number_lines(r))
    lines.append(
        f"  twist {_fmt(r.get('twist_deg'), '.1f', '°')}, pyramidalization {_fmt(r.get('pyramidalization_deg'), '.1f', '°')}, "
        f"{_BOND_WORD.get(r.get('kind'), 'C=C')} {_fmt(r.get('bond_length_angstrom'), '.3f', ' Å')}"
        + (f", Wiberg {r['wiberg_bond_order']:.2f}" if r.get("wiberg_bond_order") is not None else "")
    )
    for scheme in r.get("schemes") or []:
        lines.append(f"  scheme ({scheme.get('quantity')}): {scheme.get('equation')}")
    n = r.get("conformers")
    lines.append(
        f"  method: {r.get('method')}; {n} conformer{'' if n == 1 else 's'}; {_fmt(r.get('seconds'), '.1f', ' s')}"
        + (" (from the notebook's cache)" if r.get("cached") else "")
    )
    return "\n".join(lines)


def _number_lines(r: dict) -> list[str]:
    out = []
    labelled = [
        ("olefin_strain_kcal_mol", "olefin strain"),
        ("ring_strain_kcal_mol", "ring strain (against strain-free acyclic groups)"),
        ("excess_strain_kcal_mol", "excess over the saturated ring"),
        ("aryne_strain_kcal_mol", "aryne strain (against an open-chain alkyne)"),
    ]
    for key, words in labelled:
        if r.get(key) is not None:
            out.append(f"  {words}: {r[key]:.1f} kcal/mol")
    if r.get("ring_strain_note"):
        out.append(f"  {r['ring_strain_note']}")
    judgement = r.get("judgement")
    if judgement:
        out.append(
            f"  class: {judgement['stability']} — {'needs a trap' if judgement['needs_trap'] else 'survives without a trap'}"
        )
        out.append(f"    {judgement['words']}")
        out.append(f"    source: {judgement['source']}")
    elif r.get("prescreen_note"):
        out.append(f"  no class: {r['prescreen_note']}")
    else:
        out.append("  no class: this number cannot be classed; treat the intermediate as needing a trap")
    return out


@main.command()
@click.argument("smiles", metavar="SMILES_OR_RUN")
@click.option(
    "--temperature",
    "temperature_c",
    type=float,
    default=None,
    help="Temperature (°C) for the Boltzmann populations. Default: for a run id, the run's temperature at the "
    "fluoride addition (the entry its checks read); for a SMILES, 25 °C.",
)
@json_option(
    help="Print {verdict, dihedral_deg, dihedral_words, best_aligned {dihedral_deg, words, delta_kcal_mol, population}, "
    "aligned_fraction, conformer_table, temperature_c, stereo_warning, diastereomers, ...}."
)
@pass_ctx
def alignment(ctx: Ctx, smiles: str, temperature_c: float, as_json: bool) -> None:
    """Si–C–C–X alignment of a silyl precursor: can this diastereomer fire?

    Measured: the Si–C–C–X dihedral (silyl carbon to leaving-group carbon) in every MMFF94
    conformer of the precursor, each conformer's Boltzmann population at --temperature,
    and the energy needed to reach the best-aligned conformer. Angles are named by the
    Klyne–Prelog ranges: synperiplanar 0–30°, synclinal (gauche) 30–90°, anticlinal
    90–150°, antiperiplanar 150–180°. Elimination needs antiperiplanar (or synperiplanar
    in a rigid ring); an aligned conformer within 3 kcal/mol of the lowest counts as
    reachable ("aligns after a ring flip, +1.4 kcal/mol, 7 % at 25 °C"). Unassigned
    stereocentres are enumerated and each diastereomer is judged side by side.

    SMILES_OR_RUN is the precursor's SMILES or a stored run id (TB-0002): then its first
    precursor is aligned at the run's temperature, so the run's checks find the result.
    """
    from ..strain_link import get_alignment

    nb = _open_optional(ctx)
    try:
        smiles, temperature_c = _alignment_target(nb, smiles, temperature_c)
        result = get_alignment(nb, smiles, temperature_c=temperature_c)
    finally:
        if nb is not None:
            nb.close()
    if as_json:
        emit_json(result)
        return
    say(smiles)
    if result.get("stereo_warning"):
        say(f"  warning: {result['stereo_warning']}")
        for side in result.get("diastereomers") or []:
            say(f"  {side['smiles']}")
            say(_alignment_lines(side, "    "), multiline=True)
        return
    say(_alignment_lines(result, "  "), multiline=True)


def _alignment_target(nb, target: str, temperature_c: float | None) -> tuple[str, float]:
    """(precursor SMILES, temperature): a run id gives its first precursor and, unless one is
    given, the temperature its checks read the alignment at (`strain_link.run_temperature_c`)."""
    import math

    from ..findings import precursor_of
    from ..strain_link import run_temperature_c

    if temperature_c is not None and not (math.isfinite(temperature_c) and temperature_c >= -273.15):
        raise TrapbookError(
            f"--temperature {temperature_c} is not a temperature in °C",
            "give a finite number at or above −273.15, e.g. --temperature -78",
        )
    run = _stored_run(nb, target)
    if run is None:
        if _RUN_ID.match(target):
            raise TrapbookError(
                f"no run {target} in this notebook, and {target!r} is not a SMILES either",
                "list the runs with 'trapbook list', or give the precursor's SMILES",
            )
        return target, 25.0 if temperature_c is None else temperature_c
    smiles = precursor_of(run)
    if smiles is None:
        raise TrapbookError(
            f"run {target} has no precursor line with a SMILES",
            f"add the precursor's SMILES to its line, then run 'trapbook alignment {target}'",
        )
    return smiles, run_temperature_c(run) if temperature_c is None else temperature_c


def _alignment_lines(r: dict, pad: str) -> str:
    lines = [
        f"{pad}leaving group: {r.get('leaving_group')}; {r.get('conformers')} conformers, {r.get('method')}",
        f"{pad}lowest conformer: Si–C–C–X {_fmt(r.get('dihedral_deg'), '.0f', '°')} ({r.get('dihedral_words')})",
    ]
    best = r.get("best_aligned")
    if best:
        lines.append(
            f"{pad}best aligned: {best['dihedral_deg']:.0f}° ({best['words']}), +{best['delta_kcal_mol']:.1f} kcal/mol, "
            f"{best['population'] * 100:.1f} % of the ensemble"
        )
    lines.append(f"{pad}verdict: {r.get('verdict')}")
    return "\n".join(lines)
