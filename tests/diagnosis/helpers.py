"""Builders shared by the diagnosis engine tests: sample data and visits with chosen readings.

Imported as ``diagnosis_helpers`` (tests/diagnosis/conftest.py registers it under that name, so
it never collides with a helpers module of another test folder).

Scenes for every rule are written out by hand in test_rules_every_rule.py: readings chosen
from each machine's figures, never solved from a rule's own limits.
"""

from __future__ import annotations

import tempfile
from collections.abc import Iterable
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
from fieldkit.model.condition import Condition, FunctionState
from fieldkit.model.fitted import applies
from fieldkit.model.gauge import Gauge
from fieldkit.model.loading import ProfileLibrary, load_profile, load_templates
from fieldkit.model.profile import MachineProfile
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
    'no fault', each machine-wide fault once, each circuit fault once per circuit it can occur in
    and whose part (``needs``) is fitted there (README, "Parts": faults for parts not fitted never
    appear)."""
    priors: dict[str, float] = {}
    for fault in faults.values():
        if "*" in fault.circuits:
            if applies(fault.needs, None, profile):
                priors[fault.id] = fault.prior
        else:
            for c in profile.circuits:
                if c.kind.value in fault.circuits and applies(fault.needs, c):
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


__all__ = [
    "BENCH_PROFILE_TOML",
    "DEMO_OPEN_VISIT",
    "PROFILES",
    "RULES",
    "VISITS",
    "VisitBuilder",
    "bench_profile",
    "chilled",
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
    "table_likelihood",
    "with_readings",
]
