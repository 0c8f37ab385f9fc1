"""Bench checks: read a run (planned or done) and say what a careful chemist would.

A trapping run fails in a few well-known ways — the trap goes in after the fluoride, the
fluoride is short, the solvent boils off or freezes, the flask is sealed and heated past
the boiling point — and a finished run can carry numbers that cannot be true (a yield
over 100 %). These checks catch such things before the flask is set up and when the
result is written down. They are pure functions of the run (and, optionally, of the
strain engine's result dicts): no database, no UI, no printing, and a valid run never
makes them raise. Judgement thresholds are `CheckSettings`, which a lab can change.

One module per family: `addition_order` (trap before fluoride, the steps), `amounts`,
`water`, `weighed` (weighed against planned), `temperature` (heat and pressure, the vessel), `strain` (judged by
`trapbook.stability`), `outcome`, `spectrum` (what processing an attached FID found), `hrms` (HRMS and the product's formula) and `hazards`; `finding` holds the one registry of codes
(`CHECK_CODES`), `settings` the thresholds and their sources, `runner` the entry point.
Views do not call `run_checks` themselves: `trapbook.findings.findings_for` gives a run's
findings under its notebook's settings.
"""

from __future__ import annotations

from ..materials import DEFER
from .finding import CHECK_CODES, SEVERITIES, Finding
from .runner import run_checks
from .settings import SETTING_SOURCES, CheckSettings

__all__ = ["CHECK_CODES", "DEFER", "SEVERITIES", "SETTING_SOURCES", "CheckSettings", "Finding", "run_checks"]
