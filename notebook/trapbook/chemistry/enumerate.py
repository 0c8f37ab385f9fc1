"""Which strained intermediates a skeleton can hold, and the silyl precursors that release them.

A campaign starts from a saturated polycyclic skeleton: every bridgehead C=C it can carry,
and on request the cyclic allenes and cycloalkynes of its rings. Positions that the
skeleton's symmetry makes equivalent give the same intermediate, so they are merged by
RDKit's canonical atom ranks (ties kept: equal rank = symmetry-equivalent atom); the
canonical SMILES of each intermediate is checked to be new as well, so two classes that
rank alike but differ in structure are never merged.

Each intermediate is released by fluoride from a silyl (pseudo)halide: the 1,2-elimination
of `derive` run backwards. The silyl group may sit on either carbon and the leaving group
on the other; the new stereocentres give diastereomers that can behave oppositely
(antiperiplanar or not), which the alignment judges side by side. Every precursor is
checked to release exactly its intermediate. Diastereomers that cannot be built in 3D are
named apart, so a campaign shows them as impossible instead of failing on them.

A rough cost estimate of each campaign task lives here too (it needs RDKit): the campaign
starts the longest tasks first.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, field

from rdkit import Chem, rdBase
from rdkit.Chem import AllChem
from rdkit.Chem.EnumerateStereoisomers import EnumerateStereoisomers, StereoEnumerationOptions

from ..errors import ChemistryError
from . import bridgehead as bh
from .derive import intermediate_from_precursor
from .molecules import parse

#: kinds a skeleton can be asked for; bridgehead alkenes are always listed
KINDS = (bh.BRIDGEHEAD, bh.ALLENE, bh.ALKYNE)
KIND_WORDS = {"bridgehead": bh.BRIDGEHEAD, "allene": bh.ALLENE, "alkyne": bh.ALKYNE}
#: leaving groups a precursor may carry, as SMILES fragments bonded through their first atom
LEAVING_GROUPS = {"OTf": "OS(=O)(=O)C(F)(F)F", "Cl": "Cl", "Br": "Br", "I": "I"}
DEFAULT_LEAVING_GROUPS = ("OTf",)
#: short names of the candidates of a skeleton: BH1, BH2 ... (bridgehead), AL1 (allene), YN1 (alkyne)
_NAME_STEM = {bh.BRIDGEHEAD: "BH", bh.ALLENE: "AL", bh.ALKYNE: "YN"}
#: cyclic allenes and cycloalkynes are listed in rings up to this size (larger ones are unstrained)
MAX_SMALL_RING = 9
MAX_CANDIDATES = 500
MAX_SKELETON_ATOMS = 60
#: seed of the embedding test of a lone precursor isomer (fixed, so a plan is repeatable)
EMBED_SEED = 0xC0FFEE


@dataclass
class Precursor:
    smiles: str
    silyl_on: int
    leaving_group: str
    leaving_on: int


@dataclass
class Candidate:
    name: str
    smiles: str
    kind: str
    origin: str
    precursors: list[Precursor] = field(default_factory=list)

    def to_dict(self) -> dict:
        return asdict(self)


def _skeleton(smiles: str) -> Chem.Mol:
    mol = parse(smiles, "skeleton SMILES")
    if any(b.GetBondType() != Chem.BondType.SINGLE for b in mol.GetBonds()):
        raise ChemistryError(
            "the skeleton has double, triple or aromatic bonds",
            "give the saturated skeleton (e.g. C1CC2CCCC(C1)C2); the campaign places the unsaturation",
        )
    if mol.GetNumAtoms() > MAX_SKELETON_ATOMS:
        raise ChemistryError(
            f"the skeleton has {mol.GetNumAtoms()} heavy atoms, more than {MAX_SKELETON_ATOMS}",
            "give the polycyclic core alone; substituents do not change which bridgehead bonds exist",
        )
    if mol.GetRingInfo().NumRings() == 0:
        raise ChemistryError("the skeleton has no ring", "give a polycyclic skeleton, e.g. C1CC2CCCC(C1)C2")
    return mol


def _with_bonds(mol: Chem.Mol, changes: dict[tuple[int, int], Chem.BondType]) -> Chem.Mol | None:
    """The skeleton with some bonds raised, or None when a carbon has no hydrogen to give."""
    rw = Chem.RWMol(mol)
    for (i, j), order in changes.items():
        rw.GetBondBetweenAtoms(i, j).SetBondType(order)
    out = rw.GetMol()
    with rdBase.BlockLogs():
        try:
            Chem.SanitizeMol(out)
        except Exception:  # noqa: BLE001 - an over-valent carbon: that position cannot hold the bond
            return None
    return out


def _rank_key(ranks: list[int], atoms: list[int]) -> tuple:
    """Symmetry class of a unit: the ranks of its atoms, read in the direction that sorts first.

    Keyed together with the unit's canonical SMILES, so positions of equal rank merge only
    when they also give the same structure (equal ranks of two atoms do not by themselves
    make the bond between them equivalent to another)."""
    seq = [ranks[a] for a in atoms]
    return min(tuple(seq), tuple(reversed(seq)))


def _bridgehead_alkenes(mol: Chem.Mol, ranks: list[int]) -> dict[tuple, Chem.Mol]:
    found: dict[tuple, Chem.Mol] = {}
    for bond in mol.GetBonds():
        i, j = bond.GetBeginAtomIdx(), bond.GetEndAtomIdx()
        if not bond.IsInRing() or mol.GetAtomWithIdx(i).GetAtomicNum() != 6 or mol.GetAtomWithIdx(j).GetAtomicNum() != 6:
            continue
        alkene = _with_bonds(mol, {(i, j): Chem.BondType.DOUBLE})
        if alkene is not None and bh.perceive_mol(alkene).kind == bh.BRIDGEHEAD:
            found.setdefault(("bridgehead",) + _rank_key(ranks, [i, j]) + (Chem.MolToSmiles(alkene),), alkene)
    return found


def _small_rings(mol: Chem.Mol) -> list[tuple[int, ...]]:
    return [r for r in mol.GetRingInfo().AtomRings() if len(r) <= MAX_SMALL_RING]


def _ring_units(mol: Chem.Mol, ranks: list[int], kind: str) -> dict[tuple, Chem.Mol]:
    """Cycloalkynes (two ring neighbours) or cyclic allenes (three) of the skeleton's small rings."""
    found: dict[tuple, Chem.Mol] = {}
    span = 2 if kind == bh.ALKYNE else 3
    for ring in _small_rings(mol):
        n = len(ring)
        for k in range(n):
            atoms = [ring[(k + m) % n] for m in range(span)]
            if any(mol.GetAtomWithIdx(a).GetAtomicNum() != 6 for a in atoms):
                continue
            pairs = list(zip(atoms, atoms[1:]))
            order = Chem.BondType.TRIPLE if kind == bh.ALKYNE else Chem.BondType.DOUBLE
            made = _with_bonds(mol, {p: order for p in pairs})
            if made is not None and bh.perceive_mol(made).kind == kind:
                found.setdefault((kind,) + _rank_key(ranks, atoms) + (Chem.MolToSmiles(made),), made)
    return found


def intermediates_of_skeleton(smiles: str, kinds: tuple[str, ...] = (bh.BRIDGEHEAD,)) -> list[Candidate]:
    """Every symmetry-unique strained intermediate of the kinds asked for, most strained-looking first."""
    unknown = [k for k in kinds if k not in KINDS]
    if unknown:
        raise ChemistryError(f"unknown kind(s) {', '.join(map(repr, unknown))}", "choose from bridgehead, allene, alkyne")
    mol = _skeleton(smiles)
    ranks = list(Chem.CanonicalRankAtoms(mol, breakTies=False))
    made: dict[tuple, Chem.Mol] = {}
    if bh.BRIDGEHEAD in kinds:
        made.update(_bridgehead_alkenes(mol, ranks))
    for kind in (bh.ALLENE, bh.ALKYNE):
        if kind in kinds:
            made.update(_ring_units(mol, ranks, kind))
    seen: set[str] = set()
    out: list[Candidate] = []
    for inter in made.values():
        smi = Chem.MolToSmiles(inter)
        if smi in seen:
            continue
        seen.add(smi)
        out.append(Candidate("", smi, bh.perceive_mol(inter).kind, f"from the skeleton {Chem.MolToSmiles(mol)}"))
    out.sort(key=lambda c: (KINDS.index(c.kind) if c.kind in KINDS else 9, _s_value(c.smiles), c.smiles))
    counts: dict[str, int] = {}
    for cand in out:
        counts[cand.kind] = counts.get(cand.kind, 0) + 1
        cand.name = f"{_NAME_STEM.get(cand.kind, 'X')}{counts[cand.kind]}"
    return out


def _s_value(smiles: str) -> int:
    best = bh.perceive(smiles).best
    if best is None:
        return 99
    return best.s_value if best.s_value is not None else (best.ring_size or 99)


def unit_bonds(mol: Chem.Mol) -> list[tuple[int, int]]:
    """The bonds of the strained unit an elimination can form: one for an alkene or alkyne,
    either of the two of an allene."""
    best = bh.perceive_mol(mol).best
    if best is None:
        return []
    atoms = best.atoms
    return list(zip(atoms, atoms[1:]))


def precursors_of(smiles: str, leaving_groups: tuple[str, ...] = DEFAULT_LEAVING_GROUPS) -> list[Precursor]:
    """Silyl (pseudo)halides releasing the intermediate by 1,2-elimination.

    The new stereocentres are left open on purpose: `alignment.precursor_alignment` splits
    such a precursor into every diastereomer that embeds in 3D (tryEmbedding), drops the
    ones too strained to exist and judges the rest side by side; one place does that.
    """
    bad = [g for g in leaving_groups if g not in LEAVING_GROUPS]
    if bad:
        raise ChemistryError(f"unknown leaving group(s) {', '.join(map(repr, bad))}", f"choose from {', '.join(LEAVING_GROUPS)}")
    mol = parse(smiles, "intermediate SMILES")
    target = _flat(smiles)
    out: list[Precursor] = []
    seen: set[str] = set()
    for a, b in unit_bonds(mol):
        for si_on, x_on in ((a, b), (b, a)):
            for group in leaving_groups:
                made = _attach(mol, si_on, x_on, group)
                if made is None or made in seen:
                    continue
                released = _flat(intermediate_from_precursor(made))
                if released != target:  # conservation: the precursor must give back this very intermediate
                    raise ChemistryError(
                        f"precursor {made} releases {released}, not {target}",
                        "report the structure: the precursor builder is wrong here",
                    )
                seen.add(made)
                out.append(Precursor(made, si_on, group, x_on))
    return out


def _flat(smiles: str) -> str:
    """The constitution alone: a chiral intermediate (most bridgehead alkenes are) is released
    from each precursor diastereomer as one enantiomer or the other."""
    return Chem.MolToSmiles(parse(smiles), isomericSmiles=False)


def _attach(mol: Chem.Mol, si_on: int, x_on: int, group: str) -> str | None:
    """The intermediate with its new bond lowered by one, TMS on one carbon and the group on the other."""
    rw = Chem.RWMol(Chem.Mol(mol))
    Chem.Kekulize(rw, clearAromaticFlags=True)
    bond = rw.GetBondBetweenAtoms(si_on, x_on)
    lower = {Chem.BondType.DOUBLE: Chem.BondType.SINGLE, Chem.BondType.TRIPLE: Chem.BondType.DOUBLE}
    if bond.GetBondType() not in lower:
        return None
    bond.SetBondType(lower[bond.GetBondType()])
    bond.SetStereo(Chem.BondStereo.STEREONONE)
    silyl = Chem.MolFromSmiles("[Si](C)(C)C")
    leaving = Chem.MolFromSmiles(LEAVING_GROUPS[group])
    combo = Chem.RWMol(Chem.CombineMols(Chem.CombineMols(rw.GetMol(), silyl), leaving))
    n = rw.GetNumAtoms()
    combo.AddBond(si_on, n, Chem.BondType.SINGLE)
    combo.AddBond(x_on, n + silyl.GetNumAtoms(), Chem.BondType.SINGLE)
    for idx in (si_on, x_on):
        atom = combo.GetAtomWithIdx(idx)
        atom.SetNoImplicit(False)
        atom.SetNumExplicitHs(0)
    out = combo.GetMol()
    with rdBase.BlockLogs():
        try:
            Chem.SanitizeMol(out)
        except Exception:  # noqa: BLE001 - no hydrogen left on that carbon: no such precursor
            return None
    return Chem.MolToSmiles(out)


def candidates_from_lines(lines: list[str]) -> list[Candidate]:
    """Candidates as a file gives them: one SMILES a line, optionally a name after it; a line
    starting with # is a comment (only at the start: # inside a SMILES is a triple bond).

    A line that is not a structure is kept as a candidate with kind 'unreadable', so the
    campaign records its failure with the reason instead of dropping it.
    """
    out: list[Candidate] = []
    for number, raw in enumerate(lines, 1):
        text = raw.strip()
        if not text or text.startswith("#"):
            continue
        parts = text.split(None, 1)
        smiles, name = parts[0], (parts[1].strip() if len(parts) > 1 else f"line {number}")
        try:
            mol = parse(smiles, f"SMILES on line {number}")
            out.append(Candidate(name, Chem.MolToSmiles(mol), bh.perceive_mol(mol).kind, f"line {number}"))
        except ChemistryError as exc:
            out.append(Candidate(name, smiles, "unreadable", f"line {number}: {exc.message}"))
        if len(out) > MAX_CANDIDATES:
            raise ChemistryError(f"more than {MAX_CANDIDATES} candidates in the file", "split the list into several campaigns")
    return out


def diastereomer_split(precursor: str) -> tuple[list[str], list[str]]:
    """(buildable, impossible): the precursor's diastereomers as the alignment judges them,
    and those no 3-D structure could be built for.

    The buildable ones are the alignment's own (every diastereomer that embeds, one of each
    mirror pair), or the precursor as written when its open centres leave one real
    diastereomer or only enantiomers. The impossible ones (an in/out bridgehead, a double
    bond left at the bridgehead of a small bicycle) are named rather than silently dropped
    or sent to a worker to fail, so a campaign shows them as structures that cannot exist.
    """
    from .alignment import MAX_DIASTEREOMERS, embeddable_diastereomers

    mol = parse(precursor, "precursor SMILES")
    written = Chem.MolToSmiles(mol)
    with rdBase.BlockLogs():
        every, raw = _every_diastereomer(mol)
        if raw == 1:  # nothing open: RDKit's enumeration returns the molecule untried, so try it here
            return ([written], []) if _embeds(mol) else ([], [written])
        kept = [Chem.MolToSmiles(m) for m in embeddable_diastereomers(mol)]
    built = kept if len(kept) > 1 else [written] if kept else []
    if raw > MAX_DIASTEREOMERS:  # only a sample was tried: name none of the rest impossible
        return built, [] if kept else [written]
    return built, [smi for smi, mirror in every if smi not in kept and mirror not in kept]


def _every_diastereomer(mol: Chem.Mol) -> tuple[list[tuple[str, str]], int]:
    """(SMILES, mirror image's SMILES) of every stereoisomer of the open centres, one of each
    mirror pair, without asking whether it can be built, and how many settings of the open
    centres there are (1 when nothing is open: the embedding pass then tries nothing)."""
    from .alignment import _mirror

    opts = StereoEnumerationOptions(onlyUnassigned=True, tryEmbedding=False, unique=False, maxIsomers=0)
    out: list[tuple[str, str]] = []
    seen: set[str] = set()
    raw = 0
    for iso in EnumerateStereoisomers(mol, options=opts):
        raw += 1
        smi, mirror = Chem.MolToSmiles(iso), Chem.MolToSmiles(_mirror(iso))
        if smi not in seen and mirror not in seen:
            seen.update((smi, mirror))
            out.append((smi, mirror))
    return out, raw


def _embeds(mol: Chem.Mol) -> bool:
    """RDKit's own test of whether a stereoisomer is physical (the one `tryEmbedding` makes):
    one distance-geometry embedding with hydrogens."""
    return AllChem.EmbedMolecule(Chem.AddHs(mol), randomSeed=EMBED_SEED) >= 0


# ---------------------------------------------------------------- how long a task takes

#: growth of a task's cost per ring atom, measured on the fast tier (MMFF94 conformer search)
#: over the bridged bicycles of benchmarks/campaign.py: about 1.45 times per atom
COST_GROWTH_PER_RING_ATOM = 1.45
#: cost of a task relative to a fast-tier strain of the same ring system (measured roughly: an
#: accurate-tier strain adds GFN2-xTB optimisations, an alignment 60+ conformers of a precursor)
TASK_WEIGHT = {"fast": 1.0, "accurate": 8.0, "alignment": 30.0}
#: a cyclic allene's conformer search costs more than a bridgehead alkene's, a cycloalkyne's less
KIND_WEIGHT = {bh.ALLENE: 1.5, bh.ALKYNE: 0.85}


def work_estimate(tier: str, smiles: str) -> float:
    """A rough relative cost of a campaign task (strain at `tier`, or tier "alignment"), only to
    start the longest tasks first: the last ones left to finish are then the shortest, and no
    worker waits idle at the end while another finishes a long one."""
    mol = Chem.MolFromSmiles(smiles)
    if mol is None:
        return 0.0
    ring_atoms = sum(1 for a in mol.GetAtoms() if a.IsInRing())
    kind = bh.perceive_mol(mol).kind if tier != "alignment" else None
    return TASK_WEIGHT.get(tier, 1.0) * KIND_WEIGHT.get(kind, 1.0) * COST_GROWTH_PER_RING_ATOM**ring_atoms
