"""The checks of `verify` on derived data: recomputed from each run and compared.

A run's summary row (what `list` shows: yield, worst finding, conditions), its structure
links and its full-text row are written by the save from the run alone (plus the
notebook's settings and cache, both checked elsewhere). Here the very functions the save
uses recompute them, so a forged row (a 99 % yield, a dropped stop finding, deleted
structure links) differs from what the run gives.
"""

from __future__ import annotations

import json

from .errors import TrapbookError

_INDEX_COLUMNS = (
    "run_id",
    "precursor",
    "intermediate",
    "trap",
    "trap_smiles",
    "fluoride",
    "additive",
    "solvent",
    "temp_min_c",
    "temp_max_c",
    "time_min",
    "sealed",
    "yield_pct",
    "yield_kind",
    "worst",
    "findings",
)


def verify_derived(nb, runs: dict, rep) -> None:
    """`runs`: {run id: run of its last version}, for the runs whose chain could be read."""
    conn = nb.conn
    stored = {r[0]: r for r in conn.execute(f"SELECT {', '.join(_INDEX_COLUMNS)} FROM run_index")}
    for run_id in sorted(runs):
        _check_index(nb, runs[run_id], stored.get(run_id), rep)
        _check_structures(conn, runs[run_id], rep)
        _check_text(conn, runs[run_id], rep)
    known = {r[0] for r in conn.execute("SELECT id FROM runs")}
    for run_id in sorted(set(stored) - known):
        rep.add("index-mismatch", run_id, "a summary row for a run the notebook does not hold")
    for (run_id,) in conn.execute("SELECT DISTINCT run_id FROM run_text"):
        if run_id not in known:
            rep.add("text-mismatch", str(run_id), "a full-text row for a run the notebook does not hold")
    _check_structure_rows(conn, rep)
    rep.checked["summaries"] = len(runs)


def _check_index(nb, run, row, rep) -> None:
    from .store.index import summary_row

    if row is None:
        rep.add("index-mismatch", run.id, "the run has no summary row (it is missing from lists and condition searches)")
        return
    try:
        want = summary_row(nb, run)
    except TrapbookError as exc:
        rep.add("index-mismatch", run.id, f"its summary cannot be worked out again ({exc.message})")
        return
    found = dict(zip(_INDEX_COLUMNS, row))
    wrong = [c for c in _INDEX_COLUMNS if want[c] != found[c]]
    if wrong:
        detail = "; ".join(f"{c}: stored {_short(found[c])}, recomputed {_short(want[c])}" for c in wrong[:4])
        rep.add(
            "index-mismatch",
            run.id,
            f"summary row differs from the run ({detail}); if nothing was edited, "
            "a newer Trapbook judges differently: 'trapbook reindex' rebuilds it",
        )


def _short(value) -> str:
    text = json.dumps(value, ensure_ascii=False)
    return text if len(text) <= 40 else text[:37] + "..."


def _check_structures(conn, run, rep) -> None:
    from .chemistry import molecules
    from .store.index import run_structures

    try:
        want = sorted((part, name, molecules.canonical(smi)) for part, name, smi in run_structures(run))
    except TrapbookError as exc:
        rep.add("structure-mismatch", run.id, f"its structures cannot be read again ({exc.message})")
        return
    found = sorted(
        (part, name, smi or "")
        for part, name, smi in conn.execute(
            "SELECT rs.part, rs.name, s.smiles FROM run_structures rs LEFT JOIN structures s ON s.id = rs.structure_id "
            "WHERE rs.run_id = ?",
            (run.id,),
        )
    )
    if want != found:
        rep.add(
            "structure-mismatch",
            run.id,
            f"structure links differ from the run ({len(found)} stored, {len(want)} expected): "
            "structure searches would miss or misname it",
        )


def _check_text(conn, run, rep) -> None:
    from .store.index import run_text_fields

    state = conn.execute("SELECT n, hash FROM search_state WHERE run_id = ?", (run.id,)).fetchone()
    current_hash = conn.execute("SELECT hash FROM runs WHERE id = ?", (run.id,)).fetchone()
    if state is None:
        rep.add("text-mismatch", run.id, "no full-text row: text searches would miss it")
        return
    row = conn.execute("SELECT run_id, title, notes, observations, tags FROM run_text WHERE rowid = ?", (state[0],)).fetchone()
    if row is None or tuple(row) != (run.id, *run_text_fields(run)):
        rep.add("text-mismatch", run.id, "full-text row differs from the run: text searches would answer wrongly")
    elif current_hash is None or state[1] != current_hash[0]:
        rep.add("text-mismatch", run.id, "search state names another version of the run")


def _check_structure_rows(conn, rep) -> None:
    """Each stored structure's fingerprints, as the save computed them from its SMILES."""
    from .chemistry import fingerprints
    from .store import structure_digest

    entries = structure_digest.read(conn)
    keys = {} if entries is None else dict(zip(entries["id"].tolist(), map(bytes, entries["key"])))
    n = 0
    for sid, smiles, inchikey, morgan, pattern, scheme in conn.execute(
        "SELECT id, smiles, inchikey, morgan, pattern, scheme FROM structures ORDER BY id"
    ):
        n += 1
        if keys and keys.get(sid) != structure_digest.key_of(smiles):
            rep.add(
                "structure-mismatch",
                f"structure {sid}",
                "its search key differs from its SMILES: a group search would take it for another structure",
            )
        try:
            bits = fingerprints.structure_bits(smiles)
        except TrapbookError as exc:
            rep.add("structure-mismatch", f"structure {sid}", f"its SMILES cannot be read ({exc.message})")
            continue
        if (bits.inchikey, bits.morgan, bits.pattern, fingerprints.SCHEME) != (inchikey, bytes(morgan), bytes(pattern), scheme):
            rep.add(
                "structure-mismatch",
                f"structure {sid}",
                "fingerprints differ from its SMILES: substructure and similarity searches would answer wrongly",
            )
    rep.checked["structures"] = n
