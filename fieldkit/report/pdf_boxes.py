"""Boxed parts of the PDF job card: the safety cautions and the sign-off."""

from __future__ import annotations

from fpdf import FPDF

from fieldkit.report.model import Caution, JobCard
from fieldkit.report.pdf_draw import ACCENT, INK, MUTED, OUT, OUT_FILL, RULE, UNSURE, UNSURE_FILL
from fieldkit.report.pdf_layout import BODY, SMALL, TINY, fit, placed, section
from fieldkit.report.pdf_text import FAMILY, block_height, draw_block, line_height

SEVERITY = {"danger": (OUT, OUT_FILL), "warning": (UNSURE, UNSURE_FILL), "notice": (ACCENT, (226, 238, 243))}


TITLE, TEXT, META = 6.8, 6.1, 5.5  # type sizes in a caution box


def _raised_on_title_line(pdf: FPDF, c: Caution, w: float) -> bool:
    """Whether "Raised: …" fits to the right of a one-line title (it saves a line per box)."""
    room = w - 3 - 2 * pdf.c_margin
    pdf.set_font(FAMILY, "B", TITLE)
    title = pdf.get_string_width(c.title)
    pdf.set_font(FAMILY, "", META)
    return title + 4 + pdf.get_string_width(f"Raised: {c.raised_by}.") <= room


def _caution_lines(pdf: FPDF, c: Caution, w: float,
                   edge: tuple[int, int, int]) -> list[tuple[str, float, bool, tuple[int, int, int]]]:
    meta = f"Source: {c.source}." if _raised_on_title_line(pdf, c, w) else f"Raised: {c.raised_by}. Source: {c.source}."
    return [(c.title, TITLE, True, edge), (c.text, TEXT, False, INK), (meta, META, False, MUTED)]


def _caution_box(pdf: FPDF, c: Caution, x: float, y: float, w: float, h: float | None = None) -> float:
    """One caution in a box with a stripe in its severity's colour; returns the height it needs.

    Called with ``h=None`` it only measures, so boxes in one row can share the tallest height.
    """
    edge, fill = SEVERITY.get(c.severity, SEVERITY["notice"])
    lines = _caution_lines(pdf, c, w, edge)
    if h is None:
        return sum(block_height(pdf, t, w - 3, size, bold) for t, size, bold, _c in lines) + 1.6
    pdf.set_fill_color(*fill)
    pdf.set_draw_color(*edge)
    pdf.set_line_width(0.3)
    pdf.rect(x, y, w, h, style="DF")
    pdf.set_fill_color(*edge)
    pdf.rect(x, y, 1.8, h, style="F")
    top = y + 0.8
    if _raised_on_title_line(pdf, c, w):
        pdf.set_font(FAMILY, "", META)
        pdf.set_text_color(*MUTED)
        pdf.set_xy(x + 2.5, top)
        pdf.cell(w - 3, line_height(TITLE), f"Raised: {c.raised_by}.", align="R")
    for text, size, bold, colour in lines:
        top += draw_block(pdf, x + 2.5, top, w - 3, text, size, bold, colour)
    return h


def cautions(pdf: FPDF, card: JobCard) -> None:
    """Safety cautions as boxes: the general one across the page, the rest two to a row."""
    section(pdf, "Safety cautions", keep=30)
    gap = 1.5
    general = [c for c in card.cautions if c.general]
    rest = [c for c in card.cautions if not c.general]
    rows: list[list[Caution]] = [[c] for c in general] + [rest[i:i + 2] for i in range(0, len(rest), 2)]
    for row in rows:
        w = pdf.epw if len(row) == 1 and row[0].general else (pdf.epw - gap) / 2
        h = max(_caution_box(pdf, c, 0, 0, w) for c in row)
        with placed(pdf, h) as y:
            for k, c in enumerate(row):
                _caution_box(pdf, c, pdf.l_margin + k * (w + gap), y, w, h)
        pdf.set_xy(pdf.l_margin, y + h + gap)


def sign_off(pdf: FPDF, card: JobCard) -> None:
    height = 23
    section(pdf, "Sign-off", keep=height)
    with placed(pdf, height) as top:
        _sign_off_boxes(pdf, card, top + 1, height)
    pdf.set_y(top + height)


def _sign_off_boxes(pdf: FPDF, card: JobCard, y: float, height: float) -> None:
    gap = 8
    w = (pdf.epw - gap) / len(card.sign_off)
    statements = {
        "Technician": "Readings taken and recorded as above.",
        "Customer": "Findings and recommended actions explained to me.",
    }
    for k, s in enumerate(card.sign_off):
        x = pdf.l_margin + k * (w + gap)
        pdf.set_draw_color(*RULE)
        pdf.set_line_width(0.3)
        pdf.rect(x, y, w, height - 2, style="D")
        pdf.set_xy(x + 2.5, y + 1)
        pdf.set_font(FAMILY, "B", BODY)
        pdf.cell(pdf.get_string_width(s.role) + 2, 4.5, s.role)
        pdf.set_font(FAMILY, "", TINY)
        pdf.set_text_color(*MUTED)
        pdf.cell(w - 5 - pdf.get_string_width(s.role) - 2, 4.5, statements.get(s.role, ""))
        pdf.set_text_color(*INK)
        for j, label in enumerate(("Name", "Signature", "Date")):
            line_y = y + 10 + j * 4.5
            pdf.set_xy(x + 2.5, line_y - 4)
            pdf.set_font(FAMILY, "", SMALL)
            pdf.set_text_color(*MUTED)
            pdf.cell(18, 4, label)
            pdf.set_text_color(*INK)
            if label == "Name" and s.name:
                fit(pdf, x + 21, line_y - 4.5, w - 24, 4.5, s.name, BODY)
            pdf.set_draw_color(*MUTED)
            pdf.set_line_width(0.2)
            pdf.line(x + 20.5, line_y, x + w - 3, line_y)
