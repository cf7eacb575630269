"""Finish a visit: a summary and the notes, close it, write the job card."""

from __future__ import annotations

from pathlib import Path

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.containers import Horizontal, Vertical
from textual.widgets import Button, Input, Label, Select, Static, TextArea

from fieldkit.diagnosis.results import Diagnosis, Verdict
from fieldkit.errors import FieldkitError
from fieldkit.model.profile import MachineProfile
from fieldkit.model.visit import MAX_TEXT, Visit
from fieldkit.session import Workbench
from fieldkit.tui import keys
from fieldkit.tui.export import FORMATS, default_folder, export_job_card, jobcard_available
from fieldkit.tui.safe_text import literal
from fieldkit.tui.screens.base import FieldkitScreen
from fieldkit.tui.screens.dialogs import Dialog
from fieldkit.tui.widgets.keybar import KeyBar
from fieldkit.units import DisplaySystem, percent

WRITE_ERRORS = (FieldkitError, OSError, ValueError)


def draft_summary(diagnosis: Diagnosis) -> str:
    """A first draft for the technician to edit: counts, the top fault, what to do next."""
    out_of_range = [c for c in diagnosis.checks if c.verdict in (Verdict.LOW, Verdict.HIGH)]
    parts = [f"{len(diagnosis.checks)} readings taken, {len(out_of_range)} out of range."]
    if out_of_range:
        parts.append(
            "Out of range: "
            + "; ".join(f"{c.test_point_label} {c.value} ({c.verdict.label})" for c in out_of_range[:6])
            + "."
        )
    if diagnosis.faults:
        top = diagnosis.faults[0]
        parts.append(f"Most likely: {top.display_title} ({percent(top.probability)}).")
        if top.fix:
            parts.append(f"Recommended: {top.fix}")
    return " ".join(parts)


def _format_select(widget_id: str) -> Select:
    default = "pdf" if jobcard_available() else "text"
    return Select(
        [(Text(f), f) for f in FORMATS], value=default, allow_blank=False, id=widget_id, compact=True
    )


class FinishScreen(FieldkitScreen):
    BINDINGS = keys.FINISH

    def __init__(self, bench: Workbench, visit: Visit, profile: MachineProfile, diagnosis: Diagnosis) -> None:
        super().__init__()
        self.bench, self.visit, self.profile, self.diagnosis = bench, visit, profile, diagnosis

    def compose(self) -> ComposeResult:
        title = Text(end="", no_wrap=True, overflow="ellipsis")
        title.append("Finish visit ", "bold")
        title.append_text(literal(self.visit.job_number, "bold"))
        title.append(" · summary, notes, job card")
        yield Static(title, id="topbar")
        with Vertical(id="finish-body"):
            yield Label("Summary for the job card (edit freely)")
            yield TextArea(draft_summary(self.diagnosis), id="summary", soft_wrap=True)
            yield Label("Visit notes")
            yield TextArea(self.visit.notes, id="notes", soft_wrap=True)
            with Horizontal(classes="entry-row"):
                yield Label("Job card as ")
                yield _format_select("format")
                yield Label(" in ")
                yield Input(str(default_folder()), id="folder", compact=True)
            yield Static("", id="finish-msg")
            with Horizontal(classes="dialog-buttons"):
                yield Button("Close visit and write job card (ctrl+s)", id="do-finish", variant="primary")
                yield Button("Back (Esc)", id="back")
        yield KeyBar()

    def on_mount(self) -> None:
        self.query_one("#summary", TextArea).focus()

    @on(Button.Pressed, "#do-finish")
    def _finish_pressed(self) -> None:
        self.action_finish()

    @on(Button.Pressed, "#back")
    def _back_pressed(self) -> None:
        self.action_back()

    def _say(self, message: str) -> None:
        self.query_one("#finish-msg", Static).update(literal(message))

    def action_finish(self) -> None:
        summary = self.query_one("#summary", TextArea).text.strip()
        notes = self.query_one("#notes", TextArea).text
        folder = Path(self.query_one("#folder", Input).value.strip() or default_folder()).expanduser()
        fmt = str(self.query_one("#format", Select).value)
        if len(summary) > MAX_TEXT or len(notes) > MAX_TEXT:
            self._say(f"✗ summary and notes are at most {MAX_TEXT} characters each")
            return
        store = self.bench.store
        try:
            if notes != self.visit.notes:
                store.update_visit(self.visit.id, notes=notes)
            closed = self.bench.finish(self.visit.id, summary)
        except FieldkitError as exc:
            self._say(f"✗ the visit was not closed: {exc}")
            return
        diagnosis = self.bench.diagnose(closed, self.profile)
        try:
            _path, what = export_job_card(closed, self.profile, diagnosis, folder, fmt, self.bench.system)
        except WRITE_ERRORS as exc:
            self.dismiss(
                f"✓ Visit closed. ✗ The job card was not written ({exc}); Find (F3) → 'Write the job card' "
                "tries again."
            )
            return
        self.dismiss(f"✓ Visit closed. {what}")

    def action_back(self) -> None:
        self.dismiss(None)


class JobCardDialog(Dialog):
    """Write the job card of a closed visit again."""

    BINDINGS = keys.JOB_CARD

    def __init__(
        self, visit: Visit, profile: MachineProfile, diagnosis: Diagnosis, system: DisplaySystem | None = None
    ) -> None:
        super().__init__()
        self.visit, self.profile, self.diagnosis, self.system = visit, profile, diagnosis, system

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label(Text("Write the job card", style="bold"), classes="dialog-title")
            with Horizontal(classes="entry-row"):
                yield Label("Format ")
                yield _format_select("jc-format")
            yield Input(str(default_folder()), id="jc-folder")
            yield Static("", id="jc-msg", classes="inline-error")
            yield Button("Write (ctrl+s)", id="jc-write", variant="primary")
        yield KeyBar()

    @on(Button.Pressed, "#jc-write")
    @on(Input.Submitted, "#jc-folder")
    def _go(self) -> None:
        self.action_write()

    def action_write(self) -> None:
        folder = Path(self.query_one("#jc-folder", Input).value.strip() or default_folder()).expanduser()
        try:
            _path, what = export_job_card(
                self.visit,
                self.profile,
                self.diagnosis,
                folder,
                str(self.query_one("#jc-format", Select).value),
                self.system,
            )
        except WRITE_ERRORS as exc:
            self.query_one("#jc-msg", Static).update(literal(f"✗ not written: {exc}"))
            return
        self.dismiss(f"✓ {what}")
