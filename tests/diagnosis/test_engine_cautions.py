"""Safety cautions: the general one (defer to the machine's procedures) is always shown first; a
reading with the function stalled raises 'keep stall tests short'; a reading at a high-pressure
point raises 'fluid injection'; a finding raises the cautions its rule lists.

Sources are in rules/cautions.toml (OSHA 29 CFR 1910.147, UK HSE RR976, ISO 4413 ...); these tests
check only that the right caution reaches the technician, and why.
"""

from __future__ import annotations

import tempfile
from functools import lru_cache
from pathlib import Path

import pytest
from diagnosis_helpers import (
    RULES,
    VisitBuilder,
    diagnose_sample,
    knowledge,
    library,
    sample_visit_paths,
    scene_profiles,
)

from fieldkit.diagnosis.engine import diagnose
from fieldkit.diagnosis.results import Diagnosis
from fieldkit.model.condition import FunctionState
from fieldkit.model.loading import load_profile, load_templates
from fieldkit.model.profile import MachineProfile
from fieldkit.model.roles import ROLES, Role
from fieldkit.model.visit import Visit
from fieldkit.units import DisplaySystem

#: A fictional two-point closed loop: no test point carries cautions of its own, so whatever is
#: raised comes from the reading's role or condition.
BARE_LOOP_TOML = """
id = "bare-loop"
name = "Fictional closed loop with three test points"
rated_speed = "2000 rpm"
rated_max_pressure = "420 bar"

[[circuits]]
id = "drive"
name = "Drive loop"
template = "closed_loop_drive"
omit_test_points = ["pump_drain", "motor_drain", "loop_b", "oil_temp", "speed", "charge_inlet"]
  [[circuits.test_points]]
  id = "charge"
  cautions = []
  [[circuits.test_points]]
  id = "case"
  cautions = []
  [[circuits.test_points]]
  id = "loop_a"
  cautions = []
"""


@lru_cache(maxsize=1)
def bare_loop() -> MachineProfile:
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "bare-loop.toml"
        path.write_text(BARE_LOOP_TOML, encoding="utf-8")
        return load_profile(path, load_templates(RULES / "templates"))


def _because(d: Diagnosis, caution_id: str) -> str | None:
    return next((c.because for c in d.cautions if c.id == caution_id), None)


def _one_reading(profile: MachineProfile, point_id: str, value: float, state: FunctionState) -> Diagnosis:
    b = VisitBuilder(profile)
    b.add(point_id, value, state)
    return diagnose(b.build(), profile, knowledge())


ALL_VISITS = [pytest.param(p, id=p.stem) for p in sample_visit_paths(with_scenario=False)]


@pytest.mark.parametrize("path", ALL_VISITS)
def test_general_caution_comes_first_on_every_sample_visit(path: Path) -> None:
    _visit, _profile, d = diagnose_sample(path)
    assert d.cautions[0].id == "general"
    assert d.cautions[0].because == "always"
    order = {"danger": 0, "warning": 1, "notice": 2}
    severities = [order[c.severity] for c in d.cautions[1:]]
    assert severities == sorted(severities)  # the most severe next


def test_visit_with_no_readings_shows_the_general_caution_and_the_priors() -> None:
    profile = library().get("oskerfield-loamshifter")
    visit = Visit(id="empty", job_number="TEST-0002", machine=profile.id)
    d = diagnose(visit, profile, knowledge())
    assert [c.id for c in d.cautions][:1] == ["general"]
    assert any("no readings yet" in n for n in d.notes)
    assert all(f.probability == pytest.approx(f.prior, abs=1e-12) for f in d.faults)


def test_stalled_reading_raises_the_stall_duration_caution() -> None:
    stalled = _one_reading(bare_loop(), "drive.charge", 22.0, FunctionState.STALLED)
    assert (
        _because(stalled, "stall-duration")
        == "reading taken at charge pressure, function stalled over relief"
    )


def test_same_reading_in_neutral_raises_no_stall_caution() -> None:
    neutral = _one_reading(bare_loop(), "drive.charge", 25.0, FunctionState.NEUTRAL)
    assert _because(neutral, "stall-duration") is None


def test_high_pressure_role_raises_fluid_injection_without_the_point_asking() -> None:
    profile = bare_loop()
    assert profile.test_point("drive.loop_a")[1].cautions == []
    d = _one_reading(profile, "drive.loop_a", 30.0, FunctionState.NEUTRAL)
    assert _because(d, "fluid-injection") == "reading taken at loop A pressure"


def test_case_point_rated_10_bar_raises_fluid_injection_by_its_rating() -> None:
    # Injection is possible from about 7 bar (UK HSE research report RR976, 2013): the template's
    # case point is rated 10 bar, so its rating raises the caution though its role is low-pressure.
    d = _one_reading(bare_loop(), "drive.case", 0.8, FunctionState.NEUTRAL)
    assert _because(d, "fluid-injection") == "reading taken at case pressure, rated 10 bar"


def test_the_rating_that_raised_a_caution_is_named_in_the_units_of_the_diagnosis() -> None:
    # A US card printed 'rated 10 bar' among psi figures. 10 bar = 1,000,000 Pa, and 1 psi =
    # 6894.757 Pa (NIST SP 811, B.8): 1,000,000 / 6894.757 = 145.04 psi, shown as 145 psi;
    # in SI 10 bar is 1 MPa (1 bar = 100 kPa by definition).
    b = VisitBuilder(bare_loop())
    b.add("drive.case", 0.8, FunctionState.NEUTRAL)
    visit = b.build()
    us = diagnose(visit, bare_loop(), knowledge(), DisplaySystem.named("us"))
    assert _because(us, "fluid-injection") == "reading taken at case pressure, rated 145 psi"
    si = diagnose(visit, bare_loop(), knowledge(), DisplaySystem.named("si"))
    assert _because(si, "fluid-injection") == "reading taken at case pressure, rated 1 MPa"


HIGH_PRESSURE_ROLES = [role for role, info in ROLES.items() if info.high_pressure]


def _demo_point(role: Role) -> tuple[MachineProfile, str]:
    # Demo machines first, then the bench rig (a valve bank's work ports are only there).
    for profile in scene_profiles():
        for _c, tp in profile.all_test_points():
            if tp.role is role:
                return profile, tp.id
    raise LookupError(role)


def test_fluid_injection_caution_lists_every_high_pressure_role() -> None:
    """DEVELOPERS.md: a high-pressure point needs fluid-injection."""
    listed = set(knowledge().cautions["fluid-injection"].roles)
    assert set(HIGH_PRESSURE_ROLES) <= listed


@pytest.mark.parametrize("role", HIGH_PRESSURE_ROLES, ids=[r.value for r in HIGH_PRESSURE_ROLES])
def test_reading_at_any_high_pressure_demo_point_raises_fluid_injection(role: Role) -> None:
    profile, point_id = _demo_point(role)
    label = profile.test_point(point_id)[1].label
    d = _one_reading(profile, point_id, 50.0, FunctionState.NEUTRAL)
    assert _because(d, "fluid-injection") == f"reading taken at {label}"


def test_firing_rule_raises_the_cautions_it_lists() -> None:
    # Fellborer loop A stalls at 350 bar, under its 390-415 bar (380 bar differential + charge,
    # invented service data): the loop-a-stall rule fires low and raises its cautions.
    rule = next(r for r in knowledge().rules if r.id == "loop-a-stall")
    profile = library().get("tarnhollow-fellborer")
    b = VisitBuilder(profile)
    b.add("travel.loop_a", 350.0, FunctionState.STALLED)
    d = diagnose(b.build(), profile, knowledge())
    assert "relief-max-setting" in rule.spec.cautions
    assert _because(d, "relief-max-setting") == f"finding: {rule.spec.title}"
