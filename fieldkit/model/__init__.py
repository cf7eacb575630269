"""The domain model: machine profiles, test points, conditions, gauges, readings, visits.

Validated by pydantic; the same models validate the data files people edit (profiles, circuit
templates) and the visits fieldkit saves, so a file is right exactly when the program can use it.
"""

from fieldkit.model.condition import ConditionSpec
from fieldkit.model.profile import (
    Circuit,
    CircuitKind,
    ExpectedRange,
    MachineProfile,
    TestPoint,
)
from fieldkit.model.roles import ROLES, Role, RoleInfo
from fieldkit.model.visit import Condition, FunctionState, Gauge, Reading, Visit, VisitStatus

__all__ = [
    "Circuit",
    "CircuitKind",
    "Condition",
    "ConditionSpec",
    "ExpectedRange",
    "FunctionState",
    "Gauge",
    "MachineProfile",
    "ROLES",
    "Reading",
    "Role",
    "RoleInfo",
    "TestPoint",
    "Visit",
    "VisitStatus",
]
