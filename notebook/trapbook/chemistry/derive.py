"""The intermediate a silyl precursor releases, when the chemist did not write it down.

Fluoride takes the silyl group from one carbon and the leaving group leaves from the
next: the two carbons end up joined by a new pi bond. Doing that edit on the graph gives
the intermediate's SMILES, so a run can be linked to its strain without extra typing.
"""

from __future__ import annotations

from functools import lru_cache

from rdkit import Chem

from ..errors import ChemistryError
from .molecules import parse

# Si on C1, leaving-group atom on C2: O of a sulfonate (triflate, nonaflate, tosylate, mesylate) or a halide
_SI_C_C_X = Chem.MolFromSmarts("[Si;X4]-[#6:1]~[#6:2]-[$([O]S(=O)=O),Cl,Br,I]")


def _side(mol: Chem.Mol, start: int, blocked: int) -> set[int]:
    """Atoms reachable from `start` without passing through `blocked`."""
    seen, todo = {start}, [start]
    while todo:
        a = todo.pop()
        for nb in mol.GetAtomWithIdx(a).GetNeighbors():
            j = nb.GetIdx()
            if j != blocked and j not in seen:
                seen.add(j)
                todo.append(j)
    return seen


def _flip_ring(rw: Chem.RWMol, bond_idx: int) -> None:
    """Swap single and double bonds round the smallest ring of a bond (the other Kekulé form)."""
    rings = [r for r in rw.GetRingInfo().BondRings() if bond_idx in r]
    if not rings:
        return
    for b in min(rings, key=len):
        bd = rw.GetBondWithIdx(b)
        if bd.GetBondType() == Chem.BondType.SINGLE:
            bd.SetBondType(Chem.BondType.DOUBLE)
        elif bd.GetBondType() == Chem.BondType.DOUBLE:
            bd.SetBondType(Chem.BondType.SINGLE)


@lru_cache(maxsize=4096)
def intermediate_from_precursor(smiles: str) -> str:
    """SMILES of the intermediate formed by 1,2-elimination of silyl and leaving group."""
    mol = parse(smiles, "precursor SMILES")
    matches = mol.GetSubstructMatches(_SI_C_C_X)
    if not matches:
        raise ChemistryError(
            "no silyl group beside a leaving group (Si–C–C–OTf/ONf/OTs or halide) in the precursor",
            "write the intermediate's SMILES on the run instead",
        )
    si, c1, c2, x = matches[0]
    drop = _side(mol, si, c1) | _side(mol, x, c2)
    if c1 in drop or c2 in drop:
        raise ChemistryError(
            "the silyl and leaving groups are part of a ring with the reacting carbons",
            "write the intermediate's SMILES on the run instead",
        )
    rw = Chem.RWMol(mol)
    bond = rw.GetBondBetweenAtoms(c1, c2)
    if bond.GetIsAromatic():
        # an aryl silane beside an aryl leaving group gives an aryne: a formal triple bond in the ring
        Chem.Kekulize(rw, clearAromaticFlags=True)
        bond = rw.GetBondBetweenAtoms(c1, c2)
        if bond.GetBondType() == Chem.BondType.SINGLE:
            _flip_ring(rw, bond.GetIdx())
    new_order = {Chem.BondType.SINGLE: Chem.BondType.DOUBLE, Chem.BondType.DOUBLE: Chem.BondType.TRIPLE}.get(bond.GetBondType())
    if new_order is None:
        raise ChemistryError(
            "cannot raise the bond order between the reacting carbons", "write the intermediate's SMILES on the run"
        )
    bond.SetBondType(new_order)
    bond.SetStereo(Chem.BondStereo.STEREONONE)
    for idx in (c1, c2):
        atom = rw.GetAtomWithIdx(idx)
        atom.SetChiralTag(Chem.ChiralType.CHI_UNSPECIFIED)
        atom.SetNoImplicit(False)
        atom.SetNumExplicitHs(0)
    for idx in sorted(drop, reverse=True):
        rw.RemoveAtom(idx)
    out = rw.GetMol()
    try:
        Chem.SanitizeMol(out)
    except Exception:
        raise ChemistryError(
            "the derived intermediate is not a valid structure", "write the intermediate's SMILES on the run"
        ) from None
    Chem.AssignStereochemistry(out, cleanIt=True, force=True)
    return Chem.MolToSmiles(out)


def is_precursor(smiles: str) -> bool:
    """True when the structure carries a silyl group beside a leaving group (Si–C–C–X)."""
    return parse(smiles, "SMILES").HasSubstructMatch(_SI_C_C_X)
