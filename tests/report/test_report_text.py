"""The plain-text job card: pasted into work-order systems, so 80 columns and nothing interpreted."""

from __future__ import annotations

import re
from pathlib import Path

import pytest
from report_builders import HOSTILE, SAMPLE_VISITS, UNICODE_NOTE, load, with_reading_note, with_text

from fieldkit.diagnosis.retest import as_read
from fieldkit.report.build import job_card
from fieldkit.report.columns import width, wrap
from fieldkit.report.text import COLUMNS, render_text


def _flat(text: str) -> str:
    return re.sub(r"\s+", " ", text)


def _assert_fits(text: str) -> None:
    for number, line in enumerate(text.splitlines(), start=1):
        assert len(line) <= COLUMNS, f"line {number} has {len(line)} characters: {line!r}"
        assert width(line) <= COLUMNS, f"line {number} is {width(line)} columns wide: {line!r}"


@pytest.mark.parametrize("path", SAMPLE_VISITS, ids=lambda p: p.stem)
def test_text_fits_80_columns_and_holds_each_reading_and_the_top_fault(bench, path: Path) -> None:
    visit, profile = load(bench, path)
    diagnosis = bench.diagnose(visit, profile)
    card = job_card(visit, profile, diagnosis)
    text = render_text(card)
    _assert_fits(text)
    flat = _flat(text)
    for check, row in zip(diagnosis.checks, card.readings, strict=True):
        # The value to its gauge's resolution, the error as the gauge's class limit (±a).
        assert _flat(f"{as_read(check)} (gauge error {row.uncertainty}); expected {check.expected}") in flat
        assert _flat(check.test_point_label) in flat
    assert _flat(diagnosis.top.display_title) in flat


def test_long_words_wide_scripts_and_tabs_still_fit(worn) -> None:
    visit, profile, diagnosis = worn
    odd = with_text(
        visit,
        customer="Ökonom Hydraulik GmbH\tWerk 2 " + "x" * 150,
        notes="https://example.invalid/" + "a" * 300 + "\n中文的注释" * 40 + "\n" + UNICODE_NOTE,
        job_number="J" * 40,
    )
    text = render_text(job_card(with_reading_note(odd, 1, "\u00e9\u0301" * 100 + " end"), profile, diagnosis))
    _assert_fits(text)
    assert UNICODE_NOTE in text
    assert "\t" not in text


def test_user_text_is_printed_as_typed_and_control_codes_are_made_visible(worn) -> None:
    visit, profile, diagnosis = worn
    text = render_text(job_card(with_text(visit, notes=HOSTILE + " \x1b[31mred"), profile, diagnosis))
    assert "\x1b" not in text
    assert "\\x1b[31mred" in text
    assert _flat(HOSTILE) in _flat(text)


def test_wrapping_keeps_every_word_in_order() -> None:
    words = [f"w{i}" * (1 + i % 4) for i in range(200)]  # all shorter than a line: none is cut
    lines = wrap(" ".join(words), 30, "  - ", "    ")
    assert all(width(line) <= 30 for line in lines)
    assert " ".join(line.strip().removeprefix("- ") for line in lines).split() == words


def test_wide_characters_count_two_columns() -> None:
    # East Asian Wide characters take two terminal columns (Unicode Standard Annex #11).
    assert width("中文") == 4
    assert width("e\u0301") == 2  # a combining accent is counted, so code-point counts fit too
    lines = wrap("中" * 50, 20)
    assert [width(line) for line in lines] == [20] * 5
    assert "".join(wrap("x" * 95, 30)) == "x" * 95  # a word longer than a line is cut, not lost
