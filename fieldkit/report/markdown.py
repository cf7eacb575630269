"""The job card as GitHub-flavoured Markdown.

Every piece of text that is not our own markup goes through :func:`inline` (or :func:`block_line`
at the start of a line), which backslash-escapes what Markdown would act on: a job number with
``|`` stays in its table cell, a note with ``[x](y)`` or ``*`` shows those characters, and ``<b>``
is never HTML. Line breaks inside table cells become ``<br>``, the one tag we write ourselves.
"""

from __future__ import annotations

import re

from fieldkit.report.model import JobCard

# Characters with an inline meaning in CommonMark or GitHub's extensions (tables, strikethrough,
# maths, entities, raw HTML). Escaping any ASCII punctuation is always allowed, so erring wide is safe.
_INLINE = re.compile(r"([\\`*_\[\]<>|~&$])")
# A colon that opens an emoji short code (:name:), which GitHub would turn into a picture.
# Applied after the other escapes, so an underscore in the name is already written "\_".
_EMOJI_COLON = re.compile(r":(?=(?:[A-Za-z0-9+\-]|\\_)+:)")
# What turns the start of a line into a heading, quote, list, rule, fence or setext underline.
_LINE_START = re.compile(r"^([#>+\-=*]|\d{1,9}(?=[.)]))")


def inline(text: str) -> str:
    """Text shown literally inside a paragraph or a table cell (one line)."""
    escaped = _EMOJI_COLON.sub(r"\\:", _INLINE.sub(r"\\\1", text))
    return escaped.replace("\n", "<br>")


def block_line(text: str) -> str:
    """One line of text shown literally where it starts a Markdown line."""
    text = text.strip()
    escaped = _EMOJI_COLON.sub(r"\\:", _INLINE.sub(r"\\\1", text))
    match = _LINE_START.match(escaped)
    if match is None:
        return escaped
    if match.group(1)[0].isdigit():  # "1." starts a list: escape the dot or bracket after the number
        end = match.end()
        return escaped[:end] + "\\" + escaped[end:]
    return "\\" + escaped


def paragraph(text: str) -> list[str]:
    """Multi-line text as Markdown lines, keeping its line breaks (a backslash at a line's end)."""
    lines = [block_line(line) for line in text.split("\n")]
    out: list[str] = []
    for i, line in enumerate(lines):
        nxt = lines[i + 1] if i + 1 < len(lines) else ""
        out.append(line + ("\\" if line and nxt else ""))
    return out


def table(headings: list[str], rows: list[list[str]], align: str = "") -> list[str]:
    """A GFM table; cells are escaped here, so callers pass plain text."""
    align = align or "l" * len(headings)
    marks = {"l": "---", "r": "--:", "c": ":-:"}
    out = [
        "| " + " | ".join(inline(h) for h in headings) + " |",
        "|" + "|".join(marks[a] for a in align) + "|",
    ]
    for row in rows:
        if len(row) != len(headings):
            raise ValueError(f"a table row has {len(row)} cells for {len(headings)} headings")
        out.append("| " + " | ".join(inline(c) if c else " " for c in row) + " |")
    return out


def _story(card: JobCard) -> list[str]:
    story = card.story
    if story is None:
        return []
    out: list[str] = []
    if story.tag_out:
        out += ["", f"> **{inline(story.tag_out)}**"]
    out += ["", "## The visit", ""]
    out += table(["", ""], [[label, text] for label, text in story.first_page])
    if story.open_dangers:
        out += ["", inline("Still open after the repair (danger): " + "; ".join(story.open_dangers) + ".")]
    if story.symptoms:
        out += ["", inline("Symptoms reported: " + "; ".join(story.symptoms) + ".")]
    if story.observations:
        out += ["", "Seen and heard:", ""] + [f"- {inline(o)}" for o in story.observations]
    if story.retest:
        out += ["", "## Before and after the repair", ""]
        out += table(
            ["Test point", "Condition", "Expected", "Before", "After"],
            [
                [
                    r.point,
                    r.condition,
                    r.expected,
                    f"{r.before} ({r.before_verdict})",
                    f"{r.after} ({r.after_verdict})",
                ]
                for r in story.retest
            ],
        )
    return out


def _gauges(card: JobCard) -> list[str]:
    if card.story is None or not card.story.gauges:
        return []
    out = ["", "## Gauges used", ""]
    out += table(
        ["Gauge", "Instrument", "Limit of error", "Serial", "Calibration", "Range advice"],
        [
            [
                g.id,
                g.instrument,
                g.limit,
                g.serial,
                ("OVERDUE — " if g.overdue else "") + g.calibration,
                g.advice,
            ]
            for g in card.story.gauges
        ],
    )
    return out


def render_markdown(card: JobCard) -> str:
    h = card.header
    out = [f"# {inline(card.title)}: job {inline(h.job_number)}", ""]
    out += table(["Field", "Value"], [[f.label, f.value] for f in h.fields()])
    out += ["", f"*{inline(card.units)}*"]
    for c in card.stop_now:  # a reading says stop now: before the summary
        out += ["", f"> **{inline(c.severity.upper())}: {inline(c.title)}**", ">"]
        out += [f"> {line}" for line in paragraph(c.text)]
        out += [">", f"> *{inline(c.raised_by)}*"]
    out += _story(card)
    out += [
        "",
        "## Summary",
        "",
        inline(card.conclusion),
        "",
        inline(card.counts),
    ]

    out += ["", "## Readings", ""]
    out += table(
        ["#", "Test point", "Condition", "Reading", "Expected", "Gauge error", "Gauge", "Verdict"],
        [
            [
                str(r.number),
                r.test_point,
                r.condition,
                r.reading,
                r.expected,
                r.uncertainty_text,
                r.gauge,
                r.verdict_text,
            ]
            for r in card.readings
        ],
        align="rlllllll",
    )
    if card.low_on_scale_key:
        out += ["", f"*{inline(card.low_on_scale_key)}*"]
    if card.remarks:
        out += ["", "Remarks on readings:", ""]
        for r in card.remarks:
            text = " ".join(t for t in (r.remark, f"Note: {r.note}" if r.note else "") if t)
            out.append(f"- **{r.number}. {inline(r.test_point)}**: {inline(text)}")

    out += _gauges(card)

    out += ["", "## Findings", ""]
    if card.findings.flagged:
        out += table(
            ["Verdict", "Finding", "What it shows"],
            [
                [f.verdict_text, f.title + (f" ({f.circuit})" if f.circuit else ""), f.message]
                for f in card.findings.flagged
            ],
        )
    else:
        out.append("No finding out of range or inconclusive.")
    for summary in (card.findings.in_range_summary, card.findings.not_checked_summary):
        if summary:
            out += ["", inline(summary)]

    out += ["", "## Likely faults", ""]
    out += table(
        ["#", "Fault", "Probability", "Evidence"],
        [[str(f.rank), f.title, f.probability_text, f.evidence_text] for f in card.faults.top],
        align="rlrl",
    )
    if card.faults.others_text:
        out += ["", inline(card.faults.others_text)]
    out += [
        "",
        inline(
            "×N: a finding is N times as likely with this fault as on a healthy machine; "
            "÷N: N times less likely."
        ),
    ]

    out += ["", "## Recommended actions", ""]
    if not card.actions:
        out.append("None.")
    for i, a in enumerate(card.actions, start=1):
        out.append(f"{i}. {inline(a.text)} *(because of: {inline(a.reason)})*")
    if card.parts:
        out += ["", "Parts to have at hand (if the fault is confirmed):", ""]
        out += [f"- {inline(p.name)} (for {inline(p.for_fault)})" for p in card.parts]

    out += ["", "## Next test", "", inline(card.next_test_note)]
    if card.next_test is not None:
        t = card.next_test
        out += ["", f"**{inline(t.title)}**", "", inline(t.why)]

    out += ["", "## Safety cautions"]
    for c in card.cautions:
        out += ["", f"> **{inline(c.title)}** ({inline(c.severity)})", ">"]
        out += [f"> {line}" for line in paragraph(c.text)]
        out += [">", f"> *Raised: {inline(c.raised_by)}. See {inline(c.note_ref)}.*"]

    out += ["", "## Notes"]
    if not card.notes:
        out += ["", "None."]
    for n in card.notes:
        out += ["", f"**{inline(n.label)}:**", ""] + paragraph(n.text)

    out += ["", "## Sign-off", ""]
    out += table(["Role", "Name", "Signature", "Date"], [[s.role, s.name, "", ""] for s in card.sign_off])

    # The appendix: where each caution comes from, with the marks kept.
    out += ["", "## Appendix: sources of the safety cautions", ""]
    out += [f"{c.note}. **{inline(c.title)}**: {inline(c.source)}" for c in card.sources]
    out += ["", f"*Job card {inline(h.job_number)}, made by {inline(card.generator)}.*", ""]
    return "\n".join(out)
