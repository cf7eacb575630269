"""The fault and caution catalogues: data files in ``rules/``, validated by these models.

Faults carry a prior (how common, with its source), what to check and what to fix; cautions carry
their text, severity and source, and say which roles and operating conditions raise them.
"""

from __future__ import annotations

from collections.abc import Sequence
from enum import StrEnum
from pathlib import Path
from typing import Annotated, Protocol

from pydantic import AfterValidator, Field, model_validator

from fieldkit.errors import DataFileError
from fieldkit.model.base import Strict
from fieldkit.model.condition import FunctionState
from fieldkit.model.parts import Part
from fieldkit.model.profile import CircuitKind, Position
from fieldkit.model.quantity import Pressure
from fieldkit.model.roles import Role
from fieldkit.tomlfile import key_lines, line_for, parse_toml, read_text, validate

ANY_CIRCUIT = "*"
NO_FAULT = "no_fault"


def _known_kinds(kinds: list[str]) -> list[str]:
    known = {k.value for k in CircuitKind} | {ANY_CIRCUIT}
    bad = [c for c in kinds if c not in known]
    if bad:
        raise ValueError(f"unknown circuit kind(s) {', '.join(bad)}; known: {', '.join(sorted(known))}")
    return kinds


#: Circuit kinds a fault or rule applies to ("*" for any machine), checked against CircuitKind.
CircuitKinds = Annotated[list[str], Field(min_length=1), AfterValidator(_known_kinds)]
CircuitKindList = Annotated[list[str], AfterValidator(_known_kinds)]


class Fault(Strict):
    id: str = Field(pattern=r"^[a-z][a-z0-9_]*$")
    title: str
    circuits: CircuitKinds
    prior: float = Field(gt=0, le=1)
    prior_source: str = Field(min_length=3)
    description: str
    confirm: str
    fix: str
    parts: list[str] = Field(default_factory=list)
    needs: list[Part] = Field(
        default_factory=list, description="optional parts this fault lives in (any one); see model.fitted"
    )
    check_minutes: float = Field(default=30, gt=0, le=24 * 60)
    #: P(a pressure rule reads low) and P(reads high) added by this fault to every pressure rule
    #: that does not name it: a fault that spoils one reading of the visit, whichever it is (a
    #: gauge out of calibration), so any one pressure finding may be the odd one out.
    spoils_one_pressure_reading: float = Field(default=0.0, ge=0.0, le=0.2)
    spoils_source: str = ""

    @model_validator(mode="after")
    def _spoils_has_source(self) -> Fault:
        if self.spoils_one_pressure_reading and len(self.spoils_source) < 3:
            raise ValueError("spoils_one_pressure_reading needs a spoils_source")
        return self

    @property
    def machine_wide(self) -> bool:
        return ANY_CIRCUIT in self.circuits

    def applies_to(self, kind: CircuitKind) -> bool:
        return kind.value in self.circuits

    def applies_to_name(self, kind: str) -> bool:
        return kind in self.circuits


class Severity(StrEnum):
    NOTICE = "notice"
    WARNING = "warning"
    DANGER = "danger"


class Engine(StrEnum):
    """Whether the engine runs while a reading is taken."""

    RUNNING = "running"
    STOPPED = "stopped"


class CautionWhen(Strict):
    """One situation that raises a caution: every key given must hold (an empty list is no test).

    Situations are what the step does, not which file it came from: the circuit kind, the
    function state, the point's role, the parts fitted, the point's pressure rating, whether the
    engine runs, and where the technician stands."""

    circuits: CircuitKindList = Field(default_factory=list)
    functions: list[FunctionState] = Field(default_factory=list)
    roles: list[Role] = Field(default_factory=list)
    parts: list[Part] = Field(default_factory=list, description="any of these fitted (Circuit.has_part)")
    rated_at_least: Pressure | None = Field(
        default=None, description="the point's rating or highest expected pressure is at least this"
    )
    engine: Engine | None = None
    positions: list[Position] = Field(default_factory=list)

    @model_validator(mode="after")
    def _not_empty(self) -> CautionWhen:
        if not (
            self.circuits
            or self.functions
            or self.roles
            or self.parts
            or self.rated_at_least is not None
            or self.engine is not None
            or self.positions
        ):
            raise ValueError(
                "a 'when' table needs at least one of circuits, functions, roles, parts, "
                "rated_at_least, engine, positions"
            )
        return self


FINDING_REF = r"^[a-z][a-z0-9\-_]*(:(low|high|inconclusive))?$"


class Caution(Strict):
    id: str = Field(pattern=r"^[a-z][a-z0-9\-]*$")
    title: str
    text: str
    severity: Severity
    source: str = Field(min_length=3)
    always: bool = False
    #: Raised at any point of these roles, or any step in these function states (either suffices).
    roles: list[Role] = Field(default_factory=list)
    functions: list[FunctionState] = Field(default_factory=list)
    needs: list[Part] = Field(
        default_factory=list, description="optional parts this caution is about (any one); see model.fitted"
    )
    #: Raised when any of these situations holds.
    when: list[CautionWhen] = Field(default_factory=list)
    #: Raised by a finding: a rule id, optionally with the verdict (``oil-in-test-window:high``).
    findings: list[Annotated[str, Field(pattern=FINDING_REF)]] = Field(default_factory=list)
    #: Its text tells the technician to stop the engine for the step: never shown on a step that
    #: needs the engine running; ``running_instead`` is shown there instead.
    stops_engine: bool = False
    running_instead: str | None = None
    #: The step is unsafe for one person alone.
    two_people: bool = False
    #: Left out where any of these cautions is also shown: they say all it says.
    covered_by: list[str] = Field(default_factory=list)

    @model_validator(mode="after")
    def _instead(self) -> Caution:
        if self.running_instead is not None and not self.stops_engine:
            raise ValueError("running_instead is only for a caution with stops_engine = true")
        return self

    def raised_by_finding(self, rule_id: str, verdict: str) -> bool:
        for ref in self.findings:
            rid, _, want = ref.partition(":")
            if rid == rule_id and (not want or want == verdict):
                return True
        return False


class _FaultFile(Strict):
    fault: list[Fault] = Field(min_length=1)


class _CautionFile(Strict):
    caution: list[Caution] = Field(min_length=1)


class _HasId(Protocol):
    @property
    def id(self) -> str: ...


def check_unique_ids(items: Sequence[_HasId], path: Path, text: str, table: str) -> None:
    """Refuse a rules file whose table names one id twice, at the second one's line."""
    seen: set[str] = set()
    lines = key_lines(text)
    for i, item in enumerate(items):
        if item.id in seen:
            raise DataFileError(
                str(path),
                f"id '{item.id}' appears twice",
                line_for(lines, (table, i, "id")),
                f"{table}.{i}.id",
            )
        seen.add(item.id)


def load_faults(path: Path) -> dict[str, Fault]:
    text = read_text(path)
    faults = validate(_FaultFile, parse_toml(text, str(path)), str(path), text).fault
    check_unique_ids(faults, path, text, "fault")
    if NO_FAULT not in {f.id for f in faults}:
        raise DataFileError(str(path), f"the catalogue must hold the '{NO_FAULT}' entry (a healthy machine)")
    return {f.id: f for f in faults}


def load_cautions(path: Path) -> dict[str, Caution]:
    text = read_text(path)
    cautions = validate(_CautionFile, parse_toml(text, str(path)), str(path), text).caution
    check_unique_ids(cautions, path, text, "caution")
    ids = {c.id for c in cautions}
    lines = key_lines(text)
    for i, c in enumerate(cautions):
        for other in c.covered_by:
            if other not in ids:
                raise DataFileError(
                    str(path),
                    f"caution '{c.id}': covered_by names unknown caution '{other}'",
                    line_for(lines, ("caution", i, "covered_by")),
                    f"caution.{i}.covered_by",
                )
        if c.running_instead is not None and c.running_instead not in ids:
            raise DataFileError(
                str(path),
                f"caution '{c.id}': running_instead names unknown caution '{c.running_instead}'",
                line_for(lines, ("caution", i, "running_instead")),
                f"caution.{i}.running_instead",
            )
    if not any(c.always for c in cautions):
        raise DataFileError(
            str(path),
            "one caution must be marked always = true (the general caution that defers to the machine's "
            "procedures)",
        )
    return {c.id: c for c in cautions}
