"""Structures in and out: the one place SMILES become RDKit molecules.

Everything else in Trapbook speaks SMILES strings and plain numbers; this module turns
a SMILES (with any hydrate water or counter-ions written into it) into a checked
molecule, its canonical form, formula, molar mass, InChIKey and a drawing.
"""

from __future__ import annotations

import re
from functools import lru_cache

from rdkit import Chem, RDLogger
from rdkit.Chem import Descriptors, rdMolDescriptors

from ..errors import ChemistryError
from ..text_safety import UNSAFE_IN_A_LINE

RDLogger.DisableLog("rdApp.*")

MAX_SMILES_LENGTH = 2000


def parse(smiles: str, what: str = "SMILES") -> Chem.Mol:
    """A sanitised molecule, or a ChemistryError that says what is wrong with the text."""
    if not isinstance(smiles, str) or not smiles.strip():
        raise ChemistryError(f"{what} is empty", "give a SMILES string such as 'c1ccoc1'")
    text = smiles.strip()
    refuse_unsafe(text, what)
    if len(text) > MAX_SMILES_LENGTH:
        raise ChemistryError(
            f"{what} is {len(text)} characters long", f"SMILES longer than {MAX_SMILES_LENGTH} characters are not accepted"
        )
    mol = _parse_cached(text)
    if mol is None:
        raise ChemistryError(
            f"{what} '{_short(text)}' is not a valid SMILES",
            "check brackets, ring-closure digits and valences (e.g. furan is 'c1ccoc1')",
        )
    return Chem.Mol(mol)


_UNSAFE_IN_SMILES = re.compile(f"[{UNSAFE_IN_A_LINE}\\s]")


def refuse_unsafe(text: str, what: str = "SMILES") -> None:
    """A SMILES is one word of printable characters. RDKit stops reading at a NUL and takes
    text after a space as the molecule's name, so 'C1CC1\\x00junk' or 'CCO ethanol' would be read
    as less than was written; refused here, before RDKit sees it, with the character named."""
    bad = _UNSAFE_IN_SMILES.search(text)
    if bad:
        ch = bad.group()
        name = "a space" if ch == " " else f"the character U+{ord(ch):04X}"
        raise ChemistryError(
            f"{what} holds {name} at position {bad.start() + 1}",
            "a SMILES is one word with no spaces or control characters; put names and notes in their own fields",
        )


def _short(text: str) -> str:
    return text if len(text) <= 60 else text[:57] + "..."


@lru_cache(maxsize=4096)
def _parse_cached(text: str):
    try:
        mol = Chem.MolFromSmiles(text)
    except Exception:  # RDKit raises odd types on odd input
        return None
    if mol is None or mol.GetNumAtoms() == 0:
        return None
    return mol


def is_valid(smiles: str) -> bool:
    try:
        parse(smiles)
        return True
    except ChemistryError:
        return False


@lru_cache(maxsize=4096)
def canonical(smiles: str) -> str:
    """Canonical isomeric SMILES: the key under which a structure is stored and compared."""
    return Chem.MolToSmiles(parse(smiles), isomericSmiles=True)


@lru_cache(maxsize=4096)
def molar_mass(smiles: str) -> float:
    """Average molar mass (g/mol) of everything written in the SMILES, salts and water included."""
    return float(Descriptors.MolWt(parse(smiles)))


@lru_cache(maxsize=4096)
def formula(smiles: str) -> str:
    return rdMolDescriptors.CalcMolFormula(parse(smiles))


@lru_cache(maxsize=4096)
def inchikey(smiles: str) -> str | None:
    try:
        key = Chem.MolToInchiKey(parse(smiles))
    except Exception:
        return None
    return key or None


def element_count(smiles: str, symbol: str) -> int:
    """How many atoms of one element the structure holds (e.g. Si groups to remove)."""
    mol = parse(smiles)
    return sum(1 for a in mol.GetAtoms() if a.GetSymbol() == symbol)


def water_count(smiles: str) -> int:
    """Number of separate water molecules written in the SMILES (hydrates: '.O.O.O')."""
    mol = parse(smiles)
    frags = Chem.GetMolFrags(mol, asMols=True, sanitizeFrags=False)
    return sum(
        1
        for f in frags
        if f.GetNumAtoms() == 1 and f.GetAtomWithIdx(0).GetSymbol() == "O" and f.GetAtomWithIdx(0).GetTotalNumHs() == 2
    )


def fluoride_count(smiles: str) -> int:
    """Fluoride ions (or HF2-/silicate F) a reagent can deliver, counted as F not bound to C."""
    mol = parse(smiles)
    n = 0
    for atom in mol.GetAtoms():
        if atom.GetSymbol() != "F":
            continue
        if any(nb.GetSymbol() == "C" for nb in atom.GetNeighbors()):
            continue
        n += 1
    return n


def heavy_atoms(smiles: str) -> int:
    return parse(smiles).GetNumHeavyAtoms()


def depict_svg(smiles: str, width: int = 260, height: int = 180) -> str:
    """An SVG drawing of the structure, for reports."""
    from rdkit.Chem.Draw import rdMolDraw2D

    mol = parse(smiles)
    drawer = rdMolDraw2D.MolDraw2DSVG(width, height)
    opts = drawer.drawOptions()
    opts.clearBackground = False
    rdMolDraw2D.PrepareAndDrawMolecule(drawer, mol)
    drawer.FinishDrawing()
    svg = drawer.GetDrawingText()
    return svg[svg.index("<svg") :] if "<svg" in svg else svg


def substructure_query(pattern: str) -> Chem.Mol:
    """A query from SMARTS (or SMILES, which is valid SMARTS); ChemistryError if neither."""
    if not isinstance(pattern, str) or not pattern.strip():
        raise ChemistryError("substructure query is empty", "give SMILES or SMARTS, e.g. 'C1=CC2CCC1C2'")
    q = None
    try:
        q = Chem.MolFromSmarts(pattern.strip())
    except Exception:
        q = None
    if q is None:
        try:
            q = Chem.MolFromSmiles(pattern.strip())
        except Exception:
            q = None
    if q is None:
        raise ChemistryError(f"'{_short(pattern)}' is neither valid SMARTS nor SMILES", "check brackets and ring-closure digits")
    return q


def has_substructure(smiles: str, query: Chem.Mol) -> bool:
    return parse(smiles).HasSubstructMatch(query)
