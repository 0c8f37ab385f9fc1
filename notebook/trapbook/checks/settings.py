"""The thresholds a lab may set for itself (`CheckSettings`), each default with its source.

Each threshold carries the range a lab may set it within, in its own definition below. A new
value outside it is refused; a value a notebook stored before the range was checked is still
read as it was (`stored_reading`), so no notebook becomes unreadable.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass
from typing import Any

from ..bench_words import OVERNIGHT_H, OVERNIGHT_RANGE_H, ROOM_TEMPERATURE_C, ROOM_TEMPERATURE_RANGE_C, BenchWords
from ..errors import TrapbookError
from ..stored_reading import input_rules_apply

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


def _setting(default: float, low: float, high: float, unit: str, meaning: str = "") -> Any:
    """A threshold with the range a lab may set it within (docs/sources.md, "Ranges of the check
    settings"): wide enough for any lab's own choice, narrow enough that a typo of a few orders
    of magnitude, which would silence a check or make it fire on every run, is caught."""
    return dataclasses.field(default=default, metadata={"range": (low, high), "unit": unit, "meaning": meaning})


def _finite(value: int | float) -> bool:
    try:
        return math.isfinite(value)
    except OverflowError:  # an integer too large for a float
        return False


@dataclass
class CheckSettings:
    """Thresholds a lab may set differently; stored as a notebook-level setting.

    Defaults and their sources are in `SETTING_SOURCES`; each field's range is in its definition.
    """

    trap_min_equiv: float = _setting(2.0, 1.0, 1000.0, "equiv")
    fluoride_min_per_silyl: float = _setting(1.0, 0.5, 10.0, "fluoride per silyl group")
    water_warn_per_precursor: float = _setting(1.0, 0.001, 100.0, "mmol water per mmol precursor")
    tbaf_solution_water_per_fluoride: float = _setting(2.5, 0.01, 20.0, "mol water per mol fluoride")
    solution_density_g_ml: float = _setting(0.90, 0.5, 3.5, "g/mL")
    concentration_low_M: float = _setting(0.01, 1e-5, 20.0, "M")
    concentration_high_M: float = _setting(1.0, 1e-5, 20.0, "M")
    bp_margin_c: float = _setting(0.0, -50.0, 50.0, "°C")
    mp_margin_c: float = _setting(0.0, -50.0, 50.0, "°C")
    yield_max_pct: float = _setting(100.0, 100.0, 150.0, "%")
    mass_balance_max_pct: float = _setting(105.0, 100.0, 200.0, "%")
    ee_tolerance_pct: float = _setting(2.0, 0.1, 50.0, "points")
    headspace_ml: float = _setting(10.0, 0.1, 10000.0, "mL")
    vessel_fill_max_pct: float = _setting(50.0, 1.0, 100.0, "%")
    yield_disagree_pct: float = _setting(15.0, 1.0, 100.0, "points")
    hrms_ppm_max: float = _setting(5.0, 0.1, 100.0, "ppm")
    weighed_diff_max_pct: float = _setting(10.0, 0.1, 100.0, "%")
    # the bench's words (bench_words), set like the thresholds and held to bench_words' own ranges
    room_temperature_c: float = _setting(
        ROOM_TEMPERATURE_C, *ROOM_TEMPERATURE_RANGE_C, "°C", "the room temperature 'rt' stands for"
    )
    overnight_h: float = _setting(OVERNIGHT_H, *OVERNIGHT_RANGE_H, "h", "the hours 'overnight' stands for")

    def __post_init__(self) -> None:
        for f in dataclasses.fields(self):
            v = getattr(self, f.name)
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not _finite(v):
                raise TrapbookError(
                    f"check setting '{f.name}' must be a number (got {v!r})", "give a plain number", field=f.name, got=v
                )
            setattr(self, f.name, float(v))
        if input_rules_apply():
            self.refuse_out_of_range(self.to_dict())
        # Always, stored values too: a threshold that must be positive was refused at zero or below from the start.
        bad = [f.name for f in dataclasses.fields(self) if f.metadata["range"][0] > 0 and getattr(self, f.name) <= 0]
        if bad:
            raise TrapbookError(f"check settings must be greater than zero: {', '.join(bad)}", "give positive numbers")
        BenchWords(self.room_temperature_c, self.overnight_h)  # refuses a room temperature or overnight out of range
        if self.concentration_low_M >= self.concentration_high_M:
            raise TrapbookError(
                "concentration_low_M must be below concentration_high_M",
                f"got {self.concentration_low_M:g} M and {self.concentration_high_M:g} M",
            )

    @classmethod
    def refuse_out_of_range(cls, values: dict[str, Any]) -> None:
        """Refuse the first of these name: value pairs that lies outside its setting's range
        (names that are not settings are left to `from_dict`, which says so)."""
        by_name = {f.name: f for f in dataclasses.fields(cls)}
        for name, value in values.items():
            f = by_name.get(name)
            if f is None:
                continue
            low, high = f.metadata["range"]
            unit = f.metadata["unit"]
            if not (isinstance(value, (int, float)) and not isinstance(value, bool) and low <= value <= high):
                shown = f"{value:g}" if isinstance(value, float) else repr(value)
                meaning = f" ({f.metadata['meaning']})" if f.metadata["meaning"] else ""
                raise TrapbookError(
                    f"check setting {name}{meaning} = {shown} is outside its range, {low:g} to {high:g} {unit}",
                    f"give {name} a value from {low:g} to {high:g} {unit} (its default is {f.default:g}), "
                    f"e.g. {name}={f.default:g}",
                    field=name,
                    got=value,
                    expected=(low, high),
                )

    @classmethod
    def allowed_range(cls, name: str) -> tuple[float, float, str]:
        """(low, high, unit) a lab may set this threshold within."""
        f = next((f for f in dataclasses.fields(cls) if f.name == name), None)
        if f is None:
            raise TrapbookError(f"unknown check setting: {name}", f"known settings are: {', '.join(SETTING_SOURCES)}")
        return (*f.metadata["range"], f.metadata["unit"])

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
