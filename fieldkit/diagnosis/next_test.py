"""Which measurement to take next: the largest expected drop in diagnostic uncertainty per minute.

For every test point whose reading would let a rule speak (and every inconclusive reading that a
smaller gauge could settle), the engine asks what each possible outcome would do to the ranking,
weights the outcomes by how likely they are now, and compares the expected entropy after the
reading with the entropy now (expected information gain, in bits), divided by the minutes the
reading takes.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Sequence
from dataclasses import dataclass

from fieldkit.diagnosis.actions import ActionTest
from fieldkit.diagnosis.findings import Evaluator, Hypothesis, Scope, likelihoods
from fieldkit.diagnosis.ranking import entropy_bits
from fieldkit.diagnosis.results import Finding, NextTest, Verdict
from fieldkit.diagnosis.rulepack import Rule
from fieldkit.model.condition import FunctionState
from fieldkit.model.fitted import applies
from fieldkit.model.profile import Circuit, TestPoint
from fieldkit.model.roles import Role
from fieldkit.physics.common import OutOfRangeError
from fieldkit.physics.gauges import smallest_gauge
from fieldkit.units import Kind, format_value, kind_of

MAX_JOINT_RULES = 3
OUTCOMES = ("low", "in range", "high")
_UNIT = ((1.0, 0.0, 0.0), (0.0, 1.0, 0.0), (0.0, 0.0, 1.0))


@dataclass(slots=True)
class _Candidate:
    circuit: Circuit
    point: TestPoint
    state: FunctionState | None
    rules: list[tuple[Rule, Scope]]
    repeat_of: Finding | None = None


def _matrices(rules: list[tuple[Rule, Scope]], hyps: list[Hypothesis]) -> list[list[list[float]]]:
    """For each rule: P(outcome | h) as [outcome][h]."""
    return [[likelihoods(rule, scope.circuit, unit, hyps) for unit in _UNIT] for rule, scope in rules]


def _expected_entropy(
    prior: list[float], mats: list[list[list[float]]], soft: tuple[float, float, float] | None = None
) -> tuple[float, list[tuple[tuple[int, ...], float, list[float]]]]:
    """Expected entropy after observing the rules' outcomes, and (outcomes, P, posterior) per combination.

    ``soft`` is the virtual evidence already held about a single rule's outcome (an inconclusive
    reading): then P(outcome) ∝ Σ_h prior(h)·P(outcome | h)·soft(outcome), with ``prior`` the
    ranking without that reading, and the posterior after a precise repeat is prior·P(outcome | h).
    """
    per_outcome: list[tuple[tuple[int, ...], float, list[float]]] = []
    for combo in itertools.product(range(3), repeat=len(mats)):
        joint = list(prior)
        for mat, o in zip(mats, combo, strict=True):
            row = mat[o]
            joint = [j * r for j, r in zip(joint, row, strict=True)]
        p = sum(joint)
        if p <= 0:
            continue
        weight = p * (soft[combo[0]] if soft is not None else 1.0)
        per_outcome.append((combo, weight, [j / p for j in joint]))
    total = sum(w for _, w, _ in per_outcome)
    per_outcome = [(c, w / total, post) for c, w, post in per_outcome if w > 0]
    expected = sum(w * entropy_bits(post) for _, w, post in per_outcome)
    return expected, per_outcome


def _state_for(point: TestPoint) -> FunctionState:
    """The condition to ask for when a rule takes any: the one the point's expected range names
    first (a suction reading wants full flow), else neutral."""
    for rng in point.expected:
        if rng.when.function:
            return rng.when.function[0]
    return FunctionState.NEUTRAL


def _point_for(evaluator: Evaluator, scope: Scope, role: Role) -> tuple[Circuit, TestPoint] | None:
    if scope.point is not None and scope.circuit is not None and scope.point.role is role:
        return scope.circuit, scope.point  # a rule read point by point asks for its own point
    circuits = [scope.circuit] if scope.circuit is not None else evaluator.profile.circuits
    for c in circuits:
        for tp in c.test_points:
            if tp.role is role:
                return c, tp
    return None


def _describe(post: list[float], hyps: list[Hypothesis]) -> str:
    i = max(range(len(post)), key=post.__getitem__)
    h = hyps[i]
    where = f" ({h.circuit.id})" if h.circuit else ""
    return f"{h.fault.title}{where} {post[i]:.0%}"


def suggest(
    evaluator: Evaluator,
    pairs: list[tuple[Rule, Scope, Finding]],
    hyps: list[Hypothesis],
    posterior: list[float],
    findings_logs: list[float],
    limit: int = 3,
    actions: Sequence[ActionTest] = (),
) -> list[NextTest]:
    """The best next measurements, most useful per minute first."""
    now = entropy_bits(posterior)
    candidates: dict[tuple[str, str, str | None], _Candidate] = {}
    for rule, scope, finding in pairs:
        if finding.verdict is Verdict.NOT_MEASURED:
            missing = evaluator.missing_roles.get(finding.key, [])
            if len({r for r, _ in missing}) != 1:
                continue  # needs two new readings: the first of them is offered by another rule, if any
            role, state = missing[0]
            place = _point_for(evaluator, scope, role)
            if place is None:
                continue
            circuit, point = place
            state = state or _state_for(point)
            key = (circuit.id, point.id, state.value)
            cand = candidates.setdefault(key, _Candidate(circuit, point, state, []))
            cand.rules.append((rule, scope))
        elif finding.verdict is Verdict.INCONCLUSIVE and finding.readings:
            reading_id = finding.readings[0]
            m = next((m for m in evaluator.measured if m.reading.id == reading_id), None)
            if m is None:
                continue
            key = (m.circuit.id, m.point.id, "repeat")
            cand = candidates.setdefault(
                key, _Candidate(m.circuit, m.point, m.reading.condition.function, [], finding)
            )
            cand.rules.append((rule, scope))
    tests: list[tuple[NextTest, bool]] = []
    for cand in candidates.values():
        rules = cand.rules[:MAX_JOINT_RULES]
        mats = _matrices(rules, hyps)
        soft: tuple[float, float, float] | None = None
        if cand.repeat_of is not None:
            # Take the soft finding out again: a precise repeat replaces it with a hard outcome.
            base = [
                lg - cand.repeat_of.evidence.get(h.key, 0.0)
                for lg, h in zip(findings_logs, hyps, strict=True)
            ]
            top = max(base)
            prior = [math.exp(b - top) for b in base]
            total = sum(prior)
            prior = [p / total for p in prior]
            mats = mats[:1]
            f = cand.repeat_of
            soft = (f.p_low, f.p_in_range, f.p_high)
        else:
            prior = posterior
        expected, joint = _expected_entropy(prior, mats, soft)
        gain = max(0.0, now - expected)
        if gain < 1e-3:
            continue
        minutes = cand.point.minutes
        # What each outcome of the first rule alone would say, for the sentence.
        _, first = _expected_entropy(prior, mats[:1], soft)
        if cand.repeat_of is not None and not _could_change_leader(posterior, first):
            continue  # a better gauge would only confirm what already leads
        decisive = _chance_leader_changes(
            posterior, first if cand.repeat_of is not None else joint
        ) >= DECISIVE_CHANCE or _splits_leaders(posterior, mats)
        outcomes = {OUTCOMES[combo[0]]: _describe(post, hyps) for combo, p_o, post in first if p_o > 0.05}
        state_text = cand.state.label if cand.state else "any condition"
        advice = ""
        if cand.repeat_of is not None and cand.point.kind is Kind.PRESSURE:
            advice = _smaller_gauge_advice(evaluator, cand)
        verb = "Measure again" if cand.repeat_of else "Measure"
        said = "; ".join(f"if {k}, {v}" for k, v in outcomes.items())
        why = (
            f"{verb} {cand.point.label} ({state_text}): it is expected to remove {gain:.2f} of the "
            f"{now:.2f} bits of doubt in about {minutes:g} min. {said.capitalize()}."
        )
        if advice:
            why += f" {advice}"
        tests.append(
            (
                NextTest(
                    test_point=cand.point.id,
                    label=cand.point.label,
                    circuit=cand.circuit.id,
                    condition=state_text,
                    minutes=minutes,
                    gain_bits=gain,
                    why=why,
                    repeat=cand.repeat_of is not None,
                    gauge_advice=advice,
                    outcomes=outcomes,
                ),
                decisive,
            )
        )
    tests.extend(_action_tests(evaluator, actions, hyps, posterior, now))
    return [t for t, _ in rank_by_value(tests)][:limit]


def rank_by_value(tests: list[tuple[NextTest, bool]]) -> list[tuple[NextTest, bool]]:
    """Doubt removed per minute, best first; but when some test could change the leading fault or
    splits the two leaders (``True`` beside it), every test that does neither comes after it: a
    cheap reading whose every outcome leaves the same fault in front, and that reads alike under
    the two leaders, trims doubt among the also-rans while the technician's question is which of
    the leaders it is (common practice: take the test that splits the leading suspects)."""
    any_decisive = any(d for _, d in tests)
    return sorted(tests, key=lambda td: (any_decisive and not td[1], -(td[0].gain_bits / td[0].minutes)))


#: A test can change the leading fault when its outcomes put another fault first with at least
#: this chance: one in twenty, so that a long shot does not jump the queue.
DECISIVE_CHANCE = 0.05
#: A test splits the two leading faults when what it would show under one differs from what it
#: would show under the other by at least this total variation distance (half the summed
#: differences of the outcome probabilities): the test answers "which of the two".
SPLIT_DISTANCE = 0.5


def _leaders(posterior: list[float]) -> tuple[int, int]:
    order = sorted(range(len(posterior)), key=lambda i: -posterior[i])
    return order[0], order[1] if len(order) > 1 else order[0]


def _splits_leaders(posterior: list[float], mats: list[list[list[float]]]) -> bool:
    """Whether the joint outcome of the rules (``mats``: [rule][outcome][h]) differs between the
    two leading hypotheses by :data:`SPLIT_DISTANCE` or more."""
    a, b = _leaders(posterior)
    if a == b:
        return False
    distance = 0.0
    for combo in itertools.product(*(range(len(mat)) for mat in mats)):
        pa = pb = 1.0
        for mat, o in zip(mats, combo, strict=True):
            pa *= mat[o][a]
            pb *= mat[o][b]
        distance += abs(pa - pb)
    return distance / 2.0 >= SPLIT_DISTANCE


def _chance_leader_changes(
    posterior: list[float], outcomes: list[tuple[tuple[int, ...], float, list[float]]]
) -> float:
    """P(the test's outcome puts another hypothesis first)."""
    lead = max(range(len(posterior)), key=posterior.__getitem__)
    return sum(p_o for _combo, p_o, post in outcomes if max(range(len(post)), key=post.__getitem__) != lead)


def _could_change_leader(
    posterior: list[float], outcomes: list[tuple[tuple[int, ...], float, list[float]]]
) -> bool:
    """Whether any outcome with a real chance would put another hypothesis first, or take the
    leader's majority away (several rivals sharing what it loses)."""
    lead = max(range(len(posterior)), key=posterior.__getitem__)
    for _combo, p_o, post in outcomes:
        if p_o <= 0.02:
            continue
        if max(range(len(post)), key=post.__getitem__) != lead:
            return True
        if post[lead] < 0.5 <= posterior[lead]:
            return True
    return False


def _action_tests(
    evaluator: Evaluator,
    actions: Sequence[ActionTest],
    hyps: list[Hypothesis],
    posterior: list[float],
    now: float,
) -> list[tuple[NextTest, bool]]:
    """Action tests (rules/actions.toml) for each circuit they suit, by expected information gain:
    outcome o has P(o) = Σ_h P(h) P(o | h) and leaves P(h | o) ∝ P(h) P(o | h); beside each,
    whether an outcome could change the leading fault."""
    out: list[tuple[NextTest, bool]] = []
    for action in actions:
        for circuit in evaluator.profile.circuits:
            if not action.suits(circuit) or not applies(action.needs, circuit):
                continue
            if action.unless_role is not None and any(
                tp.role is action.unless_role for tp in circuit.test_points
            ):
                continue  # the circuit has a test point for it, offered as a reading
            named = [
                h
                for h in hyps
                if h.circuit is not None and h.circuit.id == circuit.id and h.fault.id in action.likely
            ]
            if not named:
                continue
            rows = [
                action.likelihood(h.fault.id if h.circuit is not None and h.circuit.id == circuit.id else "")
                for h in hyps
            ]
            results: list[tuple[tuple[int, ...], float, list[float]]] = []
            expected = 0.0
            for o in range(len(action.outcomes)):
                joint = [p * row[o] for p, row in zip(posterior, rows, strict=True)]
                p_o = sum(joint)
                if p_o <= 0:
                    continue
                post = [j / p_o for j in joint]
                expected += p_o * entropy_bits(post)
                results.append(((o,), p_o, post))
            gain = max(0.0, now - expected)
            if gain < 1e-3:
                continue
            point = next((tp for tp in circuit.test_points if tp.role is action.point_role), None)
            point = point or (circuit.test_points[0] if circuit.test_points else None)
            if point is None:
                continue
            outcomes = {
                action.outcomes[combo[0]].seen: action.outcomes[combo[0]].meaning
                for combo, p_o, _post in results
                if p_o > 0.05
            }
            meanings = " ".join(f"If {seen}: {meaning}." for seen, meaning in outcomes.items())
            why = (
                f"It is expected to remove {gain:.2f} of the {now:.2f} bits of doubt in about "
                f"{action.minutes:g} min. {meanings}"
            ).strip()
            out.append(
                (
                    NextTest(
                        test_point=point.id,
                        label=action.title,
                        circuit=circuit.id,
                        condition="action test",
                        minutes=action.minutes,
                        gain_bits=gain,
                        why=why,
                        outcomes=outcomes,
                        action=action.id,
                    ),
                    _chance_leader_changes(posterior, results) >= DECISIVE_CHANCE
                    or _splits_leaders(
                        posterior, [[[row[o] for row in rows] for o in range(len(action.outcomes))]]
                    ),
                )
            )
    return out


def _smaller_gauge_advice(evaluator: Evaluator, cand: _Candidate) -> str:
    """Advice for a repeat near a limit; a gauge's size only helps when both are pressures."""
    m = next(m for m in evaluator.measured if m.reading.id == cand.repeat_of.readings[0])  # type: ignore[union-attr]
    generic = "Repeat it with a gauge of smaller full scale or a better accuracy class."
    # A pressure point may hold a reading taken with another instrument (a flow meter picked by
    # mistake, a value confirmed in another kind): gauge sizes only compare pressures.
    gauge = m.gauge if m.gauge is not None and kind_of(m.gauge.full_scale) is Kind.PRESSURE else None
    if kind_of(m.reading.value) is not Kind.PRESSURE:
        return generic
    try:
        size = smallest_gauge(
            m.reading.value,
            cand.point.highest_on_scale,
            fluctuating=cand.point.fluctuates(m.reading.condition.function),
        )
    except OutOfRangeError:
        return generic
    if gauge is not None and size >= gauge.full_scale:
        better = [c for c in (0.6, 0.25, 0.1) if c < gauge.accuracy_class]
        if better:
            return (
                "The reading sits within the gauge's error of a limit and no smaller range suits this "
                "point: "
                f"repeat it with a class {better[0]:g} gauge of the same range (EN 837-1), or a calibrated "
                "transducer."
            )
        return "The reading sits within the gauge's error of a limit: repeat it with a calibrated transducer."
    current = f" instead of the {format_value(gauge.full_scale)} one" if gauge is not None else ""
    return (
        f"The reading sits within the gauge's error of a limit: repeat it with a 0–{format_value(size)} "
        f"gauge{current} (smaller full scale, smaller error)."
    )


__all__ = ["rank_by_value", "suggest"]
