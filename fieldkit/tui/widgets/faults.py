"""Ranked faults as bars with numbers, and findings with their verdicts.

The bar is drawn with block characters (eighths) so its length carries the probability without
colour; the number beside it says the same in words.
"""

from __future__ import annotations

from rich.text import Text
from textual.widgets import OptionList
from textual.widgets.option_list import Option

from fieldkit.diagnosis.results import Diagnosis, Finding, RankedFault, RankedPair, Verdict
from fieldkit.tui.safe_text import literal
from fieldkit.tui.widgets.drawn import DrawnBlock
from fieldkit.units import percent

EIGHTHS = " ▏▎▍▌▋▊▉█"
FINDING_GLYPH = {
    Verdict.IN_RANGE: "✓",
    Verdict.LOW: "▼",
    Verdict.HIGH: "▲",
    Verdict.INCONCLUSIVE: "?",
    Verdict.NOT_MEASURED: "·",
    Verdict.REPORTED: "•",
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


def pair_text(p: RankedPair, bar_width: int = 10) -> Text:
    """The winning pair of faults, above the single ranking (shown only when it wins)."""
    out = Text(end="", no_wrap=True, overflow="ellipsis")
    out.append(prob_bar(p.probability, bar_width), "bold")
    out.append(f" {percent(p.probability):>4} ")
    out.append("two at once: ", "bold")
    out.append_text(literal(p.display_title))
    return out


def finding_text(f: Finding) -> Text:
    out = Text(end="")
    out.append(f"{FINDING_GLYPH[f.verdict]} {f.verdict.label:<12} ", "bold")
    out.append_text(literal(f.message))
    return out


class FaultList(OptionList):
    """Ranked faults; choosing one opens its explanation."""

    def __init__(self, *, id: str | None = None) -> None:
        super().__init__(id=id)
        self._rows: list[RankedFault] = []
        self._pair: RankedPair | None = None

    def show(self, diagnosis: Diagnosis | None, limit: int = 12) -> None:
        """Show the ranking. When the same faults stay in the same order only the rows whose
        fault changed are swapped; a new order rebuilds the list, keeping the highlighted row.
        Two faults at once head the list, as a row that opens nothing, only when the pair is
        more likely than any single fault."""
        rows = list(diagnosis.faults[:limit]) if diagnosis else []
        pair = diagnosis.pairs[0] if diagnosis is not None and diagnosis.pair_wins else None
        same_pair = (pair is None) == (self._pair is None) and (pair is None or pair == self._pair)
        self._pair = pair
        if same_pair and pair is None and [f.key for f in rows] == [f.key for f in self._rows]:
            for index, (old, new) in enumerate(zip(self._rows, rows, strict=True)):
                if old != new:
                    self.replace_option_prompt_at_index(index, fault_text(new))
            self._rows = rows
            return
        self._rows = rows
        keep = self.highlighted
        self.clear_options()
        if not rows:
            return
        if pair is not None:
            self.add_option(Option(pair_text(pair), id=f"pair:{pair.key}"))
        self.add_options([Option(fault_text(f), id=f.key) for f in rows])
        self.highlighted = min(keep or 0, self.option_count - 1)


NO_FINDINGS = "no findings yet: take a reading"


def findings_text(findings: tuple[Finding, ...]) -> Text:
    """Measured findings, one a line, in the engine's order (out-of-range first)."""
    out = Text(end="")
    for i, f in enumerate(findings):
        if i:
            out.append("\n")
        out.append_text(finding_text(f))
    return out if findings else Text(NO_FINDINGS, end="")


class FindingsView(DrawnBlock):
    """Findings, out-of-range ones first (the order the engine gives)."""

    def __init__(self, *, id: str | None = None) -> None:
        super().__init__(findings_text, id=id)

    def show(self, diagnosis: Diagnosis | None) -> None:
        found = diagnosis.findings if diagnosis is not None else []
        self.data = (tuple(f for f in found if f.verdict is not Verdict.NOT_MEASURED),)
