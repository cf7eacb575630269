"""Our line counting against fpdf2's own (its ``multi_cell`` dry run is the oracle): a table row
we size must never be shorter than the text fpdf2 puts in it, or band pictures would drift."""

from __future__ import annotations

import itertools
from pathlib import Path

from fpdf import FPDF
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from fieldkit.report.pdf_tables import Cell, measured_table
from fieldkit.report.pdf_text import FAMILY, PADDING, line_height, text_height, wrap_lines

FONTS = Path(__file__).resolve().parents[2] / "fieldkit" / "report" / "fonts"
WORDS = st.one_of(
    st.sampled_from(["bar", "±0.35", "Δp", "≥", "°C", "µm", "case", "drain", "—", "relief-valve", "\u00a0%", "x" * 60]),
    st.text(alphabet="abcdefghijklmnopqrstuvwxyzWM0123456789.,;:()/-", min_size=1, max_size=25),
)
TEXTS = st.lists(st.one_of(WORDS, st.just("\n"), st.just("")), min_size=1, max_size=30).map(" ".join)


def _pdf() -> FPDF:
    pdf = FPDF(unit="mm", format="A4")
    pdf.add_font(FAMILY, "", FONTS / "DejaVuSans.ttf")
    pdf.add_font(FAMILY, "B", FONTS / "DejaVuSans-Bold.ttf")
    pdf.add_page()
    return pdf


PDF = _pdf()


@settings(max_examples=120, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(text=TEXTS, width=st.floats(min_value=12, max_value=180), size=st.sampled_from([6.0, 6.8, 8.0]),
       bold=st.booleans())
def test_our_cell_height_is_never_less_than_fpdf2s(text: str, width: float, size: float, bold: bool) -> None:
    ours = text_height(PDF, text, width, size, bold)
    if not text:  # fpdf2's table leaves an empty cell unmeasured, and so do we
        assert ours == 0.0
        return
    PDF.set_font(FAMILY, "B" if bold else "", size)
    lh = line_height(size)
    theirs = PDF.multi_cell(w=width, h=lh, text=text, max_line_height=lh, padding=PADDING, dry_run=True,
                            output="HEIGHT", wrapmode="WORD")
    assert ours >= theirs - 1e-6
    assert ours <= theirs + 2 * lh + 1e-6  # and not wildly more: at most a line or two spare


@settings(max_examples=120, deadline=None)
@given(text=TEXTS, room=st.floats(min_value=5, max_value=150))
def test_wrapped_lines_fit_and_keep_every_character(text: str, room: float) -> None:
    lines = wrap_lines(PDF, text, room, 7.0)
    PDF.set_font(FAMILY, "", 7.0)
    for line in lines:
        assert PDF.get_string_width(line) <= room + 1e-6 or len(line) == 1
    assert "".join(lines).replace(" ", "") == text.replace("\n", "").replace(" ", "")


@settings(max_examples=20, deadline=None)
@given(rows=st.lists(st.tuples(TEXTS, TEXTS, TEXTS), min_size=1, max_size=12))
def test_a_measured_table_ends_where_its_rows_add_up_to(rows: list[tuple[str, str, str]]) -> None:
    pdf = _pdf()
    drawn: list[tuple[int, float, float]] = []

    def mark(_pdf: FPDF, i: int, _x: float, y: float, _w: float, h: float) -> None:
        drawn.append((i, y, h))

    # measured_table raises if fpdf2 placed the rows anywhere else than the sums say.
    measured_table(pdf, ["one", "two", "three"], [[Cell(a, bold=True), b, c] for a, b, c in rows], [30, 50, 100],
                   size=6.8, draw={1: mark})
    assert [i for i, _y, _h in drawn] == list(range(len(rows)))
    for (_i, y, h), (_j, y_next, _h) in itertools.pairwise(drawn):
        assert y_next >= y + h - 1e-6 or y_next < y  # the next row starts below, or on a new page


def test_a_table_row_is_at_least_its_tallest_cell() -> None:
    pdf = _pdf()
    heights: list[float] = []
    measured_table(pdf, None, [["short", "a much longer cell " * 8]], [20, 20],
                   draw={0: lambda _p, _i, _x, _y, _w, h: heights.append(h)})
    assert heights[0] >= text_height(pdf, "a much longer cell " * 8, pdf.epw / 2, 7.0)
