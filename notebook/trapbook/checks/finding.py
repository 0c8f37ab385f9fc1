"""What a check says: a `Finding`, its severities, and the one registry of codes.

Every code a check may give is listed in `CHECK_CODES` with what it means; a finding with a
code not listed there is refused, so the registry, the docs and the checks cannot drift apart.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from ..errors import TrapbookError

SEVERITIES = ("stop", "warn", "note")
RANK = {s: i for i, s in enumerate(SEVERITIES)}


CHECK_CODES: dict[str, str] = {
    "amounts-unknown": "warn: the reagent table cannot be worked out, so amount checks were skipped",
    "trap-late": "stop: the trap was added after the fluoride source met the precursor",
    "trap-order-unknown": "warn: the steps do not say when the trap went in relative to the fluoride source",
    "no-trap": "warn: the run has no trap line",
    "strain-untrapped": "stop: the accurate-tier strain says the intermediate needs a trap, and none is in the flask in time",
    "strain-isolable": "note: the accurate-tier strain says no trap is needed (stability.judge), so a run without one may be tried",
    "precursor-misaligned": "warn: the precursor's Si-C and C-X bonds are poorly aligned for elimination",
    "trap-low": "stop below 1 equiv of trap, warn below the working minimum",
    "trap-amount-unknown": "note: the amount of trap cannot be worked out",
    "no-fluoride": "warn: a silyl precursor but no fluoride source line",
    "fluoride-low": "warn: less than one fluoride per silyl group to remove",
    "fluoride-uncounted": "note: fluoride per silyl group cannot be counted (a SMILES is missing)",
    "water-brought": "note, or warn above the threshold: water brought in with the reagents, per mmol precursor",
    "above-bp-open": "warn: a step heats an open flask above a liquid's boiling point",
    "above-bp-sealed": "warn with pressure caution: a sealed vessel heated above a liquid's boiling point",
    "sealed-gas": "warn with pressure caution: desilylation releases a gas in a sealed vessel",
    "vessel-overfilled": "stop if the liquids do not fit the vessel, warn above the fill limit of a sealed vessel",
    "below-mp": "warn: a step is colder than the solvent's melting point",
    "concentration-unusual": "warn: the concentration of the limiting line is far from the usual range",
    "step-unknown-line": "warn: a step adds a line the run does not have",
    "line-never-added": "warn: a line is never added in any step",
    "step-no-temperature": "note: steps without a temperature",
    "step-no-time": "note: steps without a hold or addition time",
    "yield-over-100": "warn: a yield above 100 %",
    "yield-disagree": "warn: the isolated and NMR yields of one product differ by more than the lab's limit",
    "mass-balance-high": "warn: products plus recovered precursor above the mass-balance limit",
    "qnmr-no-standard": "warn: qNMR integrals without an internal standard to refer them to",
    "yield-unknown": "note: a product's yield cannot be worked out",
    "ee-out-of-range": "warn: an ee outside 0-100 %",
    "ee-er-mismatch": "warn: the recorded ee and the ee from the er disagree",
    "ratio-order": "note: a dr or er written minor first",
    "fluoride-acid": "warn with caution: fluoride and an acid in the same run give hydrogen fluoride",
    "material-caution": "note with caution: the usual hazards of a material used, once per material",
    "hrms-off": "warn: the HRMS m/z found differs from the calculated one by more than the lab's ppm limit",
    "hrms-uncalculable": "note: an HRMS value is recorded for a product whose line has no SMILES",
    "product-formula-unexpected": "warn: a product's formula is neither intermediate + trap nor a listed by-product",
    "check-incomplete": "note: one check could not finish on this run's data",
    "weighed-off-plan": "warn: what was weighed or measured differs from the plan by more than the lab's limit",
    "nmr-region-empty": "warn: an integral region of a spectrum Trapbook processed holds no peak above the noise",
    "nmr-regions-overlap": "warn: the standard's and the product's integral regions overlap",
    "nmr-standard-distorted": "warn: the internal standard's signal is lopsided or dips below the baseline (phase or baseline trouble)",
    "nmr-product-zero": "note: the product region integrated to within noise of zero and was stored as 0",
    "nmr-processing-note": "note: something the spectrum processing had to say (e.g. no ppm reference in the file)",
}


@dataclass
class Finding:
    """One thing the chemist should know about a run, in words they can act on."""

    code: str
    severity: str
    message: str
    lines: list[str] = field(default_factory=list)
    steps: list[int] = field(default_factory=list)
    caution: str | None = None

    def __post_init__(self) -> None:
        if self.severity not in RANK:
            raise TrapbookError(f"finding severity '{self.severity}' is not one of {', '.join(SEVERITIES)}")
        if self.code not in CHECK_CODES:
            raise TrapbookError(f"finding code '{self.code}' is not a known check code")

    def to_dict(self) -> dict:
        return {
            "code": self.code,
            "severity": self.severity,
            "message": self.message,
            "lines": list(self.lines),
            "steps": list(self.steps),
            "caution": self.caution,
        }
