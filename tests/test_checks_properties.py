"""Over many valid runs the checks never raise, keep their order, and report only known codes."""

from __future__ import annotations

import copy

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from test_checks import MIN
from trapbook.checks import CHECK_CODES, run_checks
from trapbook.records import load_run

LINE_NAMES = [ln["name"] for ln in MIN["lines"]]
SOLVENTS = ["THF", "toluene", "DMSO", "1,4-dioxane", "MeCN", "DCM", "Et2O", "benzene"]
STRAIN = st.none() | st.fixed_dictionaries(
    {
        "stability_class": st.sampled_from(["hyperstable", "isolable", "observable", "unstable", "odd"]),
        "olefin_strain_kcal_mol": st.floats(-5, 60) | st.none(),
    }
)
ALIGN = st.none() | st.fixed_dictionaries(
    {"verdict": st.sampled_from(["well aligned", "poorly aligned", "unclear"]), "dihedral_deg": st.floats(0, 180)}
)


@st.composite
def runs(draw):
    d = copy.deepcopy(MIN)
    d["lines"][3]["name"] = draw(st.sampled_from(SOLVENTS))
    names = [ln["name"] for ln in d["lines"]]
    d["lines"][1]["equiv"] = draw(st.floats(0.05, 10))
    d["lines"][2]["equiv"] = draw(st.floats(0.05, 50))
    if draw(st.booleans()):
        d["lines"] = [ln for ln in d["lines"] if ln["role"] != draw(st.sampled_from(["trap", "fluoride source"]))]
        names = [ln["name"] for ln in d["lines"]]
    n_steps = draw(st.integers(0, 4))
    steps = []
    for _ in range(n_steps):
        step = {"add": draw(st.lists(st.sampled_from(names + ["ghost"]), max_size=3, unique=True))}
        if draw(st.booleans()):
            step["temperature"] = f"{draw(st.integers(-100, 200))} °C"
        if draw(st.booleans()):
            step["hold"] = f"{draw(st.integers(1, 600))} min"
        step["sealed"] = draw(st.booleans())
        steps.append(step)
    d["steps"] = steps
    if draw(st.booleans()):
        d["lines"].append({"role": "product", "name": "adduct", "smiles": "C1=CC2c3ccccc3C1O2"})
        res = {"product": "adduct", "isolated_mass": f"{draw(st.floats(0, 200)):.2f} mg"}
        if draw(st.booleans()):
            res["er"] = f"{draw(st.integers(0, 99))}:{draw(st.integers(1, 99))}"
            res["ee"] = draw(st.floats(-100, 100))  # the range a record accepts
        if draw(st.booleans()):
            res["qnmr"] = {"standard_integral": 3.0, "standard_protons": 3, "integral": draw(st.floats(0, 5)), "protons": 1}
        d["outcome"] = {"products": [res]}
    return d


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(runs(), STRAIN, ALIGN)
def test_checks_never_raise_on_valid_runs(d, strain, alignment):
    found = run_checks(load_run(d), strain=strain, alignment=alignment)
    ranks = [("stop", "warn", "note").index(f.severity) for f in found]
    assert ranks == sorted(ranks)
    for f in found:
        assert f.code in CHECK_CODES and f.message.strip()
        assert f.code != "check-incomplete", f.message
        assert set(f.to_dict()) == {"code", "severity", "message", "lines", "steps", "caution"}
    # one caution per material per run (a solution line can bring two materials, so compare by material)
    cautions = [f.message.split(" (")[0] for f in found if f.code == "material-caution"]
    assert len(cautions) == len(set(cautions))
