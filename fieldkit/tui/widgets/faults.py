"""Ranked faults as bars with numbers, and findings with their verdicts.

The bar is drawn with block characters (eighths) so its length carries the probability without
colour; the number beside it says the same in words.
"""

from __future__ import annotations

from rich.text import Text
from textual.widgets import OptionList, Static
from textual.widgets.option_list import Option

from fieldkit.diagnosis.results import Diagnosis, Finding, RankedFault, Verdict
from fieldkit.tui.safe_text import literal
from fieldkit.tui.widgets.changes import same_text, show_text
from fieldkit.units import percent

EIGHTHS = " ▏▎▍▌▋▊▉█"
FINDING_GLYPH = {
    Verdict.IN_RANGE: "✓",
    Verdict.LOW: "▼",
    Verdict.HIGH: "▲",
    Verdict.INCONCLUSIVE: "?",
    Verdict.NOT_MEASURED: "·",
}


def prob_bar(p: float, width: int = 10) -> str:
    """A bar ``width`` cells long filled to ``p`` (0–1) in eighths, padded with a dotted track."""
    p = min(max(p, 0.0), 1.0)
    eighths = round(p * width * 8)
    full, part = divmod(eighths, 8)
    bar = "█" * full + (EIGHTHS[part] if part and full < width else "")
    return bar + "·" * (width - len(bar))


def fault_text(f: RankedFault, bar_width: int = 10) -> Text:
    out = Text(end="", no_wrap=True, overflow="ellipsis")
    out.append(prob_bar(f.probability, bar_width), "bold")
    out.append(f" {percent(f.probability):>4} ")
    out.append_text(literal(f.display_title))
    return out


def finding_text(f: Finding) -> Text:
    out = Text(end="")
    out.append(f"{FINDING_GLYPH[f.verdict]} {f.verdict.label:<12} ", "bold")
    out.append_text(literal(f.message))
    return out


class FaultList(OptionList):
    """Ranked faults; choosing one opens its explanation."""

    def show(self, diagnosis: Diagnosis | None, limit: int = 12) -> None:
        """Show the ranking. When the same faults stay in the same order only the changed bars
        are swapped; a new order rebuilds the list, keeping the highlighted row number."""
        options = [Option(fault_text(f), id=f.key) for f in diagnosis.faults[:limit]] if diagnosis else []
        if [o.id for o in options] == [self.get_option_at_index(i).id for i in range(self.option_count)]:
            for index, option in enumerate(options):
                if not same_text(self.get_option_at_index(index).prompt, option.prompt):
                    self.replace_option_prompt_at_index(index, option.prompt)
            return
        keep = self.highlighted
        self.clear_options()
        if not options:
            return
        self.add_options(options)
        self.highlighted = min(keep or 0, self.option_count - 1)


class FindingsView(Static):
    """Findings, out-of-range ones first (the order the engine gives)."""

    def show(self, diagnosis: Diagnosis | None) -> None:
        if diagnosis is None or not diagnosis.findings:
            show_text(self, Text("no findings yet: take a reading", end=""))
            return
        out = Text(end="")
        measured = [f for f in diagnosis.findings if f.verdict is not Verdict.NOT_MEASURED]
        for i, f in enumerate(measured):
            if i:
                out.append("\n")
            out.append_text(finding_text(f))
        show_text(self, out if measured else Text("no findings yet: take a reading", end=""))
