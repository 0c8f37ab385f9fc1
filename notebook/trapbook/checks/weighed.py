"""Weighed against planned: a line whose recorded amount is far from the plan changes every
equiv, the concentration and the yield (all are worked out from what was weighed), so the
chemist should know it was not a typo."""

from __future__ import annotations

from ..display import fmt_mg, fmt_mmol, fmt_ul
from ..weighed import planned_vs_weighed
from .context import Context
from .finding import Finding

_FMT = {"mg": fmt_mg, "µL": fmt_ul, "mmol": fmt_mmol}


def check_weighed(ctx: Context) -> list[Finding]:
    """A difference beyond the lab's limit (`weighed_diff_max_pct`) between planned and weighed."""
    limit = ctx.settings.weighed_diff_max_pct
    out = []
    for w in planned_vs_weighed(ctx.run):
        if w.difference_pct is None or abs(w.difference_pct) <= limit:
            continue
        fmt = _FMT[w.unit]
        msg = (
            f"'{w.name}': planned {fmt(w.planned)} {w.unit}, weighed {fmt(w.weighed)} {w.unit} "
            f"({w.difference_pct:+.0f} %), beyond the lab's limit of {limit:g} %. Equiv, concentration and "
            "yields are worked out from what was weighed; check the number was not mistyped."
        )
        out.append(Finding("weighed-off-plan", "warn", msg, [w.name]))
    return out
