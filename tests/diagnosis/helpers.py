"""Builders shared by the diagnosis engine tests: sample data, visits with chosen readings, and a
"scene" for every rule (a machine, a circuit and the readings that make the rule speak).

Imported as ``diagnosis_helpers`` (tests/diagnosis/conftest.py registers it under that name, so
it never collides with a helpers module of another test folder).

Scenes are generated from the data, not written by hand: the rule's own limits are evaluated
against the machine's figures (or the test point's expected range), and the reading the rule
reads is solved for so that the rule's value lands clearly below, inside or above them. A new
rule therefore gets its tests without anyone writing numbers for it.
"""

from __future__ import annotations

import math
import tempfile
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from datetime import UTC, datetime, timedelta
from functools import lru_cache
from pathlib import Path

import pint

from fieldkit.diagnosis.catalogue import Fault
from fieldkit.diagnosis.engine import Knowledge, default_knowledge, diagnose
from fieldkit.diagnosis.findings import EVIDENCE_WEIGHT
from fieldkit.diagnosis.results import Diagnosis, Finding, Verdict
from fieldkit.diagnosis.rulepack import Rule
from fieldkit.diagnosis.symbols import DERIVED, MACHINE_FIGURES, SYMBOLS
from fieldkit.expr import si_value
from fieldkit.model.condition import Condition, FunctionState
from fieldkit.model.gauge import Gauge
from fieldkit.model.loading import ProfileLibrary, load_profile, load_templates
from fieldkit.model.parameters import PARAMETERS
from fieldkit.model.profile import Circuit, MachineProfile, ReliefLayout, TestPoint
from fieldkit.model.roles import Role
from fieldkit.model.visit import Reading, Visit
from fieldkit.units import CANONICAL_UNIT, Q_, Kind, to_canonical, unit

ROOT = Path(__file__).resolve().parents[2]
RULES = ROOT / "rules"
PROFILES = ROOT / "sample_readings" / "profiles"
VISITS = ROOT / "sample_readings" / "visits"
DEMO_OPEN_VISIT = VISITS / "demo-open-visit.json"

#: Invented start time for the visits these tests build (demo data, fictional).
T0 = datetime(2025, 9, 1, 7, 30, tzinfo=UTC)
#: Accuracy class of the gauges a scene uses: EN 837-1's best class, so that a value placed a
#: quarter of the band beyond a limit is many standard uncertainties from it.
PRECISE_CLASS = 0.1


# --- sample data ----------------------------------------------------------------------------


@lru_cache(maxsize=1)
def library() -> ProfileLibrary:
    """The demo profiles only (never the user's folder: this runs at collection time too)."""
    return ProfileLibrary([PROFILES], RULES / "templates")


def knowledge() -> Knowledge:
    return default_knowledge(RULES)


def load_visit(path: Path) -> Visit:
    return Visit.model_validate_json(path.read_text(encoding="utf-8"))


def readings_only(visit: Visit) -> Visit:
    """The visit as its gauge readings found it: before the repair, without the complaint's symptoms
    and the observations (their evidence is checked by hand in test_evidence.py)."""
    return visit.diagnosis_view().model_copy(update={"symptoms": [], "observations": []})


def load_readings_only(path: Path) -> Visit:
    return readings_only(load_visit(path))


def sample_visit_paths(with_scenario: bool = True) -> list[Path]:
    paths = sorted(VISITS.glob("*.json"))
    if with_scenario:
        paths = [p for p in paths if load_visit(p).scenario is not None]
    return paths


def diagnose_sample(path: Path) -> tuple[Visit, MachineProfile, Diagnosis]:
    visit = load_visit(path)
    profile = library().get(visit.machine)
    # As the app does (Workbench.diagnose): the diagnosis reads the readings taken before the repair.
    return visit, profile, diagnose(visit.diagnosis_view(), profile, knowledge())


def diagnose_readings_only(path: Path) -> tuple[Visit, MachineProfile, Diagnosis]:
    """As :func:`diagnose_sample`, from the gauge readings alone (the rules' posterior, unmixed)."""
    visit = load_readings_only(path)
    profile = library().get(visit.machine)
    return visit, profile, diagnose(visit, profile, knowledge())


#: A small fictional machine for the rules no demo machine can exercise (a pilot supply, a
#: pressure-compensated pump, a valve bank's work ports, steering). Its test points and ranges come from the
#: circuit templates (each with its source); the compensator figure is an invented test figure,
#: like the demo profiles'.
BENCH_PROFILE_TOML = """
id = "test-bench-rig"
name = "Fictional bench rig for rule tests"
oil_grade = "VG46"
rated_speed = "1500 rpm"
rated_max_pressure = "280 bar"

[[circuits]]
id = "pilot"
name = "Pilot supply"
template = "pilot_supply"

[[circuits]]
id = "pc"
name = "Compensated pump circuit"
template = "pressure_compensated"
reliefs = [ { id = "main", setting = "250 bar" } ]
[circuits.parameters]
compensator_setting = "210 bar"
main_relief_setting = "250 bar"
pump_displacement = "45 cc/rev"

# A two-section open-centre valve bank: section 1's port A relief is set below the main relief
# (so that port reads its own setting), every other port relief at the template's typical value.
[[circuits]]
id = "bank"
name = "Open-centre valve bank"
template = "open_centre_sections"
omit_test_points = ["s3_a", "s3_b"]
[circuits.parameters]
main_relief_setting = "175 bar"
port_1a_relief_setting = "140 bar"
pump_displacement = "28 cc/rev"

# Steering behind a priority valve on a load-sensing pump, with its own figures.
[[circuits]]
id = "steer"
name = "Steering with priority valve"
template = "steering_priority"
[circuits.parameters]
compensator_setting = "240 bar"
steering_relief_setting = "170 bar"
steering_standby_setting = "8 bar"
priority_flow = "40 L/min"
pump_displacement = "60 cc/rev"
"""


@lru_cache(maxsize=1)
def bench_profile() -> MachineProfile:
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "test-bench-rig.toml"
        path.write_text(BENCH_PROFILE_TOML, encoding="utf-8")
        return load_profile(path, load_templates(RULES / "templates"))


def scene_profiles() -> list[MachineProfile]:
    """Demo machines first (sorted by id), then the bench rig."""
    return [*library().profiles(), bench_profile()]


# --- visits -----------------------------------------------------------------------------------


def canonical_unit(kind: Kind) -> pint.Unit:
    return unit(CANONICAL_UNIT[kind])


def quantity(kind: Kind, canonical: float) -> pint.Quantity:
    return Q_(float(canonical), canonical_unit(kind))


def precise_gauge(gid: str, kind: Kind, canonical: float, accuracy_class: float = PRECISE_CLASS) -> Gauge:
    """A gauge whose scale covers the value twice over (a compound scale for a vacuum)."""
    top = max(2.0 * abs(canonical), 1.0)
    start = -top if canonical < 0 else None
    standard = "EN 837-1" if kind is Kind.PRESSURE else "test instrument, % of span"
    return Gauge(
        id=gid,
        label=f"test gauge {gid}",
        full_scale=quantity(kind, top),
        scale_start=None if start is None else quantity(kind, start),
        accuracy_class=accuracy_class,
        standard=standard,
    )


@dataclass
class VisitBuilder:
    """Readings at a machine's test points, in order, with the gauges that took them."""

    profile: MachineProfile
    visit_id: str = "test-visit"
    oil_c: float | None = None  # oil temperature stated on every reading; None: the reference temperature
    readings: list[Reading] = field(default_factory=list)
    gauges: list[Gauge] = field(default_factory=list)

    def _oil(self) -> float:
        if self.oil_c is not None:
            return self.oil_c
        return to_canonical(self.profile.reference_oil_temperature, Kind.TEMPERATURE)

    def add(
        self,
        point_id: str,
        canonical: float,
        state: FunctionState = FunctionState.NEUTRAL,
        *,
        gauge: Gauge | None = None,
        oil_c: float | None = None,
    ) -> Reading:
        _circuit, point = self.profile.test_point(point_id)
        n = len(self.readings) + 1
        if gauge is None:
            gauge = precise_gauge(f"g{n:02d}", point.kind, canonical)
        if all(g.id != gauge.id for g in self.gauges):
            self.gauges.append(gauge)
        oil = oil_c if oil_c is not None else self._oil()
        if point.role is Role.OIL_TEMPERATURE:
            oil = canonical
        reading = Reading(
            id=f"r{n:02d}",
            test_point=point.id,
            value=quantity(point.kind, canonical),
            reference="gauge" if point.kind is Kind.PRESSURE else None,
            condition=Condition(
                function=state,
                speed=self.profile.rated_speed,
                oil_temperature=quantity(Kind.TEMPERATURE, oil),
            ),
            gauge=gauge.id,
            taken_at=T0 + timedelta(minutes=5 * n),
        )
        self.readings.append(reading)
        return reading

    def build(self) -> Visit:
        return Visit(
            id=self.visit_id,
            job_number="TEST-0001",
            machine=self.profile.id,
            gauges=list(self.gauges),
            readings=list(self.readings),
        )


def with_readings(visit: Visit, extra: Iterable[Reading], gauges: Iterable[Gauge] = ()) -> Visit:
    """The visit with more readings (and gauges) appended: a technician carrying on."""
    have = {g.id for g in visit.gauges}
    return visit.model_copy(
        update={
            "readings": [*visit.readings, *extra],
            "gauges": [*visit.gauges, *(g for g in gauges if g.id not in have)],
        }
    )


def chilled(visit: Visit, profile: MachineProfile, oil_c: float) -> Visit:
    """The same readings, as if taken with the oil at ``oil_c``: every reading's stated oil
    temperature, and every oil temperature reading, set to it."""
    oil = quantity(Kind.TEMPERATURE, oil_c)
    points = {tp.id: tp for _c, tp in profile.all_test_points()}
    readings = []
    for r in visit.readings:
        update: dict[str, object] = {"condition": r.condition.model_copy(update={"oil_temperature": oil})}
        if points[r.test_point].role is Role.OIL_TEMPERATURE:
            update["value"] = oil
        readings.append(r.model_copy(update=update))
    return visit.model_copy(update={"readings": readings})


def finding(d: Diagnosis, rule_id: str, circuit: str | None) -> Finding:
    found = [f for f in d.findings if f.rule_id == rule_id and f.circuit == circuit]
    if len(found) > 1:
        # A rule read point by point (each work port) speaks once per point: the scene measured one.
        found = [f for f in found if f.verdict is not Verdict.NOT_MEASURED]
    assert len(found) == 1, f"expected one finding of {rule_id}@{circuit}, got {[f.key for f in d.findings]}"
    return found[0]


# --- hypotheses, written apart from the engine ---------------------------------------------------


def hypothesis_keys(profile: MachineProfile, faults: dict[str, Fault]) -> dict[str, float]:
    """Single-fault hypotheses and normalised priors, as the ranking's docstring states them:
    'no fault', each machine-wide fault once, each circuit fault once per circuit it can occur in."""
    priors: dict[str, float] = {}
    for fault in faults.values():
        if "*" in fault.circuits:
            priors[fault.id] = fault.prior
        else:
            for c in profile.circuits:
                if c.kind.value in fault.circuits:
                    priors[f"{fault.id}@{c.id}"] = fault.prior
    total = sum(priors.values())
    return {k: p / total for k, p in priors.items()}


def fault_of(key: str) -> str:
    return key.split("@", 1)[0]


def circuit_of(key: str) -> str | None:
    return key.split("@", 1)[1] if "@" in key else None


def table_likelihood(rule: Rule, fault: str) -> tuple[float, float, float]:
    """P(low), P(in range), P(high) for a fault as the ranking uses them: read from the rule file's
    tables (a fault the rule does not name reads like a healthy machine, rulepack docstring), then
    weighted (:func:`weighted`)."""
    spec = rule.spec
    low = spec.if_low.get(fault, spec.healthy.low)
    high = spec.if_high.get(fault, spec.healthy.high)
    # A fault that spoils one pressure reading of the visit (faults.toml: gauge_error) may have
    # spoilt any pressure rule that does not name it: its share is added to low and to high.
    entry = knowledge().faults.get(fault)
    share = entry.spoils_one_pressure_reading if entry is not None else 0.0
    if share and fault not in spec.if_low and fault not in spec.if_high and _reads_pressure(rule):
        share = min(share, (1.0 - low - high - 0.01) / 2)
        low, high = low + share, high + share
    return weighted((low, 1.0 - low - high, high))


def _reads_pressure(rule: Rule) -> bool:
    from fieldkit.expr.dims import kind_dimension

    return bool(rule.value.result == kind_dimension(Kind.PRESSURE))


def weighted(table: tuple[float, float, float]) -> tuple[float, float, float]:
    """The model the ranking uses: each table to the power findings.EVIDENCE_WEIGHT, normalised
    again over its three outcomes."""
    powered = [p**EVIDENCE_WEIGHT for p in table]
    return powered[0] / sum(powered), powered[1] / sum(powered), powered[2] / sum(powered)


def likelihood_for(
    rule: Rule, finding_circuit: str | None, key: str, profile: MachineProfile | None = None
) -> tuple[float, float, float]:
    """A hypothesis in another circuit than the finding's reads like a healthy machine, except
    (DEVELOPERS.md, "supplied_by") one in the circuit that feeds the finding's circuit, when the
    rule names that feeding kind in supplied_from and the fault cannot occur in the finding's
    circuit itself (needs the profile)."""
    where = circuit_of(key)
    same_place = finding_circuit is None or where is None or where == finding_circuit
    if not same_place and profile is not None:
        circuits = {c.id: c for c in profile.circuits}
        fed = circuits[finding_circuit]
        feeder = circuits[where]
        fault = knowledge().faults[fault_of(key)]
        same_place = (
            fed.supplied_by == where
            and feeder.kind.value in rule.spec.supplied_from
            and fed.kind.value not in fault.circuits
        )
    return table_likelihood(rule, fault_of(key) if same_place else "no_fault")


# --- scenes: one rule, one machine, readings that make it speak --------------------------------


class NoScene(Exception):
    """No machine here has what the rule reads."""


@dataclass(frozen=True)
class ReadingNeed:
    name: str  # the name in the rule's expression
    role: Role
    state: FunctionState
    point: TestPoint


@dataclass(frozen=True)
class Scene:
    rule: Rule
    profile: MachineProfile
    circuit: Circuit | None  # None: a machine-wide rule
    needs: tuple[ReadingNeed, ...]
    free: str  # the reading solved for; the others sit at their nominal values
    nominal: dict[str, float]  # reading name → canonical value
    figures: dict[str, float]  # every other name the rule uses → SI value
    low: float | None  # the rule's limits for this machine, SI
    high: float | None
    listed_keys: tuple[str, ...]  # hypotheses of the faults the rule names, in its scope

    @property
    def circuit_id(self) -> str | None:
        return self.circuit.id if self.circuit is not None else None

    @property
    def sides(self) -> tuple[str, ...]:
        """The outcomes this machine can show: 'low' and 'high' where a limit exists, and 'in_range'."""
        out = []
        if self.low is not None:
            out.append("low")
        out.append("in_range")
        if self.high is not None:
            out.append("high")
        return tuple(out)

    def target(self, side: str) -> float:
        """Where the rule's value goes, SI: a quarter of the band beyond a limit (15 % of the
        limit when only one limit exists), or the middle of the band."""
        low, high = self.low, self.high
        if low is not None and high is not None:
            span = high - low
            return {"low": low - 0.25 * span, "in_range": (low + high) / 2, "high": high + 0.25 * span}[side]
        limit = low if low is not None else high
        assert limit is not None
        step = 0.15 * abs(limit) if limit != 0 else 1.0
        if low is not None:
            return {"low": low - step, "in_range": low + step}[side]
        return {"in_range": high - step, "high": high + step}[side]  # type: ignore[operator]

    def value_at(self, free_si: float, together: bool = False) -> float:
        """The rule's value with the free reading at ``free_si``; with ``together``, every reading
        of the free one's kind moves with it (for min/max of two sides, which is piecewise)."""
        env = dict(self.figures)
        free_kind = next(n for n in self.needs if n.name == self.free).point.kind
        for need in self.needs:
            nominal = si_of(need.point.kind, self.nominal[need.name])
            moves = need.name == self.free or (together and need.point.kind is free_kind)
            env[need.name] = free_si if moves else nominal
        # A leakage normalised to the reference temperature (pump_case_drain_flow_at_ref) is
        # read at that temperature here, so the viscosity ratio is exactly 1: the reading itself.
        return float(self.rule.value.evaluate(env))

    def readings_for(self, side: str) -> dict[str, float]:
        """Canonical value of every reading the rule needs, its value landing on ``side``."""
        free_need = next(n for n in self.needs if n.name == self.free)
        x0 = si_of(free_need.point.kind, self.nominal[self.free])
        step = abs(x0) * 0.1 if x0 != 0 else 1.0
        for together in (False, True):
            f0, f1, f2 = (self.value_at(x0 + k * step, together) for k in range(3))
            slope = (f1 - f0) / step
            if slope != 0 and math.isclose(f2 - f1, f1 - f0, rel_tol=1e-6, abs_tol=1e-12):
                break
        assert slope != 0 and math.isclose(f2 - f1, f1 - f0, rel_tol=1e-6, abs_tol=1e-12), (
            f"{self.rule.id}: value is not linear in {self.free}; extend the scene builder"
        )
        x = x0 + (self.target(side) - f0) / slope
        out = dict(self.nominal)
        out[self.free] = canonical_of(free_need.point.kind, x)
        if together:
            for need in self.needs:
                if need.point.kind is free_need.point.kind and need.name in self.rule.value.names:
                    out[need.name] = canonical_of(need.point.kind, x)
        return out

    def visit(self, side: str) -> Visit:
        values = self.readings_for(side)
        b = VisitBuilder(self.profile, visit_id=f"scene-{self.rule.id}-{side}".replace("_", "-")[:40])
        for need in self.needs:
            b.add(need.point.id, values[need.name], need.state)
        return b.build()


def si_of(kind: Kind, canonical: float) -> float:
    return si_value(quantity(kind, canonical))


def canonical_of(kind: Kind, si: float) -> float:
    if kind is Kind.TEMPERATURE:
        return si - 273.15
    return si / si_value(quantity(kind, 1.0))


def _primary(points: Sequence[TestPoint], role: Role) -> TestPoint | None:
    """Rules read a role at its first point in the circuit (findings.Evaluator)."""
    return next((tp for tp in points if tp.role is role), None)


def _state_for(point: TestPoint, allowed: Sequence[FunctionState], need_range: bool) -> FunctionState | None:
    states = list(allowed) or list(FunctionState)
    for s in states:
        if point.expected_for(Condition(function=s)) is not None:
            return s
    return None if need_range else states[0]


def _nominal(point: TestPoint, state: FunctionState) -> float:
    """The middle of the point's expected range for the state (any range of the point if none)."""
    rng = point.expected_for(Condition(function=state)) or (point.expected[0] if point.expected else None)
    if rng is None:
        raise NoScene(f"{point.id} has no expected range to take a nominal value from")
    lo = to_canonical(rng.low, point.kind) if rng.low is not None else None
    hi = to_canonical(rng.high, point.kind) if rng.high is not None else None
    if lo is not None and hi is not None:
        return (lo + hi) / 2
    edge = lo if lo is not None else hi
    assert edge is not None
    return edge * 0.5 if hi is not None else edge * (0.5 if edge < 0 else 1.5)


def _layout_bar(layout: ReliefLayout | str, settings: dict[str, float]) -> float:
    """Full-flow pressure of a relief network: series settings add, the lowest parallel one
    governs (field notes, [calc])."""
    if isinstance(layout, str):
        return settings[layout]
    parts = [_layout_bar(m, settings) for m in layout.members()]
    return sum(parts) if layout.series else min(parts)


def deadhead_bar(circuit: Circuit) -> float:
    """What a deadheaded pump reads with no return back pressure: each valve at full flow
    (setting + override, the profile's definition of override), through the layout."""
    settings = {
        r.id: to_canonical(r.setting, Kind.PRESSURE)
        + (to_canonical(r.override, Kind.PRESSURE) if r.override is not None else 0.0)
        for r in circuit.reliefs
    }
    if circuit.relief_layout is not None:
        return _layout_bar(circuit.relief_layout, settings)
    return min(settings.values())


def _figure(name: str, profile: MachineProfile, circuits: list[Circuit]) -> float:
    if name in PARAMETERS:
        for c in circuits:
            if name in c.parameters:
                return si_value(c.parameters[name])
        raise NoScene(f"no circuit has '{name}'")
    if name in MACHINE_FIGURES:
        w = profile.test_window
        return si_value(
            {
                "rated_speed": profile.rated_speed,
                "rated_max_pressure": profile.rated_max_pressure,
                "reference_oil_temperature": profile.reference_oil_temperature,
                "test_oil_min": w.oil_min,
                "test_oil_max": w.oil_max,
                "speed_tolerance": Q_(w.speed_tolerance_pct, "percent"),
            }[name]
        )
    if name == "relief_deadhead":
        if len(circuits) != 1 or not circuits[0].reliefs:
            raise NoScene("no relief layout")
        return si_of(Kind.PRESSURE, deadhead_bar(circuits[0]))
    if name == "cross_port_stall_expected":
        # Setting plus the low side's charge (middle of the in-stroke charge range) when the
        # setting is a differential (physics.closed_loop.cross_port_stall_reading).
        setting = _figure("high_pressure_relief_setting", profile, circuits)
        loop = circuits[0]
        if loop.cross_port_relief_convention != "differential":
            return setting
        charge = _primary(loop.test_points, Role.CHARGE_PRESSURE)
        if charge is None:
            raise NoScene("no charge point")
        return setting + si_of(Kind.PRESSURE, _nominal(charge, FunctionState.STALLED))
    if name == "pump_theoretical_flow":
        # No speed reading in a scene: the engine uses the rated speed (symbols.DERIVED).
        return _figure("pump_displacement", profile, circuits) * si_value(profile.rated_speed)
    raise NoScene(f"the scene builder does not know how to supply '{name}'")


def _try_scene(rule: Rule, profile: MachineProfile, circuit: Circuit | None) -> Scene:
    spec = rule.spec
    circuits = list(profile.circuits) if circuit is None else [circuit]
    points = [tp for c in circuits for tp in c.test_points]
    needs: list[ReadingNeed] = []
    figures: dict[str, float] = {}
    for name in sorted(rule.names):
        if name in SYMBOLS.readings:
            role, fixed = SYMBOLS.readings[name]
        elif name in DERIVED and DERIVED[name][1] and name != "cross_port_stall_expected":
            (role,) = DERIVED[name][1]
            fixed = None
        else:
            figures[name] = _figure(name, profile, circuits)
            continue
        point = _primary(points, role)
        if point is None:
            raise NoScene(f"no {role.value} point")
        state = fixed or _state_for(point, spec.when, need_range=spec.limits == "expected")
        if state is None:
            raise NoScene(f"{point.id} has no expected range in {spec.when}")
        needs.append(ReadingNeed(name, role, state, point))
    if "cross_port_stall_expected" in rule.names:
        # The expected port reading adds the low side's charge: the visit needs a charge reading
        # at the stall too (its nominal value is the one _figure used).
        point = _primary(points, Role.CHARGE_PRESSURE)
        if point is None:
            raise NoScene("no charge point")
        needs.append(
            ReadingNeed("charge_pressure_in_stalled", Role.CHARGE_PRESSURE, FunctionState.STALLED, point)
        )
    if not needs:
        raise NoScene("the rule reads no test point")
    nominal = {n.name: _nominal(n.point, n.state) for n in needs}
    # A reference read beside the value (the case under a charge gauge) is never the free one.
    free = min(n.name for n in needs if n.name in rule.value.names and n.name not in spec.zero_if_missing)
    low = high = None
    if spec.limits == "expected":
        (need,) = [n for n in needs if n.name not in spec.zero_if_missing]
        rng = need.point.expected_for(Condition(function=need.state))
        assert rng is not None
        low = si_value(rng.low) if rng.low is not None else None
        high = si_value(rng.high) if rng.high is not None else None
    else:
        env = dict(figures)
        for n in needs:
            env[n.name] = si_of(n.point.kind, nominal[n.name])
        low = float(rule.low.evaluate(env)) if rule.low is not None else None
        high = float(rule.high.evaluate(env)) if rule.high is not None else None
    hyps = hypothesis_keys(profile, knowledge().faults)
    listed = set(spec.if_low) | set(spec.if_high)
    # The faults the rule names in its scope (and in a circuit feeding it), and any fault that can
    # spoil the rule's reading without being named (a gauge reading wrong, on a pressure rule).
    healthy = table_likelihood(rule, "no_fault")
    keys = tuple(
        k
        for k in hyps
        if (fault_of(k) in listed or table_likelihood(rule, fault_of(k)) != healthy)
        and (
            circuit is None
            or circuit_of(k) in (None, circuit.id)
            or likelihood_for(rule, circuit.id, k, profile) != healthy
        )
    )
    return Scene(rule, profile, circuit, tuple(needs), free, nominal, figures, low, high, keys)


def scene_for(rule: Rule) -> Scene:
    """The machine and circuit that exercise the rule best: the one where most of the faults it
    names can occur (first such, demo machines before the bench rig)."""
    best: Scene | None = None
    reasons: list[str] = []
    for profile in scene_profiles():
        scopes: list[Circuit | None] = (
            [None]
            if rule.spec.machine_wide
            else [c for c in profile.circuits if c.kind.value in rule.spec.circuits]
        )
        for circuit in scopes:
            try:
                scene = _try_scene(rule, profile, circuit)
            except NoScene as why:
                reasons.append(f"{profile.id}/{circuit.id if circuit else '*'}: {why}")
                continue
            if best is None or len(scene.listed_keys) > len(best.listed_keys):
                best = scene
    if best is None:
        raise NoScene(f"rule '{rule.id}' fits no machine: " + "; ".join(reasons))
    return best


__all__ = [
    "BENCH_PROFILE_TOML",
    "DEMO_OPEN_VISIT",
    "PROFILES",
    "RULES",
    "VISITS",
    "NoScene",
    "Scene",
    "VisitBuilder",
    "bench_profile",
    "chilled",
    "deadhead_bar",
    "diagnose_readings_only",
    "diagnose_sample",
    "finding",
    "hypothesis_keys",
    "knowledge",
    "library",
    "load_readings_only",
    "readings_only",
    "likelihood_for",
    "load_visit",
    "precise_gauge",
    "sample_visit_paths",
    "scene_for",
    "table_likelihood",
    "with_readings",
]
