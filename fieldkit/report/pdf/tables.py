"""Tables for the PDF job card, laid out and drawn by us with fpdf2's plain ``cell``, ``rect`` and ``line``.

Every cell is broken into lines once (:func:`fieldkit.report.pdf.text.wrap_lines`) and those
same lines are printed, so a row's measured height is the height it is drawn at, by
construction: the band pictures and probability bars drawn into cells afterwards always land
beside their own row. (fpdf2's ``table()`` laid every cell out twice, once to size the row and
once to draw it, with its character-by-character line breaker: most of the time a job card took.)
Rows are split into page-sized chunks here, with the headings repeated on each page; a row
marked as continuing the one before (a reading's remark) never lands on another page than it.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

from fpdf import FPDF

from fieldkit.report.pdf.layout import section
from fieldkit.report.pdf.style import FAMILY, INK, RULE
from fieldkit.report.pdf.text import (
    PADDING,
    Run,
    line_height,
    print_line,
    print_runs,
    text_height,
    wrap_lines,
    wrap_runs,
)

__all__ = ["Cell", "Draw", "Run", "line_height", "measured_table", "text_height"]


@dataclass(frozen=True, slots=True)
class Cell:
    text: str = ""
    bold: bool = False
    color: tuple[int, int, int] | None = None
    fill: tuple[int, int, int] | None = None
    span: int = 1
    size: float | None = None
    #: Styled runs in place of ``text`` (a bold lead-in before plain text); one paragraph.
    runs: tuple[Run, ...] = ()


#: Draws into one cell: (pdf, row index, x, y, width, height), all in mm.
Draw = Callable[[FPDF, int, float, float, float, float], None]


@dataclass(slots=True)
class _Laid:
    """One cell broken into the lines that will be printed."""

    cell: Cell
    x: float
    w: float
    align: str
    lines: list[list[Run]]
    size: float

    @property
    def height(self) -> float:
        return len(self.lines) * line_height(self.size)


def _as_cell(c: Cell | str) -> Cell:
    return c if isinstance(c, Cell) else Cell(c)


def _lay_row(
    pdf: FPDF,
    row: Sequence[Cell | str],
    xs: list[float],
    cols: list[float],
    aligns: str,
    size: float,
    padding: float,
) -> list[_Laid]:
    laid, j = [], 0
    for raw in row:
        c = _as_cell(raw)
        w = sum(cols[j : j + c.span])
        s = c.size or size
        room = w - 2 * padding
        if c.runs:
            lines = wrap_runs(pdf, c.runs, room, s)
        else:
            lines = [[Run(t, c.bold)] for t in wrap_lines(pdf, c.text, room, s, c.bold)] if c.text else []
        laid.append(_Laid(c, xs[j], w, aligns[j] if j < len(aligns) else "L", lines, s))
        j += c.span
    return laid


def measured_table(
    pdf: FPDF,
    headings: Sequence[str] | None,
    rows: Sequence[Sequence[Cell | str]],
    widths: Sequence[float],
    *,
    aligns: str = "",
    size: float = 7.0,
    min_row: float = 0.0,
    draw: dict[int, Draw] | None = None,
    heading_fill: tuple[int, int, int] = (22, 86, 110),
    zebra: tuple[int, int, int] = (244, 246, 248),
    row_fills: Sequence[tuple[int, int, int] | None] | None = None,
    row_heights: Sequence[float] | None = None,
    continues: Sequence[bool] | None = None,
    padding: float = PADDING,
    title: str | None = None,
) -> None:
    """A table across the page width; ``widths`` are relative and scaled to the printable width.

    ``headings=None`` makes a table without a heading row (the visit header's grid). With
    ``row_fills`` each row gets its own background instead of alternate stripes, so a reading and
    the remark row under it can share one. ``row_heights`` sets a least height per row, for rows
    whose content a ``draw`` callback puts in. ``continues[i]`` joins row i to the row above: no
    rule between them and no page break either. A ``title`` is printed as a section heading that
    moves to the next page with the table's first rows rather than stay alone at a page's foot.
    """
    draw = draw or {}
    total = sum(widths)
    cols = [pdf.epw * w / total for w in widths]
    xs = [pdf.l_margin + sum(cols[:j]) for j in range(len(cols))]
    aligns = aligns or "L" * len(cols)
    head = (
        _lay_row(pdf, [Cell(h, bold=True) for h in headings], xs, cols, "L" * len(cols), size, padding)
        if headings
        else []
    )
    head_h = max((c.height for c in head), default=0.0) + 2 * padding if headings else 0.0
    laid = [_lay_row(pdf, row, xs, cols, aligns, size, padding) for row in rows]
    least = list(row_heights) if row_heights is not None else [min_row] * len(laid)
    heights = [
        max(max(min_row, least[i]), max((c.height for c in row), default=0.0) + 2 * padding)
        for i, row in enumerate(laid)
    ]
    joined = list(continues) if continues is not None else [False] * len(laid)
    fills: list[tuple[int, int, int] | None] = (
        list(row_fills) if row_fills is not None else [zebra if i % 2 else None for i in range(len(laid))]
    )

    if title is not None:
        section(pdf, title, keep=head_h + (_group(heights, joined, 0) if laid else 0.0))
    start = 0
    while start < len(laid):
        room = pdf.page_break_trigger - pdf.y - 0.05
        if head_h + _group(heights, joined, start) > room:
            pdf.add_page()
            room = pdf.page_break_trigger - pdf.y - 0.05
        end, used = start, head_h
        while end < len(laid) and used + _group(heights, joined, end) <= room:
            group_end = _group_end(joined, end)
            used += sum(heights[end:group_end])
            end = group_end
        end = max(end, _group_end(joined, start))  # a group taller than a page still gets drawn
        _chunk(
            pdf, head, head_h, laid, heights, joined, fills, start, end, cols, xs, padding, draw, heading_fill
        )
        start = end


def _group_end(joined: list[bool], i: int) -> int:
    """The row after the group that starts at row i (a row and the rows continuing it)."""
    j = i + 1
    while j < len(joined) and joined[j]:
        j += 1
    return j


def _group(heights: list[float], joined: list[bool], i: int) -> float:
    return sum(heights[i : _group_end(joined, i)])


def _chunk(
    pdf: FPDF,
    head: list[_Laid],
    head_h: float,
    laid: list[list[_Laid]],
    heights: list[float],
    joined: list[bool],
    fills: list[tuple[int, int, int] | None],
    start: int,
    end: int,
    cols: list[float],
    xs: list[float],
    padding: float,
    draw: dict[int, Draw],
    heading_fill: tuple[int, int, int],
) -> None:
    breaks, margin = pdf.auto_page_break, pdf.b_margin
    pdf.set_auto_page_break(False)  # rows were fitted to the page above; a line must not start a new one
    try:
        y = pdf.y
        left, width = pdf.l_margin, sum(cols)
        if head:
            pdf.set_fill_color(*heading_fill)
            pdf.rect(left, y, width, head_h, style="F")
            for c in head:
                _text(pdf, c, y, head_h, padding, (255, 255, 255))
            y += head_h
        tops = []
        for i in range(start, end):
            h = heights[i]
            tops.append(y)
            if fills[i] is not None:
                pdf.set_fill_color(*fills[i])  # type: ignore[misc]
                pdf.rect(left, y, width, h, style="F")
            for c in laid[i]:
                if c.cell.fill is not None:
                    pdf.set_fill_color(*c.cell.fill)
                    pdf.rect(c.x, y, c.w, h, style="F")
                _text(pdf, c, y, h, padding, c.cell.color or INK)
            if i + 1 >= end or not joined[i + 1]:
                pdf.set_draw_color(*RULE)
                pdf.set_line_width(0.2)
                pdf.line(left, y + h, left + width, y + h)
            y += h
        for k, i in enumerate(range(start, end)):
            for j, fn in draw.items():
                fn(pdf, i, xs[j], tops[k], cols[j], heights[i])
    finally:
        pdf.set_auto_page_break(breaks, margin=margin)
    pdf.set_text_color(*INK)
    pdf.set_xy(pdf.l_margin, y)


def _text(pdf: FPDF, c: _Laid, y: float, h: float, padding: float, colour: tuple[int, int, int]) -> None:
    """A cell's lines, centred in the row's height, ``padding`` in from the cell's sides."""
    if not c.lines:
        return
    lh = line_height(c.size)
    top = y + (h - len(c.lines) * lh) / 2
    for k, line in enumerate(c.lines):
        if len(line) == 1:
            pdf.set_font(FAMILY, "B" if line[0].bold else "", c.size)
            pdf.set_text_color(*(line[0].colour or colour))
            right = c.x + c.w - padding if c.align == "R" else None
            print_line(pdf, c.x + padding, top + k * lh, lh, line[0].text, right)
        else:
            print_runs(pdf, c.x + padding, top + k * lh, lh, line, c.size, colour)
