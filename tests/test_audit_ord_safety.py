"""The ORD export's safety notes give each caution once and close with the reminder to follow
the SDS once, not once per caution.

Source: the wording is the project's own (notebook/trapbook/data/hazards.json and
`materials.DEFER`: common practice, no source); the ORD field is `Reaction.notes.safety_notes`
(ORD schema, docs/sources.md "ORD exchange").
"""

from __future__ import annotations

from ord_schema import validations

from trapbook import materials
from trapbook.exchange import ord as ordx
from trapbook.records import load_run


def _sealed_with_fluoride_and_furan(minimal_run: dict) -> dict:
    """Fluoride, furan (peroxide former, flammable, volatile) and a sealed step: three cautions."""
    minimal_run["steps"][2]["sealed"] = True
    minimal_run["steps"][2]["temperature"] = "23 °C"
    return minimal_run


def test_the_sds_sentence_is_said_once(minimal_run):
    run = load_run(dict(_sealed_with_fluoride_and_furan(minimal_run), id="TB-0042"))
    rxn, _ = ordx.run_to_reaction(run, email="ada@example.org")
    notes = rxn.notes.safety_notes
    assert notes.count("Follow the SDS") == 1 and notes.endswith(materials.DEFER)
    table = materials.hazards()
    for key in ("fluoride", "sealed_pressure", "peroxide_former"):  # several cautions, each present once
        first_sentence = table[key].caution.split(". ")[0]
        assert notes.count(first_sentence) == 1, key
    assert validations.validate_message(rxn, raise_on_error=False).errors == []


def test_cautions_once_keeps_every_sentence_and_says_nothing_for_nothing():
    a = materials.caution_text(("fluoride",))
    b = materials.caution_text(("fluoride", "sealed_pressure"))
    joined = materials.cautions_once([a, b, None])
    assert joined.count(materials.DEFER) == 1
    assert joined.count(materials.hazards()["fluoride"].caution) == 1
    assert materials.hazards()["sealed_pressure"].caution in joined
    assert materials.cautions_once([]) == "" and materials.cautions_once([None, ""]) == ""
