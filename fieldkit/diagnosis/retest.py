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
    the same function state (neutral, stalled…), so like is compared with like; a re-tested
    reading without a range of its own is shown through the finding derived from it."""
    after_ids = {r.id for r in visit.retest_readings()}
    if not after_ids:
        return []
    before = diagnose(visit.diagnosis_view(), profile, knowledge, system)
    after = diagnose(visit.retest_view(), profile, knowledge, system)
    before_checks = before.checks
    after_checks = [c for c in after.checks if c.reading_id in after_ids]
    readings = {r.id: r for r in visit.readings}
    conditions = {c.reading_id: c.condition for c in after_checks}
    # A re-tested reading with no range of its own in its condition (pump outlet and LS signal
    # under load) is judged through what is derived from it (the margin): that row stands in
    # for it, so the table never says "no range" where the card has a verdict.
    rangeless = {c.reading_id for c in after_checks if c.verdict is Verdict.NOT_MEASURED}
    derived = _derived_rows(before.findings, after.findings, rangeless, conditions)
    folded = {rid for _row, used in derived for rid in used}

    def state(check: ReadingCheck) -> object:
        return readings[check.reading_id].condition.function

    rows: list[RetestRow] = []
    for a in after_checks:
        if a.reading_id in folded and a.verdict is Verdict.NOT_MEASURED:
            continue
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
    return rows + [row for row, _used in derived]


_JUDGED = (Verdict.LOW, Verdict.IN_RANGE, Verdict.HIGH, Verdict.INCONCLUSIVE)


def _derived_rows(
    before: list[Finding], after: list[Finding], rangeless: set[str], conditions: dict[str, str]
) -> list[tuple[RetestRow, set[str]]]:
    """Findings computed from two or more readings (the load-sensing margin: pump outlet minus
    LS signal in one condition) that re-tested readings without a range of their own fed: the
    derived value before and after, each with its verdict, and the readings it was made of."""
    earlier = {f.key: f for f in before}
    out: list[tuple[RetestRow, set[str]]] = []
    for f in after:
        used = set(f.readings)
        if len(used) < 2 or not used & rangeless or f.verdict not in _JUDGED:
            continue
        b = earlier.get(f.key)
        judged_before = b is not None and b.verdict in _JUDGED
        first = sorted(used & rangeless)[0]
        out.append(
            (
                RetestRow(
                    test_point=f.key,
                    label=f.title,
                    condition=conditions.get(first, ""),
                    expected=_limits(f),
                    before=b.value if b is not None and judged_before else "not measured",
                    before_verdict=b.verdict if b is not None and judged_before else None,
                    after=f.value,
                    after_verdict=f.verdict,
                ),
                used,
            )
        )
    return out


def _limits(f: Finding) -> str:
    low, high = (x if x.strip() not in ("", "—") else "" for x in (f.low, f.high))
    if low and high:
        (low_n, _, low_unit), (high_n, _, high_unit) = low.rpartition(" "), high.rpartition(" ")
        # written as the ranges of single readings are: "19.2–28.8 bar"
        return f"{low_n}–{high_n} {high_unit}" if low_n and low_unit == high_unit else f"{low} to {high}"
    if low:
        return f"at least {low}"
    return f"at most {high}" if high else "no range"


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
