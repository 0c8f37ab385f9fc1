"""From a strain number to what the chemist should do: the one place that classes a result.

Each kind of strained intermediate has its own quantity and its own classes, because the
numbers mean different things: a bridgehead alkene's olefin strain (Maier–Schleyer), a
cycloalkyne's or cyclic allene's ring strain (against strain-free acyclic groups), an
aryne's strain of the formal triple bond. The class limits come from what is known at the
bench about real members of each kind (docs/sources.md, section "Strain").

Safety rule: a result is only ever judged "survives without a trap" when its kind and its
number put it in a class whose source says so, and not within BORDER_KCAL of a limit to a
class that needs one. Fast-tier (force-field) numbers are a
prescreen and are never judged; neither is a failed or unfinished result.

This module is light on purpose (no RDKit): checks and screens call it on every save.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

BRIDGEHEAD = "bridgehead alkene"
RING_ALKENE = "ring alkene"
ALLENE = "cyclic allene"
ALKYNE = "cycloalkyne"
ARYNE = "aryne"

#: tier whose numbers may be acted on; the other tier is a labelled prescreen
ACTIONABLE_TIER = "accurate"
#: a number this close below a limit to a class that needs a trap is judged as needing one
#: (GFN2-xTB strain energies carry errors of a few kcal/mol; common practice, no source)
BORDER_KCAL = 2.0


@dataclass(frozen=True)
class ClassBand:
    """One class of a kind, kcal/mol: above `low` and up to `high` (below it when not
    `high_inclusive`), so the published limits keep their own "up to 17" wording."""

    low: float | None
    high: float | None
    name: str
    needs_trap: bool
    words: str
    high_inclusive: bool = True

    def below_top(self, value: float) -> bool:
        """Bands are ordered upward: the first whose top the value does not pass holds it."""
        return self.high is None or value < self.high or (value == self.high and self.high_inclusive)


@dataclass(frozen=True)
class KindRule:
    quantity: str
    result_key: str
    bands: tuple[ClassBand, ...]
    source: str


_MS = "Maier & Schleyer, J. Am. Chem. Soc. 1981, 103, 1891 (olefin-strain classes); docs/sources.md, Strain"

RULES: dict[str, KindRule] = {
    BRIDGEHEAD: KindRule(
        "olefin strain",
        "olefin_strain_kcal_mol",
        (
            ClassBand(
                None,
                0.0,
                "hyperstable",
                False,
                "the bridgehead alkene is more stable than its saturated parent; it survives without a trap",
                high_inclusive=False,
            ),
            ClassBand(
                0.0,
                17.0,
                "isolable",
                False,
                "bridgehead alkenes this strained are isolable at room temperature (e.g. bicyclo[3.3.1]non-1-ene)",
            ),
            ClassBand(
                17.0, 21.0, "observable", True, "observable at low temperature but not isolable; trap it in a preparative run"
            ),
            ClassBand(
                21.0, None, "unstable", True, "known only by trapping: have the trap in the flask before the fluoride source"
            ),
        ),
        _MS,
    ),
    RING_ALKENE: KindRule(
        "olefin strain",
        "olefin_strain_kcal_mol",
        (
            ClassBand(None, 17.0, "isolable", False, "a ring alkene this little strained is isolable (trans-cyclooctene is)"),
            ClassBand(
                17.0, 21.0, "observable", True, "observable at low temperature but not isolable; trap it in a preparative run"
            ),
            ClassBand(
                21.0, None, "unstable", True, "known only by trapping: have the trap in the flask before the fluoride source"
            ),
        ),
        _MS + "; trans-cyclooctene isolable (Cope et al., 1950s, from memory)",
    ),
    ALKYNE: KindRule(
        "ring strain",
        "ring_strain_kcal_mol",
        (
            ClassBand(
                None,
                24.0,
                "isolable",
                False,
                "cycloalkynes this strained are isolable at room temperature (cyclooctyne, ring strain about 18)",
            ),
            ClassBand(
                24.0,
                41.0,
                "cold and dilute only",
                True,
                "survives only dilute and cold, like cycloheptyne; trap it in a preparative run",
            ),
            ClassBand(
                41.0,
                None,
                "trapping only",
                True,
                "known only by trapping, like cyclohexyne: have the trap in the flask before the fluoride source",
            ),
        ),
        "Harris & Alabugin, Mendeleev Commun. 2019, 29, 237 (cyclooctyne ring strain about 18, isolable); "
        "cycloheptyne cold/dilute only, cyclohexyne trapping only (facts of the trade, from memory); limits set "
        "midway between the engine's values for those rings; docs/sources.md, Strain",
    ),
    ALLENE: KindRule(
        "ring strain",
        "ring_strain_kcal_mol",
        (
            ClassBand(None, 9.3, "isolable", False, "cyclic allenes this little strained are isolable, like 1,2-cyclononadiene"),
            ClassBand(
                9.3,
                14.5,
                "observable",
                True,
                "observable in cold solution but dimerises on warming, like 1,2-cyclooctadiene; trap it",
            ),
            ClassBand(
                14.5,
                None,
                "trapping only",
                True,
                "known only by trapping, like 1,2-cyclohexadiene (strain about 30): have the trap in the flask "
                "before the fluoride source",
            ),
        ),
        "1,2-cyclohexadiene strain about 30, trapping only (fact of the trade); 1,2-cyclononadiene isolable, "
        "1,2-cyclooctadiene dimerising on warming (from memory); limits set midway between the engine's values "
        "for those rings; docs/sources.md, Strain",
    ),
    ARYNE: KindRule(
        "aryne strain (formal triple bond, against an open-chain alkyne)",
        "aryne_strain_kcal_mol",
        (
            ClassBand(
                None,
                None,
                "trapping only",
                True,
                "arynes are never isolable under ordinary conditions: have the trap in the flask before the fluoride source",
            ),
        ),
        "arynes and hetarynes are generated in situ and trapped, none isolable (fact of the trade); docs/sources.md, Strain",
    ),
}


@dataclass(frozen=True)
class Judgement:
    kind: str
    quantity: str
    value_kcal: float
    stability: str
    needs_trap: bool
    words: str
    source: str


def _number(value) -> float | None:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return None
    value = float(value)
    return value if math.isfinite(value) else None


def judge(result: dict | None) -> Judgement | None:
    """The class of an accurate-tier strain result, in words a chemist can act on.

    None when there is no result, it failed or found no strained unit, it is a fast-tier
    prescreen, or its kind is not one this module has classes for: in each case nothing
    may be concluded, and callers must not treat the intermediate as safe.
    """
    if not isinstance(result, dict) or result.get("tier") != ACTIONABLE_TIER:
        return None
    rule = RULES.get(result.get("kind"))
    if rule is None:
        return None
    value = _number(result.get(rule.result_key))
    if value is None:
        return None
    band = next(b for b in rule.bands if b.below_top(value))
    words = f"{rule.quantity} {value:.1f} kcal/mol: {band.name}; {band.words}."
    needs_trap = band.needs_trap
    above = _next_band(rule, band)
    if not needs_trap and above is not None and above.needs_trap and above.low - value < BORDER_KCAL:
        needs_trap = True
        words += (
            f" It lies within {BORDER_KCAL:g} kcal/mol of the {above.name} limit ({above.low:g}), inside the "
            "method's uncertainty: treat it as needing a trap."
        )
    if result.get("converged") is False and not needs_trap:
        # an unconverged geometry may hide strain: never let it clear a run of its trap
        needs_trap = True
        words += " Not every geometry converged, so treat it as needing a trap until recomputed."
    return Judgement(result["kind"], rule.quantity, value, band.name, needs_trap, words, rule.source)


def _next_band(rule: KindRule, band: ClassBand) -> ClassBand | None:
    i = rule.bands.index(band)
    return rule.bands[i + 1] if i + 1 < len(rule.bands) else None


def class_limits(kind: str) -> list[tuple[float | None, float | None, str]]:
    """(low, high, class) bands of a kind, for plots and reports that draw the classes."""
    rule = RULES.get(kind)
    if rule is None:
        return []
    return [(b.low, b.high, b.name) for b in rule.bands]


def quantity_of(kind: str) -> str | None:
    """The words for the number a kind is classed by, e.g. 'ring strain'."""
    rule = RULES.get(kind)
    return rule.quantity if rule else None


def value_key(kind: str) -> str | None:
    """Which field of a strain result holds the number a kind is classed by."""
    rule = RULES.get(kind)
    return rule.result_key if rule else None


def class_of(kind: str, value_kcal: float | None) -> str | None:
    """The class name alone, for a number already known to be accurate-tier."""
    rule = RULES.get(kind)
    value = _number(value_kcal)
    if rule is None or value is None:
        return None
    return next(b.name for b in rule.bands if b.below_top(value))


def reading(result: dict | None) -> dict:
    """What a strain result says, in the fields every view shows: the kind, its own quantity and
    number, the tier, and the class from `judge` (None for a prescreen or an unclassed result).

    Views read a result through here so an aryne's strain is never shown as an olefin strain,
    and no view picks its own key or class.
    """
    result = result if isinstance(result, dict) else {}
    kind = result.get("kind") if isinstance(result.get("kind"), str) else None
    key = value_key(kind)
    verdict = judge(result)
    return {
        "kind": kind,
        "strain_quantity": quantity_of(kind),
        "strain_kcal_mol": _number(result.get(key)) if key else None,
        "tier": result.get("tier"),
        "prescreen": result.get("tier") not in (None, ACTIONABLE_TIER),
        "stability_class": verdict.stability if verdict else None,
        "needs_trap": verdict.needs_trap if verdict else None,
        "judgement_words": verdict.words if verdict else None,
    }
