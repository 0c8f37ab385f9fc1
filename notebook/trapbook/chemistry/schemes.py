"""Reaction schemes behind every strain number, each checked for balance before use.

A strain energy is the energy change of a reaction in which the strained molecule
becomes unstrained ones while every kind of bond is kept, so that method errors
cancel. A scheme here is a list of species with signed coefficients: the strain is
the sum of coefficient x energy, positive when the strained molecule is higher.
Every scheme must have the same atoms (H included) on both sides; `assert_balanced`
refuses any scheme that does not, so no number is ever reported from an unbalanced one.

Kinds and their schemes:

* excess (olefin strain of Maier and Schleyer; for alkynes and allenes the excess
  over the saturated ring): intermediate - hydrogenated parent - (reference
  unsaturated - reference saturated), the reference an unstrained ring or chain with
  the same substitution at the unit;
* aryne: aryne + (Z)-alkene -> arene + alkyne; both sides add the same one H2;
* ring strain (cycloalkynes, cyclic allenes): the excess plus the strain of the
  saturated parent, the latter by a group-equivalent ring opening in which each heavy
  atom is taken from an acyclic molecule with the same neighbours (methyl caps).
"""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass, field
from fractions import Fraction

from rdkit import Chem

from trapbook.errors import ChemistryError

from . import bridgehead as bh
from . import conformers as cf


@dataclass
class Unit:
    """The bond(s) whose strain is computed, and what kind of unit they form."""

    kind: str
    atoms: list[int]
    bond_ids: list[int]
    candidate: bh.Candidate | None


@dataclass
class Term:
    coefficient: Fraction
    smiles: str
    role: str
    name: str | None = None


@dataclass
class Scheme:
    """A named reaction; strain = sum(coefficient * energy)."""

    quantity: str
    words: str
    terms: list[Term] = field(default_factory=list)

    def add(self, coefficient, smiles: str, role: str, name: str | None = None) -> None:
        self.terms.append(Term(Fraction(coefficient), smiles, role, name))

    def to_dict(self) -> dict:
        left = [_term_words(t) for t in self.terms if t.coefficient > 0]
        right = [_term_words(t) for t in self.terms if t.coefficient < 0]
        return {
            "quantity": self.quantity,
            "words": self.words,
            "equation": f"{' + '.join(left)} -> {' + '.join(right)}",
            "balanced": True,
        }


def _term_words(t: Term) -> str:
    c = abs(t.coefficient)
    lead = "" if c == 1 else f"{c} "
    return f"{lead}{t.name or t.smiles}"


# ---------------------------------------------------------------- balance


def element_counts(smiles: str) -> Counter:
    """Element counts of one molecule, hydrogens included."""
    mol = Chem.AddHs(bh.parse(smiles))
    return Counter(a.GetSymbol() for a in mol.GetAtoms())


def imbalance(scheme: Scheme) -> dict[str, Fraction]:
    """Element -> net count (strained side minus reference side); empty when balanced."""
    net: Counter = Counter()
    for t in scheme.terms:
        for el, n in element_counts(t.smiles).items():
            net[el] += t.coefficient * n
    return {el: n for el, n in net.items() if n != 0}


def assert_balanced(scheme: Scheme) -> None:
    """Refuse an unbalanced scheme: a strain number from it would be meaningless."""
    off = imbalance(scheme)
    if off:
        detail = ", ".join(f"{el} {'+' if n > 0 else ''}{n}" for el, n in sorted(off.items()))
        raise ChemistryError(
            f"The {scheme.quantity} scheme is not balanced ({detail} on the strained side); no number is reported.",
            "This structure needs a reference scheme the engine does not have; report it with the SMILES.",
        )


# ---------------------------------------------------------------- the strained unit


def find_unit(mol: Chem.Mol, perception: bh.Perception) -> Unit | None:
    """The perceived strained unit, or failing that the first non-aromatic ring C=C,
    so that ordinary and trans-cycloalkenes still get a number."""
    cand = perception.best
    if cand is not None:
        pairs = list(zip(cand.atoms, cand.atoms[1:]))
        bonds = [mol.GetBondBetweenAtoms(i, j).GetIdx() for i, j in pairs]
        return Unit(cand.kind, cand.atoms, bonds, cand)
    for b in mol.GetBonds():
        if (
            b.GetBondType() == Chem.BondType.DOUBLE
            and not b.GetIsAromatic()
            and mol.GetRingInfo().NumBondRings(b.GetIdx())
            and b.GetBeginAtom().GetAtomicNum() == 6
            and b.GetEndAtom().GetAtomicNum() == 6
        ):
            return Unit(RING_ALKENE, [b.GetBeginAtomIdx(), b.GetEndAtomIdx()], [b.GetIdx()], None)
    return None


RING_ALKENE = "ring alkene"


def parent_of(mol: Chem.Mol, unit: Unit) -> Chem.Mol:
    """The molecule the unit is measured against: the arene for an aryne (triple bond made
    double), otherwise the fully hydrogenated unit."""
    if unit.kind == bh.ARYNE:
        rw = Chem.RWMol(mol)
        bond = rw.GetBondWithIdx(unit.bond_ids[0])
        bond.SetBondType(Chem.BondType.DOUBLE)
        for atom in (bond.GetBeginAtom(), bond.GetEndAtom()):
            atom.SetNoImplicit(False)
            atom.SetNumExplicitHs(0)
        out = rw.GetMol()
        Chem.SanitizeMol(out)
        return Chem.MolFromSmiles(Chem.MolToSmiles(out))
    return cf.saturated(mol, unit.bond_ids)


# ---------------------------------------------------------------- reference pairs

_RING_SLOT = {6: "C", 7: "N", 8: "O", 16: "S"}
_CAP = {6: "C", 7: "N(C)C", 8: "OC", 9: "F", 14: "[Si](C)(C)C", 16: "SC", 17: "Cl", 35: "Br", 53: "I"}
_CHAIN_CAP = {**_CAP, 6: "CC"}
# the same caps written leading into the unit (for the left end of a Z-alkene)
_LEFT_CAP = {6: "CC", 7: "CN(C)", 8: "CO", 9: "F", 14: "C[Si](C)(C)", 16: "CS", 17: "Cl", 35: "Br", 53: "I"}
NAMES = {
    "C1=CCCCC1": "cyclohexene",
    "C1CCCCC1": "cyclohexane",
    "CC1=CCCCC1": "1-methylcyclohexene",
    "CC1CCCCC1": "methylcyclohexane",
    "CC1=C(C)CCCC1": "1,2-dimethylcyclohexene",
    "CC1CCCCC1C": "1,2-dimethylcyclohexane",
    "COC1=CCCCC1": "1-methoxycyclohexene",
    "COC1CCCCC1": "methoxycyclohexane",
    "C1=COCCC1": "3,4-dihydro-2H-pyran",
    "C1CCOCC1": "tetrahydropyran",
    "CCC=C=CCC": "hepta-3,4-diene",
    "CCCCCCC": "heptane",
    "CCC#CCC": "hex-3-yne",
    "CCCCCC": "hexane",
    "CC/C=C\\CC": "(Z)-hex-3-ene",
    "CC": "ethane",
    "CCC": "propane",
    "CC(C)C": "isobutane",
    "CC(C)(C)C": "neopentane",
    "C=C": "ethylene",
    "C#C": "acetylene",
    "COC": "dimethyl ether",
    "Cc1ccccc1C": "o-xylene",
}


def _substituents(mol: Chem.Mol, atom: int, exclude: set[int]) -> list[Chem.Atom]:
    """Heavy neighbours outside the unit, ring carbons first (they fill the reference ring)."""
    nbrs = [n for n in mol.GetAtomWithIdx(atom).GetNeighbors() if n.GetIdx() not in exclude and n.GetAtomicNum() > 1]
    ring = mol.GetRingInfo()

    def rank(n):
        return (n.GetAtomicNum() != 6, ring.NumAtomRings(n.GetIdx()) == 0, n.GetIdx())

    return sorted(nbrs, key=rank)


def _caps(atoms: list[Chem.Atom], table: dict) -> str:
    return "".join(f"({table.get(a.GetAtomicNum(), 'C')})" for a in atoms)


def _alkene_reference(mol: Chem.Mol, i: int, j: int) -> tuple[str, str, int, list[str]]:
    subs_i = _substituents(mol, i, {j})
    subs_j = _substituents(mol, j, {i})
    if not subs_i or not subs_j:
        raise ChemistryError(
            "The double bond has an unsubstituted (=CH2) end; no ring reference applies.",
            "Olefin strain is defined here for ring double bonds.",
        )
    slot_i = _RING_SLOT.get(subs_i[0].GetAtomicNum(), "C")
    slot_j = _RING_SLOT.get(subs_j[0].GetAtomicNum(), "C")
    caps_i, caps_j = _caps(subs_i[1:], _CAP), _caps(subs_j[1:], _CAP)
    olefin = f"C1{caps_i}=C{caps_j}{slot_j}CC{slot_i}1"
    alkane = f"C1{caps_i}C{caps_j}{slot_j}CC{slot_i}1"
    hetero = sorted({a.GetSymbol() for a in subs_i + subs_j if a.GetAtomicNum() != 6})
    return olefin, alkane, len(subs_i) + len(subs_j), hetero


def _chain_reference(mol: Chem.Mol, unit: Unit) -> tuple[str, str, int, list[str]]:
    """Open-chain allene, alkyne or (for arynes) alkyne/Z-alkene pair, ethyl groups where the ring continues."""
    first, last = unit.atoms[0], unit.atoms[-1]
    inside = set(unit.atoms)
    subs_a = _substituents(mol, first, inside)
    subs_b = _substituents(mol, last, inside)
    caps_a, caps_b = _caps(subs_a, _CHAIN_CAP), _caps(subs_b, _CHAIN_CAP)
    if unit.kind == bh.ALLENE:
        unsat, sat = f"C{caps_a}=C=C{caps_b}", f"C{caps_a}CC{caps_b}"
    elif unit.kind == bh.ARYNE:
        left = _LEFT_CAP.get(subs_a[0].GetAtomicNum(), "CC")
        right = _CHAIN_CAP.get(subs_b[0].GetAtomicNum(), "CC")
        unsat, sat = f"{left}C#C{right}", f"{left}/C=C\\{right}"
    else:
        unsat, sat = f"C{caps_a}#C{caps_b}", f"C{caps_a}C{caps_b}"
    hetero = sorted({a.GetSymbol() for a in subs_a + subs_b if a.GetAtomicNum() != 6})
    return unsat, sat, len(subs_a) + len(subs_b), hetero


def canonical_smiles(smiles: str) -> str:
    return Chem.MolToSmiles(bh.parse(smiles))


def reference_pair(mol: Chem.Mol, unit: Unit) -> dict:
    """The unstrained pair with the same substitution at the unit, named where we can."""
    if unit.kind in (bh.ALLENE, bh.ALKYNE, bh.ARYNE):
        unsat, sat, n_sub, hetero = _chain_reference(mol, unit)
    else:
        unsat, sat, n_sub, hetero = _alkene_reference(mol, *unit.atoms)
    unsat, sat = canonical_smiles(unsat), canonical_smiles(sat)
    words = {1: "monosubstituted", 2: "disubstituted", 3: "trisubstituted", 4: "tetrasubstituted"}
    return {
        "unsaturated": {"name": NAMES.get(unsat), "smiles": unsat},
        "saturated": {"name": NAMES.get(sat), "smiles": sat},
        "substitution": words.get(n_sub, f"{n_sub} substituents"),
        "heteroatom_neighbours": hetero,
    }


# ---------------------------------------------------------------- the schemes


def unit_scheme(mol: Chem.Mol, unit: Unit, parent: Chem.Mol, ref: dict) -> Scheme:
    """Olefin strain (alkenes), excess over the saturated ring (alkynes, allenes) or aryne strain."""
    if unit.kind == bh.ARYNE:
        quantity = "aryne strain"
        words = "aryne + (Z)-alkene -> arene + alkyne: the strain of the formal triple bond against an open-chain alkyne"
    elif unit.kind in (bh.ALKYNE, bh.ALLENE):
        quantity = "excess over the saturated ring"
        words = (
            "intermediate + open-chain saturated reference -> saturated ring + open-chain unsaturated reference: "
            "what the unit adds to the strain the ring already has"
        )
    else:
        quantity = "olefin strain"
        words = "olefin + reference alkane -> hydrogenated parent + reference olefin (Maier–Schleyer olefin strain)"
    scheme = Scheme(quantity, words)
    scheme.add(1, Chem.MolToSmiles(mol), "intermediate")
    scheme.add(-1, Chem.MolToSmiles(parent), "arene" if unit.kind == bh.ARYNE else "hydrogenated parent")
    scheme.add(-1, ref["unsaturated"]["smiles"], "reference unsaturated", ref["unsaturated"]["name"])
    scheme.add(1, ref["saturated"]["smiles"], "reference saturated", ref["saturated"]["name"])
    assert_balanced(scheme)
    return scheme


_CAP_OF_BOND = {
    Chem.BondType.SINGLE: ("[CH3]", "CC"),
    Chem.BondType.DOUBLE: ("[CH2]", "C=C"),
    Chem.BondType.TRIPLE: ("[CH]", "C#C"),
}


def ring_strain_scheme(parent: Chem.Mol) -> Scheme | None:
    """Group-equivalent ring opening of the saturated parent: each heavy atom is taken
    from the acyclic molecule in which its heavy neighbours are methyl (methylene,
    methine) caps, and each cap is paid back as half an ethane (ethylene, acetylene).
    An aromatic ring system is one group (the arene with methyl caps, e.g. o-xylene for a
    fused benzene), so its aromatic stabilisation is never counted as strain.

    None when a ring holds a non-aromatic multiple bond: no acyclic group matches it.
    """
    ring = parent.GetRingInfo()
    if any(
        ring.NumBondRings(b.GetIdx()) and b.GetBondType() != Chem.BondType.SINGLE and not b.GetIsAromatic()
        for b in parent.GetBonds()
    ):
        return None
    coeffs: Counter = Counter()
    systems = _aromatic_systems(parent)
    in_system = set().union(*systems) if systems else set()
    pieces = [_fragment(a) for a in parent.GetAtoms() if a.GetIdx() not in in_system]
    pieces += [_system_fragment(parent, atoms) for atoms in systems]
    for frag, caps in pieces:
        coeffs[frag] += 1
        for donor in caps:
            coeffs[donor] -= Fraction(1, 2)
    scheme = Scheme(
        "ring strain of the saturated parent",
        "saturated parent + caps -> acyclic molecules (and capped arenes) with the same atom neighbourhoods",
    )
    scheme.add(1, Chem.MolToSmiles(parent), "saturated parent")
    for smiles, c in sorted(coeffs.items()):
        if c:
            scheme.add(-c, smiles, "group reference", NAMES.get(smiles))
    assert_balanced(scheme)
    return scheme


def _aromatic_systems(mol: Chem.Mol) -> list[set[int]]:
    """Atoms of each aromatic ring system (joined through aromatic bonds)."""
    systems: list[set[int]] = []
    seen: set[int] = set()
    for atom in mol.GetAtoms():
        if not atom.GetIsAromatic() or atom.GetIdx() in seen:
            continue
        group, todo = {atom.GetIdx()}, [atom]
        while todo:
            cur = todo.pop()
            for bond in cur.GetBonds():
                other = bond.GetOtherAtom(cur)
                if bond.GetIsAromatic() and other.GetIdx() not in group:
                    group.add(other.GetIdx())
                    todo.append(other)
        seen |= group
        systems.append(group)
    return systems


def _system_fragment(mol: Chem.Mol, atoms: set[int]) -> tuple[str, list[str]]:
    """An aromatic ring system with its own hydrogens and methyl caps where it is attached."""
    rw = Chem.RWMol()
    index = {}
    for i in sorted(atoms):
        src = mol.GetAtomWithIdx(i)
        atom = Chem.Atom(src.GetAtomicNum())
        atom.SetFormalCharge(src.GetFormalCharge())
        atom.SetNumExplicitHs(src.GetTotalNumHs())
        atom.SetNoImplicit(True)
        atom.SetIsAromatic(True)
        index[i] = rw.AddAtom(atom)
    donors = []
    for bond in mol.GetBonds():
        i, j = bond.GetBeginAtomIdx(), bond.GetEndAtomIdx()
        if i in atoms and j in atoms:
            rw.AddBond(index[i], index[j], bond.GetBondType())
            continue
        if (i in atoms) == (j in atoms) or mol.GetAtomWithIdx(j if i in atoms else i).GetAtomicNum() == 1:
            continue
        cap_smiles, donor = _CAP_OF_BOND.get(bond.GetBondType(), (None, None))
        if cap_smiles is None:
            raise ChemistryError("A bond type the ring-strain scheme cannot cap.", "Report the structure.")
        k = rw.AddAtom(Chem.Atom(Chem.MolFromSmiles(cap_smiles).GetAtomWithIdx(0)))
        rw.AddBond(index[i if i in atoms else j], k, bond.GetBondType())
        donors.append(donor)
    frag = rw.GetMol()
    Chem.SanitizeMol(frag)
    return Chem.MolToSmiles(frag), donors


def _fragment(atom: Chem.Atom) -> tuple[str, list[str]]:
    """The atom with its own hydrogens and capped heavy neighbours; the caps' donors."""
    rw = Chem.RWMol()
    centre = Chem.Atom(atom.GetAtomicNum())
    centre.SetFormalCharge(atom.GetFormalCharge())
    centre.SetNumExplicitHs(atom.GetTotalNumHs())
    centre.SetNoImplicit(True)
    c = rw.AddAtom(centre)
    donors = []
    for bond in atom.GetBonds():
        if bond.GetOtherAtom(atom).GetAtomicNum() == 1:
            continue
        cap_smiles, donor = _CAP_OF_BOND.get(bond.GetBondType(), (None, None))
        if cap_smiles is None:
            raise ChemistryError("A bond type the ring-strain scheme cannot cap.", "Report the structure.")
        cap = Chem.MolFromSmiles(cap_smiles).GetAtomWithIdx(0)
        k = rw.AddAtom(Chem.Atom(cap))
        rw.AddBond(c, k, bond.GetBondType())
        donors.append(donor)
    frag = rw.GetMol()
    Chem.SanitizeMol(frag)
    return Chem.MolToSmiles(frag), donors
