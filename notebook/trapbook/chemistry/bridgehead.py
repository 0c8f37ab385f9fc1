"""Ring perception for strained unsaturation: bridgehead alkenes, cyclic allenes, cycloalkynes, arynes.

A chemist judges a bridgehead double bond by the bridged bicycle bicyclo[a.b.c]
that holds it: S = a + b + c and the size of the ring in which the bond is
forced to be trans (Wiseman). In a polycycle the smallest such bicycle decides,
so the search looks for the three shortest vertex-disjoint bridges from the
double-bond carbon to another bridgehead, not for rings as RDKit lists them.
"""

from __future__ import annotations

from collections import defaultdict
from dataclasses import asdict, dataclass, field

from rdkit import Chem, rdBase

from trapbook.errors import ChemistryError

from . import molecules

BRIDGEHEAD = "bridgehead alkene"
ALLENE = "cyclic allene"
ALKYNE = "cycloalkyne"
ARYNE = "aryne"
NONE = "none"

# Longest bridge considered; bicycles beyond S ~ 24 carry no Bredt strain worth reporting.
_MAX_BRIDGE = 8
# Guards the path enumeration on large cages so perception never stalls.
_MAX_PATHS = 50_000


@dataclass
class Candidate:
    """One strained unsaturated unit; atom indices refer to the heavy-atom SMILES order."""

    kind: str
    atoms: list[int]
    ring_size: int | None = None
    bridgeheads: list[int] | None = None
    bridges: list[int] | None = None
    bridge_atoms: list[list[int]] | None = None
    s_value: int | None = None
    double_bond_bridge: int | None = None
    trans_ring_size: int | None = None

    def to_dict(self) -> dict:
        return asdict(self)


@dataclass
class Perception:
    smiles: str
    kind: str
    candidates: list[Candidate] = field(default_factory=list)
    message: str = ""

    @property
    def best(self) -> Candidate | None:
        return self.candidates[0] if self.candidates else None

    def to_dict(self) -> dict:
        return {
            "smiles": self.smiles,
            "kind": self.kind,
            "candidates": [c.to_dict() for c in self.candidates],
            "message": self.message,
        }


def parse(smiles: str) -> Chem.Mol:
    """Parse without RDKit's console chatter; a bad SMILES becomes a ChemistryError."""
    if not isinstance(smiles, str) or not smiles.strip():
        raise ChemistryError("No structure given.", "Enter a SMILES string, e.g. C12=CCCC(CCC1)C2.")
    molecules.refuse_unsafe(smiles.strip())
    with rdBase.BlockLogs():
        mol = Chem.MolFromSmiles(smiles.strip())
    if mol is None:
        raise ChemistryError(
            f"Cannot read the SMILES {smiles!r}.",
            "Check ring-closure digits, brackets and valences.",
        )
    if mol.GetNumAtoms() == 0:
        raise ChemistryError("The SMILES holds no atoms.", "Enter the intermediate's structure.")
    return mol


def perceive(smiles: str) -> Perception:
    """Classify the most strained unsaturation so the strain engine knows what to compute."""
    mol = parse(smiles)
    return perceive_mol(mol)


def perceive_mol(mol: Chem.Mol) -> Perception:
    canonical = Chem.MolToSmiles(mol)
    cands = _bridgehead_alkenes(mol) + _cyclic_allenes(mol) + _cycloalkynes(mol)
    if not cands:
        return Perception(canonical, NONE, [], _none_message(mol))
    return Perception(canonical, cands[0].kind, cands, "")


def _none_message(mol: Chem.Mol) -> str:
    if any(b.GetIsAromatic() for b in mol.GetBonds()):
        base = "Only aromatic or unstrained unsaturation"
    elif any(b.GetBondType() == Chem.BondType.DOUBLE for b in mol.GetBonds()):
        base = "The double bonds are not at a bridgehead"
    else:
        base = "No double or triple bond in a ring"
    return f"{base}: no bridgehead alkene, cyclic allene, cycloalkyne or aryne found."


def _is_cumulated(atom: Chem.Atom) -> bool:
    doubles = [b for b in atom.GetBonds() if b.GetBondType() == Chem.BondType.DOUBLE]
    return len(doubles) >= 2


def _ring_neighbours(mol: Chem.Mol, idx: int) -> list[int]:
    atom = mol.GetAtomWithIdx(idx)
    return [b.GetOtherAtomIdx(idx) for b in atom.GetBonds() if mol.GetRingInfo().NumBondRings(b.GetIdx())]


def _bridgehead_alkenes(mol: Chem.Mol) -> list[Candidate]:
    found = []
    for bond in mol.GetBonds():
        if bond.GetBondType() != Chem.BondType.DOUBLE or bond.GetIsAromatic():
            continue
        i, j = bond.GetBeginAtomIdx(), bond.GetEndAtomIdx()
        if mol.GetAtomWithIdx(i).GetAtomicNum() != 6 or mol.GetAtomWithIdx(j).GetAtomicNum() != 6:
            continue
        if not mol.GetRingInfo().NumBondRings(bond.GetIdx()):
            continue
        if _is_cumulated(mol.GetAtomWithIdx(i)) or _is_cumulated(mol.GetAtomWithIdx(j)):
            continue
        options = [c for c in (_smallest_bicycle(mol, i, j), _smallest_bicycle(mol, j, i)) if c]
        if options:
            found.append(min(options, key=lambda c: (c.s_value, c.trans_ring_size)))
    found.sort(key=lambda c: (c.s_value, c.trans_ring_size, c.atoms))
    return found


def _bridge_paths(mol: Chem.Mol, start: int) -> dict[int, list[tuple[int, ...]]]:
    """All simple ring paths from `start`, grouped by end atom; internal atoms only are kept."""
    by_end: dict[int, list[tuple[int, ...]]] = defaultdict(list)
    neighbours = {a.GetIdx(): _ring_neighbours(mol, a.GetIdx()) for a in mol.GetAtoms()}
    stack = [(start, (start,))]
    count = 0
    while stack and count < _MAX_PATHS:
        node, path = stack.pop()
        for nxt in neighbours[node]:
            if nxt in path:
                continue
            internal = path[1:]
            if len(internal) >= 1:
                by_end[nxt].append(internal)
                count += 1
            if len(internal) < _MAX_BRIDGE:
                stack.append((nxt, path + (nxt,)))
    return by_end


def _smallest_bicycle(mol: Chem.Mol, head: int, partner: int) -> Candidate | None:
    """Smallest bicyclo[a.b.c] (all bridges >= 1 atom) with `head` as bridgehead and the
    double bond `head`=`partner` inside one bridge."""
    if len(_ring_neighbours(mol, head)) < 3:
        return None
    best = None
    for end, paths in _bridge_paths(mol, head).items():
        if end == partner:
            continue
        paths = sorted(set(paths), key=lambda p: (len(p), p))
        for p1 in (p for p in paths if p[0] == partner):
            pick = _two_more_bridges(paths, p1, best)
            if pick is None:
                continue
            s = len(p1) + len(pick[0]) + len(pick[1])
            trans = 2 + len(p1) + max(len(pick[0]), len(pick[1]))
            if best is None or (s, trans) < (best[0], best[1]):
                best = (s, trans, end, p1, pick[0], pick[1])
    if best is None:
        return None
    s, trans, end, p1, p2, p3 = best
    bridges = sorted([list(p1), list(p2), list(p3)], key=lambda p: (-len(p), p != list(p1)))
    return Candidate(
        kind=BRIDGEHEAD,
        atoms=[head, partner],
        bridgeheads=[head, end],
        bridges=[len(b) for b in bridges],
        bridge_atoms=bridges,
        s_value=s,
        double_bond_bridge=bridges.index(list(p1)),
        trans_ring_size=trans,
    )


def _two_more_bridges(paths, p1, best):
    """The shortest pair of bridges disjoint from p1 and from each other."""
    used = set(p1)
    limit = None if best is None else best[0] - len(p1)
    others = [p for p in paths if not used.intersection(p)]
    chosen = None
    for ia, pa in enumerate(others):
        if limit is not None and 2 * len(pa) > limit:
            break
        for pb in others[ia + 1 :]:
            total = len(pa) + len(pb)
            if limit is not None and total > limit:
                break
            if set(pa).isdisjoint(pb):
                if chosen is None or total < len(chosen[0]) + len(chosen[1]):
                    chosen = (pa, pb)
                break
    return chosen


def _smallest_ring_with(mol: Chem.Mol, bond_ids: list[int]) -> int | None:
    sizes = [len(r) for r in mol.GetRingInfo().BondRings() if all(b in r for b in bond_ids)]
    return min(sizes) if sizes else None


def _cyclic_allenes(mol: Chem.Mol) -> list[Candidate]:
    found = []
    for atom in mol.GetAtoms():
        doubles = [b for b in atom.GetBonds() if b.GetBondType() == Chem.BondType.DOUBLE]
        if atom.GetAtomicNum() != 6 or len(doubles) != 2:
            continue
        ends = [b.GetOtherAtomIdx(atom.GetIdx()) for b in doubles]
        if any(mol.GetAtomWithIdx(e).GetAtomicNum() != 6 for e in ends):
            continue
        size = _smallest_ring_with(mol, [b.GetIdx() for b in doubles])
        if size:
            found.append(Candidate(kind=ALLENE, atoms=[ends[0], atom.GetIdx(), ends[1]], ring_size=size))
    found.sort(key=lambda c: (c.ring_size, c.atoms))
    return found


def _cycloalkynes(mol: Chem.Mol) -> list[Candidate]:
    found = []
    for bond in mol.GetBonds():
        if bond.GetBondType() != Chem.BondType.TRIPLE:
            continue
        i, j = bond.GetBeginAtomIdx(), bond.GetEndAtomIdx()
        if mol.GetAtomWithIdx(i).GetAtomicNum() != 6 or mol.GetAtomWithIdx(j).GetAtomicNum() != 6:
            continue
        size = _smallest_ring_with(mol, [bond.GetIdx()])
        if size:
            kind = ARYNE if is_aryne_bond(mol, bond.GetIdx()) else ALKYNE
            found.append(Candidate(kind=kind, atoms=[i, j], ring_size=size))
    found.sort(key=lambda c: (c.ring_size, c.atoms))
    return found


def is_aryne_bond(mol: Chem.Mol, bond_idx: int) -> bool:
    """A ring triple bond whose ring becomes aromatic when the bond is made double
    (benzyne, naphthalynes, hetarynes): the formal triple bond of an arene."""
    rw = Chem.RWMol(mol)
    bond = rw.GetBondWithIdx(bond_idx)
    bond.SetBondType(Chem.BondType.DOUBLE)
    for atom in (bond.GetBeginAtom(), bond.GetEndAtom()):
        atom.SetNoImplicit(False)
        atom.SetNumExplicitHs(0)
    probe = rw.GetMol()
    try:
        with rdBase.BlockLogs():
            Chem.SanitizeMol(probe)
    except Exception:  # noqa: BLE001 - a ring that cannot take the double bond is simply not an aryne
        return False
    return probe.GetBondWithIdx(bond_idx).GetIsAromatic()
