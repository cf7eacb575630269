"""A kit item's span typed the way its dial is marked, and a wrong span named by its option.

The instrument ids are invented test data."""

from __future__ import annotations

import math
from pathlib import Path

import pytest

from fieldkit.cli import main
from fieldkit.model.kit import parse_span
from fieldkit.units import Q_, unit


def test_a_vacuum_dial_written_from_its_far_end_takes_the_unit_from_there() -> None:
    # common practice: a vacuum gauge's dial reads "30 inHg vac" at one end and "0" at the other;
    # written with the unit once, at the vacuum end, it is the same gauge as -30..0 inHg.
    start, top = parse_span("30 inHg vac..0")
    assert start == Q_(-30.0, unit("inHg"))
    assert top == Q_(0.0, unit("inHg"))
    assert not math.copysign(1.0, top.magnitude) < 0, "the dial's zero end is 0, never -0"


def test_a_compound_span_with_the_unit_only_at_the_low_end_is_read_as_written() -> None:
    # common practice: a compound gauge marked -1 to 1.5 bar.
    assert parse_span("-1 bar..1.5") == (Q_(-1.0, unit("bar")), Q_(1.5, unit("bar")))


def test_a_span_with_no_unit_at_either_end_is_still_refused() -> None:
    with pytest.raises(ValueError, match="unit is missing"):
        parse_span("30..0")


def test_kit_add_names_the_span_option_and_the_text_when_it_cannot_read_it(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    store = str(tmp_path / "kit.sqlite3")
    argv = ["--store", store, "kit", "add", "V9", "--kind", "pressure_gauge", "--class", "1.6"]
    assert main([*argv, "--span", "30..0"]) == 2
    err = capsys.readouterr().err
    assert "--span '30..0'" in err and "unit is missing" in err and "Traceback" not in err
    assert main(["--store", store, "kit", "list", "--all"]) == 0
    assert "V9" not in capsys.readouterr().out, "a refused item is not added"
    assert main([*argv, "--span", "30 inHg vac..0"]) == 0
    out = capsys.readouterr().out
    assert "30 inHg vac to 0" in out, out
