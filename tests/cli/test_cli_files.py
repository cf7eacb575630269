"""The command line's files and messages: umask, all-or-nothing job cards, standard output,
paths too long, dates out of range, and a readings CSV imported twice."""

from __future__ import annotations

import json
import os
import stat
from collections.abc import Iterator
from pathlib import Path

import pytest

from fieldkit import durable
from fieldkit.cli import main
from fieldkit.model.visit import Visit
from fieldkit.resources import samples_dir
from fieldkit.store import open_store

SAMPLE = samples_dir() / "visits" / "demo-open-visit.json"


def _open_visit_id() -> str:
    return json.loads(SAMPLE.read_text(encoding="utf-8"))["id"]


@pytest.fixture
def stored() -> str:
    """The bundled open demo visit, imported into the test's own store."""
    with open_store(os.environ["FIELDKIT_STORE"]) as store:
        store.import_visit(Visit.model_validate_json(SAMPLE.read_text(encoding="utf-8")))
    return _open_visit_id()


@pytest.fixture
def umask(request: pytest.FixtureRequest) -> Iterator[int]:
    old = os.umask(request.param)
    try:
        yield request.param
    finally:
        os.umask(old)


def _mode(path: Path) -> int:
    return stat.S_IMODE(path.stat().st_mode)


@pytest.mark.parametrize("umask", [0o027, 0o002], indirect=True, ids=["027", "002"])
def test_new_files_follow_the_users_umask(
    tmp_path: Path, umask: int, capsys: pytest.CaptureFixture[str]
) -> None:
    # What any tool's new file gets: 0o666 without the umask's bits (POSIX open(2), O_CREAT).
    expected = 0o666 & ~umask
    store = tmp_path / "new" / "visits.sqlite3"
    assert main(["--store", str(store), "import", str(SAMPLE)]) == 0
    out = tmp_path / "out"
    out.mkdir()
    vid = _open_visit_id()
    assert (
        main(
            ["--store", str(store), "report", vid, "--text", str(out / "c.txt"), "--pdf", str(out / "c.pdf")]
        )
        == 0
    )
    assert main(["--store", str(store), "export", vid, "--out", str(out)]) == 0
    exported = next(out.glob("*.json"))
    from fieldkit.crash_log import write_crash_log

    log = write_crash_log(RuntimeError("test"), "testing the umask")
    modes = {p.name: _mode(p) for p in (store, out / "c.txt", out / "c.pdf", exported, log)}
    assert modes == dict.fromkeys(modes, expected)
    assert durable.current_umask() == umask


def test_a_report_in_three_formats_is_written_all_or_nothing(
    stored: str, tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    out = tmp_path / "cards"
    out.mkdir()
    (out / "card.txt").write_text("the old text card\n", encoding="utf-8")
    real_replace = os.replace
    calls: list[str] = []

    def replace_failing_at_the_third(src: object, dst: object) -> None:
        calls.append(str(dst))
        if len(calls) == 3:  # the last of the three cards cannot be put in place
            raise OSError(28, "No space left on device", str(dst))
        real_replace(src, dst)  # type: ignore[arg-type]

    monkeypatch.setattr(os, "replace", replace_failing_at_the_third)
    code = main(
        [
            "report",
            stored,
            "--text",
            str(out / "card.txt"),
            "--markdown",
            str(out / "card.md"),
            "--pdf",
            str(out / "card.pdf"),
        ]
    )
    monkeypatch.setattr(os, "replace", real_replace)
    err = capsys.readouterr().err
    assert code == 2
    assert "no job card was written" in err and "No space left on device" in err
    # The old text card is back as it was; no new card and no temporary file is left behind.
    assert sorted(p.name for p in out.iterdir()) == ["card.txt"]
    assert (out / "card.txt").read_text(encoding="utf-8") == "the old text card\n"


def test_a_report_to_standard_output_with_a_dash(
    stored: str, capsysbinary: pytest.CaptureFixture[bytes]
) -> None:
    assert main(["report", stored, "--text", "-"]) == 0
    out, err = capsysbinary.readouterr()
    assert out.startswith(b"SERVICE JOB CARD") and err == b""
    assert main(["report", stored, "--pdf", "-"]) == 0
    assert capsysbinary.readouterr().out.startswith(b"%PDF-")


def test_a_report_to_standard_output_and_a_file_keeps_the_messages_off_standard_output(
    stored: str, tmp_path: Path, capsysbinary: pytest.CaptureFixture[bytes]
) -> None:
    assert main(["report", stored, "--markdown", "-", "--text", str(tmp_path / "c.txt")]) == 0
    out, err = capsysbinary.readouterr()
    assert out.startswith(b"# Service job card") and b"wrote the text job card" in err
    assert (tmp_path / "c.txt").is_file()


@pytest.mark.parametrize(
    "argv",
    [
        ["report", "{vid}", "--text", "{long}.txt"],
        ["export", "{vid}", "--out", "{long}"],
        ["--store", "{long}", "visits"],
        ["import", "{long}.json"],
        ["import", "{long}.csv", "--visit", "{vid}"],
    ],
    ids=["report", "export", "store", "import-json", "import-csv"],
)
def test_a_path_too_long_gets_one_line_and_no_traceback(
    stored: str, tmp_path: Path, argv: list[str], capsys: pytest.CaptureFixture[str]
) -> None:
    long = str(tmp_path / ("a" * 300))  # one name of 300 bytes: over the 255 of ext4, xfs, NTFS…
    code = main([a.format(vid=stored, long=long) for a in argv])
    err = capsys.readouterr().err
    assert code != 0
    assert "Traceback" not in err and len(err.strip().splitlines()) == 1, err
    assert "too long" in err.lower()


@pytest.mark.parametrize(
    "moment", ["0001-01-01T00:00:00+05:00", "9999-12-31T23:00:00-05:00", "1899-12-31T12:00:00Z"]
)
def test_a_csv_with_a_date_out_of_range_is_refused_with_its_line(
    stored: str, tmp_path: Path, moment: str, capsys: pytest.CaptureFixture[str]
) -> None:
    csv = tmp_path / "logger.csv"
    csv.write_text(f"time,test_point,value\n{moment},travel.charge,24 bar\n", encoding="utf-8")
    code = main(["import", str(csv), "--visit", stored])
    err = capsys.readouterr().err
    assert code == 2 and "Traceback" not in err
    assert "line 2" in err and "outside the dates fieldkit works with (1900-01-01 to 2199-12-31)" in err


def test_a_visit_file_with_a_date_out_of_range_is_refused(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    data = json.loads(SAMPLE.read_text(encoding="utf-8"))
    data["readings"][0]["taken_at"] = "9999-12-31T23:30:00-05:00"
    bad = tmp_path / "bad.json"
    bad.write_text(json.dumps(data), encoding="utf-8")
    code = main(["import", str(bad)])
    err = capsys.readouterr().err
    assert code == 2 and "Traceback" not in err and "outside the dates fieldkit works with" in err


def test_a_fixed_date_out_of_range_is_refused(
    stored: str, tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    code = main(
        ["report", stored, "--text", str(tmp_path / "c.txt"), "--fixed-date", "0001-01-01T00:00:00+05:00"]
    )
    assert code == 2 and "outside the dates" in capsys.readouterr().err
    assert not (tmp_path / "c.txt").exists()


def test_an_unexpected_error_is_one_sentence_with_a_log(
    stored: str, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    from fieldkit import session

    def broken(*_a: object, **_k: object) -> None:
        raise ZeroDivisionError("a bug")

    monkeypatch.setattr(session.Workbench, "diagnose", broken)
    code = main(["diagnose", stored])
    err = capsys.readouterr().err
    assert code == 1 and "Traceback" not in err and "ZeroDivisionError" in err
    log = Path(err.rsplit("Details were written to ", 1)[1].strip())
    assert "a bug" in log.read_text(encoding="utf-8")


def test_the_same_readings_csv_twice_is_refused_unless_asked_again(
    stored: str, tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    csv = tmp_path / "logger.csv"
    csv.write_text(
        "time,test_point,value\n2025-05-14T09:00:00Z,travel.charge,24 bar\n"
        "2025-05-14T09:01:00Z,travel.charge,24.5 bar\n",
        encoding="utf-8",
    )
    assert main(["import", str(csv), "--visit", stored]) == 0
    assert "imported 2 readings" in capsys.readouterr().out
    assert main(["import", str(csv), "--visit", stored]) == 2
    err = capsys.readouterr().err
    assert "all of its readings are already in visit" in err and "--again" in err
    # One new row and one old: still refused, saying how many repeat.
    csv.write_text(
        csv.read_text(encoding="utf-8") + "2025-05-14T09:02:00Z,travel.charge,25 bar\n", encoding="utf-8"
    )
    assert main(["import", str(csv), "--visit", stored]) == 2
    assert "2 of 3 of its readings" in capsys.readouterr().err
    with open_store(os.environ["FIELDKIT_STORE"]) as store:
        assert (
            sum(
                r.test_point == "travel.charge" and r.taken_at.hour == 9
                for r in store.get_visit(stored).readings
            )
            == 2
        )
    assert main(["import", str(csv), "--visit", stored, "--again"]) == 0
    assert "imported 3 readings" in capsys.readouterr().out
    with open_store(os.environ["FIELDKIT_STORE"]) as store:
        assert (
            sum(
                r.test_point == "travel.charge" and r.taken_at.hour == 9
                for r in store.get_visit(stored).readings
            )
            == 5
        )
