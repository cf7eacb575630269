"""The gauge-band picture: where a reading sits against its expected band, with the gauge's
uncertainty drawn around it.

Drawn with characters so it reads without colour:

    ┈┈┈┈‹●›┈┈┈┈┈┈┈[══════════]┈┈┈┈   low
    band ``[═══]`` (``◂═══]`` or ``[═══▸`` when open at one end), reading ``●``,
    the gauge's class limit ``‹ ›`` (± class % × span, EN 837-1), track ``┈``.

The scale is linear and chosen per reading so the band and the reading both fit with a margin.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import ClassVar

from rich.style import Style
from rich.text import Text
from textual.widget import Widget

from fieldkit.diagnosis.results import ReadingCheck, Verdict
from fieldkit.diagnosis.retest import as_read_with_limit, class_limit_of
from fieldkit.tui.safe_text import literal

TRACK, BAND, LOW_EDGE, HIGH_EDGE, OPEN_LOW, OPEN_HIGH = "┈", "═", "[", "]", "◂", "▸"
MARK, U_LOW, U_HIGH = "●", "‹", "›"

VERDICT_WORD = {
    Verdict.IN_RANGE: "in range",
    Verdict.LOW: "LOW",
    Verdict.HIGH: "HIGH",
    Verdict.INCONCLUSIVE: "can't call",
    Verdict.NOT_MEASURED: "no range",
    Verdict.REPORTED: "reported",
}


@dataclass(frozen=True, slots=True)
class Cell:
    char: str
    role: str  # track, band, edge, unc, mark


def _position(x: float, lo: float, hi: float, width: int) -> int:
    return max(0, min(width - 1, round((x - lo) / (hi - lo) * (width - 1))))


def draw_band(
    value: float, uncertainty: float, low: float | None, high: float | None, width: int
) -> list[Cell]:
    """The picture as cells, one per character column."""
    width = max(width, 8)
    numbers = [value, uncertainty, *(b for b in (low, high) if b is not None)]
    if not all(math.isfinite(n) and abs(n) < 1e12 for n in numbers):
        return [Cell(TRACK, "track") for _ in range(width)]  # nothing sensible to place
    u = abs(uncertainty)
    points = [value - u, value + u] + [b for b in (low, high) if b is not None]
    lo, hi = min(points), max(points)
    span = hi - lo
    if span <= 0:
        span = max(abs(value) * 0.1, 1.0)
    margin = span * 0.12
    lo, hi = lo - margin, hi + margin
    if low is None:
        lo = min(lo, value - u - margin)
    cells = [Cell(TRACK, "track") for _ in range(width)]
    if low is not None or high is not None:
        a = _position(low, lo, hi, width) if low is not None else 0
        b = _position(high, lo, hi, width) if high is not None else width - 1
        for i in range(a, b + 1):
            cells[i] = Cell(BAND, "band")
        cells[a] = Cell(LOW_EDGE if low is not None else OPEN_LOW, "edge")
        cells[b] = Cell(HIGH_EDGE if high is not None else OPEN_HIGH, "edge")
    m = _position(value, lo, hi, width)
    if u > 0:
        ul, uh = _position(value - u, lo, hi, width), _position(value + u, lo, hi, width)
        if ul < m:
            cells[ul] = Cell(U_LOW, "unc")
        if uh > m:
            cells[uh] = Cell(U_HIGH, "unc")
    cells[m] = Cell(MARK, "mark")
    return cells


def band_plain(check: ReadingCheck, width: int) -> str:
    if check.value_num is None:
        return ""
    return "".join(
        c.char
        for c in draw_band(check.value_num, class_limit_of(check), check.low_num, check.high_num, width)
    )


class ReadingBands(Widget):
    """The band pictures of the readings taken at one test point, newest last."""

    COMPONENT_CLASSES: ClassVar[set[str]] = {
        "band--track",
        "band--band",
        "band--edge",
        "band--unc",
        "band--ok",
        "band--bad",
        "band--unsure",
        "band--label",
    }
    DEFAULT_CSS = """
    ReadingBands { height: auto; }
    """

    def __init__(self, *, id: str | None = None) -> None:
        super().__init__(id=id)
        self._checks: list[ReadingCheck] = []

    @property
    def checks(self) -> list[ReadingCheck]:
        """The readings drawn now."""
        return list(self._checks)

    def show(self, checks: list[ReadingCheck]) -> None:
        """Draw these readings; nothing happens when they are the ones already drawn, and the
        screen is laid out again only when the number of pictures (the height) changes."""
        if checks == self._checks:
            return
        resized = len(checks) != len(self._checks)
        self._checks = list(checks)
        self.refresh(layout=resized)

    def get_content_height(self, container, viewport, width: int) -> int:
        return max(1, 3 * len(self._checks))

    def _style(self, name: str) -> Style:
        return self.get_component_rich_style(f"band--{name}", partial=True)

    def render(self) -> Text:
        # Styles looked up once per render, and runs of cells with one role appended as one
        # piece: per-cell look-ups made this the slowest widget of the visit screen.
        style = {name[len("band--") :]: self._style(name[len("band--") :]) for name in self.COMPONENT_CLASSES}
        if not self._checks:
            return Text("no reading here yet", style=style["label"], end="")
        width = max(12, self.content_size.width - 12)
        out = Text(end="", no_wrap=True, overflow="ellipsis")
        for i, c in enumerate(self._checks):
            if i:
                out.append("\n")
            mood = (
                "ok"
                if c.verdict is Verdict.IN_RANGE
                else "bad"
                if c.verdict in (Verdict.LOW, Verdict.HIGH)
                else "unsure"
            )
            out.append_text(literal(c.condition, style["label"]))
            out.append("\n")
            if c.value_num is not None:
                cells = draw_band(c.value_num, class_limit_of(c), c.low_num, c.high_num, width)
                for role, chars in cell_runs(cells, mood):
                    out.append(chars, style[role])
            out.append(f" {VERDICT_WORD[c.verdict]}", style[mood] + Style(bold=True))
            out.append("\n")
            value, limit = as_read_with_limit(c)
            out.append_text(literal(f"  {value} {limit} · expected {c.expected}", style["label"]))
            if c.discounted:
                out.append_text(literal(f" · not counted: {c.discounted}", style["unsure"]))
        return out


def cell_runs(cells: list[Cell], mood: str) -> list[tuple[str, str]]:
    """Consecutive cells of one role joined: (role, characters); the reading mark takes the
    verdict's mood as its role."""
    runs: list[tuple[str, str]] = []
    for cell in cells:
        role = mood if cell.role == "mark" else cell.role
        if runs and runs[-1][0] == role:
            runs[-1] = (role, runs[-1][1] + cell.char)
        else:
            runs.append((role, cell.char))
    return runs
