"""A campaign: the strain of many candidate intermediates and the alignment of their
precursors, computed as a task graph on a Dask cluster and kept in the notebook.

Why a cluster: one accurate-tier strain takes seconds to minutes, and a library of
candidates takes hours on one core. Each strain (at the chosen tier) and each precursor
alignment is a task; the tasks are independent, so a LocalCluster on this machine (one
single-threaded worker process per core) or a group's scheduler runs them side by side.

Why only the client writes: the notebook is SQLite with one writer. Workers get SMILES
and return plain dicts; they never learn where the notebook is. The client stores results
in the cache as they arrive (one transaction for whatever arrived together), so a campaign
stopped half-way (Ctrl-C, a killed job) resumes by computing only what the cache lacks, and
a re-run of a finished campaign computes nothing. A failed task is recorded with its reason
on its candidate and the rest go on.

Why longest first: task costs differ a hundredfold, and a long task started last keeps one
worker busy while the others idle; started first, the last to finish are the shortest.

A precursor diastereomer no 3-D structure can be built for (an in/out bridgehead, a double
bond left at a small bicycle's bridgehead) is no task: the plan names it, and the table shows
it as one that cannot exist, beside those embedding forced far above their best diastereomer.
"""

from __future__ import annotations

import hashlib
import json
import logging
import os
import re
from collections.abc import Callable, Iterator
from contextlib import nullcontext
from dataclasses import dataclass

from .errors import ChemistryError, TrapbookError
from .text_rules import quoted_in_reason

#: alignment temperature of the campaign's precursors (°C): fluoride additions start at room temperature
ALIGN_TEMPERATURE_C = 25.0
RECORD_PREFIX = "campaign:"
Progress = Callable[[int, int, int], None]
SCHEDULER_ADDRESS = re.compile(r"^(tcp|tls)://[A-Za-z0-9.\-\[\]:]{1,253}:\d{1,5}$")
#: why a precursor diastereomer is shown as impossible rather than as a failure of the tool
NO_STRUCTURE = "this diastereomer cannot exist (no 3-D structure could be built)"
FORCED_STRUCTURE = (
    "this diastereomer cannot exist (its best 3-D structure lies {above:.0f} kcal/mol above the precursor's "
    "best diastereomer: embedding forced it into shape)"
)


# ---------------------------------------------------------------- the plan


@dataclass(frozen=True)
class Task:
    """One unit of work: the strain of a candidate at a tier, or the alignment of a precursor."""

    what: str  # "strain" or "alignment"
    smiles: str
    tier: str
    candidate: str  # name of the candidate it belongs to

    @property
    def key(self) -> str:
        digest = hashlib.sha256(f"{self.what}|{self.smiles}|{self.tier}".encode()).hexdigest()[:16]
        return f"{self.what}-{digest}"


def plan(
    source: str,
    tier: str = "fast",
    kinds: tuple[str, ...] = ("bridgehead",),
    leaving_groups: tuple[str, ...] = ("OTf",),
    precursors: bool = True,
    lines: list[str] | None = None,
) -> dict:
    """The campaign's candidates and their precursors; `lines` (a file's lines) take the place
    of enumerating the skeleton `source`."""
    from .chemistry import enumerate as en
    from .chemistry.strain_key import check_tier

    check_tier(tier)
    bad = [k for k in kinds if k not in en.KIND_WORDS]
    if bad:
        raise ChemistryError(f"unknown kind(s) {', '.join(map(repr, bad))}", "choose from bridgehead, allene, alkyne")
    if lines is None:
        cands = en.intermediates_of_skeleton(source, tuple(en.KIND_WORDS[k] for k in kinds))
        if not cands:
            raise ChemistryError(
                f"the skeleton {source} holds no bridgehead alkene" + (", allene or alkyne" if len(kinds) > 1 else ""),
                "give a bridged polycycle (e.g. C1CC2CCCC(C1)C2), or add --kinds allene,alkyne",
            )
    else:
        cands = en.candidates_from_lines(lines)
        if not cands:
            raise ChemistryError(f"no candidate in {source}", "write one SMILES a line, optionally followed by a name")
    rows = []
    for cand in cands:
        row = cand.to_dict()
        row["precursors"] = []
        if precursors and cand.kind in en.KINDS + ("aryne",):
            row["precursors"] = [_precursor_row(p) for p in en.precursors_of(cand.smiles, tuple(leaving_groups))]
        rows.append(row)
    record = {
        "source": source,
        "tier": tier,
        "kinds": list(kinds),
        "leaving_groups": list(leaving_groups),
        "alignment_temperature_c": ALIGN_TEMPERATURE_C,
        "candidates": rows,
    }
    record["id"] = campaign_id(record)
    return record


def _precursor_row(precursor) -> dict:
    """A precursor of the plan: the diastereomers to align, and those that cannot be built."""
    from .chemistry import enumerate as en

    buildable, impossible = en.diastereomer_split(precursor.smiles)
    return {
        "smiles": precursor.smiles,
        "leaving_group": precursor.leaving_group,
        "diastereomers": buildable,
        "impossible_diastereomers": impossible,
    }


def campaign_id(record: dict) -> str:
    """Same question, same id: the source, tier, kinds and leaving groups name a campaign."""
    text = json.dumps(
        [
            record["source"],
            record["tier"],
            record["kinds"],
            record["leaving_groups"],
            [c["smiles"] for c in record["candidates"]],
        ],
        sort_keys=True,
    )
    return "CP-" + hashlib.sha256(text.encode()).hexdigest()[:8]


def tasks_of(record: dict) -> list[Task]:
    out: list[Task] = []
    for cand in record["candidates"]:
        if cand["kind"] == "unreadable":
            continue
        out.append(Task("strain", cand["smiles"], record["tier"], cand["name"]))
        out += [Task("alignment", d, "alignment", cand["name"]) for p in cand["precursors"] for d in p["diastereomers"]]
    return list({t.key: t for t in out}.values())


def longest_first(tasks: list[Task]) -> list[Task]:
    """The tasks in the order workers should start them: the costliest first (estimated from
    the ring system, the tier and the kind), ties kept in plan order."""
    from .chemistry.enumerate import work_estimate

    cost = {t.key: work_estimate(t.tier, t.smiles) for t in tasks}
    return sorted(tasks, key=lambda t: -cost[t.key])


def cached(nb, task: Task) -> dict | None:
    """The task's result from the notebook's cache (None when it must be computed)."""
    from .chemistry.strain_key import cache_key
    from .strain_link import alignment_key

    if nb is None:
        return None
    key = cache_key(task.smiles, task.tier) if task.what == "strain" else alignment_key(task.smiles, ALIGN_TEMPERATURE_C)
    return nb.cache_get(key) if key else None


# ---------------------------------------------------------------- what a worker runs


def run_task(what: str, smiles: str, tier: str) -> dict:
    """Runs on a worker: compute and return, never touch a notebook.

    A chemistry failure comes back as {"ok": False, "reason", "hint"} so the client records
    it on its candidate (an exception object would have to survive pickling between processes).
    """
    _one_thread_per_worker()
    try:
        if what == "strain":
            from .chemistry.strain import compute_strain

            result = compute_strain(smiles, tier)
        else:
            from .chemistry.alignment import precursor_alignment

            result = precursor_alignment(smiles, temperature_c=ALIGN_TEMPERATURE_C)
    except TrapbookError as exc:
        return {"ok": False, "reason": exc.message, "hint": exc.hint}
    return {"ok": True, "result": result}


def warm_workers(client) -> None:
    """Load the chemistry engine in every worker now, so that its cost shows as start-up and not
    inside the first tasks (for measuring: a campaign does not need it to be right)."""
    client.run(_load_engine)


def _load_engine() -> None:
    _one_thread_per_worker()
    from .chemistry import alignment, strain  # noqa: F401 - imported for their load time only


def _one_thread_per_worker() -> None:
    """A worker is one core: conformer embedding and MMFF94 would otherwise start a thread per
    core inside every worker, and N workers would fight over N cores."""
    from .chemistry import conformers

    conformers.THREADS = 1


# ---------------------------------------------------------------- the cluster


def open_client(scheduler: str | None = None, n_workers: int | None = None):
    """A client on the scheduler at `scheduler`, else on a new LocalCluster of this machine."""
    from distributed import Client, LocalCluster

    if scheduler:
        if not SCHEDULER_ADDRESS.match(scheduler):
            raise TrapbookError(
                f"{scheduler!r} is not a scheduler address",
                "write it as tcp://host:8786 (the address the Dask scheduler prints)",
                field="scheduler",
                got=scheduler[:80],
            )
        try:
            return Client(scheduler, timeout="15s")
        except (OSError, TimeoutError) as exc:
            raise TrapbookError(
                f"cannot reach the Dask scheduler at {scheduler} ({exc})",
                "check the address (tcp://host:8786) and that the scheduler is running",
            ) from None
    workers = n_workers or os.cpu_count() or 1
    cluster = LocalCluster(
        n_workers=workers, threads_per_worker=1, processes=True, dashboard_address=":0", silence_logs=logging.ERROR
    )
    client = Client(cluster)
    client._trapbook_cluster = cluster  # closed with the client (see close_client)
    return client


def close_client(client) -> None:
    cluster = getattr(client, "_trapbook_cluster", None)
    client.close()
    if cluster is not None:
        cluster.close()


def stream_batches(client, tasks: list[Task]) -> Iterator[list[tuple[Task, dict]]]:
    """Lists of (task, outcome) as the workers finish them: each list is what arrived since the
    last one was handed over (usually one). Tasks start in the order given (earlier = higher
    priority on the scheduler); nothing is stored here."""
    from distributed import as_completed

    futures = {
        client.submit(run_task, t.what, t.smiles, t.tier, key=t.key, pure=False, priority=len(tasks) - i): t
        for i, t in enumerate(tasks)
    }
    for batch in as_completed(futures).batches():
        yield [(futures[fut], _outcome_of(fut)) for fut in batch]


def stream_results(client, tasks: list[Task]) -> Iterator[tuple[Task, dict]]:
    """(task, outcome) pairs as the workers finish them, in finishing order; nothing is stored here."""
    for batch in stream_batches(client, tasks):
        yield from batch


def _outcome_of(fut) -> dict:
    try:
        outcome = fut.result()
    except Exception as exc:  # noqa: BLE001 - a lost worker or a bug on it: recorded on the candidate
        why = f"the worker failed ({type(exc).__name__}: {exc})"
        outcome = {"ok": False, "reason": why, "hint": "re-run the campaign: it computes only what is missing"}
    fut.release()
    return outcome


# ---------------------------------------------------------------- the client stores


def store_outcome(nb, task: Task, outcome: dict) -> None:
    """The one place a campaign writes a result: the notebook's cache, as `strain` would."""
    from .strain_link import store_alignment, store_result

    if not outcome.get("ok"):
        return
    if task.what == "strain":
        store_result(nb, task.smiles, task.tier, outcome["result"])
    else:
        store_alignment(nb, task.smiles, outcome["result"], ALIGN_TEMPERATURE_C)


def run_campaign(
    nb,
    record: dict,
    scheduler: str | None = None,
    n_workers: int | None = None,
    progress: Progress | None = None,
    client=None,
    retry_failed: bool = False,
    author: str | None = None,
) -> dict:
    """Compute what the cache lacks, longest first; store results as they arrive; keep the campaign's record.

    A task that failed in an earlier run keeps its recorded reason and is not tried again
    unless `retry_failed`, so a re-run of a finished campaign computes nothing.
    Returns {id, tasks, computed, from_cache, kept_failed, failed: [{candidate, smiles, what, reason, hint}]}.
    """
    if nb is not None and nb.read_only:
        raise TrapbookError("this notebook is open read-only here", "run the campaign where the notebook can be written")
    tasks = tasks_of(record)
    earlier = (
        {}
        if retry_failed or nb is None
        else {
            (f["what"], f["smiles"]): f
            for f in (load_record(nb, record["id"]) or {}).get("failed") or []
            if f["what"] != "structure"
        }
    )
    missing = [t for t in tasks if cached(nb, t) is None]
    todo = longest_first([t for t in missing if (t.what, t.smiles) not in earlier])
    failed: list[dict] = [earlier[(t.what, t.smiles)] for t in missing if (t.what, t.smiles) in earlier]
    kept_failed = len(failed)
    done = len(tasks) - len(missing)
    own = client is None and bool(todo)
    if own:
        client = open_client(scheduler, n_workers)  # before anything is written: a bad address changes nothing
    try:
        _save_record(nb, record, failed=None, author=author)
        left = len(todo)
        _tell(progress, done, len(failed), left)
        for batch in stream_batches(client, todo) if todo else []:
            # as they arrive, one transaction for what arrived together: a stopped campaign keeps
            # every batch it was told about (progress is told after the commit)
            with nb.transaction() if nb is not None else nullcontext():
                for task, outcome in batch:
                    if outcome.get("ok"):
                        store_outcome(nb, task, outcome)
                        done += 1
                    else:
                        failed.append(_failure(task, outcome))
            left -= len(batch)
            _tell(progress, done, len(failed), left)
    finally:
        if own:
            close_client(client)
    _save_record(nb, record, failed=failed, author=author)
    return {
        "id": record["id"],
        "tasks": len(tasks),
        "computed": len(todo) - (len(failed) - kept_failed),
        "from_cache": len(tasks) - len(missing),
        "kept_failed": kept_failed,
        "failed": failed,
    }


def _failure(task: Task, outcome: dict) -> dict:
    where = {"candidate": task.candidate, "smiles": task.smiles, "what": task.what}
    return where | {"reason": outcome.get("reason"), "hint": outcome.get("hint")}


def _tell(progress: Progress | None, done: int, failed: int, left: int) -> None:
    if progress is not None:
        progress(done, failed, left)


def _save_record(nb, record: dict, failed: list[dict] | None, author: str | None = None) -> None:
    """The campaign as a versioned notebook setting: its candidates and what failed last time.

    No time in the value, so a re-run that changes nothing adds no version (idempotent).
    """
    if nb is None:
        return
    value = dict(record)
    unreadable = [
        {
            "candidate": c["name"],
            "smiles": c["smiles"],
            "what": "structure",
            "reason": c["origin"],
            "hint": "correct the SMILES in the file",
        }
        for c in record["candidates"]
        if c["kind"] == "unreadable"
    ]
    if failed is None:
        value["failed"] = (load_record(nb, record["id"]) or {}).get("failed", unreadable)
    else:  # in a fixed order, so the same outcome is the same value
        value["failed"] = unreadable + sorted(failed, key=lambda f: (f["candidate"], f["what"], f["smiles"]))
    nb.set_setting(
        RECORD_PREFIX + record["id"],
        value,
        author=author,
        reason=f"campaign {record['id']} on {quoted_in_reason(record['source'])}",
    )


def load_record(nb, campaign: str) -> dict | None:
    return nb.get_setting(RECORD_PREFIX + campaign)


def campaigns(nb) -> list[str]:
    rows = nb.conn.execute("SELECT key FROM settings WHERE key LIKE ?", (RECORD_PREFIX + "%",)).fetchall()
    return sorted(r[0][len(RECORD_PREFIX) :] for r in rows)


# ---------------------------------------------------------------- the map


def real_diastereomers(sides: list[dict]) -> list[dict]:
    """Drop diastereomers of one precursor lying far above its best one (an impossible ring
    fusion that embedding forced into shape), by the alignment's own limit."""
    return _split_forced(sides)[0]


def _split_forced(sides: list[dict]) -> tuple[list[dict], list[dict]]:
    """(real, forced) diastereomers of one precursor; each forced one as {smiles, why}."""
    from .chemistry.alignment import IMPOSSIBLE_ABOVE_KCAL

    low = min((s["mmff_energy_kcal_mol"] for s in sides), default=0.0)
    real, forced = [], []
    for side in sides:
        above = side["mmff_energy_kcal_mol"] - low
        if above <= IMPOSSIBLE_ABOVE_KCAL:
            real.append(side)
        else:
            forced.append({"smiles": side.get("smiles"), "why": FORCED_STRUCTURE.format(above=above)})
    return real, forced


def best_diastereomer(sides: list[dict]) -> dict | None:
    """The precursor diastereomer most ready to fire: largest aligned share, then cheapest alignment."""
    if not sides:
        return None

    def readiness(side: dict) -> tuple:
        best = side.get("best_aligned")
        return (side.get("aligned_fraction") or 0.0, -(best["delta_kcal_mol"] if best else 1e9))

    top = max(sides, key=readiness)
    return {
        "smiles": top.get("smiles"),
        "verdict": top.get("verdict_short"),
        "aligned_fraction": top.get("aligned_fraction"),
        "dihedral_deg": top.get("dihedral_deg"),
        "diastereomers_judged": len(sides),
    }


def _precursor_sides(nb, cand: dict) -> tuple[list[dict], list[dict]]:
    """(aligned, impossible) diastereomers of a candidate's precursors: the cached alignments of
    those that can exist, and [{smiles, why}] of those that cannot (no 3-D structure, or one
    forced far above the precursor's best diastereomer)."""
    aligns: list[dict] = []
    impossible: list[dict] = []
    for p in cand["precursors"]:
        sides = [a for d in p["diastereomers"] if (a := cached(nb, Task("alignment", d, "alignment", cand["name"])))]
        real, forced = _split_forced(sides)
        aligns += real
        impossible += [{"smiles": d, "why": NO_STRUCTURE} for d in p.get("impossible_diastereomers") or []] + forced
    return aligns, impossible


def campaign_table(nb, record: dict) -> list[dict]:
    """One row per candidate from the cache, ranked within its kind: least strained first, then unclassed and failed ones."""
    from .stability import judge

    failed = {(f["candidate"], f["what"]): f for f in record.get("failed") or []}
    rows = []
    for cand in record["candidates"]:
        res = cached(nb, Task("strain", cand["smiles"], record["tier"], cand["name"])) if cand["kind"] != "unreadable" else None
        aligns, impossible = _precursor_sides(nb, cand)
        verdict = judge(res)
        problem = failed.get((cand["name"], "strain")) or failed.get((cand["name"], "structure"))
        rows.append(
            {
                "name": cand["name"],
                "smiles": cand["smiles"],
                "kind": (res or {}).get("kind") or cand["kind"],
                "s_value": (res or {}).get("s_value"),
                "trans_ring_size": (res or {}).get("trans_ring_size"),
                "ring_size": (res or {}).get("ring_size"),
                "strain_kcal_mol": (res or {}).get("strain_kcal_mol"),
                "strain_quantity": (res or {}).get("strain_quantity"),
                "stability_class": verdict.stability if verdict else None,
                "needs_trap": verdict.needs_trap if verdict else None,
                "twist_deg": (res or {}).get("twist_deg"),
                "pyramidalization_deg": (res or {}).get("pyramidalization_deg"),
                "tier": record["tier"],
                "status": "done" if res else ("failed" if problem else "not computed"),
                "reason": problem["reason"] if problem else None,
                "precursors": len(cand["precursors"]),
                "diastereomers_aligned": len(aligns),
                "impossible_diastereomers": impossible,
                "best_precursor": best_diastereomer(aligns),
            }
        )
    return _ranked_within_kind(rows)


def _ranked_within_kind(rows: list[dict]) -> list[dict]:
    """Least strained first within each kind; the rank restarts at each kind, because an alkene's
    olefin strain and a cycloalkyne's ring strain are different quantities and are never ranked
    against each other. Kinds come in the order of their first computed row."""
    rows.sort(
        key=lambda r: (r["strain_kcal_mol"] is None, r["strain_kcal_mol"] if r["strain_kcal_mol"] is not None else 0.0, r["name"])
    )
    order: dict[str, int] = {}
    for row in rows:
        order.setdefault(row["kind"], len(order))
    rows.sort(key=lambda r: order[r["kind"]])  # stable: each kind keeps its strain order
    seen: dict[str, int] = {}
    for row in rows:
        seen[row["kind"]] = seen.get(row["kind"], 0) + 1
        row["rank"] = seen[row["kind"]]
        row["ranked_within"] = row["kind"]
    return rows
