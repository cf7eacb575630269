"""The PDF job card, read back with pypdf: content, paper size, symbols, pagination, repeatability."""

from __future__ import annotations

import io
import itertools
import re
from datetime import UTC, datetime
from pathlib import Path

import pytest
from fpdf import FPDF
from pypdf import PdfReader
from report_builders import (
    HOSTILE,
    SAMPLE_VISITS,
    UNICODE_NOTE,
    load,
    many_readings,
    with_reading_note,
    with_text,
)

import fieldkit.report.pdf.card as pdf_module
from fieldkit.diagnosis.results import Verdict
from fieldkit.diagnosis.retest import as_read
from fieldkit.report.build import job_card
from fieldkit.report.model import Band
from fieldkit.report.pdf import render_pdf

FIXED = datetime(2025, 5, 14, 8, 30, tzinfo=UTC)
# ISO 216 A4 is 210 × 297 mm and ANSI Letter 8.5 × 11 in; at 72 pt/in: 595.28 × 841.89 and 612 × 792 pt.
A4 = (595.28, 841.89)
LETTER = (612.0, 792.0)


def _flat(text: str) -> str:
    """Whitespace collapsed, so text that wrapped inside a table cell still matches."""
    return re.sub(r"\s+", " ", text).strip()


def _read(data: bytes) -> tuple[PdfReader, str]:
    reader = PdfReader(io.BytesIO(data))
    return reader, _flat("\n".join(page.extract_text() for page in reader.pages))


@pytest.mark.parametrize("path", SAMPLE_VISITS, ids=lambda p: p.stem)
def test_pdf_holds_every_reading_the_top_fault_and_the_cautions(bench, path: Path) -> None:
    visit, profile = load(bench, path)
    diagnosis = bench.diagnose(visit, profile)
    card = job_card(visit, profile, diagnosis)
    _reader, text = _read(render_pdf(card, fixed_date=FIXED))
    for check in diagnosis.checks:
        assert _flat(as_read(check)) in text, as_read(check)
    assert _flat(diagnosis.top.display_title) in text
    for caution in diagnosis.cautions:
        assert _flat(caution.title) in text, caution.title
    assert _flat(visit.job_number) in text
    assert "Sign-off" in text
    # What the shorter layout must not drop: faults with their odds and evidence, actions, parts,
    # the next test, every caution's text and source, notes, and the signers' lines.
    for fault in card.faults.top:
        assert _flat(f"{fault.title} {fault.probability_text}") in text, fault.title
        for item in fault.supporting + fault.against:
            assert _flat(item.short) in text, item.short
    for action in card.actions:
        assert _flat(action.text) in text, action.text
    for part in card.parts:
        assert _flat(part.name) in text, part.name
    if card.next_test is not None:
        assert _flat(card.next_test.title) in text
    appendix = text[text.index("Appendix: sources of the safety cautions") :]
    for caution in card.cautions:
        assert _flat(caution.text) in text, caution.title
        assert _flat(caution.source) in appendix, caution.source
    for note in card.notes:
        assert _flat(note.text) in text, note.label
    for finding in card.findings.flagged:
        assert _flat(finding.title) in text, finding.title
    assert text.count("Signature") == len(card.sign_off)


@pytest.mark.parametrize("path", SAMPLE_VISITS, ids=lambda p: p.stem)
def test_every_sample_visit_fits_on_three_pages_of_a4_and_of_letter(bench, path: Path) -> None:
    # A legible card on few A4/Letter pages up to the sign-off: the customer's first page (issue 11:
    # complaint, cause, work, status) and the gauges used made two pages three; the appendix of
    # caution sources (issue 17) may follow it.
    visit, profile = load(bench, path)
    card = job_card(visit, profile, bench.diagnose(visit, profile))
    for letter, size in ((False, A4), (True, LETTER)):
        reader, text = _read(render_pdf(card, letter=letter, fixed_date=FIXED))
        signed = next(i for i, page in enumerate(reader.pages) if "Signature" in page.extract_text())
        assert signed < 3, f"{path.stem} signs off on {'Letter' if letter else 'A4'} page {signed + 1}"
        assert len(reader.pages) <= 4
        for page in reader.pages:
            assert (float(page.mediabox.width), float(page.mediabox.height)) == pytest.approx(size, abs=0.01)
        assert f"page {len(reader.pages)} of {len(reader.pages)}" in text


def test_cautions_are_printed_in_the_order_the_card_gives_them(worn) -> None:
    # Three columns are read downwards: drawing them column by column keeps the card's order
    # (general caution first, then by severity) in the page's own text order too.
    card = job_card(*worn)
    _reader, text = _read(render_pdf(card, fixed_date=FIXED))
    section = text[text.index("Safety cautions") :]
    places = [section.index(_flat(c.title)) for c in card.cautions]
    assert places == sorted(places)
    assert card.cautions[0].general


def test_pdf_is_a4_by_default_and_letter_when_asked(worn) -> None:
    card = job_card(*worn)
    for letter, size in ((False, A4), (True, LETTER)):
        reader, _text = _read(render_pdf(card, letter=letter, fixed_date=FIXED))
        for page in reader.pages:
            box = page.mediabox
            assert (float(box.width), float(box.height)) == pytest.approx(size, abs=0.01)


def test_symbols_outside_latin1_print_as_typed(worn) -> None:
    visit, profile, diagnosis = worn
    noted = with_text(visit, notes=UNICODE_NOTE)
    _reader, text = _read(render_pdf(job_card(noted, profile, diagnosis), fixed_date=FIXED))
    assert UNICODE_NOTE in text


def test_a_character_the_font_lacks_is_marked_not_swapped(worn) -> None:
    visit, profile, diagnosis = worn
    noted = with_text(visit, notes="pump \u4e2d seal")  # a CJK character: DejaVu Sans has no glyph for it
    _reader, text = _read(render_pdf(job_card(noted, profile, diagnosis), fixed_date=FIXED))
    assert "pump [U+4E2D] seal" in text


def test_markup_in_user_text_is_printed_literally(worn) -> None:
    visit, profile, diagnosis = worn
    hostile = with_reading_note(with_text(visit, notes=HOSTILE, customer="**Bold** Ltd"), 0, "[x](y) **z**")
    _reader, text = _read(render_pdf(job_card(hostile, profile, diagnosis), fixed_date=FIXED))
    assert _flat(HOSTILE) in text
    assert "**Bold** Ltd" in text
    assert "[x](y) **z**" in text


def test_a_note_that_looks_like_a_page_number_alias_stays_as_typed(worn) -> None:
    visit, profile, diagnosis = worn
    noted = with_text(visit, notes="see {nb} and {pg} pages")
    reader, text = _read(render_pdf(job_card(noted, profile, diagnosis), fixed_date=FIXED))
    assert "see {nb} and {pg} pages" in text
    assert f"page 1 of {len(reader.pages)}" in text


def test_same_visit_and_fixed_date_give_the_same_pdf(worn) -> None:
    card = job_card(*worn)
    first, second = render_pdf(card, fixed_date=FIXED), render_pdf(card, fixed_date=FIXED)
    reader, text_one = _read(first)
    _reader, text_two = _read(second)
    assert text_one == text_two
    assert first == second  # same process, same zlib: the bytes match too
    assert reader.metadata.creation_date == FIXED


def test_a_band_picture_is_drawn_in_each_reading_row(worn, monkeypatch: pytest.MonkeyPatch) -> None:
    drawn: list[tuple[float, float, float]] = []
    real = pdf_module.band_picture

    def spy(pdf: FPDF, band: Band, verdict: Verdict, x: float, y: float, w: float, h: float) -> None:
        drawn.append((band.value, y, h))
        real(pdf, band, verdict, x, y, w, h)

    monkeypatch.setattr(pdf_module, "band_picture", spy)
    card = job_card(*worn)
    render_pdf(card, fixed_date=FIXED)
    with_band = [r.band.value for r in card.readings if r.band is not None]
    assert [value for value, _y, _h in drawn] == with_band
    # Rows on one page follow each other downwards without overlapping.
    tops = [y for _v, y, _h in drawn]
    assert all(h >= 6.0 for _v, _y, h in drawn)
    assert any(b > a for a, b in itertools.pairwise(tops))


def test_forty_readings_run_onto_more_pages_with_the_headings_repeated(bench) -> None:
    visit, profile = load(bench)
    big = many_readings(visit, 40)
    diagnosis = bench.diagnose(big, profile)
    assert len(diagnosis.checks) == 40
    reader, text = _read(render_pdf(job_card(big, profile, diagnosis), fixed_date=FIXED))
    assert len(reader.pages) >= 3
    for check in diagnosis.checks:
        assert _flat(as_read(check)) in text
    pages_with_heading = sum("Test point and condition" in page.extract_text() for page in reader.pages)
    assert pages_with_heading >= 2
    assert f"page {len(reader.pages)} of {len(reader.pages)}" in text


def test_a_very_long_reading_note_moves_to_the_notes_instead_of_breaking_the_table(worn) -> None:
    visit, profile, diagnosis = worn
    note = "\n".join(f"line {i}: seal weeping at the test port" for i in range(120))
    card = job_card(with_reading_note(visit, 2, note), profile, diagnosis)
    _reader, text = _read(render_pdf(card, fixed_date=FIXED))
    assert "printed in full under Notes" in text
    assert "line 0: seal weeping" in text and "line 119: seal weeping" in text


def test_importing_the_report_package_does_not_load_the_pdf_library() -> None:
    import subprocess
    import sys

    code = (
        "import sys, fieldkit.report, fieldkit.report.model, fieldkit.report.jobcard, "
        "fieldkit.report.command, fieldkit.report.text, fieldkit.report.markdown; print('fpdf' in "
        "sys.modules)"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"
