"""The job card as a PDF (fpdf2), A4 or US Letter.

Fonts are the bundled DejaVu Sans regular and bold, so Δ, ±, ≥, ° and µ print as themselves. A
character the font lacks (a CJK name, say) is printed as ``[U+4E2D]``: visibly a placeholder,
never a different character. Text is never read as markup. With ``fixed_date`` the file is the
same for the same job card, because the creation date is the only varying input.

A visit of a usual size (up to about 18 readings) fits on two pages of either paper: rows are
padded tightly, a remark under a reading only says what needs doing there, findings that only
repeat a reading are named in one line, parts are one paragraph and the cautions are three
columns; body text stays at 6.8 pt or more and remarks and keys at 6 pt or more.
"""

from __future__ import annotations

import hashlib
from collections.abc import Sequence
from datetime import UTC, datetime

from fpdf import FPDF
from fpdf.fonts import TTFFont

from fieldkit.diagnosis.results import Verdict
from fieldkit.report.model import JobCard, Note
from fieldkit.report.pdf.boxes import cautions, sign_off, sources_appendix, stop_now
from fieldkit.report.pdf.draw import band_legend, band_picture, probability_bar
from fieldkit.report.pdf.layout import FOOT, MARGIN, fit, placed, runs_block, section, text_block
from fieldkit.report.pdf.style import (
    ACCENT,
    BODY,
    BOLD_FONT,
    FAMILY,
    INK,
    MUTED,
    OK,
    OUT,
    OUT_FILL,
    REGULAR_FONT,
    RULE,
    SMALL,
    TINY,
    UNSURE,
    UNSURE_FILL,
    ZEBRA,
)
from fieldkit.report.pdf.tables import Cell, Run, measured_table
from fieldkit.report.pdf.text import (
    block_height,
    draw_block,
    draw_runs,
    line_height,
    runs_height,
    text_height,
)

REMARK_SIZE = 6.2
#: Relative widths: number, test point and condition, reading, expected, gauge, band, verdict.
READING_COLUMNS = [5, 43, 16, 21, 34, 35, 19]
#: Number, action, and the fault or finding it answers (in smaller, muted type).
ACTION_COLUMNS = [5, 125, 52]
REASON = 6.3
#: Verdict (room for "inconclusive" in bold) and the finding with what it shows.
FINDING_COLUMNS = [18, 164]
#: Cell padding where rows are many (readings, header grid): the rules between rows keep them apart.
TIGHT = 0.4
#: Height of the title band at the top of page 1.
BAND = 9.0
#: Least height of a reading row: room for its band picture.
READING_ROW = 6.0

VERDICT_STYLE = {
    Verdict.LOW: (OUT, OUT_FILL, True),
    Verdict.HIGH: (OUT, OUT_FILL, True),
    Verdict.INCONCLUSIVE: (UNSURE, UNSURE_FILL, True),
    Verdict.IN_RANGE: (OK, None, False),
    Verdict.NOT_MEASURED: (MUTED, None, False),
}


class JobCardPDF(FPDF):
    """An FPDF with our fonts, a running head and foot, and glyph-safe text."""

    def __init__(self, card: JobCard, letter: bool) -> None:
        super().__init__(orientation="portrait", unit="mm", format="letter" if letter else "A4")
        self.card = card
        #: Reading notes too long for a table row; printed in full under Notes.
        self.spill: list[Note] = []
        # fpdf2 replaces its page-total alias ("{nb}" by default) anywhere in the text, so a note
        # saying "{nb}" would print a number. Our alias is a digest of the card's own text: no
        # text on the card can contain it, and the same card always gets the same one.
        self.total_pages = "{" + hashlib.sha256(repr(card).encode("utf-8", "replace")).hexdigest()[:12] + "}"
        self.alias_nb_pages(self.total_pages)
        self.add_font(FAMILY, "", REGULAR_FONT)
        self.add_font(FAMILY, "B", BOLD_FONT)
        regular, bold = self.fonts[FAMILY], self.fonts[FAMILY + "B"]
        assert isinstance(regular, TTFFont) and isinstance(bold, TTFFont)  # added from files above
        self._glyphs = set(regular.cmap) & set(bold.cmap)
        self.set_margins(MARGIN, MARGIN, MARGIN)
        self.set_auto_page_break(True, margin=FOOT)
        self.set_text_color(*INK)

    def normalize_text(self, text: str) -> str:
        """Characters the font cannot draw become ``[U+XXXX]`` rather than a blank or a wrong glyph."""
        if all(ord(ch) in self._glyphs or ch in "\n " for ch in text):
            return super().normalize_text(text)
        fixed = "".join(ch if ord(ch) in self._glyphs or ch in "\n " else f"[U+{ord(ch):04X}]" for ch in text)
        return super().normalize_text(fixed)

    def header(self) -> None:
        if self.page_no() == 1:
            return
        self.set_text_color(*MUTED)
        y = self.t_margin
        fit(
            self,
            self.l_margin,
            y,
            self.epw * 0.6,
            4,
            f"{self.card.title}, job {self.card.header.job_number} (continued)",
            TINY,
            floor=4.5,
        )
        fit(
            self,
            self.l_margin + self.epw * 0.6,
            y,
            self.epw * 0.4,
            4,
            self.card.header.machine,
            TINY,
            align="R",
            floor=4.5,
        )
        self.set_draw_color(*RULE)
        self.set_line_width(0.2)
        self.line(self.l_margin, self.t_margin + 4.5, self.w - self.r_margin, self.t_margin + 4.5)
        self.set_xy(self.l_margin, self.t_margin + 6)
        self.set_text_color(*INK)

    def footer(self) -> None:
        self.set_y(-(FOOT - 2.5))
        self.set_font(FAMILY, "", TINY)
        self.set_text_color(*MUTED)
        self.cell(
            self.epw * 0.75,
            4,
            f"Job {self.card.header.job_number} · {self.card.header.date} · "
            f"page {self.page_no()} of {self.total_pages}",
        )
        self.cell(self.epw * 0.25, 4, self.card.generator, align="R")
        self.set_text_color(*INK)


def render_pdf(card: JobCard, *, letter: bool = False, fixed_date: datetime | None = None) -> bytes:
    pdf = JobCardPDF(card, letter)
    pdf.set_title(f"{card.title}, job {card.header.job_number}")
    pdf.set_subject(card.header.machine)
    pdf.set_author(card.header.technician)
    pdf.set_creator(card.generator)
    if fixed_date is not None:
        pdf.set_creation_date(fixed_date if fixed_date.tzinfo else fixed_date.replace(tzinfo=UTC))
    pdf.add_page()
    _header(pdf, card)
    stop_now(pdf, card)
    _story(pdf, card)
    _summary(pdf, card)
    _readings(pdf, card)
    _gauges(pdf, card)
    _findings(pdf, card)
    _faults(pdf, card)
    _actions(pdf, card)
    _next_test(pdf, card)
    cautions(pdf, card)
    _notes(pdf, card)
    sign_off(pdf, card)
    sources_appendix(pdf, card)
    return bytes(pdf.output())


# --- building blocks -------------------------------------------------------------------------


def _header(pdf: FPDF, card: JobCard) -> None:
    h = card.header
    pdf.set_fill_color(*ACCENT)
    pdf.rect(pdf.l_margin, pdf.t_margin, pdf.epw, BAND, style="F")
    pdf.set_text_color(255, 255, 255)
    fit(pdf, pdf.l_margin + 3, pdf.t_margin, pdf.epw * 0.42, BAND, card.title.upper(), 14, bold=True)
    fit(
        pdf,
        pdf.l_margin + pdf.epw * 0.45,
        pdf.t_margin,
        pdf.epw * 0.55 - 3,
        BAND,
        f"Job {h.job_number}",
        12,
        bold=True,
        align="R",
    )
    pdf.set_text_color(*INK)
    pdf.set_xy(pdf.l_margin, pdf.t_margin + BAND + 1)
    rows = [
        [
            Cell(a.label, color=MUTED),
            Cell(a.value, bold=a.label == "Customer"),
            Cell(b.label, color=MUTED),
            Cell(b.value, bold=b.label == "Machine"),
        ]
        for a, b in zip(h.visit_fields(), h.machine_fields(), strict=True)
    ]
    measured_table(pdf, None, rows, [15, 82, 21, 72], size=SMALL + 0.3, padding=TIGHT)


def _story(pdf: FPDF, card: JobCard) -> None:
    """The first page a customer reads: complaint, cause, work, status, next action; the
    tag-out notice in a box of its own; the re-test before and after."""
    story = card.story
    if story is None:
        return
    x, w = pdf.l_margin, pdf.epw
    if story.tag_out:
        pdf.ln(2)
        height = block_height(pdf, story.tag_out, w - 8, BODY + 1.5, True) + 5
        with placed(pdf, height) as y:
            pdf.set_draw_color(*OUT)
            pdf.set_line_width(1.2)
            pdf.set_fill_color(*OUT_FILL)
            pdf.rect(x, y, w, height, style="DF")
            draw_block(pdf, x + 4, y + 2.5, w - 8, story.tag_out, BODY + 1.5, True, OUT)
        pdf.set_xy(pdf.l_margin, y + height)
    status_colour = {"fit_to_run": OK, "fit_with_limits": UNSURE, "do_not_operate": OUT}.get(
        story.status_kind, INK
    )
    rows: list[list[Cell | str]] = [
        [
            Cell(label, bold=True, color=MUTED),
            Cell(text, bold=label == "Status", color=status_colour if label == "Status" else INK),
        ]
        for label, text in story.first_page
    ]
    if story.open_dangers:
        rows.append(
            [
                Cell("Still open", bold=True, color=OUT),
                Cell("Danger finding(s) after the repair: " + "; ".join(story.open_dangers), color=OUT),
            ]
        )
    if story.symptoms:
        rows.append([Cell("Symptoms", color=MUTED), "; ".join(story.symptoms)])
    if story.observations:
        rows.append([Cell("Seen and heard", color=MUTED), "\n".join(story.observations)])
    measured_table(pdf, None, rows, [26, 164], size=BODY, title="The visit")
    if story.retest:
        measured_table(
            pdf,
            ["Test point", "Condition", "Expected", "Before the repair", "After the repair"],
            [
                [
                    Cell(r.point, bold=True),
                    r.condition,
                    r.expected,
                    Cell(f"{r.before}  {r.before_verdict}"),
                    Cell(
                        f"{r.after}  {r.after_verdict}",
                        bold=True,
                        # a reading with no range to judge against is neither passed nor failed
                        color=OK if r.passed else (None if r.after_verdict == "no range" else OUT),
                    ),
                ]
                for r in story.retest
            ],
            [34, 40, 36, 40, 40],
            size=SMALL,
            title="Re-test: before and after the repair",
        )


def _gauges(pdf: FPDF, card: JobCard) -> None:
    if card.story is None or not card.story.gauges:
        return
    rows: list[Sequence[Cell | str]] = []
    for g in card.story.gauges:
        cal = ("OVERDUE: " if g.overdue else "") + g.calibration.removeprefix("OVERDUE: ")
        rows.append(
            [
                Cell(g.id, bold=True),
                g.instrument + (f"\n{g.advice}" if g.advice else ""),
                g.limit,
                g.serial,
                Cell(cal, bold=g.overdue, color=OUT if g.overdue else INK),
            ]
        )
    measured_table(
        pdf,
        ["Gauge", "Instrument (and range advice)", "Limit of error", "Serial", "Calibration"],
        rows,
        [14, 90, 34, 22, 30],
        size=SMALL,
        title="Gauges used",
    )


def _summary(pdf: FPDF, card: JobCard) -> None:
    pdf.ln(2)
    x, w = pdf.l_margin, pdf.epw
    lines = [(card.conclusion, BODY + 0.5, True, INK), (f"{card.counts} {card.units}", BODY, False, INK)]
    height = sum(block_height(pdf, t, w - 4, s, b) for t, s, b, _c in lines) + 2
    stripe = OUT if not card.settled else ACCENT
    with placed(pdf, height) as y:
        pdf.set_fill_color(240, 245, 247)
        pdf.rect(x, y, w, height, style="F")
        pdf.set_fill_color(*stripe)
        pdf.rect(x, y, 1.6, height, style="F")
        top = y + 1
        for text, size, bold, colour in lines:
            top += draw_block(pdf, x + 4, top, w - 4, text, size, bold, colour)
    pdf.set_xy(pdf.l_margin, y + height)


def _readings(pdf: JobCardPDF, card: JobCard) -> None:
    """The readings table; a remark or a note sits in a row of its own under its reading."""
    rows: list[list[Cell | str]] = []
    fills: list[tuple[int, int, int] | None] = []
    least: list[float] = []
    joined: list[bool] = []
    owner: list[int | None] = []  # the reading a table row draws a band for
    remark_width = pdf.epw * (1 - READING_COLUMNS[0] / sum(READING_COLUMNS))
    for k, r in enumerate(card.readings):
        colour, fill, bold = VERDICT_STYLE[r.verdict]
        stripe = ZEBRA if k % 2 else None
        rows.append(
            [
                str(r.number),
                f"{r.test_point}\n{r.condition}",
                Cell(r.reading, bold=True),
                r.expected,
                f"{r.uncertainty_text}\n{r.gauge}",
                "",
                Cell(r.verdict_text, bold=bold, color=colour, fill=fill),
            ]
        )
        fills.append(stripe)
        least.append(READING_ROW)
        joined.append(False)
        owner.append(k)
        remark = " ".join(t for t in (r.remark, f"Note: {r.note}" if r.note else "") if t)
        if remark and _too_tall(pdf, remark, remark_width):
            pdf.spill.append(Note(f"Note on reading {r.number} ({r.test_point})", r.note))
            moved = "The note on this reading is long: it is printed in full under Notes."
            remark = " ".join(t for t in (r.remark, moved) if t)
        if remark:
            # Smaller type than the reading itself: remarks are secondary.
            tone = UNSURE if r.verdict is Verdict.INCONCLUSIVE else MUTED
            rows.append(["", Cell(remark, color=tone, size=REMARK_SIZE, span=6)])
            fills.append(stripe)
            least.append(0.0)
            joined.append(True)
            owner.append(None)

    def draw_band(pdf: FPDF, i: int, x: float, y: float, w: float, h: float) -> None:
        k = owner[i]
        band = card.readings[k].band if k is not None else None
        if k is not None and band is not None:
            band_picture(pdf, band, card.readings[k].verdict, x, y, w, h)

    measured_table(
        pdf,
        [
            "#",
            "Test point and condition",
            "Reading",
            "Expected",
            "Gauge error and gauge",
            "Position in range",
            "Verdict",
        ],
        rows,
        READING_COLUMNS,
        aligns="RLLLLLL",
        size=SMALL,
        draw={5: draw_band},
        row_fills=fills,
        row_heights=least,
        continues=joined,
        padding=TIGHT,
        title="Readings",
    )
    pdf.ln(0.6)
    with placed(pdf, 4.0) as top:
        band_legend(pdf, pdf.l_margin, top, TINY)
    pdf.set_xy(pdf.l_margin, top + 4.0)
    if card.low_on_scale_key:
        text_block(pdf, card.low_on_scale_key, TINY, color=MUTED)


def _too_tall(pdf: FPDF, text: str, width: float) -> bool:
    """A remark taller than a third of a page would make a table row that may not fit any page."""
    page = pdf.page_break_trigger - pdf.t_margin
    return text_height(pdf, text, width, REMARK_SIZE, padding=TIGHT) > page / 3


def _findings(pdf: FPDF, card: JobCard) -> None:
    detailed = card.findings.detailed
    if detailed:
        rows = []
        for f in detailed:
            colour, fill, bold = VERDICT_STYLE[f.verdict]
            title = f.title + (f" ({f.circuit})" if f.circuit else "") + ":"
            rows.append(
                [
                    Cell(f.verdict_text, bold=bold, color=colour, fill=fill),
                    Cell(runs=(Run(title, bold=True), Run(f.message))),
                ]
            )
        measured_table(
            pdf, ["Verdict", "Finding: what it shows"], rows, FINDING_COLUMNS, size=SMALL, title="Findings"
        )
    else:
        section(pdf, "Findings", keep=8)
        if not card.findings.flagged:
            text_block(pdf, "No finding out of range or inconclusive.")
    summaries = (
        card.findings.repeated_summary,
        card.findings.in_range_summary,
        card.findings.not_checked_summary,
    )
    for summary in summaries:
        if summary:
            pdf.ln(0.6)
            text_block(pdf, summary, TINY + 0.3, color=MUTED)


def _faults(pdf: FPDF, card: JobCard) -> None:
    rows: list[list[Cell | str]] = [
        [str(f.rank), Cell(f.title, bold=True), Cell(f.probability_text, bold=True), "", f.evidence_text]
        for f in card.faults.top
    ]

    def draw_bar(pdf: FPDF, i: int, x: float, y: float, w: float, h: float) -> None:
        probability_bar(pdf, card.faults.top[i].probability, x, y, w, h)

    measured_table(
        pdf,
        ["#", "Fault", "%", "Probability", "Evidence"],
        rows,
        [5, 52, 11, 20, 94],
        aligns="RLRLL",
        size=SMALL,
        draw={3: draw_bar},
        title="Likely faults",
    )
    pdf.ln(1)
    key = (
        "×N: a finding is N times as likely with this fault as on a healthy machine; ÷N: N times less likely."
    )
    text_block(pdf, " ".join(t for t in (card.faults.others_text, key) if t), TINY + 0.4, color=MUTED)


def _actions(pdf: FPDF, card: JobCard) -> None:
    title = "Recommended actions and parts"
    if card.actions:
        # A reason is printed once for a run of actions it explains; the run shares one block.
        rows: list[list[Cell | str]] = []
        joined: list[bool] = []
        for i, a in enumerate(card.actions, start=1):
            same = i > 1 and card.actions[i - 2].reason == a.reason
            rows.append([str(i), a.text, Cell("" if same else a.reason, color=MUTED, size=REASON)])
            joined.append(same)
        measured_table(
            pdf,
            ["#", "Action", "Because of"],
            rows,
            ACTION_COLUMNS,
            aligns="RLL",
            size=SMALL,
            continues=joined,
            title=title,
        )
    else:
        section(pdf, title, keep=8)
        text_block(pdf, "No action recommended.")
    if card.parts:
        # One paragraph: a short list reads as well as a table and takes a third of the room.
        grouped: dict[str, list[str]] = {}
        for p in card.parts:
            grouped.setdefault(p.for_fault, []).append(p.name)
        runs = [Run("Parts to have at hand if the fault is confirmed:", bold=True)]
        for k, (fault, names) in enumerate(grouped.items()):
            runs += [Run(("· " if k else "") + "; ".join(names)), Run(f"– for {fault}", colour=MUTED)]
        pdf.ln(0.8)
        runs_block(pdf, runs, SMALL)


def _next_test(pdf: FPDF, card: JobCard) -> None:
    section(pdf, "Next test", keep=15)
    t = card.next_test
    if t is None:
        text_block(pdf, card.next_test_note, SMALL + 0.5, bold=True)
        return
    x, w = pdf.l_margin, pdf.epw
    why = (Run(card.next_test_note, bold=True), Run(t.why))
    height = block_height(pdf, t.title, w - 3.5, BODY, True) + runs_height(pdf, why, w - 3.5, SMALL) + 2
    with placed(pdf, height) as y:
        pdf.set_draw_color(*ACCENT)
        pdf.set_line_width(0.35)
        pdf.set_fill_color(240, 245, 247)
        pdf.rect(x, y, w, height, style="DF")
        top = y + 1 + draw_block(pdf, x + 3.5, y + 1, w - 3.5, t.title, BODY, True)
        draw_runs(pdf, x + 3.5, top, w - 3.5, why, SMALL)
    pdf.set_xy(pdf.l_margin, y + height)


def _notes(pdf: JobCardPDF, card: JobCard) -> None:
    notes = card.notes + pdf.spill
    if not notes:
        return
    section(pdf, "Notes", keep=12)
    lh = line_height(SMALL + 0.5)
    for n in notes:
        # Flowing text (write), so a note of any length breaks across pages like a paragraph.
        pdf.set_x(pdf.l_margin)
        pdf.set_font(FAMILY, "B", SMALL + 0.5)
        pdf.write(lh, f"{n.label}: ")
        pdf.set_font(FAMILY, "", SMALL + 0.5)
        pdf.write(lh, n.text)
        pdf.ln(lh + 1)
