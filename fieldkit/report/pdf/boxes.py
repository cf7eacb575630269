"""Boxed parts of the PDF job card: the safety cautions and the sign-off."""

from __future__ import annotations

import itertools

from fpdf import FPDF

from fieldkit.report.model import Caution, JobCard
from fieldkit.report.pdf.layout import fit, placed, section
from fieldkit.report.pdf.style import (
    ACCENT,
    BODY,
    FAMILY,
    INK,
    MUTED,
    OUT,
    OUT_FILL,
    RULE,
    SMALL,
    TINY,
    UNSURE,
    UNSURE_FILL,
)
from fieldkit.report.pdf.text import Run, block_height, draw_block, draw_runs, runs_height

SEVERITY = {"danger": (OUT, OUT_FILL), "warning": (UNSURE, UNSURE_FILL), "notice": (ACCENT, (226, 238, 243))}


TITLE, TEXT = 6.8, 6.2  # type sizes in a caution box: its numbered title, and its plain words
COLUMNS = 3
GAP = 1.2
STRIPE = 1.6
INSET = STRIPE + 0.6  # text starts this far from the box's left edge


def _raised(c: Caution) -> str:
    return (
        "always shown"
        if c.general
        else "raised by the " + c.raised_by.replace("reading taken at", "reading at")
    )


def _heading(c: Caution) -> str:
    """The caution's number (its source and why it is here are under it in the appendix) and title."""
    return f"{c.note}. {c.title}"


def _caution_height(pdf: FPDF, c: Caution, w: float) -> float:
    return (
        block_height(pdf, _heading(c), w - INSET, TITLE, True)
        + block_height(pdf, c.text, w - INSET, TEXT)
        + 1.0
    )


def _caution_box(pdf: FPDF, c: Caution, x: float, y: float, w: float, h: float) -> None:
    """One caution in a box with a stripe in its severity's colour."""
    edge, fill = SEVERITY.get(c.severity, SEVERITY["notice"])
    pdf.set_fill_color(*fill)
    pdf.rect(x, y, w, h, style="F")
    pdf.set_fill_color(*edge)
    pdf.rect(x, y, STRIPE, h, style="F")
    top = y + 0.5
    top += draw_block(pdf, x + INSET, top, w - INSET, _heading(c), TITLE, True, edge)
    draw_block(pdf, x + INSET, top, w - INSET, c.text, TEXT)


def _balanced(heights: list[float], columns: int) -> list[int]:
    """Where to cut a run of boxes into ``columns`` columns, in reading order, so that the tallest
    column is as short as it can be: the start index of each column after the first."""
    n = len(heights)
    best: tuple[float, list[int]] = (float("inf"), [])

    def tallest(cuts: list[int]) -> float:
        edges = [0, *cuts, n]
        return max(sum(heights[a:b]) + GAP * max(0, b - a - 1) for a, b in itertools.pairwise(edges))

    for cuts in itertools.combinations(range(1, n), min(columns - 1, max(0, n - 1))):
        t = tallest(list(cuts))
        if t < best[0] - 1e-9:
            best = (t, list(cuts))
    return best[1]


def _column_height(heights: list[float]) -> float:
    return sum(heights) + GAP * max(0, len(heights) - 1)


def cautions(pdf: FPDF, card: JobCard) -> None:
    """Safety cautions as boxes in three columns read downwards, the general caution first,
    balanced in height and continued on the next page when they must be."""
    section(pdf, "Safety cautions", keep=24)
    boxes = [c for c in card.cautions if c.general] + [c for c in card.cautions if not c.general]
    w = (pdf.epw - (COLUMNS - 1) * GAP) / COLUMNS
    heights = [_caution_height(pdf, c, w) for c in boxes]
    start = 0
    while start < len(boxes):
        room = pdf.page_break_trigger - pdf.y
        if heights[start] > room:
            pdf.add_page()
            room = pdf.page_break_trigger - pdf.y
        cuts = _balanced(heights[start:], COLUMNS)
        columns = [list(range(a, b)) for a, b in itertools.pairwise([0, *cuts, len(boxes) - start])]
        if max(_column_height([heights[start + i] for i in col]) for col in columns) > room:
            columns = _filled(heights[start:], room)  # fill this page, go on with the rest on the next
        y0 = pdf.y
        bottom = y0
        with placed(pdf, 0.0):
            for k, col in enumerate(columns):
                y = y0
                for i in col:
                    c, h = boxes[start + i], heights[start + i]
                    _caution_box(pdf, c, pdf.l_margin + k * (w + GAP), y, w, h)
                    y += h + GAP
                bottom = max(bottom, y - GAP)
        start += sum(len(col) for col in columns)
        pdf.set_xy(pdf.l_margin, bottom + GAP)


def _filled(heights: list[float], room: float) -> list[list[int]]:
    """Boxes placed column after column while they fit in ``room``; at least one box."""
    columns: list[list[int]] = []
    i = 0
    for _k in range(COLUMNS):
        col: list[int] = []
        while i < len(heights) and _column_height([heights[j] for j in col] + [heights[i]]) <= room:
            col.append(i)
            i += 1
        columns.append(col)
    if i == 0:
        columns[0] = [0]
    return [col for col in columns if col]


def sign_off(pdf: FPDF, card: JobCard) -> None:
    height = 18.5
    section(pdf, "Sign-off", keep=height)
    with placed(pdf, height) as top:
        _sign_off_boxes(pdf, card, top + 0.5, height - 0.5)
    pdf.set_y(top + height)


def _sign_off_boxes(pdf: FPDF, card: JobCard, y: float, height: float) -> None:
    """A box per signer: role and what they sign for, then name and date on one line and a
    signature line with room to sign above it."""
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
        pdf.rect(x, y, w, height, style="D")
        pdf.set_xy(x + 2, y + 0.5)
        pdf.set_font(FAMILY, "B", BODY)
        pdf.cell(pdf.get_string_width(s.role) + 2, 4.5, s.role)
        pdf.set_font(FAMILY, "", TINY)
        pdf.set_text_color(*MUTED)
        pdf.cell(w - 4 - pdf.get_string_width(s.role) - 2, 4.5, statements.get(s.role, ""))
        name_w = (w - 4) * 0.62
        fields = [
            ("Name", x + 2, y + 9.5, name_w),
            ("Date", x + 2 + name_w + 3, y + 9.5, w - 7 - name_w),
            ("Signature", x + 2, y + height - 1.5, w - 4),
        ]
        for label, fx, line_y, fw in fields:
            pdf.set_font(FAMILY, "", SMALL)
            pdf.set_text_color(*MUTED)
            label_w = pdf.get_string_width(label) + 2.5
            pdf.set_xy(fx, line_y - 4)
            pdf.cell(label_w, 4, label)
            pdf.set_text_color(*INK)
            if label == "Name" and s.name:
                fit(pdf, fx + label_w, line_y - 4.5, fw - label_w, 4.5, s.name, BODY)
            pdf.set_draw_color(*MUTED)
            pdf.set_line_width(0.2)
            pdf.line(fx + label_w, line_y, fx + fw, line_y)


def sources_appendix(pdf: FPDF, card: JobCard) -> None:
    """The appendix after the sign-off: each caution's source under its number, with the honest
    marks kept ("[from memory]", "[quoted second-hand]"), and why it is on this card."""
    section(pdf, "Appendix: sources of the safety cautions", keep=8)
    for c in card.sources:
        runs = (
            Run(f"{c.note}. {c.title}: ", bold=True),
            Run(c.source),
            Run(f" ({_raised(c)})", colour=MUTED),
        )
        h = runs_height(pdf, runs, pdf.epw, TEXT)
        with placed(pdf, h) as top:
            draw_runs(pdf, pdf.l_margin, top, pdf.epw, runs, TEXT)
        pdf.set_y(top + h)


def stop_now(pdf: FPDF, card: JobCard) -> None:
    """A reading that says stop now (over-pressure, an overranged gauge) goes under the header,
    in the danger colour, before anything else on the card."""
    for c in card.stop_now:
        edge, fill = SEVERITY.get(c.severity, SEVERITY["danger"])
        heading = f"{c.severity.upper()}: {c.title}"
        w = pdf.epw
        h = block_height(pdf, heading, w - INSET - 2, BODY + 0.5, True) + block_height(
            pdf, c.text, w - INSET - 2, BODY
        )
        h += block_height(pdf, c.raised_by, w - INSET - 2, SMALL) + 1.5
        pdf.ln(1.5)
        with placed(pdf, h) as y:
            pdf.set_fill_color(*fill)
            pdf.rect(pdf.l_margin, y, w, h, style="F")
            pdf.set_fill_color(*edge)
            pdf.rect(pdf.l_margin, y, STRIPE * 1.5, h, style="F")
            top = y + 0.6
            top += draw_block(
                pdf, pdf.l_margin + INSET + 1, top, w - INSET - 2, heading, BODY + 0.5, True, edge
            )
            top += draw_block(pdf, pdf.l_margin + INSET + 1, top, w - INSET - 2, c.text, BODY)
            draw_block(pdf, pdf.l_margin + INSET + 1, top, w - INSET - 2, c.raised_by, SMALL, colour=MUTED)
        pdf.set_xy(pdf.l_margin, y + h)
