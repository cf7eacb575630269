"""The first page of the job card as a customer and a workshop read it: what the operator
reported, the cause found, the work done, the re-test, the machine's status and what happens
next; and the gauges used, each once, with the limit of error a technician reads off its dial.

Plain words only: no information-theory units, the next test in minutes, times in the visit's
own time zone, every value in the chosen unit system.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

from fieldkit.diagnosis.catalogue import NO_FAULT
from fieldkit.diagnosis.engine import Knowledge, default_knowledge
from fieldkit.diagnosis.evidence import evidence_book
from fieldkit.diagnosis.results import Diagnosis, NextTest, Verdict
from fieldkit.diagnosis.retest import decimals_for, limit_text, open_dangers, retest_rows
from fieldkit.model.gauge import Gauge
from fieldkit.model.kit import calibration_warning
from fieldkit.model.profile import MachineProfile
from fieldkit.model.repair import MachineStatus
from fieldkit.model.visit import Visit
from fieldkit.report.usertext import one_line, percent, plain
from fieldkit.units import (
    METRIC,
    Q_,
    SPELLINGS,
    DisplaySystem,
    Kind,
    format_value,
    kind_of,
    magnitude_in,
    to_canonical,
    unit,
)

#: EN 837-2 (from memory): a steady working pressure at most ¾ of the span, a fluctuating one ⅔.
STEADY_SHARE = 0.75
FLUCTUATING_SHARE = 2 / 3

TAG_OUT = (
    "DO NOT OPERATE. This machine was taken out of service by {who} on {when}: {why} "
    "Do not start or use it until it is repaired and the tag is removed by an authorised person, "
    "following the site's lockout and tag-out procedure."
)

_VERDICT_WORDS = {
    Verdict.IN_RANGE: "in range",
    Verdict.LOW: "LOW",
    Verdict.HIGH: "HIGH",
    Verdict.INCONCLUSIVE: "cannot be called",
    Verdict.NOT_MEASURED: "no range",
    Verdict.REPORTED: "reported",
}


@dataclass(frozen=True, slots=True)
class RetestLine:
    point: str
    condition: str
    expected: str
    before: str
    before_verdict: str
    after: str
    after_verdict: str
    passed: bool


@dataclass(frozen=True, slots=True)
class GaugeLine:
    id: str
    instrument: str
    limit: str
    serial: str
    calibration: str
    overdue: bool
    advice: str


@dataclass(slots=True)
class Story:
    complaint: str
    symptoms: list[str]
    cause: str
    observations: list[str]
    work: list[str]
    retest: list[RetestLine]
    status: str
    status_kind: str  # "fit_to_run", "fit_with_limits", "do_not_operate" or "" when not recorded
    status_detail: str
    tag_out: str
    next_action: str
    open_dangers: list[str]
    gauges: list[GaugeLine] = field(default_factory=list)

    @property
    def first_page(self) -> list[tuple[str, str]]:
        """The five things a customer reads first, as label and text."""
        work = "; ".join(self.work) if self.work else "No repair recorded."
        status = self.status + (f" — {self.status_detail}" if self.status_detail else "")
        return [
            ("Complaint", self.complaint),
            ("Cause found", self.cause),
            ("Work done", work),
            ("Status", status),
            ("Next action", self.next_action),
        ]


# --- gauge error as technicians read it --------------------------------------------------


def class_limit(g: Gauge) -> float:
    """EN 837-1 limit of error in the gauge's own unit: class (% of span) × span.
    Class 1.0 on a 0–60 bar gauge → ±0.6 bar."""
    span = g.span
    return g.accuracy_class / 100.0 * float(span.magnitude)


def limit_in(g: Gauge, system: DisplaySystem) -> tuple[float, str]:
    """The class limit in the display system's unit for the gauge's kind, and that unit."""
    kind = g.kind
    spelling = system.spelling_for(kind)
    limit_q = g.span * (g.accuracy_class / 100.0)
    if kind is Kind.TEMPERATURE:  # a temperature *difference*: a kelvin is a °C, 1.8 °F
        kelvin = float(limit_q.to(unit("delta_degC")).magnitude)
        return (kelvin * 1.8 if "F" in spelling else kelvin), spelling
    return magnitude_in(limit_q, unit(_pint_spelling(spelling))), spelling


def _pint_spelling(spelling: str) -> str:
    return SPELLINGS[spelling][0]


def gauge_lines(visit: Visit, profile: MachineProfile, system: DisplaySystem) -> list[GaugeLine]:
    """Each gauge used on the visit once: its class limit, serial, calibration and EN 837-2 advice
    from the highest pressure any point it served can reach on this machine."""
    used = {r.gauge for r in visit.current_readings() if r.gauge}
    out: list[GaugeLine] = []
    for g in visit.gauges:
        if g.id not in used:
            continue
        limit, spelling = limit_in(g, system)
        span = g.span_text(system, sep=" to ")
        instrument = f"{g.label}, {span}" if g.label else f"{g.kind.value} gauge, {span}"
        overdue = bool(calibration_warning(g, visit.date))
        if g.calibration_due is None:
            calibration = "no date recorded"
        elif overdue:
            calibration = f"OVERDUE: was due {g.calibration_due.isoformat()}, before this visit"
        else:
            calibration = f"due {g.calibration_due.isoformat()}"
        out.append(
            GaugeLine(
                id=g.id,
                instrument=one_line(instrument),
                limit=f"{limit_text(limit)} {spelling} (EN 837-1 class {g.accuracy_class:g})"
                if g.kind is Kind.PRESSURE
                else f"{limit_text(limit)} {spelling} ({g.accuracy_class:g} % of span)",
                serial=one_line(g.serial) or "not recorded",
                calibration=calibration,
                overdue=overdue,
                advice=_range_advice(visit, profile, g, system, limit),
            )
        )
    return out


def _range_advice(
    visit: Visit, profile: MachineProfile, g: Gauge, system: DisplaySystem, limit: float
) -> str:
    if g.kind is not Kind.PRESSURE:
        return ""
    highest = None
    where = ""
    for r in visit.current_readings():
        if r.gauge != g.id:
            continue
        try:
            _c, point = profile.test_point(r.test_point)
        except KeyError:
            continue
        if point.max_pressure is None or kind_of(point.max_pressure) is not Kind.PRESSURE:
            continue
        top = to_canonical(point.max_pressure, Kind.PRESSURE)
        if highest is None or top > highest:
            highest, where = top, point.label
    if highest is None:
        return ""
    full = to_canonical(g.full_scale, Kind.PRESSURE)
    if full <= 0:
        # A vacuum gauge ends at (or below) atmosphere: any pressure at the point overranges it.
        if highest <= full:
            return ""
        return (
            f"{where} can reach {format_value(Q_(highest, unit('bar')), system, kind=Kind.PRESSURE)} "
            "on this machine, above the top of this vacuum gauge's scale (0, atmosphere): fit it only "
            "where the point stays below atmosphere, or use a compound gauge that reaches that pressure."
        )
    if highest <= FLUCTUATING_SHARE * full:
        return ""
    spelling = system.pressure
    per_bar = magnitude_in(Q_(1.0, unit("bar")), unit(_pint_spelling(spelling)))
    d = decimals_for(limit)

    def shown(bar: float) -> str:
        return f"{bar * per_bar:.{d}f} {spelling}"

    share = round(100 * highest / full)
    suits = format_value(
        Q_(highest / FLUCTUATING_SHARE, unit("bar")), system, kind=Kind.PRESSURE, significant=2
    )
    return (
        f"{where} can reach {format_value(Q_(highest, unit('bar')), system, kind=Kind.PRESSURE)} on this "
        f"machine, {share} % of this gauge's scale. EN 837-2 "
        f"(from memory): a steady pressure within ¾ of the span ({shown(STEADY_SHARE * full)} here), a "
        f"fluctuating one within ⅔ ({shown(FLUCTUATING_SHARE * full)}); a gauge of at least "
        f"{suits} suits that point."
    )


# --- the story ---------------------------------------------------------------------------


def build_story(
    visit: Visit,
    profile: MachineProfile,
    diagnosis: Diagnosis,
    system: DisplaySystem = METRIC,
    knowledge: Knowledge | None = None,
) -> Story:
    knowledge = knowledge or default_knowledge()
    book = evidence_book(knowledge.folder, set(knowledge.faults))
    symptoms = [book.symptoms[s].text for s in visit.symptoms if s in book.symptoms]
    complaint = plain(visit.complaint).strip()
    if not complaint:
        complaint = ("Reported: " + "; ".join(symptoms) + ".") if symptoms else "Not recorded."
    observations = []
    latest = {}
    for o in visit.observations:
        latest[(o.check, o.circuit)] = o
    for o in latest.values():
        check = book.observations.get(o.check)
        answer = check.answer(o.answer) if check else None
        if check and answer:
            observations.append(f"{check.question} — {answer.text}")
    rows = retest_rows(visit, profile, knowledge, system)
    dangers = [one_line(f.title) for f in open_dangers(visit, profile, knowledge)]
    departure = visit.departure
    status, kind, detail, tag = "Not recorded", "", "", ""
    if departure is not None:
        status, kind = departure.status.label, departure.status.value
        if departure.status is MachineStatus.LIMITED:
            detail = "limits: " + plain(departure.limits).strip()
        if departure.why.strip():
            detail = (detail + "; " if detail else "") + plain(departure.why).strip()
        if departure.status is MachineStatus.DO_NOT_OPERATE:
            when = departure.decided_at.astimezone(visit.local_zone()).strftime("%Y-%m-%d %H:%M %Z")
            why = plain(departure.why).strip().rstrip(".") + "."
            tag = TAG_OUT.format(who=one_line(visit.technician) or "the technician", when=when, why=why)
    return Story(
        complaint=complaint,
        symptoms=symptoms,
        cause=_cause(diagnosis),
        observations=observations,
        work=[plain(w.describe_in(system)) for w in visit.work],
        retest=[
            RetestLine(
                point=one_line(r.label),
                condition=one_line(r.condition),
                expected=_without_source(one_line(r.expected)),
                before=r.before,
                before_verdict=_VERDICT_WORDS[r.before_verdict] if r.before_verdict else "—",
                after=r.after,
                after_verdict=_VERDICT_WORDS[r.after_verdict],
                passed=r.after_verdict is Verdict.IN_RANGE,
            )
            for r in rows
        ],
        status=status,
        status_kind=kind,
        status_detail=detail,
        tag_out=tag,
        next_action=_next_action(visit, diagnosis),
        open_dangers=dangers,
        gauges=gauge_lines(visit, profile, system),
    )


_SOURCE_MARKS = re.compile(r"\s*(\(?(from memory|second-hand|common practice)\)?|typical \([^)]*\))", re.I)


def _without_source(text: str) -> str:
    """A range as the customer reads it: where a figure came from stays in the technician's
    view and the appendix."""
    return " ".join(_SOURCE_MARKS.sub("", text).split())


def plain_why(t: NextTest) -> str:
    """The next test's reason in words a customer reads: its minutes and what each outcome
    would mean, without the information-theory measure the ranking uses."""
    verb = "Measure again" if t.repeat else "Measure"
    said = "; ".join(f"if {k}, {v}" for k, v in t.outcomes.items())
    step = t.label if t.action else f"{verb} {t.label} ({t.condition})"  # an action test is its own sentence
    text = (
        f"{step}: of the checks left, it does most to settle the cause "
        f"for the time it takes, about {max(1, round(t.minutes))} minutes."
    )
    if said:
        text += f" {said[0].upper()}{said[1:]}."
    if t.gauge_advice:
        text += f" {t.gauge_advice}"
    return text


def _cause(diagnosis: Diagnosis) -> str:
    if not diagnosis.faults:
        return "Not determined."
    if diagnosis.pair_wins and diagnosis.pairs:
        pair = diagnosis.pairs[0]
        both = " and ".join(
            f.title + (f" in the {f.circuit} circuit" if f.circuit else "") for f in (pair.first, pair.second)
        )
        return (
            f"Two faults at once: {both} ({percent(pair.probability)} likely together from the readings "
            "and checks). No single fault explains every finding."
        )
    top = diagnosis.faults[0]
    if top.id == NO_FAULT:
        return f"No hydraulic fault found in the readings ({percent(top.probability)} likely)."
    where = f" in the {top.circuit} circuit" if top.circuit else ""
    text = f"{top.title}{where} ({percent(top.probability)} likely from the readings and checks)."
    if top.probability < 0.8 and len(diagnosis.faults) > 1:
        second = diagnosis.faults[1]
        text += f" Not yet certain: {second.title} is {percent(second.probability)} likely."
    return text


def _next_action(visit: Visit, diagnosis: Diagnosis) -> str:
    if visit.departure is not None and visit.departure.next_action.strip():
        return plain(visit.departure.next_action).strip()
    if visit.departure is not None and visit.departure.status is MachineStatus.FIT:
        return "None: the machine may be used as normal."
    if diagnosis.next_tests and not visit.work:
        t = diagnosis.next_tests[0]
        minutes = max(1, round(t.minutes))
        if t.action:  # an action test's title is already an instruction
            return f"{t.label}; about {minutes} minutes."
        return f"Measure {t.label} ({t.condition}); about {minutes} minutes."
    return "Not recorded."
