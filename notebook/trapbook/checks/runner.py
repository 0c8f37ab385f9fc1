"""Run every family's checks on one run, most severe first."""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from .. import amounts
from ..errors import ChemistryError, TrapbookError
from ..records import Run, load_run
from .addition_order import check_steps, check_trap_order
from .amounts import check_amounts_known, check_concentration, check_fluoride, check_trap_amount
from .context import Context, timeline
from .finding import RANK, Finding
from .hazards import check_hazards
from .hrms import check_hrms, check_product_formula
from .outcome import check_outcome
from .settings import CheckSettings
from .spectrum import check_spectrum
from .strain import check_alignment, check_strain
from .temperature import check_sealed_gas, check_temperatures, check_vessel_fill
from .water import check_water
from .weighed import check_weighed

_CHECKS: tuple[Callable[[Context], list[Finding]], ...] = (
    check_trap_order,
    check_strain,
    check_amounts_known,
    check_weighed,
    check_trap_amount,
    check_fluoride,
    check_temperatures,
    check_sealed_gas,
    check_vessel_fill,
    check_alignment,
    check_water,
    check_concentration,
    check_steps,
    check_outcome,
    check_spectrum,
    check_hrms,
    check_product_formula,
    check_hazards,
)


def _as_dict(value: Any, what: str) -> dict | None:
    if value is None:
        return None
    if not isinstance(value, dict):
        raise TrapbookError(
            f"{what} must be the dict the strain engine returns (got {type(value).__name__})",
            "pass the engine's result unchanged, or None",
        )
    return value


def _context(run: Run, strain, alignment, settings) -> Context:
    ctx = Context(run, settings, strain, alignment, timeline(run))
    try:
        ctx.table = amounts.compute(run)
    except TrapbookError as exc:
        ctx.table_error = exc
    return ctx


def run_checks(
    run: Run | dict, *, strain: dict | None = None, alignment: dict | None = None, settings: CheckSettings | None = None
) -> list[Finding]:
    """All findings for a run, most severe first, in a fixed order within each severity."""
    if isinstance(run, dict):
        run = load_run(run)
    if not isinstance(run, Run):
        raise TrapbookError(f"run_checks needs a run (got {type(run).__name__})", "load the run file first")
    if settings is not None and not isinstance(settings, CheckSettings):
        raise TrapbookError("settings must be CheckSettings", "build them with CheckSettings.from_dict(...)")
    ctx = _context(run, _as_dict(strain, "strain"), _as_dict(alignment, "alignment"), settings or CheckSettings())
    findings: list[Finding] = []
    for check in _CHECKS:
        try:
            findings += check(ctx)
        except (TrapbookError, ChemistryError) as exc:
            what = check.__name__.removeprefix("check_").replace("_", " ")
            findings.append(Finding("check-incomplete", "note", f"The {what} check could not finish: {exc.message}."))
    return sorted(findings, key=lambda f: RANK[f.severity])
