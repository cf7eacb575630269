"""Stored text never reaches the terminal raw, from any command.

A customer name pasted from a terminal can hold ``ESC [2J`` (clear the screen), ``ESC ]0;…BEL``
(retitle the window), a right-to-left override (the line then reads backwards) and a zero-width
space (two ids look alike). Every command that prints visit, machine or kit text is run on a
store holding such text, and neither standard output nor standard error (captured at the file
descriptor, so a print that bypassed ``sys.stdout`` is caught too) may carry those characters.
"""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import pytest

from fieldkit.cli import main
from fieldkit.plaintext import SafeStream, plain
from fieldkit.resources import samples_dir
from fieldkit.settings import user_profiles_dir

ESCAPES = "\x1b[2J\x1b]0;pwn\x07"
RLO = "\u202e"
ZWSP = "\u200b"
HOSTILE = f"Acme{ESCAPES} Hire{RLO}evil{ZWSP}"
#: What must never appear raw: escape, bell, the override, the zero-width space, a C1 control.
RAW = ("\x1b", "\x07", RLO, ZWSP, "\x9b")
MACHINE = "hostile-rig"


@pytest.fixture
def hostile_store(tmp_path: Path) -> dict[str, str]:
    """A store with one visit whose text fields, machine name and kit item all hold escapes."""
    profiles = user_profiles_dir()
    profiles.mkdir(parents=True)
    toml = (samples_dir() / "profiles" / "tarnhollow-fellborer.toml").read_text(encoding="utf-8")
    toml = toml.replace('id = "tarnhollow-fellborer"', f'id = "{MACHINE}"', 1)
    toml = toml.replace('name = "Fellborer drill rig"', 'name = "Rig\\u001b[31m\\u202eRED\\u200b"', 1)
    (profiles / f"{MACHINE}.toml").write_text(toml, encoding="utf-8")
    data = json.loads((samples_dir() / "visits" / "fellborer-charge-pump-worn.json").read_text("utf-8"))
    data.update(
        id="hostile-visit",
        machine=MACHINE,
        job_number=f"J{ESCAPES}{RLO}1",
        customer=HOSTILE,
        site=HOSTILE,
        technician=HOSTILE,
        notes=HOSTILE,
        complaint=HOSTILE,
        status="open",
        summary="",
    )
    for reading in data["readings"][:2]:
        reading["note"] = HOSTILE
    visit_file = tmp_path / "hostile.json"
    visit_file.write_text(json.dumps(data), encoding="utf-8")
    assert main(["import", str(visit_file)]) == 0
    assert (
        main(
            [
                "kit",
                "add",
                "g1",
                "--kind",
                "pressure_gauge",
                "--span",
                "0..60 bar",
                "--class",
                "1",
                "--serial",
                HOSTILE,
                "--label",
                HOSTILE,
            ]
        )
        == 0
    )
    csv = tmp_path / "bad.csv"
    csv.write_text(f"time,test_point,value,note\n2024-05-14T09:00:00Z,drive.charge,{HOSTILE},x\n", "utf-8")
    good = tmp_path / "good.csv"
    good.write_text("time,test_point,value\n2024-05-14T09:00:00Z,travel.charge,24 bar\n", "utf-8")
    hostile_profile = tmp_path / "hostile.toml"
    shutil.copy(profiles / f"{MACHINE}.toml", hostile_profile)
    return {
        "tmp": str(tmp_path),
        "visit_file": str(visit_file),
        "bad_csv": str(csv),
        "good_csv": str(good),
        "profile": str(hostile_profile),
    }


def commands(f: dict[str, str]) -> list[list[str]]:
    """Every command that prints visit, machine or kit text, and the error paths that echo it."""
    out = str(Path(f["tmp"]) / "out")
    return [
        ["visits"],
        ["visits", "--machine", MACHINE],
        ["diagnose", "hostile-visit"],
        ["diagnose", "hostile-visit", "--json"],
        ["diagnose", f["visit_file"]],
        ["report", "hostile-visit", "--text", "-"],
        ["report", "hostile-visit", "--markdown", "-"],
        ["report", "hostile-visit", "--text", str(Path(f["tmp"]) / "card.txt")],
        ["export", "hostile-visit", "--out", out],
        ["import", f["visit_file"], "--as-new"],
        ["import", f["visit_file"]],  # refused: already there
        ["import", f["bad_csv"], "--visit", "hostile-visit"],  # refused: the cell is echoed
        ["import", f["good_csv"], "--visit", "hostile-visit"],
        ["machine", "list"],
        ["machine", "show", MACHINE],
        ["machine", "check", f["profile"]],
        ["kit", "list"],
        ["reading", "list", "hostile-visit", "--all"],
        ["reading", "delete", "hostile-visit", "nope", "--reason", HOSTILE],
        ["kit", "use", "g1", "--visit", "hostile-visit"],
        ["simulate", MACHINE, "--seed", "3"],
        ["diagnose", f"nope{ESCAPES}{RLO}"],  # unknown id echoed in the error
        ["convert", f"12{ESCAPES} bar", "psi"],
        ["visits", "--status", f"x{ESCAPES}"],  # argparse's own error message
        ["sync", "--url", f"postgresql://h{ESCAPES}{RLO}/db"],
    ]


def test_no_command_sends_stored_escapes_or_bidi_characters_to_the_terminal(
    hostile_store: dict[str, str], capfd: pytest.CaptureFixture[str]
) -> None:
    Path(hostile_store["tmp"], "out").mkdir()
    capfd.readouterr()
    leaked: dict[str, list[str]] = {}
    shown_written_out = 0
    runs = commands(hostile_store)
    for argv in runs:
        try:
            main(argv)
        except SystemExit:  # argparse refusing an option exits after printing its message
            pass
        out, err = capfd.readouterr()
        bad = [repr(ch) for ch in RAW if ch in out or ch in err]
        if bad:
            leaked[" ".join(argv)] = bad
        shown_written_out += "\\x1b[" in out + err
    assert leaked == {}
    # The hostile text was printed (written out), not merely absent: most commands show it.
    assert shown_written_out >= 12, shown_written_out
    assert len(runs) >= 20


def test_the_cleaned_text_still_says_what_was_typed(
    hostile_store: dict[str, str], capfd: pytest.CaptureFixture[str]
) -> None:
    capfd.readouterr()
    assert main(["visits"]) == 0
    out = capfd.readouterr().out
    assert "Acme\\x1b[2J\\x1b]0;pwn\\x07 Hire\\u202eevil\\u200b" in out


def test_json_output_through_the_cleaning_stream_is_still_the_same_json(
    hostile_store: dict[str, str], capfd: pytest.CaptureFixture[str]
) -> None:
    capfd.readouterr()
    assert main(["diagnose", "hostile-visit", "--json"]) == 0
    assert json.loads(capfd.readouterr().out)["visit"] == "hostile-visit"
    # The written-out form of a character above U+001F is a JSON escape of the same character,
    # so a JSON document cleaned for the terminal reads back unchanged.
    data = {"customer": HOSTILE + "\x7f\x85", "ok": "Brackenfield °C"}
    printed = plain(json.dumps(data, ensure_ascii=False))
    assert not any(ch in printed for ch in RAW)
    assert json.loads(printed) == data


def test_the_safe_stream_escapes_what_it_is_given() -> None:
    # The stream itself, against text written out by hand.
    import io

    buffer = io.StringIO()
    stream = SafeStream(buffer)
    stream.write("a\x1b[31mb\u202ec\u200bd\x9be\n")
    assert buffer.getvalue() == "a\\x1b[31mb\\u202ec\\u200bd\\u009be\n"
    assert stream.isatty() is False
    assert plain("tab\there") == "tab here"
