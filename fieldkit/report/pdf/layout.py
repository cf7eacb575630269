"""Layout primitives for the PDF job card: page geometry, type sizes, section headings and
blocks that must not be split across pages."""

from __future__ import annotations

from collections.abc import Iterator, Sequence
from contextlib import contextmanager

from fpdf import FPDF

from fieldkit.report.pdf.style import ACCENT, BODY, FAMILY, INK
from fieldkit.report.pdf.text import Run, line_height, print_line, print_runs, wrap_lines, wrap_runs

MARGIN = 10.0
FOOT = 12.0  # bottom margin: the footer line sits in it
SECTION = 6.4  # height of a section heading with its rule and spacing


@contextmanager
def placed(pdf: FPDF, height: float) -> Iterator[float]:
    """Room for a block drawn at fixed positions: a new page if it does not fit, and no automatic
    page break while it is drawn (a break half way would scatter it over pages). Yields its top."""
    if pdf.y + height > pdf.page_break_trigger:
        pdf.add_page()
    pdf.set_auto_page_break(False)
    try:
        yield pdf.y
    finally:
        pdf.set_auto_page_break(True, margin=FOOT)


def section(pdf: FPDF, title: str, keep: float = 12.0) -> None:
    """A section heading, moved to the next page if it would sit alone at the foot of this one."""
    if pdf.y + SECTION + keep > pdf.page_break_trigger:
        pdf.add_page()
    pdf.ln(1.4)
    pdf.set_font(FAMILY, "B", 9.0)
    pdf.set_text_color(*ACCENT)
    print_line(pdf, pdf.l_margin + pdf.c_margin, pdf.y, 4.2, title)
    pdf.set_y(pdf.y + 4.2)
    pdf.set_draw_color(*ACCENT)
    pdf.set_line_width(0.35)
    pdf.line(pdf.l_margin, pdf.y, pdf.w - pdf.r_margin, pdf.y)
    pdf.ln(0.8)
    pdf.set_text_color(*INK)


def fit(
    pdf: FPDF,
    x: float,
    y: float,
    w: float,
    h: float,
    text: str,
    size: float,
    bold: bool = False,
    align: str = "L",
    floor: float = 5.5,
) -> None:
    """One line of text in a fixed box, in a smaller font when it is too long; text that does not
    fit even at ``floor`` wraps (in the same box's width) rather than being cut."""
    style = "B" if bold else ""
    while size > floor:
        pdf.set_font(FAMILY, style, size)
        if pdf.get_string_width(text) <= w - 1:
            break
        size -= 0.5
    pdf.set_font(FAMILY, style, size)
    pdf.set_xy(x, y)
    if pdf.get_string_width(text) <= w - 1:
        pdf.cell(w, h, text, align=align)
    else:
        lh = line_height(size)
        broken = pdf.multi_cell(w, lh, text, dry_run=True, output="LINES")
        assert isinstance(broken, list)  # output="LINES" gives the list of lines
        lines = len(broken)
        pdf.set_xy(x, y + max(0.0, (h - lines * lh) / 2))
        pdf.multi_cell(w, lh, text, align=align)


def text_block(
    pdf: FPDF,
    text: str,
    size: float = BODY,
    bold: bool = False,
    color: tuple[int, int, int] = INK,
    indent: float = 0.0,
) -> None:
    """A paragraph across the page that may run onto the next one (unlike a boxed block); each
    line is placed by us, so a line that does not fit at the foot of a page starts the next one."""
    lh = line_height(size)
    width = pdf.epw - indent
    lines = wrap_lines(pdf, text, width - 2 * pdf.c_margin, size, bold)  # a cell insets its text by c_margin
    pdf.set_font(FAMILY, "B" if bold else "", size)
    for line in lines:
        if pdf.y + lh > pdf.page_break_trigger:
            pdf.add_page()
            pdf.set_font(FAMILY, "B" if bold else "", size)
        pdf.set_text_color(*color)
        print_line(pdf, pdf.l_margin + indent + pdf.c_margin, pdf.y, lh, line)
        pdf.set_xy(pdf.l_margin, pdf.y + lh)
    pdf.set_text_color(*INK)


def runs_block(pdf: FPDF, runs: Sequence[Run], size: float = BODY, color: tuple[int, int, int] = INK) -> None:
    """A paragraph of styled runs across the page, flowing onto the next page like :func:`text_block`."""
    lh = line_height(size)
    for line in wrap_runs(pdf, runs, pdf.epw - 2 * pdf.c_margin, size):
        if pdf.y + lh > pdf.page_break_trigger:
            pdf.add_page()
        print_runs(pdf, pdf.l_margin + pdf.c_margin, pdf.y, lh, line, size, color)
        pdf.set_xy(pdf.l_margin, pdf.y + lh)
    pdf.set_text_color(*INK)
