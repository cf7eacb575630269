"""``fieldkit report``: every demo visit to all three formats, and clear refusals that write nothing."""

from __future__ import annotations

import io
import json
from pathlib import Path

import pytest
from pypdf import PdfReader
from report_builders import SAMPLE_VISITS, WORN_CHARGE_PUMP

from fieldkit.cli import main


def _run(tmp_path: Path, *args: str) -> int:
    return main(["--store", str(tmp_path / "visits.sqlite3"), "report", *args])


def _outputs(folder: Path) -> list[str]:
    return [
        "--pdf",
        str(folder / "card.pdf"),
        "--text",
        str(folder / "card.txt"),
        "--markdown",
        str(folder / "card.md"),
    ]


@pytest.mark.parametrize("path", SAMPLE_VISITS, ids=lambda p: p.stem)
def test_report_writes_all_three_formats_for_every_demo_visit(
    tmp_path: Path, path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    out = tmp_path / "out"
    out.mkdir()
    assert _run(tmp_path, str(path), *_outputs(out), "--fixed-date", "2025-05-14") == 0
    printed = capsys.readouterr().out
    job = json.loads(path.read_text(encoding="utf-8"))["job_number"]
    for name in ("card.pdf", "card.txt", "card.md"):
        assert str(out / name) in printed
        assert (out / name).stat().st_size > 0
    assert (out / "card.pdf").read_bytes().startswith(b"%PDF-")
    assert job in (out / "card.txt").read_text(encoding="utf-8")
    assert job in (out / "card.md").read_text(encoding="utf-8")


def test_letter_paper_on_request(tmp_path: Path) -> None:
    assert _run(tmp_path, str(WORN_CHARGE_PUMP), "--pdf", str(tmp_path / "card.pdf"), "--letter") == 0
    box = PdfReader(io.BytesIO((tmp_path / "card.pdf").read_bytes())).pages[0].mediabox
    assert (float(box.width), float(box.height)) == pytest.approx((612.0, 792.0))  # ANSI Letter, 8.5 × 11 in


def test_at_least_one_output_is_required(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    assert _run(tmp_path, str(WORN_CHARGE_PUMP)) == 2
    assert "--pdf FILE, --text FILE and/or --markdown FILE" in capsys.readouterr().err


def test_a_visit_without_readings_is_refused_and_nothing_is_written(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    data = json.loads(WORN_CHARGE_PUMP.read_text(encoding="utf-8"))
    data["readings"] = []
    empty = tmp_path / "empty-visit.json"
    empty.write_text(json.dumps(data), encoding="utf-8")
    out = tmp_path / "out"
    out.mkdir()
    assert _run(tmp_path, str(empty), *_outputs(out)) == 2
    assert "has no readings" in capsys.readouterr().err
    assert list(out.iterdir()) == []


def test_a_visit_for_an_unknown_machine_is_refused_and_nothing_is_written(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    data = json.loads(WORN_CHARGE_PUMP.read_text(encoding="utf-8"))
    data["machine"] = "no-such-machine"
    odd = tmp_path / "odd-visit.json"
    odd.write_text(json.dumps(data), encoding="utf-8")
    out = tmp_path / "out"
    out.mkdir()
    assert _run(tmp_path, str(odd), *_outputs(out)) == 2
    err = capsys.readouterr().err
    assert "no-such-machine" in err and "no machine profile" in err
    assert list(out.iterdir()) == []


def test_a_bad_fixed_date_or_missing_folder_is_named(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    assert (
        _run(tmp_path, str(WORN_CHARGE_PUMP), "--pdf", str(tmp_path / "c.pdf"), "--fixed-date", "soon") == 2
    )
    assert "fixed date 'soon'" in capsys.readouterr().err
    assert _run(tmp_path, str(WORN_CHARGE_PUMP), "--text", str(tmp_path / "nope" / "c.txt")) == 2
    assert "no such folder" in capsys.readouterr().err
    assert list(tmp_path.glob("*.pdf")) == []


def test_two_formats_to_one_file_or_over_the_visit_itself_are_refused(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    same = str(tmp_path / "card.out")
    assert _run(tmp_path, str(WORN_CHARGE_PUMP), "--pdf", same, "--text", same) == 2
    assert "both the pdf and the text job card" in capsys.readouterr().err
    visit_copy = tmp_path / "visit.json"
    visit_copy.write_bytes(WORN_CHARGE_PUMP.read_bytes())
    assert _run(tmp_path, str(visit_copy), "--text", str(visit_copy)) == 2
    assert "is the visit being reported" in capsys.readouterr().err
    assert visit_copy.read_bytes() == WORN_CHARGE_PUMP.read_bytes()


def test_a_visit_in_the_store_can_be_reported_by_id(tmp_path: Path) -> None:
    assert main(["--store", str(tmp_path / "visits.sqlite3"), "import", str(WORN_CHARGE_PUMP)]) == 0
    visit_id = json.loads(WORN_CHARGE_PUMP.read_text(encoding="utf-8"))["id"]
    assert _run(tmp_path, visit_id, "--text", str(tmp_path / "card.txt")) == 0
    assert "SERVICE JOB CARD" in (tmp_path / "card.txt").read_text(encoding="utf-8")
