"""Integrals from a run's attached FID into its qNMR record, one run or a whole screen.

The integrals, the proton counts and the processing record (with the attachment's
SHA-256) go into the run's qNMR outcome as a new version through the notebook's normal
save, so the history says which bytes, which regions and which phases gave the number.
The yield is `trapbook.amounts`' qNMR rule applied to the new record, before anything is
written: a run whose yield cannot be worked out is refused and left as it was.

A screen keeps one set of regions for all its vials, stored as a versioned notebook
setting keyed by the screen (``nmr_regions:SC-0001``), so changing them is logged like
any other edit and every vial of the screen is read the same way.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field, replace

from .. import amounts
from ..attachments import read_verified, store_dir
from ..errors import SpectrumError, TrapbookError
from ..records import QNMR, Outcome, ProductResult, Run, SpectrumRecord
from .integrate import Integration, Region, integrate
from .processing import ProcessedSpectrum, Processing, process
from .readers import MAX_UNPACKED_BYTES, read_bytes

REASON = "integrated from the attached spectrum"
#: File name endings of attachments that can hold raw 1H data (a zipped experiment folder, JCAMP-DX).
SPECTRUM_ENDINGS = (".zip", ".jdx", ".dx", ".jcamp")
Progress = Callable[[str, float], None]


def regions_key(screen_id: str) -> str:
    return f"nmr_regions:{screen_id}"


@dataclass(frozen=True)
class RegionSet:
    """The regions, proton counts and processing that turn one spectrum into a qNMR record."""

    standard: Region
    product: Region
    standard_protons: int | None = None
    product_protons: int | None = None
    product_line: str | None = None
    processing: Processing = field(default_factory=Processing)

    def to_dict(self) -> dict:
        return {
            "standard": [self.standard.low, self.standard.high],
            "product": [self.product.low, self.product.high],
            "standard_protons": self.standard_protons,
            "product_protons": self.product_protons,
            "product_line": self.product_line,
            "processing": self.processing.to_dict(),
        }

    @classmethod
    def from_dict(cls, d: dict) -> RegionSet:
        try:
            return cls(
                Region.of(*d["standard"], what="standard"),
                Region.of(*d["product"], what="product"),
                d.get("standard_protons"),
                d.get("product_protons"),
                d.get("product_line"),
                Processing.from_dict(d.get("processing") or {}),
            )
        except (KeyError, TypeError, ValueError) as exc:
            raise SpectrumError(
                f"the stored NMR regions cannot be read ({exc})",
                "set them again with 'trapbook nmr SCREEN --standard LOW..HIGH --product LOW..HIGH'",
            ) from None


def spectrum_attachment(run: Run, name: str | None = None):
    """The attachment to integrate: the one named, else the run's only raw-data attachment."""
    if name:
        att = next((a for a in run.attachments if a.name == name or (len(name) >= 8 and a.sha256.startswith(name))), None)
        if att is None:
            raise SpectrumError(
                f"run {run.id} has no attachment '{name}'", "list them with 'trapbook show RUN --json'", field="attachment"
            )
        return att
    found = [a for a in run.attachments if a.name.lower().endswith(SPECTRUM_ENDINGS)]
    if not found:
        raise SpectrumError(
            f"run {run.id} has no attached raw NMR data (a zipped experiment folder or a JCAMP-DX file)",
            "attach it with 'trapbook attach RUN FILE'",
            field="attachment",
        )
    if len({a.sha256 for a in found}) > 1:
        raise SpectrumError(
            f"run {run.id} has {len(found)} raw-data attachments: {', '.join(a.name for a in found)}",
            "choose one with --attachment NAME",
            field="attachment",
        )
    return found[-1]


def analyse(data: bytes, name: str, regions: RegionSet) -> tuple[ProcessedSpectrum, Integration]:
    """Process one data set and integrate it; pure (no notebook), so the same bytes give the same numbers."""
    raw = read_bytes(data, name)
    std_n = regions.standard_protons or 1
    prod_n = regions.product_protons or 1
    proc = regions.processing
    if proc.phase_method == "tallest-peak" and proc.phase_region is None and proc.phase0_deg is None:
        proc = replace(proc, phase_region=(regions.standard.low, regions.standard.high))
    spec = process(
        raw, proc, keep_out=[(regions.standard.low, regions.standard.high), (regions.product.low, regions.product.high)]
    )
    return spec, integrate(spec, regions.standard, regions.product, std_n, prod_n)


def integrate_run(nb, run_id: str, regions: RegionSet, attachment: str | None = None, author: str | None = None) -> dict:
    """Integrate a run's spectrum, save the qNMR record as a new version, and say what came of it."""
    meta = nb.run_meta(run_id)
    run = nb.get_run(run_id)
    att = spectrum_attachment(run, attachment)
    if att.size > MAX_UNPACKED_BYTES:
        raise SpectrumError(
            f"{att.name} is {att.size / 2**20:.0f} MB, more than a 1D experiment can be",
            "attach the zipped folder of the one 1H experiment",
            field="attachment",
        )
    data = read_verified(store_dir(nb), att.sha256, att.size)
    product_name, previous = _product_result(run, regions.product_line)
    std_n, prod_n = _protons(regions, previous)
    regions = replace(regions, standard_protons=std_n, product_protons=prod_n)
    spec, integ = analyse(data, att.name, regions)
    record = SpectrumRecord(
        attachment_sha256=att.sha256,
        attachment_name=att.name,
        standard_region=(regions.standard.low, regions.standard.high),
        product_region=(regions.product.low, regions.product.high),
        processing={
            **spec.record,
            "standard_area": integ.standard_area,
            "product_area": integ.product_area,
            "warnings": integ.warnings,
        },
    )
    old_q = previous.qnmr if previous is not None else None
    qnmr = QNMR(
        standard=old_q.standard if old_q else None,
        standard_amount=old_q.standard_amount if old_q else None,
        standard_integral=integ.standard_integral,
        standard_protons=std_n,
        integral=integ.product_integral,
        protons=prod_n,
        spectrum=record,
    )
    new_run = _with_qnmr(run, product_name, previous, qnmr)
    yield_pct = _nmr_yield(new_run, product_name)  # refuses before anything is written
    unchanged = new_run.to_json_dict() == run.to_json_dict()  # the same bytes and settings again: no new version
    version = meta["version"] if unchanged else nb.save_run(new_run, meta["version"], author=author, reason=REASON).version
    return {
        "run_id": run.id,
        "version": version,
        "saved": not unchanged,
        "product": product_name,
        "attachment": att.name,
        "sha256": att.sha256,
        "standard_integral": integ.standard_integral,
        "product_integral": integ.product_integral,
        "standard_protons": std_n,
        "product_protons": prod_n,
        "ratio": integ.ratio,
        "yield_pct": yield_pct,
        "processing": spec.record,
        "warnings": integ.warnings,
    }


def _product_result(run: Run, wanted: str | None) -> tuple[str, ProductResult | None]:
    """Which product the integral belongs to, and its current outcome entry if it has one."""
    results = run.outcome.products if run.outcome else []
    if wanted:
        line = run.line(wanted)
        if line is None:
            raise SpectrumError(
                f"run {run.id} has no line '{wanted}'", "name one of the run's product lines", field="product_line"
            )
        name = line.name
    else:
        with_q = [r for r in results if r.qnmr is not None]
        products = run.lines_by_role("product")
        if len(with_q) == 1:
            name = with_q[0].product
        elif len(products) == 1:
            name = products[0].name
        else:
            raise SpectrumError(
                f"run {run.id} has {len(products)} product lines; which one is integrated?",
                "name it with --product-line NAME",
                field="product_line",
            )
    prev = next((r for r in results if r.product.casefold() == name.casefold()), None)
    return (prev.product if prev else name), prev


def _protons(regions: RegionSet, previous: ProductResult | None) -> tuple[int, int]:
    q = previous.qnmr if previous is not None else None
    std_n = regions.standard_protons or (q.standard_protons if q else None)
    prod_n = regions.product_protons or (q.protons if q else None)
    if std_n is None or prod_n is None:
        raise SpectrumError(
            "the proton counts of the integrated signals are not known",
            "give --standard-protons and --product-protons (e.g. 3 and 1)",
            field="standard_protons",
        )
    return std_n, prod_n


def _with_qnmr(run: Run, product: str, previous: ProductResult | None, qnmr: QNMR) -> Run:
    outcome = run.outcome or Outcome()
    if previous is None:
        products = [*outcome.products, ProductResult(product=product, qnmr=qnmr)]
    else:
        products = [r.model_copy(update={"qnmr": qnmr}) if r is previous else r for r in outcome.products]
    # a copy, not a re-read: the run's steps keep the meaning they were saved with ('rt' in this lab)
    return run.model_copy(update={"outcome": outcome.model_copy(update={"products": products})})


def _nmr_yield(run: Run, product: str) -> float | None:
    for y in amounts.product_yields(run):
        if y.product.casefold() == product.casefold():
            return y.nmr_yield_pct
    return None


# --- a screen ----------------------------------------------------------------------------------


def screen_regions(nb, screen_id: str, given: RegionSet | None, author: str | None = None) -> RegionSet:
    """The screen's regions: the ones given (then kept as the screen's, versioned), else the stored ones."""
    key = regions_key(screen_id)
    if given is not None:
        nb.set_setting(key, given.to_dict(), author=author, reason=f"NMR regions of screen {screen_id}")
        return given
    stored = nb.get_setting(key)
    if stored is None:
        raise SpectrumError(
            f"screen {screen_id} has no NMR regions yet",
            "give them once: trapbook nmr SCREEN --standard LOW..HIGH --product LOW..HIGH "
            "--standard-protons N --product-protons N",
            field="standard",
        )
    return RegionSet.from_dict(stored)


def integrate_screen(
    nb, screen_key: str, given: RegionSet | None = None, author: str | None = None, progress: Progress | None = None
) -> dict:
    """Integrate every vial of a screen that has a spectrum, with the screen's one set of regions.

    A vial whose data are refused is listed with the reason and left unchanged; the others
    are saved. Vials without raw data are listed as skipped.
    """
    screen = nb.get_screen(screen_key)
    regions = screen_regions(nb, screen.id, given, author)
    runs = nb.screen_runs(screen)
    done: list[dict] = []
    refused: list[dict] = []
    skipped: list[str] = []
    for i, run in enumerate(runs):
        if progress:
            progress(f"{run.id}", i / max(1, len(runs)))
        if not any(a.name.lower().endswith(SPECTRUM_ENDINGS) for a in run.attachments):
            skipped.append(run.id)
            continue
        try:
            done.append(integrate_run(nb, run.id, regions, author=author))
        except TrapbookError as exc:
            refused.append({"run_id": run.id, **exc.to_dict()})
    if progress:
        progress("done", 1.0)
    return {"screen": screen.id, "regions": regions.to_dict(), "integrated": done, "refused": refused, "skipped": skipped}
