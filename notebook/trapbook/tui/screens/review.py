"""Screen board: a screen's yields by its two varied conditions, its winner, and how
outcomes across the notebook follow the strain of the intermediate.

The numbers are the core's (review.review_screen and review.strain_map); strain is read
from the cache, and `g` fills missing fast-tier values in a worker so the plot has points.
"""

from __future__ import annotations

from rich.console import Group
from rich.text import Text
from textual import work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.screen import Screen
from textual.widgets import Header, ProgressBar, Static

from ...errors import TrapbookError
from ..text import shown
from ..theme import tone
from ..widgets.heatgrid import grid
from ..widgets.keybar import KeyBar
from ..widgets.plot_labels import axis_ticks, canvas_size, label_plan


def best_text(review: dict) -> Text:
    out = Text()
    best = review.get("best")
    if best:
        out.append("Best conditions: ", style="bold")
        out.append(", ".join(f"{k} = {v}" for k, v in best["factors"].items()), style=f"bold {tone('attention')}")
        out.append(f"  →  {best['yield_pct']:.0f} % ({best['yield_kind']}), {best['run_id']}\n")
        if best.get("note"):
            out.append(best["note"] + "\n", style=f"italic {tone('muted')}")
    else:
        out.append("No run of this screen has a yield yet.\n", style="italic")
    for name, levels in (review.get("levels") or {}).items():
        out.append(f"\n{name}: ", style=f"bold {tone('accent')}")
        bits = []
        for level, s in levels.items():
            h = s.get("headline") or {}
            if h.get("n"):
                bits.append(f"{level} mean {h['mean_pct']:.0f} % / best {h['best_pct']:.0f} %")
            else:
                bits.append(f"{level} —")
        out.append(" · ".join(bits))
    failed = review.get("failed") or []
    if failed:
        out.append("\n\nFailed or empty runs:\n", style=f"bold {tone('stop')}")
        for f in failed:
            why = "; ".join(x["code"] for x in f["findings"]) or "no finding explains it"
            out.append(f"  {shown(f['run_id'])} {shown(f['title'])}: {why}\n")
    if review.get("not_done"):
        out.append(f"\nNot done yet: {', '.join(review['not_done'])}", style="italic")
    return out


def plotted_kinds(strain_map: dict) -> list[str]:
    """The kinds with at least one point (a strain and a yield), in the ranking's order."""
    with_points = {
        e["kind"]
        for e in strain_map["intermediates"]
        if e["kind"] and e["strain_kcal_mol"] is not None and e["best_yield_pct"] is not None
    }
    return sorted(with_points)


def plot_note(strain_map: dict, kind: str | None, pts: list[dict], n_kinds: int, legend: list[str] = ()) -> Text:
    """Under the plot: the names that did not fit beside their points, what is missing, this
    kind's Spearman rho (never one across kinds), the method."""
    text = Text()
    if legend:
        text.append("\n".join(legend) + "\n", style=tone("accent"))
    missing = strain_map.get("missing_strain") or []
    if missing:
        text.append(
            f"{len(missing)} intermediate(s) without cached strain: press g to compute the fast tier.\n", style=f"{tone('warn')}"
        )
    if n_kinds > 1:
        text.append(
            f"{n_kinds} kinds, one plot each (k for the next): their strain numbers are different quantities.\n",
            style=f"italic {tone('muted')}",
        )
    rk = next((k for k in (strain_map.get("ranking") or {}).get("by_kind", []) if k["kind"] == kind), None)
    if rk and rk.get("spearman_rho") is not None:
        text.append(f"Spearman ρ = {rk['spearman_rho']:.2f} over {rk['n']} {kind} intermediates. ", style="bold")
    elif kind:
        text.append(f"No ρ for {kind}: needs at least 3 intermediates with a strain and a yield, not all tied. ", style="italic")
    if any(e["strain_tier"] == "accurate" for e in pts):
        text.append("● = accurate tier. ", style=f"italic {tone('muted')}")
    if any(e["strain_tier"] != "accurate" for e in pts):
        text.append("○ = fast-tier prescreen, not classed. ", style=f"italic {tone('warn')}")
    methods = sorted({e.get("strain_method") for e in pts if e.get("strain_method")})
    if methods:
        text.append("Strain method: " + "; ".join(methods), style=f"italic {tone('muted')}")
    return text


class BoardScreen(Screen):
    """Review of one condition screen at a time."""

    BINDINGS = [
        Binding("left_square_bracket", "turn(-1)", "Prev screen", key_display="["),
        Binding("right_square_bracket", "turn(1)", "Next screen", key_display="]"),
        Binding("o", "open_best", "Open best run"),
        Binding("k", "kind(1)", "Next kind"),
        Binding("g", "fill_strain", "Compute missing strain"),
        Binding("escape", "app.pop_screen", "Back"),
    ]

    def check_action(self, action: str, parameters: tuple) -> bool | None:
        """In a read-only session the keys that write (compute and cache strain, open the Workbench) are hidden."""
        return self.app.allows(action) if hasattr(self.app, "allows") else True

    def __init__(self, screen_id: str | None = None):
        super().__init__()
        self.wanted = screen_id
        self.ids: list[str] = []
        self.index = 0
        self.review: dict | None = None
        self.map: dict | None = None
        self.kinds: list[str] = []
        self.kind_index = 0
        #: The kind and points the plot shows: drawn again at a new size (names placed for it).
        self.plotted: tuple[str | None, list[dict]] = (None, [])
        #: The names the plot had no room for, as the note says them.
        self.legend: list[str] | None = None

    def compose(self) -> ComposeResult:
        from ..widgets.strain_plot import StrainPlot  # loads plotext: only when the board is opened

        yield Header()
        yield Static("", id="board-title")
        with Horizontal(id="board"):
            with VerticalScroll(id="board-left"):
                yield Static("", id="heat")
                yield Static("", id="best")
            with VerticalScroll(id="board-right"):  # the plot keeps its least height; the note scrolls
                yield StrainPlot(id="strain-plot")
                yield Static("", id="plot-note")
                yield ProgressBar(id="fill-progress", show_eta=False)
        yield KeyBar()

    def on_mount(self) -> None:
        self.query_one("#fill-progress").display = False
        self.ids = [s.id for s in self.app.nb.list_screens()]
        if self.wanted in self.ids:
            self.index = self.ids.index(self.wanted)
        self.show()

    def show(self) -> None:
        title = self.query_one("#board-title", Static)
        if not self.ids:
            title.update(Text("No screens in this notebook yet (plan one with 'trapbook screen plan').", style="italic"))
            self.show_plot()
            return
        from ... import review

        sid = self.ids[self.index]
        try:
            self.review = review.review_screen(self.app.nb, sid)
        except TrapbookError as exc:
            title.update(Text(exc.message, style=f"{tone('stop')}"))
            return
        r = self.review
        head = Text()
        head.append(f" {r['screen_id']} ", style=f"bold {tone('ground')} on {tone('accent')}")
        head.append(f"  {shown(r['name'])}", style="bold")
        head.append(f"   screen {self.index + 1} of {len(self.ids)}", style=f"{tone('muted')}")
        if r.get("description"):
            head.append(f"\n {shown(r['description'], multiline=True)}", style="italic")
        title.update(head)
        best = (r.get("best") or {}).get("run_id")
        self.query_one("#heat", Static).update(
            Group(grid(r.get("matrix"), best), Text(r.get("yield_rule", ""), style=f"italic {tone('muted')}"))
        )
        self.query_one("#best", Static).update(best_text(r))
        self.show_plot()

    def show_plot(self) -> None:
        from ... import review

        note = self.query_one("#plot-note", Static)
        try:
            self.map = review.strain_map(self.app.nb)
        except TrapbookError as exc:
            note.update(Text(exc.message, style=f"{tone('stop')}"))
            return
        self.kinds = plotted_kinds(self.map)
        self.kind_index = min(self.kind_index, max(len(self.kinds) - 1, 0))
        kind = self.kinds[self.kind_index] if self.kinds else None
        pts = [
            e
            for e in self.map["intermediates"]
            if e["kind"] == kind and e["strain_kcal_mol"] is not None and e["best_yield_pct"] is not None
        ]
        self.plotted = (kind, pts)
        self.legend = None
        note.update(plot_note(self.map, kind, pts, len(self.kinds)))
        self.query_one("#strain-plot").replot(self.draw_at)

    def draw_at(self, size) -> None:
        """The plot for its present size (the names are placed in its cells), and the note with
        the names that found no room (said after the plot is drawn: the note's height moves it)."""
        kind, pts = self.plotted
        legend = self.draw(kind, pts, size)
        if legend != self.legend:
            self.legend = legend
            note = plot_note(self.map, kind, pts, len(self.kinds), legend)
            self.call_later(self.query_one("#plot-note", Static).update, note)

    def draw(self, kind: str | None, pts: list[dict], size) -> list[str]:
        """One kind's points: its own strain quantity on x; a prescreen (fast tier) drawn hollow.

        Each name is written beside its point where it touches no other name (plot_labels);
        the names that find no room are returned as legend lines for the note."""
        from ...stability import quantity_of

        plot = self.query_one("#strain-plot")
        plt = plot.plt
        plt.clear_data()
        plt.clear_figure()
        quantity = (quantity_of(kind) if kind else None) or "strain"
        plt.title(f"best yield vs {quantity}: {kind}" if kind else "best yield vs strain")
        plt.xlabel(f"{quantity.split(' (')[0]} (kcal/mol)")
        plt.ylabel("best yield %")
        legend: list[str] = []
        if pts:
            for accurate, marker in ((True, "●"), (False, "○")):  # the note says which is which
                some = [e for e in pts if (e["strain_tier"] == "accurate") == accurate]
                if some:
                    plt.scatter(
                        [e["strain_kcal_mol"] for e in some], [e["best_yield_pct"] for e in some], marker=marker, color="orange"
                    )
            xs = [e["strain_kcal_mol"] for e in pts]
            pad = 0.08 * (max(xs) - min(xs)) or 1.0  # points kept off the frame
            xlim, ylim = (min(xs) - pad, max(xs) + pad), (0.0, 100.0)
            plt.xlim(*xlim)
            plt.ylim(*ylim)
            plt.xticks(*axis_ticks(xlim, canvas_size(size.width, size.height)[0]))
            names = [
                (shown(e.get("name") or e["smiles"]).replace("bicyclo", ""), e["strain_kcal_mol"], e["best_yield_pct"])
                for e in pts
            ]
            placed, legend = label_plan(names, size.width, size.height, xlim, ylim)
            for label in placed:
                plt.text(label.text, label.x, label.y, color="cyan", alignment="left")
        return legend

    def action_kind(self, delta: int) -> None:
        if len(self.kinds) > 1:
            self.kind_index = (self.kind_index + delta) % len(self.kinds)
            self.show_plot()

    def action_turn(self, delta: int) -> None:
        if self.ids:
            self.index = (self.index + delta) % len(self.ids)
            self.show()

    def action_open_best(self) -> None:
        from .editor import WorkbenchScreen

        best = (self.review or {}).get("best")
        if best:
            self.app.push_screen(WorkbenchScreen(run_id=best["run_id"]))

    def action_fill_strain(self) -> None:
        missing = list((self.map or {}).get("missing_strain") or [])
        if not missing:
            self.notify("Every intermediate already has a cached strain value.")
            return
        bar = self.query_one("#fill-progress", ProgressBar)
        bar.display = True
        bar.update(total=len(missing), progress=0)
        self.fill(missing)

    @work(thread=True, exclusive=True, group="fill-strain", exit_on_error=False)
    def fill(self, smiles_list: list[str]) -> None:
        from ...store import Notebook
        from ...strain_link import get_strain

        problems = []
        with Notebook.open(self.app.nb.path) as nb:
            for i, smi in enumerate(smiles_list):
                try:
                    get_strain(nb, smi, "fast")
                except TrapbookError as exc:
                    problems.append(f"{smi}: {exc.message}")
                self.app.call_from_thread(self._filled_one, i + 1)
        self.app.call_from_thread(self._filled, problems)

    def _filled_one(self, n: int) -> None:
        if self.is_mounted:
            self.query_one("#fill-progress", ProgressBar).update(progress=n)

    def _filled(self, problems: list[str]) -> None:
        if not self.is_mounted:
            return
        self.query_one("#fill-progress").display = False
        if problems:
            self.notify("\n".join(problems), title="Some strain values failed", severity="warning")
        self.show_plot()
