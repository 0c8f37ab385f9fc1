"""The one place that turns a strain result into a class: trapbook.stability.

Class limits and the facts behind them: docs/sources.md, "Strain".
"""

from __future__ import annotations

import math

import pytest
from hypothesis import given
from hypothesis import strategies as st

from trapbook import stability
from trapbook.stability import class_limits, judge

KINDS = ["bridgehead alkene", "ring alkene", "cycloalkyne", "cyclic allene", "aryne"]


def accurate(kind: str, value: float, key: str | None = None) -> dict:
    return {"tier": "accurate", "kind": kind, key or stability.value_key(kind): value}


@pytest.mark.parametrize(
    "value,expected",
    [
        # Source: Maier & Schleyer, JACS 1981, 103, 1891 (docs/sources.md, "Strain"):
        # <= 17 isolable, 17-21 observable, > 21 unstable, < 0 hyperstable.
        (-3.0, "hyperstable"),
        (0.0, "isolable"),
        (12.7, "isolable"),
        (17.0, "isolable"),
        (17.5, "observable"),
        (21.0, "observable"),
        (21.1, "unstable"),
        (57.0, "unstable"),
    ],
)
def test_bridgehead_classes_are_maier_schleyer(value, expected):
    assert judge(accurate("bridgehead alkene", value)).stability == expected


def test_a_negative_ordinary_ring_alkene_is_not_hyperstable():
    # Source: docs/sources.md, "Strain" — hyperstable belongs to bridgehead alkenes only.
    j = judge(accurate("ring alkene", -5.2))
    assert j.stability == "isolable"
    assert "hyperstable" not in [name for _, _, name in class_limits("ring alkene")]


def test_fast_tier_is_never_judged():
    # Source: docs/sources.md, "Strain" — MMFF94 gives 26.7 for bicyclo[3.3.1]non-1-ene
    # (isolable by experiment); a prescreen number must not be acted on.
    assert judge({"tier": "fast", "kind": "bridgehead alkene", "olefin_strain_kcal_mol": 26.7}) is None
    assert judge({"kind": "bridgehead alkene", "olefin_strain_kcal_mol": 12.7}) is None  # no tier named


@pytest.mark.parametrize(
    "bad",
    [
        None,
        {},
        "text",
        {"tier": "accurate", "kind": "none"},
        accurate("bridgehead alkene", float("nan")),
        accurate("bridgehead alkene", float("inf")),
        {"tier": "accurate", "kind": "cycloalkyne", "ring_strain_kcal_mol": None, "excess_strain_kcal_mol": 22.6},
        {"tier": "accurate", "kind": "bridgehead alkene", "olefin_strain_kcal_mol": True},
    ],
)
def test_failed_or_missing_results_get_no_judgement(bad):
    assert judge(bad) is None


@given(st.floats(allow_nan=False, allow_infinity=False, min_value=-1e6, max_value=1e6))
def test_an_aryne_always_needs_a_trap(value):
    # Source: docs/sources.md, "Strain" — no aryne is isolable under ordinary conditions;
    # even a wrong (negative) number must never say otherwise.
    j = judge(accurate("aryne", value))
    assert j.needs_trap is True and j.stability == "trapping only"


@given(st.sampled_from(KINDS), st.floats(allow_nan=False, allow_infinity=False, min_value=-1e4, max_value=1e4))
def test_no_trap_needed_only_with_a_source(kind, value):
    # common practice, no source: the safety rule — "survives without a trap" only when the
    # kind's rule names a literature source and the class is an isolable one.
    j = judge(accurate(kind, value))
    assert j is not None and j.kind == kind and math.isclose(j.value_kcal, value)
    if not j.needs_trap:
        assert j.stability in ("isolable", "hyperstable")
        assert j.source and "docs/sources.md" in j.source
    assert j.words and f"{value:.1f}" in j.words


@pytest.mark.parametrize(
    "value,expected",
    [
        # Source: docs/sources.md, "Strain" — cyclooctyne (ring strain about 18) isolable,
        # cycloheptyne cold and dilute only, cyclohexyne trapping only.
        (18.0, "isolable"),
        (29.8, "cold and dilute only"),
        (52.0, "trapping only"),
    ],
)
def test_cycloalkyne_classes_follow_the_known_rings(value, expected):
    assert judge(accurate("cycloalkyne", value)).stability == expected


@pytest.mark.parametrize(
    "value,needs_trap",
    [
        # Source: docs/sources.md, "Strain" — 1,2-cyclohexadiene (about 30) only by trapping.
        (30.0, True),
        (31.4, True),
    ],
)
def test_cyclohexadiene_needs_a_trap(value, needs_trap):
    j = judge(accurate("cyclic allene", value))
    assert j.needs_trap is needs_trap and j.stability == "trapping only"


@pytest.mark.parametrize("kind", KINDS)
def test_class_limits_cover_the_whole_line_without_gaps(kind):
    bands = class_limits(kind)
    assert bands[0][0] is None and bands[-1][1] is None
    for (_, high, _), (low, _, _) in zip(bands, bands[1:]):
        assert high == low


def test_class_limits_unknown_kind_is_empty():
    assert class_limits("none") == []


def test_an_unconverged_result_never_clears_a_run_of_its_trap():
    # common practice, no source: an unfinished geometry optimisation may hide strain.
    j = judge({"tier": "accurate", "kind": "bridgehead alkene", "olefin_strain_kcal_mol": 12.7, "converged": False})
    assert j.stability == "isolable" and j.needs_trap is True and "converged" in j.words


@pytest.mark.parametrize("kind,value", [("bridgehead alkene", 16.0), ("cycloalkyne", 23.9), ("cyclic allene", 8.3)])
def test_a_number_just_below_a_trap_class_is_judged_as_needing_a_trap(kind, value):
    # common practice, no source: GFN2-xTB strain carries errors of a few kcal/mol, so a value
    # within BORDER_KCAL of a limit to a trap-needing class keeps its class name but needs a trap.
    j = judge(accurate(kind, value))
    assert j.stability == "isolable" and j.needs_trap is True and "uncertainty" in j.words
    clear = judge(accurate(kind, value - stability.BORDER_KCAL - 0.1))
    assert clear.needs_trap is False
