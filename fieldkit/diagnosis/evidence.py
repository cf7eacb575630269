"""What the operator reports and what the technician sees or hears, as evidence for the ranking.

Symptoms (``rules/symptoms.toml``) and observations (``rules/observations.toml``) are findings
like any rule's, entered in the same naive-Bayes product (:mod:`ranking`):

- a reported symptom multiplies each fault's odds by P(reported | fault) / P(reported | healthy);
  a symptom nobody mentioned says nothing (operators report selectively);
- an answered observation multiplies them by P(answer | fault) / P(answer | healthy), for the
  faults of the circuit where it was answered (and machine-wide faults);
- a fault a table does not name reads like a healthy machine.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from functools import lru_cache
from pathlib import Path

from pydantic import Field, model_validator

from fieldkit.diagnosis.findings import Hypothesis
from fieldkit.diagnosis.results import Finding, Verdict
from fieldkit.errors import DataFileError
from fieldkit.model.base import Strict
from fieldkit.model.roles import Role
from fieldkit.model.visit import Visit
from fieldkit.tomlfile import key_lines, line_for, parse_toml, read_text, validate

MIN_P = 0.01
SYMPTOMS_FILE = "symptoms.toml"
OBSERVATIONS_FILE = "observations.toml"


class Likelihood(Strict):
    p: float = Field(ge=MIN_P, le=1 - MIN_P)
    source: str = Field(min_length=3)


class Symptom(Strict):
    id: str = Field(pattern=r"^[a-z][a-z0-9_]*$")
    text: str = Field(min_length=3)
    healthy: Likelihood
    likely: dict[str, Likelihood] = Field(min_length=1)
    first: list[Role] = Field(default_factory=list, description="roles to measure first")

    def ratio(self, fault: str) -> float:
        held = self.likely.get(fault)
        return (held.p if held else self.healthy.p) / self.healthy.p


class Answer(Strict):
    id: str = Field(pattern=r"^[a-z][a-z0-9_]*$")
    key: str = Field(pattern=r"^[a-z0-9]$", description="the one key that gives this answer")
    text: str


def _answer_table(data: object) -> object:
    # `{ yes = 0.8, no = 0.2, source = "…" }`: the answers' probabilities and one source.
    if isinstance(data, dict):
        probs = {k: v for k, v in data.items() if k != "source"}
        return {"p": probs, "source": data.get("source", "")}
    return data


class AnswerLikelihood(Strict):
    p: dict[str, float]
    source: str = Field(min_length=3)

    @model_validator(mode="before")
    @classmethod
    def _split(cls, data: object) -> object:
        return _answer_table(data)

    @model_validator(mode="after")
    def _sums_to_one(self) -> AnswerLikelihood:
        for answer, p in self.p.items():
            if not MIN_P <= p <= 1 - MIN_P:
                raise ValueError(f"{answer} = {p}: a probability lies between {MIN_P} and {1 - MIN_P}")
        if abs(sum(self.p.values()) - 1) > 0.005:
            raise ValueError(f"the answers' probabilities add up to {sum(self.p.values()):g}, not 1")
        return self


class ObservationCheck(Strict):
    id: str = Field(pattern=r"^[a-z][a-z0-9_]*$")
    question: str = Field(min_length=3)
    roles: list[Role] = Field(default_factory=list)
    answers: list[Answer] = Field(min_length=2, max_length=6)
    healthy: AnswerLikelihood
    likely: dict[str, AnswerLikelihood] = Field(min_length=1)

    @model_validator(mode="after")
    def _answers_match(self) -> ObservationCheck:
        ids = [a.id for a in self.answers]
        keys = [a.key for a in self.answers]
        if len(set(ids)) != len(ids) or len(set(keys)) != len(keys):
            raise ValueError("answers need different ids and different keys")
        for name, table in [("healthy", self.healthy), *((f"likely.{f}", t) for f, t in self.likely.items())]:
            if sorted(table.p) != sorted(ids):
                raise ValueError(f"{name} must give a probability for each answer ({', '.join(ids)})")
        return self

    def answer(self, answer_id: str) -> Answer | None:
        return next((a for a in self.answers if a.id == answer_id), None)

    def ratio(self, fault: str, answer: str) -> float:
        held = self.likely.get(fault, self.healthy)
        return held.p[answer] / self.healthy.p[answer]


class _SymptomFile(Strict):
    symptom: list[Symptom] = Field(min_length=1)


class _ObservationFile(Strict):
    observation: list[ObservationCheck] = Field(min_length=1)


class EvidenceBook(Strict):
    """Everything the rules folder says about symptoms and observations."""

    symptoms: dict[str, Symptom]
    observations: dict[str, ObservationCheck]


def _check_faults(
    path: Path, text: str, table: str, items: Sequence[Symptom | ObservationCheck], faults: set[str]
) -> None:
    lines = key_lines(text)
    seen: set[str] = set()
    for i, item in enumerate(items):
        if item.id in seen:
            raise DataFileError(str(path), f"id '{item.id}' appears twice", line_for(lines, (table, i, "id")))
        seen.add(item.id)
        for fault in item.likely:
            if fault not in faults:
                raise DataFileError(
                    str(path),
                    f"{table} '{item.id}' names fault '{fault}', which rules/faults.toml does not have",
                    line_for(lines, (table, i, "likely", fault)),
                    f"{table}.{i}.likely.{fault}",
                )


def load_evidence(folder: Path, faults: set[str]) -> EvidenceBook:
    """Symptoms and observations of a rules folder; a folder without the files has none."""
    symptoms: list[Symptom] = []
    checks: list[ObservationCheck] = []
    path = folder / SYMPTOMS_FILE
    if path.exists():
        text = read_text(path)
        symptoms = validate(_SymptomFile, parse_toml(text, str(path)), str(path), text).symptom
        _check_faults(path, text, "symptom", symptoms, faults)
    path = folder / OBSERVATIONS_FILE
    if path.exists():
        text = read_text(path)
        checks = validate(_ObservationFile, parse_toml(text, str(path)), str(path), text).observation
        _check_faults(path, text, "observation", checks, faults)
    return EvidenceBook(symptoms={s.id: s for s in symptoms}, observations={o.id: o for o in checks})


@lru_cache(maxsize=4)
def _cached(folder: str, faults: frozenset[str]) -> EvidenceBook:
    return load_evidence(Path(folder), set(faults))


def evidence_book(folder: Path, faults: set[str] | frozenset[str]) -> EvidenceBook:
    """Loaded once per rules folder and process, like the rule packs."""
    return _cached(str(folder.resolve()), frozenset(faults))


def evidence_findings(visit: Visit, book: EvidenceBook, hypotheses: list[Hypothesis]) -> list[Finding]:
    """The visit's reported symptoms and answered observations as findings with evidence."""
    out: list[Finding] = []
    for sid in visit.symptoms:
        symptom = book.symptoms.get(sid)
        if symptom is None:
            continue  # a symptom since removed from the rules: kept on the visit, not counted
        evidence = {h.key: math.log(symptom.ratio(h.fault.id)) for h in hypotheses}
        out.append(
            Finding(
                rule_id=f"symptom-{sid}",
                title=f"Reported: {symptom.text}",
                circuit=None,
                verdict=Verdict.REPORTED,
                message=f"The operator reports: {symptom.text.lower()}.",
                source=_sources(symptom.healthy.source, *(lk.source for lk in symptom.likely.values())),
                evidence={k: v for k, v in evidence.items() if abs(v) > 1e-12},
            )
        )
    latest: dict[tuple[str, str | None], int] = {}
    for i, obs in enumerate(visit.observations):
        latest[(obs.check, obs.circuit)] = i  # a check answered again: the newest answer stands
    for i in sorted(latest.values()):
        obs = visit.observations[i]
        check = book.observations.get(obs.check)
        answer = check.answer(obs.answer) if check is not None else None
        if check is None or answer is None:
            continue
        evidence = {}
        for h in hypotheses:
            here = obs.circuit is None or h.circuit is None or h.circuit.id == obs.circuit
            ratio = check.ratio(h.fault.id, answer.id) if here else 1.0
            if abs(math.log(ratio)) > 1e-12:
                evidence[h.key] = math.log(ratio)
        out.append(
            Finding(
                rule_id=f"observed-{check.id}",
                title=check.question,
                circuit=obs.circuit,
                verdict=Verdict.REPORTED,
                message=f"{check.question} — {answer.text}.",
                source=_sources(check.healthy.source, *(lk.source for lk in check.likely.values())),
                evidence=evidence,
            )
        )
    return out


def _sources(*sources: str) -> str:
    return "; ".join(dict.fromkeys(s for s in sources if s))


def checks_for_role(book: EvidenceBook, role: Role) -> list[ObservationCheck]:
    """The observations a step at a point of this role asks (its own test's questions)."""
    return [c for c in book.observations.values() if role in c.roles]


__all__ = [
    "EvidenceBook",
    "ObservationCheck",
    "Symptom",
    "checks_for_role",
    "evidence_book",
    "evidence_findings",
    "load_evidence",
]
