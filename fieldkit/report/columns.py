"""Wrapping by terminal columns rather than by characters.

A work-order system or a terminal shows a CJK character two columns wide and a combining accent
zero wide; :mod:`textwrap` counts both as one, so a note in another script would overflow 80
columns. These helpers count columns the way a terminal does.
"""

from __future__ import annotations

import unicodedata


def char_width(ch: str) -> int:
    """Two for East Asian wide and full-width characters (UAX #11), else one.

    A combining accent takes no column on a terminal, but some work-order systems count code
    points, so it is counted as one: a line that fits by this count fits by either.
    """
    return 2 if unicodedata.east_asian_width(ch) in ("W", "F") else 1


def width(text: str) -> int:
    return sum(char_width(ch) for ch in text)


def _cut(word: str, room: int) -> tuple[str, str]:
    """The head of a word that fits in ``room`` columns (at least one character) and the rest."""
    used = 0
    for i, ch in enumerate(word):
        used += char_width(ch)
        if used > room and i > 0:
            return word[:i], word[i:]
    return word, ""


def wrap(text: str, columns: int, indent: str = "", hanging: str | None = None) -> list[str]:
    """Lines of at most ``columns`` columns; ``\\n`` in the text starts a new line.

    ``indent`` starts the first line and ``hanging`` the others (default: the same as ``indent``).
    Runs of spaces collapse to one, as they would in a paragraph; a word longer than a line is cut;
    a no-break space (U+00A0) holds its neighbours on one line.
    """
    hanging = indent if hanging is None else hanging
    out: list[str] = []
    for paragraph in text.split("\n"):
        line = indent if not out else hanging
        used, empty = width(line), True
        for word in (w for w in paragraph.split(" ") if w):  # not split(): it would break at a no-break space
            w = width(word)
            if not empty and used + 1 + w <= columns:
                line, used = f"{line} {word}", used + 1 + w
                continue
            if not empty:
                out.append(line)
                line, used = hanging, width(hanging)
            while used + w > columns and word:
                head, word = _cut(word, max(1, columns - used))
                out.append(line + head)
                line, used = hanging, width(hanging)
                w = width(word)
            line, used, empty = line + word, used + w, not word
        out.append(line.rstrip())
    return out
