"""Writing job cards to disk: names from typed job numbers stay in the folder, writes are all or nothing."""

from __future__ import annotations

import os
from datetime import UTC, datetime
from pathlib import Path

import pytest
from report_builders import with_text

from fieldkit.report import jobcard
from fieldkit.report.jobcard import parse_fixed_date, write_job_card, write_report
from fieldkit.report.model import ReportError


def _files(folder: Path) -> list[str]:
    """Every file in the folder, hidden temporaries included (the test store lives in a subfolder)."""
    return sorted(p.name for p in folder.iterdir() if p.is_file())


@pytest.mark.parametrize(
    "job", ["../../etc/x", "..\\..\\boot", "/abs/path", "CON", "a\x00b", "J/2024/17", "  ..  "]
)
def test_a_job_number_never_takes_the_file_out_of_the_folder(worn, tmp_path: Path, job: str) -> None:
    visit, profile, diagnosis = worn
    folder = tmp_path / "out"
    folder.mkdir()
    path = write_job_card(with_text(visit, job_number=job), profile, diagnosis, folder, "text")
    assert path.parent == folder
    assert path.is_file()
    assert _files(folder) == [path.name]
    assert not path.name.startswith(".")
    assert not (tmp_path / "etc").exists()


@pytest.mark.parametrize(
    ("fmt", "suffix", "magic"),
    [
        ("pdf", ".pdf", b"%PDF-"),
        ("text", ".txt", b"SERVICE JOB CARD"),
        ("markdown", ".md", b"# Service job card"),
    ],
)
def test_each_format_gets_its_suffix_and_content(
    worn, tmp_path: Path, fmt: str, suffix: str, magic: bytes
) -> None:
    visit, profile, diagnosis = worn
    path = write_job_card(visit, profile, diagnosis, tmp_path, fmt, fixed_date="2025-05-14")
    assert path.suffix == suffix
    assert visit.job_number in path.name
    assert path.read_bytes().startswith(magic)


def test_a_writer_that_fails_leaves_no_file_at_all(
    worn, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    visit, profile, diagnosis = worn

    def broken(*_args: object, **_kwargs: object) -> str:
        raise RuntimeError("writer failed half way")

    monkeypatch.setattr("fieldkit.report.text.render_text", broken)
    with pytest.raises(RuntimeError, match="half way"):
        write_job_card(visit, profile, diagnosis, tmp_path, "text")
    assert _files(tmp_path) == []


def test_a_disk_error_while_writing_keeps_the_old_card_and_leaves_no_temporary(
    worn, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    visit, profile, diagnosis = worn
    path = write_job_card(visit, profile, diagnosis, tmp_path, "markdown")
    before = path.read_bytes()

    def full_disk(_fd: int) -> None:
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "fsync", full_disk)
    with pytest.raises(ReportError, match="No space left"):
        write_job_card(with_text(visit, notes="changed"), profile, diagnosis, tmp_path, "markdown")
    assert path.read_bytes() == before
    assert _files(tmp_path) == [path.name]


def test_the_rename_is_the_last_step(worn, tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    visit, profile, diagnosis = worn
    seen: list[tuple[str, str]] = []
    real = os.replace

    def spy(src: str, dst: str) -> None:
        assert Path(src).parent == tmp_path and Path(src).read_bytes().startswith(b"%PDF-")
        seen.append((Path(src).name, Path(dst).name))
        real(src, dst)

    monkeypatch.setattr(jobcard.os, "replace", spy)
    path = write_job_card(visit, profile, diagnosis, tmp_path, "pdf")
    assert len(seen) == 1 and seen[0][1] == path.name and seen[0][0].startswith(".fieldkit-report-")


def test_write_report_uses_the_exact_path_and_reads_the_format_from_the_suffix(worn, tmp_path: Path) -> None:
    visit, profile, diagnosis = worn
    path = write_report(tmp_path / "card.md", visit, profile, diagnosis)
    assert path == tmp_path / "card.md"
    assert path.read_text(encoding="utf-8").startswith("# Service job card")
    with pytest.raises(ReportError, match="suffix"):
        write_report(tmp_path / "card.doc", visit, profile, diagnosis)
    with pytest.raises(ReportError, match="no such folder"):
        write_report(tmp_path / "missing" / "card.txt", visit, profile, diagnosis)
    with pytest.raises(ReportError, match="is a folder"):
        write_report(tmp_path, visit, profile, diagnosis, "text")


def test_an_unknown_format_is_refused_before_anything_is_written(worn, tmp_path: Path) -> None:
    visit, profile, diagnosis = worn
    with pytest.raises(ReportError, match="unknown job card format 'docx'"):
        write_job_card(visit, profile, diagnosis, tmp_path, "docx")
    assert _files(tmp_path) == []


def test_a_missing_folder_is_reported_not_created(worn, tmp_path: Path) -> None:
    visit, profile, diagnosis = worn
    with pytest.raises(ReportError, match="no such folder"):
        write_job_card(visit, profile, diagnosis, tmp_path / "nope", "text")
    assert not (tmp_path / "nope").exists()


def test_fixed_dates_are_read_as_iso_8601_in_utc() -> None:
    assert parse_fixed_date("2025-05-14") == datetime(2025, 5, 14, tzinfo=UTC)
    assert parse_fixed_date("2025-05-14T08:30:00Z") == datetime(2025, 5, 14, 8, 30, tzinfo=UTC)
    assert parse_fixed_date(None) is None
    with pytest.raises(ReportError, match="ISO 8601"):
        parse_fixed_date("14/05/2025")
