"""`trapbook products`: the adducts and by-products a run (or an intermediate and a trap)
should give, with formula, exact mass and the m/z of the usual HRMS ions."""

from __future__ import annotations

import click

from ..errors import TrapbookError
from .core import Ctx, emit_json, json_option, load_run_arg, main, pass_ctx, say

_ION_ORDER = ("[M+H]+", "[M+Na]+", "[M+NH4]+", "[M+K]+", "[M-H]-")


def _subject(ctx: Ctx, run_ref: str | None, intermediate: str | None, trap: str | None):
    if run_ref and intermediate:
        raise TrapbookError(
            "give a run or --intermediate, not both",
            "trapbook products TB-0001, or trapbook products --intermediate SMILES --trap SMILES",
            field="intermediate",
        )
    if run_ref:
        return load_run_arg(ctx, run_ref)
    if not intermediate:
        raise TrapbookError(
            "nothing to work on: no run and no --intermediate",
            "trapbook products TB-0001, or trapbook products --intermediate 'C12=CCCC(C1)CCC2' --trap 'c1ccoc1'",
            field="intermediate",
        )
    if not trap:
        raise TrapbookError(
            "--intermediate needs --trap", "add --trap with the trap's SMILES, e.g. --trap 'c1ccoc1'", field="trap"
        )
    return intermediate


def _text(report: dict) -> None:
    traps = ", ".join(t["name"] or t["smiles"] for t in report["traps"])
    say(f"intermediate {report['intermediate']} ({report['intermediate_kind']}), {report['intermediate_origin']}")
    say(f"trap: {traps}" + (f"; leaving group released: {report['leaving_group']}" if report["leaving_group"] else ""))
    say("(C1, C2, ... number the intermediate's atoms in the order of the SMILES above)")
    header = f"{'#':>3}  {'kind':<10} {'formula':<14} {'exact mass':>10}  " + "  ".join(f"{i:>9}" for i in _ION_ORDER)
    say(header)
    for n, p in enumerate(report["products"], 1):
        ions = "  ".join(f"{p['ions'][i]:>9.4f}" for i in _ION_ORDER)
        say(f"{n:>3}  {p['kind']:<10} {p['formula']:<14} {p['monoisotopic_mass']:>10.4f}  {ions}")
        say(f"     {p['words']}")
        say(f"     {p['smiles']}  (M {p['molar_mass']:.2f} g/mol)")
    if not report["products"]:
        say("no products")
    for row in report.get("hrms", []):
        if "problem" in row:
            say(f"HRMS recorded for {row['product']}: {row['ion']} found {row['found_mz']:.4f}; {row['problem']}")
        else:
            say(
                f"HRMS recorded for {row['product']}: {row['ion']} calcd for {row['ion_formula']} {row['calcd_mz']:.4f}, "
                f"found {row['found_mz']:.4f} ({row['ppm']:+.1f} ppm)"
            )
    for note in report["notes"]:
        say(f"note: {note}")
    if report["truncated"]:
        say("the list was cut short (see the notes); the products shown are correct but not all")


@main.command()
@click.argument("run_ref", metavar="[RUN]", required=False)
@click.option("--intermediate", help="SMILES of the strained intermediate (instead of a run).")
@click.option("--trap", help="SMILES of the trap (with a run: instead of the run's trap lines).")
@json_option(
    help="Print {intermediate, intermediate_kind, intermediate_origin, traps, leaving_group, "
    "products: [{smiles, words, kind, reaction, site, stereo, racemic, formula, molar_mass, "
    "monoisotopic_mass, ions}], hrms (a run's recorded values: [{product, ion, ion_formula, calcd_mz, "
    "found_mz, ppm}]), notes, truncated}."
)
@pass_ctx
def products(ctx: Ctx, run_ref: str | None, intermediate: str | None, trap: str | None, as_json: bool) -> None:
    """Expected trapping products, with formula, exact mass and HRMS ions.

    RUN is a run file or a stored run id (TB-0001): its intermediate (as recorded, or
    derived from the silyl precursor) with each of its trap lines. Lists the cycloadducts
    with their stereoisomers (those that exist in 3D) and the usual by-products (dimer,
    water and leaving-group adducts), each with formula, molar mass, monoisotopic mass and
    the m/z of [M+H]+, [M+Na]+, [M+NH4]+, [M+K]+ and [M-H]-.
    """
    from ..trapping import products_report

    report = products_report(_subject(ctx, run_ref, intermediate, trap), trap)
    if as_json:
        emit_json(report)
    else:
        _text(report)
