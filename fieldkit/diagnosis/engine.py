"""From a visit's readings to a ranked, explained diagnosis: the one entry point callers use.

One straight line: readings → measured values with uncertainty (:mod:`measure`) → range checks
and rule findings (:mod:`findings`) → posterior over faults (:mod:`ranking`) → the next test
(:mod:`next_test`) → the cautions that apply.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from functools import lru_cache
from pathlib import Path

from fieldkit.diagnosis.actions import ActionTest, load_actions
from fieldkit.diagnosis.catalogue import Caution, Fault, load_cautions, load_faults
from fieldkit.diagnosis.cautions import SEVERITY_RANK, cautions_for_step
from fieldkit.diagnosis.evidence import evidence_book, evidence_findings
from fieldkit.diagnosis.findings import (
    Evaluator,
    Hypothesis,
    censored_outcomes,
    outcome_probabilities,
    verdict_for,
)
from fieldkit.diagnosis.lint import check_references
from fieldkit.diagnosis.measure import Measured, measure_visit
from fieldkit.diagnosis.next_test import suggest
from fieldkit.diagnosis.over_pressure import assumed_back_pressure, back_pressure_role, check_over_pressure
from fieldkit.diagnosis.pairs import rank_pairs
from fieldkit.diagnosis.ranking import entropy_bits, hypotheses_for, log_posterior, rank
from fieldkit.diagnosis.results import CautionNote, Diagnosis, Finding, NextTest, ReadingCheck, Verdict
from fieldkit.diagnosis.rulepack import Rule, load_packs
from fieldkit.errors import FieldkitError
from fieldkit.model.condition import FunctionState
from fieldkit.model.fitted import applies
from fieldkit.model.profile import Circuit, ExpectedRange, MachineProfile, TestPoint, TestWindow
from fieldkit.model.roles import Role
from fieldkit.model.visit import Visit
from fieldkit.physics.gauges import gauge_suitability
from fieldkit.resources import rules_dir
from fieldkit.units import (
    CANONICAL_UNIT,
    LIMIT_FIGURES,
    METRIC,
    Q_,
    DisplaySystem,
    Kind,
    display_scale,
    format_magnitude,
    format_value,
    to_canonical,
    unit,
)


@dataclass(frozen=True)
class Knowledge:
    """Everything the engine knows that is not about this visit: rules, faults, cautions."""

    rules: list[Rule]
    faults: dict[str, Fault]
    cautions: dict[str, Caution]
    folder: Path
    #: Action tests (rules/actions.toml); a folder without the file has none.
    actions: dict[str, ActionTest] = field(default_factory=dict)

    @classmethod
    def load(cls, folder: Path) -> Knowledge:
        faults = load_faults(folder / "faults.toml")
        cautions = load_cautions(folder / "cautions.toml")
        k = cls(load_packs(folder), faults, cautions, folder, load_actions(folder, faults, cautions))
        check_references(k)
        return k


@lru_cache(maxsize=4)
def _cached(folder: str) -> Knowledge:
    return Knowledge.load(Path(folder))


def default_knowledge(folder: Path | None = None) -> Knowledge:
    """The bundled rules (or another folder), loaded once per process."""

    return _cached(str((folder or rules_dir()).resolve()))


def _range_text(low: float | None, high: float | None, unit: str) -> str:
    def n(x: float) -> str:
        return format_magnitude(x, LIMIT_FIGURES)

    if low is not None and high is not None:
        return f"{n(low)}–{n(high)} {unit}"
    if low is not None:
        return f"≥ {n(low)} {unit}"
    if high is not None:
        return f"≤ {n(high)} {unit}"
    return "—"


def check_reading(m: Measured, system: DisplaySystem, window: TestWindow | None = None) -> ReadingCheck:
    """A reading against its point's expected range for its condition, gauge error included."""
    rng = m.point.expected_for(m.reading.condition)
    if window is not None and m.role is Role.OIL_TEMPERATURE:
        # The visit's test window decides whether the oil is fit for testing (one rule, the same
        # the oil-in-test-window rule reads), not a template's general band.
        rng = ExpectedRange(low=window.oil_min, high=window.oil_max, source=window.source)
    scale, offset, unit_text = display_scale(unit(CANONICAL_UNIT[m.kind]), m.kind, system)

    def shown(x: float | None) -> float | None:
        return None if x is None else offset + scale * x

    low = high = None
    verdict = Verdict.NOT_MEASURED
    if rng is not None:
        low = to_canonical(rng.low, m.kind) if rng.low is not None else None
        high = to_canonical(rng.high, m.kind) if rng.high is not None else None
        if m.censored:
            outcomes = censored_outcomes(m.canonical, m.u_canonical, low, high, m.censored)
        else:
            outcomes = outcome_probabilities(m.canonical, m.u_canonical, low, high)
        verdict = verdict_for(*outcomes)
        low, high = shown(low), shown(high)
    u = m.u_canonical * abs(scale)
    gauge = (
        f"{m.gauge.id}: 0–{format_value(m.gauge.full_scale, system)} class {m.gauge.accuracy_class:g}"
        if m.gauge is not None
        else f"none recorded (assumed {m.assumed_label})"
    )
    return ReadingCheck(
        reading_id=m.reading.id,
        test_point=m.point.id,
        test_point_label=m.point.label,
        circuit=m.circuit.id,
        condition=m.reading.condition.describe(system),
        value=format_value(m.reading.value, system),
        expected=(
            _range_text(low, high, unit_text) + (f" {rng.typical}" if rng.typical else "")
            if rng is not None
            else "no range for this condition"
        ),
        uncertainty=f"±{u:.2g} {unit_text}",
        verdict=verdict,
        gauge=gauge,
        gauge_advice=gauge_advice(m),
        value_num=shown(m.canonical),
        low_num=low,
        high_num=high,
        uncertainty_num=u,
        unit=unit_text,
        discounted=m.invalid,
    )


def gauge_advice(m: Measured) -> str:
    """Whether the gauge suited the point (physics.gauges), in words; empty when it did."""
    if m.gauge is None or m.kind is not Kind.PRESSURE or m.gauge.kind is not Kind.PRESSURE:
        return ""
    g = m.gauge
    start = to_canonical(g.scale_start, Kind.PRESSURE) if g.scale_start is not None else None
    highest = m.point.highest_on_scale
    top = to_canonical(highest, Kind.PRESSURE) if highest is not None else None
    fluctuating = m.point.fluctuates(m.reading.condition.function)
    return _gauge_advice(
        to_canonical(g.full_scale, Kind.PRESSURE), start, g.accuracy_class, m.canonical, top, fluctuating
    )


@lru_cache(maxsize=4096)
def _gauge_advice(
    full_bar: float,
    start_bar: float | None,
    accuracy: float,
    reading_bar: float,
    highest_bar: float | None,
    fluctuating: bool = False,
) -> str:
    # Cached on plain numbers: the same readings are judged again after every new one.

    bar = unit("bar")
    try:
        check = gauge_suitability(
            Q_(full_bar, bar),
            Q_(reading_bar, bar),
            Q_(highest_bar, bar) if highest_bar is not None else None,
            Q_(start_bar, bar) if start_bar is not None else None,
            accuracy,
            fluctuating=fluctuating,
        )
    except FieldkitError as exc:  # an odd gauge record must not stop the diagnosis
        return f"gauge could not be checked: {exc}"
    return "" if check.ok else check.message


#: P(a reading at or past full scale | the gauge is at fault) and P(same | a sound gauge):
#: a needle on its stop almost never happens on a gauge of the right range. common practice.
OVERRANGE_IF_GAUGE_FAULT = 0.6
OVERRANGE_IF_SOUND = 0.02


def _gauge_findings(measured: list[Measured], hyps: list[Hypothesis]) -> list[Finding]:
    """Built-in check: a reading at or above its gauge's full scale cannot be trusted."""
    llr = math.log(OVERRANGE_IF_GAUGE_FAULT / OVERRANGE_IF_SOUND)
    out: list[Finding] = []
    for m in measured:
        if m.gauge is None or m.gauge.kind is not m.kind:
            continue
        top = to_canonical(m.gauge.full_scale, m.kind)
        if m.canonical >= top:
            ev = {h.key: llr for h in hyps if h.fault.id == "gauge_error"}
            out.append(
                Finding(
                    rule_id="gauge-overranged",
                    title=f"Gauge overranged at {m.point.label}",
                    circuit=m.circuit.id,
                    verdict=Verdict.HIGH,
                    message=(
                        f"{m.point.label} read {format_value(m.reading.value)} on a gauge whose "
                        f"scale ends at {format_value(m.gauge.full_scale)}: the reading is not valid."
                    ),
                    readings=[m.reading.id],
                    p_high=1.0,
                    action="Repeat with a gauge rated above the point's highest pressure.",
                    cautions=["gauge-rating", "gauge-overranged"],
                    source="EN 837-1 (readings beyond the scale carry no class accuracy)",
                    evidence=ev,
                )
            )
    return out


def _over_pressure_findings(measured: list[Measured]) -> list[Finding]:
    """Built-in check: a reading above the point's rating, or well above its relief setting,
    is a danger to act on at once (diagnosis.over_pressure). It is not evidence for a fault:
    the rules that read the same gauge already weigh it."""

    # The highest back pressure read in each circuit, by role: it lifts every relief it sits behind.
    back: dict[tuple[str, str], float] = {}
    for m in measured:
        key = (m.circuit.id, m.point.role.value)
        back[key] = max(back.get(key, 0.0), m.canonical)
    out: list[Finding] = []
    for m in measured:
        if m.kind is not Kind.PRESSURE:
            continue
        role = back_pressure_role(m.circuit, m.point)
        read = back.get((m.circuit.id, role.value)) if role is not None else None
        behind = read if read is not None else assumed_back_pressure(m.circuit, m.point)
        over = check_over_pressure(m.canonical, m.u_canonical * math.sqrt(3.0), m.circuit, m.point, behind)
        if over is None:
            continue
        out.append(
            Finding(
                rule_id="over-pressure",
                title=f"Over-pressure at {m.point.label}",
                circuit=m.circuit.id,
                verdict=Verdict.HIGH,
                message=f"{over.message} The relief did not open as it should.",
                value=format_value(m.reading.value),
                readings=[m.reading.id],
                p_high=1.0,
                action="Stop the test now and do not repeat it; find why the relief did not open.",
                cautions=["over-pressure"],
                source=(
                    "common practice: beyond the relief setting plus the gauge's error and a margin, "
                    "or beyond the point's rating"
                ),
            )
        )
    return out


def _cautions(
    knowledge: Knowledge,
    profile: MachineProfile,
    measured: list[Measured],
    findings: list[Finding],
    next_tests: list[NextTest],
    system: DisplaySystem = METRIC,
) -> list[CautionNote]:
    """The cautions of every step taken, of the next test, and of the findings (diagnosis.cautions)."""
    notes: dict[str, CautionNote] = {}
    urgent: set[str] = set()  # raised by what a reading showed (over-pressure): shown first

    def add(c: Caution, because: str, circuit: Circuit | None = None) -> None:
        if c.id not in notes and applies(c.needs, circuit, profile):
            notes[c.id] = CautionNote(c.id, c.title, c.text, c.severity.value, c.source, because)

    for c in knowledge.cautions.values():
        if c.always:
            add(c, "always")
    circuits = {c.id: c for c in profile.circuits}
    for f in findings:
        where = circuits.get(f.circuit) if f.circuit else None
        for cid in f.cautions:
            if cid in knowledge.cautions:
                add(knowledge.cautions[cid], f"finding: {f.title}", where)
        for c in knowledge.cautions.values():
            if c.raised_by_finding(f.rule_id, f.verdict.value):
                add(c, f"finding: {f.title}", where)
                urgent.add(c.id)
    steps: list[tuple[Circuit, TestPoint, FunctionState, str]] = [
        (m.circuit, m.point, m.reading.condition.function, "reading taken") for m in measured
    ]
    for t in next_tests[:1]:
        circuit, tp = profile.test_point(t.test_point)
        state = next((s for s in FunctionState if s.label == t.condition), FunctionState.NEUTRAL)
        steps.append((circuit, tp, state, "next test"))
        action = knowledge.actions.get(t.action) if t.action else None
        if action is not None:
            for cid in action.cautions:
                add(knowledge.cautions[cid], f"next test: {action.title.lower()}", circuit)
    for circuit, tp, state, why in steps:
        for r in cautions_for_step(knowledge.cautions, circuit, tp, state, system=system):
            add(r.caution, f"{why} at {r.because}")
    order = {s.value: n for s, n in SEVERITY_RANK.items()}
    for cid in [cid for cid in notes if set(knowledge.cautions[cid].covered_by) & notes.keys()]:
        del notes[cid]
    for cid in urgent & notes.keys():
        notes[cid].urgent = True
    return sorted(
        notes.values(), key=lambda n: (n.id != "general", order.get(n.severity, 3), n.id not in urgent)
    )


def diagnose(
    visit: Visit, profile: MachineProfile, knowledge: Knowledge | None = None, system: DisplaySystem = METRIC
) -> Diagnosis:
    """Findings, ranked faults, next tests and cautions for a visit on a machine."""
    knowledge = knowledge or default_knowledge()
    measured, notes = measure_visit(visit, profile)
    hyps = hypotheses_for(profile, knowledge.faults)
    evaluator = Evaluator(profile, measured, system)
    findings, pairs = evaluator.run(knowledge.rules, hyps)
    findings.extend(_gauge_findings(measured, hyps))
    findings.extend(_over_pressure_findings(measured))
    findings.extend(evidence_findings(visit, evidence_book(knowledge.folder, set(knowledge.faults)), hyps))
    ranked, posterior = rank(hyps, findings)
    logs = log_posterior(hyps, findings)
    two = rank_pairs(hyps, findings, logs, ranked)
    next_tests = suggest(evaluator, pairs, hyps, posterior, logs, actions=list(knowledge.actions.values()))
    checks = [check_reading(m, system, profile.test_window) for m in measured]
    cautions = _cautions(knowledge, profile, measured, findings, next_tests, system)
    if not measured:
        notes.append("no readings yet: the ranking shows the catalogue's priors")
    return Diagnosis(
        visit_id=visit.id,
        machine=profile.id,
        checks=checks,
        findings=findings,
        faults=ranked,
        next_tests=next_tests,
        cautions=cautions,
        entropy_bits=entropy_bits(posterior),
        notes=notes,
        pairs=two.pairs,
        pair_wins=two.wins,
    )


__all__ = ["Diagnosis", "Knowledge", "default_knowledge", "diagnose"]
