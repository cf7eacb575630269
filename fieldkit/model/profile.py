"""Machine profiles: circuits, their test points and the maker's expected ranges.

A profile is a TOML file a person edits. Circuits may start from a template in ``rules/templates``
(typical test points and ranges, each with its source) and override it with the maker's figures;
:mod:`fieldkit.model.loading` does that merge before these models validate the result.
"""

from __future__ import annotations

from enum import StrEnum
from typing import Any, Literal

from pydantic import Field, ValidationError, field_serializer, field_validator, model_validator
from pydantic_core import InitErrorDetails, PydanticCustomError

from fieldkit.model.base import SCHEMA_VERSION, Strict
from fieldkit.model.condition import Condition, ConditionSpec, FunctionState
from fieldkit.model.parameters import PARAMETERS
from fieldkit.model.parts import Part
from fieldkit.model.quantity import AnyQuantity, Pressure, Speed, Temperature, parse_for_kind, quantity_text
from fieldkit.model.roles import ROLES, Role
from fieldkit.units import Kind, Quantity, kind_of

ID_PATTERN = r"^[a-z0-9][a-z0-9_\-]*$"
TP_ID_PATTERN = r"^[a-z0-9][a-z0-9_\-]*(\.[a-z0-9][a-z0-9_\-]*)?$"


class CircuitKind(StrEnum):
    CLOSED_LOOP_DRIVE = "closed_loop_drive"  # hydrostatic transmission with charge pump, reliefs, flushing
    OPEN_FIXED_PUMP = "open_fixed_pump"  # fixed pump, relief valves in series or parallel
    PRESSURE_COMPENSATED = "pressure_compensated"
    LOAD_SENSING = "load_sensing"
    PILOT_SUPPLY = "pilot_supply"
    BRAKE_RELEASE = "brake_release"
    ACCUMULATOR = "accumulator"
    CYLINDER = "cylinder"
    MOTOR = "motor"  # includes two-speed motors (motor_low_displacement set)


class Position(StrEnum):
    """Where the technician is while the reading is taken: it decides which cautions apply."""

    CLEAR = "clear"  # outside the machine's footprint, at a compartment door or on a platform
    UNDER = "under_machine"  # under the machine or its frame
    RUNNING_GEAR = "beside_running_gear"  # beside the tracks or wheels, within their reach


class ExpectedRange(Strict):
    """Where a healthy machine reads at this point under a condition, and who says so."""

    when: ConditionSpec = Field(default_factory=ConditionSpec)
    low: AnyQuantity | None = None
    high: AnyQuantity | None = None
    source: str = Field(
        min_length=3, description="the maker's manual, a standard, 'common practice' or 'from memory'"
    )
    part: Part | None = Field(default=None, description="applies only when this optional part is fitted")
    typical: str = Field(
        default="",
        description="'typical (common practice)' or 'from memory' when the range rests on a typical "
        "value rather than the maker's figure or a document; set by the loader",
    )

    @model_validator(mode="after")
    def _check(self) -> ExpectedRange:
        if self.low is None and self.high is None:
            raise ValueError("an expected range needs low, high or both")
        if self.low is not None and self.high is not None:
            if kind_of(self.low) is not kind_of(self.high):
                raise ValueError("low and high must be the same kind of quantity")
            if self.low > self.high:
                raise ValueError(f"low ({self.low:~P}) is above high ({self.high:~P})")
        return self


class TestPoint(Strict):
    """A place to tee in a gauge or meter."""

    __test__ = False  # not a pytest test class

    id: str = Field(pattern=TP_ID_PATTERN, max_length=80, description="local id; loaded as 'circuit.local'")
    role: Role
    label: str = ""
    location: str = Field(default="", description="where it is on the machine")
    access: str = Field(default="", description="how to reach it (panels, guards, ladders)")
    fitting: str = Field(default="", description="test coupling or port thread")
    max_pressure: Pressure | None = Field(default=None, description="highest pressure this point can see")
    position: Position = Field(
        default=Position.CLEAR,
        description="where the technician is while reading (clear, under, beside tracks)",
    )
    expected: list[ExpectedRange] = Field(default_factory=list)
    minutes: float = Field(default=10.0, gt=0, le=480, description="time to set up and take this reading")
    cautions: list[str] = Field(default_factory=list)
    source: str = ""
    part: Part | None = Field(default=None, description="the optional part this point is on, if any")
    relief: str | None = Field(
        default=None,
        pattern=ID_PATTERN,
        description="the port relief on this work port (one of the circuit's reliefs): a stall here "
        "reads the lower of it and the main relief",
    )
    pulsing: bool | None = Field(
        default=None,
        description="whether the pressure here pulses while a function moves (EN 837-2 then keeps it "
        "within 2/3 of a gauge's scale, not 3/4); unset: what the role usually does",
    )

    @model_validator(mode="after")
    def _ranges_match_role(self) -> TestPoint:
        need = ROLES[self.role].kind
        for i, rng in enumerate(self.expected):
            for bound in (rng.low, rng.high):
                if bound is not None and kind_of(bound) is not need:
                    raise ValueError(
                        f"expected[{i}]: {self.role.value} needs a {need.value}, but a bound is a "
                        f"{kind_of(bound).value}"
                    )
        if not self.label:
            self.label = ROLES[self.role].label
        return self

    @property
    def kind(self) -> Kind:
        return ROLES[self.role].kind

    @property
    def highest_on_scale(self) -> Pressure | None:
        """The highest pressure a gauge's scale must reach here: the point's rating, except at a
        pressure difference (a filter's drop), where the line pressure bears on a differential
        gauge's static rating and only the difference is on its scale (common practice)."""
        return None if ROLES[self.role].difference else self.max_pressure

    def fluctuates(self, function: FunctionState | None) -> bool:
        """Whether a pressure read here in this function state is a fluctuating one in the sense
        of EN 837-2 (at most 2/3 of the gauge's scale): a pulsing point with a function moving.
        In neutral or stalled the needle settles (common practice)."""
        pulsing = ROLES[self.role].pulsing if self.pulsing is None else self.pulsing
        moving = function in (FunctionState.FULL_STROKE, FunctionState.UNDER_LOAD)
        return self.kind is Kind.PRESSURE and pulsing and moving

    @property
    def pressure_rating(self) -> Quantity | None:
        """The highest pressure this point can see: its stated maximum, else the top of its
        highest expected pressure range. Used for injection cautions and over-pressure."""
        if self.max_pressure is not None:
            rating: Quantity = self.max_pressure
            return rating
        tops: list[Quantity] = [
            b
            for rng in self.expected
            for b in (rng.high, rng.low)
            if b is not None and kind_of(b) is Kind.PRESSURE
        ]
        return max(tops, key=lambda q: q.to("bar").magnitude) if tops else None

    def expected_for(self, condition: Condition) -> ExpectedRange | None:
        """The first expected range whose condition matches: profiles list specific ranges first."""
        for rng in self.expected:
            if rng.when.matches(condition):
                return rng
        return None


class ReliefLayout(Strict):
    """How a circuit's reliefs are arranged: a tree of series and parallel groups of relief ids."""

    series: list[str | ReliefLayout] = Field(default_factory=list)
    parallel: list[str | ReliefLayout] = Field(default_factory=list)

    @model_validator(mode="after")
    def _one_kind(self) -> ReliefLayout:
        if bool(self.series) == bool(self.parallel):
            raise ValueError("a relief layout is either 'series' or 'parallel', with at least one member")
        return self

    def members(self) -> list[str | ReliefLayout]:
        return self.series or self.parallel

    def relief_ids(self) -> list[str]:
        out: list[str] = []
        for m in self.members():
            out.extend([m] if isinstance(m, str) else m.relief_ids())
        return out


class Relief(Strict):
    id: str = Field(pattern=ID_PATTERN)
    label: str = ""
    setting: Pressure
    override: Pressure | None = Field(default=None, description="full-flow minus cracking pressure")
    drain: str = Field(default="internal", pattern="^(internal|external)$")


class Circuit(Strict):
    id: str = Field(pattern=ID_PATTERN, max_length=40)
    name: str
    kind: CircuitKind
    template: str | None = Field(
        default=None, description="circuit template in rules/templates this starts from"
    )
    omit_test_points: list[str] = Field(
        default_factory=list, description="template test points this machine lacks"
    )
    parameters: dict[str, Any] = Field(default_factory=dict)
    typical_parameters: dict[str, str] = Field(
        default_factory=dict,
        description="parameters holding the template's typical value (name → its source), "
        "not the maker's figure; set by the loader",
    )
    reliefs: list[Relief] = Field(default_factory=list)
    relief_layout: ReliefLayout | None = None
    cross_port_relief_convention: Literal["differential", "gauge"] = Field(
        default="differential",
        description=(
            "how the closed loop's cross-port relief setting is stated: 'differential' (above the low "
            "side, which sits at charge pressure, so a port gauge reads setting + charge at a stall; "
            "the common way) or 'gauge' (what the port gauge reads)"
        ),
    )
    supplied_by: str | None = Field(
        default=None,
        description=(
            "the circuit whose pressure feeds this one (a parking brake released from the drive's "
            "charge gallery): a fault there can show here"
        ),
    )
    test_points: list[TestPoint] = Field(default_factory=list)
    fitted_parts: list[Part] | None = Field(
        default=None,
        description="optional parts fitted to this circuit; unset means every part is assumed fitted",
    )

    def has_part(self, part: Part) -> bool:
        """Whether a part is fitted. Unstated means 'assume fitted', so a caution is never dropped
        for want of a declaration."""
        return self.fitted_parts is None or part in self.fitted_parts

    @model_validator(mode="after")
    def _qualify_ids(self) -> Circuit:
        # Test points are written with local ids ("charge"); the circuit makes them unique ("drive.charge").
        for tp in self.test_points:
            if "." not in tp.id:
                tp.id = f"{self.id}.{tp.id}"
            elif not tp.id.startswith(self.id + "."):
                raise ValueError(f"test point '{tp.id}' is qualified with another circuit's id")
        return self

    @field_serializer("parameters")
    def _write_parameters(self, value: dict[str, Quantity]) -> dict[str, str]:
        return {name: quantity_text(q) for name, q in value.items()}

    @field_validator("parameters")
    @classmethod
    def _known_parameters(cls, value: dict[str, Any]) -> dict[str, Quantity]:
        out: dict[str, Quantity] = {}
        for name, raw in value.items():
            if name not in PARAMETERS:
                raise ValueError(f"unknown parameter '{name}'; known: {', '.join(sorted(PARAMETERS))}")
            kind = PARAMETERS[name][0]
            try:
                out[name] = parse_for_kind(kind, raw)
            except ValueError as exc:
                raise ValueError(f"parameter '{name}': {exc}") from None
        return out

    @model_validator(mode="after")
    def _check(self) -> Circuit:
        ids = [tp.id for tp in self.test_points]
        dupes = {i for i in ids if ids.count(i) > 1}
        if dupes:
            raise ValueError(f"test point ids repeat: {', '.join(sorted(dupes))}")
        relief_ids = {r.id for r in self.reliefs}
        if self.relief_layout is not None:
            unknown = [r for r in self.relief_layout.relief_ids() if r not in relief_ids]
            if unknown:
                raise ValueError(f"relief_layout names reliefs not listed in reliefs: {', '.join(unknown)}")
        for tp in self.test_points:
            if tp.relief is not None and tp.relief not in relief_ids:
                raise ValueError(
                    f"test point '{tp.id}' names relief '{tp.relief}', which the circuit does not list "
                    f"(it lists: {', '.join(sorted(relief_ids)) or 'none'})"
                )
        return self


class TestWindow(Strict):
    """When a test is valid: oil warm enough and engine at the stated speed."""

    __test__ = False

    # The usual 38-60 °C band (common practice, field notes), the same figure the templates and
    # physics.fluid.MIN_TEST_TEMPERATURE use: one rule decides, and a profile's window overrides it.
    oil_min: Temperature = Field(default="38 °C", validate_default=True)
    oil_max: Temperature = Field(default="60 °C", validate_default=True)
    speed_tolerance_pct: float = Field(default=5.0, gt=0, le=50)
    source: str = "common practice"


class MachineProfile(Strict):
    schema_version: int = SCHEMA_VERSION
    id: str = Field(pattern=ID_PATTERN, max_length=60)
    name: str
    description: str = ""
    maker: str = ""
    model: str = ""
    serial: str = ""
    oil_grade: str = Field(default="VG46", pattern=r"^VG ?\d{1,4}$")
    reference_oil_temperature: Temperature = Field(default="50 °C", validate_default=True)
    rated_speed: Speed
    rated_max_pressure: Pressure
    test_window: TestWindow = Field(default_factory=TestWindow)
    circuits: list[Circuit] = Field(min_length=1)

    @model_validator(mode="after")
    def _unique(self) -> MachineProfile:
        seen: dict[str, str] = {}
        for c in self.circuits:
            for tp in c.test_points:
                if tp.id in seen:
                    raise ValueError(
                        f"test point id '{tp.id}' is used in circuits '{seen[tp.id]}' and '{c.id}'"
                    )
                seen[tp.id] = c.id
        cids = [c.id for c in self.circuits]
        if len(set(cids)) != len(cids):
            raise ValueError("circuit ids must be unique")
        for i, c in enumerate(self.circuits):
            if c.supplied_by is not None and (c.supplied_by == c.id or c.supplied_by not in cids):
                # Raised with its own key so that the file's error points at the supplied_by line.
                raise ValidationError.from_exception_data(
                    "MachineProfile",
                    [
                        InitErrorDetails(
                            type=PydanticCustomError(
                                "supplied_by",
                                "circuit '{circuit}' is supplied_by '{feed}', which is not another circuit "
                                "of this machine (its circuits: {circuits})",
                                {"circuit": c.id, "feed": c.supplied_by, "circuits": ", ".join(cids)},
                            ),
                            loc=("circuits", i, "supplied_by"),
                            input=c.supplied_by,
                        )
                    ],
                )
        return self

    @property
    def viscosity_grade(self) -> int:
        return int(self.oil_grade.replace("VG", "").strip())

    def test_point(self, tp_id: str) -> tuple[Circuit, TestPoint]:
        for c in self.circuits:
            for tp in c.test_points:
                if tp.id == tp_id:
                    return c, tp
        raise KeyError(tp_id)

    def all_test_points(self) -> list[tuple[Circuit, TestPoint]]:
        return [(c, tp) for c in self.circuits for tp in c.test_points]
