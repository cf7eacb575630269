"""Assembling the job card: which findings lead, which faults are named, what to do next.

Every choice the writers must not make is made here, once, from the visit, its machine profile
and its diagnosis; :mod:`fieldkit.report.model` holds the result's shape.
"""

from __future__ import annotations

from fieldkit.diagnosis.catalogue import NO_FAULT
from fieldkit.diagnosis.engine import Knowledge
from fieldkit.diagnosis.resolution import as_read_with_limit
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
from fieldkit.model.profile import MachineProfile
from fieldkit.model.roles import Role
from fieldkit.model.visit import Visit
from fieldkit.report.gauge_use import GaugeUse, gauge_uses
from fieldkit.report.model import (
    GENERAL_CAUTION_ID,
    LEADING,
    MAX_AGAINST,
    MAX_SUPPORTING,
    SETTLED,
    TOP_FAULTS,
    Action,
    Caution,
    EvidenceItem,
    FaultRow,
    Faults,
    FindingItem,
    Findings,
    Header,
    JobCard,
    NextStep,
    Note,
    Part,
    ReadingRow,
    ReportError,
    SignOff,
    make_band,
)
from fieldkit.report.story import build_story, plain_why
from fieldkit.report.usertext import one_line, percent, plain
from fieldkit.units import METRIC, DisplaySystem, Kind, format_value, to_canonical

# Used only when a rules folder lacks its general caution: the job card always carries one.
_FALLBACK_GENERAL = CautionNote(
    id=GENERAL_CAUTION_ID,
    title="The machine's own procedures come first",
    text=(
        "This card is an aid, not a procedure. The machine maker's service instructions, the site's "
        "permit and lockout rules and local regulations take precedence over anything printed here."
    ),
    severity="notice",
    source="common practice",
    because="always",
)


def job_card(
    visit: Visit,
    profile: MachineProfile,
    diagnosis: Diagnosis,
    system: DisplaySystem | None = None,
    knowledge: Knowledge | None = None,
) -> JobCard:
    """Everything the job card says, from the visit, its machine and its diagnosis.

    ``system`` should be the display system the diagnosis was made in (its texts already are);
    it sets the units of the few values formatted here, such as the oil temperature. Raises
    :class:`ReportError` for a visit without readings or a profile of another machine.
    """
    system = system or METRIC
    _check_inputs(visit, profile, diagnosis)
    readings = _readings(visit, diagnosis, gauge_uses(visit, profile, system))
    settled = bool(diagnosis.faults) and diagnosis.top.probability >= SETTLED
    next_test, next_note = _next_step(diagnosis, settled)
    leading = _leading_faults(diagnosis, settled)
    return JobCard(
        title="Service job card",
        header=_header(visit, profile, system),
        units=f"Units: pressure {system.pressure}, flow {system.flow}, temperature {system.temperature}.",
        conclusion=_conclusion(diagnosis, settled, next_test is not None, repaired=bool(visit.work)),
        counts=_counts(readings),
        settled=settled,
        readings=readings,
        findings=_findings(diagnosis.findings, readings),
        faults=_faults(diagnosis.faults),
        actions=_actions(leading, diagnosis.findings),
        parts=_parts(leading),
        next_test=next_test,
        next_test_note=next_note,
        cautions=_cautions(diagnosis.cautions),
        notes=_notes(visit, diagnosis, _conditions_assumed(visit, profile, system)),
        sign_off=[SignOff("Technician", one_line(visit.technician)), SignOff("Customer", "")],
        story=build_story(visit, profile, diagnosis, system, knowledge),
    )


def _check_inputs(visit: Visit, profile: MachineProfile, diagnosis: Diagnosis) -> None:
    where = f"visit '{visit.id}' (job {one_line(visit.job_number)})"
    if not visit.current_readings():
        raise ReportError(f"{where} has no readings: a job card needs at least one reading")
    if visit.machine != profile.id:
        raise ReportError(
            f"{where} is for machine '{visit.machine}', but the profile given is '{profile.id}'"
        )
    if diagnosis.visit_id != visit.id:
        raise ReportError(f"{where}: the diagnosis given belongs to visit '{diagnosis.visit_id}'")
    if not diagnosis.checks:
        raise ReportError(
            f"{where}: none of its readings is at a test point of machine '{profile.id}'"
            + (f" ({'; '.join(diagnosis.notes)})" if diagnosis.notes else "")
        )


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
        date=_date_and_times(visit),
        technician=one_line(visit.technician) or "not recorded",
        oil=one_line(visit.oil) or "not recorded",
        oil_grade=profile.oil_grade,
        oil_temperature=_oil_temperature(visit, system),
        status=visit.status.value,
    )


def _date_and_times(visit: Visit) -> str:
    """The visit's date, and the first and last reading as the site's clock showed them
    (Visit.time_zone; UTC when none was set): the customer reads local times."""
    taken = [r.taken_at for r in visit.current_readings()]
    if not taken:
        return visit.date.isoformat()
    zone = visit.local_zone()
    first, last = (min(taken).astimezone(zone), max(taken).astimezone(zone))
    when = first.strftime("%H:%M") if first == last else f"{first:%H:%M} to {last:%H:%M}"
    day = "" if first.date() == visit.date else f" on {first.date().isoformat()}"
    return f"{visit.date.isoformat()} (readings {when}{day} {last.strftime('%Z')})"


def _hours(value: float | None) -> str:
    if value is None:
        return "not recorded"
    return f"{value:.1f}".rstrip("0").rstrip(".") + " h"


def _oil_temperature(visit: Visit, system: DisplaySystem) -> str:
    temps = [
        r.condition.oil_temperature
        for r in visit.current_readings()
        if r.condition.oil_temperature is not None
    ]
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
    Verdict.REPORTED: "reported",
}


def _readings(visit: Visit, diagnosis: Diagnosis, uses: dict[str, GaugeUse]) -> list[ReadingRow]:
    notes = {r.id: plain(r.note).strip() for r in visit.readings}
    repeat_advice = {
        t.test_point: t.gauge_advice for t in diagnosis.next_tests if t.repeat and t.gauge_advice
    }
    rows = []
    # A reading with no range of its own may still be judged, as part of a finding made of
    # several readings (pump outlet minus LS signal: the load-sensing margin).
    part_of: dict[str, Finding] = {}
    for f in diagnosis.findings:
        if len(set(f.readings)) > 1 and f.verdict in (Verdict.LOW, Verdict.HIGH, Verdict.IN_RANGE):
            for rid in f.readings:
                part_of.setdefault(rid, f)
    for i, c in enumerate(diagnosis.checks, start=1):
        band = None
        if c.value_num is not None and (c.low_num is not None or c.high_num is not None):
            band = make_band(c.value_num, c.uncertainty_num * _RECTANGULAR, c.low_num, c.high_num, c.unit)
        use = uses.get(c.reading_id, GaugeUse())
        share = _low_share(c, use)
        reading_text, limit_text = _as_read(c)
        rows.append(
            ReadingRow(
                number=i,
                reading_id=c.reading_id,
                test_point=one_line(c.test_point_label),
                circuit=c.circuit,
                condition=one_line(c.condition),
                reading=one_line(reading_text),
                expected=one_line(c.expected),
                uncertainty=limit_text,
                gauge=one_line(c.gauge.split(":", 1)[0]),
                verdict=c.verdict,
                verdict_text=_VERDICT_TEXT[c.verdict],
                remark=_remark(
                    c, repeat_advice.get(c.test_point, ""), use, bool(share), part_of.get(c.reading_id)
                ),
                note=notes.get(c.reading_id, ""),
                band=band,
                low_share=share,
            )
        )
    return rows


#: u = a/√3 for a limit of error a read as a rectangular distribution (JCGM 100:2008, 4.3.7):
#: the card prints the limit a technician reads off the dial, the "why" view keeps u.
_RECTANGULAR = 3**0.5


def _as_read(c: ReadingCheck) -> tuple[str, str]:
    """The value to the gauge's resolution and its EN 837-1 class limit (±a), in the card's units."""
    return as_read_with_limit(c)


def _low_share(c: ReadingCheck, use: GaugeUse) -> str:
    """The printed gauge error as a share of the reading, for a reading low on its gauge's scale."""
    if not (use.low and c.gauge_advice and c.value_num):
        return ""
    return f"{100.0 * c.uncertainty_num * _RECTANGULAR / abs(c.value_num):.0f} %"


def _remark(
    c: ReadingCheck, repeat_advice: str, use: GaugeUse, share_shown: bool, part_of: Finding | None = None
) -> str:
    """What a technician should know or do about one reading, in a sentence or two.

    A gauge too small for its point (overranged, or past EN 837-2's share of its scale) is said
    once per gauge under Gauges used, with the points it served, never on the rows; a reading
    low on a big gauge's scale only gets its error's share of the reading (``low_share``) beside
    the gauge error. Any other concern about the gauge keeps the diagnosis's own words.
    """
    parts = []
    if c.verdict is Verdict.INCONCLUSIVE:
        parts.append(
            f"Inconclusive: within the gauge's error ({_as_read(c)[1]}) of a limit, so it cannot be "
            "called in or out of range."
        )
        parts.append(
            plain(repeat_advice)
            if repeat_advice
            else "Repeat it with a gauge of smaller full scale or better accuracy class."
        )
    elif c.verdict is Verdict.NOT_MEASURED and part_of is not None:
        parts.append(
            f"No range of its own in this condition: it counts in {plain(part_of.title)}, "
            f"{part_of.value}, {_VERDICT_TEXT[part_of.verdict]} (see Findings)."
        )
    elif c.verdict is Verdict.NOT_MEASURED:
        parts.append(
            "The machine profile has no expected range for this condition: compare it with the "
            "maker's figure by hand."
        )
    too_small = bool(use.overrange or use.high_on_scale)
    if c.gauge_advice and c.gauge_advice not in repeat_advice and not too_small:
        # A reading low on its scale is told by its share beside the gauge error; any other
        # concern in the diagnosis's words.
        if not (use.low and share_shown):
            parts.append("Gauge: " + plain(c.gauge_advice).rstrip(".") + ".")
    if c.discounted:
        parts.append("Not used in the diagnosis: " + plain(c.discounted).rstrip(".") + ".")
    return " ".join(parts)


def _findings(findings: list[Finding], readings: list[ReadingRow]) -> Findings:
    rows = {r.reading_id: r for r in readings}
    order = {Verdict.LOW: 0, Verdict.HIGH: 0, Verdict.INCONCLUSIVE: 1}
    flagged = sorted((f for f in findings if f.verdict in order), key=lambda f: order[f.verdict])
    items = []
    for f in flagged:
        action = plain(f.action)
        if f.verdict is Verdict.INCONCLUSIVE and not action:
            action = (
                "Too close to a limit to call: repeat the readings it uses with a gauge of smaller "
                "span or better accuracy class."
            )
        used = [rows[r] for r in f.readings if r in rows]
        repeats = (
            f.verdict is Verdict.INCONCLUSIVE
            and len(f.readings) == 1
            and len(used) == 1
            and used[0].verdict is Verdict.INCONCLUSIVE
        )
        items.append(
            FindingItem(
                title=one_line(f.title),
                circuit=f.circuit or "",
                verdict=f.verdict,
                verdict_text=_VERDICT_TEXT[f.verdict],
                message=plain(f.message),
                action=action,
                readings=[r.number for r in used],
                repeats_reading=repeats,
            )
        )
    in_range = [one_line(f.title) for f in findings if f.verdict is Verdict.IN_RANGE]
    not_checked = [
        one_line(f.title) + (f" (needs {', '.join(f.missing)})" if f.missing else "")
        for f in findings
        if f.verdict is Verdict.NOT_MEASURED
    ]
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
        rows.append(
            FaultRow(
                rank=rank,
                title=one_line(f.display_title),
                probability=f.probability,
                probability_text=percent(f.probability),
                supporting=_evidence(f.supporting[:MAX_SUPPORTING]),
                against=_evidence(f.against[:MAX_AGAINST]),
                more_evidence=more,
                confirm=plain(f.confirm),
                fix=plain(f.fix),
                parts=[one_line(p) for p in f.parts],
                healthy=f.id == NO_FAULT,
            )
        )
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
    for finding in findings:
        if finding.verdict in (Verdict.LOW, Verdict.HIGH) and finding.action:
            add(finding.action, f"{one_line(finding.title)} (finding)")
    unsure = [f for f in findings if f.verdict is Verdict.INCONCLUSIVE]
    for finding in unsure:
        if finding.action:
            add(finding.action, f"{one_line(finding.title)} (inconclusive finding)")
    generic = [one_line(f.title) for f in unsure if not f.action]
    if generic:
        add(
            "Repeat the readings behind these inconclusive findings with a gauge of smaller span or better "
            "accuracy class, so the gauge's error no longer straddles the limit: " + "; ".join(generic) + ".",
            "inconclusive findings",
        )
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
        return None, (
            f"Settled: the leading fault has {percent(diagnosis.top.probability)} "
            f"(at least {percent(SETTLED)}); go to its confirm check."
        )
    if not diagnosis.next_tests:
        return None, (
            "Not settled, and no further reading in the rule packs separates the leading faults: "
            "use the confirm checks under Recommended actions."
        )
    t: NextTest = diagnosis.next_tests[0]
    minutes = f"{max(1, round(t.minutes))} minutes"
    step = NextStep(
        test_point=one_line(t.label),
        condition=one_line(t.condition),
        minutes=minutes,
        repeat=t.repeat,
        why=plain(plain_why(t)),
        outcomes=[(one_line(k), one_line(v)) for k, v in t.outcomes.items()],
    )
    return (
        step,
        f"Not settled: the leading fault has {percent(diagnosis.top.probability)}, below {percent(SETTLED)}.",
    )


def _conclusion(diagnosis: Diagnosis, settled: bool, has_next: bool, repaired: bool = False) -> str:
    # After a repair the card reports what was found and done; "confirm before any repair" is
    # advice for a card written at the diagnosis.
    if not diagnosis.faults:
        return "No fault could be ranked for this visit."
    top = diagnosis.top
    if settled and top.id == NO_FAULT:
        return (
            f"No fault found: the readings fit a healthy machine ({percent(top.probability)}). "
            "Keep them as a baseline for the next visit."
        )
    if settled and repaired:
        return (
            f"Fault found: {one_line(top.display_title)} ({percent(top.probability)} from the readings "
            "before the repair). See the work done and the re-test below."
        )
    if settled:
        return (
            f"Most likely fault: {one_line(top.display_title)} ({percent(top.probability)}). "
            "Confirm it before any repair."
        )
    lead = ", ".join(
        f"{one_line(f.display_title)} {percent(f.probability)}"
        for f in [top] + [f for f in diagnosis.faults[1:3] if f.probability >= 0.05]
    )
    tail = (
        " The next test below is chosen to separate them."
        if has_next
        else (" No further reading separates them: use the confirm checks.")
    )
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
        Caution(
            title=one_line(c.title),
            text=plain(c.text),
            severity=c.severity,
            raised_by="always shown" if c.because == "always" else plain(c.because),
            source=one_line(c.source),
            general=c.id == GENERAL_CAUTION_ID,
            note=n,
            urgent=c.urgent,
        )
        for n, c in enumerate(general[:1] + rest, start=1)
    ]


#: The note's label on every card format (tests read the card back by it).
CONDITIONS_ASSUMED = "Conditions assumed"


def _conditions_assumed(visit: Visit, profile: MachineProfile, system: DisplaySystem) -> str:
    """Which readings' engine speed and oil temperature were not read for them: not measured, or
    taken from an earlier value (issue 10, item 6). '' when every condition was typed for its
    reading (or comes from a visit made before fieldkit recorded where conditions came from)."""
    points = {tp.id: tp for _c, tp in profile.all_test_points()}
    groups: dict[str, list[str]] = {}
    for r in visit.current_readings():
        tp = points.get(r.test_point)
        if tp is None:
            continue
        label = one_line(tp.label)
        c = r.condition
        for what, value, source, own in (
            ("engine speed", c.speed, c.speed_from, Role.PUMP_SPEED),
            ("oil temperature", c.oil_temperature, c.oil_from, Role.OIL_TEMPERATURE),
        ):
            if tp.role is own:
                continue  # a speed reading is its own speed
            if value is None:
                key = f"{what} not measured"
            elif source is not None and source.assumed:
                key = f"{what} {source.words}"
                label = f"{label} ({format_value(value, system)})"
            else:
                continue
            groups.setdefault(key, []).append(label)
            label = one_line(tp.label)
    if not groups:
        return ""
    parts = [f"{key}: {', '.join(dict.fromkeys(labels))}" for key, labels in groups.items()]
    text = "; ".join(parts) + "."
    if any(k.startswith("oil temperature not measured") for k in groups):
        text += (
            " Where a reading has no oil temperature, the diagnosis uses the nearest oil temperature reading."
        )
    return text[0].upper() + text[1:]


def _notes(visit: Visit, diagnosis: Diagnosis, conditions: str = "") -> list[Note]:
    notes = []
    if conditions:
        notes.append(Note(CONDITIONS_ASSUMED, conditions))
    if visit.notes.strip():
        notes.append(Note("Visit notes", plain(visit.notes).strip()))
    if visit.summary.strip():
        notes.append(Note("Technician's summary", plain(visit.summary).strip()))
    for note in diagnosis.notes:
        notes.append(Note("fieldkit", plain(note)))
    return notes
