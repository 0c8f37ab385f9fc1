"""Campaigns: the notebook's stored campaigns, the ranked table of one, and a new one started here.

The rows are the core's (`campaign.campaign_table`, the table `trapbook campaign` prints,
ranked there); the screen only lays them out (widgets/campaign_rows.py). A new campaign is
planned and run in a thread worker, `campaign.plan` then `campaign.run_campaign`, exactly as
the command does, so the same skeleton gives the same campaign id, the same cache entries
and the same record whichever started it.

Why a notebook connection of the worker's own: a SQLite connection belongs to the thread
that uses it, and the worker writes (each result as it arrives, then the record) while the
screen keeps reading through the app's connection; WAL lets both go on. The tables are read
in a worker too, through a read-only connection (`group.open_member`, as the Logbook's
preview does), because the first read loads RDKit.

The screen is installed once per app (`show_campaigns`), so leaving it does not stop a
running campaign: coming back shows it still counting. Quitting the app, or x, stops it:
the local cluster is closed, what was stored stays, and starting it again computes only
what is missing. The cluster is a LocalCluster of this machine, as the command's default
(`campaign.open_client`); an app given a `campaign_client` attribute (a test's small
in-process client) uses that one instead and leaves it open.
"""

from __future__ import annotations

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.screen import Screen
from textual.widgets import Checkbox, DataTable, Header, Input, ProgressBar, Select, Static

from ...errors import TrapbookError
from ..campaignwork import CampaignStopped, ClusterOnDemand, plan_and_run
from ..messages import CampaignEnded, CampaignProgress, CampaignTableReady
from ..text import shown
from ..theme import tone
from ..widgets import campaign_rows as cr
from ..widgets.in_order_input import InOrderInput
from ..widgets.keybar import KeyBar

#: The name the screen is installed under: one per app, so a running campaign outlives a visit.
SCREEN_NAME = "campaigns"
#: What `trapbook campaign` defaults to (cli/campaign.py): the accurate tier, bridgeheads, precursors aligned.
DEFAULT_TIER = "accurate"
DEFAULT_KINDS = "bridgehead"
#: Seconds between re-reads of the running campaign's table while results arrive.
TABLE_EVERY = 1.0


def show_campaigns(app) -> None:
    """Open the Campaigns screen, the same one each time (a campaign running in it goes on)."""
    if not app.is_screen_installed(SCREEN_NAME):
        app.install_screen(CampaignScreen(), name=SCREEN_NAME)
    app.push_screen(SCREEN_NAME)


class CampaignScreen(Screen):
    """The stored campaigns, one campaign's ranked candidates, and a box to start a new one."""

    BINDINGS = [
        Binding("n", "new_campaign", "New campaign"),
        Binding("x", "stop_campaign", "Stop campaign"),
        Binding("escape", "back", "Back"),
    ]

    DEFAULT_CSS = """
    #campaign-list { height: auto; max-height: 6; }
    CampaignScreen.-short #campaign-list { max-height: 4; }
    #campaign-start { height: 1; margin: 0 0; }
    #campaign-skeleton { width: 1fr; border: none; height: 1; background: $surface; padding: 0 1; }
    #campaign-kinds { width: 20; border: none; height: 1; background: $surface; padding: 0 1; margin-left: 1; }
    #campaign-skeleton:focus, #campaign-kinds:focus { background: $panel; }
    #campaign-tier { width: 14; margin-left: 1; }
    #campaign-precursors { width: 16; border: none; height: 1; padding: 0; margin-left: 1; background: $background; }
    #campaign-run { height: 1; }
    #campaign-bar { width: 26; }
    #campaign-counts { width: 1fr; }
    #campaign-msg { height: auto; max-height: 3; padding: 0 1; color: $error; }
    #campaign-title { height: auto; max-height: 2; padding: 0 1; background: $surface; }
    #campaign-table { height: 1fr; }
    #campaign-detail-box { height: 7; border-top: heavy $panel; padding: 0 1; }
    CampaignScreen.-short #campaign-detail-box { height: 5; }
    CampaignScreen.-tall #campaign-detail-box { height: 12; }
    """

    def __init__(self) -> None:
        super().__init__()
        self.entries: list[dict] = []
        self.shown_key: str | None = None
        self.record: dict | None = None
        self.rows: list[dict] = []
        self.columns: tuple = ()
        self.list_columns = cr.LIST_COLUMNS
        self.running: ClusterOnDemand | None = None
        self.running_id: str | None = None
        self._table_timer = None
        self.last_counts = (0, 0, 0)

    # --- what the session allows ---------------------------------------------------
    @property
    def read_only(self) -> bool:
        return bool(getattr(self.app, "read_only", False))

    @property
    def group(self):
        return getattr(self.app, "group", None)

    def check_action(self, action: str, parameters: tuple) -> bool | None:
        """Starting a campaign writes: hidden in a read-only session; x only while one runs."""
        if action == "new_campaign":
            return not self.read_only
        if action == "stop_campaign":
            return self.running is not None
        return True

    def on_key(self, event) -> None:
        """n in a read-only session does nothing but say so."""
        if self.read_only and event.key == "n" and not isinstance(self.focused, Input):
            event.stop()
            self.app.say_read_only()

    # --- layout ----------------------------------------------------------------------
    def compose(self) -> ComposeResult:
        yield Header()
        yield DataTable(id="campaign-list", cursor_type="row", cell_padding=0)
        with Horizontal(id="campaign-start"):
            yield InOrderInput(placeholder="skeleton SMILES, e.g. C1CC2CCCC(C1)C2 — Enter starts", id="campaign-skeleton")
            yield InOrderInput(DEFAULT_KINDS, placeholder="bridgehead,allene,alkyne", id="campaign-kinds")
            yield Select(
                [("accurate", "accurate"), ("fast", "fast")],
                value=DEFAULT_TIER,
                allow_blank=False,
                compact=True,
                id="campaign-tier",
            )
            yield Checkbox("precursors", True, compact=True, id="campaign-precursors")
        with Horizontal(id="campaign-run"):
            yield ProgressBar(id="campaign-bar", show_eta=False, show_percentage=False)
            yield Static("", id="campaign-counts")
        yield Static("", id="campaign-msg")
        yield Static("", id="campaign-title")
        yield DataTable(id="campaign-table", cursor_type="row", cell_padding=0)
        with VerticalScroll(id="campaign-detail-box"):
            yield Static("", id="campaign-detail")
        yield KeyBar()

    def on_mount(self) -> None:
        self.query_one("#campaign-start").display = not self.read_only
        self.query_one("#campaign-run").display = False
        self.query_one("#campaign-msg").display = False
        self.query_one(
            "#campaign-skeleton", Input
        ).tooltip = "A saturated polycycle: every bridgehead alkene of it is a candidate"
        self.lay_out()
        self.reload()
        self.query_one("#campaign-list", DataTable).focus()

    def on_screen_resume(self) -> None:
        self.reload(select=self.shown_key)

    def on_resize(self) -> None:
        """A new width may take or give back columns: both tables are laid out again, rows and all."""
        if cr.list_layout(self.app.size.width, self.group is not None) != self.list_columns:
            self.lay_out()
            self.reload(select=self.shown_key)
        self.fill_table()

    def lay_out(self) -> None:
        self.list_columns = cr.list_layout(self.app.size.width, self.group is not None)
        self.set_columns("#campaign-list", self.list_columns)

    def set_columns(self, table_id: str, columns) -> None:
        table = self.query_one(table_id, DataTable)
        table.clear(columns=True)
        for key, label, w in columns:
            table.add_column(label, key=key, width=w)

    def repaint_colours(self) -> None:
        self.reload(select=self.shown_key)
        self.fill_table()

    # --- the stored campaigns ----------------------------------------------------------
    def stored(self) -> list[dict]:
        """Every campaign this session can read: the notebook's, or each readable member's in a group view."""
        from ...campaign import campaigns, load_record

        sources = [(m.label, m.nb) for m in self.group.readable()] if self.group is not None else [(None, self.app.nb)]
        out = []
        for member, nb in sources:
            for cid in campaigns(nb):
                key = f"{member}:{cid}" if member else cid
                out.append({"key": key, "id": cid, "member": member, "path": nb.path, "record": load_record(nb, cid)})
        return out

    def reload(self, select: str | None = None) -> None:
        self.entries = self.stored()
        table = self.query_one("#campaign-list", DataTable)
        table.clear()
        for entry in self.entries:
            table.add_row(*cr.list_cells(entry, self.list_columns), key=entry["key"])
        if not self.entries:
            self.show_title(
                Text(
                    "No campaign in this notebook yet."
                    + ("" if self.read_only else " Type a skeleton's SMILES above and press Enter (or run 'trapbook campaign')."),
                    style=f"italic {tone('muted')}",
                )
            )
            return
        keys = [e["key"] for e in self.entries]
        wanted = select if select in keys else (self.shown_key if self.shown_key in keys else keys[0])
        table.move_cursor(row=keys.index(wanted), animate=False)
        self.open_entry(wanted)

    @on(DataTable.RowHighlighted, "#campaign-list")
    def _campaign_highlighted(self, event: DataTable.RowHighlighted) -> None:
        if event.row_key is not None and event.row_key.value != self.shown_key:
            self.open_entry(event.row_key.value)

    @on(DataTable.RowSelected, "#campaign-list")
    def _campaign_selected(self, event: DataTable.RowSelected) -> None:
        self.query_one("#campaign-table", DataTable).focus()

    def open_entry(self, key: str) -> None:
        entry = next((e for e in self.entries if e["key"] == key), None)
        if entry is None:
            return
        if key != self.shown_key:
            self.shown_key, self.record, self.rows = key, entry["record"], []
            self.fill_table()
        self.read_table(key, entry["path"], entry["id"])

    @work(thread=True, exclusive=True, group="campaign-table", exit_on_error=False)
    def read_table(self, key: str, path, campaign_id: str) -> None:
        """The ranked rows, off the UI thread and through a read-only connection of the worker's own."""
        from ...campaign import campaign_table, load_record
        from ...group import open_member

        try:
            with open_member(path) as own:
                record = load_record(own, campaign_id)
                rows = campaign_table(own, record) if record else []
        except TrapbookError as exc:
            self.post_message(CampaignTableReady(key, None, [], exc))
            return
        self.post_message(CampaignTableReady(key, record, rows))

    def on_campaign_table_ready(self, message: CampaignTableReady) -> None:
        if message.key != self.shown_key:  # the cursor moved on meanwhile
            return
        if message.error is not None:
            self.say_error(message.error)
            return
        self.record, self.rows = message.record, message.rows
        self.fill_table()

    def show_title(self, text: Text) -> None:
        self.query_one("#campaign-title", Static).update(text)

    def fill_table(self) -> None:
        table = self.query_one("#campaign-table", DataTable)
        current = self.current_row_name()
        table.clear()
        entry = next((e for e in self.entries if e["key"] == self.shown_key), None)
        if entry is None or self.record is None:
            self.query_one("#campaign-detail", Static).update("")
            return
        self.show_title(cr.title(entry, self.record))
        columns = cr.layout(self.app.size.width, any(c["precursors"] for c in self.record["candidates"]))
        if columns != self.columns:
            self.columns = columns
            self.set_columns("#campaign-table", columns)
        for row in self.rows:
            table.add_row(*cr.cells(row, self.columns), key=row["name"])
        if current is not None and current in table.rows:
            table.move_cursor(row=table.get_row_index(current), animate=False)
        self.show_detail()

    def current_row_name(self) -> str | None:
        table = self.query_one("#campaign-table", DataTable)
        if table.row_count == 0:
            return None
        return table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value

    @on(DataTable.RowHighlighted, "#campaign-table")
    def _candidate_highlighted(self, event: DataTable.RowHighlighted) -> None:
        self.show_detail()

    def show_detail(self) -> None:
        name = self.current_row_name()
        row = next((r for r in self.rows if r["name"] == name), None)
        self.query_one("#campaign-detail", Static).update(cr.detail(row, self.record or {}))

    # --- a new campaign ----------------------------------------------------------------
    def action_new_campaign(self) -> None:
        self.query_one("#campaign-skeleton", Input).focus()

    @on(Input.Submitted, "#campaign-skeleton")
    @on(Input.Submitted, "#campaign-kinds")
    def _submitted(self, event: Input.Submitted) -> None:
        self.start()

    def start(self) -> None:
        """Plan and run the campaign typed in the box, in a worker; refused in a read-only session."""
        if self.read_only:
            self.say_error(
                TrapbookError("this view only reads: no campaign is started here", "run it where the notebook can be written")
            )
            return
        if self.running is not None:
            self.say_error(TrapbookError("a campaign is already running here", "wait for it to finish, or stop it with x"))
            return
        source = self.query_one("#campaign-skeleton", Input).value.strip()
        kinds = tuple(dict.fromkeys(k.strip() for k in self.query_one("#campaign-kinds", Input).value.split(",") if k.strip()))
        tier = self.query_one("#campaign-tier", Select).value
        precursors = self.query_one("#campaign-precursors", Checkbox).value
        self.say_error(None)
        self.last_counts = (0, 0, 0)
        self.query_one("#campaign-bar", ProgressBar).update(total=None, progress=0)
        self.running = ClusterOnDemand(
            getattr(self.app, "campaign_client", None),
            on_start=lambda: self.post_message(CampaignProgress(None, 0, 0, 0, "starting a local Dask cluster…")),
        )
        self.show_progress(CampaignProgress(None, 0, 0, 0, "planning the candidates and their precursors…"))
        self.refresh_bindings()
        self.query_one("#campaign-list", DataTable).focus()  # the box would take x as a letter
        self.run_campaign(self.app.nb.path, source, tier, kinds or (DEFAULT_KINDS,), precursors, self.running)

    @work(thread=True, exclusive=True, group="campaign", exit_on_error=False)
    def run_campaign(self, path, source: str, tier: str, kinds: tuple, precursors: bool, cluster: ClusterOnDemand) -> None:
        """Plan, then run on the cluster (tui/campaignwork.py); each result is stored by this thread as it arrives."""
        planned: list[str] = []

        def progress(campaign_id: str, done: int, failed: int, left: int) -> None:
            planned[:] = [campaign_id]
            self.post_message(CampaignProgress(campaign_id, done, failed, left))

        try:
            campaign_id, summary = plan_and_run(
                path, source, tier, kinds, precursors, cluster, progress, author=getattr(self.app, "given_author", None)
            )
            self.post_message(CampaignEnded(campaign_id, summary))
        except CampaignStopped:
            self.post_message(CampaignEnded(next(iter(planned), None), None, stopped=True))
        except TrapbookError as exc:
            self.post_message(CampaignEnded(next(iter(planned), None), None, exc))
        except Exception as exc:  # noqa: BLE001 - a cluster that would not start, a lost scheduler: said, not swallowed
            problem = TrapbookError(
                f"the campaign stopped on an unexpected error ({type(exc).__name__}: {exc})",
                "what was computed is kept; run 'trapbook campaign' on the same skeleton to see the full message",
            )
            self.post_message(CampaignEnded(next(iter(planned), None), None, problem))
        finally:
            cluster.release()

    def on_campaign_progress(self, message: CampaignProgress) -> None:
        if message.campaign_id is not None and self.running_id is None and sum(self.counts_of(message)):
            # the record is stored before the first count: list it and show it (single notebook: key = id)
            self.running_id = message.campaign_id
            self.reload(select=message.campaign_id)
        self.show_progress(message)
        if self.running_id is not None and self.shown_key == self.running_id and self._table_timer is None:
            self._table_timer = self.set_timer(TABLE_EVERY, self._reread_running)

    def _reread_running(self) -> None:
        self._table_timer = None
        entry = next((e for e in self.entries if e["key"] == self.shown_key), None)
        if entry is not None:
            self.read_table(entry["key"], entry["path"], entry["id"])

    @staticmethod
    def counts_of(message: CampaignProgress) -> tuple[int, int, int]:
        return (message.done, message.failed, message.left)

    def show_progress(self, message: CampaignProgress) -> None:
        self.query_one("#campaign-run").display = True
        bar = self.query_one("#campaign-bar", ProgressBar)
        total = message.done + message.failed + message.left
        if total:
            bar.update(total=total, progress=message.done + message.failed)
            self.last_counts = (message.done, message.failed, message.left)
        elif message.stage is None:
            return  # planned: its id is known, nothing counted yet
        stage = message.stage or ("computing…" if message.left else None)
        self.query_one("#campaign-counts", Static).update(cr.counts(*self.last_counts, stage))

    def on_campaign_ended(self, message: CampaignEnded) -> None:
        self.running = None
        self.running_id = None
        self.refresh_bindings()
        counts = self.query_one("#campaign-counts", Static)
        bar = self.query_one("#campaign-bar", ProgressBar)
        if bar.total is None:  # still waiting for its first count: an empty bar, not a busy one
            bar.update(total=1, progress=0)
        if message.error is not None:
            self.say_error(message.error)
            counts.update(Text("not started" if message.campaign_id is None else "stopped", style=tone("stop")))
        elif message.stopped:
            counts.update(Text("stopped: results so far are kept; Enter in the box resumes", style=tone("warn")))
        else:
            s = message.summary
            failed = len(s["failed"])
            bar.update(total=max(s["tasks"], 1), progress=max(s["tasks"], 1))
            words = cr.counts(s["tasks"] - failed, failed, 0, f"finished ({s['computed']} computed, {s['from_cache']} cached)")
            counts.update(words)
        if message.campaign_id is not None:
            self.reload(select=message.campaign_id)

    def action_stop_campaign(self) -> None:
        if self.running is not None:
            self.running.stop()
            self.query_one("#campaign-counts", Static).update(Text("stopping…", style=tone("warn")))

    def on_unmount(self) -> None:
        """The app is closing: a running campaign stops at its next result, the cluster is closed."""
        if self.running is not None:
            self.running.stop()

    def say_error(self, exc: TrapbookError | None) -> None:
        msg = self.query_one("#campaign-msg", Static)
        msg.display = exc is not None
        if exc is None:
            msg.update("")
            return
        text = Text(shown(exc.message), style=f"bold {tone('stop')}")
        if exc.hint:
            text.append(f"\nwhat to do: {shown(exc.hint)}", style=tone("muted"))
        msg.update(text)

    # --- leaving -----------------------------------------------------------------------
    def action_back(self) -> None:
        """Esc in a box: back to the tables; otherwise back to the Logbook (a running campaign goes on)."""
        if isinstance(self.focused, (Input, Select, Checkbox)):
            self.query_one("#campaign-table" if self.rows else "#campaign-list", DataTable).focus()
            return
        self.app.pop_screen()
