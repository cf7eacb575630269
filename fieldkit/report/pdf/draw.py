"""Small pictures drawn with fpdf2's own rectangles and lines (vector, so they print sharp).

A band picture shows a reading against its expected range: a pale strip for the range, a
needle for the reading and a whisker for the gauge's error. The geometry comes from
:class:`fieldkit.report.model.Band`; this module only scales it to the cell.
"""

from __future__ import annotations

from fpdf import FPDF

from fieldkit.diagnosis.results import Verdict
from fieldkit.report.model import Band
from fieldkit.report.pdf.style import (
    ACCENT,
    FAMILY,
    INK,
    MUTED,
    OK,
    OUT,
    RANGE_EDGE,
    RANGE_FILL,
    RULE,
    UNSURE,
)

NEEDLE = {Verdict.LOW: OUT, Verdict.HIGH: OUT, Verdict.INCONCLUSIVE: UNSURE, Verdict.IN_RANGE: OK}


def band_picture(pdf: FPDF, band: Band, verdict: Verdict, x: float, y: float, w: float, h: float) -> None:
    """The band picture centred in a cell at (x, y) of size w × h (mm)."""
    inset = 2.0
    left, width = x + inset, w - 2 * inset
    mid = y + h / 2
    strip = min(3.0, h - 2.0)

    def at(f: float) -> float:
        return left + f * width

    pdf.set_line_width(0.2)
    pdf.set_draw_color(*RULE)
    pdf.line(left, mid, left + width, mid)
    # Expected range: filled strip; a drawn edge marks each limit that exists.
    x0, x1 = at(band.band_from), at(band.band_to)
    pdf.set_fill_color(*RANGE_FILL)
    pdf.rect(x0, mid - strip / 2, max(x1 - x0, 0.3), strip, style="F")
    pdf.set_draw_color(*RANGE_EDGE)
    pdf.set_line_width(0.3)
    if band.low is not None:
        pdf.line(x0, mid - strip / 2, x0, mid + strip / 2)
    if band.high is not None:
        pdf.line(x1, mid - strip / 2, x1, mid + strip / 2)
    # Gauge error: whisker with end ticks.
    colour = NEEDLE.get(verdict, MUTED)
    e0, e1 = at(band.error_from), at(band.error_to)
    pdf.set_draw_color(*colour)
    pdf.set_line_width(0.25)
    if e1 - e0 > 0.2:
        pdf.line(e0, mid, e1, mid)
        pdf.line(e0, mid - 0.8, e0, mid + 0.8)
        pdf.line(e1, mid - 0.8, e1, mid + 0.8)
    # The reading: a needle taller than the strip.
    needle = strip + 1.6
    pdf.set_fill_color(*colour)
    pdf.rect(at(band.value_at) - 0.35, mid - needle / 2, 0.7, needle, style="F")


def probability_bar(pdf: FPDF, p: float, x: float, y: float, w: float, h: float) -> None:
    """A horizontal bar for a probability, on a faint track the width of the cell."""
    inset = 1.5
    left, width = x + inset, w - 2 * inset
    bar = 2.2
    top = y + (h - bar) / 2
    pdf.set_fill_color(*RULE)
    pdf.rect(left, top, width, bar, style="F")
    pdf.set_fill_color(*ACCENT)
    pdf.rect(left, top, max(width * min(max(p, 0.0), 1.0), 0.3), bar, style="F")


def band_legend(pdf: FPDF, x: float, y: float, size: float) -> float:
    """A one-line key to the band pictures; returns the height used."""
    h = 4.0
    mid = y + h / 2
    pdf.set_font(FAMILY, "", size)
    pdf.set_text_color(*MUTED)
    cursor = x

    def label(text: str) -> None:
        nonlocal cursor
        pdf.set_xy(cursor, y)
        pdf.cell(h=h, text=text)
        cursor = pdf.get_x() + 4

    label("Position in range:")
    pdf.set_fill_color(*RANGE_FILL)
    pdf.rect(cursor, mid - 1.2, 8, 2.4, style="F")
    cursor += 9.5
    label("expected range")
    pdf.set_fill_color(*INK)
    pdf.rect(cursor, mid - 1.8, 0.7, 3.6, style="F")
    cursor += 2
    label("reading")
    pdf.set_draw_color(*INK)
    pdf.set_line_width(0.25)
    pdf.line(cursor, mid, cursor + 6, mid)
    pdf.line(cursor, mid - 0.8, cursor, mid + 0.8)
    pdf.line(cursor + 6, mid - 0.8, cursor + 6, mid + 0.8)
    cursor += 7.5
    label("gauge error (±)")
    label("An open end means the range has one limit only.")
    pdf.set_text_color(*INK)
    return h
