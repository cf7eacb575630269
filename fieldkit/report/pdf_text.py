"""Line breaking for the PDF job card, done once and fast.

fpdf2's ``multi_cell`` re-measures a line once per character it adds, which made a job card take
seconds. Boxes we draw ourselves (remarks, cautions, the summary) are broken into lines here,
greedily at spaces as fpdf2 does, and each line is printed with a plain ``cell``; so measuring
and drawing use the same lines and always agree. For fpdf2's tables, which break their own
cells, :func:`text_height` counts lines on a slightly narrower line, so it never says fewer
lines than fpdf2 will use.
"""

from __future__ import annotations

import weakref
from collections.abc import Callable

from fpdf import FPDF

FAMILY = "fieldkit-sans"
PT = 25.4 / 72  # mm per point
PADDING = 0.75  # mm around the text of every table cell

_WIDTHS: weakref.WeakKeyDictionary[FPDF, dict[tuple[str, float, str], float]] = weakref.WeakKeyDictionary()


def line_height(size: float) -> float:
    return size * PT * 1.14


def _measurer(pdf: FPDF, bold: bool, size: float) -> Callable[[str], float]:
    style = "B" if bold else ""
    pdf.set_font(FAMILY, style, size)
    cache = _WIDTHS.setdefault(pdf, {})

    def measure(text: str) -> float:
        key = (style, size, text)
        if key not in cache:
            cache[key] = pdf.get_string_width(text)
        return cache[key]

    return measure


def wrap_lines(pdf: FPDF, text: str, room: float, size: float, bold: bool = False) -> list[str]:
    """``text`` broken into lines no wider than ``room`` mm; ``\\n`` starts a new line and a word
    wider than a line is cut between characters."""
    measure = _measurer(pdf, bold, size)
    space = measure(" ")
    lines: list[str] = []
    for paragraph in text.split("\n"):
        # Words between single spaces; an empty "word" is an extra space, which takes room as fpdf2's does.
        words: list[str] = []
        used = 0.0
        for word in paragraph.split(" "):
            w = measure(word)
            if words and used + space + w <= room:
                words.append(word)
                used += space + w
                continue
            if words:
                lines.append(" ".join(words))
            while w > room and len(word) > 1:
                head, word = _cut(word, room, measure)
                lines.append(head)
                w = measure(word)
            words, used = [word], w
        lines.append(" ".join(words))
    return lines


def _cut(word: str, room: float, measure: Callable[[str], float]) -> tuple[str, str]:
    used = 0.0
    for i, ch in enumerate(word):
        used += measure(ch)
        if used > room and i > 0:
            return word[:i], word[i:]
    return word, ""


def text_height(pdf: FPDF, text: str, width: float, size: float, bold: bool = False,
                padding: float = PADDING, lh: float | None = None) -> float:
    """Height a table cell (or a ``multi_cell``) needs for ``text``: at least what fpdf2 will use.

    ``lh`` is the line height; a table uses its own for every cell, whatever the cell's font size.
    """
    if not text:
        return 0.0
    lh = lh or line_height(size)
    side = padding if padding else pdf.c_margin
    room = (width - 2 * side) * 0.985 - 0.05  # err towards one line too many, never too few
    return len(wrap_lines(pdf, text, room, size, bold)) * lh + 2 * padding


def block_height(pdf: FPDF, text: str, width: float, size: float, bold: bool = False) -> float:
    """Height :func:`draw_block` will use for ``text`` in a block ``width`` mm wide."""
    if not text:
        return 0.0
    return len(wrap_lines(pdf, text, width - 2 * pdf.c_margin, size, bold)) * line_height(size)


def draw_block(pdf: FPDF, x: float, y: float, width: float, text: str, size: float, bold: bool = False,
               colour: tuple[int, int, int] = (33, 37, 41)) -> float:
    """Print ``text`` left-aligned in lines from (x, y); returns the height used."""
    if not text:
        return 0.0
    lines = wrap_lines(pdf, text, width - 2 * pdf.c_margin, size, bold)  # a cell insets its text by c_margin
    pdf.set_font(FAMILY, "B" if bold else "", size)
    pdf.set_text_color(*colour)
    lh = line_height(size)
    for i, line in enumerate(lines):
        pdf.set_xy(x, y + i * lh)
        pdf.cell(width, lh, line)
    pdf.set_text_color(33, 37, 41)
    return len(lines) * lh
