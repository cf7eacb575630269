"""Line breaking for the PDF job card, done once and fast.

fpdf2's ``multi_cell`` re-measures a line once per character it adds, which made a job card take
seconds. Everything on the card (table cells, remarks, cautions, paragraphs) is broken into lines
here, greedily at spaces as fpdf2 does, and each line is put on the page with fpdf2's plain
``text`` (:func:`print_line`); so measuring and drawing use the same lines and always agree.
Word widths are cached per document, so a word is measured once however often it is printed.
"""

from __future__ import annotations

import weakref
from collections.abc import Callable, Sequence
from dataclasses import dataclass

from fpdf import FPDF

from fieldkit.report.pdf.style import FAMILY

PT = 25.4 / 72  # mm per point
PADDING = 0.5  # mm around the text of every table cell

_WIDTHS: weakref.WeakKeyDictionary[FPDF, dict[tuple[str, float, str], float]] = weakref.WeakKeyDictionary()


def line_height(size: float) -> float:
    return size * PT * 1.1


@dataclass(frozen=True, slots=True)
class Run:
    """A stretch of a paragraph in one style: a bold lead-in, a muted source line."""

    text: str
    bold: bool = False
    colour: tuple[int, int, int] | None = None  # None: the paragraph's colour


def _measurer(pdf: FPDF, bold: bool, size: float) -> Callable[[str], float]:
    """Width of a text in our family at this style and size, cached per document. The font is
    only set when a width is not cached yet: callers that print set their own font."""
    style = "B" if bold else ""
    cache = _WIDTHS.setdefault(pdf, {})

    def measure(text: str) -> float:
        key = (style, size, text)
        width = cache.get(key)
        if width is None:
            pdf.set_font(FAMILY, style, size)
            width = cache[key] = pdf.get_string_width(text)
        return width

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


def text_height(
    pdf: FPDF,
    text: str,
    width: float,
    size: float,
    bold: bool = False,
    padding: float = PADDING,
    lh: float | None = None,
) -> float:
    """Height a table cell ``width`` mm wide needs for ``text``, padding included: exactly what
    :func:`fieldkit.report.pdf.tables.measured_table` draws it at."""
    if not text:
        return 0.0
    lh = lh or line_height(size)
    return len(wrap_lines(pdf, text, width - 2 * padding, size, bold)) * lh + 2 * padding


def wrap_runs(pdf: FPDF, runs: Sequence[Run], room: float, size: float) -> list[list[Run]]:
    """Runs joined by single spaces and broken into lines no wider than ``room`` mm, each line the
    runs it holds (a run broken over two lines appears on both). Greedy at spaces, like
    :func:`wrap_lines`; a word wider than a line is cut between characters. Everything is one
    paragraph: a ``\n`` in a run counts as a space."""
    # One paragraph: a line break inside a run is a space here.
    words: list[tuple[str, Run]] = [
        (w, r) for r in runs if r.text for w in r.text.replace("\n", " ").split(" ")
    ]
    lines: list[list[tuple[str, Run]]] = []
    line: list[tuple[str, Run]] = []
    used = 0.0
    measurers = {bold: _measurer(pdf, bold, size) for bold in (False, True)}
    for word, run in words:
        measure = measurers[run.bold]
        w = measure(word)
        space = measure(" ")
        if line and used + space + w <= room:
            line.append((word, run))
            used += space + w
            continue
        if line:
            lines.append(line)
        while w > room and len(word) > 1:
            head, word = _cut(word, room, measure)
            lines.append([(head, run)])
            w = measure(word)
        line, used = [(word, run)], w
    if line:
        lines.append(line)
    return [_merge(ln) for ln in lines]


def _merge(line: list[tuple[str, Run]]) -> list[Run]:
    out: list[Run] = []
    for word, run in line:
        if out and out[-1].bold == run.bold and out[-1].colour == run.colour:
            out[-1] = Run(out[-1].text + " " + word, run.bold, run.colour)
        else:
            out.append(Run(word, run.bold, run.colour))
    return out


def runs_height(pdf: FPDF, runs: Sequence[Run], width: float, size: float) -> float:
    """Height :func:`draw_runs` will use in a block ``width`` mm wide."""
    return len(wrap_runs(pdf, runs, width - 2 * pdf.c_margin, size)) * line_height(size)


def print_runs(
    pdf: FPDF, x: float, top: float, lh: float, line: Sequence[Run], size: float, colour: tuple[int, int, int]
) -> None:
    """One wrapped line of runs from ``x``; runs are a space apart, as they were measured."""
    for run in line:
        measure = _measurer(pdf, run.bold, size)
        pdf.set_font(FAMILY, "B" if run.bold else "", size)
        pdf.set_text_color(*(run.colour or colour))
        print_line(pdf, x, top, lh, run.text)
        x += measure(run.text) + measure(" ")


def draw_runs(
    pdf: FPDF,
    x: float,
    y: float,
    width: float,
    runs: Sequence[Run],
    size: float,
    colour: tuple[int, int, int] = (33, 37, 41),
) -> float:
    """Print runs as one paragraph in lines from (x, y), inset like :func:`draw_block`; returns the height."""
    lh = line_height(size)
    lines = wrap_runs(pdf, runs, width - 2 * pdf.c_margin, size)
    for i, line in enumerate(lines):
        print_runs(pdf, x + pdf.c_margin, y + i * lh, lh, line, size, colour)
    pdf.set_text_color(33, 37, 41)
    return len(lines) * lh


def block_height(pdf: FPDF, text: str, width: float, size: float, bold: bool = False) -> float:
    """Height :func:`draw_block` will use for ``text`` in a block ``width`` mm wide."""
    if not text:
        return 0.0
    return len(wrap_lines(pdf, text, width - 2 * pdf.c_margin, size, bold)) * line_height(size)


def print_line(pdf: FPDF, x: float, top: float, lh: float, text: str, right: float | None = None) -> None:
    """One line whose text starts at ``x`` (or ends at ``right``), centred in a line ``lh`` mm high
    starting at ``top``, in the current font and colour.

    fpdf2's ``text`` puts a string on a baseline with none of ``cell``'s layout work, about four
    times faster; the baseline is where ``cell`` would put it (half the line plus 0.3 em down).
    """
    if right is not None:
        x = right - _measurer_now(pdf)(text)
    pdf.text(x, top + 0.5 * lh + 0.3 * pdf.font_size, text)


def _measurer_now(pdf: FPDF) -> Callable[[str], float]:
    """A cached measure for the font already set (family, style and size as they are now)."""
    cache = _WIDTHS.setdefault(pdf, {})
    style, size = pdf.font_style, pdf.font_size_pt

    def measure(text: str) -> float:
        key = (style, size, text)
        if key not in cache:
            cache[key] = pdf.get_string_width(text)
        return cache[key]

    return measure


def draw_block(
    pdf: FPDF,
    x: float,
    y: float,
    width: float,
    text: str,
    size: float,
    bold: bool = False,
    colour: tuple[int, int, int] = (33, 37, 41),
) -> float:
    """Print ``text`` left-aligned in lines from (x, y); returns the height used."""
    if not text:
        return 0.0
    lines = wrap_lines(pdf, text, width - 2 * pdf.c_margin, size, bold)  # a cell insets its text by c_margin
    pdf.set_font(FAMILY, "B" if bold else "", size)
    pdf.set_text_color(*colour)
    lh = line_height(size)
    for i, line in enumerate(lines):
        print_line(pdf, x + pdf.c_margin, y + i * lh, lh, line)
    pdf.set_text_color(33, 37, 41)
    return len(lines) * lh
