"""What came of a run: products, their yields and selectivity, and how the qNMR integrals were made.

Split from records.py (which re-exports every name here) because the outcome is the part
of a run that grows with each analysis a chemist adds; the run models stay readable beside it.
"""

from __future__ import annotations

import json
import math
import re
from typing import Any

from pydantic import Field, field_validator, model_validator

from .errors import ChemistryError
from .record_model import RecordModel as _Model
from .text_rules import Note, SingleLine
from .units import Amount, Mass, shown_input

#: Most products an outcome holds; far above any real run. Common practice, no source.
MAX_PRODUCTS = 50
#: Largest and smallest non-zero NMR integral accepted (any processing scale fits). Common practice, no source.
INTEGRAL_MAX = 1e15
INTEGRAL_MIN = 1e-12

_RATIO = re.compile(r"^\s*(\d+(?:\.\d+)?)\s*[:/]\s*(\d+(?:\.\d+)?)\s*$")


def parse_ratio(text: str) -> tuple[float, float]:
    """'5:1' or '95:5' -> (5.0, 1.0); ValueError with a plain message otherwise."""
    m = _RATIO.match(str(text))
    if not m:
        raise ValueError(f"ratio '{shown_input(str(text))}' is not written as major:minor (e.g. '5:1')")
    a, b = float(m.group(1)), float(m.group(2))
    if a == 0 and b == 0:
        raise ValueError(f"ratio '{shown_input(str(text))}' has both parts zero")
    if not (math.isfinite(a) and math.isfinite(b)) or max(a, b) > 1e9:
        raise ValueError(f"ratio '{shown_input(str(text))}' is too large to be a measured ratio; write it reduced, e.g. '20:1'")
    return a, b


class SpectrumRecord(_Model):
    """How Trapbook made a qNMR record's integrals from an attached FID (trapbook.spectra)."""

    attachment_sha256: str = Field(pattern=r"^[0-9a-f]{64}$", description="SHA-256 of the attached raw data")
    attachment_name: SingleLine | None = None
    standard_region: tuple[float, float] = Field(description="ppm range integrated for the internal standard")
    product_region: tuple[float, float] = Field(description="ppm range integrated for the product")
    processing: dict[str, Any] = Field(default_factory=dict, description="every processing parameter and what it found")

    @field_validator("standard_region", "product_region")
    @classmethod
    def _ppm_range(cls, v: tuple[float, float]) -> tuple[float, float]:
        if not all(math.isfinite(x) and -50 <= x <= 250 for x in v) or v[0] >= v[1]:
            raise ValueError(f"{v} is not a ppm range LOW..HIGH within -50..250 ppm")
        return v

    @field_validator("processing")
    @classmethod
    def _small(cls, v: dict[str, Any]) -> dict[str, Any]:
        if len(json.dumps(v, default=str)) > 20_000:  # a processing record is a few hundred characters
            raise ValueError("the processing record is far larger than one can be; it was not written by Trapbook")
        return v


class QNMR(_Model):
    """Integrals for an NMR yield against an internal standard."""

    standard: SingleLine | None = Field(
        default=None, description="name of the internal standard line (default: the run's only one)"
    )
    standard_amount: Amount | None = Field(default=None, description="amount of standard in the sample, if not from the line")
    standard_integral: float = Field(gt=0, le=INTEGRAL_MAX, allow_inf_nan=False)
    standard_protons: int = Field(gt=0, le=100)
    integral: float = Field(ge=0, le=INTEGRAL_MAX, allow_inf_nan=False)
    protons: int = Field(gt=0, le=100)
    spectrum: SpectrumRecord | None = Field(default=None, description="set when the integrals come from an attached FID")

    @field_validator("standard_integral")
    @classmethod
    def _not_vanishing(cls, v: float) -> float:
        """The standard's integral divides: a vanishing one would turn any product into an infinite yield."""
        if v != 0 and abs(v) < INTEGRAL_MIN:
            raise ValueError(
                f"integral {v:g} is too small to be a measured integral (below {INTEGRAL_MIN:g}); "
                "check the number, or rescale both integrals"
            )
        return v


class HRMS(_Model):
    """One high-resolution mass found for a product: which ion and its m/z as read."""

    ion: SingleLine = Field(description="ion measured: [M+H]+, [M+Na]+, [M+NH4]+, [M+K]+ or [M-H]-")
    #: Far above any small-molecule HRMS; refuses typos such as a missing decimal point. Common practice, no source.
    found_mz: float = Field(gt=0, le=100_000, allow_inf_nan=False, description="m/z found")

    @field_validator("ion", mode="before")
    @classmethod
    def _ion(cls, v: Any) -> Any:
        from .chemistry.ions import ion_name  # light: the list of ions, no RDKit

        try:
            return ion_name(v)
        except ChemistryError as exc:
            raise ValueError(f"{exc.message}; {exc.hint}") from None


class ProductResult(_Model):
    """What one product came to: isolated mass and/or an NMR yield, and its selectivity."""

    product: SingleLine = Field(min_length=1, description="name of the product line")
    isolated_mass: Mass | None = None
    qnmr: QNMR | None = None
    dr: SingleLine | None = Field(default=None, description="diastereomer ratio, major:minor, e.g. '5:1'")
    er: SingleLine | None = Field(default=None, description="enantiomer ratio, major:minor, e.g. '95:5'")
    ee: float | None = Field(default=None, ge=-100, le=100, allow_inf_nan=False, description="enantiomeric excess in percent")
    hrms: HRMS | None = Field(default=None, description="high-resolution mass found, e.g. {ion: '[M+Na]+', found_mz: 213.1248}")
    appearance: SingleLine | None = Field(default=None, description="what the product looks like, e.g. 'white solid'")
    rf: float | None = Field(default=None, ge=0, le=1, allow_inf_nan=False, description="TLC Rf in the chromatography eluent")
    nmr_text: Note | None = Field(
        default=None, description="NMR data as written for the paper, e.g. '1H NMR (400 MHz, CDCl3) δ ...'"
    )
    note: Note | None = None

    @field_validator("dr", "er", mode="before")
    @classmethod
    def _ratio(cls, v: Any) -> Any:
        if v is None or v == "":
            return None
        if isinstance(v, (int, float)) and not isinstance(v, bool):
            if not math.isfinite(v):
                raise ValueError(f"ratio {v!r} is not a finite number; write it as major:minor, e.g. '5:1'")
            v = f"{v}:1"
        parse_ratio(v)
        return str(v).replace(" ", "")

    @model_validator(mode="after")
    def _positive_mass(self) -> ProductResult:
        if self.isolated_mass is not None and self.isolated_mass.magnitude < 0:
            raise ValueError("isolated mass cannot be negative")
        return self


class Outcome(_Model):
    products: list[ProductResult] = Field(default_factory=list, max_length=MAX_PRODUCTS)
    recovered_precursor: Mass | None = Field(default=None, description="mass of precursor recovered")
    observations: Note | None = None
    workup: Note | None = Field(
        default=None, description="the work-up as done, e.g. 'filtered through a silica plug (Et2O), concentrated'"
    )
    eluent: SingleLine | None = Field(default=None, description="flash chromatography eluent, e.g. 'pentane/Et2O 20:1'")
