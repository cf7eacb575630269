"""A charge pressure that drops when the loop is stroked: besides a worn pump or motor, a loop
flushing (hot-oil shuttle) valve that dumps too much oil from the low side (common practice).
Only a loop that has a flushing valve fitted can have that fault."""

from __future__ import annotations

from diagnosis_helpers import VisitBuilder, knowledge, library

from fieldkit.diagnosis.engine import diagnose
from fieldkit.diagnosis.results import Diagnosis
from fieldkit.model.condition import FunctionState as S
from fieldkit.model.parts import Part
from fieldkit.model.profile import MachineProfile


def fellborer(fitted: list[Part] | None) -> MachineProfile:
    """The demo drill rig (invented figures: charge relief 27 bar, flushing relief 22 bar), with
    its travel loop's parts as given (None: the parts its profile states, a flushing valve among them)."""
    profile = library().get("tarnhollow-fellborer")
    if fitted is None:
        return profile
    circuits = [
        c.model_copy(update={"fitted_parts": fitted}) if c.id == "travel" else c for c in profile.circuits
    ]
    return profile.model_copy(update={"circuits": circuits})


def charge_drops_in_stroke(profile: MachineProfile) -> Diagnosis:
    # Neutral 27 bar on the 27 bar relief, case 0.8 bar: normal. At full stroke 15 bar: 12 bar down,
    # where the relief settings predict 27 − 22 = 5 bar [hand]. Case drains at the stall 2.5 and
    # 2 L/min, under the maker's 5.5 and 4 L/min (demo figures): the rotating groups are tight.
    b = VisitBuilder(profile)
    b.add("travel.charge", 27.0, S.NEUTRAL)
    b.add("travel.case", 0.8, S.NEUTRAL)
    b.add("travel.charge", 15.0, S.FULL_STROKE)
    b.add("travel.pump_drain", 2.5, S.STALLED)
    b.add("travel.motor_drain", 2.0, S.STALLED)
    return diagnose(b.build(), profile, knowledge())


def test_with_a_flushing_valve_fitted_a_charge_drop_in_stroke_ranks_it_among_the_first_three() -> None:
    d = charge_drops_in_stroke(fellborer(None))
    assert "flushing_valve_fault@travel" in [f.key for f in d.faults[:3]]


def test_without_a_flushing_valve_it_never_appears() -> None:
    d = charge_drops_in_stroke(fellborer([Part.TWO_SPEED_MOTOR, Part.SPRING_APPLIED_BRAKE, Part.COOLER]))
    assert all(f.id != "flushing_valve_fault" for f in d.faults)
    # The drop still has causes a loop without one can have.
    assert d.faults[0].id != "no_fault"
