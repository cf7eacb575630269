"""Rules applied to measured readings: findings with soft outcomes and evidence.

The value a rule computes carries the combined standard uncertainty of its readings (GUM 5.1.2,
propagated by the expression compiler). Against each limit the engine asks how likely the true
value lies beyond it (normal model), so a reading inside its gauge's error of a limit gives
partial evidence and an 'inconclusive' verdict rather than a confident pass or fail. That soft
outcome enters the ranking as virtual evidence (Pearl): the likelihood of a fault is
Σ P(outcome observed) · P(outcome | fault).
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterable
from dataclasses import dataclass, field

from fieldkit.diagnosis.catalogue import Fault
from fieldkit.diagnosis.measure import Measured
from fieldkit.diagnosis.resolution import RECTANGULAR
from fieldkit.diagnosis.results import Finding, Verdict
from fieldkit.diagnosis.rulepack import Rule
from fieldkit.diagnosis.symbols import DERIVED, MACHINE_FIGURES, SYMBOLS
from fieldkit.expr.dims import kind_dimension
from fieldkit.model.condition import FunctionState
from fieldkit.model.fitted import applies
from fieldkit.model.parameters import PARAMETERS
from fieldkit.model.profile import Circuit, MachineProfile, TestPoint
from fieldkit.model.roles import PER_POINT_ROLES, ROLES, Role
from fieldkit.physics.accumulators import PRECHARGE_REFERENCE_C, precharge_at_temperature
from fieldkit.physics.closed_loop import cross_port_stall_reading
from fieldkit.physics.fluid import grade
from fieldkit.physics.reliefs import arrangement_for, deadhead
from fieldkit.units import (
    LIMIT_FIGURES,
    Q_,
    DisplaySystem,
    Kind,
    format_si,
    format_si_to_resolution,
    format_value,
    to_canonical,
)

_SQRT2 = math.sqrt(2.0)
_SQRT3 = math.sqrt(3.0)


def _phi(z: float) -> float:
    return 0.5 * math.erfc(-z / _SQRT2)


#: A verdict is stated when one outcome is at least this likely; otherwise it is 'inconclusive'.
#: Φ(√3) ≈ 0.958 is the probability one limit of error a = √3·u out (a rectangular limit read as
#: u = a/√3, GUM 4.3.7): a reading closer to a limit than its gauge's limit of error is
#: inconclusive, as the README promises.
CONFIDENT = _phi(_SQRT3)
#: Evidence from readings taken outside the test window counts at this weight (tempered likelihood).
INVALID_WEIGHT = 0.35
#: Every rule table is raised to this power and normalised again over its outcomes (see
#: :func:`weighted`; temperature scaling, Guo et al., "On calibration of modern neural networks",
#: ICML 2017).
#: The rule tables' likelihoods are written cautiously, one rule at a time; on simulated visits
#: (`fieldkit evaluate`) the posterior they gave was underconfident: the top fault was stated at
#: about 50 % where it was right 86 % of the time. Fitted on those visits to bring the
#: reliability table onto its diagonal; the hand-written cases in tests/cases/ check it
#: independently. 1 would be plain naive Bayes.
EVIDENCE_WEIGHT = 1.6

_PLACEHOLDER = re.compile(r"\{([a-z_]+)\}")


def outcome_probabilities(
    value: float, u: float, low: float | None, high: float | None
) -> tuple[float, float, float]:
    """P(true value below low), P(within), P(above high), true value ~ N(value, u²)."""
    if u <= 0.0:
        p_low = 1.0 if low is not None and value < low else 0.0
        p_high = 1.0 if high is not None and value > high else 0.0
    else:
        p_low = _phi((low - value) / u) if low is not None else 0.0
        p_high = _phi((value - high) / u) if high is not None else 0.0
    p_ok = max(0.0, 1.0 - p_low - p_high)
    return p_low, p_ok, p_high


def censored_outcomes(
    value: float, u: float, low: float | None, high: float | None, direction: int
) -> tuple[float, float, float]:
    """Outcome weights for a censored value: ``direction`` +1 means the truth is at least
    ``value`` (a needle on its stop), −1 at most, 0 nothing known. Each outcome counts as far as
    it is consistent with the bound (gauge error allowed), normalised: a bound inside the range
    leaves 'in range' and 'beyond' equally open, so it decides nothing."""
    if direction == 0:
        return 1 / 3, 1 / 3, 1 / 3
    s = max(u, 1e-12)
    if direction > 0:
        w_low = _phi((low - value) / s) if low is not None else 0.0
        w_ok = _phi((high - value) / s) if high is not None else 1.0
        w_high = 1.0 if high is not None else 0.0
    else:
        w_high = _phi((value - high) / s) if high is not None else 0.0
        w_ok = _phi((value - low) / s) if low is not None else 1.0
        w_low = 1.0 if low is not None else 0.0
    total = w_low + w_ok + w_high
    return w_low / total, w_ok / total, w_high / total


def verdict_for(p_low: float, p_ok: float, p_high: float) -> Verdict:
    if p_low >= CONFIDENT:
        return Verdict.LOW
    if p_high >= CONFIDENT:
        return Verdict.HIGH
    if p_ok >= CONFIDENT:
        return Verdict.IN_RANGE
    return Verdict.INCONCLUSIVE


def fill(template: str, values: dict[str, str]) -> str:
    """Put values into a message from a rule file. Only ``{name}`` placeholders are replaced; no
    format-spec or attribute syntax is ever interpreted (rule files are not trusted code)."""
    return _PLACEHOLDER.sub(lambda m: values.get(m.group(1), m.group(0)), template)


@dataclass(slots=True)
class Hypothesis:
    key: str
    fault: Fault
    circuit: Circuit | None
    prior: float


@dataclass(slots=True)
class Scope:
    """Readings a rule sees: one circuit's, or the whole machine's for machine-wide rules."""

    circuit: Circuit | None
    by_role: dict[Role, list[Measured]] = field(default_factory=dict)
    #: Set for a scope of one point of a per-point role (one work port of a valve bank): the
    #: rule reads that point, and the circuit's primary points for every other role.
    point: TestPoint | None = None

    @property
    def title_suffix(self) -> str:
        return f" — {self.point.label}" if self.point is not None else ""


class Missing(Exception):
    """A reading the rule needs has not been taken (yet)."""

    def __init__(self, role: Role, state: FunctionState | None) -> None:
        self.role, self.state = role, state


class NotApplicable(Exception):
    """The circuit lacks a figure the rule needs: the rule says nothing about this machine."""


class Evaluator:
    """Evaluates rules for one visit; derived values are computed once per scope."""

    def __init__(self, profile: MachineProfile, measured: list[Measured], system: DisplaySystem) -> None:
        self.profile = profile
        self.system = system
        self.measured = measured
        self.scopes: list[Scope] = []
        # Rules read a role at its primary point: the first point with that role in a circuit (the
        # machine's first, for machine-wide rules). Other points of the same role (a pilot signal
        # beside the pilot supply) get range checks only.
        # Roles in PER_POINT_ROLES (each work port of a valve bank) are read at every point, each
        # in a scope of its own that shares the circuit's primary readings.
        whole = Scope(None)
        machine_primary: dict[Role, str] = {}
        self.point_scopes: list[Scope] = []
        for c in profile.circuits:
            scope = Scope(c)
            primary: dict[Role, str] = {}
            for tp in c.test_points:
                primary.setdefault(tp.role, tp.id)
                machine_primary.setdefault(tp.role, tp.id)
            for m in measured:
                if (
                    m.circuit.id == c.id
                    and primary.get(m.role) == m.point.id
                    and m.role not in PER_POINT_ROLES
                ):
                    scope.by_role.setdefault(m.role, []).append(m)
            self.scopes.append(scope)
            for tp in c.test_points:
                if tp.role in PER_POINT_ROLES:
                    own = [m for m in measured if m.point.id == tp.id]
                    self.point_scopes.append(Scope(c, {**scope.by_role, tp.role: own}, tp))
        for m in measured:
            if machine_primary.get(m.role) == m.point.id:
                whole.by_role.setdefault(m.role, []).append(m)
        self.machine = whole
        self.missing_roles: dict[str, list[tuple[Role, FunctionState | None]]] = {}
        #: What a rule had to assume while it was evaluated, added to its message.
        self.notes: list[str] = []

        self.curve = grade(profile.oil_grade).curve

    # --- names ------------------------------------------------------------------------
    def latest(self, scope: Scope, role: Role, states: Iterable[FunctionState]) -> Measured:
        states = tuple(states)
        found = [
            m for m in scope.by_role.get(role, []) if not states or m.reading.condition.function in states
        ]
        if not found:
            # The first state the rule names is the one to ask the technician to set.
            raise Missing(role, states[0] if states else None)
        return found[-1]

    def plain_states(self, rule: Rule, scope: Scope) -> tuple[FunctionState, ...]:
        """States the rule's plain role names are read in. A rule's ``when`` decides; a rule
        without one that combines readings takes them all from one condition: the state its
        ``<role>_in_<state>`` names fix, else the latest state in which every role it reads was
        measured. Readings from different conditions are never paired: a rule whose ``when``
        allows several states and that reads several roles (the load-sensing margin, pump outlet
        minus LS signal, with a function moving at full stroke or under load) takes them all from
        the latest of those states in which every one of them was read."""
        plain: list[Role] = []
        direct: list[Role] = []
        fixed: set[FunctionState] = set()
        for name in rule.names:
            if name in SYMBOLS.readings:
                role, state = SYMBOLS.readings[name]
                if state is None:
                    plain.append(role)
                    direct.append(role)
                else:
                    fixed.add(state)
            elif name in DERIVED:
                plain.extend(DERIVED[name][1])
        if rule.spec.when:
            allowed = tuple(rule.spec.when)
            if len(allowed) > 1 and len(set(direct)) > 1:
                # none in common: the first state, so the rule asks for what is missing there
                return self._common_state(scope, direct, allowed) or allowed[:1]
            return allowed
        if not plain or (len(plain) == 1 and not fixed):
            return ()
        if len(fixed) == 1:
            return (next(iter(fixed)),)
        first = sorted(scope.by_role.get(plain[0], []), key=lambda m: m.reading.taken_at, reverse=True)
        for m in first:
            state = m.reading.condition.function
            if all(
                any(x.reading.condition.function is state for x in scope.by_role.get(r, [])) for r in plain
            ):
                return (state,)
        return (first[0].reading.condition.function,) if first else ()

    @staticmethod
    def _common_state(
        scope: Scope, roles: list[Role], allowed: tuple[FunctionState, ...]
    ) -> tuple[FunctionState, ...]:
        """The allowed state of the latest reading of ``roles[0]`` in which every role was read
        too; empty when there is none (the rule then says what is missing)."""
        first = sorted(scope.by_role.get(roles[0], []), key=lambda m: m.reading.taken_at, reverse=True)
        for m in first:
            state = m.reading.condition.function
            if state in allowed and all(
                any(x.reading.condition.function is state for x in scope.by_role.get(r, [])) for r in roles
            ):
                return (state,)
        return ()

    def parameter(self, scope: Scope, name: str) -> float:
        circuits = [scope.circuit] if scope.circuit is not None else self.profile.circuits
        for c in circuits:
            if name in c.parameters:
                return float(c.parameters[name].to_base_units().magnitude)
        raise NotApplicable(f"no '{name}' figure ({PARAMETERS[name][1]})")

    def machine_figure(self, name: str) -> float:
        p = self.profile
        q = {
            "rated_speed": p.rated_speed,
            "rated_max_pressure": p.rated_max_pressure,
            "reference_oil_temperature": p.reference_oil_temperature,
            "test_oil_min": p.test_window.oil_min,
            "test_oil_max": p.test_window.oil_max,
            "speed_tolerance": Q_(p.test_window.speed_tolerance_pct, "percent"),
        }[name]
        return float(q.to_base_units().magnitude)

    def derived(
        self, scope: Scope, name: str, states: tuple[FunctionState, ...], used: list[Measured]
    ) -> tuple[float, float]:
        if name in ("pump_case_drain_flow_at_ref", "motor_case_drain_flow_at_ref"):
            role = Role.PUMP_CASE_DRAIN_FLOW if name.startswith("pump") else Role.MOTOR_CASE_DRAIN_FLOW
            m = self.latest(scope, role, states)
            used.append(m)
            if m.oil_temp_c is None:
                raise Missing(Role.OIL_TEMPERATURE, None)
            t_ref = to_canonical(self.profile.reference_oil_temperature, Kind.TEMPERATURE) + 273.15
            nu_ref = self.curve.cst_at_kelvin(t_ref)
            t = m.oil_temp_c + 273.15
            ratio = self.curve.cst_at_kelvin(t) / nu_ref
            # GUM 5.1.2: both the flow reading and the thermometer contribute; the sensitivity to
            # temperature is q · (dν/dT) / ν_ref, taken by a central difference.
            d_ratio = (self.curve.cst_at_kelvin(t + 0.5) - self.curve.cst_at_kelvin(t - 0.5)) / nu_ref
            return m.si * ratio, math.hypot(m.u_si * ratio, m.si * d_ratio * m.u_oil_temp)
        if name == "accumulator_precharge_at_ref":
            return self._precharge_at_ref(scope, states, used)
        if name == "pump_theoretical_flow":
            return self._theoretical_flow(scope, states, used)
        if name == "relief_deadhead":
            return self._deadhead(scope, used)
        if name == "cross_port_stall_expected":
            return self._cross_port_stall(scope, used)
        if name == "oil_viscosity":
            m = self.latest(scope, Role.OIL_TEMPERATURE, ())
            used.append(m)
            nu = self.curve.cst_at_kelvin(m.canonical + 273.15)
            slope = (
                self.curve.cst_at_kelvin(m.canonical + 274.15)
                - self.curve.cst_at_kelvin(m.canonical + 272.15)
            ) / 2
            return nu * 1e-6, abs(slope) * m.u_canonical * 1e-6
        raise NotApplicable(f"derived value '{name}' is not known")

    def _theoretical_flow(
        self, scope: Scope, states: tuple[FunctionState, ...], used: list[Measured]
    ) -> tuple[float, float]:
        """Displacement × the pump speed of the same condition as the flow reading. With no
        speed measured there, rated speed stands in, with the test window's speed tolerance as
        a rectangular half-width for engine droop under load, and the finding says so."""
        disp = self.parameter(scope, "pump_displacement")
        try:
            flow = self.latest(scope, Role.PUMP_FLOW, states)
            same: tuple[FunctionState, ...] = (flow.reading.condition.function,)
        except Missing:
            same = states
        try:
            m = self.latest(scope, Role.PUMP_SPEED, same)
        except Missing:
            rated = self.machine_figure("rated_speed")
            tol = self.profile.test_window.speed_tolerance_pct
            state = same[0].label if same else "the test condition"
            self.notes.append(
                f"No pump speed was measured {state}: rated speed assumed, ±{tol:g} % for engine droop."
            )
            return disp * rated, disp * rated * tol / 100.0 / _SQRT3
        used.append(m)
        return disp * m.si, disp * m.u_si

    def _precharge_at_ref(
        self, scope: Scope, states: tuple[FunctionState, ...], used: list[Measured]
    ) -> tuple[float, float]:
        """The precharge reading brought to the temperature its figure is stated at (ideal gas at
        constant volume, physics.accumulators.precharge_at_temperature). The gas is taken at the
        temperature stated with the reading itself; with none stated it is taken at the figure's
        temperature, uncorrected. Either way the finding says which temperatures were used."""
        m = self.latest(scope, Role.ACCUMULATOR_PRECHARGE, states)
        used.append(m)
        try:
            ref = Q_(self.parameter(scope, "precharge_reference_temperature") - 273.15, "degC")
            ref_words = "the profile's figure"
        except NotApplicable:
            ref = Q_(PRECHARGE_REFERENCE_C, "degC")
            ref_words = "from memory: precharge figures are commonly stated at 20 °C"
        ref_text = format_value(ref, self.system, significant=3)
        gas = m.reading.condition.oil_temperature
        if gas is None:
            self.notes.append(
                f"No temperature was stated with the precharge reading: the gas is taken at {ref_text} "
                f"({ref_words}), so the reading is judged as read."
            )
            return m.si, m.u_si
        source = m.reading.condition.oil_from
        how = f", {source.words}" if source is not None else ""
        gauge = Q_(m.canonical, "bar")
        corrected = precharge_at_temperature(gauge, gas, ref)
        self.notes.append(
            f"Precharge brought from the gas at {format_value(gas, self.system, significant=3)} (the "
            f"temperature stated with the reading{how}) to {ref_text} ({ref_words}) by the gas law: "
            f"{format_value(corrected, self.system, significant=4)}."
        )
        value = float(corrected.to_base_units().magnitude)
        # GUM 5.1.2: the gauge's error scales by T_ref / T; the temperature's by p_abs · T_ref / T²,
        # taken here by a difference of one kelvin.
        t = to_canonical(gas, Kind.TEMPERATURE)
        scale = (to_canonical(ref, Kind.TEMPERATURE) + 273.15) / (t + 273.15)
        warmer = precharge_at_temperature(gauge, Q_(t + 1.0, "degC"), ref)
        d_dt = value - float(warmer.to_base_units().magnitude)
        u_t = m.u_oil_temp or 0.0
        return value, math.hypot(m.u_si * scale, d_dt * u_t)

    def _cross_port_stall(self, scope: Scope, used: list[Measured]) -> tuple[float, float]:
        """What a loop port gauge should read with the drive stalled on its cross-port relief.
        A setting stated as a differential is held above the low side, which sits at charge
        pressure, so the gauge reads setting + charge; a setting stated as a gauge reading is
        read as it is (physics.closed_loop.cross_port_stall_reading)."""

        setting = self.parameter(scope, "high_pressure_relief_setting")
        circuit = scope.circuit
        convention = circuit.cross_port_relief_convention if circuit is not None else "gauge"
        if convention != "differential":
            return setting, 0.0
        try:
            m = self.latest(scope, Role.CHARGE_PRESSURE, (FunctionState.STALLED,))
        except Missing:
            try:
                m = self.latest(
                    scope, Role.CHARGE_PRESSURE, (FunctionState.FULL_STROKE, FunctionState.UNDER_LOAD)
                )
            except Missing:
                raise Missing(Role.CHARGE_PRESSURE, FunctionState.STALLED) from None
        used.append(m)
        expected = cross_port_stall_reading(Q_(setting, "Pa"), Q_(m.si, "Pa"), convention)
        return float(expected.to_base_units().magnitude), m.u_si

    def _deadhead(self, scope: Scope, used: list[Measured]) -> tuple[float, float]:

        circuit = scope.circuit
        if circuit is None or not circuit.reliefs:
            raise NotApplicable("the circuit lists no relief valves")
        tree = arrangement_for(circuit.reliefs, circuit.relief_layout)
        back = None
        u = 0.0
        try:
            m = self.latest(scope, Role.RETURN_PRESSURE, (FunctionState.STALLED,))
        except Missing:
            m = None
        if m is not None:
            used.append(m)
            # The measured value as gauge pressure (an absolute reading converted in measure).
            back, u = Q_(m.canonical, "bar"), m.u_si
        result = deadhead(tree, back)
        return float(result.upstream.to_base_units().magnitude), u

    # --- rules ------------------------------------------------------------------------
    def scopes_for(self, rule: Rule) -> list[Scope]:
        if rule.spec.machine_wide:
            return [self.machine] if applies(rule.spec.needs, None, self.profile) else []
        return [
            s
            for s in (self.point_scopes if _reads_per_point_role(rule) else self.scopes)
            if s.circuit is not None
            and s.circuit.kind.value in rule.spec.circuits
            and applies(rule.spec.needs, s.circuit)
        ]

    def evaluate(self, rule: Rule, scope: Scope, hypotheses: list[Hypothesis]) -> Finding | None:
        """A finding, or None when the rule does not apply to this circuit."""
        spec = rule.spec
        values: dict[str, float] = {}
        uncert: dict[str, float] = {}
        used: list[Measured] = []
        missing: list[str] = []
        missing_roles: list[tuple[Role, FunctionState | None]] = []
        expected_from: Measured | None = None
        self.notes = []
        plain_states = self.plain_states(rule, scope)
        censored: dict[str, int] = {}
        for name in sorted(rule.names):
            try:
                if name in SYMBOLS.readings:
                    role, state = SYMBOLS.readings[name]
                    try:
                        m = self.latest(scope, role, (state,) if state else plain_states)
                    except Missing as miss:
                        if name not in spec.zero_if_missing:
                            raise
                        # A reference pressure not read in this condition (never one from another
                        # condition): taken as zero, and the finding says so.
                        values[name], uncert[name] = 0.0, 0.0
                        where = miss.state.label if miss.state else "this condition"
                        self.notes.append(
                            f"{ROLES[role].label.capitalize()} was not measured ({where}): taken as zero, "
                            "so this verdict uses the gauge reading without it."
                        )
                        continue
                    used.append(m)
                    values[name], uncert[name] = m.si, m.u_si
                    if m.censored:
                        censored[name] = m.censored
                    if name not in spec.zero_if_missing or expected_from is None:
                        expected_from = m
                elif name in PARAMETERS:
                    values[name], uncert[name] = self.parameter(scope, name), 0.0
                elif name in MACHINE_FIGURES:
                    values[name], uncert[name] = self.machine_figure(name), 0.0
                elif name in DERIVED:
                    before = len(used)
                    values[name], uncert[name] = self.derived(scope, name, plain_states, used)
                    # Every derived value rises with the readings it is made of, except viscosity,
                    # which falls as the oil warms.
                    sign = -1 if name == "oil_viscosity" else 1
                    for m in used[before:]:
                        if m.censored:
                            censored[name] = sign * m.censored
                    if used:
                        expected_from = used[0]
            except Missing as miss:
                label = ROLES[miss.role].label
                state = miss.state or (spec.when[0] if spec.when else None)
                missing.append(f"{label} ({state.label})" if state else label)
                missing_roles.append((miss.role, state))
            except NotApplicable:
                return None
        circuit_id = scope.circuit.id if scope.circuit else None
        if missing:
            self.missing_roles[f"{spec.id}@{circuit_id}" if circuit_id else spec.id] = missing_roles
            return Finding(
                rule_id=spec.id,
                title=spec.title + scope.title_suffix,
                circuit=circuit_id,
                verdict=Verdict.NOT_MEASURED,
                message=f"{spec.title}: needs {', '.join(missing)}",
                missing=missing,
                source=spec.source,
                p_in_range=1.0,
            )
        try:
            value, u = rule.value.evaluate_with_uncertainty(values, uncert)
            low = high = None
            u_low = u_high = 0.0
            if spec.limits == "expected":
                assert expected_from is not None
                rng = expected_from.point.expected_for(expected_from.reading.condition)
                if rng is None:
                    return None
                low = float(rng.low.to_base_units().magnitude) if rng.low is not None else None
                high = float(rng.high.to_base_units().magnitude) if rng.high is not None else None
            else:
                if rule.low is not None:
                    low, u_low = rule.low.evaluate_with_uncertainty(values, uncert)
                if rule.high is not None:
                    high, u_high = rule.high.evaluate_with_uncertainty(values, uncert)
        except Exception as exc:  # an expression failing on these numbers (÷0) is reported, not raised
            return Finding(
                rule_id=spec.id,
                title=spec.title + scope.title_suffix,
                circuit=circuit_id,
                verdict=Verdict.INCONCLUSIVE,
                message=f"{spec.title}: could not be computed ({exc})",
                source=spec.source,
                p_in_range=1.0,
            )
        direction = self._censoring(rule, values, censored)
        if direction is not None:
            p_low, p_ok, p_high = censored_outcomes(value, math.hypot(u, u_low, u_high), low, high, direction)
        else:
            p_low, _, _ = outcome_probabilities(value, math.hypot(u, u_low), low, None)
            _, _, p_high = outcome_probabilities(value, math.hypot(u, u_high), None, high)
            p_ok = max(0.0, 1.0 - p_low - p_high)
        verdict = verdict_for(p_low, p_ok, p_high)
        invalid = sorted({m.invalid for m in used if m.invalid}) if spec.discount_when_invalid else []
        weight = INVALID_WEIGHT if invalid else 1.0
        texts = self._texts(rule, value, u, low, high)
        template = {
            Verdict.LOW: spec.say_low,
            Verdict.HIGH: spec.say_high,
            Verdict.IN_RANGE: spec.say_ok,
        }.get(verdict, "")
        if not template:
            template = "{title}: {value} ± {uncertainty}, against {limits}."
        # Limits in words are rounded as a technician writes them; the finding keeps the full figures.
        message = fill(template, {**texts, "low": texts["low_said"], "high": texts["high_said"]})
        if verdict is Verdict.INCONCLUSIVE:
            message += (
                f" Too close to a limit to call with this gauge (P low {p_low:.0%}, P high {p_high:.0%})."
            )
        if direction is not None:
            bound = {1: "at least", -1: "at most"}.get(direction, "no bound on")
            message += (
                " A reading in it sat at the end of its gauge's scale, so it gives only a bound"
                f" ({bound} {texts['value']})."
            )
        if self.notes:
            message += " " + " ".join(self.notes)
        if invalid:
            message += f" Counted at reduced weight: {'; '.join(invalid)}."
        finding = Finding(
            rule_id=spec.id,
            title=spec.title + scope.title_suffix,
            circuit=circuit_id,
            verdict=verdict,
            message=message,
            value=texts["value"],
            uncertainty=texts["uncertainty"],
            low=texts["low"],
            high=texts["high"],
            p_low=p_low,
            p_in_range=p_ok,
            p_high=p_high,
            readings=[m.reading.id for m in used],
            discount=weight,
            discount_reason="; ".join(invalid),
            action=spec.do_low if verdict is Verdict.LOW else spec.do_high if verdict is Verdict.HIGH else "",
            cautions=list(spec.cautions)
            if verdict in (Verdict.LOW, Verdict.HIGH, Verdict.INCONCLUSIVE)
            else [],
            source=spec.source,
        )
        finding.evidence = evidence(rule, scope.circuit, (p_low, p_ok, p_high), weight, hypotheses)
        return finding

    @staticmethod
    def _censoring(rule: Rule, values: dict[str, float], censored: dict[str, int]) -> int | None:
        """None when no censored reading feeds the value; else which way the value is bounded:
        +1 at least, −1 at most, 0 unknown (bounds pulling both ways)."""
        if not censored:
            return None
        base = rule.value.evaluate(values)
        ways: set[int] = set()
        for name, way in censored.items():
            step = max(abs(values[name]) * 0.1, 1e-6)
            moved = rule.value.evaluate({**values, name: values[name] + step})
            if moved != base:
                ways.add(way if moved > base else -way)
        return ways.pop() if len(ways) == 1 else (0 if ways else None)

    def _texts(
        self, rule: Rule, value: float, u: float, low: float | None, high: float | None
    ) -> dict[str, str]:
        kind = _kind_of_dim(rule.value.result)

        def show(x: float | None, significant: int = 4) -> str:
            if x is None:
                return "—"
            return (
                format_si(x, kind, self.system, significant=significant) if kind is not None else f"{x:.3g}"
            )

        def show_spread(x: float) -> str:
            if kind is Kind.TEMPERATURE:  # a temperature difference, in kelvin whatever the display
                return f"{x:.2g} K"
            return show(x, significant=2)

        def show_limit(x: float | None) -> str:
            return show(x, significant=LIMIT_FIGURES)

        limits = (
            f"{show_limit(low)} to {show_limit(high)}"
            if low is not None and high is not None
            else (f"at least {show_limit(low)}" if low is not None else f"at most {show_limit(high)}")
        )

        def show_read(x: float) -> str:
            # To the resolution of the gauges behind it: the first figure of a = u·√3.
            if kind is None or not u or not math.isfinite(u):
                return show(x)
            return format_si_to_resolution(x, u * RECTANGULAR, kind, self.system)

        return {
            "title": rule.spec.title,
            "value": show_read(value),
            "uncertainty": show_spread(u) if u else "0",
            # full figures: the why view and checks read the limit the engine used
            "low": show(low),
            "high": show(high),
            "low_said": show_limit(low),
            "high_said": show_limit(high),
            "limits": limits,
        }

    def run(
        self, rules: list[Rule], hypotheses: list[Hypothesis]
    ) -> tuple[list[Finding], list[tuple[Rule, Scope, Finding]]]:
        self.missing_roles = {}
        findings: list[Finding] = []
        pairs: list[tuple[Rule, Scope, Finding]] = []
        for rule in rules:
            for scope in self.scopes_for(rule):
                f = self.evaluate(rule, scope, hypotheses)
                if f is not None:
                    findings.append(f)
                    pairs.append((rule, scope, f))
        return findings, pairs


def _reads_per_point_role(rule: Rule) -> bool:
    """Whether a rule reads a role that is judged point by point (see :data:`PER_POINT_ROLES`)."""
    return any(
        name in SYMBOLS.readings and SYMBOLS.readings[name][0] in PER_POINT_ROLES for name in rule.names
    )


def _kind_of_dim(dim: object) -> Kind | None:
    for kind in (
        Kind.PRESSURE,
        Kind.FLOW,
        Kind.TEMPERATURE,
        Kind.SPEED,
        Kind.VELOCITY,
        Kind.VISCOSITY,
        Kind.POWER,
        Kind.RATIO,
    ):
        if dim == kind_dimension(kind):
            return kind
    return None


def likelihoods(
    rule: Rule, circuit: Circuit | None, outcome: tuple[float, float, float], hypotheses: list[Hypothesis]
) -> list[float]:
    """P(observation | h) for every hypothesis, the observation being soft (virtual evidence)."""
    healthy = weighted(rule.spec.likelihood("no_fault"))
    out: list[float] = []
    # The circuit feeding this one (profile: supplied_by), where the rule says such a feed can
    # carry a fault into its reading (rule: supplied_from). A fault that can sit in this circuit
    # itself is read here, not in its supply (a drifting cylinder's own seal, not a copy upstream).
    feed = (
        circuit.supplied_by
        if circuit is not None and circuit.supplied_by is not None and rule.spec.supplied_from
        else None
    )
    for h in hypotheses:
        same_place = (
            circuit is None
            or h.circuit is None
            or h.circuit.id == circuit.id
            or (
                h.circuit.id == feed
                and h.circuit.kind.value in rule.spec.supplied_from
                and not h.fault.applies_to(circuit.kind)
            )
        )
        if not same_place:
            lik = healthy
        elif spoiler(rule, h.fault):
            lik = weighted(spoiled(rule.spec.likelihood(h.fault.id), h.fault.spoils_one_pressure_reading))
        else:
            lik = weighted(rule.spec.likelihood(h.fault.id))
        out.append(sum(o * p for o, p in zip(outcome, lik, strict=True)))
    return out


def spoiler(rule: Rule, fault: Fault) -> bool:
    """Whether the fault may have spoilt this rule's reading without the rule naming it: a fault
    that spoils one pressure reading of the visit (catalogue: spoils_one_pressure_reading) and a
    rule whose value is a pressure."""
    return (
        fault.spoils_one_pressure_reading > 0.0
        and fault.id not in rule.spec.if_low
        and fault.id not in rule.spec.if_high
        and _kind_of_dim(rule.value.result) is Kind.PRESSURE
    )


def spoiled(table: tuple[float, float, float], share: float) -> tuple[float, float, float]:
    """A rule table with ``share`` more chance of reading low and of reading high (never leaving
    'in range' less than a hundredth)."""
    low, ok, high = table
    share = max(0.0, min(share, (ok - 0.01) / 2.0))
    low, high = low + share, high + share
    return low, 1.0 - low - high, high


def weighted(table: tuple[float, float, float]) -> tuple[float, float, float]:
    """A rule table's P(low), P(in range), P(high) raised to :data:`EVIDENCE_WEIGHT` and
    normalised again: still a proper distribution over outcomes, so the ranking and the next-test
    look-ahead stay one consistent Bayesian model, only sharper than the tables as written."""
    k = EVIDENCE_WEIGHT
    if k == 1.0:
        return table
    powered = [p**k for p in table]
    total = sum(powered)
    return powered[0] / total, powered[1] / total, powered[2] / total


def evidence(
    rule: Rule,
    circuit: Circuit | None,
    outcome: tuple[float, float, float],
    weight: float,
    hypotheses: list[Hypothesis],
) -> dict[str, float]:
    """Log-likelihood ratios against a healthy machine, kept only where they differ from it."""
    liks = likelihoods(rule, circuit, outcome, hypotheses)
    base = sum(o * p for o, p in zip(outcome, weighted(rule.spec.likelihood("no_fault")), strict=True))
    out: dict[str, float] = {}
    for h, lik in zip(hypotheses, liks, strict=True):
        llr = weight * (math.log(lik) - math.log(base))
        if abs(llr) > 1e-12:
            out[h.key] = llr
    return out


__all__ = [
    "Evaluator",
    "Hypothesis",
    "evidence",
    "fill",
    "likelihoods",
    "outcome_probabilities",
    "verdict_for",
]
