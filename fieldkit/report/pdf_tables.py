"""Tables for the PDF job card: fpdf2's ``table()`` with row heights we know in advance.

The band pictures and probability bars are drawn into table cells after the table is laid
out, so we must know where each row lands. We measure every cell (never fewer lines than fpdf2
will use, see :func:`fieldkit.report.pdf_text.text_height`), give each row that height as its
least height, split the rows into page-sized chunks ourselves (headings repeated on each page)
and then check that the table ended where the sums say. If a future fpdf2 lays rows out
differently the check fails loudly instead of drawing a picture beside the wrong reading.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

from fpdf import FPDF
from fpdf.fonts import FontFace

from fieldkit.report.pdf_text import FAMILY, PADDING, line_height, text_height

__all__ = ["FAMILY", "Cell", "Draw", "line_height", "measured_table", "text_height"]


@dataclass(frozen=True, slots=True)
class Cell:
    text: str = ""
    bold: bool = False
    color: tuple[int, int, int] | None = None
    fill: tuple[int, int, int] | None = None
    span: int = 1
    size: float | None = None


#: Draws into one cell: (pdf, row index, x, y, width, height), all in mm.
Draw = Callable[[FPDF, int, float, float, float, float], None]


def _as_cell(c: Cell | str) -> Cell:
    return c if isinstance(c, Cell) else Cell(c)


def _row_height(pdf: FPDF, row: list[Cell], cols: list[float], size: float, min_row: float) -> float:
    heights, j = [min_row], 0
    for c in row:
        heights.append(text_height(pdf, c.text, sum(cols[j:j + c.span]), c.size or size, c.bold,
                                   lh=line_height(size)))
        j += c.span
    return max(heights)


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
) -> None:
    """A table across the page width; ``widths`` are relative and scaled to the printable width.

    ``headings=None`` makes a table without a heading row (the visit header's grid). With
    ``row_fills`` each row gets its own background instead of alternate stripes, so a reading and
    the remark row under it can share one. ``row_heights`` sets a least height per row, for rows
    whose content a ``draw`` callback puts in.
    """
    draw = draw or {}
    total = sum(widths)
    cols = [pdf.epw * w / total for w in widths]
    xs = [pdf.l_margin + sum(cols[:j]) for j in range(len(cols))]
    aligns = aligns or "L" * len(cols)
    cells = [[_as_cell(c) for c in row] for row in rows]

    head_h = max(text_height(pdf, h, cols[j], size, bold=True) for j, h in enumerate(headings)) if headings else 0.0
    least = list(row_heights) if row_heights is not None else [min_row] * len(cells)
    heights = [_row_height(pdf, row, cols, size, max(min_row, least[i])) for i, row in enumerate(cells)]
    fills = list(row_fills) if row_fills is not None else None

    start = 0
    while start < len(cells):
        room = pdf.page_break_trigger - pdf.y - 0.05
        if head_h + heights[start] > room:
            pdf.add_page()
            room = pdf.page_break_trigger - pdf.y - 0.05
        end, used = start, head_h
        while end < len(cells) and used + heights[end] <= room:
            used += heights[end]
            end += 1
        end = max(end, start + 1)
        _chunk(pdf, headings, cells, heights, start, end, head_h, cols, xs, aligns, size, draw, heading_fill,
               zebra, fills)
        start = end


def _chunk(pdf: FPDF, headings: Sequence[str] | None, cells: list[list[Cell]], heights: list[float], start: int, end: int,
           head_h: float, cols: list[float], xs: list[float], aligns: str, size: float, draw: dict[int, Draw],
           heading_fill: tuple[int, int, int], zebra: tuple[int, int, int],
           fills: list[tuple[int, int, int] | None] | None) -> None:
    pdf.set_x(pdf.l_margin)
    pdf.set_font(FAMILY, "", size)
    # fpdf2 fills the cells it does not stripe with the current fill colour: make that white.
    pdf.set_fill_color(255, 255, 255)
    y0 = pdf.y
    lh = line_height(size)
    with pdf.table(
        width=pdf.epw, col_widths=cols, align="LEFT", text_align=tuple(aligns), v_align="MIDDLE",
        line_height=lh, padding=PADDING, borders_layout="HORIZONTAL_LINES", first_row_as_headings=bool(headings),
        headings_style=FontFace(emphasis="BOLD", color=(255, 255, 255), fill_color=heading_fill),
        cell_fill_color=zebra, cell_fill_mode="NONE" if fills is not None else "ROWS", repeat_headings=0,
        markdown=False,
    ) as table:
        if headings:
            head = table.row(min_height=head_h)
            for h in headings:
                head.cell(h)
        for i in range(start, end):
            fill = fills[i] if fills is not None else None
            row = table.row(min_height=heights[i], style=FontFace(fill_color=fill) if fill else None)
            for c in cells[i]:
                style = None
                if c.bold or c.color or c.fill or c.size:
                    style = FontFace(emphasis="BOLD" if c.bold else None, color=c.color, fill_color=c.fill,
                                     size_pt=c.size)
                row.cell(c.text, style=style, colspan=c.span)
    expected = y0 + head_h + sum(heights[start:end])
    if abs(pdf.y - expected) > 0.05:
        raise RuntimeError(f"PDF table layout drifted ({pdf.y:.2f} mm, expected {expected:.2f} mm): "
                           "fpdf2 sizes table rows differently from fieldkit's measurement")
    y = y0 + head_h
    for i in range(start, end):
        for j, fn in draw.items():
            fn(pdf, i, xs[j], y, cols[j], heights[i])
        y += heights[i]
    pdf.set_xy(pdf.l_margin, expected)  # a callback that wrote text moved the cursor
