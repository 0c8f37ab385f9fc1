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
from rdkit.Chem import rdChemReactions

from ..errors import ChemistryError
from . import bridgehead as bh
from .adduct_stereo import has_stereo, stereoisomers
from .masses import element_counts
from .molecules import canonical, parse


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
    "diene": _FIVE_RING_DIENE,
    "anthracene": _ANTHRACENE,
    "nitrone": _NITRONE,
    "azide": _AZIDE,
    "azide ": _AZIDE_ALT,
    "nitrile oxide": _NITRILE_OXIDE,
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
        sites.append(
            Site(
                best.kind, (a, b), f"{atom_label(mol, a)}{joint}{atom_label(mol, b)}", bond.GetBondType() == Chem.BondType.TRIPLE
            )
        )
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
    if template == "anthracene" and trap.GetRingInfo().NumRings() > 3:
        return "acene (inner ring)"
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
                found[flat] = Raw(
                    prod,
                    flat,
                    site,
                    TEMPLATES[name][0],
                    trap_family(trap, name, prod),
                    from_inter,
                    by_map.get(7) if name == "diene" else None,
                    alkene,
                    _regio(inter, prod, from_inter, site),
                )
    return list(found.values())


def _check_balance(product: str, *parts: str) -> None:
    """An adduct holds exactly the atoms of its partners: conservation, checked every time."""
    total: dict[str, int] = {}
    for part in parts:
        for k, v in element_counts(part).items():
            total[k] = total.get(k, 0) + v
    if element_counts(product) != total:
        raise ChemistryError(f"atoms do not balance for product {product}", "report this structure: the template is wrong")


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


def adducts(
    inter: Chem.Mol, sites: list[Site], trap_smiles: str, trap_label: str | None, limits: Limits, deadline: float, result: Result
) -> None:
    parse(trap_smiles, "trap SMILES")
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
            isomers = stereoisomers(raw, inter, racemic, limits, deadline, result)
            with_words = [i for i in isomers if not i["endo_exo"]]
            for iso in isomers:
                index = with_words.index(iso) if iso in with_words else 0
                result.products.append(
                    {
                        "smiles": iso["smiles"],
                        "kind": "adduct",
                        "reaction": raw.order,
                        "trap": Chem.MolToSmiles(trap),
                        "trap_label": trap_label or raw.family,
                        "site": site.label,
                        "stereo": iso["endo_exo"],
                        "racemic": bool(racemic and iso["chiral"]),
                        "words": _words(raw, iso, trap_label or raw.family, index, len(with_words), show_regio, racemic),
                    }
                )
    if not found_any:
        result.notes.append(
            f"no cycloaddition known for trap {Chem.MolToSmiles(trap)}: Trapbook knows furans, isobenzofurans, "
            "anthracenes (9,10), pyrroles, cyclopentadienes ([4+2]) and nitrones, azides, nitrile oxides ([3+2])"
        )


def expected_products(
    intermediate: str,
    traps: list[tuple[str, str | None]],
    leaving_group: tuple[str, str] | None = None,
    limits: Limits | None = None,
) -> Result:
    """Adducts of the intermediate with each trap, then the usual by-products, in a fixed order."""
    from .by_products import by_products

    limits = limits or Limits()
    parse(intermediate, "intermediate SMILES")  # names the field before the canonical form is taken
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
