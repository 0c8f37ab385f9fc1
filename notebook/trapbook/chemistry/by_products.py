"""What else a strained intermediate turns into when the trap is slow: the by-products.

A product whose mass matches neither the adduct nor one of these is worth a second look.
Kept modest on purpose: the [2+2] dimer of an alkene or allene, the biphenylene-type dimer
and the trimer of an aryne or cycloalkyne, the adduct of water, and the adduct of the acid
of the leaving group the precursor releases (H and the nucleophile across the strained
bond). Stereo is not enumerated for by-products: their formula and mass are what matter.
"""

from __future__ import annotations

from functools import lru_cache

from rdkit import Chem
from rdkit.Chem import rdChemReactions

from ..errors import ChemistryError
from . import bridgehead as bh
from .derive import _SI_C_C_X, _side
from .molecules import parse

MAX_PER_KIND = 4

_TEMPLATES = {
    "dimer=": "[#6:1]=[#6:2].[#6:3]=[#6:4]>>[#6:1]1-[#6:2]-[#6:4]-[#6:3]-1",
    "dimer#": "[#6:1]#[#6:2].[#6:3]#[#6:4]>>[#6:1]1=[#6:2]-[#6:4]=[#6:3]-1",
    "trimer#": "[#6:1]#[#6:2].[#6:3]#[#6:4].[#6:5]#[#6:6]>>[#6:1]1=[#6:2]-[#6:3]=[#6:4]-[#6:5]=[#6:6]-1",
    "add=": "[#6:1]=[#6:2].[O,F,Cl,Br,I;!H0:3]>>[#6:1](-[*:3])-[#6:2]",
    "add#": "[#6:1]#[#6:2].[O,F,Cl,Br,I;!H0:3]>>[#6:1](-[*:3])=[#6:2]",
    "enol": "[#8;H1:1]-[#6;!a:2]=[#6;!a:3]>>[#8:1]=[#6:2]-[#6:3]",
}


@lru_cache(maxsize=16)
def _rxn(name: str) -> rdChemReactions.ChemicalReaction:
    rxn = rdChemReactions.ReactionFromSmarts(_TEMPLATES[name])
    rxn.Initialize()
    return rxn


def released_acid(precursor: str) -> tuple[str, str] | None:
    """The acid H–X of the leaving group a silyl precursor releases (TfOH from a triflate).

    Same Si–C–C–X pattern the intermediate is derived with, so both read the precursor alike.
    """
    mol = parse(precursor, "precursor SMILES")
    matches = mol.GetSubstructMatches(_SI_C_C_X)
    if not matches:
        return None
    _si, _c1, c2, x = matches[0]
    keep = _side(mol, x, c2)
    rw = Chem.RWMol(mol)
    for idx in sorted(set(range(mol.GetNumAtoms())) - keep, reverse=True):
        rw.RemoveAtom(idx)
    acid = rw.GetMol()
    for atom in acid.GetAtoms():
        atom.SetNoImplicit(False)
        atom.SetNumExplicitHs(0)
    Chem.SanitizeMol(acid)
    smiles = Chem.MolToSmiles(acid)
    names = {
        "O=S(=O)(O)C(F)(F)F": "triflate",
        "O=S(=O)(O)C(F)(F)C(F)(F)C(F)(F)C(F)(F)F": "nonaflate",
        "Cc1ccc(S(=O)(=O)O)cc1": "tosylate",
        "CS(=O)(=O)O": "mesylate",
        "Cl": "chloride",
        "Br": "bromide",
        "I": "iodide",
    }
    return smiles, names.get(smiles, f"the leaving group ({smiles})")


def _detail(name: str, inter: Chem.Mol, prod: Chem.Mol) -> str:
    """Which way round: head-to-head or head-to-tail for a dimer, where the nucleophile went."""
    where = {a.GetIntProp("old_mapno"): a.GetIntProp("react_atom_idx") for a in prod.GetAtoms() if a.HasProp("old_mapno")}
    label = lambda i: f"{inter.GetAtomWithIdx(i).GetSymbol()}{i + 1}"  # noqa: E731
    if name.startswith("dimer"):
        return "head-to-head" if where[1] == where[3] else "head-to-tail"
    if name.startswith("add"):
        return f"on {label(where[1])}"
    return ""


def _run(name: str, reactants: tuple, site_atoms: set[int], partner_index: int | None = None) -> list[tuple[str, str]]:
    """(SMILES, detail) of each product of one template that reacts only at the strained bond."""
    out: dict[str, str] = {}
    for (prod,) in _rxn(name).RunReactants(reactants, maxProducts=100):
        mapped = [a for a in prod.GetAtoms() if a.HasProp("old_mapno")]
        inter_atoms = {a.GetIntProp("react_atom_idx") for a in mapped if a.GetIntProp("react_idx") != partner_index}
        if not inter_atoms <= site_atoms:
            continue
        detail = _detail(name, reactants[0], prod)
        try:
            Chem.SanitizeMol(prod)
        except (Chem.rdchem.KekulizeException, Chem.rdchem.AtomValenceException):
            continue  # the template does not fit this bond; the others are tried
        out.setdefault(Chem.MolToSmiles(_ketone(prod)), detail)
    return sorted(out.items())[:MAX_PER_KIND]


def _ketone(mol: Chem.Mol) -> Chem.Mol:
    """An enol from water on an alkyne or allene is written as the ketone it becomes."""
    prods = _rxn("enol").RunReactants((mol,), maxProducts=1)
    if not prods:
        return mol
    out = prods[0][0]
    Chem.SanitizeMol(out)
    return out


def by_products(inter: Chem.Mol, sites, leaving_group: tuple[str, str] | None) -> list[dict]:
    """The by-products listed for one intermediate; `leaving_group` is (acid SMILES, name)."""
    kek = Chem.Mol(inter)
    Chem.Kekulize(kek, clearAromaticFlags=True)
    site_atoms = {a for s in sites for a in s.atoms}
    label = " / ".join(s.label for s in sites)
    triple = any(s.triple for s in sites)
    rows: list[tuple[str, str]] = []
    if triple:
        if sites[0].kind == bh.ARYNE:
            rows += [
                (s, f"[2+2] dimer of the aryne at {label} (biphenylene type)") for s, _ in _run("dimer#", (kek, kek), site_atoms)
            ]
        rows += [(s, f"[2+2+2] trimer of the intermediate at {label}") for s, _ in _run("trimer#", (kek, kek, kek), site_atoms)]
    else:
        rows += [(s, f"[2+2] dimer of the intermediate at {label}, {d}") for s, d in _run("dimer=", (kek, kek), site_atoms)]
    add = "add#" if triple else "add="
    rows += [(s, f"adduct of water (H and OH across {label}, OH {d})") for s, d in _run(add, (kek, parse("O")), site_atoms, 1)]
    if leaving_group:
        acid_smiles, name = leaving_group
        acid = parse(acid_smiles, "leaving-group acid SMILES")
        Chem.Kekulize(acid, clearAromaticFlags=True)
        rows += [
            (s, f"adduct of the released {name} (H and {name} across {label}, {name} {d})")
            for s, d in _run(add, (kek, acid), site_atoms, 1)
        ]
    if not rows:
        raise ChemistryError("no by-product template fits the intermediate", "report this structure")
    return [
        {
            "smiles": s,
            "kind": "by-product",
            "reaction": None,
            "trap": None,
            "trap_label": None,
            "site": label,
            "stereo": None,
            "racemic": False,
            "words": f"by-product: {w}, stereo not enumerated",
        }
        for s, w in rows
    ]
