"""Runs linked to the strain of their intermediate: derived when not written, cached, and
their stored checks re-judged when a strain result arrives."""

import pytest

from trapbook.records import load_run
from trapbook.strain_link import (
    get_strain,
    intermediate_of,
    intermediate_of_run,
    precursor_release,
    run_temperature_c,
    strain_for_run,
)

NORBORNENE_1 = "C12=CCC(CC1)C2"  # bicyclo[2.2.1]hept-1-ene


def _untrapped_run(**extra):
    return load_run(
        {
            "title": "bridgehead alkene without a trap",
            "intermediate": NORBORNENE_1,
            "lines": [
                {"role": "precursor", "name": "P", "smiles": "C[Si](C)(C)C12CCC(C1)CC2OS(=O)(=O)C(F)(F)F", "amount": "0.10 mmol"},
                {"role": "fluoride source", "name": "CsF", "smiles": "[Cs+].[F-]", "equiv": 3},
                {"role": "solvent", "name": "MeCN", "smiles": "CC#N", "volume": "1.0 mL"},
            ],
            "steps": [{"add": ["P", "CsF", "MeCN"], "temperature": "23 °C", "hold": "1 h"}],
            **extra,
        }
    )


def test_new_strain_result_rejudges_stored_runs(notebook):
    res = notebook.add_run(_untrapped_run())
    before = notebook.list_runs()[0]["worst"] or ""
    assert "strain-untrapped" not in before  # nothing is known of its strain yet
    result = get_strain(notebook, NORBORNENE_1, tier="accurate")
    # Source: docs/sources.md "Strain" (literature) — bicyclo[2.2.1]hept-1-ene is known only by trapping: "unstable"
    assert result["stability_class"] == "unstable"
    row = next(r for r in notebook.list_runs() if r["id"] == res.run_id)
    assert row["worst"] == "stop:strain-untrapped"
    assert strain_for_run(notebook, notebook.get_run(res.run_id))["stability_class"] == "unstable"


def test_second_request_is_served_from_the_cache(notebook):
    first = get_strain(notebook, NORBORNENE_1, tier="fast")
    again = get_strain(notebook, NORBORNENE_1, tier="fast")
    assert first["cached"] is False and again["cached"] is True
    assert again["olefin_strain_kcal_mol"] == pytest.approx(first["olefin_strain_kcal_mol"])


def test_intermediate_is_derived_from_the_precursor_when_not_written(notebook):
    run = _untrapped_run().model_copy(update={"intermediate": None})
    derived = intermediate_of(run)
    from trapbook.chemistry.molecules import canonical

    assert canonical(derived) == canonical(NORBORNENE_1)
    res = notebook.add_run(run)
    row = next(r for r in notebook.list_runs() if r["id"] == res.run_id)
    assert row["intermediate"] and canonical(row["intermediate"]) == canonical(NORBORNENE_1)


def test_checks_never_see_a_fast_tier_result(notebook):
    # Source: docs/sources.md, "Strain" — the fast tier is a prescreen that is never classed.
    res = notebook.add_run(_untrapped_run())
    fast = get_strain(notebook, NORBORNENE_1, tier="fast")
    assert fast["olefin_strain_kcal_mol"] is not None
    assert strain_for_run(notebook, notebook.get_run(res.run_id)) is None
    row = next(r for r in notebook.list_runs() if r["id"] == res.run_id)
    assert "strain-untrapped" not in (row["worst"] or "")


def test_intermediate_of_run_says_how_it_was_found():
    recorded = intermediate_of_run(_untrapped_run())
    assert recorded == (NORBORNENE_1, "as recorded on the run")
    smiles, how = intermediate_of_run(_untrapped_run().model_copy(update={"intermediate": None}))
    assert "derived from the precursor P" in how and "fluoride" in how
    bare = load_run({"title": "no structure", "lines": [{"role": "solvent", "name": "MeCN", "volume": "1 mL"}]})
    assert intermediate_of_run(bare) is None


def test_precursor_release_names_the_aryne():
    # Source: docs/sources.md, "Strain" — a 2-(trimethylsilyl)aryl triflate releases the aryne.
    from trapbook.chemistry.molecules import canonical

    rel = precursor_release("C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F")
    assert canonical(rel["intermediate"]) == canonical("C1=CC=CC#C1")
    assert rel["command"].startswith("trapbook strain ")
    assert precursor_release("C1#CCCCCCC1") is None  # an intermediate is not a precursor


def test_run_temperature_is_the_fluoride_step():
    run = load_run(
        {
            "title": "cold release",
            "lines": [
                {"role": "precursor", "name": "P", "smiles": "C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F", "amount": "0.10 mmol"},
                {"role": "fluoride source", "name": "CsF", "smiles": "[Cs+].[F-]", "equiv": 3},
            ],
            "steps": [{"add": ["P"], "temperature": "23 °C"}, {"add": ["CsF"], "temperature": "-78 °C"}],
        }
    )
    assert run_temperature_c(run) == pytest.approx(-78)
