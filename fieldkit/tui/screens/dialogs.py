"""Small modal dialogs: confirm, choose, type a line, quit with an unsaved value, cautions."""

from __future__ import annotations

from pathlib import Path

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Label, OptionList, Static, TextArea
from textual.widgets.option_list import Option

from fieldkit.diagnosis.catalogue import Caution
from fieldkit.tui import keys
from fieldkit.tui.safe_text import literal
from fieldkit.tui.widgets.keybar import KeyBar
from fieldkit.tui.widgets.step_panel import SEVERITY_MARK


class Dialog(ModalScreen):
    """A framed box over the screen; Escape cancels."""

    BINDINGS = keys.DIALOG

    def action_cancel(self) -> None:
        self.dismiss(None)


class ConfirmDialog(Dialog):
    """Yes or no. ``body`` may hold user text: pass a Text made with ``literal``."""

    BINDINGS = keys.CONFIRM

    def __init__(self, title: str, body: Text | str, yes: str = "Yes", no: str = "No") -> None:
        super().__init__()
        self._title, self._body, self._yes, self._no = title, body, yes, no

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label(Text(self._title, style="bold"), classes="dialog-title")
            yield Static(
                self._body if isinstance(self._body, Text) else Text(self._body), classes="dialog-body"
            )
            with Horizontal(classes="dialog-buttons"):
                yield Button(Text(f"{self._yes} (y)"), id="yes", variant="primary")
                yield Button(Text(f"{self._no} (n)"), id="no")
        yield KeyBar()

    def action_answer(self, value: bool) -> None:
        self.dismiss(value)

    @on(Button.Pressed)
    def _pressed(self, event: Button.Pressed) -> None:
        self.dismiss(event.button.id == "yes")


class ChoiceDialog(Dialog):
    """Pick one of a few answers (which reading of an ambiguous value was meant)."""

    def __init__(self, title: str, question: Text, choices: list[Text]) -> None:
        super().__init__()
        self._title, self._question, self._choices = title, question, choices

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label(Text(self._title, style="bold"), classes="dialog-title")
            yield Static(self._question, classes="dialog-body")
            yield OptionList(*[Option(c, id=str(i)) for i, c in enumerate(self._choices)], id="choices")
        yield KeyBar()

    def on_mount(self) -> None:
        self.query_one("#choices", OptionList).focus()

    @on(OptionList.OptionSelected, "#choices")
    def _chosen(self, event: OptionList.OptionSelected) -> None:
        self.dismiss(event.option_index)


class LinePrompt(Dialog):
    """Type one line (a reason to skip, a corrected value, a file path)."""

    def __init__(
        self, title: str, question: Text | str, value: str = "", placeholder: str = "", check=None
    ) -> None:
        super().__init__()
        self._title, self._question, self._value, self._placeholder = title, question, value, placeholder
        self._check = check

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label(Text(self._title, style="bold"), classes="dialog-title")
            yield Static(
                self._question if isinstance(self._question, Text) else Text(self._question),
                classes="dialog-body",
            )
            yield Input(value=self._value, placeholder=self._placeholder, id="line")
            yield Static("", id="line-error", classes="inline-error")
        yield KeyBar()

    def on_mount(self) -> None:
        self.query_one("#line", Input).focus()

    @on(Input.Submitted, "#line")
    def _submitted(self, event: Input.Submitted) -> None:
        event.stop()
        text = event.value
        problem = self._check(text) if self._check else ""
        if problem:
            self.query_one("#line-error", Static).update(literal(problem))
            return
        self.dismiss(text)


class QuitDialog(Dialog):
    """A value is typed but not saved: save it, throw it away knowingly, or go back."""

    BINDINGS = keys.QUIT

    def __init__(self, typed: str, where: str) -> None:
        super().__init__()
        self._typed, self._where = typed, where

    def compose(self) -> ComposeResult:
        body = Text.assemble(
            "The value ",
            literal(repr(self._typed), "bold"),
            " typed for ",
            literal(self._where, "bold"),
            " is not saved yet. Readings are saved when you press Enter; this one would be lost.",
            end="",
        )
        with Vertical(classes="dialog"):
            yield Label(Text("Unsaved value", style="bold"), classes="dialog-title")
            yield Static(body, classes="dialog-body")
            with Horizontal(classes="dialog-buttons"):
                yield Button("Save it and quit (s)", id="save", variant="primary")
                yield Button("Quit without it (q)", id="discard", variant="error")
                yield Button("Back (Esc)", id="back")
        yield KeyBar()

    def action_answer(self, value: str) -> None:
        self.dismiss(value)

    def action_cancel(self) -> None:
        self.dismiss("back")

    @on(Button.Pressed)
    def _pressed(self, event: Button.Pressed) -> None:
        self.dismiss(event.button.id)


class NotesDialog(Dialog):
    """Edit the visit notes (free text; skip sentences live here too)."""

    BINDINGS = keys.NOTES

    def __init__(self, notes: str) -> None:
        super().__init__()
        self._notes = notes

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog dialog-tall"):
            yield Label(Text("Visit notes (ctrl+s saves, Esc cancels)", style="bold"), classes="dialog-title")
            yield TextArea(self._notes, id="notes", soft_wrap=True)
        yield KeyBar()

    def on_mount(self) -> None:
        self.query_one("#notes", TextArea).focus()

    def action_save(self) -> None:
        self.dismiss(self.query_one("#notes", TextArea).text)


class CautionScreen(Dialog):
    """The general caution, and the cautions of the current step in full."""

    BINDINGS = keys.CAUTIONS

    def __init__(self, general: Caution, step: list[Caution], where: str = "") -> None:
        super().__init__()
        self._general, self._step, self._where = general, step, where

    def compose(self) -> ComposeResult:
        out = Text(end="")
        out.append_text(literal(self._general.title, "bold"))
        out.append("\n")
        out.append_text(literal(self._general.text, multiline=True))
        out.append("\n")
        out.append_text(literal(f"(source: {self._general.source})", "dim"))
        if self._step:
            out.append("\n\n")
            out.append_text(
                literal(f"For this step{': ' + self._where if self._where else ''}", "bold underline")
            )
            for c in self._step:
                out.append(f"\n\n{SEVERITY_MARK.get(c.severity.value, c.severity.value)} ", "bold")
                out.append_text(literal(c.title, "bold"))
                out.append("\n")
                out.append_text(literal(c.text, multiline=True))
                out.append("\n")
                out.append_text(literal(f"(source: {c.source})", "dim"))
        with Vertical(classes="dialog dialog-tall", id="caution-box"):
            yield Label(Text("Safety first", style="bold"), classes="dialog-title")
            with VerticalScroll():
                yield Static(out, id="caution-text")
        yield KeyBar()


def existing_file(suffixes: tuple[str, ...]):
    def check(text: str) -> str:
        path = Path(text.strip()).expanduser()
        if not text.strip():
            return "type the path of a file"
        if not path.is_file():
            return f"no file at {path}"
        if path.suffix.lower() not in suffixes:
            return f"{path.name}: expected a {' or '.join(suffixes)} file"
        return ""

    return check


class KeysScreen(Dialog):
    """Every key of the current screen and the app, with what it does (F1)."""

    BINDINGS = keys.KEYS

    def __init__(self, rows: list[tuple[str, str]], title: str) -> None:
        super().__init__()
        self._rows, self._title = rows, title

    def compose(self) -> ComposeResult:
        out = Text(end="")
        width = max((len(k) for k, _ in self._rows), default=4) + 2
        for i, (key, what) in enumerate(self._rows):
            if i:
                out.append("\n")
            out.append(f"{key:<{width}}", "bold")
            out.append_text(literal(what))
        with Vertical(classes="dialog dialog-tall"):
            yield Label(Text(self._title, style="bold"), classes="dialog-title")
            with VerticalScroll():
                yield Static(out, id="keys-text")
        yield KeyBar()
