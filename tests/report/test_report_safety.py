"""Safety on the customer's card and on ``fieldkit diagnose`` (issue 17).

- An over-pressure reading (440 bar on the Fellborer's 400 bar cross-port relief; the class 1
  0-600 bar gauge is good to 6 bar, EN 837-1, plus a 5 % margin of 20 bar, common practice:
  anything above 426 bar) puts the danger first: at the top of ``diagnose``, in ``--json``, and
  at the top of the job card in all three formats, as well as among its cautions.
- The card shows each caution's plain words; the sources, with their honest marks ("[from
  memory]", "[quoted second-hand]"), sit in an appendix after the sign-off.
"""

from __future__ import annotations

import io
import json
import re
from pathlib import Path

import pytest
from pypdf import PdfReader
from report_builders import SAMPLE_VISITS, WORN_CHARGE_PUMP

from fieldkit.cli import main

MARKS = ("[from memory]", "[quoted second-hand]")
APPENDIX = "Appendix: sources of the safety cautions"


def _flat(text: str) -> str:
    return re.sub(r"\s+", " ", text).strip()


def _over_pressure_visit(folder: Path) -> Path:
    """The worn-charge-pump visit with loop A read at 440 bar instead of 397 bar (stalled, G600)."""
    data = json.loads(WORN_CHARGE_PUMP.read_text(encoding="utf-8"))
    loop_a = next(r for r in data["readings"] if r["test_point"] == "travel.loop_a")
    assert loop_a["gauge"] == "G600" and loop_a["condition"]["function"] == "stalled"
    loop_a["value"] = "440 bar"
    loop_a.pop("entered", None)
    path = folder / "over-pressure.json"
    path.write_text(json.dumps(data), encoding="utf-8")
    return path


def _run(capsys: pytest.CaptureFixture[str], tmp_path: Path, *args: str) -> str:
    assert main(["--store", str(tmp_path / "visits.sqlite3"), *args]) == 0
    return capsys.readouterr().out


def test_diagnose_puts_the_over_pressure_danger_first(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    visit = _over_pressure_visit(tmp_path)
    text = _flat(_run(capsys, tmp_path, "diagnose", str(visit)))
    top = text.index("DANGER: Over-pressure: stop the test now")
    assert top < text.index("Readings")  # before anything else
    assert "do not repeat the test" in text


def test_diagnose_json_carries_the_over_pressure_danger(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    visit = _over_pressure_visit(tmp_path)
    out = json.loads(_run(capsys, tmp_path, "diagnose", "--json", str(visit)))
    assert [c["id"] for c in out["cautions"]][:2] == ["general", "over-pressure"]
    danger = out["cautions"][1]
    assert danger["severity"] == "danger" and danger["urgent"] is True
    assert danger["because"].startswith(
        "finding: "
    )  # the built-in check, or a rule that reads the same stall
    finding = next(f for f in out["findings"] if f["rule_id"] == "over-pressure")
    assert finding["verdict"] == "high" and "did not open" in finding["message"]
    assert not any(c["urgent"] for c in out["cautions"][2:])


def test_the_job_card_opens_with_the_over_pressure_danger(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    visit = _over_pressure_visit(tmp_path)
    out = tmp_path / "out"
    out.mkdir()
    files = ["--pdf", str(out / "c.pdf"), "--text", str(out / "c.txt"), "--markdown", str(out / "c.md")]
    _run(capsys, tmp_path, "report", str(visit), *files, "--fixed-date", "2025-05-14")
    first_page = _flat(PdfReader(io.BytesIO((out / "c.pdf").read_bytes())).pages[0].extract_text())
    text = _flat((out / "c.txt").read_text(encoding="utf-8"))
    markdown = _flat((out / "c.md").read_text(encoding="utf-8"))
    for card in (first_page, text, markdown):
        head = card.index("DANGER: Over-pressure: stop the test now")
        assert head < card.index("16 readings: "), card[:400]  # above the summary
        assert "Put the controls in neutral at once and do not repeat the test" in card
    pdf_text = _flat(
        "\n".join(p.extract_text() for p in PdfReader(io.BytesIO((out / "c.pdf").read_bytes())).pages)
    )
    cautions = pdf_text[
        pdf_text.index("Safety cautions") : pdf_text.index(APPENDIX)
    ]  # the PDF keeps its case
    assert "Over-pressure: stop the test now" in cautions


def test_a_visit_with_no_over_pressure_has_no_danger_at_the_top(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    text = _flat(_run(capsys, tmp_path, "diagnose", str(WORN_CHARGE_PUMP)))
    assert "DANGER:" not in text[: text.index("Readings")]


@pytest.mark.parametrize("path", SAMPLE_VISITS, ids=lambda p: p.stem)
def test_the_customer_part_of_the_card_shows_plain_words_and_the_appendix_keeps_the_marks(
    tmp_path: Path, path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    out = tmp_path / "out"
    out.mkdir()
    files = ["--pdf", str(out / "c.pdf"), "--text", str(out / "c.txt"), "--markdown", str(out / "c.md")]
    _run(capsys, tmp_path, "report", str(path), *files, "--fixed-date", "2025-05-14")
    diagnosis = json.loads(_run(capsys, tmp_path, "diagnose", "--json", str(path)))
    pdf = _flat(
        "\n".join(p.extract_text() for p in PdfReader(io.BytesIO((out / "c.pdf").read_bytes())).pages)
    )
    text = _flat((out / "c.txt").read_text(encoding="utf-8"))
    markdown = _flat((out / "c.md").read_text(encoding="utf-8"))
    marked = [c for c in diagnosis["cautions"] if any(m in c["source"] for m in MARKS)]
    assert marked, "the demo visits raise cautions whose sources carry a mark"
    for card in (pdf, text, markdown):
        cut = card.lower().index(APPENDIX.lower())  # the text card writes headings in capitals
        body, appendix = card[:cut], card[cut:]
        assert not any(m in body for m in MARKS), card[:200]
        for c in diagnosis["cautions"]:
            assert _flat(c["text"]) in body.replace("\\", ""), c["id"]
            assert _flat(c["source"]) in appendix.replace("\\", ""), c["id"]
