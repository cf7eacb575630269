"""Action tests: things a technician does to the machine, not a gauge point, that split the
leading faults (swap two cartridges, cap a cylinder's ports, block the valve, screw in a relief,
load the pump on a flow meter).

They live in ``rules/actions.toml`` (human-editable, errors with file and line). Each action has a
time cost, its outcomes in words with what each means, and for each fault how likely each outcome
is, with its source; a fault the table does not name shows the ``otherwise`` distribution. The
next test ranks them with the gauge points by expected information gain per minute.
"""

from __future__ import annotations

from collections.abc import Collection
from functools import lru_cache
from pathlib import Path

from pydantic import Field, model_validator

from fieldkit.diagnosis.catalogue import CircuitKinds, check_unique_ids
from fieldkit.diagnosis.evidence import AnswerLikelihood
from fieldkit.errors import DataFileError
from fieldkit.model.base import Strict
from fieldkit.model.parts import Part
from fieldkit.model.profile import Circuit
from fieldkit.model.roles import Role
from fieldkit.tomlfile import key_lines, line_for, parse_toml, read_text, validate

ACTIONS_FILE = "actions.toml"


class Outcome(Strict):
    """What the technician sees, and what it means."""

    id: str = Field(pattern=r"^[a-z][a-z0-9_]*$")
    seen: str = Field(min_length=3)
    meaning: str = Field(min_length=3)


class ActionTest(Strict):
    id: str = Field(pattern=r"^[a-z][a-z0-9_-]*$")
    title: str = Field(min_length=3)
    kinds: CircuitKinds
    minutes: float = Field(gt=0, le=24 * 60)
    #: The test point the action is read at (where the UI takes the technician).
    point_role: Role
    #: Not offered on a circuit that has a test point of this role: the reading itself is offered.
    unless_role: Role | None = None
    #: Offered only where one of these parts is fitted (see model.fitted); empty: everywhere.
    needs: list[Part] = Field(default_factory=list)
    outcomes: list[Outcome] = Field(min_length=2, max_length=4)
    otherwise: AnswerLikelihood
    likely: dict[str, AnswerLikelihood] = Field(min_length=1)
    cautions: list[str] = Field(default_factory=list)

    @model_validator(mode="after")
    def _tables_match_outcomes(self) -> ActionTest:
        ids = [o.id for o in self.outcomes]
        if len(set(ids)) != len(ids):
            raise ValueError("outcomes need different ids")
        for name, table in [
            ("otherwise", self.otherwise),
            *((f"likely.{f}", t) for f, t in self.likely.items()),
        ]:
            if sorted(table.p) != sorted(ids):
                raise ValueError(f"{name} must give a probability for each outcome ({', '.join(ids)})")
        return self

    def suits(self, circuit: Circuit) -> bool:
        return circuit.kind.value in self.kinds

    def likelihood(self, fault: str) -> tuple[float, ...]:
        """P(outcome | fault) in the order of ``outcomes``."""
        table = self.likely.get(fault, self.otherwise)
        return tuple(table.p[o.id] for o in self.outcomes)


class _ActionFile(Strict):
    action: list[ActionTest] = Field(min_length=1)


def load_actions(folder: Path, faults: Collection[str], cautions: Collection[str]) -> dict[str, ActionTest]:
    """The action tests of a rules folder; a folder without the file has none."""
    path = folder / ACTIONS_FILE
    if not path.exists():
        return {}
    text = read_text(path)
    actions = validate(_ActionFile, parse_toml(text, str(path)), str(path), text).action
    check_unique_ids(actions, path, text, "action")
    lines = key_lines(text)
    out: dict[str, ActionTest] = {}
    for i, a in enumerate(actions):
        for fault in a.likely:
            if fault not in faults:
                raise DataFileError(
                    str(path),
                    f"action '{a.id}' names fault '{fault}', which rules/faults.toml does not have",
                    line_for(lines, ("action", i, "likely", fault)),
                    f"action.{i}.likely.{fault}",
                )
        for cid in a.cautions:
            if cid not in cautions:
                raise DataFileError(
                    str(path),
                    f"action '{a.id}' names caution '{cid}', which rules/cautions.toml does not have",
                    line_for(lines, ("action", i, "cautions")),
                    f"action.{i}.cautions",
                )
        out[a.id] = a
    return out


@lru_cache(maxsize=4)
def _cached(folder: str, faults: frozenset[str], cautions: frozenset[str]) -> dict[str, ActionTest]:
    return load_actions(Path(folder), faults, cautions)


def action_book(folder: Path, faults: Collection[str], cautions: Collection[str]) -> dict[str, ActionTest]:
    """Loaded once per rules folder and process, like the rule packs."""
    return _cached(str(folder.resolve()), frozenset(faults), frozenset(cautions))


__all__ = ["ACTIONS_FILE", "ActionTest", "Outcome", "action_book", "load_actions"]
