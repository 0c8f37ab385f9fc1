"""`trapbook nmr`: NMR yields from the attached FID, for one run or every vial of a screen."""

from __future__ import annotations

from pathlib import Path

import click

from ..errors import NotFoundError, SpectrumError
from .core import Ctx, emit_json, json_option, main, pass_ctx, say

#: Exit code of `nmr SCREEN` when some vials were refused (the rest were saved).
REFUSED_EXIT = 3

#: How far around the standard's region the reference signal is looked for. Common practice, no source.
REFERENCE_SEARCH_PPM = 0.2


def _regions(
    standard,
    product,
    standard_protons,
    product_protons,
    product_line,
    lb,
    phase0,
    phase1,
    phase_method,
    baseline_order,
    reference,
    reference_region,
    reverse,
):
    from ..spectra import Processing, Region
    from ..spectra.runs import RegionSet

    if standard is None and product is None:
        return None
    if standard is None or product is None:
        raise SpectrumError(
            "give both --standard and --product (ppm ranges LOW..HIGH)",
            "e.g. --standard 6.00..6.20 --product 5.20..5.40",
            field="standard" if standard is None else "product",
        )
    std, prod = Region.parse(standard, "standard"), Region.parse(product, "product")
    ref_region = None
    if reference is not None:
        ref = (
            Region.parse(reference_region, "reference region")
            if reference_region
            else Region.of(std.low - REFERENCE_SEARCH_PPM, std.high + REFERENCE_SEARCH_PPM, "reference region")
        )
        ref_region = (ref.low, ref.high)
    proc = Processing(
        line_broadening_hz=lb,
        phase0_deg=phase0,
        phase1_deg=phase1,
        phase_method=phase_method,
        baseline_order=baseline_order,
        reference_ppm=reference,
        reference_region=ref_region,
        reverse=reverse,
    )
    return RegionSet(std, prod, standard_protons, product_protons, product_line, proc)


def _is_screen(nb, target: str) -> bool:
    try:
        nb.run_meta(target)
        return False
    except NotFoundError:
        pass
    try:
        nb.get_screen(target)
    except NotFoundError:
        raise NotFoundError(
            f"no run or screen '{target}' in this notebook",
            "list them with 'trapbook list' and 'trapbook screens'",
            field="target",
            got=target,
        ) from None
    return True


def _print_run(res: dict) -> None:
    y = res["yield_pct"]
    kept = "" if res["saved"] else " (the same as stored: no new version)"
    say(f"{res['run_id']} v{res['version']}{kept}: {res['product']} from {res['attachment']} (sha256 {res['sha256'][:12]}…)")
    say(
        f"  standard {res['standard_integral']:.2f} ({res['standard_protons']}H)  product {res['product_integral']:.3f} "
        f"({res['product_protons']}H)  ratio {res['ratio']:.4f}  NMR yield " + ("—" if y is None else f"{y:.1f} %")
    )
    p = res["processing"]
    say(
        f"  phase {p['phase0_deg']:.1f}° / {p['phase1_deg']:.1f}° ({p['phase_found_by']}), "
        f"reference shift {p['reference_shift_ppm']:+.3f} ppm, digital filter {p['digital_filter']}"
    )
    for w in res["warnings"]:
        say(f"  warning: {w['message']}")


def _write_png(ctx: Ctx, run_id: str, regions, attachment: str | None, png: str) -> None:
    from ..attachments import read_verified, store_dir
    from ..files import write_atomic
    from ..spectra.plot import spectrum_png
    from ..spectra.runs import analyse, spectrum_attachment

    with ctx.notebook() as nb:
        run = nb.get_run(run_id)
        att = spectrum_attachment(run, attachment)
        spec, integ = analyse(read_verified(store_dir(nb), att.sha256, att.size), att.name, regions)
    write_atomic(png, spectrum_png(spec, integ, title=f"{run_id}: {att.name}"), SpectrumError)


def _check_png_path(png: str) -> None:
    """Refuse a picture path that cannot be written before anything is integrated or saved."""
    path = Path(png)
    if path.suffix.lower() != ".png":
        raise SpectrumError(f"picture file {png} does not end in .png", "give a file name like tb4.png", field="png")
    if not path.parent.expanduser().is_dir():
        raise SpectrumError(f"folder {path.parent} does not exist", "choose a folder that exists", field="png")


@main.command()
@click.argument("target", metavar="RUN|SCREEN")
@click.option("--standard", metavar="LOW..HIGH", help="ppm range of the internal standard's signal, e.g. 6.00..6.20.")
@click.option("--product", metavar="LOW..HIGH", help="ppm range of the product's signal, e.g. 5.20..5.40.")
@click.option("--standard-protons", type=click.IntRange(1, 100), help="Protons under the standard's signal (e.g. 3).")
@click.option("--product-protons", type=click.IntRange(1, 100), help="Protons under the product's signal (e.g. 1).")
@click.option("--product-line", help="Product line the integral belongs to (default: the run's only one).")
@click.option("--attachment", help="Attachment to integrate, by name or hash (default: the run's only raw-data file).")
@click.option("--lb", type=click.FloatRange(0, 50), default=0.3, show_default=True, help="Exponential line broadening, Hz.")
@click.option("--phase0", type=float, help="Zero-order phase in degrees (default: found automatically).")
@click.option("--phase1", type=float, help="First-order phase in degrees (default: 0, or found with acme+p1).")
@click.option(
    "--phase-method",
    type=click.Choice(["tallest-peak", "acme", "acme+p1", "peak_minima"]),
    default="tallest-peak",
    show_default=True,
    help="How the phase is found when not given.",
)
@click.option(
    "--baseline-order",
    type=click.IntRange(0, 6),
    default=3,
    show_default=True,
    help="Order of the baseline polynomial fitted to the signal-free points.",
)
@click.option(
    "--reference",
    type=float,
    metavar="PPM",
    help="Move the tallest signal of the reference region (default: around the standard's) to this shift.",
)
@click.option("--reference-region", metavar="LOW..HIGH", help="Where to look for the reference signal, e.g. 7.1..7.4 for CHCl3.")
@click.option(
    "--reverse/--no-reverse",
    default=True,
    show_default=True,
    help="Flip the transformed spectrum end to end, so high ppm comes first (right for Bruker data).",
)
@click.option("--png", type=click.Path(dir_okay=False), help="Also write the spectrum with its regions shaded (one run only).")
@json_option(
    help="Print {run_id, version, standard_integral, product_integral, ratio, yield_pct, processing: {...}, "
    "warnings: [...]}; for a screen {screen, regions, integrated: [...], refused: [...], skipped: [...]} (exit code 3 when any vial was refused)."
)
@pass_ctx
def nmr(ctx: Ctx, target: str, attachment, png, as_json: bool, **processing) -> None:
    """NMR yield from the attached FID: process, integrate, save as a new version.

    RUN is a stored run with a zipped Bruker or Varian/Agilent experiment folder, or a
    JCAMP-DX FID, attached ('trapbook attach'). The spectrum is processed (digital filter,
    line broadening, zero filling, phase, baseline, referencing), the standard's and the
    product's regions integrated, and the qNMR record saved with the processing and the
    file's SHA-256 (reason "integrated from the attached spectrum"). The yield is the
    notebook's qNMR rule applied to it.

    SCREEN does the same for every vial with raw data, with one set of regions kept for
    the screen (given once, then remembered, versioned).
    """
    from ..spectra.runs import integrate_run, integrate_screen

    regions = _regions(**processing)  # the region and processing options, as click named them
    if png:
        _check_png_path(png)
    with ctx.notebook() as nb:
        screen = _is_screen(nb, target)
        if screen:

            def progress(stage: str, fraction: float) -> None:
                if not as_json:
                    click.echo(f"  {fraction * 100:3.0f}%  {stage}", err=True)

            res = integrate_screen(nb, target, regions, author=ctx.author, progress=progress)
        else:
            if regions is None:
                raise SpectrumError(
                    "give the regions to integrate: --standard LOW..HIGH --product LOW..HIGH",
                    "e.g. trapbook nmr TB-0001 --standard 6.00..6.20 --product 5.20..5.40",
                    field="standard",
                )
            res = integrate_run(nb, target, regions, attachment=attachment, author=ctx.author)
    if png and not screen:
        _write_png(ctx, target, regions, attachment, png)
    if as_json:
        emit_json(res)
    elif not screen:
        _print_run(res)
    else:
        for r in res["integrated"]:
            _print_run(r)
        for r in res["refused"]:
            say(f"{r['run_id']}: refused: {r['error']}")
        if res["skipped"]:
            say(f"no raw data attached: {', '.join(res['skipped'])}")
    if screen and res["refused"]:
        # Some vials were not integrated: a script must not read the screen as done.
        raise click.exceptions.Exit(REFUSED_EXIT)
