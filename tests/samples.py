"""Run files shared by several test modules."""

# The minimal run file every version of Trapbook must accept as it is.
MINIMAL_RUN = {
    "title": "Furan trap of an aryne, TBAF in THF",
    "lines": [
        {
            "role": "precursor",
            "name": "aryne precursor A",
            "smiles": "C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F",
            "amount": "0.200 mmol",
        },
        {
            "role": "fluoride source",
            "name": "TBAF 1.0 M in THF",
            "smiles": "CCCC[N+](CCCC)(CCCC)CCCC.[F-]",
            "equiv": 3.0,
            "molarity": "1.0 M",
        },
        {"role": "trap", "name": "furan", "smiles": "c1ccoc1", "equiv": 10, "density": "0.951 g/mL"},
        {"role": "solvent", "name": "THF", "volume": "2.0 mL"},
    ],
    "steps": [
        {"add": ["aryne precursor A", "furan", "THF"], "temperature": "-78 °C"},
        {"add": ["TBAF 1.0 M in THF"], "temperature": "-78 °C"},
        {"hold": "2 h", "temperature": "23 °C"},
    ],
}
