"""Earlier visits to this machine, side by side, with a small trend per test point."""

from __future__ import annotations

from rich.text import Text
from textual.app import ComposeResult
from textual.widgets import DataTable, Static

from fieldkit.model.profile import MachineProfile
from fieldkit.model.visit import Visit
from fieldkit.session import Workbench
from fieldkit.tui import keys
from fieldkit.tui.safe_text import literal
from fieldkit.tui.screens.base import FieldkitScreen
from fieldkit.tui.trend import history_table
from fieldkit.tui.widgets.keybar import KeyBar


class HistoryScreen(FieldkitScreen):
    BINDINGS = keys.HISTORY

    def __init__(self, bench: Workbench, profile: MachineProfile, visit: Visit | None) -> None:
        super().__init__()
        self.bench, self.profile, self.visit = bench, profile, visit
        self.same_serial = visit is not None and bool(visit.machine_serial)

    def compose(self) -> ComposeResult:
        yield Static(id="topbar")
        yield DataTable(id="history", cursor_type="row", zebra_stripes=True, header_height=2)
        yield Static(
            Text(
                "Case drain flows are shown at the reference oil temperature (leakage scales with "
                "1/viscosity), so hot and cold days compare. Trend: one mark per visit, low ▁ to high █, "
                "oldest visit on the left; the columns list the newest visit first.",
                end="",
            ),
            id="history-note",
        )
        yield KeyBar()

    def on_mount(self) -> None:
        self.show()
        self.query_one("#history", DataTable).focus()

    def show(self) -> None:
        serial = self.visit.machine_serial if self.visit is not None and self.same_serial else ""
        table = history_table(self.bench.store, self.profile, self.bench.system, serial=serial)
        title = Text(end="", no_wrap=True, overflow="ellipsis")
        title.append("History · ", "bold")
        title.append_text(literal(f"{self.profile.name} · {table.scope} · {len(table.visits)} visits"))
        if self.visit is not None and self.visit.machine_serial:
            title.append(" · a: this serial / all", "dim")
        self.query_one("#topbar", Static).update(title)
        grid = self.query_one("#history", DataTable)
        grid.clear(columns=True)
        grid.add_column(Text("test point (condition)"), key="label")
        grid.add_column(Text("trend"), key="trend")
        grid.add_column(Text("change"), key="change")
        order = list(range(len(table.visits)))[::-1]  # newest visit first, beside the trend
        for i in order:
            s = table.visits[i]
            head = literal(f"{s.date:%Y-%m-%d}\n{s.job_number}")
            if s.taken_by:  # from the shop server: who took the visit
                head.append_text(literal(f" · {s.taken_by}"))
            if self.visit is not None and s.id == self.visit.id:
                head.append(" ◂", "bold")
            grid.add_column(head, key=s.id)
        for row in table.rows:
            grid.add_row(
                literal(row.label),
                Text(row.trend, style="bold"),
                Text(row.change),
                *[literal(row.cells[i] or "—") for i in order],
                height=1,
            )
        if not table.rows:
            grid.add_row(
                Text("no readings on record for this machine"),
                Text(""),
                Text(""),
                *[Text("") for _ in table.visits],
            )

    def action_toggle_scope(self) -> None:
        if self.visit is None or not self.visit.machine_serial:
            return
        self.same_serial = not self.same_serial
        self.show()

    def action_cancel(self) -> None:
        self.app.pop_screen()
