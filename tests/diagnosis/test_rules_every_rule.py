"""Every rule in the bundled packs fires where it should and stays quiet where it should.

For each rule the scene builder (diagnosis_helpers.scene_for) picks a machine whose circuit kind
the rule applies to, evaluates the rule's own limits against that machine's figures, and solves
for readings that put the rule's value a quarter of the band below, in the middle of, or a
quarter of the band above them (15 % of the limit when there is only one). The readings are taken
with EN 837-1 class 0.1 gauges, so each lands many standard uncertainties from a limit.

Because these readings are solved from each rule's own limits, this file shows only that the engine
does what the rule file says (wiring and coverage); it cannot show that a limit is right. That is
checked with readings chosen by hand in tests/diagnosis/test_scenes_by_hand.py and the worked
cases in tests/cases/.

The evidence a finding gives is checked against the rule file's own tables: the log-likelihood
ratio against a healthy machine, with the soft outcome entering as virtual evidence (Pearl,
*Probabilistic Reasoning in Intelligent Systems*, 1988, §2.2.2), and faults the rule does not
name reading like a healthy machine.
"""

from __future__ import annotations

import math

import pytest
from diagnosis_helpers import (
    NoScene,
    Scene,
    diagnose_sample,
    finding,
    knowledge,
    likelihood_for,
    sample_visit_paths,
    scene_for,
    table_likelihood,
)

from fieldkit.diagnosis.engine import diagnose
from fieldkit.diagnosis.results import Verdict
from fieldkit.diagnosis.rulepack import Rule

RULES = knowledge().rules


def _scene_or_none(rule: Rule) -> Scene | None:
    try:
        return scene_for(rule)
    except NoScene:
        return None


SCENES = {rule.id: _scene_or_none(rule) for rule in RULES}
CASES = [
    pytest.param(scene, side, id=f"{rule_id}-{side}")
    for rule_id, scene in SCENES.items()
    if scene is not None
    for side in scene.sides
]
VERDICT = {"low": Verdict.LOW, "in_range": Verdict.IN_RANGE, "high": Verdict.HIGH}
OUTCOME_INDEX = {"low": 0, "in_range": 1, "high": 2}


def test_every_rule_in_the_bundled_packs_has_a_machine_to_be_tested_on() -> None:
    lost = {rule.id: str(_why(rule)) for rule in RULES if SCENES[rule.id] is None}
    assert not lost, f"rules no demo machine (nor the bench rig) can exercise: {lost}"


def _why(rule: Rule) -> Exception | None:
    try:
        scene_for(rule)
    except NoScene as exc:
        return exc
    return None


def test_the_parametrised_cases_cover_every_rule_id_with_a_quiet_and_a_firing_case() -> None:
    """A rule added to a pack without a machine to test it on fails here, by id."""
    covered: dict[str, set[str]] = {}
    for case in CASES:
        scene, side = case.values
        covered.setdefault(scene.rule.id, set()).add(side)
    assert set(covered) == {rule.id for rule in RULES}
    for rule in RULES:
        sides = covered[rule.id]
        assert "in_range" in sides, rule.id
        # Each evidence table needs its side of the band on the test machine, or it can never fire there.
        if rule.spec.if_low:
            assert "low" in sides, f"{rule.id}: if_low, but its test machine has no low limit"
        if rule.spec.if_high:
            assert "high" in sides, f"{rule.id}: if_high, but its test machine has no high limit"


@pytest.mark.parametrize(("scene", "side"), CASES)
def test_rule_gives_its_verdict_and_the_evidence_its_tables_say(scene: Scene, side: str) -> None:
    rule = scene.rule
    d = diagnose(scene.visit(side), scene.profile, knowledge())
    f = finding(d, rule.id, scene.circuit_id)

    assert f.verdict is VERDICT[side], f.message
    assert f.discount == 1.0  # readings taken at the reference temperature and rated speed
    # Firm, not certain: derived values also carry the thermometer's and the assumed speed's
    # uncertainty (GUM 5.1.2), which no scene gauge can remove.
    assert {"low": f.p_low, "in_range": f.p_in_range, "high": f.p_high}[side] >= 0.99

    outcome = (f.p_low, f.p_in_range, f.p_high)
    healthy = table_likelihood(rule, "no_fault")
    for key in scene.listed_keys:
        lik = likelihood_for(rule, scene.circuit_id, key, scene.profile)
        # Virtual evidence: P(finding | h) = Σ_o P(o observed) · P(o | h), as a ratio to healthy.
        expected = math.log(sum(o * p for o, p in zip(outcome, lik, strict=True))) - math.log(
            sum(o * p for o, p in zip(outcome, healthy, strict=True))
        )
        assert f.evidence.get(key, 0.0) == pytest.approx(expected, abs=1e-9), key
        # With a hard outcome the sign is the table's: more likely under the fault than healthy → for it.
        table = lik[OUTCOME_INDEX[side]] - healthy[OUTCOME_INDEX[side]]
        if abs(table) > 1e-9:
            assert math.copysign(1.0, f.evidence[key]) == math.copysign(1.0, table), key
    # Faults the rule does not name read like a healthy machine: no evidence for or against them.
    assert set(f.evidence) <= set(scene.listed_keys)


@pytest.mark.parametrize(("scene", "side"), [c for c in CASES if c.values[1] != "in_range"])
def test_a_firing_rule_raises_the_faults_it_lists_for_that_side(scene: Scene, side: str) -> None:
    """The trade reading of the tables: a low value gains evidence for every fault listed under
    if_low that reads low more often than a healthy machine (likewise high)."""
    rule = scene.rule
    o = 0 if side == "low" else 2
    # The tables as the ranking weights them (helpers.weighted): a fault that reads out of range
    # more often on either side also reads this side a little more often than a healthy machine.
    healthy = table_likelihood(rule, "no_fault")[o]
    d = diagnose(scene.visit(side), scene.profile, knowledge())
    f = finding(d, rule.id, scene.circuit_id)
    raised = {k for k, llr in f.evidence.items() if llr > 1e-6}
    expected = {k for k in scene.listed_keys if table_likelihood(rule, k.split("@")[0])[o] > healthy}
    assert raised == expected
    # The finding carries the rule's advice for that side, and its cautions.
    assert f.action == (rule.spec.do_low if side == "low" else rule.spec.do_high)
    assert f.cautions == list(rule.spec.cautions)


def test_a_rule_that_cannot_apply_to_a_circuit_says_nothing_about_it() -> None:
    """The pilot-supply rule reads a circuit kind the drill rig does not have: no finding at all."""
    path = next(p for p in sample_visit_paths() if p.name.startswith("fellborer-no-fault"))
    _visit, profile, d = diagnose_sample(path)
    assert all(c.kind.value != "pilot_supply" for c in profile.circuits)
    assert not [f for f in d.findings if f.rule_id == "pilot-supply"]
