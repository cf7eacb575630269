"""Writing the visit a technician would record on a simulated machine.

One seed gives one machine (scatter), one fault draw and one set of gauge errors, each from its
own random stream, so the same seed with and without a fault is the same machine read with the
same luck: the difference between the two visits is the fault's alone (useful in tests).
"""

from __future__ import annotations

import datetime as dt
import hashlib
from dataclasses import dataclass
from random import Random

from fieldkit.errors import FieldkitError
from fieldkit.model.gauge import Gauge
from fieldkit.model.profile import MachineProfile
from fieldkit.model.roles import Role
from fieldkit.model.visit import Condition, Reading, Scenario, Visit, VisitStatus
from fieldkit.simulate import gauges as kit
from fieldkit.simulate.faults import FAULTS, FaultModel
from fieldkit.simulate.machine import Machine, build_machine, qty
from fieldkit.simulate.physics_table import TABLE
from fieldkit.simulate.plan import Planned, reading_plan
from fieldkit.units import CANONICAL_UNIT, Kind, PressureReference, format_value

NO_FAULT = "no_fault"
MAX_SEVERITY = 3.0
#: Below this a pressure reading is left alone by the gauge-error fault (an overranged 6 bar gauge
#: on a drain tells nothing about the trade's usual slip, a small gauge on a big pressure).
GAUGE_FAULT_MIN_BAR = 10.0
_START = dt.datetime(2025, 3, 3, 7, 30, tzinfo=dt.UTC)


@dataclass(frozen=True)
class Injection:
    """What was done to a machine: the fault, where, how hard, and the change in words."""

    fault: str
    circuit: str | None
    severity: float
    change: str


@dataclass(frozen=True)
class Simulation:
    """A simulated visit and what was injected into it."""

    visit: Visit
    fault: str
    circuit: str | None
    severity: float
    change: str
    seed: int


@dataclass(frozen=True)
class DoubleSimulation:
    """A simulated visit with two faults injected at once."""

    visit: Visit
    injected: tuple[Injection, Injection]
    seed: int


def _streams(seed: int) -> tuple[Random, Random, Random]:
    return Random(f"{seed}:machine"), Random(f"{seed}:fault"), Random(f"{seed}:gauges")


class Simulator:
    """A machine profile made ready to simulate: its reading plan, the gauges a technician would
    pick from the nominal machine, and which faults can show on its test points."""

    def __init__(self, profile: MachineProfile) -> None:
        self.profile = profile
        self.plan: list[Planned] = reading_plan(profile)
        nominal = build_machine(profile, None, TABLE)
        self.nominal = self._true_values(nominal)
        self.gauges: list[Gauge | None] = [
            kit.gauge_for(p.point.kind, p.point.role, v if v is not None else 0.0)
            for p, v in zip(self.plan, self.nominal, strict=True)
        ]
        self._targets: dict[str, list[str | None]] = {}
        self.reasons: dict[str, str] = {}

    # --- physics over the plan ---------------------------------------------------------------
    def _true_values(self, machine: Machine) -> list[float | None]:
        n = max(len(self.plan) - 1, 1)
        out: list[float | None] = []
        for i, planned in enumerate(self.plan):
            env = machine.env(machine.oil_at(i / n))
            out.append(machine.true_value(planned.circuit_id, planned.point, planned.state, env))
        return out

    def _limit(self, i: int, value: float) -> float:
        gauge = self.gauges[i]
        if gauge is None:
            return kit.DRIFT_ERROR_FIXED + kit.DRIFT_ERROR_SHARE * abs(value)
        return kit.limit_of_error(gauge)

    def _shows(self, model: FaultModel, circuit_id: str | None) -> bool:
        """Whether the fault at severity 1 moves any planned reading by more than its gauge's
        limit of error on the nominal machine."""
        if model.id == "gauge_error":
            return any(
                p.point.kind is Kind.PRESSURE and (v or 0.0) >= GAUGE_FAULT_MIN_BAR
                for p, v in zip(self.plan, self.nominal, strict=True)
            )
        machine = build_machine(self.profile, None, TABLE)
        model.change(machine, machine.circuits[circuit_id] if circuit_id else None, 1.0, Random(0))
        faulty = self._true_values(machine)
        return any(
            a is not None and b is not None and abs(a - b) > self._limit(i, a)
            for i, (a, b) in enumerate(zip(self.nominal, faulty, strict=True))
        )

    def targets(self, fault_id: str) -> list[str | None]:
        """Circuits the fault can be injected into and show from (``[None]`` for a fault of the
        whole visit); empty when it cannot show on this machine."""
        if fault_id in self._targets:
            return self._targets[fault_id]
        model = FAULTS[fault_id]
        if model.machine_wide:
            found: list[str | None] = [None] if self._shows(model, None) else []
            reason = "no reading it could change"
        else:
            candidates = [c.id for c in self.profile.circuits if c.kind in model.kinds]
            found = [cid for cid in candidates if self._shows(model, cid)]
            kinds = ", ".join(k.value for k in model.kinds)
            reason = (
                f"no circuit of a kind it occurs in ({kinds})"
                if not candidates
                else f"it changes no reading at the test points of {', '.join(candidates)} by more "
                f"than the gauge's limit of error"
            )
        self._targets[fault_id] = found
        if not found:
            self.reasons[fault_id] = reason
        return found

    def injectable(self) -> list[str]:
        """Faults that can show on this machine, in the simulator's table order."""
        return [f for f in FAULTS if self.targets(f)]

    def skipped(self) -> dict[str, str]:
        """Faults that cannot show on this machine, with the reason."""
        for f in FAULTS:
            self.targets(f)
        return {f: self.reasons[f] for f in FAULTS if f in self.reasons}

    # --- one visit ---------------------------------------------------------------------------
    def machine(
        self, fault: str | None = None, severity: float = 1.0, seed: int = 0
    ) -> tuple[Machine, Injection]:
        """The simulated machine for a seed, with the fault injected, before anyone reads it."""
        fault_id = NO_FAULT if fault in (None, NO_FAULT) else fault
        if fault_id != NO_FAULT and fault_id not in FAULTS:
            raise FieldkitError(f"the simulator cannot inject '{fault_id}'; it knows: {', '.join(FAULTS)}")
        if not 0.0 < severity <= MAX_SEVERITY:
            raise FieldkitError(f"severity must be above 0 and at most {MAX_SEVERITY:g}; got {severity:g}")
        machine_rng, fault_rng, _gauge_rng = _streams(seed)
        machine = build_machine(self.profile, machine_rng, TABLE)
        if fault_id == NO_FAULT:
            return machine, Injection(NO_FAULT, None, severity, "healthy machine")
        targets = self.targets(fault_id)
        if not targets:
            raise FieldkitError(
                f"fault '{fault_id}' cannot show on machine '{self.profile.id}': {self.reasons[fault_id]}"
            )
        circuit_id = fault_rng.choice(targets)
        change = FAULTS[fault_id].change(
            machine, machine.circuits[circuit_id] if circuit_id else None, severity, fault_rng
        )
        return machine, Injection(fault_id, circuit_id, severity, change)

    def machine_with_two(
        self, first: str, second: str, severity: float = 1.0, seed: int = 0
    ) -> tuple[Machine, tuple[Injection, Injection]]:
        """The simulated machine for a seed with two faults injected, the second after the first
        (each in a circuit it can show from, drawn from its own stream)."""
        if first == second:
            raise FieldkitError(f"two faults at once must be two different faults; got '{first}' twice")
        machine, one = self.machine(first, severity, seed)
        if second not in FAULTS:
            raise FieldkitError(f"the simulator cannot inject '{second}'; it knows: {', '.join(FAULTS)}")
        targets = self.targets(second)
        if not targets:
            raise FieldkitError(
                f"fault '{second}' cannot show on machine '{self.profile.id}': {self.reasons[second]}"
            )
        rng = Random(f"{seed}:second fault")
        circuit_id = rng.choice(targets)
        change = FAULTS[second].change(
            machine, machine.circuits[circuit_id] if circuit_id else None, severity, rng
        )
        return machine, (one, Injection(second, circuit_id, severity, change))

    def simulate_two(self, first: str, second: str, severity: float = 1.0, seed: int = 0) -> DoubleSimulation:
        """A visit on a machine with two faults at once (``fieldkit evaluate --double``)."""
        machine, (one, two) = self.machine_with_two(first, second, severity, seed)
        readings, used = self._readings(machine, _streams(seed)[2], seed)

        def where(i: Injection) -> str:
            return f"{i.fault}" + (f" in circuit '{i.circuit}'" if i.circuit else "")

        story = (
            f"Simulated: two faults, severity {severity:g}: {where(one)} ({one.change}) and "
            f"{where(two)} ({two.change})."
        )
        visit = self._visit(f"{first}+{second}", severity, seed, story, used, readings)
        return DoubleSimulation(visit, (one, two), seed)

    def true_values(self, machine: Machine) -> list[float | None]:
        """What a perfect instrument would read at each planned reading (aligned with ``plan``)."""
        return self._true_values(machine)

    def simulate(self, fault: str | None = None, severity: float = 1.0, seed: int = 0) -> Simulation:
        machine, injected = self.machine(fault, severity, seed)
        readings, used = self._readings(machine, _streams(seed)[2], seed)
        where = f" in circuit '{injected.circuit}'" if injected.circuit else ""
        story = (
            f"Simulated: {injected.fault}{where}, severity {severity:g}: {injected.change}."
            if injected.fault != NO_FAULT
            else "Simulated healthy machine."
        )
        visit = self._visit(injected.fault, severity, seed, story, used, readings)
        return Simulation(visit, injected.fault, injected.circuit, severity, injected.change, seed)

    def _readings(self, machine: Machine, rng: Random, seed: int) -> tuple[list[Reading], list[Gauge]]:
        n = max(len(self.plan) - 1, 1)
        true = self._true_values(machine)
        victim = self._gauge_victim(machine, true)
        readings: list[Reading] = []
        used: dict[str, Gauge] = {}
        when = _START + dt.timedelta(days=seed % 360)
        # One thermometer and one tachometer serve the whole visit: each carries one error.
        u_oil, u_speed = rng.random(), rng.random()
        fixed = {kit.THERMOMETER.id: u_oil, kit.TACHOMETER.id: u_speed}
        for i, planned in enumerate(self.plan):
            value = true[i]
            # One draw per planned reading, used or not, so the random stream stays aligned
            # between a healthy and a faulty visit of one seed.
            u_reading = rng.random()
            if value is None:
                continue
            tp = planned.point
            gauge = self.gauges[i]
            if gauge is not None and self._needs_other_gauge(gauge, value, self.nominal[i]):
                gauge = kit.gauge_for(tp.kind, tp.role, value)
            written = kit.read(value, gauge, fixed.get(gauge.id, u_reading) if gauge else u_reading)
            if i == victim:
                gauge, written = self._spoil(machine, value, gauge, written)
            oil = machine.oil_at(i / n)
            condition = Condition(function=planned.state)
            if not planned.engine_off:
                oil_read = kit.read(oil, kit.THERMOMETER, u_oil)
                speed_read = kit.read(machine.setting.speed_rpm, kit.TACHOMETER, u_speed)
                condition = Condition(
                    function=planned.state,
                    speed=qty(speed_read, "revolution / minute"),
                    oil_temperature=qty(oil_read, "degC"),
                )
            if gauge is not None:
                used.setdefault(gauge.id, gauge)
            quantity = qty(written, CANONICAL_UNIT[tp.kind])
            reference = None
            if tp.kind is Kind.PRESSURE:
                reference = (
                    PressureReference.DIFFERENTIAL
                    if tp.role is Role.FILTER_PRESSURE_DROP
                    else PressureReference.GAUGE
                )
            readings.append(
                Reading(
                    id=f"r{len(readings) + 1:02d}",
                    test_point=tp.id,
                    value=quantity,
                    reference=reference,
                    entered=format_value(quantity),
                    condition=condition,
                    gauge=gauge.id if gauge else None,
                    taken_at=when,
                )
            )
            when += dt.timedelta(minutes=round(tp.minutes))
        return readings, list(used.values())

    @staticmethod
    def _needs_other_gauge(gauge: Gauge, value: float, nominal: float | None) -> bool:
        """A technician whose needle runs near its stop (past 90 % of the scale), or who finds a
        vacuum on a plain gauge, fits a gauge that suits what the point really reads."""
        if gauge.kind is Kind.TEMPERATURE or gauge.kind is Kind.SPEED:
            return False
        if value >= kit.NEAR_STOP * kit.top_of_scale(gauge):
            return True
        return gauge.kind is Kind.PRESSURE and value < 0 <= (nominal or 0.0) and gauge.scale_start is None

    def _gauge_victim(self, machine: Machine, true: list[float | None]) -> int | None:
        fault = machine.gauge_fault
        if not fault:
            return None
        pool = [
            i
            for i, (p, v) in enumerate(zip(self.plan, true, strict=True))
            if p.point.kind is Kind.PRESSURE and v is not None and v >= GAUGE_FAULT_MIN_BAR
        ]
        return pool[min(int(fault["pick"] * len(pool)), len(pool) - 1)] if pool else None

    @staticmethod
    def _spoil(
        machine: Machine, value: float, gauge: Gauge | None, written: float
    ) -> tuple[Gauge | None, float]:
        """The gauge-error fault on one reading: a too-small gauge pinned at full scale, or a
        bias of a share of the span."""
        fault = machine.gauge_fault
        small = kit.smaller_gauge(value) if fault["overrange"] else None
        if small is not None:
            return small, kit.top_of_scale(small)
        assert gauge is not None
        sc = kit.scale(gauge)
        biased = written + fault["sign"] * fault["size"] * (sc.top - sc.bottom)
        return gauge, round(min(max(biased, sc.bottom), 0.99 * sc.top), 6)

    def _visit(
        self,
        fault_id: str,
        severity: float,
        seed: int,
        story: str,
        gauges: list[Gauge],
        readings: list[Reading],
    ) -> Visit:
        key = f"{self.profile.id}|{fault_id}|{severity!r}|{seed}".encode()
        digest = hashlib.sha1(key).hexdigest()[:12]
        return Visit(
            id=f"sim-{digest}",
            job_number=f"SIM-{seed}",
            customer="Simulated machine (no customer)",
            site="fieldkit simulator",
            machine=self.profile.id,
            machine_serial=f"SIM-{digest[:6].upper()}",
            technician="simulated technician",
            date=readings[0].taken_at.date() if readings else _START.date(),
            oil=f"{self.profile.oil_grade} mineral hydraulic oil",
            gauges=[g.model_copy() for g in gauges],
            readings=readings,
            notes="Readings written by fieldkit's simulator from the physics core; gauge errors drawn "
            "within each gauge's class.",
            status=VisitStatus.CLOSED,
            scenario=Scenario(fault=fault_id, story=story),
        )


def simulate(
    profile: MachineProfile, fault: str | None = None, severity: float = 1.0, seed: int = 0
) -> Simulation:
    return Simulator(profile).simulate(fault, severity, seed)


def simulate_visit(
    profile: MachineProfile, fault: str | None = None, severity: float = 1.0, seed: int = 0
) -> Visit:
    """The visit a technician would record on this machine: healthy (``fault`` None or
    'no_fault') or with one catalogued fault injected at ``severity``; the same seed gives the
    same visit."""
    return simulate(profile, fault, severity, seed).visit


__all__ = [
    "NO_FAULT",
    "DoubleSimulation",
    "Injection",
    "Simulation",
    "Simulator",
    "simulate",
    "simulate_visit",
]
