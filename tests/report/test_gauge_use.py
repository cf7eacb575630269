"""What the job card says about each reading's gauge, against what the diagnosis found.

The oracle is the diagnosis's own gauge advice (fieldkit.physics.gauges.gauge_suitability: a
point that can reach the full scale overranges the gauge, EN 837-1; a working pressure past ¾ of
the scale, ⅔ where it fluctuates, EN 837-2 from memory; a reading below a quarter of the span has
a large relative error, common practice). The card says a gauge too small once under Gauges
used and puts a share beside the gauge error; nothing may be lost or invented on the way.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest
from report_builders import SAMPLE_VISITS, load

from fieldkit.report.build import job_card
from fieldkit.report.gauge_use import gauge_uses
from fieldkit.report.model import LOW_ON_SCALE_KEY
from fieldkit.report.text import render_text
from fieldkit.units import METRIC


@pytest.mark.parametrize("path", SAMPLE_VISITS, ids=lambda p: p.stem)
def test_the_card_flags_the_same_gauges_the_diagnosis_does(bench, path: Path) -> None:
    visit, profile = load(bench, path)
    diagnosis = bench.diagnose(visit, profile)
    uses = gauge_uses(visit, profile, METRIC)
    for check in diagnosis.checks:
        use = uses.get(check.reading_id)
        overranged = "overranged" in check.gauge_advice
        low = "below a quarter" in check.gauge_advice
        assert bool(use and use.overrange) == overranged, (check.test_point_label, check.gauge_advice)
        assert bool(use and use.low) == low, (check.test_point_label, check.gauge_advice)


@pytest.mark.parametrize("path", SAMPLE_VISITS, ids=lambda p: p.stem)
def test_every_gauge_concern_reaches_the_card_in_a_brief_form(bench, path: Path) -> None:
    visit, profile = load(bench, path)
    diagnosis = bench.diagnose(visit, profile)
    card = job_card(visit, profile, diagnosis)
    lines = {g.id: g.advice for g in card.story.gauges}
    for check, row in zip(diagnosis.checks, card.readings, strict=True):
        advice = check.gauge_advice
        if "overranged" in advice or "¾" in advice or "3/4" in advice or "2/3" in advice:
            # A gauge too small is said once, under Gauges used, naming the points it served
            # (issue 11 item 4): never on the reading's row.
            assert "Gauge too small" not in row.remark and "837-2" not in row.remark, row.remark
            told = lines.get(row.gauge, "")
            assert told.count("Gauge too small") == 1, (row.gauge, told)
            assert check.test_point_label in " ".join(told.split()), (check.test_point_label, told)
        if "below a quarter" in advice:
            assert row.low_share, row.test_point
            assert "below a quarter" not in row.remark  # said once, in the key, not per reading
        if not advice:
            assert not row.low_share and "Gauge" not in row.remark
    assert card.low_on_scale_key == (LOW_ON_SCALE_KEY if any(r.low_share for r in card.readings) else "")


def test_a_low_share_is_the_printed_gauge_error_over_the_reading(worn) -> None:
    # Worn-charge-pump demo visit, reading 5: case pressure 0.7 bar on the 0–10 bar class 1.6
    # gauge, printed error the EN 837-1 class limit 1.6 % × 10 bar = ±0.16 bar: 0.16 / 0.7 = 23 %
    # [calc]. The share must agree with the two numbers printed beside it.
    card = job_card(*worn)
    row = next(r for r in card.readings if r.low_share and r.reading == "0.7 bar")
    assert row.uncertainty == "±0.16 bar"
    assert row.low_share == "23 %"
    assert row.uncertainty_text == "±0.16 bar (23 %)"


def test_the_plain_text_card_spells_the_share_out_and_keeps_the_key(worn) -> None:
    text = re.sub(r"\s+", " ", render_text(job_card(*worn)))
    assert "low on its scale, its error is 23 % of the reading" in text
    assert re.sub(r"\s+", " ", LOW_ON_SCALE_KEY) in text
