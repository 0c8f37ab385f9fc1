"""Writes the demo lab's run files (a fictional group, invented results, real structures).

Run once after changing the scenario below: `python demo_lab/write_files.py`.
Every number here is invented for the demo; only structures and molar masses are real.
"""

import json
from pathlib import Path

from rdkit import Chem
from rdkit.Chem import Descriptors

HERE = Path(__file__).parent

PRE = {
    "P331": (
        "silyl triflate 331 (1-TMS-bicyclo[3.3.1]nonan-2-yl OTf)",
        "C[Si](C)(C)[C@@]12CCC[C@@H](CC[C@H]1OS(=O)(=O)C(F)(F)F)C2",
        "C12=CCCC(CCC1)C2",
        "bicyclo[3.3.1]non-1-ene",
    ),
    "P321": (
        "silyl triflate 321 (1-TMS-bicyclo[3.2.1]octan-2-yl OTf)",
        "C[Si](C)(C)[C@@]12CC[C@@H](CC[C@H]1OS(=O)(=O)C(F)(F)F)C2",
        "C12=CCCC(CC1)C2",
        "bicyclo[3.2.1]oct-1-ene",
    ),
    "P431": (
        "silyl triflate 431 (1-TMS-bicyclo[4.3.1]decan-2-yl OTf)",
        "C[Si](C)(C)[C@@]12CCC[C@@H](CCC[C@H]1OS(=O)(=O)C(F)(F)F)C2",
        "C12=CCCCC(CCC1)C2",
        "bicyclo[4.3.1]dec-1-ene",
    ),
    "P222": (
        "silyl triflate 222 (1-TMS-bicyclo[2.2.2]octan-2-yl OTf)",
        "C[Si](C)(C)C12CCC(CC1)CC2OS(=O)(=O)C(F)(F)F",
        "C12=CCC(CC1)CC2",
        "bicyclo[2.2.2]oct-1-ene",
    ),
}

TRAPS = {
    "furan": {"name": "furan", "smiles": "c1ccoc1", "density": "0.951 g/mL", "equiv": 10},
    "dmfuran": {"name": "2,5-dimethylfuran", "smiles": "Cc1ccc(C)o1", "density": "0.903 g/mL", "equiv": 10},
    "anthracene": {"name": "anthracene", "smiles": "c1ccc2cc3ccccc3cc2c1", "equiv": 3},
    "dpibf": {"name": "1,3-diphenylisobenzofuran", "smiles": "c1ccc(cc1)-c1oc(-c2ccccc2)c2ccccc12", "equiv": 2},
    "nitrone": {"name": "N-tert-butyl-alpha-phenylnitrone", "smiles": "CC(C)(C)[N+]([O-])=Cc1ccccc1", "equiv": 3},
}

# Diels-Alder / [3+2] adducts, written out per intermediate core
PRODUCTS = {
    ("P331", "furan"): "C1=CC2OC1C1CCC3CCCC21C3",
    ("P331", "dmfuran"): "CC12C=CC(C)(O1)C13CCCC(CCC21)C3",
    ("P331", "anthracene"): "c1ccc2c(c1)C1c3ccccc3C2C23CCCC(CCC12)C3",
    ("P331", "dpibf"): "c1ccc(C23OC(c4ccccc4)(c4ccccc42)C24CCCC(CCC32)C4)cc1",
    ("P331", "nitrone"): "CC(C)(C)N1OC23CCCC(CCC2C1c1ccccc1)C3",
    ("P321", "furan"): "C1=CC2OC1C1CCC3CCC21C3",
    ("P321", "anthracene"): "c1ccc2c(c1)C1c3ccccc3C2C23CCC(CCC12)C3",
    ("P321", "dpibf"): "c1ccc(C23OC(c4ccccc4)(c4ccccc42)C24CCC(CCC32)C4)cc1",
    ("P431", "furan"): "C1=CC2OC1C1CCCC3CCCC21C3",
    ("P431", "anthracene"): "c1ccc2c(c1)C1c3ccccc3C2C23CCCC(CCCC12)C3",
    ("P222", "furan"): "C1=CC2OC1C1CC3CCC21CC3",
}

TBAF = {
    "role": "fluoride source",
    "name": "TBAF 1.0 M in THF",
    "smiles": "CCCC[N+](CCCC)(CCCC)CCCC.[F-]",
    "molarity": "1.0 M",
    "equiv": 1.5,
    "water": "5 wt%",
}
CSF = {"role": "fluoride source", "name": "CsF", "smiles": "[Cs+].[F-]", "equiv": 5}
TBAB = {"role": "additive", "name": "TBAB", "smiles": "CCCC[N+](CCCC)(CCCC)CCCC.[Br-]", "equiv": 1.0}
TMB = {"role": "internal standard", "name": "1,3,5-trimethoxybenzene", "smiles": "COc1cc(OC)cc(OC)c1", "mass": "16.8 mg"}


def mw(smiles):
    return Descriptors.MolWt(Chem.MolFromSmiles(smiles))


def run(
    n,
    title,
    chemist,
    date,
    pre,
    trap,
    protocol,
    temp,
    hold,
    yield_pct=None,
    *,
    page,
    screen=None,
    factors=None,
    late=False,
    status="done",
    observations=None,
    notes=None,
    recovered=None,
    dr=None,
    qnmr=None,
    tags=(),
):
    name, psmi, ism, iname = PRE[pre]
    scale = 0.100  # mmol
    t = dict(TRAPS[trap])
    trap_line = {"role": "trap", **{k: v for k, v in t.items()}}
    lines = [{"role": "precursor", "name": name, "smiles": psmi, "amount": f"{scale:.3f} mmol"}, trap_line]
    product = f"{trap} adduct"
    psmiles = PRODUCTS.get((pre, trap))
    if protocol == "tbaf":
        lines += [dict(TBAF), {"role": "solvent", "name": "THF", "smiles": "C1CCOC1", "volume": "1.0 mL"}]
        fl = TBAF["name"]
        steps = [
            {"add": [name, t["name"], "THF"] if not late else [name, "THF"], "temperature": "23 °C", "atmosphere": "N2"},
            {"temperature": temp, "hold": "5 min"},
            {"add": [fl], "temperature": temp, "over": "2 min"},
        ]
        if late:
            steps.append({"hold": "30 min", "temperature": temp})
            steps.append({"add": [t["name"]], "temperature": temp})
        steps.append({"hold": hold, "temperature": "23 °C"})
    else:
        lines += [dict(CSF), dict(TBAB), {"role": "solvent", "name": "MeCN", "smiles": "CC#N", "volume": "1.0 mL"}]
        sealed = protocol == "csf-sealed"
        steps = [
            {
                "add": [name, t["name"], "CsF", "TBAB", "MeCN"],
                "temperature": "23 °C",
                "atmosphere": "N2",
                "note": "glovebox, 4 mL vial with stir bar",
            },
            {
                "temperature": temp,
                "hold": hold,
                "sealed": sealed,
                "note": "aluminium block behind a blast shield" if sealed else None,
            },
        ]
        steps[-1] = {k: v for k, v in steps[-1].items() if v is not None}
    outcome = {"products": [], "observations": observations}
    if psmiles:
        lines.append({"role": "product", "name": product, "smiles": psmiles})
    if qnmr:
        lines.append(dict(TMB))
    if yield_pct is not None and psmiles:
        res = {"product": product}
        if qnmr:
            n_is = 16.8 / mw(TMB["smiles"])
            # integral of a 1H product signal vs the 3H aromatic singlet of the standard (invented)
            res["qnmr"] = {
                "standard": TMB["name"],
                "standard_integral": 3.00,
                "standard_protons": 3,
                "integral": round(yield_pct / 100 * scale / n_is * 1.0, 3),
                "protons": 1,
            }
        else:
            res["isolated_mass"] = f"{yield_pct / 100 * scale * mw(psmiles):.1f} mg"
        if dr:
            res["dr"] = dr
        outcome["products"].append(res)
    if recovered is not None:
        outcome["recovered_precursor"] = f"{recovered / 100 * scale * mw(psmi):.1f} mg"
    outcome = {k: v for k, v in outcome.items() if v not in (None, [])} or None
    data = {
        "id": f"TB-{n:04d}",
        "title": title,
        "chemist": chemist,
        "date": date,
        "page": page,
        "status": status,
        "intermediate": ism,
        "intermediate_name": iname,
        "tags": list(tags),
        "lines": lines,
        "steps": steps,
    }
    if outcome:
        data["outcome"] = outcome
    if screen:
        data["screen"] = screen
        data["factors"] = factors
    if notes:
        data["notes"] = notes
    return data


RUNS = [
    run(
        1,
        "[3.3.1] bridgehead alkene, furan, TBAF at -78 °C",
        "L. Brandt",
        "2026-09-01",
        "P331",
        "furan",
        "tbaf",
        "-78 °C",
        "2 h",
        62,
        page="LB-2-014",
        tags=["anti-Bredt", "furan"],
    ),
    run(
        2,
        "[3.3.1] alkene, anthracene, CsF/TBAB sealed 120 °C",
        "L. Brandt",
        "2026-09-03",
        "P331",
        "anthracene",
        "csf-sealed",
        "120 °C",
        "16 h",
        71,
        page="LB-2-016",
        observations="anthracene partly recovered on the column",
    ),
    run(
        3,
        "[3.3.1] alkene, nitrone [3+2], CsF/TBAB 90 °C",
        "S. Iyer",
        "2026-09-04",
        "P331",
        "nitrone",
        "csf-sealed",
        "90 °C",
        "16 h",
        48,
        page="SI-1-031",
        dr="3:1",
        tags=["dipolar"],
    ),
    run(
        4,
        "[3.3.1] alkene, DPIBF, TBAF (qNMR)",
        "S. Iyer",
        "2026-09-08",
        "P331",
        "dpibf",
        "tbaf",
        "-78 °C",
        "1 h",
        77,
        page="SI-1-035",
        qnmr=True,
    ),
    run(
        5,
        "[3.2.1] bridgehead alkene, furan, TBAF",
        "M. Okafor",
        "2026-09-10",
        "P321",
        "furan",
        "tbaf",
        "-78 °C",
        "2 h",
        35,
        page="MO-3-002",
        observations="dimer of the alkene seen by GC-MS",
    ),
    run(
        6,
        "[3.2.1] alkene, anthracene, CsF/TBAB sealed 120 °C",
        "M. Okafor",
        "2026-09-12",
        "P321",
        "anthracene",
        "csf-sealed",
        "120 °C",
        "20 h",
        41,
        page="MO-3-005",
    ),
    run(
        7, "[3.2.1] alkene, DPIBF, TBAF", "M. Okafor", "2026-09-15", "P321", "dpibf", "tbaf", "-78 °C", "1 h", 52, page="MO-3-009"
    ),
    run(
        8,
        "[4.3.1] bridgehead alkene, furan, TBAF",
        "L. Brandt",
        "2026-09-16",
        "P431",
        "furan",
        "tbaf",
        "-78 °C",
        "2 h",
        70,
        page="LB-2-022",
    ),
    run(
        9,
        "[4.3.1] alkene, anthracene, CsF/TBAB sealed 120 °C",
        "L. Brandt",
        "2026-09-18",
        "P431",
        "anthracene",
        "csf-sealed",
        "120 °C",
        "16 h",
        80,
        page="LB-2-025",
    ),
    run(
        10,
        "[3.3.1] alkene, furan added after TBAF (failed)",
        "S. Iyer",
        "2026-09-19",
        "P331",
        "furan",
        "tbaf",
        "-78 °C",
        "2 h",
        0,
        page="SI-1-040",
        late=True,
        status="failed",
        observations="no adduct; oligomers and a TBAF-derived alcohol by crude NMR",
        notes="furan syringe was not ready; added 30 min after the TBAF",
    ),
    run(
        11,
        "[3.2.1] precursor, CsF/TBAB at 23 °C, open (failed)",
        "M. Okafor",
        "2026-09-22",
        "P321",
        "anthracene",
        "csf-open",
        "23 °C",
        "24 h",
        None,
        page="MO-3-014",
        status="failed",
        observations="no conversion by TLC; precursor recovered",
        recovered=92,
    ),
    run(
        12,
        "[2.2.2] bridgehead alkene, furan, TBAF",
        "S. Iyer",
        "2026-09-24",
        "P222",
        "furan",
        "tbaf",
        "-78 °C",
        "2 h",
        18,
        page="SI-1-044",
        observations="mostly dimer",
    ),
]

# TB-0009, the clean [4.3.1] anthracene run, written up for the paper: how it was worked up and
# characterised (all invented), so `trapbook write TB-0009` shows a whole experimental paragraph.
RUNS[8]["outcome"].update(
    workup="The cooled mixture was diluted with Et2O (5 mL), filtered through a short pad of "
    "Celite and concentrated under reduced pressure.",
    eluent="hexanes",
)
RUNS[8]["outcome"]["products"][0].update(
    appearance="white solid",
    rf=0.48,
    nmr_text="1H NMR (400 MHz, CDCl3) δ 7.36–7.28 (m, 4H), 7.14–7.07 (m, 4H), 4.24 (s, 1H), 3.98 (d, J = 2.4 Hz, 1H), "
    "2.12–1.02 (m, 16H).",
    hrms={"ion": "[M+Na]+", "found_mz": 337.1931},
)

SCREEN_ID = "SC-0001"
TEMPS = ["80 °C", "120 °C"]
SCREEN_YIELDS = {
    ("furan", "80 °C"): 38,
    ("furan", "120 °C"): 55,
    ("dmfuran", "80 °C"): 44,
    ("dmfuran", "120 °C"): 63,
    ("anthracene", "80 °C"): 52,
    ("anthracene", "120 °C"): 74,
}
n = len(RUNS)
for trap in ("furan", "dmfuran", "anthracene"):
    for temp in TEMPS:
        n += 1
        RUNS.append(
            run(
                n,
                f"Screen 331: {TRAPS[trap]['name']} at {temp}",
                "L. Brandt",
                "2026-10-06",
                "P331",
                trap,
                "csf-sealed",
                temp,
                "16 h",
                SCREEN_YIELDS[(trap, temp)],
                page=f"LB-2-0{30 + n - 13}",
                screen=SCREEN_ID,
                factors={"trap": TRAPS[trap]["name"], "temperature": temp},
                tags=["screen"],
            )
        )

SCREEN = {
    "id": SCREEN_ID,
    "name": "331 trap x temperature (CsF/TBAB, MeCN, sealed)",
    "description": "Which trap and block temperature give the most adduct from silyl triflate 331 under slow-release fluoride.",
    "factors": {"trap": [TRAPS[t]["name"] for t in ("furan", "dmfuran", "anthracene")], "temperature": TEMPS},
    "runs": [r["id"] for r in RUNS if r.get("screen") == SCREEN_ID],
    "chemist": "L. Brandt",
    "scale": "0.100 mmol",
}

if __name__ == "__main__":
    for r in RUNS:
        (HERE / "runs" / f"{r['id']}.json").write_text(json.dumps(r, indent=2, ensure_ascii=False) + "\n", encoding="utf-8")
    (HERE / "screens" / f"{SCREEN_ID}.json").write_text(json.dumps(SCREEN, indent=2, ensure_ascii=False) + "\n", encoding="utf-8")
    print(f"wrote {len(RUNS)} runs and 1 screen")
