"""One-line strips of the visit screen: the title bar, the next test, the top fault, cautions."""

from __future__ import annotations

from rich.text import Text

from fieldkit.diagnosis.catalogue import Caution
from fieldkit.diagnosis.results import Diagnosis, NextTest, RankedFault
from fieldkit.model.profile import MachineProfile
from fieldkit.model.visit import Visit, VisitStatus
from fieldkit.tui.safe_text import literal
from fieldkit.tui.widgets.faults import prob_bar
from fieldkit.units import percent

SEVERITY_SHORT = {"danger": "‼", "warning": "!", "notice": "i"}


def visit_title(visit: Visit, profile: MachineProfile, demo: bool = False) -> Text:
    out = Text(end="", no_wrap=True, overflow="ellipsis")
    if demo:
        out.append(" DEMO ", "reverse bold")
        out.append(" ")
    out.append_text(literal(visit.job_number, "bold"))
    out.append(" · ")
    out.append_text(literal(profile.name))
    if visit.machine_serial:
        out.append(" · ")
        out.append_text(literal(visit.machine_serial))
    out.append(" · ")
    out.append("CLOSED" if visit.status is VisitStatus.CLOSED else "open", "bold")
    out.append(f" · {len(visit.current_readings())} readings")
    if visit.customer:
        out.append(" · ")
        out.append_text(literal(visit.customer))
    return out


def next_line(next_test: NextTest | None, closed: bool) -> Text:
    out = Text(end="", no_wrap=True, overflow="ellipsis")
    out.append("NEXT → ", "bold")
    if closed:
        out.append("visit closed")
        return out
    if next_test is None:
        out.append("no reading the rules could learn more from; ^o finishes the visit")
        return out
    verb = "repeat " if next_test.repeat else ""
    out.append_text(literal(f"{verb}{next_test.label}", "bold"))
    # Minutes, not the ranking's information measure: the diagnosis screen's "why" keeps that.
    out.append_text(literal(f" · {next_test.condition} · about {next_test.minutes:g} min"))
    return out


def top_fault_line(diagnosis: Diagnosis | None, was: RankedFault | None) -> Text:
    """The LIKELY line for a diagnosis; ``was`` is the fault that led before the last reading."""
    return likely_line(diagnosis.faults[0] if diagnosis is not None and diagnosis.faults else None, was)


def likely_line(top: RankedFault | None, was: RankedFault | None) -> Text:
    """The LIKELY line from the leading fault alone (what the line widget is given)."""
    out = Text(end="", no_wrap=True, overflow="ellipsis")
    out.append("LIKELY ▸ ", "bold")
    if top is None:
        out.append("no ranking yet")
        return out
    out.append(prob_bar(top.probability, 6), "bold")
    out.append(f" {percent(top.probability)} ")
    out.append_text(literal(top.display_title, "bold"))
    if was is not None and was.key != top.key:
        out.append_text(literal(f"  (was {was.display_title})", "italic"))
    return out


def caution_strip(cautions: list[Caution] | tuple[Caution, ...]) -> Text:
    out = Text(end="")
    if not cautions:
        out.append("No step cautions listed for this point.")
    for i, c in enumerate(cautions):
        if i:
            out.append(" · ")
        out.append(f"{SEVERITY_SHORT.get(c.severity.value, '!')} ", "bold")
        out.append_text(literal(c.title))
    out.append("  · F2 procedures first", "bold")
    return out
