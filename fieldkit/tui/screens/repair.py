"""After the diagnosis: the work done (parts fitted or adjusted, a relief's new setting) and the
machine's status when the technician leaves it."""

from __future__ import annotations

from pydantic import ValidationError
from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.containers import Grid, Vertical
from textual.widgets import Button, Input, Label, Select, Static

from fieldkit.errors import FieldkitError
from fieldkit.model.repair import Departure, MachineStatus, WorkItem, WorkKind
from fieldkit.tui import keys
from fieldkit.tui.error_text import explain
from fieldkit.tui.safe_text import literal
from fieldkit.tui.screens.dialogs import Dialog
from fieldkit.tui.widgets.keybar import KeyBar
from fieldkit.units import parse_value


def build_work(kind: str, part: str, setting: str, note: str, decimal_comma: bool = False) -> WorkItem:
    """A WorkItem from the form's text; a bad setting names the field."""
    value = None
    if setting.strip():
        try:
            value = parse_value(setting, decimal_comma=decimal_comma).quantity
        except FieldkitError as exc:
            raise FieldkitError(f"new setting: {exc}") from None
    return WorkItem(kind=WorkKind(kind), part=part.strip(), setting=value, note=note.strip())


class WorkDialog(Dialog):
    """Dismisses with a WorkItem, or None."""

    BINDINGS = keys.COMPLAINT

    def __init__(self, decimal_comma: bool = False) -> None:
        super().__init__()
        self._comma = decimal_comma

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label(Text("Work done", style="bold"), classes="dialog-title")
            with Grid(classes="form"):
                yield Label("What")
                yield Select(
                    [(Text(k.value), k.value) for k in WorkKind],
                    value=WorkKind.FITTED.value,
                    allow_blank=False,
                    id="w-kind",
                    compact=True,
                )
                yield Label("Part")
                yield Input(placeholder="e.g. charge relief valve cartridge", id="w-part", compact=True)
                yield Label("New setting")
                yield Input(
                    placeholder="for a relief: e.g. 24 bar (empty if none)", id="w-setting", compact=True
                )
                yield Label("Note")
                yield Input(placeholder="optional", id="w-note", compact=True)
            yield Static("", id="w-error", classes="inline-error")
            yield Button("Save (ctrl+s)", id="w-save", variant="primary")
        yield KeyBar()

    def on_mount(self) -> None:
        self.query_one("#w-part", Input).focus()

    @on(Button.Pressed, "#w-save")
    def _pressed(self) -> None:
        self.action_save()

    def action_save(self) -> None:
        try:
            work = build_work(
                str(self.query_one("#w-kind", Select).value),
                self.query_one("#w-part", Input).value,
                self.query_one("#w-setting", Input).value,
                self.query_one("#w-note", Input).value,
                self._comma,
            )
        except (FieldkitError, ValidationError) as exc:
            self.query_one("#w-error", Static).update(literal(explain(exc)))
            return
        self.dismiss(work)


class StatusDialog(Dialog):
    """The machine's status at departure; dismisses with a Departure, or None."""

    BINDINGS = keys.COMPLAINT

    def __init__(self, current: Departure | None, dangers: list[str]) -> None:
        super().__init__()
        self._current, self._dangers = current, dangers

    def compose(self) -> ComposeResult:
        cur = self._current
        with Vertical(classes="dialog"):
            yield Label(Text("The machine's status as you leave it", style="bold"), classes="dialog-title")
            if self._dangers:
                yield Static(
                    literal("Still open after the repair (danger): " + "; ".join(self._dangers)),
                    classes="inline-error",
                )
            with Grid(classes="form"):
                yield Label("Status")
                yield Select(
                    [(Text(s.label), s.value) for s in MachineStatus],
                    value=cur.status.value if cur else MachineStatus.FIT.value,
                    allow_blank=False,
                    id="s-status",
                    compact=True,
                )
                yield Label("Limits")
                yield Input(
                    cur.limits if cur else "",
                    placeholder="for 'with limits': e.g. no travel on slopes",
                    id="s-limits",
                    compact=True,
                )
                yield Label("Why")
                yield Input(
                    cur.why if cur else "",
                    placeholder="for 'do not operate', or an open danger",
                    id="s-why",
                    compact=True,
                )
                yield Label("Next action")
                yield Input(
                    cur.next_action if cur else "",
                    placeholder="e.g. re-check charge at 250 h",
                    id="s-next",
                    compact=True,
                )
            yield Static("", id="s-error", classes="inline-error")
            yield Button("Save (ctrl+s)", id="s-save", variant="primary")
        yield KeyBar()

    def on_mount(self) -> None:
        self.query_one("#s-status", Select).focus()

    @on(Button.Pressed, "#s-save")
    def _pressed(self) -> None:
        self.action_save()

    def action_save(self) -> None:
        try:
            departure = Departure(
                status=MachineStatus(str(self.query_one("#s-status", Select).value)),
                limits=self.query_one("#s-limits", Input).value.strip(),
                why=self.query_one("#s-why", Input).value.strip(),
                next_action=self.query_one("#s-next", Input).value.strip(),
            )
        except ValidationError as exc:
            self.query_one("#s-error", Static).update(literal(explain(exc)))
            return
        self.dismiss(departure)
