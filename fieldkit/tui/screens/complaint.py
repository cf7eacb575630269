"""The operator's complaint: their own words, and the symptoms picked from the rules' list."""

from __future__ import annotations

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.containers import Vertical
from textual.widgets import Button, Input, Label, SelectionList
from textual.widgets.selection_list import Selection

from fieldkit.diagnosis.evidence import EvidenceBook
from fieldkit.tui import keys
from fieldkit.tui.screens.dialogs import Dialog
from fieldkit.tui.widgets.keybar import KeyBar


class ComplaintDialog(Dialog):
    """Returns ``(complaint, [symptom ids])`` or None when cancelled."""

    BINDINGS = keys.COMPLAINT

    def __init__(self, book: EvidenceBook, complaint: str, chosen: list[str]) -> None:
        super().__init__()
        self._book, self._complaint, self._chosen = book, complaint, set(chosen)

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog dialog-tall"):
            yield Label(Text("The complaint", style="bold"), classes="dialog-title")
            yield Label("What the operator reports, in their words")
            yield Input(
                value=self._complaint,
                placeholder="e.g. slow to lift once it has been working an hour",
                id="complaint-text",
                max_length=4000,
            )
            yield Label("Symptoms (space ticks one; they count as evidence in the ranking)")
            yield SelectionList[str](
                *[Selection(Text(s.text), s.id, s.id in self._chosen) for s in self._book.symptoms.values()],
                id="symptoms",
            )
            yield Button("Save (ctrl+s)", id="complaint-save", variant="primary")
        yield KeyBar()

    def on_mount(self) -> None:
        self.query_one("#complaint-text", Input).focus()

    @on(Input.Submitted, "#complaint-text")
    def _next(self, event: Input.Submitted) -> None:
        event.stop()
        self.query_one("#symptoms", SelectionList).focus()

    @on(Button.Pressed, "#complaint-save")
    def _pressed(self) -> None:
        self.action_save()

    def action_save(self) -> None:
        text = self.query_one("#complaint-text", Input).value.strip()
        chosen = [s for s in self._book.symptoms if s in self.query_one("#symptoms", SelectionList).selected]
        self.dismiss((text, chosen))
