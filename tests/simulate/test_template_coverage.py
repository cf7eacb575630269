"""Every circuit template gives a usable machine on its own, and the evaluation measures it.

The levels below were measured with ``evaluate(template machines, cases_per_fault=2, seed=1)``
on this code (see the issue note); each is held at the measured count minus a margin of one
case, so a change that makes a template worse fails here.
"""

from __future__ import annotations

import pytest

from fieldkit.diagnosis.engine import default_knowledge
from fieldkit.model.fitted import applies
from fieldkit.model.loading import Templates, load_templates
from fieldkit.model.machine_plan import template_machine
from fieldkit.model.profile import MachineProfile
from fieldkit.resources import rules_dir
from fieldkit.simulate.evaluate import EvaluationReport, evaluate

CASES = 2


@pytest.fixture(scope="module")
def templates() -> Templates:
    return load_templates(rules_dir() / "templates")


def bare(profile: MachineProfile) -> MachineProfile:
    """The same machine with none of the optional parts ticked."""
    circuits = [c.model_copy(update={"fitted_parts": []}) for c in profile.circuits]
    return profile.model_copy(update={"circuits": circuits})


@pytest.fixture(scope="module")
def report(templates: Templates) -> EvaluationReport:
    machines = [template_machine(templates, tid) for tid in sorted(templates)]
    return evaluate(machines, cases_per_fault=CASES, seed=1, workers=1)


@pytest.fixture(scope="module")
def bare_machines(templates: Templates) -> dict[str, MachineProfile]:
    machines = [bare(template_machine(templates, tid)) for tid in sorted(templates)]
    return {m.id: m for m in machines}


@pytest.fixture(scope="module")
def bare_report(bare_machines: dict[str, MachineProfile]) -> EvaluationReport:
    return evaluate(list(bare_machines.values()), cases_per_fault=CASES, seed=2, workers=1)


#: Templates whose ranges all rest on a figure with no honest typical value: a bare accumulator
#: may work at 30 bar (pilot) or 150 bar (brakes), so its plan has points but judges nothing
#: until the working pressures are entered (brake_charging gives typical brake figures).
NO_TYPICAL = {"accumulator"}


def test_every_template_alone_gives_a_plan_with_ranges(templates: Templates) -> None:
    for tid in templates:
        m = template_machine(templates, tid)
        points = m.all_test_points()
        ranges = [r for _c, tp in points for r in tp.expected]
        assert points, tid
        assert bool(ranges) is (tid not in NO_TYPICAL), f"{tid}: {len(ranges)} ranges"
        assert all(r.source for r in ranges)


#: Measured 2026-12-03 after the look-alike points (cases_per_fault=2, seed=1, one worker): cases,
#: top-1, top-3 per template. Open-fixed-pump, open-centre-sections and fan-drive measured again
#: after template reliefs follow the figures, the valve bank template and template machines with
#: their template's usual parts ticked; steering-priority after its own steering points and faults.
MEASURED: dict[str, tuple[int, int, int]] = {
    "template-accumulator": (2, 2, 2),
    "template-brake-charging": (6, 6, 6),
    "template-brake-release": (6, 3, 3),
    # 27 and 28 before the charge ranges spanned the trade's spread (issue 13, item 11): with no
    # maker's figures a charge relief set a few bar low, or a flushing valve taking a few bar, reads
    # like a healthy machine whose relief is set lower, so those cases go to 'no fault'; a restricted
    # case drain too while the neutral charge rule reads the gauge (case and all) against the wide range.
    "template-closed-loop-drive": (28, 21, 24),
    "template-cylinder": (8, 2, 6),
    "template-fan-drive": (8, 5, 6),
    "template-load-sensing": (22, 18, 19),
    "template-motor": (8, 6, 6),
    "template-open-centre-sections": (24, 22, 24),
    "template-open-fixed-pump": (20, 18, 20),
    "template-pilot-supply": (6, 4, 4),
    "template-power-unit": (18, 17, 17),
    "template-pressure-compensated": (18, 17, 17),
    "template-steering-priority": (28, 26, 28),
    "template-winch-swing": (8, 5, 5),
}
MARGIN = 1  # one case either way: a small change in a rule table may move one case


def test_each_template_holds_its_measured_accuracy(report: EvaluationReport) -> None:
    scores = report.by_profile()
    assert set(scores) == set(MEASURED)
    for pid, (n, top1, top3) in MEASURED.items():
        sc = scores[pid]
        assert sc.n == n, pid
        assert sc.top1 >= top1 - MARGIN, f"{pid}: top-1 {sc.top1}/{sc.n}, measured {top1}"
        assert sc.top3 >= top3 - MARGIN, f"{pid}: top-3 {sc.top3}/{sc.n}, measured {top3}"


#: Look-alike faults (issue 12, item 6) that a point was added to tell apart, either way round
#: (the pair in alphabetical order, as ``confusions`` keys it). Before, at 20 visits a fault on
#: the template machines: 20, 7 and 20 (load-sensing 8, steering 12) confusions.
LOOK_ALIKES = [
    ("case_drain_restricted", "return_back_pressure"),  # cooler inlet on a closed loop
    ("charge_pump_worn", "charge_relief_low"),  # charge at low idle
    ("compensator_misset", "main_relief_low"),  # pump pressure with the relief isolated
]


def test_look_alike_faults_are_not_taken_for_each_other(report: EvaluationReport) -> None:
    confused = {(a, b): n for a, b, n in report.confusions(limit=1000)}
    for pair in LOOK_ALIKES:
        assert confused.get(pair, 0) == 0, f"{pair[0]} and {pair[1]} confused {confused[pair]} times"


def test_every_template_is_measured_by_the_evaluation(report: EvaluationReport) -> None:
    scores = report.by_profile()
    for pid, sc in scores.items():
        assert sc.n >= CASES, pid  # at least the healthy cases
    assert len(scores) == len(load_templates(rules_dir() / "templates"))


def test_a_fault_whose_part_is_absent_never_ranks_on_any_template(
    bare_report: EvaluationReport, bare_machines: dict[str, MachineProfile]
) -> None:
    faults = default_knowledge().faults
    checked = 0
    for case in bare_report.cases:
        machine = bare_machines[case.profile]
        for key in case.top3:
            fid = key.split("@")[0]  # ranked keys are fault@circuit
            if fid in faults and faults[fid].needs:
                checked += 1
                # Only a part the circuit has by its kind (an accumulator circuit's accumulator).
                assert applies(faults[fid].needs, None, machine), (
                    f"{case.profile}: {fid} ranked without its part"
                )
    assert checked, "no part-specific fault ranked at all: the check above never ran"


def test_no_part_specific_fault_is_even_a_hypothesis_without_its_part(templates: Templates) -> None:
    from fieldkit.diagnosis.ranking import hypotheses_for

    faults = default_knowledge().faults
    for tid in templates:
        m = bare(template_machine(templates, tid))
        for h in hypotheses_for(m, faults):
            assert applies(h.fault.needs, h.circuit, m), f"{tid}: {h.key}"
