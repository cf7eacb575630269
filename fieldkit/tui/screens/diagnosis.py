"""The live diagnosis in full: ranked faults, findings, next tests, every reading's check; and
one fault's explanation (why it ranks where it does, how to confirm it, the usual fix)."""

from __future__ import annotations

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.containers import VerticalScroll
from textual.widgets import DataTable, OptionList, Static, TabbedContent, TabPane

from fieldkit.diagnosis.resolution import as_read_with_limit
from fieldkit.diagnosis.results import Diagnosis, RankedFault
from fieldkit.tui import keys
from fieldkit.tui.safe_text import literal
from fieldkit.tui.screens.base import FieldkitScreen
from fieldkit.tui.widgets.band import VERDICT_WORD
from fieldkit.tui.widgets.faults import FaultList, FindingsView, prob_bar
from fieldkit.tui.widgets.keybar import KeyBar
from fieldkit.units import percent


def next_tests_text(diagnosis: Diagnosis) -> Text:
    out = Text(end="")
    if not diagnosis.next_tests:
        out.append("No further reading would change the ranking much.")
    for i, t in enumerate(diagnosis.next_tests, start=1):
        if i > 1:
            out.append("\n\n")
        out.append(f"{i}. ", "bold")
        out.append_text(literal(f"{t.label} ({t.condition})", "bold"))
        out.append("\n")
        out.append_text(literal(t.why))
    if diagnosis.notes:
        out.append("\n\nNotes from the engine:", "bold")
        for n in diagnosis.notes:
            out.append("\n• ")
            out.append_text(literal(n))
    return out


class DiagnosisScreen(FieldkitScreen):
    """Faults, findings, next tests and reading checks, in tabs."""

    BINDINGS = keys.DIAGNOSIS

    def __init__(self, diagnosis: Diagnosis, job_number: str) -> None:
        super().__init__()
        self.diagnosis = diagnosis
        self.job_number = job_number

    def compose(self) -> ComposeResult:
        title = Text(end="", no_wrap=True, overflow="ellipsis")
        title.append("Diagnosis · ", "bold")
        title.append_text(literal(self.job_number, "bold"))
        title.append(f" · {self.diagnosis.entropy_bits:.2f} bits of doubt left · Enter on a fault: why")
        yield Static(title, id="topbar")
        with TabbedContent(id="diag-tabs"):
            with TabPane("Faults", id="tab-faults"):
                yield FaultList(id="faults")
            with TabPane("Findings", id="tab-findings"), VerticalScroll():
                yield FindingsView(id="findings")
            with TabPane("Next tests", id="tab-next"), VerticalScroll():
                yield Static(next_tests_text(self.diagnosis), id="next-tests")
            with TabPane("Readings", id="tab-readings"):
                yield DataTable(id="checks", cursor_type="row", zebra_stripes=True)
        yield KeyBar()

    def on_mount(self) -> None:
        self.query_one("#faults", FaultList).show(self.diagnosis, limit=50)
        self.query_one("#findings", FindingsView).show(self.diagnosis)
        table = self.query_one("#checks", DataTable)
        table.add_columns("point", "condition", "reading", "expected", "gauge ±", "u", "verdict")
        for c in self.diagnosis.checks:
            value, limit = as_read_with_limit(c)
            table.add_row(
                literal(c.test_point_label),
                literal(c.condition),
                literal(value),
                literal(c.expected),
                literal(limit),  # the class limit off the dial (EN 837-1)
                literal(c.uncertainty),  # u = limit/√3, what the statistics use
                Text(VERDICT_WORD[c.verdict] + (" *" if c.discounted else "")),
            )
        self.query_one("#faults", FaultList).focus()

    @on(OptionList.OptionSelected, "#faults")
    def _chosen(self, event: OptionList.OptionSelected) -> None:
        self._open(event.option.id)

    def action_open_fault(self) -> None:
        faults = self.query_one("#faults", FaultList)
        if faults.highlighted is not None:
            self._open(faults.get_option_at_index(faults.highlighted).id)

    def _open(self, key: str | None) -> None:
        fault = next((f for f in self.diagnosis.faults if f.key == key), None)
        if fault is not None:
            self.app.push_screen(FaultScreen(fault))

    def action_dismiss_screen(self) -> None:
        self.app.pop_screen()

    def palette_commands(self):
        for f in self.diagnosis.faults[:12]:
            yield f"Why: {f.display_title}", "findings for and against", lambda key=f.key: self._open(key)
        yield "Back to the visit", "close the diagnosis", self.action_dismiss_screen


def _ratio(r: float) -> str:
    if r >= 1:
        return f"×{r:.3g} more likely with this fault"
    return f"×{1 / r:.3g} less likely with this fault" if r > 0 else "rules it out"


def fault_explanation(f: RankedFault) -> Text:
    out = Text(end="")
    out.append_text(literal(f.display_title, "bold"))
    out.append(f"\n{prob_bar(f.probability, 20)} {percent(f.probability)}", "bold")
    out.append(f"  (before any reading: {percent(f.prior)})")
    if f.description:
        out.append("\n\n")
        out.append_text(literal(f.description))
    out.append("\n\nFindings for it", "bold underline")
    if not f.supporting:
        out.append("\n  none yet")
    for e in f.supporting:
        out.append("\n+ ", "bold")
        out.append_text(literal(e.title, "bold"))
        out.append(f"  {_ratio(e.ratio)}")
        out.append("\n  ")
        out.append_text(literal(e.message))
    out.append("\n\nFindings against it", "bold underline")
    if not f.against:
        out.append("\n  none yet")
    for e in f.against:
        out.append("\n− ", "bold")
        out.append_text(literal(e.title, "bold"))
        out.append(f"  {_ratio(e.ratio)}")
        out.append("\n  ")
        out.append_text(literal(e.message))
    out.append("\n\nHow to confirm", "bold underline")
    out.append("\n")
    out.append_text(literal(f.confirm or "—"))
    out.append("\n\nUsual fix", "bold underline")
    out.append("\n")
    out.append_text(literal(f.fix or "—"))
    out.append("\n\nParts", "bold underline")
    for part in f.parts or ["—"]:
        out.append("\n• ")
        out.append_text(literal(part))
    return out


class FaultScreen(FieldkitScreen):
    """Why a fault ranks where it does."""

    BINDINGS = keys.FAULT

    def __init__(self, fault: RankedFault) -> None:
        super().__init__()
        self.fault = fault

    def compose(self) -> ComposeResult:
        yield Static(Text("Why this fault", style="bold", end=""), id="topbar")
        with VerticalScroll(id="fault-body"):
            yield Static(fault_explanation(self.fault), id="fault-text")
        yield KeyBar()

    def on_mount(self) -> None:
        self.query_one("#fault-body").focus()

    def action_back(self) -> None:
        self.app.pop_screen()
