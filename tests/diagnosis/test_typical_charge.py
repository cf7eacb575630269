"""Charge pressure on a closed loop whose maker's figures are unknown, against one whose are known.

Trade references give a charge relief of about 200-300 psi, 13.8-20.7 bar (Machinery Lubrication,
2016, quoted in the field notes), and 20-30 bar on many modern pumps (from memory). A single typical
setting (24 bar) called a healthy older machine low; without a figure the range must span the trade's
spread, and once the maker's figure is entered it governs.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

from diagnosis_helpers import VisitBuilder, finding, knowledge

from fieldkit.diagnosis.engine import diagnose
from fieldkit.diagnosis.results import Verdict
from fieldkit.model.condition import FunctionState as S
from fieldkit.model.loading import load_templates, profile_from_raw
from fieldkit.model.profile import MachineProfile

TEMPLATES = load_templates(Path(__file__).resolve().parents[2] / "rules" / "templates")


def loop_machine(parameters: dict[str, str]) -> MachineProfile:
    """A fictional machine with one closed-loop drive and only the figures given."""
    circuit: dict[str, Any] = {
        "id": "drive",
        "name": "travel loop",
        "template": "closed_loop_drive",
        "parameters": parameters,
    }
    raw = {"id": "older-crawler", "name": "older crawler (test)", "rated_speed": "2200 rpm"}
    return profile_from_raw({**raw, "rated_max_pressure": "400 bar", "circuits": [circuit]}, TEMPLATES, "<t>")


def verdicts_for_16_bar_net(profile: MachineProfile) -> tuple[Verdict, Verdict]:
    # 17 bar on the charge gauge, 1 bar in the case, both in neutral: 17 − 1 = 16 bar net [hand].
    b = VisitBuilder(profile)
    b.add("drive.charge", 17.0, S.NEUTRAL)
    b.add("drive.case", 1.0, S.NEUTRAL)
    d = diagnose(b.build(), profile, knowledge())
    return finding(d, "charge-in-neutral", "drive").verdict, finding(
        d, "net-charge-above-case", "drive"
    ).verdict


def test_a_healthy_older_machine_with_16_bar_net_charge_is_not_called_low_without_figures() -> None:
    # 17 bar gauge sits in the trade's spread of charge relief settings (13.8 to 30 bar, field notes
    # and from memory), and 16 bar net is above what any usual charge relief gives less its tolerance.
    charge, net = verdicts_for_16_bar_net(loop_machine({}))
    assert charge is not Verdict.LOW
    assert net is not Verdict.LOW


def test_with_the_makers_24_bar_charge_relief_the_same_16_bar_is_low() -> None:
    # The maker says 24 bar: a sound relief reads 24 ± 2 bar (template, common practice), so 17 bar
    # on the gauge (16 bar net) is 5 bar under the bottom of 22 bar [hand].
    charge, _net = verdicts_for_16_bar_net(loop_machine({"charge_relief_setting": "24 bar"}))
    assert charge is Verdict.LOW


def test_the_makers_least_net_charge_governs_the_net_charge_verdict() -> None:
    # The maker asks at least 18 bar above case: 16 bar net is 2 bar short [hand].
    _charge, net = verdicts_for_16_bar_net(loop_machine({"min_net_charge": "18 bar"}))
    assert net is Verdict.LOW


def test_without_figures_a_charge_far_under_any_usual_setting_is_still_low() -> None:
    # 8 bar in neutral is under the lowest usual charge relief (200 psi = 13.8 bar) less 2 bar.
    profile = loop_machine({})
    b = VisitBuilder(profile)
    b.add("drive.charge", 8.0, S.NEUTRAL)
    d = diagnose(b.build(), profile, knowledge())
    assert finding(d, "charge-in-neutral", "drive").verdict is Verdict.LOW
