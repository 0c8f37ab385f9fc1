"""How a campaign is written on the screen: the list of stored campaigns, the ranked table's
cells, the detail of one candidate and the failures.

Every row comes ranked from the core (`campaign.campaign_table`, the rows `trapbook
campaign` prints): nothing here orders, classes or judges. What is decided here is only
what fits: under 100 columns the best precursor's SMILES leaves the table for the detail
pane below it, and the candidate's name is what gives way first.
"""

from __future__ import annotations

from rich.text import Text

from ...display import fmt_fixed
from ..text import clip, shown
from ..theme import tone

#: (key, header, width) of the ranked table; "name" flexes and "precursor" only comes at 100 columns and more.
COLUMNS = (
    ("rank", "#", 3),
    ("name", "Candidate", 16),
    ("s", "S", 3),
    ("trans", "Trans", 6),
    ("strain", "Strain", 7),
    ("class", "Class", 14),
    ("twist", "Twist°", 7),
    ("pyr", "Pyr°", 6),
    ("aligned", "Aligned", 8),
    ("precursor", "Best precursor diastereomer", 30),
)
#: The narrowest a name is cut to, and the widest it is given; the narrowest precursor column.
NAME_MIN, NAME_MAX, PRECURSOR_MIN = 8, 28, 20
#: Columns left out under this terminal width (said in the detail pane instead).
DROP_UNDER = {"precursor": 100}

#: (key, header, width) of the list of stored campaigns; "source" flexes.
LIST_COLUMNS = (
    ("id", "Campaign", 12),
    ("member", "Member", 9),  # only in a group view
    ("source", "Skeleton or file", 24),
    ("tier", "Tier", 9),
    ("kinds", "Kinds", 14),
    ("candidates", "Cands", 6),
    ("failed", "Failed", 7),
)


def layout(width: int, precursors: bool = True) -> tuple[tuple[str, str, int], ...]:
    """The ranked table's columns for a terminal `width` wide: no sideways scroll at 80 columns.

    The name takes its room first; the precursor's SMILES (also in the detail pane) the rest,
    and only when the campaign has precursors."""
    cols = [c for c in COLUMNS if width >= DROP_UNDER.get(c[0], 0) and (precursors or c[0] != "precursor")]
    fixed = sum(w for key, _, w in cols if key not in ("name", "precursor"))
    room = width - 1 - fixed  # one column for the scroll bar
    if any(key == "precursor" for key, _, _ in cols):
        name = max(NAME_MIN, min(NAME_MAX, room - PRECURSOR_MIN))
        sized = {"name": name, "precursor": max(PRECURSOR_MIN, room - name)}
    else:
        sized = {"name": max(NAME_MIN, min(NAME_MAX, room))}
    return tuple((key, label, sized.get(key, w)) for key, label, w in cols)


def list_layout(width: int, group: bool) -> tuple[tuple[str, str, int], ...]:
    cols = [c for c in LIST_COLUMNS if group or c[0] != "member"]
    others = sum(w for key, _, w in cols if key != "source")
    source = max(12, width - 1 - others)
    return tuple((key, label, source if key == "source" else w) for key, label, w in cols)


def _angle(v) -> str:
    return fmt_fixed(v, 1)


def class_cell(row: dict) -> Text:
    """The class, or why there is none: failed, not computed yet, or a fast-tier prescreen."""
    if row["status"] == "failed":
        return Text("failed", style=f"bold {tone('stop')}")
    if row["status"] != "done":
        return Text("not computed", style=f"italic {tone('muted')}")
    if row["tier"] != "accurate":
        return Text("prescreen", style=f"italic {tone('muted')}")
    if row["stability_class"] is None:
        return Text("no class", style=f"italic {tone('muted')}")
    return Text(row["stability_class"], style=f"bold {tone('attention')}" if row["needs_trap"] else "bold")


def aligned_text(best: dict | None) -> str:
    if not best:
        return "—"
    return fmt_fixed((best.get("aligned_fraction") or 0.0) * 100, 0, " %")


def cells(row: dict, columns) -> tuple:
    width = {key: w - 1 for key, _, w in columns}
    best = row["best_precursor"] or {}
    every = {
        "rank": lambda: str(row["rank"]),
        "name": lambda: clip(row["name"], width["name"]),
        "s": lambda: str(row["s_value"] or row["ring_size"] or "—"),
        "trans": lambda: str(row["trans_ring_size"] or "—"),
        "strain": lambda: fmt_fixed(row["strain_kcal_mol"], 1),
        "class": lambda: class_cell(row),
        "twist": lambda: _angle(row["twist_deg"]),
        "pyr": lambda: _angle(row["pyramidalization_deg"]),
        "aligned": lambda: aligned_text(row["best_precursor"]),
        "precursor": lambda: clip(best.get("smiles") or "—", width["precursor"]),
    }
    return tuple(every[key]() for key, _, _ in columns)


def list_cells(entry: dict, columns) -> tuple:
    record = entry["record"] or {}
    width = {key: w - 1 for key, _, w in columns}
    failed = len(record.get("failed") or [])
    every = {
        "id": lambda: clip(entry["id"], width["id"]),
        "member": lambda: clip(entry["member"], width["member"]),
        "source": lambda: clip(record.get("source"), width["source"]),
        "tier": lambda: clip(record.get("tier"), width["tier"]),
        "kinds": lambda: clip(",".join(record.get("kinds") or []), width["kinds"]),
        "candidates": lambda: str(len(record.get("candidates") or [])),
        "failed": lambda: Text(str(failed), style=f"bold {tone('stop')}") if failed else "0",
    }
    return tuple(every[key]() for key, _, _ in columns)


def title(entry: dict, record: dict) -> Text:
    """The campaign's one-line heading, and the prescreen warning a fast-tier campaign carries."""
    out = Text()
    out.append(shown(entry["id"]), style=f"bold {tone('accent')}")
    if entry.get("member"):
        out.append(f" ({shown(entry['member'])})")
    out.append(f" · {shown(record.get('source'))} · {shown(record.get('tier'))} tier · ")
    n = len(record.get("candidates") or [])
    out.append(f"{n} candidate{'' if n == 1 else 's'} · leaving groups {shown(', '.join(record.get('leaving_groups') or []))}")
    if record.get("tier") != "accurate":
        out.append("\nfast tier: MMFF94 prescreen, not classed; run the accurate tier to act on it", style=tone("warn"))
    return out


def detail(row: dict | None, record: dict) -> Text:
    """Everything about the candidate under the cursor the table has no room for, then every failure."""
    out = Text()
    if row is not None:
        out.append(f"#{row['rank']} among {shown(row.get('ranked_within') or row['kind'])} · {shown(row['name'])}", style="bold")
        out.append(f" · {shown(row['smiles'])}\n")
        if row["strain_kcal_mol"] is not None:
            out.append(f"{shown(row['strain_quantity'] or 'strain')} {fmt_fixed(row['strain_kcal_mol'], 1, ' kcal/mol')}")
            out.append(f" · {class_cell(row).plain}\n")
        best = row["best_precursor"]
        if best:
            out.append(f"best precursor diastereomer ({best['diastereomers_judged']} judged): ", style=tone("muted"))
            out.append(f"{shown(best['smiles'])}\n")
            out.append(f"  {shown(best['verdict'])} · {aligned_text(best)} aligned · Si–C–C–X {_angle(best['dihedral_deg'])}°\n")
        elif row["precursors"]:
            out.append("precursors: no diastereomer aligned yet\n", style=f"italic {tone('muted')}")
        impossible = row.get("impossible_diastereomers") or []
        if impossible:
            out.append(f"{len(impossible)} precursor diastereomer(s) cannot exist:\n", style=tone("muted"))
            for side in impossible:
                out.append(f"  {shown(side['smiles'])}: {shown(side['why'])}\n", style=tone("muted"))
        if row["status"] == "failed":
            out.append(f"failed: {shown(row['reason'])}\n", style=tone("stop"))
    failed = record.get("failed") or []
    if failed:
        out.append(f"Failed ({len(failed)}), each kept with its reason:\n", style=f"bold {tone('stop')}")
        for f in failed:
            out.append(f"  ✖ {shown(f['candidate'])} ({shown(f['what'])}) {shown(f['smiles'])}: ", style=tone("stop"))
            out.append(shown(f.get("reason") or "no reason recorded"))
            if f.get("hint"):
                out.append(f" — {shown(f['hint'])}", style=f"italic {tone('muted')}")
            out.append("\n")
    out.rstrip()
    return out


def counts(done: int, failed: int, left: int, stage: str | None = None) -> Text:
    """done · failed · left of the tasks, then the stage in words; the stage alone before any task is known."""
    out = Text()
    if done + failed + left == 0:
        return Text(stage or "", style=f"italic {tone('muted')}")
    out.append(f"done {done} · ")
    out.append(f"failed {failed}", style=f"bold {tone('stop')}" if failed else "")
    out.append(f" · left {left}")
    if stage:
        out.append(f"  {stage}", style=f"italic {tone('muted')}")
    return out
