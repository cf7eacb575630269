"""What a diagnosis hands to the screens, the job card and ``--json``.

Plain dataclasses with display text already made (values in the user's units), so that the
writers only lay things out. :meth:`Diagnosis.to_json` is the documented, stable JSON shape.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, field
from enum import StrEnum
from typing import Any

JSON_FORMAT_VERSION = 1


class Verdict(StrEnum):
    IN_RANGE = "in_range"
    LOW = "low"
    HIGH = "high"
    INCONCLUSIVE = "inconclusive"
    NOT_MEASURED = "not_measured"
    #: A symptom the operator reported or an observation answered (diagnosis.evidence).
    REPORTED = "reported"

    @property
    def label(self) -> str:
        return {
            "in_range": "in range",
            "low": "low",
            "high": "high",
            "inconclusive": "inconclusive",
            "not_measured": "not measured",
            "reported": "reported",
        }[self.value]


@dataclass(slots=True)
class ReadingCheck:
    """One reading against its test point's expected range for the condition it was taken in."""

    reading_id: str
    test_point: str
    test_point_label: str
    circuit: str
    condition: str
    value: str
    expected: str
    uncertainty: str
    verdict: Verdict
    gauge: str
    gauge_advice: str = ""
    #: Numbers in canonical units (bar, L/min, °C…) for drawing band pictures.
    value_num: float | None = None
    low_num: float | None = None
    high_num: float | None = None
    uncertainty_num: float = 0.0
    unit: str = ""
    discounted: str = ""


@dataclass(slots=True)
class Finding:
    rule_id: str
    title: str
    circuit: str | None
    verdict: Verdict
    message: str
    value: str = ""
    uncertainty: str = ""
    low: str = ""
    high: str = ""
    p_low: float = 0.0
    p_in_range: float = 0.0
    p_high: float = 0.0
    readings: list[str] = field(default_factory=list)
    missing: list[str] = field(default_factory=list)
    discount: float = 1.0
    discount_reason: str = ""
    action: str = ""
    cautions: list[str] = field(default_factory=list)
    source: str = ""
    #: Hypothesis key → log-likelihood ratio against a healthy machine, for explanations.
    evidence: dict[str, float] = field(default_factory=dict)

    @property
    def key(self) -> str:
        return f"{self.rule_id}@{self.circuit}" if self.circuit else self.rule_id


@dataclass(slots=True)
class Evidence:
    finding: str
    title: str
    message: str
    ratio: float


@dataclass(slots=True)
class RankedFault:
    id: str
    circuit: str | None
    title: str
    probability: float
    prior: float
    description: str
    confirm: str
    fix: str
    parts: list[str]
    supporting: list[Evidence] = field(default_factory=list)
    against: list[Evidence] = field(default_factory=list)

    @property
    def key(self) -> str:
        return f"{self.id}@{self.circuit}" if self.circuit else self.id

    @property
    def display_title(self) -> str:
        return f"{self.title} ({self.circuit})" if self.circuit else self.title


@dataclass(slots=True)
class RankedPair:
    """Two faults present at once (diagnosis.pairs), with the pair's probability in the model of
    single faults and pairs together."""

    first: RankedFault
    second: RankedFault
    probability: float

    @property
    def key(self) -> str:
        return " + ".join(sorted((self.first.key, self.second.key)))

    @property
    def display_title(self) -> str:
        return f"{self.first.display_title} and {self.second.display_title}"


@dataclass(slots=True)
class NextTest:
    test_point: str
    label: str
    circuit: str
    condition: str
    minutes: float
    gain_bits: float
    why: str
    repeat: bool = False
    gauge_advice: str = ""
    outcomes: dict[str, str] = field(default_factory=dict)
    #: The action test's id (diagnosis.actions) when this is something to do rather than a reading.
    action: str = ""


@dataclass(slots=True)
class CautionNote:
    id: str
    title: str
    text: str
    severity: str
    source: str
    because: str
    #: Raised by what a reading showed (over-pressure, an overranged gauge): act on it at once.
    urgent: bool = False


@dataclass(slots=True)
class Diagnosis:
    visit_id: str
    machine: str
    checks: list[ReadingCheck]
    findings: list[Finding]
    faults: list[RankedFault]
    next_tests: list[NextTest]
    cautions: list[CautionNote]
    entropy_bits: float = 0.0
    notes: list[str] = field(default_factory=list)
    #: Two faults at once, best first; empty unless the leading single fault left a clear
    #: finding unexplained (diagnosis.pairs).
    pairs: list[RankedPair] = field(default_factory=list)
    #: The best pair is more likely than the best single fault: the screens and the card show it.
    pair_wins: bool = False

    @property
    def top(self) -> RankedFault:
        return self.faults[0]

    def to_json(self) -> dict[str, Any]:
        """The ``fieldkit diagnose --json`` shape (documented in the README; version 1)."""
        return {
            "format": "fieldkit.diagnosis",
            "version": JSON_FORMAT_VERSION,
            "visit": self.visit_id,
            "machine": self.machine,
            "readings": [_plain(asdict(c)) for c in self.checks],
            "findings": [
                {k: v for k, v in _plain(asdict(f)).items() if k != "evidence"} | {"id": f.key}
                for f in self.findings
            ],
            "faults": [
                {
                    "id": f.id,
                    "circuit": f.circuit,
                    "title": f.title,
                    "probability": round(f.probability, 4),
                    "prior": round(f.prior, 4),
                    "for": [_plain(asdict(e)) for e in f.supporting],
                    "against": [_plain(asdict(e)) for e in f.against],
                    "confirm": f.confirm,
                    "fix": f.fix,
                    "parts": f.parts,
                }
                for f in self.faults
            ],
            "next_tests": [_plain(asdict(t)) for t in self.next_tests],
            "cautions": [_plain(asdict(c)) for c in self.cautions],
            "uncertainty_bits": round(self.entropy_bits, 3),
            "notes": self.notes,
        } | ({"two_faults": [_pair_json(p) for p in self.pairs]} if self.pair_wins else {})


def _pair_json(p: RankedPair) -> dict[str, Any]:
    return {
        "faults": [{"id": f.id, "circuit": f.circuit, "title": f.title} for f in (p.first, p.second)],
        "probability": round(p.probability, 4),
    }


def _plain(d: dict[str, Any]) -> dict[str, Any]:
    out: dict[str, Any] = {}
    for k, v in d.items():
        if isinstance(v, StrEnum):
            v = v.value
        elif isinstance(v, float):
            v = round(v, 6)
        out[k] = v
    return out
