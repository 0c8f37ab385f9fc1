"""The name a strain result is cached under, without loading the strain engine itself.

Looking up a cached result happens on every run preview and every save's checks; it must
not pay for importing the GFN2-xTB and conformer machinery. A key changes whenever the
structure, the tier or the engine (its scheme or the versions of RDKit and tblite) does.
"""

from __future__ import annotations

from functools import lru_cache

import rdkit
from rdkit import Chem, rdBase

from ..errors import ChemistryError
from .molecules import parse

#: Bump when the method changes, so old cached numbers are not served as new ones.
ENGINE_SCHEME = "trapbook-strain/2"
TIERS = ("fast", "accurate")


def _tblite_version() -> str:
    try:
        from importlib.metadata import version

        return version("tblite")
    except Exception:  # a missing dist-info must not break the version string
        return "unknown"


ENGINE_VERSION = f"{ENGINE_SCHEME} rdkit-{rdkit.__version__} tblite-{_tblite_version()}"


def check_tier(tier: str) -> None:
    if tier not in TIERS:
        raise ChemistryError(f"Unknown tier {tier!r}.", "Use 'fast' (rough prescreen) or 'accurate'.")


@lru_cache(maxsize=2048)
def cache_key(smiles: str, tier: str = "accurate") -> str:
    """Key under which a result may be stored: a changed structure, tier or engine misses."""
    check_tier(tier)
    mol = parse(smiles, "intermediate SMILES")
    with rdBase.BlockLogs():
        inchikey = Chem.MolToInchiKey(mol) or "no-inchikey"
    return f"{inchikey}|{Chem.MolToSmiles(mol)}|{tier}|{ENGINE_VERSION}"
