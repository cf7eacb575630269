"""The job card as one plain data structure: :func:`fieldkit.report.build.job_card` makes it,
the writers lay it out.

The PDF, text and Markdown writers decide nothing: which findings lead, how many faults are
shown, what the next test is and how a reading sits against its band are settled when the card
is built (:mod:`fieldkit.report.build`), so the three formats can never disagree. Every text
field is already clean (:mod:`fieldkit.report.usertext`) and meant to be printed literally.
Nothing here imports a PDF library.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from fieldkit import __version__
from fieldkit.diagnosis.results import Verdict
from fieldkit.errors import FieldkitError
from fieldkit.report.story import Story
from fieldkit.report.usertext import percent

#: A top fault at or above this probability counts as settled: no further test is suggested.
SETTLED = 0.80
#: Faults listed by name; the rest are summed in one line.
TOP_FAULTS = 5
#: Other faults whose fix and parts are listed when the diagnosis is not settled.
LEADING = 0.15
MAX_SUPPORTING = 3
MAX_AGAINST = 2

GENERAL_CAUTION_ID = "general"

#: Explains the share printed after a gauge error, once per card.
LOW_ON_SCALE_KEY = (
    "A share in brackets after a gauge error, such as (6 %): the reading is below a quarter of "
    "the gauge's span, where its error is that share of the reading; a smaller range reads it better."
)


class ReportError(FieldkitError):
    """A job card cannot be made for this visit (no readings, wrong machine)."""


@dataclass(frozen=True, slots=True)
class HeaderField:
    label: str
    value: str


@dataclass(slots=True)
class Header:
    job_number: str
    customer: str
    site: str
    machine: str
    machine_detail: str
    serial: str
    hour_meter: str
    date: str
    technician: str
    oil: str
    oil_grade: str
    oil_temperature: str
    status: str

    def visit_fields(self) -> list[HeaderField]:
        return [
            HeaderField("Customer", self.customer),
            HeaderField("Site", self.site),
            HeaderField("Date", self.date),
            HeaderField("Technician", self.technician),
            HeaderField("Visit status", self.status),
        ]

    def machine_fields(self) -> list[HeaderField]:
        machine = self.machine + (f" ({self.machine_detail})" if self.machine_detail else "")
        oil = self.oil if self.oil_grade in self.oil else f"{self.oil}; machine's grade {self.oil_grade}"
        return [
            HeaderField("Machine", machine),
            HeaderField("Serial", self.serial),
            HeaderField("Hour meter", self.hour_meter),
            HeaderField("Oil", oil),
            HeaderField("Oil temperature", self.oil_temperature),
        ]

    def fields(self) -> list[HeaderField]:
        """Label and value pairs in reading order (writers place them in a grid or a list)."""
        return self.visit_fields() + self.machine_fields()


@dataclass(frozen=True, slots=True)
class Band:
    """Where a reading sits against its expected range, on an axis chosen to show both.

    Positions are fractions of the axis (0 = left end, 1 = right end), so a writer only scales
    them to the space it has. An open side (``≤ 2 bar`` has no lower limit) runs to the axis end.
    """

    axis_min: float
    axis_max: float
    low: float | None
    high: float | None
    value: float
    uncertainty: float
    unit: str

    def at(self, x: float) -> float:
        span = self.axis_max - self.axis_min
        return min(1.0, max(0.0, (x - self.axis_min) / span))

    @property
    def band_from(self) -> float:
        return 0.0 if self.low is None else self.at(self.low)

    @property
    def band_to(self) -> float:
        return 1.0 if self.high is None else self.at(self.high)

    @property
    def value_at(self) -> float:
        return self.at(self.value)

    @property
    def error_from(self) -> float:
        return self.at(self.value - self.uncertainty)

    @property
    def error_to(self) -> float:
        return self.at(self.value + self.uncertainty)


def make_band(value: float, uncertainty: float, low: float | None, high: float | None, unit: str) -> Band:
    """An axis around the range and the reading's error bar, with room on each side."""
    u = abs(uncertainty)
    points = [value - u, value + u] + [b for b in (low, high) if b is not None]
    lo, hi = min(points), max(points)
    span = hi - lo
    if span <= 0:
        span = max(abs(hi) * 0.2, 1.0)
    pad = 0.12 * span
    open_extra = 0.30 * span
    axis_min = lo - pad - (open_extra if low is None and high is not None else 0.0)
    axis_max = hi + pad + (open_extra if high is None and low is not None else 0.0)
    return Band(axis_min, axis_max, low, high, value, u, unit)


@dataclass(slots=True)
class ReadingRow:
    number: int
    reading_id: str
    test_point: str
    circuit: str
    condition: str
    reading: str
    expected: str
    uncertainty: str
    gauge: str
    verdict: Verdict
    verdict_text: str
    remark: str
    note: str
    band: Band | None
    #: The gauge read below a quarter of its span: the gauge error above as a share of the reading
    #: ("13 %"), explained once by :data:`LOW_ON_SCALE_KEY` rather than in a remark per reading.
    low_share: str = ""

    @property
    def uncertainty_text(self) -> str:
        """The gauge error, with its share of the reading when the gauge read low on its scale."""
        return f"{self.uncertainty} ({self.low_share})" if self.low_share else self.uncertainty

    @property
    def flagged(self) -> bool:
        return self.verdict in (Verdict.LOW, Verdict.HIGH, Verdict.INCONCLUSIVE)


@dataclass(slots=True)
class FindingItem:
    title: str
    circuit: str
    verdict: Verdict
    verdict_text: str
    message: str
    action: str
    #: Numbers of the readings (rows of the readings table) the finding rests on.
    readings: list[int] = field(default_factory=list)
    #: Inconclusive on a single reading that is itself inconclusive: the readings table already
    #: says all the finding says, so a short card names it in one line instead of a row.
    repeats_reading: bool = False


@dataclass(slots=True)
class Findings:
    flagged: list[FindingItem]
    in_range: list[str]
    not_checked: list[str]

    @property
    def detailed(self) -> list[FindingItem]:
        """Flagged findings that say more than their reading's row."""
        return [f for f in self.flagged if not f.repeats_reading]

    @property
    def repeated_summary(self) -> str:
        repeated = [f for f in self.flagged if f.repeats_reading]
        if not repeated:
            return ""
        names = "; ".join(f"{f.title} (reading {f.readings[0]})" for f in repeated)
        return f"Also inconclusive, like the one reading each rests on (see Readings): {names}."

    @property
    def in_range_summary(self) -> str:
        if not self.in_range:
            return ""
        return f"{len(self.in_range)} further checks in range: " + "; ".join(self.in_range) + "."

    @property
    def not_checked_summary(self) -> str:
        if not self.not_checked:
            return ""
        return (
            f"{len(self.not_checked)} checks not made (readings missing): "
            + "; ".join(self.not_checked)
            + "."
        )


@dataclass(frozen=True, slots=True)
class EvidenceItem:
    title: str
    weight: str
    message: str

    @property
    def short(self) -> str:
        return f"{self.title} ({self.weight})"


@dataclass(slots=True)
class FaultRow:
    rank: int
    title: str
    probability: float
    probability_text: str
    supporting: list[EvidenceItem]
    against: list[EvidenceItem]
    more_evidence: int
    confirm: str
    fix: str
    parts: list[str]
    healthy: bool

    @property
    def evidence_text(self) -> str:
        """Evidence in one line per direction, for a table cell."""
        lines = []
        if self.supporting:
            lines.append("For: " + "; ".join(e.short for e in self.supporting))
        if self.against:
            lines.append("Against: " + "; ".join(e.short for e in self.against))
        if self.more_evidence:
            lines.append(f"(and {self.more_evidence} weaker)")
        return "\n".join(lines) or "No finding bears on it: prior estimate only."


@dataclass(slots=True)
class Faults:
    top: list[FaultRow]
    others_count: int
    others_probability: float

    @property
    def others_text(self) -> str:
        if not self.others_count:
            return ""
        return f"{self.others_count} other possible faults together: {percent(self.others_probability)}."


@dataclass(frozen=True, slots=True)
class Action:
    text: str
    reason: str


@dataclass(frozen=True, slots=True)
class Part:
    name: str
    for_fault: str


@dataclass(slots=True)
class NextStep:
    test_point: str
    condition: str
    minutes: str
    repeat: bool
    why: str
    outcomes: list[tuple[str, str]]

    @property
    def title(self) -> str:
        verb = "Repeat" if self.repeat else "Measure"
        return f"{verb}: {self.test_point} ({self.condition}), about {self.minutes}"


@dataclass(frozen=True, slots=True)
class Caution:
    """A caution as the customer's card shows it: plain words up front; its source, with the
    honest marks ("[from memory]", "[quoted second-hand]"), only in the appendix under ``note``."""

    title: str
    text: str
    severity: str
    raised_by: str
    source: str
    general: bool
    note: int = 0  # its number in the appendix of sources
    urgent: bool = False  # a reading says stop now (over-pressure): also at the top of the card

    @property
    def note_ref(self) -> str:
        return f"appendix, note {self.note}"


@dataclass(frozen=True, slots=True)
class Note:
    label: str
    text: str


@dataclass(frozen=True, slots=True)
class SignOff:
    role: str
    name: str


@dataclass(slots=True)
class JobCard:
    title: str
    header: Header
    units: str
    conclusion: str
    counts: str
    settled: bool
    readings: list[ReadingRow]
    findings: Findings
    faults: Faults
    actions: list[Action]
    parts: list[Part]
    next_test: NextStep | None
    next_test_note: str
    cautions: list[Caution]
    notes: list[Note]
    sign_off: list[SignOff]
    generator: str = field(default=f"fieldkit {__version__}")
    #: The first page: complaint, cause, work, re-test, status; and the gauges used, once each.
    story: Story | None = None

    @property
    def low_on_scale_key(self) -> str:
        """The key to gauge-error shares, when any reading has one."""
        return LOW_ON_SCALE_KEY if any(r.low_share for r in self.readings) else ""

    @property
    def stop_now(self) -> list[Caution]:
        """Cautions a reading raised (over-pressure, an overranged gauge): first thing on the card."""
        return [c for c in self.cautions if c.urgent]

    @property
    def sources(self) -> list[Caution]:
        """The appendix: each caution's source under its number, in the card's order."""
        return sorted(self.cautions, key=lambda c: c.note)

    @property
    def remarks(self) -> list[ReadingRow]:
        """Readings that carry a remark or a note, for the list under the readings table."""
        return [r for r in self.readings if r.remark or r.note]
