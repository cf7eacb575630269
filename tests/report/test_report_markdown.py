"""The Markdown job card, parsed back with markdown-it-py (a CommonMark parser with the GFM table
extension) as the oracle: tables must keep their shape and user text must come out as typed.

References: CommonMark spec 0.31.2 §2.4 (backslash escapes: any ASCII punctuation may be escaped)
and GitHub Flavored Markdown spec 0.29-gfm §4.10 (tables: the header row fixes the column count;
``\\|`` puts a pipe inside a cell).
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest
from markdown_it import MarkdownIt
from markdown_it.token import Token
from report_builders import HOSTILE, SAMPLE_VISITS, load, with_reading_note, with_text

from fieldkit.diagnosis.retest import as_read
from fieldkit.report.build import job_card
from fieldkit.report.markdown import block_line, inline, paragraph, render_markdown
from fieldkit.report.model import JobCard
from fieldkit.session import Workbench

PARSER = MarkdownIt("commonmark").enable("table").enable("strikethrough")
OUR_TAGS = {"<br>"}


def _text(inline_token: Token) -> str:
    """What a reader sees in an inline run: text as rendered, with our <br> as a line break."""
    out = []
    for child in inline_token.children or []:
        if child.type in ("text", "code_inline"):
            out.append(child.content)
        elif child.type in ("softbreak", "hardbreak") or (
            child.type == "html_inline" and child.content in OUR_TAGS
        ):
            out.append("\n")
    return "".join(out)


def _tables(tokens: list[Token]) -> list[tuple[list[str], list[list[str]]]]:
    """Every table as (headings, rows of cell texts)."""
    tables, head, rows, row, in_head = [], [], [], [], False
    for i, t in enumerate(tokens):
        if t.type == "table_open":
            head, rows = [], []
        elif t.type == "thead_open":
            in_head = True
        elif t.type == "thead_close":
            in_head = False
        elif t.type == "tr_open":
            row = []
        elif t.type == "inline" and tokens[i - 1].type in ("th_open", "td_open"):
            row.append(_text(t))
        elif t.type == "tr_close":
            (head.extend if in_head else rows.append)(row)
        elif t.type == "table_close":
            tables.append((head, rows))
    return tables


def _unescaped_pipes(line: str) -> int:
    return len(re.findall(r"(?<!\\)(?:\\\\)*\|", line))


def _hostile_card(bench: Workbench) -> JobCard:
    visit, profile = load(bench)
    diagnosis = bench.diagnose(visit, profile)
    odd = with_text(
        visit,
        job_number="J|17 *x* [x](y)",
        customer=HOSTILE,
        site="<script>x</script> | &amp;",
        notes=f"# not a heading\n- not a list\n1. not a list\n---\n{HOSTILE}\n> not a quote",
        technician="Ann_e **B**",
    )
    return job_card(with_reading_note(odd, 0, "seal | weeping *badly* [see](http://x)"), profile, diagnosis)


def test_readings_table_keeps_its_shape_when_user_text_has_pipes_and_markup(bench) -> None:
    md = render_markdown(_hostile_card(bench))
    lines = md.splitlines()
    start = next(i for i, line in enumerate(lines) if line.startswith("| # | Test point"))
    block = []
    for line in lines[start:]:
        if not line.startswith("|"):
            break
        block.append(line)
    assert re.fullmatch(r"\|(?:-{3}|-{2}:|:-:)(?:\|(?:-{3}|-{2}:|:-:))*\|", block[1]), block[1]
    counts = {_unescaped_pipes(line) for line in block}
    assert counts == {9}, counts  # 8 columns: 9 unescaped pipes on every row
    tables = _tables(PARSER.parse(md))
    readings = next(rows for head, rows in tables if head and head[1] == "Test point")
    assert all(len(row) == 8 for row in readings)


def test_every_table_row_has_as_many_cells_as_its_heading(bench) -> None:
    md = render_markdown(_hostile_card(bench))
    for line_block in re.findall(r"(?:^\|.*\|$\n?)+", md, flags=re.MULTILINE):
        rows = line_block.strip("\n").splitlines()
        assert len({_unescaped_pipes(r) for r in rows}) == 1, rows


def test_user_text_comes_out_of_the_parser_exactly_as_typed(bench) -> None:
    card = _hostile_card(bench)
    tokens = PARSER.parse(render_markdown(card))
    tables = _tables(tokens)
    fields = dict(next(rows for head, rows in tables if head == ["Field", "Value"]))
    assert fields["Customer"] == HOSTILE
    assert fields["Site"] == "<script>x</script> | &amp;"
    assert fields["Technician"] == "Ann_e **B**"
    heading = next(tokens[i + 1] for i, t in enumerate(tokens) if t.type == "heading_open" and t.tag == "h1")
    assert _text(heading) == "Service job card: job J|17 *x* [x](y)"
    everything = "\n".join(_text(t) for t in tokens if t.type == "inline")
    assert "seal | weeping *badly* [see](http://x)" in everything
    for line in ("# not a heading", "- not a list", "1. not a list", "---", HOSTILE, "> not a quote"):
        assert line in everything


def _emphasised(tokens: list[Token]) -> list[str]:
    """The text inside every emphasis or strong run."""
    found, depth, current = [], 0, []
    for t in tokens:
        for child in t.children or []:
            if child.type in ("em_open", "strong_open", "s_open"):
                depth += 1
            elif child.type in ("em_close", "strong_close", "s_close"):
                depth -= 1
                if depth == 0:
                    found.append("".join(current))
                    current = []
            elif depth and child.type == "text":
                current.append(child.content)
    return found


def test_user_text_never_becomes_a_link_html_emphasis_or_a_block(bench) -> None:
    tokens = PARSER.parse(render_markdown(_hostile_card(bench)))
    children = [c for t in tokens if t.type == "inline" for c in t.children or []]
    assert not [c for c in children if c.type == "link_open"]
    assert all(c.content in OUR_TAGS for c in children if c.type == "html_inline")
    assert not [t for t in tokens if t.type == "html_block"]
    # The hostile words (*urgent*, **B**, *badly*, _under_, <b>bold</b>) are never emphasised.
    emphasised = set(_emphasised(tokens))
    assert emphasised, "the writer's own bold labels are found, so the search works"
    assert not emphasised & {"urgent", "badly", "under", "bold", "B", "x", "z"}, emphasised
    # The visit notes stay one paragraph: no heading, list, rule or quote made from their lines.
    notes_at = next(i for i, t in enumerate(tokens) if t.type == "inline" and t.content == "Notes")
    notes = tokens[notes_at + 2 :]
    notes = notes[: next(i for i, t in enumerate(notes) if t.type == "heading_open")]
    assert {t.type for t in notes} <= {"paragraph_open", "inline", "paragraph_close"}


@pytest.mark.parametrize("path", SAMPLE_VISITS[:4], ids=lambda p: p.stem)
def test_sample_visits_give_well_formed_tables(bench, path: Path) -> None:
    visit, profile = load(bench, path)
    diagnosis = bench.diagnose(visit, profile)
    md = render_markdown(job_card(visit, profile, diagnosis))
    tables = _tables(PARSER.parse(md))
    readings = next(rows for head, rows in tables if head and head[1] == "Test point")
    # Each value as printed: to its gauge's resolution (diagnosis.retest.as_read).
    assert [row[3] for row in readings] == [as_read(c) for c in diagnosis.checks]


def test_a_row_with_the_wrong_number_of_cells_is_a_bug_caught_at_once() -> None:
    from fieldkit.report.markdown import table

    with pytest.raises(ValueError, match="1 cells for 2 headings"):
        table(["a", "b"], [["only one"]])


@pytest.mark.parametrize(
    "text", ["a|b", "*x*", "[x](y)", "<b>", "\\", "`c`", "_u_", "&amp;", "~~s~~", "$x$", ":smile:"]
)
def test_inline_escaping_round_trips_through_the_parser(text: str) -> None:
    tokens = PARSER.parse(f"| h |\n|---|\n| {inline(text)} |\n\n{inline(text)}\n")
    texts = [_text(t) for t in tokens if t.type == "inline"]
    assert texts[1:] == [text, text]


@pytest.mark.parametrize(
    "line", ["# h", "- l", "+ l", "* l", "1. n", "12) n", "> q", "===", "---", "    code", "```"]
)
def test_a_line_that_would_start_a_block_stays_a_paragraph(line: str) -> None:
    tokens = PARSER.parse("\n".join(paragraph(f"first\n{line}")) + "\n")
    assert [t.type for t in tokens] == ["paragraph_open", "inline", "paragraph_close"]
    assert _text(tokens[1]) == f"first\n{line.strip()}"
    assert block_line(line).strip()
