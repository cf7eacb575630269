"""Text from people and data files, made safe to lay out without changing what it says.

A note, a job number or a rule's message may hold tabs, pasted terminal escapes or (from JSON) a
lone surrogate. Every writer prints the same cleaned text, and none of them interprets it.
"""

from __future__ import annotations

import unicodedata

from fieldkit import units

#: Between a number and its unit sign, so a line never breaks between them.
NBSP = "\u00a0"


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


def percent(p: float) -> str:
    """A probability as the job card prints it (see :func:`fieldkit.units.percent`), with a
    no-break space before the sign so a line never breaks inside it."""
    return units.percent(p, gap=NBSP)
