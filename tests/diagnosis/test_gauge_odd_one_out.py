"""A gauge reading wrong shows as one pressure reading that disagrees with its neighbours (issue 13,
"Calibrate": top-3 on `fieldkit evaluate`). The catalogue's gauge_error spoils one reading of the
visit, whichever it is, so every pressure rule that does not name it gives it a small extra chance
of reading low and of reading high (rules/faults.toml: spoils_one_pressure_reading)."""

from __future__ import annotations

from pathlib import Path

import pytest
from diagnosis_helpers import VisitBuilder, knowledge, library

from fieldkit.diagnosis.catalogue import load_faults
from fieldkit.diagnosis.engine import diagnose
from fieldkit.diagnosis.findings import spoiled
from fieldkit.errors import DataFileError
from fieldkit.model.condition import FunctionState


def test_a_spoilt_reading_adds_its_share_to_low_and_to_high() -> None:
    # Hand calculation: a healthy table 0.03 / 0.94 / 0.03 with 0.04 each way becomes
    # 0.07 / 0.86 / 0.07.
    assert spoiled((0.03, 0.94, 0.03), 0.04) == pytest.approx((0.07, 0.86, 0.07))
    # A table with little room left keeps a hundredth in range: 0.48 / 0.04 / 0.48 can give
    # (0.04 - 0.01) / 2 = 0.015 each way: 0.495 / 0.01 / 0.495.
    assert spoiled((0.48, 0.04, 0.48), 0.04) == pytest.approx((0.495, 0.01, 0.495))


def test_one_charge_reading_that_disagrees_with_the_rest_puts_the_gauge_among_the_first_three() -> None:
    # Fellborer (invented demo machine): charge 26.5 bar in neutral (relief 27), 22.5 bar in full
    # stroke, 26.6 bar at low idle, brake release 22 bar, case 1 bar: all as they should be. One
    # reading, charge with the drive stalled, says 30.5 bar, far above the 20.5-24.5 bar the
    # flushing relief should hold. A technician suspects the gauge before the machine and reads
    # it again (common practice: when one reading disagrees with every other, suspect the gauge).
    profile = library().get("tarnhollow-fellborer")
    b = VisitBuilder(profile)
    b.add("travel.charge", 26.5, FunctionState.NEUTRAL)
    b.add("travel.charge", 22.5, FunctionState.FULL_STROKE)
    b.add("travel.charge", 30.5, FunctionState.STALLED)
    b.add("brake.release", 22.0, FunctionState.FULL_STROKE)
    b.add("travel.charge_idle", 26.6, FunctionState.NEUTRAL)
    b.add("travel.case", 1.0, FunctionState.NEUTRAL)
    d = diagnose(b.build(), profile, knowledge())
    assert "gauge_error" in [f.key for f in d.faults[:3]]


def test_a_spoiling_share_without_its_source_is_refused_with_its_line(tmp_path: Path) -> None:
    text = (Path(__file__).resolve().parents[2] / "rules" / "faults.toml").read_text(encoding="utf-8")
    start = text.index("spoils_source = ")
    bad = text[:start] + text[text.index("\n", start) + 1 :]
    path = tmp_path / "faults.toml"
    path.write_text(bad, encoding="utf-8")
    with pytest.raises(DataFileError) as err:
        load_faults(path)
    assert "spoils_source" in str(err.value)
