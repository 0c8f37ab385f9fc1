"""Where runs meet the strain engine: the cache in the notebook and the run's intermediate.

The strain engine computes; the notebook remembers. A result is stored under a key made
of the canonical structure, the tier and the engine version, so a second request (or the
bench checks of every run with that intermediate) is served from the cache.
"""

from __future__ import annotations

from typing import Callable

from .errors import TrapbookError


def settings_for(nb):
    """The notebook's check thresholds (defaults where the lab has set none)."""
    from .settings import notebook_check_settings

    return notebook_check_settings(nb)


def intermediate_of(run) -> str | None:
    """SMILES of the run's intermediate: as recorded, else derived from a silyl precursor, else None."""
    if run.intermediate:
        return run.intermediate
    from .chemistry.derive import intermediate_from_precursor as derive

    for line in run.lines_by_role("precursor"):
        if line.smiles:
            try:
                return derive(line.smiles)
            except TrapbookError:
                continue
    return None


def strain_for_run(nb, run) -> dict | None:
    """A cached strain result for the run's intermediate (accurate preferred), never computed here."""
    smiles = intermediate_of(run)
    if not smiles or nb is None:
        return None
    from .chemistry.strain_key import cache_key

    for tier in ("accurate", "fast"):
        try:
            hit = nb.cache_get(cache_key(smiles, tier))
        except TrapbookError:
            hit = None
        if hit:
            return hit
    return None


def get_strain(nb, smiles: str, tier: str = "accurate", progress: Callable[[str, float], None] | None = None, refresh: bool = False) -> dict:
    """The strain of an intermediate, from the notebook's cache or computed and then cached."""
    import time

    from .chemistry import strain

    key = strain.cache_key(smiles, tier)  # the engine's own name for it (chemistry/strain_key.py)
    if nb is not None and not refresh:
        t0 = time.perf_counter()
        hit = nb.cache_get(key)
        if hit is not None:
            hit = dict(hit)
            hit["cached"] = True
            hit["cache_seconds"] = time.perf_counter() - t0
            return hit
    result = strain.compute_strain(smiles, tier=tier, progress=progress)
    if nb is not None:
        nb.cache_put(key, result.get("smiles", smiles), tier, result.get("engine_version", ""), result)
    result = dict(result)
    result["cached"] = False
    return result
