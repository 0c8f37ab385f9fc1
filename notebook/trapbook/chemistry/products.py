"""The cycloadducts a trapping experiment is expected to give, with their stereoisomers.

A strained intermediate lives for microseconds; what the chemist isolates is its adduct
with the trap. Knowing the adducts in advance, stereoisomers included, lets a recorded
product be checked and an unexpected one recognised. Reactions are RDKit reaction
templates run on Kekulé forms (an aromatic trap such as anthracene reacts through the
Kekulé structure that holds the diene); stereoisomers are enumerated, embedded in 3D
(bounded, seeded ETKDG) and kept only if they exist in 3D and keep the alkene's cis/trans
relations (a concerted cycloaddition is suprafacial on the strained bond).

Atoms are numbered in the order of the intermediate's canonical SMILES (C1 = first atom),
so "C1=C2" names the same bond every time for the same structure.
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field
from functools import lru_cache

from rdkit import Chem
from rdkit.Chem import rdChemReactions, rdDistGeom, rdForceFieldHelpers, rdMolTransforms
from rdkit.Chem.EnumerateStereoisomers import EnumerateStereoisomers, GetStereoisomerCount, StereoEnumerationOptions

from ..errors import ChemistryError
from . import bridgehead as bh
from .molecules import canonical, parse
from .masses import element_counts

EMBED_SEED = 20240607  # any fixed number: the same input gives the same isomers every time


@dataclass(frozen=True)
class Limits:
    """Bounds on the work, so a large cage or a many-centred trap cannot stall the notebook."""

    max_isomers_per_adduct: int = 32
    max_products: int = 48
    # An isomer that exists embeds within a few tries of one seed or the next; more tries
    # only slow down the isomers that cannot exist (each miss costs the full budget).
    embed_iterations: int = 4
    embed_seeds: int = 2
    seconds: float = 60.0
    # Our choice: a stereoisomer this far (MMFF94, kcal/mol) above the best of its
    # constitution is not formed in a trapping experiment; in/out bridgehead isomers lie
    # some 60 kcal/mol above, exo/endo pairs within a few.
    energy_window_kcal: float = 30.0


@dataclass
class Site:
    """The strained bond that reacts: its two atoms, what kind of unit holds it, its label."""

    kind: str
    atoms: tuple[int, int]
    label: str
    triple: bool


@dataclass
class Result:
    intermediate: str
    kind: str
    products: list[dict] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    truncated: bool = False


# Each trap family: the reactant pattern (Kekulé), the product pattern, and the name of the
# cycloaddition. '{ene}' becomes the strained bond, '{new}' its order after the reaction.
# The diene termini must each sit in one ring only, so the benzo rings of fluorene or indene
# are not taken for a diene.
_FIVE_RING_DIENE = (
    "[4+2]",
    "[#6;R1:1]1=[#6:2]-[#6:3]=[#6;R1:4]-[#8,#7,#6X4:7]-1",
    "[#6:1]12-[#6:2]=[#6:3]-[#6:4](-[*:7]-1)-[#6:6]{new}[#6:5]-2",
)
_ANTHRACENE = (
    "[4+2]",
    "[#6;R1:1]1=[#6;R2:2]-[#6;R2:3]=[#6;R1:4]-[#6;R2:7]~[#6;R2:8]-1",
    "[#6:1]12-[#6:2]=[#6:3]-[#6:4](-[#6:7]~[#6:8]-1)-[#6:6]{new}[#6:5]-2",
)
_NITRONE = ("[3+2]", "[#6:1]=[#7+:2]-[#8-:3]", "[#6:1]1-[#7+0:2]-[#8+0:3]-[#6:6]{new}[#6:5]-1")
_AZIDE = ("[3+2]", "[#7:1]=[#7+:2]=[#7-:3]", "[#7:1]1-[#7+0:2]=[#7+0:3]-[#6:6]{new}[#6:5]-1")
_AZIDE_ALT = ("[3+2]", "[#7-:1]-[#7+:2]#[#7:3]", "[#7+0:1]1-[#7+0:2]=[#7:3]-[#6:6]{new}[#6:5]-1")
_NITRILE_OXIDE = ("[3+2]", "[#6:1]#[#7+:2]-[#8-:3]", "[#6:1]1=[#7+0:2]-[#8+0:3]-[#6:6]{new}[#6:5]-1")
TEMPLATES = {
    "diene": _FIVE_RING_DIENE, "anthracene": _ANTHRACENE, "nitrone": _NITRONE,
    "azide": _AZIDE, "azide ": _AZIDE_ALT, "nitrile oxide": _NITRILE_OXIDE,
}


@lru_cache(maxsize=64)
def reaction(name: str, triple: bool) -> rdChemReactions.ChemicalReaction:
    order, trap, product = TEMPLATES[name]
    ene, new = ("[#6:5]#[#6:6]", "=") if triple else ("[#6:5]=[#6:6]", "-")
    rxn = rdChemReactions.ReactionFromSmarts(f"{trap}.{ene}>>{product.format(new=new)}")
    rxn.Initialize()
    return rxn


def atom_label(mol: Chem.Mol, idx: int) -> str:
    return f"{mol.GetAtomWithIdx(idx).GetSymbol()}{idx + 1}"


def strained_sites(mol: Chem.Mol) -> tuple[str, list[Site]]:
    """The strained bonds that react, from the same ring perception the strain engine uses.

    A cyclic allene reacts at either C=C, so it gives two sites; the other kinds give one.
    """
    perception = bh.perceive_mol(mol)
    best = perception.best
    if best is None:
        raise ChemistryError(
            f"no strained bond found in the intermediate: {perception.message}",
            "give a bridgehead alkene, cyclic allene, cycloalkyne or aryne (e.g. 'C12=CCCC(C1)CCC2')",
        )
    if best.kind == bh.ALLENE:
        end0, centre, end1 = best.atoms
        pairs = [(end0, centre), (centre, end1)]
    else:
        pairs = [tuple(best.atoms[:2])]
    sites = []
    pairs = [tuple(sorted(p)) for p in pairs]
    for a, b in pairs:
        bond = mol.GetBondBetweenAtoms(a, b)
        joint = "#" if bond.GetBondType() == Chem.BondType.TRIPLE else "="
        sites.append(Site(best.kind, (a, b), f"{atom_label(mol, a)}{joint}{atom_label(mol, b)}",
                          bond.GetBondType() == Chem.BondType.TRIPLE))
    return best.kind, sites


def kekule_forms(mol: Chem.Mol, limit: int = 16) -> list[Chem.Mol]:
    """Kekulé structures with the same charges as written: the dienes an aromatic trap offers."""
    base = Chem.Mol(mol)
    Chem.Kekulize(base, clearAromaticFlags=True)
    forms = [base]
    if not any(a.GetIsAromatic() for a in mol.GetAtoms()):
        return forms
    charges = [a.GetFormalCharge() for a in mol.GetAtoms()]
    seen = {tuple(int(b.GetBondTypeAsDouble()) for b in base.GetBonds())}
    supplier = Chem.ResonanceMolSupplier(mol, Chem.KEKULE_ALL)
    for i in range(min(len(supplier), limit)):
        res = supplier[i]
        if res is None or [a.GetFormalCharge() for a in res.GetAtoms()] != charges:
            continue
        form = Chem.RWMol(mol)
        for bond, src in zip(form.GetBonds(), res.GetBonds()):
            bond.SetBondType(src.GetBondType())
            bond.SetIsAromatic(False)
        for atom in form.GetAtoms():
            atom.SetIsAromatic(False)
        key = tuple(int(b.GetBondTypeAsDouble()) for b in form.GetBonds())
        if key not in seen and all(b.GetBondType() != Chem.BondType.AROMATIC for b in form.GetBonds()):
            seen.add(key)
            forms.append(form.GetMol())
    return forms


def trap_family(trap: Chem.Mol, template: str, prod: Chem.Mol) -> str:
    """The trade's name for the diene or dipole that reacted, for the product's words."""
    if template.startswith("azide"):
        return "azide"
    if template != "diene":
        return template
    bridge = next(a for a in prod.GetAtoms() if a.GetPropsAsDict().get("old_mapno") == 7)
    inner = [a for a in prod.GetAtoms() if a.GetPropsAsDict().get("old_mapno") in (2, 3)]
    fused = all(trap.GetRingInfo().NumAtomRings(a.GetIntProp("react_atom_idx")) > 1 for a in inner)
    element = bridge.GetSymbol()
    if element == "O":
        return "isobenzofuran" if fused else "furan"
    if element == "N":
        return "isoindole" if fused else "pyrrole"
    return "cyclopentadiene"


def _mapped(prod: Chem.Mol, reactant: int) -> dict[int, int]:
    """Reactant atom index -> product atom index, for one reactant of a template."""
    out = {}
    for atom in prod.GetAtoms():
        props = atom.GetPropsAsDict()
        if props.get("react_idx") == reactant and "react_atom_idx" in props:
            out[props["react_atom_idx"]] = atom.GetIdx()
    return out


def _by_mapno(prod: Chem.Mol) -> dict[int, int]:
    return {a.GetIntProp("old_mapno"): a.GetIdx() for a in prod.GetAtoms() if a.HasProp("old_mapno")}


@dataclass
class Raw:
    """One constitution of an adduct before stereo: the molecule and what each atom was."""

    mol: Chem.Mol
    smiles: str
    site: Site
    order: str
    family: str
    from_intermediate: dict[int, int]
    bridge: int | None
    alkene: tuple[int, int] | None
    regio: str


def _regio(inter: Chem.Mol, prod: Chem.Mol, from_inter: dict[int, int], site: Site) -> str:
    """Which trap atom bonded to which end of the strained bond: tells regioisomers apart."""
    by_map = _by_mapno(prod)
    first = prod.GetAtomWithIdx(by_map[1])
    last = prod.GetAtomWithIdx(by_map[3] if 3 in by_map and 4 not in by_map else by_map[4])
    end = from_inter[site.atoms[0]]
    near = first if prod.GetBondBetweenAtoms(first.GetIdx(), end) else last
    trap_atom = f"{near.GetSymbol()}{near.GetIntProp('react_atom_idx') + 1}"
    return f"trap {trap_atom} on {atom_label(inter, site.atoms[0])}"


def _raw_adducts(inter: Chem.Mol, inter_k: Chem.Mol, trap: Chem.Mol, site: Site) -> list[Raw]:
    found: dict[str, Raw] = {}
    for form in kekule_forms(trap):
        for name in TEMPLATES:
            rxn = reaction(name, site.triple)
            for (prod,) in rxn.RunReactants((form, inter_k), maxProducts=200):
                from_inter = _mapped(prod, 1)
                by_map = _by_mapno(prod)
                hit = {a for a, p in from_inter.items() if p in (by_map.get(5), by_map.get(6))}
                if hit != set(site.atoms):
                    continue
                try:
                    Chem.SanitizeMol(prod)
                except (Chem.rdchem.KekulizeException, Chem.rdchem.AtomValenceException):
                    continue  # this Kekulé form cannot carry that product; another form may
                flat = Chem.MolToSmiles(prod)
                if flat in found:
                    continue
                alkene = (by_map[2], by_map[3]) if 2 in by_map and name in ("diene", "anthracene") else None
                found[flat] = Raw(prod, flat, site, TEMPLATES[name][0], trap_family(trap, name, prod), from_inter,
                                  by_map.get(7) if name == "diene" else None, alkene,
                                  _regio(inter, prod, from_inter, site))
    return list(found.values())


def _check_balance(product: str, *parts: str) -> None:
    """An adduct holds exactly the atoms of its partners: conservation, checked every time."""
    total: dict[str, int] = {}
    for part in parts:
        for k, v in element_counts(part).items():
            total[k] = total.get(k, 0) + v
    if element_counts(product) != total:
        raise ChemistryError(f"atoms do not balance for product {product}", "report this structure: the template is wrong")


def _embed(mol: Chem.Mol, limits: Limits) -> Chem.Mol | None:
    """A 3D model (MMFF94-relaxed where MMFF has parameters) that keeps every assigned
    stereocentre, or None if none can be built."""
    molh = Chem.AddHs(mol)
    params = rdDistGeom.ETKDGv3()
    params.maxIterations = limits.embed_iterations
    params.enforceChirality = True
    params.numThreads = 1
    for attempt in range(limits.embed_seeds):
        params.randomSeed = EMBED_SEED + attempt
        if rdDistGeom.EmbedMolecule(molh, params) == 0:
            break
    else:
        return None
    props = rdForceFieldHelpers.MMFFGetMoleculeProperties(molh) if limits.energy_window_kcal else None
    if props is not None:
        field = rdForceFieldHelpers.MMFFGetMoleculeForceField(molh, props)
        field.Minimize(maxIts=500)
        molh.SetDoubleProp("mmff_kcal", field.CalcEnergy())
    check = Chem.Mol(molh)
    Chem.AssignStereochemistryFrom3D(check)
    if Chem.MolToSmiles(Chem.RemoveHs(check)) != Chem.MolToSmiles(mol):
        return None
    return molh


def _cis_pairs(inter: Chem.Mol, site: Site) -> list[tuple[int | None, int | None]]:
    """Substituent pairs that are cis across the strained C=C (None stands for a hydrogen).

    The graph decides: in a ring of seven atoms or fewer a double bond is cis, so its ring
    neighbours are cis, and so are the two substituents outside that ring. A larger ring
    (trans-cyclooctene) is judged only if the SMILES gives the bond's E/Z.
    """
    a, b = site.atoms
    bond = inter.GetBondBetweenAtoms(a, b)
    if site.triple or bond.GetBondType() != Chem.BondType.DOUBLE:
        return []
    subs = {}
    for x in (a, b):
        atom = inter.GetAtomWithIdx(x)
        if sum(1 for y in atom.GetBonds() if y.GetBondType() == Chem.BondType.DOUBLE) > 1:
            return []  # an allene's central carbon becomes sp2 again: no cis/trans to keep
        subs[x] = [n.GetIdx() for n in atom.GetNeighbors() if n.GetIdx() not in (a, b)] + [None] * atom.GetTotalNumHs()
    if any(len(v) != 2 for v in subs.values()):
        return []
    rings = [r for r in inter.GetRingInfo().AtomRings() if a in r and b in r]
    if bond.GetStereo() in (Chem.BondStereo.STEREOE, Chem.BondStereo.STEREOTRANS, Chem.BondStereo.STEREOZ, Chem.BondStereo.STEREOCIS):
        s, t = bond.GetStereoAtoms()
        s, t = (s, t) if s in subs[a] else (t, s)
        if bond.GetStereo() in (Chem.BondStereo.STEREOE, Chem.BondStereo.STEREOTRANS):
            t = next(x for x in subs[b] if x != t)
    elif rings and len(min(rings, key=len)) <= 7:
        ring = min(rings, key=len)
        s, t = next(x for x in subs[a] if x in ring), next(x for x in subs[b] if x in ring)
    else:
        return []
    other = (next(x for x in subs[a] if x != s), next(x for x in subs[b] if x != t))
    return [(s, t), other]


def _suprafacial(molh: Chem.Mol, raw: Raw, pairs) -> bool:
    """A syn addition keeps each cis pair eclipsed-nearest in the Newman view along the old
    C=C: the cis partner of a substituent is still the one closest to it in dihedral angle.
    (A plain 90° cut fails in small bicycles, where every dihedral is near 60°.)"""
    if not pairs:
        return True
    conf = molh.GetConformer()
    a, b = (raw.from_intermediate[x] for x in raw.site.atoms)

    def product_atom(x, centre):
        if x is not None:
            return raw.from_intermediate[x]
        return next(n.GetIdx() for n in molh.GetAtomWithIdx(centre).GetNeighbors() if n.GetAtomicNum() == 1)

    for s, t in pairs:
        ps, pt = product_atom(s, a), product_atom(t, b)
        around_b = [n.GetIdx() for n in molh.GetAtomWithIdx(b).GetNeighbors() if n.GetIdx() != a]
        nearest = min(around_b, key=lambda n: abs(rdMolTransforms.GetDihedralDeg(conf, ps, a, b, n)))
        if nearest != pt:
            return False
    return True


def _endo_exo(molh: Chem.Mol, raw: Raw, inter: Chem.Mol) -> str | None:
    """'exo' when the intermediate's ring lies on the side of the one-atom bridge, 'endo' when
    it lies under the new C=C (the trade's convention for bridged bicyclic adducts)."""
    if raw.bridge is None or raw.alkene is None:
        return None
    ring_sets = [set(r) for r in inter.GetRingInfo().AtomRings() if set(raw.site.atoms) <= set(r)]
    if not ring_sets:
        return None
    ring = min(ring_sets, key=len)
    conf = molh.GetConformer()
    pos = lambda i: conf.GetAtomPosition(i)  # noqa: E731
    mid = (pos(raw.alkene[0]) + pos(raw.alkene[1])) * 0.5
    sides = set()
    for x in raw.site.atoms:
        if any(bd.GetBondType() != Chem.BondType.SINGLE for bd in raw.mol.GetAtomWithIdx(raw.from_intermediate[x]).GetBonds()):
            continue  # an aryne, alkyne or allene centre stays sp2: its ring points neither way
        for n in inter.GetAtomWithIdx(x).GetNeighbors():
            if n.GetIdx() in ring and n.GetIdx() not in raw.site.atoms:
                p = pos(raw.from_intermediate[n.GetIdx()])
                sides.add("exo" if (p - pos(raw.bridge)).Length() < (p - mid).Length() else "endo")
    return sides.pop() if len(sides) == 1 else None


def mirror_smiles(mol: Chem.Mol) -> str:
    flipped = Chem.Mol(mol)
    for atom in flipped.GetAtoms():
        tag = atom.GetChiralTag()
        if tag == Chem.ChiralType.CHI_TETRAHEDRAL_CW:
            atom.SetChiralTag(Chem.ChiralType.CHI_TETRAHEDRAL_CCW)
        elif tag == Chem.ChiralType.CHI_TETRAHEDRAL_CCW:
            atom.SetChiralTag(Chem.ChiralType.CHI_TETRAHEDRAL_CW)
    return Chem.MolToSmiles(flipped)


def has_stereo(mol: Chem.Mol) -> bool:
    """Whether the SMILES assigns any stereocentre or E/Z: if not, the adducts form as racemates."""
    return any(a.GetChiralTag() != Chem.ChiralType.CHI_UNSPECIFIED for a in mol.GetAtoms()) or \
        any(b.GetStereo() != Chem.BondStereo.STEREONONE for b in mol.GetBonds())


def _one_hand(mol: Chem.Mol) -> Chem.Mol:
    """The molecule with its first open stereocentre fixed: every enantiomer pair has exactly
    one member of this hand, so a racemic enumeration needs only half the isomers."""
    out = Chem.Mol(mol)
    centres = Chem.FindMolChiralCenters(out, includeUnassigned=True, useLegacyImplementation=False)
    open_centres = [idx for idx, label in centres if label == "?"]
    if open_centres:
        out.GetAtomWithIdx(open_centres[0]).SetChiralTag(Chem.ChiralType.CHI_TETRAHEDRAL_CW)
    return out


def _candidates(raw: Raw, racemic: bool, limits: Limits, deadline: float, result: Result):
    """(smiles, key, 3D model or None) for each stereoisomer, bounded in number and time."""
    opts = StereoEnumerationOptions(onlyUnassigned=True, unique=True, tryEmbedding=False,
                                    maxIsomers=limits.max_isomers_per_adduct, rand=EMBED_SEED)
    start = _one_hand(raw.mol) if racemic else raw.mol
    if GetStereoisomerCount(start, opts) > limits.max_isomers_per_adduct:
        result.truncated = True
        result.notes.append(f"{raw.smiles}: more than {limits.max_isomers_per_adduct} stereoisomers; a seeded sample was checked")
    seen: set[str] = set()
    for iso in EnumerateStereoisomers(start, opts):
        if time.monotonic() > deadline:
            result.truncated = True
            result.notes.append(f"time limit of {limits.seconds:g} s reached while checking {raw.smiles}")
            return
        Chem.AssignStereochemistry(iso, cleanIt=True, force=True)
        smiles, mirror = Chem.MolToSmiles(iso), mirror_smiles(iso)
        key = min(smiles, mirror) if racemic else smiles
        if key not in seen:
            seen.add(key)
            yield key, smiles != mirror, _embed(iso, limits)


def _stereoisomers(raw: Raw, inter: Chem.Mol, racemic: bool, limits: Limits, deadline: float, result: Result) -> list[dict]:
    """Every stereoisomer of one constitution that exists in 3D, lies within the energy
    window of the best one and came from a suprafacial addition; enantiomers merged into one
    racemic entry when nothing chiral went in."""
    pairs = _cis_pairs(inter, raw.site)
    kept: dict[str, dict] = {}
    dropped = {"no 3D structure keeps them": 0, f"they need anti addition across {raw.site.label}": 0,
               f"more than {limits.energy_window_kcal:g} kcal/mol (MMFF94) above the best isomer": 0}
    reasons = list(dropped)
    for key, chiral, molh in _candidates(raw, racemic, limits, deadline, result):
        if molh is None:
            dropped[reasons[0]] += 1
        elif not _suprafacial(molh, raw, pairs):
            dropped[reasons[1]] += 1
        else:
            energy = molh.GetDoubleProp("mmff_kcal") if molh.HasProp("mmff_kcal") else None
            kept[key] = {"smiles": key, "endo_exo": _endo_exo(molh, raw, inter), "chiral": chiral, "energy": energy}
    energies = [k["energy"] for k in kept.values() if k["energy"] is not None]
    if energies and limits.energy_window_kcal:
        for key in [k for k, v in kept.items() if v["energy"] is not None and v["energy"] - min(energies) > limits.energy_window_kcal]:
            del kept[key]
            dropped[reasons[2]] += 1
    for reason, n in dropped.items():
        if n:
            result.notes.append(f"{raw.smiles}: {n} stereoisomer(s) dropped, {reason}")
    return [kept[k] for k in sorted(kept)]


def _words(raw: Raw, iso: dict, trap_label: str, index: int, count: int, show_regio: bool, racemic: bool) -> str:
    text = f"{raw.order} adduct of {trap_label} across {raw.site.label}"
    details = []
    if iso["endo_exo"]:
        details.append(iso["endo_exo"])
    elif count > 1:
        details.append(f"diastereomer {index + 1} of {count}")
    if show_regio:
        details.append(raw.regio)
    if iso["chiral"]:
        details.append("racemic" if racemic else "as drawn")
    if raw.site.kind == bh.ARYNE:
        details.append("aromatised")
    return text + (f", {', '.join(details)}" if details else "")


def adducts(inter: Chem.Mol, sites: list[Site], trap_smiles: str, trap_label: str | None,
            limits: Limits, deadline: float, result: Result) -> None:
    trap = parse(canonical(trap_smiles), "trap SMILES")
    inter_k = Chem.Mol(inter)
    Chem.Kekulize(inter_k, clearAromaticFlags=True)
    racemic = not has_stereo(inter) and not has_stereo(trap)
    inter_smiles = Chem.MolToSmiles(inter)
    found_any = False
    done: set[str] = set()
    for site in sites:
        raws = sorted(_raw_adducts(inter, inter_k, trap, site), key=lambda r: r.smiles)
        show_regio = len(raws) > 1
        for raw in raws:
            if raw.smiles in done:
                continue  # a symmetric allene gives the same adduct at either C=C
            done.add(raw.smiles)
            found_any = True
            _check_balance(raw.smiles, inter_smiles, Chem.MolToSmiles(trap))
            isomers = _stereoisomers(raw, inter, racemic, limits, deadline, result)
            with_words = [i for i in isomers if not i["endo_exo"]]
            for iso in isomers:
                index = with_words.index(iso) if iso in with_words else 0
                result.products.append({
                    "smiles": iso["smiles"], "kind": "adduct", "reaction": raw.order,
                    "trap": Chem.MolToSmiles(trap), "trap_label": trap_label or raw.family,
                    "site": site.label, "stereo": iso["endo_exo"], "racemic": bool(racemic and iso["chiral"]),
                    "words": _words(raw, iso, trap_label or raw.family, index, len(with_words), show_regio, racemic),
                })
    if not found_any:
        result.notes.append(
            f"no cycloaddition known for trap {Chem.MolToSmiles(trap)}: Trapbook knows furans, isobenzofurans, "
            "anthracenes (9,10), pyrroles, cyclopentadienes ([4+2]) and nitrones, azides, nitrile oxides ([3+2])")


def expected_products(intermediate: str, traps: list[tuple[str, str | None]], leaving_group: tuple[str, str] | None = None,
                      limits: Limits | None = None) -> Result:
    """Adducts of the intermediate with each trap, then the usual by-products, in a fixed order."""
    from .by_products import by_products

    limits = limits or Limits()
    inter = parse(canonical(intermediate), "intermediate SMILES")
    kind, sites = strained_sites(inter)
    result = Result(Chem.MolToSmiles(inter), kind)
    deadline = time.monotonic() + limits.seconds
    for smiles, label in traps:
        adducts(inter, sites, smiles, label, limits, deadline, result)
    adduct_list = sorted({p["smiles"]: p for p in result.products}.values(), key=lambda p: p["smiles"])
    side = sorted(by_products(inter, sites, leaving_group), key=lambda p: p["smiles"])
    merged = adduct_list + [p for p in side if p["smiles"] not in {a["smiles"] for a in adduct_list}]
    if len(merged) > limits.max_products:
        result.truncated = True
        result.notes.append(f"only the first {limits.max_products} of {len(merged)} products are listed")
        merged = merged[: limits.max_products]
    result.products = merged
    return result


def listed_by_products(intermediate: str, leaving_group: tuple[str, str] | None = None) -> list[dict]:
    """The by-products alone (no adduct enumeration, no 3D): cheap enough for every check."""
    from .by_products import by_products

    inter = parse(canonical(intermediate), "intermediate SMILES")
    _kind, sites = strained_sites(inter)
    return sorted(by_products(inter, sites, leaving_group), key=lambda p: p["smiles"])
