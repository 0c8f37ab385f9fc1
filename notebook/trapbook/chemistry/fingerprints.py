"""Bit strings that let a search skip most molecules before RDKit looks at any of them.

Two kinds are kept per stored structure, both as raw bytes so the store never needs
RDKit to read them back:

- a Morgan fingerprint (radius 2, 2048 bits) for similarity ranking by Tanimoto;
- RDKit's pattern fingerprint (2048 bits) as a substructure screen: every bit set in
  a query's pattern fingerprint is also set in the fingerprint of any molecule that
  contains the query, so a molecule missing one of those bits cannot match and is
  never handed to the (much slower) atom-by-atom matcher.

The molecule itself is kept as RDKit's binary form, which loads several times faster
than re-parsing SMILES when a screened candidate has to be confirmed.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

from rdkit import Chem
from rdkit.Chem import rdFingerprintGenerator

from ..errors import ChemistryError
from . import molecules

MORGAN_RADIUS = 2
MORGAN_BITS = 2048
PATTERN_BITS = 2048
#: Written beside stored fingerprints so a change of either kind can be detected and re-indexed.
SCHEME = f"morgan{MORGAN_RADIUS}-{MORGAN_BITS}/pattern-{PATTERN_BITS}/rdkit-{Chem.rdBase.rdkitVersion}"


@lru_cache(maxsize=1)
def _morgan_generator():
    return rdFingerprintGenerator.GetMorganGenerator(radius=MORGAN_RADIUS, fpSize=MORGAN_BITS)


def _pack(bv) -> bytes:
    """Bit vector → bytes, bit i of the vector at bit (i % 8) of byte i // 8 (numpy's little bit order)."""
    n = bv.GetNumBits()
    out = bytearray(n // 8)
    for i in bv.GetOnBits():
        out[i >> 3] |= 1 << (i & 7)
    return bytes(out)


@dataclass(frozen=True)
class StructureBits:
    """Everything stored for one structure: canonical SMILES, InChIKey and the bit strings."""

    smiles: str
    inchikey: str | None
    morgan: bytes
    pattern: bytes
    mol: bytes


def morgan_bytes(mol: Chem.Mol) -> bytes:
    return _pack(_morgan_generator().GetFingerprint(mol))


def pattern_bytes(mol: Chem.Mol) -> bytes:
    """Pattern fingerprint of a molecule or of a SMARTS query (RDKit handles both)."""
    return _pack(Chem.PatternFingerprint(mol, fpSize=PATTERN_BITS))


def structure_bits(smiles: str) -> StructureBits:
    """Fingerprints of one SMILES; ChemistryError if it does not parse."""
    mol = molecules.parse(smiles)
    return StructureBits(
        smiles=Chem.MolToSmiles(mol, isomericSmiles=True),
        inchikey=molecules.inchikey(smiles),
        morgan=morgan_bytes(mol),
        pattern=pattern_bytes(mol),
        mol=mol.ToBinary(),
    )


def query_pattern(query: Chem.Mol) -> bytes:
    """Screen bits of a substructure query; bits RDKit cannot derive from a query atom stay off."""
    try:
        q = Chem.Mol(query)
        q.UpdatePropertyCache(strict=False)
        Chem.FastFindRings(q)
        return pattern_bytes(q)
    except Exception as exc:  # RDKit raises assorted types on exotic queries
        raise ChemistryError(f"cannot build a substructure screen for this query ({exc})", "simplify the SMARTS") from None


def query_morgan(smiles: str) -> bytes:
    """Morgan bits of a similarity query, which must be a real molecule (SMILES, not SMARTS)."""
    return morgan_bytes(molecules.parse(smiles, "similarity query"))


def mol_from_binary(data: bytes) -> Chem.Mol:
    return Chem.Mol(data)


def popcount(data: bytes) -> int:
    return int.from_bytes(data, "little").bit_count()


def tanimoto(a: bytes, b: bytes) -> float:
    """|a ∧ b| / |a ∨ b|; 0 for two empty fingerprints."""
    x = int.from_bytes(a, "little")
    y = int.from_bytes(b, "little")
    union = (x | y).bit_count()
    return (x & y).bit_count() / union if union else 0.0


def screen_passes(query_bits: bytes, mol_bits: bytes) -> bool:
    """True unless the molecule lacks a bit the query needs (then it cannot contain the query)."""
    q = int.from_bytes(query_bits, "little")
    return (q & int.from_bytes(mol_bits, "little")) == q


def matches(mol: Chem.Mol, query: Chem.Mol) -> bool:
    return mol.HasSubstructMatch(query, useChirality=False)


def matching_indices(smiles: list[str], query: Chem.Mol, threads: int = 0) -> list[int]:
    """Positions of the molecules (canonical SMILES written by RDKit) that contain the query.

    RDKit's substructure library does the parsing and matching in C++ on several threads
    (0 = all cores), which is what keeps a broad query over thousands of screened-in
    molecules within a fraction of a second.
    """
    from rdkit.Chem import rdSubstructLibrary

    if not smiles:
        return []
    holder = rdSubstructLibrary.CachedTrustedSmilesMolHolder()
    for s in smiles:
        holder.AddSmiles(s)
    lib = rdSubstructLibrary.SubstructLibrary(holder)
    try:
        hits = lib.GetMatches(query, recursionPossible=True, useChirality=False, useQueryQueryMatches=False,
                              numThreads=threads or -1, maxResults=len(smiles))
    except Exception as exc:  # RDKit raises assorted types on exotic queries
        raise ChemistryError(f"the substructure match failed ({exc})", "simplify the SMARTS") from None
    return sorted(hits)
