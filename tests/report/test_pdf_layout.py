"""Our line breaking against fpdf2's own (its ``multi_cell`` dry run is the oracle), and the tables
we draw from it: each row is exactly as tall as its lines, rows follow each other without gaps,
and a row joined to the one above never lands on another page."""

from __future__ import annotations

import itertools

import pytest
from fpdf import FPDF
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from fieldkit.report.pdf.style import BOLD_FONT, FAMILY, REGULAR_FONT
from fieldkit.report.pdf.tables import Cell, measured_table
from fieldkit.report.pdf.text import PADDING, Run, line_height, text_height, wrap_lines, wrap_runs

WORDS = st.one_of(
    st.sampled_from(
        ["bar", "±0.35", "Δp", "≥", "°C", "µm", "case", "drain", "—", "relief-valve", "\u00a0%", "x" * 60]
    ),
    st.text(alphabet="abcdefghijklmnopqrstuvwxyzWM0123456789.,;:()/-", min_size=1, max_size=25),
)
TEXTS = st.lists(st.one_of(WORDS, st.just("\n"), st.just("")), min_size=1, max_size=30).map(" ".join)


def _pdf() -> FPDF:
    pdf = FPDF(unit="mm", format="A4")
    pdf.add_font(FAMILY, "", REGULAR_FONT)
    pdf.add_font(FAMILY, "B", BOLD_FONT)
    pdf.add_page()
    return pdf


PDF = _pdf()


@settings(max_examples=120, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    text=TEXTS,
    width=st.floats(min_value=12, max_value=180),
    size=st.sampled_from([6.0, 6.8, 8.0]),
    bold=st.booleans(),
)
def test_our_cell_height_is_never_less_than_fpdf2s(text: str, width: float, size: float, bold: bool) -> None:
    # Never fewer lines than fpdf2's own line breaker: no line we print is fuller than it allows.
    ours = text_height(PDF, text, width, size, bold)
    if not text:  # an empty cell takes no lines
        assert ours == 0.0
        return
    PDF.set_font(FAMILY, "B" if bold else "", size)
    lh = line_height(size)
    theirs = PDF.multi_cell(
        w=width,
        h=lh,
        text=text,
        max_line_height=lh,
        padding=PADDING,
        dry_run=True,
        output="HEIGHT",
        wrapmode="WORD",
    )
    assert ours >= theirs - 1e-6
    assert ours <= theirs + lh + 1e-6  # and at most a line more (fpdf2 may split a word we cut otherwise)


@settings(max_examples=120, deadline=None)
@given(text=TEXTS, room=st.floats(min_value=5, max_value=150))
def test_wrapped_lines_fit_and_keep_every_character(text: str, room: float) -> None:
    lines = wrap_lines(PDF, text, room, 7.0)
    PDF.set_font(FAMILY, "", 7.0)
    for line in lines:
        assert PDF.get_string_width(line) <= room + 1e-6 or len(line) == 1
    assert "".join(lines).replace(" ", "") == text.replace("\n", "").replace(" ", "")


@settings(max_examples=60, deadline=None)
@given(
    runs=st.lists(st.tuples(TEXTS, st.booleans()), min_size=1, max_size=4),
    room=st.floats(min_value=5, max_value=150),
)
def test_styled_runs_wrap_to_fit_and_keep_every_word_in_its_style(
    runs: list[tuple[str, bool]], room: float
) -> None:
    lines = wrap_runs(PDF, [Run(t, b) for t, b in runs], room, 7.0)
    for line in lines:
        width = 0.0
        for k, run in enumerate(line):
            PDF.set_font(FAMILY, "B" if run.bold else "", 7.0)
            width += PDF.get_string_width(run.text) + (PDF.get_string_width(" ") if k else 0.0)
        assert width <= room + 1e-6 or sum(len(r.text) for r in line) == 1
    kept = [(ch, r.bold) for line in lines for r in line for ch in r.text if ch not in " \n"]
    given_ = [(ch, b) for t, b in runs for ch in t if ch not in " \n"]
    assert kept == given_


@settings(max_examples=20, deadline=None)
@given(rows=st.lists(st.tuples(TEXTS, TEXTS, TEXTS), min_size=1, max_size=40))
def test_table_rows_follow_each_other_and_are_as_tall_as_their_lines(
    rows: list[tuple[str, str, str]],
) -> None:
    pdf = _pdf()
    drawn: list[tuple[int, int, float, float]] = []

    def mark(p: FPDF, i: int, _x: float, y: float, _w: float, h: float) -> None:
        drawn.append((i, p.page_no(), y, h))

    cols = [pdf.epw * w / 180 for w in (30, 50, 100)]
    measured_table(
        pdf,
        ["one", "two", "three"],
        [[Cell(a, bold=True), b, c] for a, b, c in rows],
        [30, 50, 100],
        size=6.8,
        draw={1: mark},
    )
    assert [i for i, _p, _y, _h in drawn] == list(range(len(rows)))
    for (i, _p, _y, h), (a, b, c) in zip(drawn, rows, strict=True):
        tallest = max(
            text_height(pdf, a, cols[0], 6.8, bold=True),
            text_height(pdf, b, cols[1], 6.8),
            text_height(pdf, c, cols[2], 6.8),
            2 * PADDING,
        )
        assert h == pytest.approx(tallest), i
    for (_i, page, y, h), (_j, next_page, y_next, _h) in itertools.pairwise(drawn):
        if next_page == page:
            assert y_next == pytest.approx(y + h)  # no gap, no overlap
        else:
            assert y_next < y  # the next row starts a new page, under the repeated headings
    _i, _page, y_last, h_last = drawn[-1]
    assert pdf.y == pytest.approx(y_last + h_last)


def test_a_row_joined_to_the_one_above_moves_to_the_next_page_with_it() -> None:
    pdf = _pdf()
    rows = [[f"reading {i}", "x"] for i in range(80)]
    joined = [i % 2 == 1 for i in range(80)]  # every odd row is the remark of the even row above it
    pages: list[int] = []
    measured_table(
        pdf,
        ["a", "b"],
        rows,
        [1, 1],
        min_row=6.0,
        continues=joined,
        draw={0: lambda p, _i, _x, _y, _w, _h: pages.append(p.page_no())},
    )
    assert pages[-1] > 1  # the table did run over pages
    assert all(pages[i] == pages[i + 1] for i in range(0, 80, 2))


def test_a_table_row_is_at_least_its_tallest_cell() -> None:
    pdf = _pdf()
    heights: list[float] = []
    measured_table(
        pdf,
        None,
        [["short", "a much longer cell " * 8]],
        [20, 20],
        draw={0: lambda _p, _i, _x, _y, _w, h: heights.append(h)},
    )
    assert heights[0] >= text_height(pdf, "a much longer cell " * 8, pdf.epw / 2, 7.0)
