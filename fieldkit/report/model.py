"""The job card as one plain data structure, built once from a visit and its diagnosis.

The PDF, text and Markdown writers lay this out and decide nothing: which findings lead, how many
faults are shown, what the next test is and how a reading sits against its band are settled
here, so the three formats can never disagree. Nothing here imports a PDF library.
"""

from __future__ import annotations

import unicodedata
from dataclasses import dataclass, field

from fieldkit import __version__
from fieldkit.diagnosis.catalogue import NO_FAULT
from fieldkit.diagnosis.results import (
    CautionNote,
    Diagnosis,
    Evidence,
    Finding,
    NextTest,
    RankedFault,
    ReadingCheck,
    Verdict,
)
from fieldkit.errors import FieldkitError
from fieldkit.model.profile import MachineProfile
from fieldkit.model.visit import Visit
from fieldkit.units import METRIC, DisplaySystem, Kind, format_value, to_canonical

#: A top fault at or above this probability counts as settled: no further test is suggested.
SETTLED = 0.80
#: Faults listed by name; the rest are summed in one line.
TOP_FAULTS = 5
#: Other faults whose fix and parts are listed when the diagnosis is not settled.
LEADING = 0.15
MAX_SUPPORTING = 3
MAX_AGAINST = 2

GENERAL_CAUTION_ID = "general"
# Used only when a rules folder lacks its general caution: the job card always carries one.
_FALLBACK_GENERAL = CautionNote(
    id=GENERAL_CAUTION_ID,
    title="The machine's own procedures come first",
    text=("This card is an aid, not a procedure. The machine maker's service instructions, the site's "
          "permit and lockout rules and local regulations take precedence over anything printed here."),
    severity="notice",
    source="common practice",
    because="always",
)


class ReportError(FieldkitError):
    """A job card cannot be made for this visit (no readings, wrong machine)."""


# --- text from people and data files -------------------------------------------------------

def plain(text: str) -> str:
    """User text made safe to print, without changing what it says.

    Tabs become spaces and line ends become ``\\n``; other control characters (an escape sequence
    pasted from a terminal, a NUL) are written out as ``\\x1b`` so they are visible but inert, and
    a lone surrogate (possible in JSON) becomes U+FFFD so the file can be encoded.
    """
    text = str(text).replace("\r\n", "\n").replace("\r", "\n").replace("\t", " ")
    out: list[str] = []
    for ch in text:
        if ch == "\n":
            out.append(ch)
            continue
        cat = unicodedata.category(ch)
        if cat == "Cc":
            out.append(f"\\x{ord(ch):02x}" if ord(ch) < 0x100 else f"\\u{ord(ch):04x}")
        elif cat == "Cs":
            out.append("\ufffd")
        else:
            out.append(ch)
    return "".join(out)


def one_line(text: str) -> str:
    """User text for a place that holds one line (a header field, a table cell)."""
    return " / ".join(part.strip() for part in plain(text).split("\n") if part.strip())


#: Between a number and its unit sign, so a line never breaks between them.
NBSP = "\u00a0"


def percent(p: float) -> str:
    if p < 0.005:
        return f"<1{NBSP}%"
    if p > 0.995:
        return f">99{NBSP}%"
    return f"{p * 100:.0f}{NBSP}%"


# --- the report's parts ----------------------------------------------------------------------

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


@dataclass(slots=True)
class Findings:
    flagged: list[FindingItem]
    in_range: list[str]
    not_checked: list[str]

    @property
    def in_range_summary(self) -> str:
        if not self.in_range:
            return ""
        return f"{len(self.in_range)} further checks in range: " + "; ".join(self.in_range) + "."

    @property
    def not_checked_summary(self) -> str:
        if not self.not_checked:
            return ""
        return f"{len(self.not_checked)} checks not made (readings missing): " + "; ".join(self.not_checked) + "."


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
    title: str
    text: str
    severity: str
    raised_by: str
    source: str
    general: bool


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

    @property
    def remarks(self) -> list[ReadingRow]:
        """Readings that carry a remark or a note, for the list under the readings table."""
        return [r for r in self.readings if r.remark or r.note]


# --- building ----------------------------------------------------------------------------

def build_report(visit: Visit, profile: MachineProfile, diagnosis: Diagnosis,
                 system: DisplaySystem | None = None) -> JobCard:
    """Everything the job card says, from the visit, its machine and its diagnosis.

    ``system`` should be the display system the diagnosis was made in (its texts already are);
    it sets the units of the few values formatted here, such as the oil temperature.
    """
    system = system or METRIC
    _check_inputs(visit, profile, diagnosis)
    readings = _readings(visit, diagnosis)
    settled = bool(diagnosis.faults) and diagnosis.top.probability >= SETTLED
    next_test, next_note = _next_step(diagnosis, settled)
    leading = _leading_faults(diagnosis, settled)
    return JobCard(
        title="Service job card",
        header=_header(visit, profile, system),
        units=f"Units: pressure {system.pressure}, flow {system.flow}, temperature {system.temperature}.",
        conclusion=_conclusion(diagnosis, settled, next_test is not None),
        counts=_counts(readings),
        settled=settled,
        readings=readings,
        findings=_findings(diagnosis.findings),
        faults=_faults(diagnosis.faults),
        actions=_actions(leading, diagnosis.findings),
        parts=_parts(leading),
        next_test=next_test,
        next_test_note=next_note,
        cautions=_cautions(diagnosis.cautions),
        notes=_notes(visit, diagnosis),
        sign_off=[SignOff("Technician", one_line(visit.technician)), SignOff("Customer", "")],
    )


def _check_inputs(visit: Visit, profile: MachineProfile, diagnosis: Diagnosis) -> None:
    where = f"visit '{visit.id}' (job {one_line(visit.job_number)})"
    if not visit.current_readings():
        raise ReportError(f"{where} has no readings: a job card needs at least one reading")
    if visit.machine != profile.id:
        raise ReportError(f"{where} is for machine '{visit.machine}', but the profile given is '{profile.id}'")
    if diagnosis.visit_id != visit.id:
        raise ReportError(f"{where}: the diagnosis given belongs to visit '{diagnosis.visit_id}'")
    if not diagnosis.checks:
        raise ReportError(f"{where}: none of its readings is at a test point of machine '{profile.id}'"
                          + (f" ({'; '.join(diagnosis.notes)})" if diagnosis.notes else ""))


def _header(visit: Visit, profile: MachineProfile, system: DisplaySystem) -> Header:
    detail = " ".join(p for p in (profile.maker, profile.model) if p)
    return Header(
        job_number=one_line(visit.job_number),
        customer=one_line(visit.customer) or "not recorded",
        site=one_line(visit.site) or "not recorded",
        machine=one_line(profile.name),
        machine_detail=one_line(detail),
        serial=one_line(visit.machine_serial or profile.serial) or "not recorded",
        hour_meter=_hours(visit.hour_meter),
        date=visit.date.isoformat(),
        technician=one_line(visit.technician) or "not recorded",
        oil=one_line(visit.oil) or "not recorded",
        oil_grade=profile.oil_grade,
        oil_temperature=_oil_temperature(visit, system),
        status=visit.status.value,
    )


def _hours(value: float | None) -> str:
    if value is None:
        return "not recorded"
    return f"{value:.1f}".rstrip("0").rstrip(".") + " h"


def _oil_temperature(visit: Visit, system: DisplaySystem) -> str:
    temps = [r.condition.oil_temperature for r in visit.current_readings() if r.condition.oil_temperature is not None]
    if not temps:
        return "not recorded"
    coolest = min(temps, key=lambda q: to_canonical(q, Kind.TEMPERATURE))
    hottest = max(temps, key=lambda q: to_canonical(q, Kind.TEMPERATURE))
    lo, hi = format_value(coolest, system), format_value(hottest, system)
    return f"{lo} during readings" if lo == hi else f"{lo} to {hi} during readings"


_VERDICT_TEXT = {
    Verdict.IN_RANGE: "in range",
    Verdict.LOW: "LOW",
    Verdict.HIGH: "HIGH",
    Verdict.INCONCLUSIVE: "inconclusive",
    Verdict.NOT_MEASURED: "no range",
}


def _readings(visit: Visit, diagnosis: Diagnosis) -> list[ReadingRow]:
    notes = {r.id: plain(r.note).strip() for r in visit.readings}
    repeat_advice = {t.test_point: t.gauge_advice for t in diagnosis.next_tests if t.repeat and t.gauge_advice}
    rows = []
    for i, c in enumerate(diagnosis.checks, start=1):
        band = None
        if c.value_num is not None and (c.low_num is not None or c.high_num is not None):
            band = make_band(c.value_num, c.uncertainty_num, c.low_num, c.high_num, c.unit)
        rows.append(ReadingRow(
            number=i, reading_id=c.reading_id, test_point=one_line(c.test_point_label), circuit=c.circuit,
            condition=one_line(c.condition), reading=one_line(c.value), expected=one_line(c.expected),
            uncertainty=c.uncertainty, gauge=one_line(c.gauge), verdict=c.verdict,
            verdict_text=_VERDICT_TEXT[c.verdict], remark=_remark(c, repeat_advice.get(c.test_point, "")),
            note=notes.get(c.reading_id, ""), band=band,
        ))
    return rows


def _remark(c: ReadingCheck, repeat_advice: str) -> str:
    """What a technician should know or do about one reading, in a sentence or two."""
    parts = []
    if c.verdict is Verdict.INCONCLUSIVE:
        parts.append(f"Inconclusive: the reading lies within the gauge's error ({c.uncertainty}) of a limit, "
                     "so it cannot be called in or out of range.")
        parts.append(plain(repeat_advice) if repeat_advice else
                     "Repeat it with a gauge of smaller full scale or better accuracy class.")
    elif c.verdict is Verdict.NOT_MEASURED:
        parts.append("The machine profile has no expected range for this condition: compare it with the "
                     "maker's figure by hand.")
    if c.gauge_advice and c.gauge_advice not in repeat_advice:
        parts.append("Gauge: " + plain(c.gauge_advice).rstrip(".") + ".")
    if c.discounted:
        parts.append("Not used in the diagnosis: " + plain(c.discounted).rstrip(".") + ".")
    return " ".join(parts)


def _findings(findings: list[Finding]) -> Findings:
    order = {Verdict.LOW: 0, Verdict.HIGH: 0, Verdict.INCONCLUSIVE: 1}
    flagged = sorted((f for f in findings if f.verdict in order), key=lambda f: order[f.verdict])
    items = []
    for f in flagged:
        action = plain(f.action)
        if f.verdict is Verdict.INCONCLUSIVE and not action:
            action = ("Too close to a limit to call: repeat the readings it uses with a gauge of smaller "
                      "span or better accuracy class.")
        items.append(FindingItem(
            title=one_line(f.title), circuit=f.circuit or "", verdict=f.verdict,
            verdict_text=_VERDICT_TEXT[f.verdict], message=plain(f.message), action=action,
        ))
    in_range = [one_line(f.title) for f in findings if f.verdict is Verdict.IN_RANGE]
    not_checked = [one_line(f.title) + (f" (needs {', '.join(f.missing)})" if f.missing else "")
                   for f in findings if f.verdict is Verdict.NOT_MEASURED]
    return Findings(items, in_range, not_checked)


def _weight(ratio: float) -> str:
    """A likelihood ratio as a short factor: ×25 speaks for a fault, ÷4 against it."""
    if ratio >= 1:
        return f"×{ratio:.2g}" if ratio < 10 else f"×{ratio:.0f}"
    inverse = 1 / ratio if ratio > 0 else float("inf")
    return f"÷{inverse:.2g}" if inverse < 10 else f"÷{inverse:.0f}"


def _evidence(items: list[Evidence]) -> list[EvidenceItem]:
    return [EvidenceItem(one_line(e.title), _weight(e.ratio), plain(e.message)) for e in items]


def _faults(faults: list[RankedFault]) -> Faults:
    rows = []
    for rank, f in enumerate(faults[:TOP_FAULTS], start=1):
        more = max(0, len(f.supporting) - MAX_SUPPORTING) + max(0, len(f.against) - MAX_AGAINST)
        rows.append(FaultRow(
            rank=rank, title=one_line(f.display_title), probability=f.probability,
            probability_text=percent(f.probability), supporting=_evidence(f.supporting[:MAX_SUPPORTING]),
            against=_evidence(f.against[:MAX_AGAINST]), more_evidence=more, confirm=plain(f.confirm),
            fix=plain(f.fix), parts=[one_line(p) for p in f.parts], healthy=f.id == NO_FAULT,
        ))
    rest = faults[TOP_FAULTS:]
    return Faults(rows, len(rest), sum(f.probability for f in rest))


def _leading_faults(diagnosis: Diagnosis, settled: bool) -> list[RankedFault]:
    faults = diagnosis.faults[:TOP_FAULTS]
    if not faults:
        return []
    if settled:
        return faults[:1]
    return [faults[0]] + [f for f in faults[1:] if f.probability >= LEADING]


def _actions(leading: list[RankedFault], findings: list[Finding]) -> list[Action]:
    actions: list[Action] = []
    seen: set[str] = set()

    def add(text: str, reason: str) -> None:
        text = plain(text).strip()
        if text and text not in seen:
            seen.add(text)
            actions.append(Action(text, reason))

    for f in leading:
        reason = f"{one_line(f.display_title)}, {percent(f.probability)}"
        if f.id == NO_FAULT:
            add(f.confirm, reason)
            add(f.fix, reason)
        else:
            add("Confirm: " + f.confirm if f.confirm else "", reason)
            add("If confirmed: " + f.fix if f.fix else "", reason)
    for f in findings:
        if f.verdict in (Verdict.LOW, Verdict.HIGH) and f.action:
            add(f.action, f"{one_line(f.title)} (finding)")
    unsure = [f for f in findings if f.verdict is Verdict.INCONCLUSIVE]
    for f in unsure:
        if f.action:
            add(f.action, f"{one_line(f.title)} (inconclusive finding)")
    generic = [one_line(f.title) for f in unsure if not f.action]
    if generic:
        add("Repeat the readings behind these inconclusive findings with a gauge of smaller span or better "
            "accuracy class, so the gauge's error no longer straddles the limit: " + "; ".join(generic) + ".",
            "inconclusive findings")
    return actions


def _parts(leading: list[RankedFault]) -> list[Part]:
    parts: list[Part] = []
    seen: set[str] = set()
    for f in leading:
        for p in f.parts:
            name = one_line(p)
            if name and name.lower() not in seen:
                seen.add(name.lower())
                parts.append(Part(name, one_line(f.display_title)))
    return parts


def _next_step(diagnosis: Diagnosis, settled: bool) -> tuple[NextStep | None, str]:
    if settled:
        return None, (f"Settled: the leading fault has {percent(diagnosis.top.probability)} "
                      f"(at least {percent(SETTLED)}); go to its confirm check.")
    if not diagnosis.next_tests:
        return None, ("Not settled, and no further reading in the rule packs separates the leading faults: "
                      "use the confirm checks under Recommended actions.")
    t: NextTest = diagnosis.next_tests[0]
    minutes = f"{t.minutes:.0f} min"
    step = NextStep(
        test_point=one_line(t.label), condition=one_line(t.condition), minutes=minutes, repeat=t.repeat,
        why=plain(t.why), outcomes=[(one_line(k), one_line(v)) for k, v in t.outcomes.items()],
    )
    return step, f"Not settled: the leading fault has {percent(diagnosis.top.probability)}, below {percent(SETTLED)}."


def _conclusion(diagnosis: Diagnosis, settled: bool, has_next: bool) -> str:
    if not diagnosis.faults:
        return "No fault could be ranked for this visit."
    top = diagnosis.top
    if settled and top.id == NO_FAULT:
        return (f"No fault found: the readings fit a healthy machine ({percent(top.probability)}). "
                "Keep them as a baseline for the next visit.")
    if settled:
        return (f"Most likely fault: {one_line(top.display_title)} ({percent(top.probability)}). "
                "Confirm it before any repair.")
    lead = ", ".join(f"{one_line(f.display_title)} {percent(f.probability)}"
                     for f in [top] + [f for f in diagnosis.faults[1:3] if f.probability >= 0.05])
    tail = " The next test below is chosen to separate them." if has_next else (
        " No further reading separates them: use the confirm checks.")
    return f"Not settled yet. Leading: {lead}.{tail}"


def _counts(readings: list[ReadingRow]) -> str:
    out = sum(r.verdict in (Verdict.LOW, Verdict.HIGH) for r in readings)
    unsure = sum(r.verdict is Verdict.INCONCLUSIVE for r in readings)
    ok = sum(r.verdict is Verdict.IN_RANGE for r in readings)
    no_range = sum(r.verdict is Verdict.NOT_MEASURED for r in readings)
    text = f"{len(readings)} readings: {out} out of range, {unsure} inconclusive, {ok} in range"
    return text + (f", {no_range} without an expected range." if no_range else ".")


def _cautions(notes: list[CautionNote]) -> list[Caution]:
    if not any(c.id == GENERAL_CAUTION_ID for c in notes):
        notes = [_FALLBACK_GENERAL, *notes]
    general = [c for c in notes if c.id == GENERAL_CAUTION_ID]
    rest = [c for c in notes if c.id != GENERAL_CAUTION_ID]
    return [
        Caution(title=one_line(c.title), text=plain(c.text), severity=c.severity,
                raised_by="always shown" if c.because == "always" else plain(c.because),
                source=one_line(c.source), general=c.id == GENERAL_CAUTION_ID)
        for c in general[:1] + rest
    ]


def _notes(visit: Visit, diagnosis: Diagnosis) -> list[Note]:
    notes = []
    if visit.notes.strip():
        notes.append(Note("Visit notes", plain(visit.notes).strip()))
    if visit.summary.strip():
        notes.append(Note("Technician's summary", plain(visit.summary).strip()))
    for note in diagnosis.notes:
        notes.append(Note("fieldkit", plain(note)))
    return notes
