"""Item 3 of issue 10: a stored reading the engine cannot use never locks the visit.

Four bad readings are written into a real store as an earlier version might have: NaN, a flow
at a pressure point, a test point the profile no longer has, and a unit nobody can read. The
visit still loads, `diagnose` and every job card format name each skipped reading, and each can
be corrected or deleted from the command line with its reason kept.
"""

from __future__ import annotations

import io
import os
from pathlib import Path

import pytest
from bad_readings import BAD, VISIT, store_with_bad_readings
from pypdf import PdfReader

from fieldkit.cli import main
from fieldkit.store import open_store


@pytest.fixture
def bad_store() -> Path:
    return store_with_bad_readings()


def _run(capsys: pytest.CaptureFixture[str], *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_the_visit_loads_with_the_unreadable_values_marked(bad_store: Path) -> None:
    with open_store(bad_store) as store:
        visit = store.get_visit(VISIT)
    assert {r.id for r in visit.unreadable_readings()} == {"old-nan", "old-unit"}
    standing = {r.id for r in visit.current_readings()}
    assert {"old-kind", "old-gone"} <= standing and not {"old-nan", "old-unit"} & standing
    nan = next(r for r in visit.readings if r.id == "old-nan")
    assert nan.entered == "nan bar" and "cannot be read" in nan.unreadable


def test_diagnose_works_and_names_every_skipped_reading(
    bad_store: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    code, out, err = _run(capsys, "diagnose", VISIT)
    assert code == 0, err
    flat = " ".join(out.split())
    for rid in BAD:
        assert f"reading {rid}" in flat and "skipped" in flat, rid


@pytest.mark.parametrize("fmt", ["text", "markdown", "pdf"])
def test_every_job_card_format_names_the_skipped_readings(
    bad_store: Path, tmp_path: Path, fmt: str, capsys: pytest.CaptureFixture[str]
) -> None:
    card = tmp_path / f"card.{fmt}"
    code, _out, err = _run(capsys, "report", VISIT, f"--{fmt}", str(card))
    assert code == 0, err
    if fmt == "pdf":
        text = "\n".join(page.extract_text() for page in PdfReader(io.BytesIO(card.read_bytes())).pages)
    else:
        text = card.read_text(encoding="utf-8")
    flat = " ".join(text.replace("\\", "").split())
    for rid in BAD:
        assert f"reading {rid}" in flat, (rid, fmt)


def test_reading_list_shows_the_skipped_ones(bad_store: Path, capsys: pytest.CaptureFixture[str]) -> None:
    code, out, _err = _run(capsys, "reading", "list", VISIT)
    assert code == 0
    lines = {
        line.split()[0]: line for line in out.splitlines() if line and not line.startswith(("id ", "note:"))
    }
    for rid in BAD:
        assert "SKIPPED" in lines[rid], lines[rid]
    assert "stands" in lines["r04"]  # a good reading of the demo visit


def test_an_unreadable_reading_is_corrected_with_its_reason_and_history(
    bad_store: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    code, out, err = _run(
        capsys, "reading", "correct", VISIT, "old-nan", "24.5 bar", "--reason", "logger glitch"
    )
    assert code == 0, err
    assert "corrected to '24.5 bar'" in out
    with open_store(bad_store) as store:
        visit = store.get_visit(VISIT)
        history = store.reading_history(VISIT, "travel.charge")
    new = next(r for r in visit.current_readings() if r.replaces == "old-nan")
    assert new.reason == "logger glitch" and new.value.magnitude == 24.5
    assert "old-nan" in {r.id for r in history}  # the old one stays in the trail
    assert "old-nan" not in {r.id for r in visit.unreadable_readings()}
    code, out, _err = _run(capsys, "diagnose", VISIT)
    assert code == 0 and "reading old-nan" not in " ".join(out.split())


@pytest.mark.parametrize("rid", list(BAD))
def test_every_bad_reading_can_be_deleted_with_its_reason_kept(
    bad_store: Path, rid: str, capsys: pytest.CaptureFixture[str]
) -> None:
    code, out, err = _run(capsys, "reading", "delete", VISIT, rid, "--reason", "stored by the old version")
    assert code == 0, err
    with open_store(bad_store) as store:
        visit = store.get_visit(VISIT)
    gone = next(r for r in visit.readings if r.id == rid)
    assert gone.deleted_at is not None
    assert f"Reading {rid} at {BAD[rid][0]}" in visit.notes and "stored by the old version" in visit.notes
    code, out, _err = _run(capsys, "diagnose", VISIT)
    assert code == 0 and f"reading {rid}" not in " ".join(out.split())


def test_a_reading_at_a_point_the_machine_no_longer_has_is_deleted_not_corrected(
    bad_store: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    code, _out, err = _run(capsys, "reading", "correct", VISIT, "old-gone", "24 bar", "--reason", "x")
    assert code == 2 and "no longer has" in err and "fieldkit reading delete" in err


def test_a_correction_or_deletion_needs_a_reason(bad_store: Path, capsys: pytest.CaptureFixture[str]) -> None:
    code, _out, err = _run(capsys, "reading", "delete", VISIT, "old-nan", "--reason", "  ")
    assert code == 2 and "--reason" in err
    with pytest.raises(SystemExit):
        main(["reading", "delete", VISIT, "old-nan"])
    assert "--reason" in capsys.readouterr().err
    with open_store(os.environ["FIELDKIT_STORE"]) as store:
        assert next(r for r in store.get_visit(VISIT).readings if r.id == "old-nan").deleted_at is None


def test_an_export_leaves_the_unreadable_values_out_and_imports_elsewhere(
    bad_store: Path, tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    assert _run(capsys, "reading", "correct", VISIT, "old-nan", "24.5 bar", "--reason", "glitch")[0] == 0
    code, _out, err = _run(capsys, "export", VISIT, "--out", str(tmp_path))
    assert code == 0 and "left out 2 reading(s)" in err and "old-nan 'nan bar'" in err
    (exported,) = tmp_path.glob("*.json")
    other = tmp_path / "other.sqlite3"
    code, _out, err = _run(capsys, "--store", str(other), "import", str(exported))
    assert code == 0, err
    with open_store(other) as store:
        visit = store.get_visit(VISIT)
    ids = {r.id for r in visit.readings}
    assert not {"old-nan", "old-unit"} & ids and {"old-kind", "old-gone"} <= ids
    fixed = next(r for r in visit.readings if r.reason == "glitch")
    assert fixed.replaces is None and fixed.value.magnitude == 24.5  # the correction stands alone
