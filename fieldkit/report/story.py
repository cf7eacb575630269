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
from fieldkit.errors import FieldkitError
from fieldkit.model.gauge import Gauge
from fieldkit.model.kit import calibration_warning
from fieldkit.model.profile import MachineProfile
from fieldkit.model.repair import MachineStatus
from fieldkit.model.visit import Visit
from fieldkit.physics.gauges import smallest_gauge
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
    """One "Gauge too small" sentence for the gauge, naming every point it served where it was:
    a point that can reach the end of its scale on this machine (it would be overranged), or a
    working pressure past EN 837-2's share of the scale: ¾ for a steady pressure, ⅔ for a
    fluctuating one (a pulsing point read with a function moving, TestPoint.fluctuates)."""
    if g.kind is not Kind.PRESSURE:
        return ""
    full = to_canonical(g.full_scale, Kind.PRESSURE)
    start = to_canonical(g.scale_start, Kind.PRESSURE) if g.scale_start is not None else 0.0
    served = []
    for r in visit.current_readings():
        if r.gauge != g.id or kind_of(r.value) is not Kind.PRESSURE:
            continue
        try:
            _c, point = profile.test_point(r.test_point)
        except KeyError:
            continue
        rated = point.highest_on_scale
        highest = to_canonical(rated, Kind.PRESSURE) if rated is not None else None
        served.append(
            (
                point.label,
                to_canonical(r.value, Kind.PRESSURE),
                highest,
                point.fluctuates(r.condition.function),
            )
        )
    if not served:
        return ""

    def bar(value: float) -> str:
        return format_value(Q_(value, unit("bar")), system, kind=Kind.PRESSURE)

    if full <= 0:
        # A vacuum gauge ends at (or below) atmosphere: any pressure at the point overranges it.
        above = [(label, h) for label, _w, h, _f in served if h is not None and h > full]
        if not above:
            return ""
        where, highest = max(above, key=lambda x: x[1])
        return (
            f"{where} can reach {bar(highest)} on this machine, above the top of this vacuum gauge's "
            "scale (0, atmosphere): fit it only where the point stays below atmosphere, or use a "
            "compound gauge that reaches that pressure."
        )
    spelling = system.pressure
    per_bar = magnitude_in(Q_(1.0, unit("bar")), unit(_pint_spelling(spelling)))
    d = decimals_for(limit)

    def on_dial(value: float) -> str:
        return f"{value * per_bar:.{d}f} {spelling}"

    overranged: dict[str, float] = {}
    past_share: dict[str, tuple[float, bool]] = {}
    below: dict[str, float] = {}
    for label, work, highest, fluctuating in served:
        peak = work if highest is None else max(work, highest)
        share = FLUCTUATING_SHARE if fluctuating else STEADY_SHARE
        if work < start:
            below[label] = min(work, below.get(label, work))
        elif peak >= full:
            overranged[label] = max(peak, overranged.get(label, peak))
        elif work > share * full:
            # the worst reading at a point: the largest share of the scale against its limit
            old = past_share.get(label)
            if old is None or work / share > old[0] / (FLUCTUATING_SHARE if old[1] else STEADY_SHARE):
                past_share[label] = (work, fluctuating)
    if not (overranged or past_share or below):
        return ""

    def suits(label: str) -> str:
        """The smallest standard gauge for one point: its own readings and rating decide."""
        mine = [(w, h, f) for lab, w, h, f in served if lab == label]
        works = [w for w, _h, _f in mine if w >= 0]
        peaks = [h for _w, h, _f in mine if h is not None]
        try:
            better = smallest_gauge(
                Q_(max(works, default=0.0), unit("bar")),
                Q_(max(peaks), unit("bar")) if peaks else None,
                fluctuating=any(f for _w, _h, f in mine),
            )
        except FieldkitError:
            return ""
        return f" (a 0–{format_value(better, system, kind=Kind.PRESSURE)} gauge suits it)"

    parts = []
    if overranged:
        each = [f"{label} can reach {bar(v)}{suits(label)}" for label, v in overranged.items()]
        reach = ", ".join(each[:-1]) + " and " + each[-1] if len(each) > 1 else each[0]
        parts.append(
            f"{reach} on this machine, at or past the end of its {format_value(g.full_scale, system)} "
            "scale: it would be overranged"
        )
    for label, (work, fluctuating) in past_share.items():
        share, word = (FLUCTUATING_SHARE, "⅔") if fluctuating else (STEADY_SHARE, "¾")
        kind = "fluctuating, a function moving" if fluctuating else "steady"
        parts.append(
            f"{label} read {bar(work)} ({kind}), above {word} of its scale ({on_dial(share * full)})"
            f"{suits(label)}"
        )
    for label, work in below.items():
        parts.append(f"{label} read {bar(work)}, below the start of its scale")
    advice = "Gauge too small: " + "; ".join(parts) + "."
    if past_share:
        kinds = {f for _w, f in past_share.values()}
        rule = {
            frozenset({False}): "a steady pressure within ¾ of the span",
            frozenset({True}): "a fluctuating pressure within ⅔ of the span",
        }.get(frozenset(kinds), "a steady pressure within ¾ of the span and a fluctuating one within ⅔")
        advice += f" EN 837-2 (from memory) keeps {rule}."
    if below:
        advice += " A reading below the scale needs a vacuum or compound gauge."
    return advice


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
