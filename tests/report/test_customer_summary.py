"""Issue 11, item 6: the part of the job card a customer reads (the visit, before and after the
repair, the summary) carries no source marked `from memory` or `second-hand`; those stay in the
technician's tables and the appendix, where the same card still shows them.

Read back from the text and Markdown cards of every demo visit that tells the whole story, in
metric and US units, and from the summary on the first page of the PDF."""

from __future__ import annotations

import io

import pytest
from pypdf import PdfReader
from report_builders import SAMPLE_VISITS, load

from fieldkit.diagnosis.engine import diagnose
from fieldkit.report.build import job_card
from fieldkit.report.markdown import render_markdown
from fieldkit.report.pdf import render_pdf
from fieldkit.report.text import render_text
from fieldkit.session import Workbench, read_visit_file
from fieldkit.units import DisplaySystem

MARKS = ("from memory", "second-hand")
STORIES = [
    pytest.param(p, id=p.stem) for p in SAMPLE_VISITS if (v := read_visit_file(p)[0]).departure and v.work
]


def _card(bench: Workbench, path, system: str):
    visit, profile = load(bench, path)
    shown = DisplaySystem.named(system)
    return job_card(
        visit,
        profile,
        diagnose(visit.diagnosis_view(), profile, bench.knowledge, shown),
        shown,
        bench.knowledge,
    )


def _before(text: str, heading: str) -> str:
    assert heading in text, f"no {heading!r} heading: the card's layout changed"
    return text[: text.index(heading)]


def test_every_demo_machine_has_a_story_visit_to_read() -> None:
    assert len(STORIES) >= 3


@pytest.mark.parametrize("system", ["metric", "us"])
@pytest.mark.parametrize("path", STORIES)
def test_the_customer_part_of_the_card_names_no_hearsay_source(bench: Workbench, path, system: str) -> None:
    card = _card(bench, path, system)
    text, markdown = render_text(card), render_markdown(card)
    customer = _before(text, "\nREADINGS\n") + _before(markdown, "\n## Readings")
    assert "Complaint" in customer and "Status" in customer  # the part read is the summary itself
    assert not [m for m in MARKS if m in customer.lower()], customer
    # The marks are kept, not lost: the rest of the card (tables, appendix) still shows them.
    assert any(m in text.lower() for m in MARKS)


@pytest.mark.parametrize("path", STORIES)
def test_the_summary_on_the_first_pdf_page_names_no_hearsay_source(bench: Workbench, path) -> None:
    first = PdfReader(io.BytesIO(render_pdf(_card(bench, path, "metric")))).pages[0].extract_text()
    # Page 1 runs on into the readings table (the technician's view); the summary ends there.
    summary = " ".join(_before(first, "\nReadings\n").split()).lower()
    assert "complaint" in summary and "status" in summary
    assert not [m for m in MARKS if m in summary], summary
