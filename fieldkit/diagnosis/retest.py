"""After the repair: the same points read again, side by side with what found the fault, and
whether anything dangerous is still open when the technician leaves.

A *danger finding* is a finding out of its limits (low or high) that raises a caution of
severity ``danger`` (rules/cautions.toml): a relief set above the machine's rating, a load that
can fall. It is *open* when the machine as it stands after the repair (:meth:`Visit.retest_view`)
still shows it.
"""

from __future__ import annotations

from dataclasses import dataclass

from fieldkit.diagnosis.engine import Knowledge, diagnose
from fieldkit.diagnosis.resolution import (
    as_read,
    as_read_with_limit,
    at_resolution,
    class_limit_of,
    decimals_for,
    limit_text,
)
from fieldkit.diagnosis.results import Finding, ReadingCheck, Verdict
from fieldkit.model.profile import MachineProfile
from fieldkit.model.repair import MachineStatus
from fieldkit.model.visit import Visit
from fieldkit.units import METRIC, DisplaySystem


@dataclass(frozen=True, slots=True)
class RetestRow:
    """One re-tested point and condition: before and after, each with its verdict."""

    test_point: str
    label: str
    condition: str
    expected: str
    before: str
    before_verdict: Verdict | None
    after: str
    after_verdict: Verdict


def retest_rows(
    visit: Visit, profile: MachineProfile, knowledge: Knowledge, system: DisplaySystem = METRIC
) -> list[RetestRow]:
    """Pairs each after-repair reading with the latest earlier reading at the same point taken in
    the same function state (neutral, stalled…), so like is compared with like."""
    after_ids = {r.id for r in visit.retest_readings()}
    if not after_ids:
        return []
    before_checks = diagnose(visit.diagnosis_view(), profile, knowledge, system).checks
    after_checks = [
        c
        for c in diagnose(visit.retest_view(), profile, knowledge, system).checks
        if c.reading_id in after_ids
    ]
    readings = {r.id: r for r in visit.readings}

    def state(check: ReadingCheck) -> object:
        return readings[check.reading_id].condition.function

    rows: list[RetestRow] = []
    for a in after_checks:
        earlier = [b for b in before_checks if b.test_point == a.test_point and state(b) == state(a)]
        b = earlier[-1] if earlier else None
        rows.append(
            RetestRow(
                test_point=a.test_point,
                label=a.test_point_label,
                condition=a.condition,
                expected=a.expected,
                before=as_read(b) if b else "not measured",
                before_verdict=b.verdict if b else None,
                after=as_read(a),
                after_verdict=a.verdict,
            )
        )
    return rows


def danger_findings(findings: list[Finding], knowledge: Knowledge) -> list[Finding]:
    dangerous = {c.id for c in knowledge.cautions.values() if c.severity.value == "danger"}
    return [
        f
        for f in findings
        if f.verdict in (Verdict.LOW, Verdict.HIGH) and any(cid in dangerous for cid in f.cautions)
    ]


def open_dangers(visit: Visit, profile: MachineProfile, knowledge: Knowledge) -> list[Finding]:
    """Danger findings the machine still shows after the repair (or at all, with no re-test)."""
    return danger_findings(diagnose(visit.retest_view(), profile, knowledge).findings, knowledge)


def completion_problems(visit: Visit, dangers: list[Finding]) -> list[str]:
    """Why the card cannot be marked complete yet; empty when it can."""
    problems: list[str] = []
    departure = visit.departure
    if dangers:
        names = "; ".join(f.title for f in dangers)
        if departure is None:
            problems.append(
                f"a danger finding is still open ({names}): record the machine's status (F6) and say why"
            )
        elif departure.status is MachineStatus.FIT:
            problems.append(
                f"a danger finding is still open ({names}): 'fit to run' cannot stand; re-test after the "
                "repair, or choose 'fit with limits' or 'do not operate' and say why"
            )
        elif not departure.why.strip():
            problems.append(f"a danger finding is still open ({names}): the status must say why")
    return problems


__all__ = [
    "RetestRow",
    "as_read",
    "as_read_with_limit",
    "at_resolution",
    "class_limit_of",
    "decimals_for",
    "limit_text",
    "completion_problems",
    "danger_findings",
    "open_dangers",
    "retest_rows",
]
