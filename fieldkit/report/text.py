"""The job card as plain text, at most 80 columns a line, for pasting into a work-order system.

Every line goes through :func:`fieldkit.report.columns.wrap`, so a long note, a pasted URL or a
name in a wide script still fits. Text from people is printed as typed (after
:func:`fieldkit.report.model.plain`); nothing is interpreted.
"""

from __future__ import annotations

from fieldkit.report.columns import wrap
from fieldkit.report.model import JobCard

COLUMNS = 80
RULE = "=" * COLUMNS
VERDICT_COLUMN = 18  # reading blocks: number and verdict on the left, details from here


def _section(out: list[str], title: str) -> None:
    out.extend(["", title.upper(), "-" * len(title)])


def _para(out: list[str], text: str, indent: str = "", hanging: str | None = None) -> None:
    out.extend(wrap(text, COLUMNS, indent, hanging))


def render_text(card: JobCard) -> str:
    out: list[str] = []
    _para(out, f"{card.title.upper()} - job {card.header.job_number}")
    out.append(RULE)
    label_width = max(len(f.label) for f in card.header.fields()) + 2
    for f in card.header.fields():
        _para(out, f.value, f"{f.label:<{label_width}}", " " * label_width)
    _para(out, card.units)
    for c in card.stop_now:
        out.append("")
        _para(out, f"{c.severity.upper()}: {c.title}", "!! ", "   ")
        _para(out, c.text, "   ")
        _para(out, f"({c.raised_by})", "   ")

    _story(out, card)

    _section(out, "Summary")
    _para(out, card.conclusion)
    _para(out, card.counts)

    _readings(out, card)
    _gauges(out, card)
    _findings(out, card)
    _faults(out, card)
    _actions(out, card)
    _next_test(out, card)
    _cautions(out, card)
    _notes(out, card)
    _sign_off(out, card)
    _sources(out, card)
    out.extend(["", RULE])
    _para(out, f"Job card {card.header.job_number}, made by {card.generator}.")
    return "\n".join(out) + "\n"


def _story(out: list[str], card: JobCard) -> None:
    story = card.story
    if story is None:
        return
    if story.tag_out:
        out.extend(["", "!" * COLUMNS])
        _para(out, story.tag_out, "!! ", "!! ")
        out.append("!" * COLUMNS)
    _section(out, "The visit")
    width = max(len(label) for label, _ in story.first_page) + 2
    for label, text in story.first_page:
        _para(out, text, f"{label:<{width}}", " " * width)
    if story.open_dangers:
        _para(out, "Still open after the repair (danger): " + "; ".join(story.open_dangers) + ".")
    if story.symptoms:
        _para(out, "Symptoms reported: " + "; ".join(story.symptoms) + ".")
    if story.observations:
        out.append("")
        _para(out, "Seen and heard:")
        for o in story.observations:
            _para(out, o, "  - ", "    ")
    if story.retest:
        _section(out, "Before and after the repair")
        for r in story.retest:
            _para(out, f"{r.point} - {r.condition}; expected {r.expected}")
            _para(
                out,
                f"before {r.before} ({r.before_verdict})  ->  after {r.after} ({r.after_verdict})",
                "    ",
            )


def _gauges(out: list[str], card: JobCard) -> None:
    if card.story is None or not card.story.gauges:
        return
    _section(out, "Gauges used")
    for g in card.story.gauges:
        flag = "  ** CALIBRATION OVERDUE **" if g.overdue else ""
        _para(out, f"{g.instrument}{flag}", f"{g.id:<7}", " " * 7)
        _para(out, f"limit of error {g.limit}; serial {g.serial}; calibration {g.calibration}", " " * 7)
        if g.advice:
            _para(out, g.advice, " " * 7)


def _readings(out: list[str], card: JobCard) -> None:
    _section(out, "Readings")
    hang = " " * VERDICT_COLUMN
    for r in card.readings:
        head = f"{r.number:>2}  {r.verdict_text:<{VERDICT_COLUMN - 4}}"
        _para(out, f"{r.test_point} - {r.condition}", head, hang)
        _para(out, f"{r.reading} (gauge error {r.uncertainty}); expected {r.expected}", hang)
        share = f"; low on its scale, its error is {r.low_share} of the reading" if r.low_share else ""
        _para(out, f"gauge {r.gauge}{share}", hang)
        if r.remark:
            _para(out, r.remark, hang)
        if r.note:
            _para(out, f"Note: {r.note}", hang)
    if card.low_on_scale_key:
        out.append("")
        _para(out, card.low_on_scale_key)


def _findings(out: list[str], card: JobCard) -> None:
    _section(out, "Findings")
    hang = " " * VERDICT_COLUMN
    if not card.findings.flagged:
        _para(out, "No finding out of range or inconclusive.")
    for f in card.findings.flagged:
        circuit = f" ({f.circuit})" if f.circuit else ""
        _para(out, f"{f.title}{circuit}", f"    {f.verdict_text:<{VERDICT_COLUMN - 4}}", hang)
        _para(out, f.message, hang)
    for summary in (card.findings.in_range_summary, card.findings.not_checked_summary):
        if summary:
            out.append("")
            _para(out, summary)


def _faults(out: list[str], card: JobCard) -> None:
    _section(out, "Likely faults")
    hang = " " * 11
    for f in card.faults.top:
        _para(out, f.title, f"{f.probability_text:>7}  {f.rank}. ", hang)
        _para(out, f.evidence_text, hang)
    if card.faults.others_text:
        _para(out, card.faults.others_text, hang)
    out.append("")
    _para(
        out,
        "×N: a finding is N times as likely with this fault as on a healthy machine; "
        "÷N: N times less likely.",
    )


def _actions(out: list[str], card: JobCard) -> None:
    _section(out, "Recommended actions")
    if not card.actions:
        _para(out, "None.")
    for i, a in enumerate(card.actions, start=1):
        _para(out, a.text, f"{i:>2}. ", "    ")
        _para(out, f"(because of: {a.reason})", "    ")
    if card.parts:
        out.append("")
        _para(out, "Parts to have at hand (if the fault is confirmed):")
        for p in card.parts:
            _para(out, f"{p.name} (for {p.for_fault})", "  - ", "    ")


def _next_test(out: list[str], card: JobCard) -> None:
    _section(out, "Next test")
    _para(out, card.next_test_note)
    t = card.next_test
    if t is not None:
        _para(out, t.title, "  ", "    ")
        _para(out, t.why, "    ")


def _cautions(out: list[str], card: JobCard) -> None:
    _section(out, "Safety cautions")
    for c in card.cautions:
        mark = "!!" if c.severity == "danger" else " !"
        _para(out, f"{c.title} [{c.severity}]", f"{mark} ", "   ")
        _para(out, c.text, "   ")
        _para(out, f"Raised: {c.raised_by}. See {c.note_ref}.", "   ")


def _sources(out: list[str], card: JobCard) -> None:
    """The appendix: where each caution comes from, marks kept ("[from memory]" and the like)."""
    _section(out, "Appendix: sources of the safety cautions")
    for c in card.sources:
        _para(out, f"{c.title}: {c.source}", f"{c.note:>2}. ", "    ")


def _notes(out: list[str], card: JobCard) -> None:
    _section(out, "Notes")
    if not card.notes:
        _para(out, "None.")
    for n in card.notes:
        _para(out, f"{n.label}:")
        _para(out, n.text, "  ")


def _sign_off(out: list[str], card: JobCard) -> None:
    _section(out, "Sign-off")
    for s in card.sign_off:
        out.append("")
        name = s.name or "_" * 30
        _para(out, name, f"{s.role}: ", "  ")
        out.append(f"  Signature: {'_' * 30}   Date: {'_' * 14}")
