"""The start screen: open visits first (one key resumes the latest), past visits, machines."""

from __future__ import annotations

import functools
from collections.abc import Callable, Iterable
from pathlib import Path
from typing import Any

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.containers import Vertical
from textual.message import Message
from textual.widgets import DataTable, Label, Static

from fieldkit.errors import FieldkitError
from fieldkit.model.visit import VisitStatus
from fieldkit.session import Workbench, read_visit_file
from fieldkit.store.base import VisitSummary
from fieldkit.tomlfile import parse_toml, read_text
from fieldkit.tui import keys
from fieldkit.tui.error_text import explain
from fieldkit.tui.safe_text import literal
from fieldkit.tui.screens.base import FieldkitScreen
from fieldkit.tui.widgets.keybar import KeyBar

DEMO_OPEN_VISIT = "demo-open-visit.json"


def visit_row(s: VisitSummary) -> list[Text]:
    return [
        literal(s.job_number),
        Text(s.date.isoformat()),
        literal(s.machine),
        Text(str(s.reading_count)),
        literal(s.customer),
    ]


class StartScreen(FieldkitScreen):
    """Where a technician picks up work: resume, start, import, or look back."""

    class DemoWanted(Message):
        """The technician asked for the demo store (the app opens it over the user's own)."""

    BINDINGS = keys.START

    def __init__(self, bench: Workbench, *, demo: bool = False) -> None:
        super().__init__()
        self.bench = bench
        self.demo = demo
        self.summaries: list[VisitSummary] = []
        self._lists_fresh = False

    def compose(self) -> ComposeResult:
        yield Static(id="topbar")
        yield Static(id="sync-status")
        with Vertical(id="start-body"):
            yield Label("Open visits  (r resumes the latest · Enter opens)", classes="section-title")
            yield DataTable(id="open-visits", cursor_type="row")
            yield Label("Past visits", classes="section-title")
            yield DataTable(id="past-visits", cursor_type="row", zebra_stripes=True)
            yield Label(
                "Machines  (Enter starts a visit · m new · e edit · c copy · h history)",
                classes="section-title",
            )
            yield DataTable(id="machines", cursor_type="row")
        yield Static("", id="start-msg")
        yield KeyBar()

    def on_mount(self) -> None:
        for table_id in ("#open-visits", "#past-visits"):
            self.query_one(table_id, DataTable).add_columns("job", "date", "machine", "readings", "customer")
        self.query_one("#machines", DataTable).add_columns("machine", "id", "circuits", "visits")
        self.refresh_lists()
        self._lists_fresh = True
        problems = self.bench.library.problem_lines()
        if self.bench.store.read_only:
            problems.append(
                f"the store {self.bench.store.path} is read-only here: visits can be read, not changed"
            )
        if problems:  # one broken profile file stops nothing; it is named here until fixed
            self.query_one("#start-msg", Static).update(
                literal("⚠ " + "\n⚠ ".join(problems) + "\n  Everything else works as usual.", multiline=True)
            )
        self.query_one("#open-visits" if self._open() else "#past-visits", DataTable).focus()

    def on_screen_resume(self) -> None:
        # The first resume follows the mount that has just filled the lists: reading the store
        # again there only delayed the first screen.
        if self._lists_fresh:
            self._lists_fresh = False
            return
        self.refresh_lists()

    # --- lists ------------------------------------------------------------------------------
    def _open(self) -> list[VisitSummary]:
        return [s for s in self.summaries if s.status is VisitStatus.OPEN]

    def refresh_lists(self) -> None:
        self.summaries = self.bench.store.list_visits()
        title = Text(end="", no_wrap=True, overflow="ellipsis")
        if self.demo:
            title.append(" DEMO ", "reverse bold")
            title.append(" ")
        title.append("fieldkit", "bold")
        title.append(" · hydraulic test visits · store ")
        title.append_text(literal(str(self.bench.store.path)))
        self.query_one("#topbar", Static).update(title)
        open_table = self.query_one("#open-visits", DataTable)
        past_table = self.query_one("#past-visits", DataTable)
        for table in (open_table, past_table):
            table.clear()
        opened = sorted(self._open(), key=lambda s: s.updated_at, reverse=True)
        for s in opened:
            open_table.add_row(*visit_row(s), key=s.id)
        for s in self.summaries:
            if s.status is VisitStatus.CLOSED:
                past_table.add_row(*visit_row(s), key=s.id)
        if not opened:
            open_table.add_row(
                Text("no open visit: n starts one"), Text(""), Text(""), Text(""), Text(""), key="-none-"
            )
        self.show_sync_status()
        machines = self.query_one("#machines", DataTable)
        machines.clear()
        counts: dict[str, int] = {}
        for s in self.summaries:
            counts[s.machine] = counts.get(s.machine, 0) + 1
        for pid in self.bench.library.ids():
            p = self.bench.library.get(pid)
            machines.add_row(
                literal(p.name),
                literal(p.id),
                Text(str(len(p.circuits))),
                Text(str(counts.get(pid, 0))),
                key=f"machine:{pid}",
            )

    # --- the shop server --------------------------------------------------------------------
    def show_sync_status(self, progress: str = "") -> None:
        from fieldkit.tui.sync_status import sync_status_text

        self.query_one("#sync-status", Static).update(sync_status_text(self.bench.store, progress))

    def action_sync(self) -> None:
        """Sync in a worker thread: the store is shared under its lock, which a sync takes only
        for one batch at a time, so readings typed meanwhile are saved at once."""
        if any(w.group == "sync" and not w.is_finished for w in self.workers):
            self._say("A sync is already running; its progress is shown above.")
            return
        self.show_sync_status("connecting to the shop server…")
        self.run_worker(self._sync_in_background, thread=True, group="sync", name="sync")

    def _sync_in_background(self) -> None:
        from fieldkit.profile_sync import sync_with_profiles
        from fieldkit.settings import user_profiles_dir
        from fieldkit.store.pg_server import ShopServer, server_conninfo

        def progress(phase: str, done: int, total: int) -> None:
            word = "sending" if phase == "up" else "receiving"
            self.app.call_from_thread(self.show_sync_status, f"{word} {done} of {total}…")

        try:
            with ShopServer(server_conninfo()) as server:
                report, profiles = sync_with_profiles(self.bench.store, server, user_profiles_dir(), progress)
        except FieldkitError as exc:
            self.app.call_from_thread(self._sync_failed, exc)
            return
        self.app.call_from_thread(self._synced, [*report.lines()[1:], *profiles.lines()])

    def _sync_failed(self, exc: FieldkitError) -> None:
        self.show_sync_status()
        self._say(explain(exc, "✗ sync stopped; everything on this laptop is kept"))

    def _synced(self, lines: list[str]) -> None:
        self.refresh_lists()
        self._say("✓ synced · " + " · ".join(lines))

    def _say(self, message: str | Text) -> None:
        self.query_one("#start-msg", Static).update(
            message if isinstance(message, Text) else literal(message)
        )

    # --- opening ----------------------------------------------------------------------------
    def open_visit(self, visit_id: str) -> None:
        from fieldkit.tui.screens.visit import VisitScreen

        try:
            visit = self.bench.store.get_visit(visit_id)
            self.bench.profile_for(visit)
        except FieldkitError as exc:
            self._say(explain(exc, "✗ cannot open that visit"))
            return
        self.app.push_screen(VisitScreen(self.bench, visit_id, demo=self.demo))

    @on(DataTable.RowSelected)
    def _row_chosen(self, event: DataTable.RowSelected) -> None:
        key = event.row_key.value
        if key is None or key == "-none-":
            if key == "-none-":
                self.action_new_visit()
            return
        if key.startswith("machine:"):
            self.action_new_visit(key.removeprefix("machine:"))
        else:
            self.open_visit(key)

    def action_open_selected(self) -> None:
        focused = self.focused
        if isinstance(focused, DataTable) and focused.row_count:
            focused.action_select_cursor()

    def action_back(self) -> None:
        """Leave the demo store for the user's own (only when the demo was opened on top of it)."""
        if len(self.app.screen_stack) > 2 and self.app.screen is self:
            self.app.pop_screen()
        else:
            self._say("This is the first screen: ^q quits (every saved reading is already on disk).")

    def action_resume_latest(self) -> None:
        opened = sorted(self._open(), key=lambda s: s.updated_at, reverse=True)
        if not opened:
            self._say("No open visit to resume: n starts a new one, d opens the demo.")
            return
        self.open_visit(opened[0].id)

    def action_new_visit(self, machine: str | None = None) -> None:
        from fieldkit.tui.screens.new_visit import NewVisitScreen

        def created(visit_id: str | None) -> None:
            if visit_id:
                self.refresh_lists()
                self.open_visit(visit_id)

        self.app.push_screen(NewVisitScreen(self.bench, machine), created)

    # --- machines ---------------------------------------------------------------------------
    def _selected_machine(self) -> str | None:
        table = self.query_one("#machines", DataTable)
        if not table.row_count:
            return None
        key = table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value
        return key.removeprefix("machine:") if key and key.startswith("machine:") else None

    def open_builder(self, raw: dict[str, Any] | None = None, path: Path | None = None) -> None:
        """The machine builder; a saved machine goes straight to a new visit on it."""
        from fieldkit.tui.screens.machine_builder import MachineBuilderScreen

        def saved(machine_id: str | None) -> None:
            if machine_id:
                self.refresh_lists()
                self.action_new_visit(machine_id)

        self.app.push_screen(MachineBuilderScreen(self.bench, raw, path), saved)

    def action_open_kit(self) -> None:
        from fieldkit.tui.screens.kit import KitScreen

        self.app.push_screen(KitScreen(self.bench), lambda _r: None)

    def action_new_machine(self) -> None:
        self.open_builder()

    def _machine_table(self, verb: str) -> tuple[str, dict[str, Any], Path] | None:
        pid = self._selected_machine()
        if pid is None:
            self._say(f"Choose a machine in the Machines list first (Tab), then {verb}.")
            return None
        path = self.bench.library.path_of(pid)
        try:
            raw = parse_toml(read_text(path), str(path))
        except FieldkitError as exc:
            self._say(explain(exc, "✗ cannot read that machine"))
            return None
        return pid, raw, path

    def action_edit_machine(self) -> None:
        found = self._machine_table("e edits it")
        if found is not None:
            _pid, raw, path = found
            self.open_builder(raw, path)

    def action_copy_machine(self) -> None:
        found = self._machine_table("c copies it")
        if found is not None:
            pid, raw, _path = found
            n = 2
            while self.bench.library.has(f"{pid}-{n}"):
                n += 1
            raw = {**raw, "id": f"{pid}-{n}", "name": f"{raw.get('name', pid)} (copy)"}
            self.open_builder(raw, None)

    def action_open_demo(self) -> None:
        if self.demo:
            self.open_demo_visit()
        else:
            self.post_message(self.DemoWanted())

    def open_demo_visit(self) -> None:
        """The demo's open visit; when it was closed, a fresh copy of it."""
        from fieldkit.resources import samples_dir

        path = samples_dir() / "visits" / DEMO_OPEN_VISIT
        try:
            sample, _ = read_visit_file(path)
        except FieldkitError as exc:
            self._say(explain(exc, "✗ the demo visit cannot be read"))
            return
        open_ids = {s.id for s in self._open()}
        if sample.id in open_ids:
            self.open_visit(sample.id)
            return
        copy = self.bench.store.import_visit(sample, as_new=True)
        self._say(f"The demo visit was closed; a fresh copy ({copy.id}) is opened.")
        self.refresh_lists()
        self.open_visit(copy.id)

    # --- import -----------------------------------------------------------------------------
    def _selected_open_visit(self) -> VisitSummary | None:
        table = self.query_one("#open-visits", DataTable)
        opened = sorted(self._open(), key=lambda s: s.updated_at, reverse=True)
        if not opened:
            return None
        row = table.cursor_row if table.cursor_row is not None and table.cursor_row < len(opened) else 0
        return opened[row]

    def action_import_file(self) -> None:
        from fieldkit.tui.screens.dialogs import LinePrompt, existing_file

        target = self._selected_open_visit()
        where = (
            f"; a CSV of readings goes into the highlighted open visit ({target.job_number})"
            if target
            else "; a CSV of readings needs an open visit"
        )

        def chosen(text: str | None) -> None:
            if text:
                self.import_path(Path(text.strip()).expanduser())

        self.app.push_screen(
            LinePrompt(
                "Import",
                literal(f"Path of a visit JSON file or a CSV of readings{where}:"),
                check=existing_file((".json", ".csv")),
            ),
            chosen,
        )

    def import_path(self, path: Path) -> None:
        from fieldkit.tui.screens.dialogs import ConfirmDialog
        from fieldkit.tui.visit_edits import import_readings_csv

        if path.suffix.lower() == ".csv":
            target = self._selected_open_visit()
            if target is None:
                self._say("✗ nothing imported: a CSV of readings needs an open visit to go into")
                return
            message = import_readings_csv(self.bench, target.id, path)
            self._say(message)
            self.refresh_lists()
            return
        try:
            visit, embedded = read_visit_file(path)
            if embedded is None:
                self.bench.library.get(visit.machine)
            else:
                self.bench.library.get(embedded.id)
        except FieldkitError as exc:
            self._say(explain(exc, "✗ nothing imported"))
            return
        if any(s.id == visit.id for s in self.summaries):

            def as_copy(yes: bool | None) -> None:
                if yes:
                    self._import_visit(visit, as_new=True)

            self.app.push_screen(
                ConfirmDialog(
                    "Already in the store",
                    literal(
                        f"Visit {visit.job_number} ({visit.id}) is already in the store. Import it again as "
                        "a copy with new ids?"
                    ),
                    yes="Import a copy",
                    no="Cancel",
                ),
                as_copy,
            )
            return
        self._import_visit(visit, as_new=False)

    def _import_visit(self, visit, *, as_new: bool) -> None:
        try:
            stored = self.bench.store.import_visit(visit, as_new=as_new)
        except FieldkitError as exc:
            self._say(explain(exc, "✗ nothing imported"))
            return
        self._say(f"✓ imported visit {stored.job_number} ({len(stored.current_readings())} readings)")
        self.refresh_lists()

    # --- history ----------------------------------------------------------------------------
    def action_machine_history(self) -> None:
        from fieldkit.tui.screens.history import HistoryScreen

        focused = self.focused
        if not isinstance(focused, DataTable) or not focused.row_count or focused.cursor_row is None:
            self._say("Highlight a visit or a machine first.")
            return
        key = focused.coordinate_to_cell_key(focused.cursor_coordinate).row_key.value or ""
        try:
            if key.startswith("machine:"):
                profile = self.bench.library.get(key.removeprefix("machine:"))
                visit = None
            elif key != "-none-":
                visit = self.bench.store.get_visit(key)
                profile = self.bench.profile_for(visit)
            else:
                return
        except FieldkitError as exc:
            self._say(explain(exc, "✗ no history"))
            return
        self.app.push_screen(HistoryScreen(self.bench, profile, visit))

    def palette_commands(self) -> Iterable[tuple[str, str, Callable[[], object]]]:
        yield "Resume the latest open visit", "pick up where you left off", self.action_resume_latest
        yield "New visit", "machine, job number, customer, hour meter", self.action_new_visit
        yield "Sync with the shop server", "in the background; keep working", self.action_sync
        yield "Open the demo", "the bundled sample visits", self.action_open_demo
        yield (
            "Import a visit (JSON) or readings (CSV)",
            "from another laptop or a logger",
            self.action_import_file,
        )
        for s in self.summaries:
            state = "open" if s.status is VisitStatus.OPEN else "closed"
            yield (
                f"Open visit {s.job_number} · {s.machine} · {s.date.isoformat()}",
                f"{state} visit",
                functools.partial(self.open_visit, s.id),
            )
        for pid in self.bench.library.ids():
            yield (
                f"New visit on {pid}",
                "start a visit on this machine",
                functools.partial(self.action_new_visit, pid),
            )
