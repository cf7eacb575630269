"""The test plan: every test point of the machine, grouped by circuit, with where it stands.

A point's state is worked out from the diagnosis's reading checks, never stored: it is always
what the readings say now. Skipping a point is the one state a technician sets by hand; it is
written into the visit notes as a plain sentence, so the job card shows it and it survives a
restart without any field of its own.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from enum import StrEnum

from fieldkit.diagnosis.results import Diagnosis, ReadingCheck, Verdict
from fieldkit.errors import FieldkitError
from fieldkit.model.profile import Circuit, MachineProfile, TestPoint
from fieldkit.model.visit import Reading, Visit
from fieldkit.units import DisplaySystem, format_value

SKIP_PREFIX = "Skipped test point"
_SKIP_LINE = re.compile(
    rf"^{SKIP_PREFIX} (?P<id>[a-z0-9][a-z0-9_\-]*\.[a-z0-9][a-z0-9_\-]*)\b[^:\n]*: ?(?P<reason>.*)$"
)


class PointState(StrEnum):
    NOT_MEASURED = "not measured"
    IN_RANGE = "in range"
    OUT_OF_RANGE = "out of range"
    INCONCLUSIVE = "inconclusive"
    SKIPPED = "skipped"

    @property
    def glyph(self) -> str:
        """A symbol that carries the state without colour."""
        return {
            "not measured": "·",
            "in range": "✓",
            "out of range": "✗",
            "inconclusive": "?",
            "skipped": "–",
        }[self.value]


@dataclass(slots=True)
class PlanPoint:
    circuit: Circuit
    point: TestPoint
    state: PointState
    checks: list[ReadingCheck] = field(default_factory=list)
    why: str = ""

    @property
    def id(self) -> str:
        return self.point.id


@dataclass(slots=True)
class PlanCircuit:
    circuit: Circuit
    points: list[PlanPoint]


def skipped_points(notes: str) -> dict[str, str]:
    """Test point id → reason, from the skip sentences in the visit notes."""
    found: dict[str, str] = {}
    for line in notes.splitlines():
        m = _SKIP_LINE.match(line.strip())
        if m:
            found[m.group("id")] = m.group("reason").strip()
    return found


def skip_sentence(point: TestPoint, reason: str) -> str:
    reason = " ".join(reason.split()) or "no reason given"
    return f"{SKIP_PREFIX} {point.id} ({point.label}): {reason}"


def notes_with_skip(notes: str, point: TestPoint, reason: str) -> str:
    """The notes with one skip sentence for the point (replacing an earlier one)."""
    kept = notes_without_skip(notes, point.id)
    line = skip_sentence(point, reason)
    return f"{kept.rstrip()}\n{line}" if kept.strip() else line


def notes_without_skip(notes: str, point_id: str) -> str:
    lines = [
        ln
        for ln in notes.splitlines()
        if not ((m := _SKIP_LINE.match(ln.strip())) and m.group("id") == point_id)
    ]
    return "\n".join(lines)


def state_of(checks: list[ReadingCheck], skipped: str | None) -> tuple[PointState, str]:
    """One state for a point from all its readings (it may be read under several conditions):
    any reading out of range wins, then any that cannot be called, else in range."""
    if not checks:
        if skipped is not None:
            return PointState.SKIPPED, skipped or "skipped"
        return PointState.NOT_MEASURED, ""
    valid = [c for c in checks if not c.discounted]
    if any(c.verdict in (Verdict.LOW, Verdict.HIGH) for c in valid):
        bad = next(c for c in valid if c.verdict in (Verdict.LOW, Verdict.HIGH))
        return PointState.OUT_OF_RANGE, f"{bad.value} is {bad.verdict.label} ({bad.condition})"
    if len(valid) < len(checks):
        off = next(c for c in checks if c.discounted)
        return PointState.INCONCLUSIVE, f"taken outside the test conditions: {off.discounted}"
    if any(c.verdict is Verdict.INCONCLUSIVE for c in valid):
        return PointState.INCONCLUSIVE, "within the gauge's error of a limit"
    if any(c.verdict is Verdict.NOT_MEASURED for c in valid):
        return PointState.INCONCLUSIVE, "no expected range for the condition it was read in"
    return PointState.IN_RANGE, ""


def build_plan(profile: MachineProfile, diagnosis: Diagnosis | None, notes: str) -> list[PlanCircuit]:
    skipped = skipped_points(notes)
    checks: dict[str, list[ReadingCheck]] = {}
    for c in diagnosis.checks if diagnosis is not None else []:
        checks.setdefault(c.test_point, []).append(c)
    plan: list[PlanCircuit] = []
    for circuit in profile.circuits:
        points = []
        for tp in circuit.test_points:
            mine = checks.get(tp.id, [])
            state, why = state_of(mine, skipped.get(tp.id))
            points.append(PlanPoint(circuit, tp, state, mine, why))
        plan.append(PlanCircuit(circuit, points))
    return plan


def counts(plan: list[PlanCircuit]) -> dict[PointState, int]:
    out = {s: 0 for s in PointState}
    for pc in plan:
        for p in pc.points:
            out[p.state] += 1
    return out


@dataclass(slots=True)
class OtherPoint:
    """A test point id that standing readings of this visit name but the machine's profile no
    longer has (the profile was edited after the visit): it has no step, so it gets a row of its
    own at the end of the plan, from which its readings are moved or deleted."""

    point_id: str
    readings: list[Reading]
    summary: str


def other_points(visit: Visit, profile: MachineProfile, system: DisplaySystem) -> list[OtherPoint]:
    """The readings standing at points the profile does not have, grouped by point, in the order
    first entered. Deleted or corrected ones are history, not a task: left out."""
    known = {tp.id for _c, tp in profile.all_test_points()}
    replaced = {r.replaces for r in visit.readings if r.replaces}
    found: dict[str, list[Reading]] = {}
    for r in visit.readings:
        if r.test_point not in known and r.deleted_at is None and r.id not in replaced:
            found.setdefault(r.test_point, []).append(r)
    return [OtherPoint(pid, rs, ", ".join(_shown(r, system) for r in rs)) for pid, rs in found.items()]


def _shown(r: Reading, system: DisplaySystem) -> str:
    if r.unreadable:
        return r.entered or "unreadable"
    try:
        return format_value(r.value, system)
    except FieldkitError:
        return r.entered or "?"
