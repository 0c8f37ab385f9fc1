"""The thresholds a lab may set for itself (`CheckSettings`), each default with its source."""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import Any

from ..bench_words import OVERNIGHT_H, ROOM_TEMPERATURE_C, BenchWords
from ..errors import TrapbookError

#: Where each default threshold comes from; shown in docs and kept next to the values.
SETTING_SOURCES: dict[str, str] = {
    "trap_min_equiv": "common practice, no source",
    "fluoride_min_per_silyl": "stoichiometry: one fluoride is consumed per Si-C bond cleaved",
    "water_warn_per_precursor": "common practice, no source",
    "tbaf_solution_water_per_fluoride": "docs/sources.md: commercial 1.0 M TBAF in THF, about 5 wt% water (supplier specification, from memory)",
    "solution_density_g_ml": "common practice, no source (about the density of a 1 M salt solution in THF)",
    "concentration_low_M": "common practice, no source",
    "concentration_high_M": "common practice, no source",
    "bp_margin_c": "common practice, no source",
    "mp_margin_c": "common practice, no source",
    "yield_max_pct": "definition of yield",
    "mass_balance_max_pct": "common practice, no source (about the error of weighing and NMR integration)",
    "ee_tolerance_pct": "common practice, no source (about the error of a chiral HPLC integration)",
    "headspace_ml": "common practice, no source (a typical pressure tube headspace, used for the gas estimate when the run gives no vessel)",
    "vessel_fill_max_pct": "common practice, no source (fill a sealed vessel to no more than about half its volume)",
    "yield_disagree_pct": "common practice, no source (isolated and NMR yields of one product usually agree within this many points)",
    "hrms_ppm_max": "common practice, no source (most journals accept an HRMS formula match within 5 ppm; docs/sources.md, Exact masses)",
    "weighed_diff_max_pct": "common practice, no source (a weighed amount more than this far from the plan is worth a second look)",
    "room_temperature_c": "common practice, no source (what a run file's 'rt' stands for, 15-30 °C; docs/sources.md, Bench words)",
    "overnight_h": "common practice, no source (what a run file's 'overnight' or 'o/n' stands for, 6-24 h; docs/sources.md, Bench words)",
}


@dataclass
class CheckSettings:
    """Thresholds a lab may set differently; stored as a notebook-level setting.

    Defaults and their sources are in `SETTING_SOURCES`.
    """

    trap_min_equiv: float = 2.0
    fluoride_min_per_silyl: float = 1.0
    water_warn_per_precursor: float = 1.0
    tbaf_solution_water_per_fluoride: float = 2.5
    solution_density_g_ml: float = 0.90
    concentration_low_M: float = 0.01
    concentration_high_M: float = 1.0
    bp_margin_c: float = 0.0
    mp_margin_c: float = 0.0
    yield_max_pct: float = 100.0
    mass_balance_max_pct: float = 105.0
    ee_tolerance_pct: float = 2.0
    headspace_ml: float = 10.0
    vessel_fill_max_pct: float = 50.0
    yield_disagree_pct: float = 15.0
    hrms_ppm_max: float = 5.0
    weighed_diff_max_pct: float = 10.0
    room_temperature_c: float = ROOM_TEMPERATURE_C  # the bench's words (bench_words), set like the thresholds
    overnight_h: float = OVERNIGHT_H

    def __post_init__(self) -> None:
        for f in dataclasses.fields(self):
            v = getattr(self, f.name)
            if isinstance(v, bool) or not isinstance(v, (int, float)) or v != v or v in (float("inf"), float("-inf")):
                raise TrapbookError(f"check setting '{f.name}' must be a number (got {v!r})", "give a plain number")
            setattr(self, f.name, float(v))
        positive = [f.name for f in dataclasses.fields(self) if not f.name.endswith("_margin_c")]
        bad = [n for n in positive if getattr(self, n) <= 0]
        if bad:
            raise TrapbookError(f"check settings must be greater than zero: {', '.join(bad)}", "give positive numbers")
        BenchWords(self.room_temperature_c, self.overnight_h)  # refuses a room temperature or overnight out of range
        if self.concentration_low_M >= self.concentration_high_M:
            raise TrapbookError(
                "concentration_low_M must be below concentration_high_M",
                f"got {self.concentration_low_M:g} M and {self.concentration_high_M:g} M",
            )

    def to_dict(self) -> dict:
        return dataclasses.asdict(self)

    @classmethod
    def from_dict(cls, data: Any) -> CheckSettings:
        """Settings from a stored dict; missing keys keep their defaults, unknown keys are an error."""
        if data is None:
            return cls()
        if not isinstance(data, dict):
            raise TrapbookError("check settings must be a JSON object of name: number", f"got {type(data).__name__}")
        known = {f.name for f in dataclasses.fields(cls)}
        unknown = sorted(set(data) - known)
        if unknown:
            raise TrapbookError(
                f"unknown check setting(s): {', '.join(map(str, unknown))}", f"known settings are: {', '.join(sorted(known))}"
            )
        return cls(**data)
