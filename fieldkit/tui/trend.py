"""Earlier visits to the same machine, side by side, so wear shows over time.

Case drain flows are compared at the profile's reference oil temperature: leakage through a
pump's clearances is laminar and scales with 1/viscosity (physics.fluid.normalised_leakage,
ASTM D341 viscosity line), so a reading taken with hot thin oil is not mistaken for wear.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from fieldkit.errors import FieldkitError
from fieldkit.model.condition import FunctionState
from fieldkit.model.profile import MachineProfile, TestPoint
from fieldkit.model.roles import Role
from fieldkit.model.visit import Reading
from fieldkit.physics.fluid import grade, normalised_leakage
from fieldkit.store.base import VisitSummary
from fieldkit.store.sqlite import SqliteVisitStore
from fieldkit.tui.step import SHORT_STATE
from fieldkit.units import DisplaySystem, Quantity, format_value, to_canonical

NORMALISED_ROLES = {Role.PUMP_CASE_DRAIN_FLOW, Role.MOTOR_CASE_DRAIN_FLOW}
SPARKS = "▁▂▃▄▅▆▇█"


@dataclass(slots=True)
class HistoryRow:
    point: TestPoint
    function: FunctionState
    label: str
    cells: list[str]
    values: list[float | None]
    normalised: bool = False

    @property
    def trend(self) -> str:
        return sparkline(self.values)

    @property
    def change(self) -> str:
        """First to last, in per cent of the first (empty with fewer than two values)."""
        got = [v for v in self.values if v is not None]
        if len(got) < 2 or got[0] == 0:
            return ""
        return f"{(got[-1] - got[0]) / abs(got[0]) * 100:+.0f} %"


@dataclass(slots=True)
class HistoryTable:
    visits: list[VisitSummary]
    rows: list[HistoryRow] = field(default_factory=list)
    scope: str = ""


def sparkline(values: list[float | None]) -> str:
    """One character per visit, low to high; a space where the visit has no reading."""
    got = [v for v in values if v is not None]
    if not got:
        return " " * len(values)
    lo, hi = min(got), max(got)
    out = []
    for v in values:
        if v is None:
            out.append(" ")
        elif hi == lo:
            out.append(SPARKS[3])
        else:
            out.append(SPARKS[round((v - lo) / (hi - lo) * (len(SPARKS) - 1))])
    return "".join(out)


def _oil_at(reading: Reading, oil_readings: list[Reading]) -> Quantity | None:
    if reading.condition.oil_temperature is not None:
        return reading.condition.oil_temperature
    if not oil_readings:
        return None
    return min(oil_readings, key=lambda r: abs((r.taken_at - reading.taken_at).total_seconds())).value


def _normalised(reading: Reading, oil: Quantity | None, profile: MachineProfile) -> Quantity | None:
    if oil is None:
        return None

    try:
        return normalised_leakage(
            reading.value, oil, profile.reference_oil_temperature, grade(profile.oil_grade).curve
        )
    except FieldkitError:
        return None


def history_table(
    store: SqliteVisitStore, profile: MachineProfile, system: DisplaySystem, *, serial: str = ""
) -> HistoryTable:
    """Readings of every test point over the visits to this machine model, oldest visit first;
    with ``serial``, only the visits to that one machine."""
    points = {tp.id: tp for _c, tp in profile.all_test_points()}
    found = store.machine_history(profile.id)
    scope = f"every {profile.name}"
    if serial:
        found = [(s, rs) for s, rs in found if store.get_visit(s.id).machine_serial == serial]
        scope = f"serial {serial}"
    visits = [s for s, _ in found]
    table = HistoryTable(visits, scope=scope)
    by_key: dict[tuple[str, FunctionState], HistoryRow] = {}
    order = {tp_id: i for i, tp_id in enumerate(points)}
    for col, (_summary, readings) in enumerate(found):
        oil = [
            r
            for r in readings
            if r.test_point in points and points[r.test_point].role is Role.OIL_TEMPERATURE
        ]
        for r in sorted(readings, key=lambda r: r.taken_at):
            tp = points.get(r.test_point)
            if tp is None:
                continue
            key = (tp.id, r.condition.function)
            row = by_key.get(key)
            if row is None:
                norm = tp.role in NORMALISED_ROLES
                ref = f" at {format_value(profile.reference_oil_temperature, system)}" if norm else ""
                row = HistoryRow(
                    tp,
                    r.condition.function,
                    f"{tp.label}{ref} · {SHORT_STATE[r.condition.function]}",
                    [""] * len(visits),
                    [None] * len(visits),
                    norm,
                )
                by_key[key] = row
            shown = r.value
            if row.normalised:
                at_ref = _normalised(r, _oil_at(r, oil), profile)
                if at_ref is None:
                    row.cells[col] = format_value(r.value, system) + " (no oil temp)"
                    continue
                shown = at_ref
            row.cells[col] = format_value(shown, system)
            row.values[col] = to_canonical(shown, tp.kind)
    table.rows = sorted(
        by_key.values(), key=lambda row: (order[row.point.id], list(FunctionState).index(row.function))
    )
    return table
