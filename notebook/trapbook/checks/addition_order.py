"""Order of addition and the steps: the trap must be in the flask before fluoride meets the
precursor, and every line must be added in a named step for the run to be repeatable."""

from __future__ import annotations

from ..stability import judge
from .context import Context, first_step, line_names, listing
from .finding import Finding


def trap_timing(ctx: Context) -> str:
    """'in time', 'late', 'unknown' or 'n/a' (no trap or no fluoride to race against)."""
    run, tl = ctx.run, ctx.timeline
    traps = run.lines_by_role("trap")
    fluorides = run.lines_by_role("fluoride source")
    if not traps or not fluorides:
        return "n/a"
    t_trap = first_step(tl, traps)
    t_f = first_step(tl, fluorides)
    precursors = run.lines_by_role("precursor")
    t_p = first_step(tl, precursors) if precursors else t_f
    if t_trap is None or t_f is None or t_p is None:
        return "unknown"
    return "late" if t_trap > max(t_f, t_p) else "in time"


def check_trap_order(ctx: Context) -> list[Finding]:
    """The check users asked for: an intermediate that lives microseconds cannot wait for its trap."""
    timing = trap_timing(ctx)
    run, tl = ctx.run, ctx.timeline
    traps = run.lines_by_role("trap")
    fluorides = run.lines_by_role("fluoride source")
    if timing == "late":
        t_f = first_step(tl, fluorides)
        precursors = run.lines_by_role("precursor")
        meet = max(t_f, first_step(tl, precursors)) if precursors else t_f
        t_trap = first_step(tl, traps)
        msg = (
            f"The trap was added after the fluoride source. The fluoride source ({listing(line_names(fluorides))}) "
            f"meets the precursor in step {meet + 1}, but the trap ({listing(line_names(traps))}) goes in only in "
            f"step {t_trap + 1}. The intermediate forms as soon as fluoride reaches the precursor and lives far too "
            "briefly to wait, so it dimerises or decomposes before any trap arrives. Put the trap in the flask "
            "with the precursor before the fluoride source, or add them in the same step."
        )
        return [Finding("trap-late", "stop", msg, line_names(traps) + line_names(fluorides), sorted({meet + 1, t_trap + 1}))]
    if timing == "unknown":
        if not run.steps:
            why = "the run has no steps"
        else:
            missing = [ln.name for ln in traps + fluorides + run.lines_by_role("precursor") if tl.step_of(ln.name) is None]
            why = f"no step adds {listing(missing)}"
        msg = (
            f"Trapbook cannot tell whether the trap was in the flask before the fluoride source: {why}. "
            "A late trap is the commonest reason a trapping run gives nothing. Record the steps in order, "
            "naming the step in which the trap, the precursor and the fluoride source each went in."
        )
        return [Finding("trap-order-unknown", "warn", msg, line_names(traps) + line_names(fluorides))]
    if not traps and ctx.run.lines_by_role("precursor"):
        if judge(ctx.strain) is not None:
            return []  # the strain check speaks for this case
        msg = (
            "The run has no trap line. A strained intermediate released without a trap usually ends as "
            "dimers or decomposition products. Add the trap as a line (role 'trap'), or note that this "
            "is a control run."
        )
        return [Finding("no-trap", "warn", msg)]
    return []


def check_steps(ctx: Context) -> list[Finding]:
    """Steps are how a run is repeated; gaps and misnamed lines make it unrepeatable."""
    run, tl = ctx.run, ctx.timeline
    out: list[Finding] = []
    for name, steps in tl.unknown.items():
        msg = (
            f"Step {', '.join(map(str, steps))} adds '{name}', which is not one of the run's lines. "
            "Fix the spelling in the step or add the line, or Trapbook cannot follow what went in when."
        )
        out.append(Finding("step-unknown-line", "warn", msg, [name], steps))
    if run.steps:
        never = [
            ln.name for ln in run.lines if ln.role not in ("product", "internal standard", "trap") and tl.step_of(ln.name) is None
        ]
        if never:
            msg = (
                f"No step adds {listing(never)}. Say in which step each line went in, so the order of "
                "additions (and so the run) can be repeated."
            )
            out.append(Finding("line-never-added", "warn", msg, never))
    no_temp = [i + 1 for i, st in enumerate(run.steps) if st.temperature is None]
    if no_temp:
        msg = (
            f"Step {', '.join(map(str, no_temp))} has no temperature. Record it (room temperature is "
            "about 23 °C) so the run can be repeated and the solvent checks can run."
        )
        out.append(Finding("step-no-temperature", "note", msg, [], no_temp))
    no_time = [
        i + 1 for i, st in enumerate(run.steps) if st.hold is None and st.over is None and not (st.add and i + 1 < len(run.steps))
    ]
    if no_time:
        msg = (
            f"Step {', '.join(map(str, no_time))} has no hold or addition time. Record how long the flask "
            "was kept at that temperature."
        )
        out.append(Finding("step-no-time", "note", msg, [], no_time))
    return out
