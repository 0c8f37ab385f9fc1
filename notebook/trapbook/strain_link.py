"""Where runs meet the strain engine: the cache in the notebook and the run's intermediate.

The strain engine computes; the notebook remembers. A result is stored under a key made
of the canonical structure, the tier and the engine version, so a second request (or the
bench checks of every run with that intermediate) is served from the cache.
"""

from __future__ import annotations

import sqlite3
from collections.abc import Callable

from .errors import TrapbookError


def settings_for(nb):
    """The notebook's check thresholds (defaults where the lab has set none)."""
    from .settings import notebook_check_settings

    return notebook_check_settings(nb)


def intermediate_of_run(run) -> tuple[str, str] | None:
    """The run's intermediate and, in words, where it came from; None when nothing gives one.

    The one place that decides which intermediate a run releases: `show`, the checks, the
    Workbench and reports all read it here, so they always name the same structure.
    """
    if run.intermediate:
        return run.intermediate, "as recorded on the run"
    from .chemistry.derive import intermediate_from_precursor as derive

    for line in run.lines_by_role("precursor"):
        if line.smiles:
            try:
                smiles = derive(line.smiles)
            except TrapbookError:
                continue
            return smiles, (
                f"derived from the precursor {line.name} ({line.smiles}): fluoride removes the silyl "
                "group and the leaving group leaves from the next carbon"
            )
    return None


def intermediate_of(run) -> str | None:
    """SMILES of the run's intermediate: as recorded, else derived from a silyl precursor, else None."""
    found = intermediate_of_run(run)
    return found[0] if found else None


def strain_for_run(nb, run) -> dict | None:
    """The cached accurate-tier strain result of the run's intermediate, never computed here.

    Only the accurate tier is returned: a fast-tier number is a prescreen that nothing may
    act on, so a run whose intermediate has only a fast result gets None (no class).
    """
    smiles = intermediate_of(run)
    if not smiles or nb is None:
        return None
    from .chemistry.strain_key import cache_key

    try:
        hit = nb.cache_get(cache_key(smiles, "accurate"))
    except TrapbookError:
        return None
    if hit and hit.get("tier") == "accurate":
        return hit
    return None


def run_temperature_c(run) -> float:
    """The temperature the intermediate is released at: that of the step adding the fluoride
    source, else of the first step that gives one, else 25 °C (room temperature)."""
    from .units import to_canonical

    fluoride = {ln.name for ln in run.lines_by_role("fluoride source")}
    steps = [st for st in run.steps if st.temperature is not None]
    chosen = next((st for st in steps if fluoride & set(st.add)), steps[0] if steps else None)
    return to_canonical(chosen.temperature, "temperature") if chosen is not None else 25.0


def precursor_release(smiles: str) -> dict | None:
    """When a SMILES is a silyl precursor, the intermediate it releases and the command that
    computes its strain; None when it is not a precursor (then it is taken as the intermediate)."""
    from .chemistry.derive import intermediate_from_precursor, is_precursor

    if not is_precursor(smiles):
        return None
    inter = intermediate_from_precursor(smiles)
    return {
        "precursor": smiles,
        "intermediate": inter,
        "how": "fluoride removes the silyl group and the leaving group leaves from the next carbon",
        "command": f"trapbook strain '{inter}'",
    }


def get_strain(
    nb, smiles: str, tier: str = "accurate", progress: Callable[[str, float], None] | None = None, refresh: bool = False
) -> dict:
    """The strain of an intermediate, from the notebook's cache or computed and then cached."""
    import time

    from .chemistry.strain_key import cache_key

    key = cache_key(smiles, tier)  # a cache hit must not load the engine
    if nb is not None and not refresh:
        t0 = time.perf_counter()
        hit = nb.cache_get(key)
        if hit is not None:
            hit = dict(hit)
            hit["cached"] = True
            hit["cache_seconds"] = time.perf_counter() - t0
            return hit
    from .chemistry import strain

    result = strain.compute_strain(smiles, tier=tier, progress=progress)
    if nb is not None and not nb.read_only:  # a notebook that cannot be written here caches nothing
        store_result(nb, smiles, tier, result)
    result = dict(result)
    result["cached"] = False
    return result


def rejudge_runs_with(nb, smiles: str, part: str = "intermediate") -> list[str]:
    """Re-run the stored checks of runs with this intermediate (or, with part="precursor", this
    precursor): a new strain or alignment result can change them, and `verify` compares."""
    from .chemistry.molecules import canonical

    try:
        canon = canonical(smiles)
        rows = nb.conn.execute(
            "SELECT DISTINCT rs.run_id FROM run_structures rs JOIN structures s ON s.id = rs.structure_id "
            "WHERE rs.part = ? AND s.smiles = ?",
            (part, canon),
        ).fetchall()
    except sqlite3.OperationalError:  # a notebook without search tables: nothing to re-judge by structure
        return []
    ids = [r[0] for r in rows]
    if ids:
        nb.reindex(ids)
    return ids


ALIGNMENT_TIER = "alignment"


def alignment_key(precursor_smiles: str, temperature_c: float = 25.0) -> str | None:
    """Cache key of a precursor's Si–C–C–X alignment: canonical structure, temperature and
    engine version.

    Built from the light key module, so a cache look-up never loads the conformer machinery.
    """
    from .chemistry.molecules import canonical
    from .chemistry.strain_key import ENGINE_VERSION

    try:
        canon = canonical(precursor_smiles)
    except TrapbookError:
        return None
    return f"{ALIGNMENT_TIER}|{canon}|{float(temperature_c):g}C|{ENGINE_VERSION}"


def get_alignment(nb, smiles: str, compute: bool = True, temperature_c: float = 25.0) -> dict | None:
    """The precursor's alignment from the notebook's cache; computed and cached when `compute`.

    With compute=False it is a pure look-up (None when not cached), cheap enough for every
    keystroke of an editor.
    """
    key = alignment_key(smiles, temperature_c)
    if key is None:
        return None
    if nb is not None:
        hit = nb.cache_get(key)
        if hit is not None or not compute:
            return hit
    elif not compute:
        return None
    from .chemistry import alignment

    result = alignment.precursor_alignment(smiles, temperature_c=temperature_c)
    if nb is not None and not nb.read_only:  # a notebook that cannot be written here caches nothing
        store_alignment(nb, smiles, result, temperature_c)
    return result


def store_result(nb, smiles: str, tier: str, result: dict) -> str:
    """Keep a strain result computed here or on a cluster under its cache key, and re-judge the
    runs it concerns: the one way a strain result enters the notebook."""
    from .chemistry.strain_key import cache_key

    key = cache_key(smiles, tier)
    nb.cache_put(key, result.get("smiles", smiles), tier, result.get("engine_version", ""), result)
    rejudge_runs_with(nb, smiles)
    return key


def store_alignment(nb, smiles: str, result: dict, temperature_c: float = 25.0) -> str | None:
    """Keep a precursor's alignment computed here or on a cluster under its cache key, and
    re-judge the runs with that precursor."""
    from .chemistry.strain_key import ENGINE_VERSION

    key = alignment_key(smiles, temperature_c)
    if key is not None:
        nb.cache_put(key, smiles, ALIGNMENT_TIER, ENGINE_VERSION, result)
        rejudge_runs_with(nb, smiles, part="precursor")
    return key
