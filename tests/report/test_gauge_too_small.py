"""Issue 11 item 4 and 5: "gauge too small" by EN 837-2 (clause on choosing the scale range,
from memory): a steady working pressure at most ¾ of the span, a fluctuating one at most ⅔. A
pump's outlet, its LS signal and a hydrostatic loop's working side pulse while a function moves
(common practice, fieldkit/model/roles.py); in neutral or stalled the needle settles. On the job
card the advice is said once per gauge, under Gauges used, naming the points it served.

Hand values: a 0–60 bar gauge: ⅔ × 60 = 40 bar, ¾ × 60 = 45 bar. A fluctuating 45 bar is past
40: too small. A steady 45 bar is not past 45: it suits.
"""

from __future__ import annotations

import datetime as dt
import io
from pathlib import Path

import pytest
from pypdf import PdfReader

from fieldkit.diagnosis.engine import diagnose
from fieldkit.model.condition import Condition, FunctionState
from fieldkit.model.gauge import Gauge
from fieldkit.model.profile import MachineProfile
from fieldkit.model.visit import Reading, Visit
from fieldkit.physics.common import Level
from fieldkit.physics.gauges import gauge_suitability
from fieldkit.report.build import job_card
from fieldkit.report.pdf import render_pdf
from fieldkit.report.text import render_text
from fieldkit.tui.step import gauge_fit
from fieldkit.units import METRIC, Q_, parse_value


def _profile(pulsing_loop_b: bool | None = None) -> MachineProfile:
    """Invented: a small travel drive whose charge point is rated 60 bar and loops 55 bar."""
    loop_b: dict[str, object] = {"id": "loop_b", "role": "loop_b_pressure", "max_pressure": "55 bar"}
    if pulsing_loop_b is not None:
        loop_b["pulsing"] = pulsing_loop_b
    return MachineProfile.model_validate(
        {
            "id": "demo-crawler-9",
            "name": "Demo crawler 9 (invented)",
            "rated_speed": "2200 rpm",
            "rated_max_pressure": "350 bar",
            "circuits": [
                {
                    "id": "drive",
                    "name": "Travel drive",
                    "kind": "closed_loop_drive",
                    "parameters": {"charge_relief_setting": "24 bar", "pump_displacement": "71 cc/rev"},
                    "test_points": [
                        {"id": "charge", "role": "charge_pressure", "max_pressure": "50 bar"},
                        {"id": "charge_hi", "role": "charge_pressure", "max_pressure": "60 bar"},
                        {"id": "loop_a", "role": "loop_a_pressure", "max_pressure": "55 bar"},
                        loop_b,
                    ],
                }
            ],
        }
    )


G60 = Gauge(id="G60", label="test gauge", full_scale="60 bar", accuracy_class=1.0)


def _reading(point: str, value: str, function: FunctionState, minute: int) -> Reading:
    parsed = parse_value(value)
    return Reading(
        test_point=f"drive.{point}",
        value=parsed.quantity,
        entered=parsed.text,
        condition=Condition(function=function, speed="2200 rpm", oil_temperature="55 °C"),
        gauge="G60",
        taken_at=dt.datetime(2025, 6, 3, 9, minute, tzinfo=dt.UTC),
    )


def _card(profile: MachineProfile, readings: list[Reading]):
    visit = Visit(
        job_number="HB-0009",
        machine=profile.id,
        date=dt.date(2025, 6, 3),
        gauges=[G60],
        readings=readings,
    )
    return job_card(visit, profile, diagnose(visit, profile), METRIC)


def _pdf_text(card) -> str:
    pdf = PdfReader(io.BytesIO(render_pdf(card)))
    return " ".join(" ".join(page.extract_text() for page in pdf.pages).split())


def test_en837_2_a_fluctuating_45_bar_is_too_much_for_a_60_bar_gauge_a_steady_one_is_not() -> None:
    fluctuating = gauge_suitability(Q_(60, "bar"), Q_(45, "bar"), fluctuating=True)
    steady = gauge_suitability(Q_(60, "bar"), Q_(45, "bar"), fluctuating=False)
    assert fluctuating.level is Level.WARNING and "2/3" in fluctuating.message
    assert "fluctuating" in fluctuating.message and "40 bar" in fluctuating.message
    assert steady.level is Level.OK


def test_which_points_fluctuate_follows_the_role_the_state_and_the_profile() -> None:
    profile = _profile(pulsing_loop_b=False)
    _c, loop_a = profile.test_point("drive.loop_a")
    _c, loop_b = profile.test_point("drive.loop_b")
    _c, charge = profile.test_point("drive.charge")
    assert loop_a.fluctuates(FunctionState.UNDER_LOAD) and loop_a.fluctuates(FunctionState.FULL_STROKE)
    assert not loop_a.fluctuates(FunctionState.NEUTRAL) and not loop_a.fluctuates(FunctionState.STALLED)
    assert not charge.fluctuates(FunctionState.UNDER_LOAD)
    assert not loop_b.fluctuates(FunctionState.UNDER_LOAD)  # the profile says this one is steady


def test_the_step_panel_applies_two_thirds_at_a_pulsing_point_and_names_the_rule() -> None:
    _c, loop_a = _profile().test_point("drive.loop_a")
    # no expected range: the step judges the gauge against the point's rating, 55 bar; past ⅔
    # (40 bar) and ¾ (45 bar) alike; the advice names the fluctuating rule with the function moving
    moving = gauge_fit(loop_a, G60, FunctionState.UNDER_LOAD, METRIC)
    assert moving.level is Level.WARNING and "2/3" in moving.message and "fluctuating" in moving.message
    settled = gauge_fit(loop_a, G60, FunctionState.NEUTRAL, METRIC)
    assert "3/4" in settled.message and "steady" in settled.message


def test_a_gauge_too_small_at_three_points_is_said_once_on_the_card() -> None:
    card = _card(
        _profile(),
        [
            _reading("loop_a", "45 bar", FunctionState.UNDER_LOAD, 1),  # fluctuating, 45 > 40
            _reading("loop_b", "44 bar", FunctionState.FULL_STROKE, 2),  # fluctuating, 44 > 40
            _reading("charge_hi", "24 bar", FunctionState.NEUTRAL, 3),  # rated 60 bar: overranged
        ],
    )
    text = render_text(card)
    flat = " ".join(text.split())
    assert flat.count("Gauge too small") == 1
    assert _pdf_text(card).count("Gauge too small") == 1
    gauges = flat.split("GAUGES USED")[1]
    assert "Gauge too small" in gauges and "Gauge too small" not in flat.split("GAUGES USED")[0]
    for said in ("loop A pressure read 45 bar", "loop B pressure read 44 bar", "can reach 60 bar", "⅔"):
        assert said in gauges, said
    assert "40.0 bar" in gauges  # ⅔ of 60 bar, printed to the gauge's resolution (±0.6 bar: 40.0)
    # per point, the smallest standard gauge (1-1.6-2.5-4-6 series): loop A reads 45 bar
    # fluctuating, rated 55 bar: 0–60 bar fails ⅔ (40 < 45), 0–100 bar holds both (66.7 ≥ 45, 55 < 100)
    assert (
        "loop A pressure read 45 bar (fluctuating, a function moving), above ⅔ of its scale (40.0 bar) "
        in gauges
    )
    assert "(a 0–100 bar gauge suits it)" in gauges


@pytest.mark.parametrize(
    ("point", "function", "too_small"),
    [
        ("loop_a", FunctionState.UNDER_LOAD, True),  # fluctuating 45 bar > 40 bar
        ("charge", FunctionState.UNDER_LOAD, False),  # steady 45 bar ≤ 45 bar
        ("loop_a", FunctionState.NEUTRAL, False),  # the loop settles in neutral: steady
    ],
)
def test_45_bar_on_a_60_bar_gauge_on_the_card(point: str, function: FunctionState, too_small: bool) -> None:
    card = _card(_profile(), [_reading(point, "45 bar", function, 1)])
    flat = " ".join(render_text(card).split())
    assert ("Gauge too small" in flat) is too_small
    assert ("Gauge too small" in _pdf_text(card)) is too_small
    if too_small:
        assert "EN 837-2 (from memory) keeps a fluctuating pressure within ⅔ of the span" in flat


def test_the_card_leaves_a_filter_drop_to_its_differential_gauge(tmp_path: Path) -> None:
    # A pressure drop is read on a differential gauge: the line's 50 bar bears on its static
    # rating, not its 0–4 bar scale, so no "use a 0–60 bar gauge" (common practice).
    profile = MachineProfile.model_validate(
        {
            **_profile().model_dump(mode="json", exclude_none=True),
            "circuits": [
                {
                    "id": "drive",
                    "name": "Travel drive",
                    "kind": "closed_loop_drive",
                    "parameters": {"charge_relief_setting": "24 bar", "pump_displacement": "71 cc/rev"},
                    "test_points": [
                        {"id": "filter", "role": "filter_pressure_drop", "max_pressure": "50 bar"}
                    ],
                }
            ],
        }
    )
    d4 = Gauge(id="G60", label="differential 0-4 bar", full_scale="4 bar", accuracy_class=1.6)
    visit = Visit(
        job_number="HB-0010",
        machine=profile.id,
        date=dt.date(2025, 6, 3),
        gauges=[d4],
        readings=[_reading("filter", "0.4 bar", FunctionState.FULL_STROKE, 1)],
    )
    flat = " ".join(render_text(job_card(visit, profile, diagnose(visit, profile), METRIC)).split())
    assert "Gauge too small" not in flat and "0–60 bar" not in flat
