"""What the technician sees, hears or measures by hand at this step: one key per answer.

The questions come from the step's own test (rules/observations.toml, by the point's role); the
first one not yet answered is asked, and pressing an answer's key records it at once."""

from __future__ import annotations

from rich.text import Text
from textual import events
from textual.app import ComposeResult
from textual.containers import Vertical
from textual.widgets import Label, Static

from fieldkit.diagnosis.evidence import ObservationCheck
from fieldkit.tui.safe_text import literal
from fieldkit.tui.screens.dialogs import Dialog
from fieldkit.tui.widgets.keybar import KeyBar


def question_text(check: ObservationCheck, given: str | None) -> Text:
    out = Text(check.question, end="")
    out.append("\n")
    for a in check.answers:
        out.append(f" [{a.key}] ", style="bold")
        out.append(a.text)
        if given == a.id:
            out.append(" ✓", style="bold")
        out.append("   ")
    return out


class ObserveDialog(Dialog):
    """Dismisses with a list of ``(check id, answer id)`` given in this sitting."""

    def __init__(self, point_label: str, checks: list[ObservationCheck], given: dict[str, str]) -> None:
        super().__init__()
        self._label, self._checks, self._given = point_label, checks, dict(given)
        self._index = next((i for i, c in enumerate(checks) if c.id not in given), 0)
        self._answers: list[tuple[str, str]] = []

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label(literal(f"Seen and heard at {self._label}", "bold"), classes="dialog-title")
            yield Static("", id="observe-question", classes="dialog-body")
            yield Static(
                Text("Press an answer's key. Tab: next question · Escape: done", style="dim"),
                id="observe-help",
            )
        yield KeyBar()

    def on_mount(self) -> None:
        self._show()

    def _show(self) -> None:
        check = self._checks[self._index]
        head = Text(f"{self._index + 1} of {len(self._checks)}: ", style="dim", end="")
        self.query_one("#observe-question", Static).update(
            head + question_text(check, self._given.get(check.id))
        )

    def on_key(self, event: events.Key) -> None:
        check = self._checks[self._index]
        if event.key == "tab":
            event.stop()
            self._index = (self._index + 1) % len(self._checks)
            self._show()
            return
        answer = next((a for a in check.answers if a.key == event.key), None)
        if answer is None:
            return
        event.stop()
        self._answers.append((check.id, answer.id))
        self._given[check.id] = answer.id
        if self._index + 1 < len(self._checks):
            self._index += 1
            self._show()
        else:
            self.dismiss(self._answers)

    def action_cancel(self) -> None:
        self.dismiss(self._answers)
