"""Text a person typed or a file carried, made safe to draw.

Job numbers, notes, names and rule messages may hold ``[bold]`` or ``[@click=app.quit]``; drawn
as markup they would restyle the screen or run an action, and an unbalanced ``[/`` would crash
it. Control characters (an escape byte pasted from a logger) would reach the terminal as
commands. So every such string goes through :func:`literal`, which returns a Rich ``Text`` that
Textual never parses, with control characters replaced by visible symbols.
"""

from __future__ import annotations

from rich.style import Style
from rich.text import Text

# Characters that would move the cursor, restyle the terminal or reorder text when printed.
_BIDI = {0x202A, 0x202B, 0x202C, 0x202D, 0x202E, 0x2066, 0x2067, 0x2068, 0x2069}


def visible(text: str, *, multiline: bool = False) -> str:
    """The string with control characters shown as symbols (U+2400 block), so a stray escape
    byte is seen, not obeyed. Newlines stay when ``multiline``; tabs become spaces."""
    out: list[str] = []
    for ch in str(text):
        code = ord(ch)
        if ch == "\n" and multiline:
            out.append(ch)
        elif ch == "\t":
            out.append("    " if multiline else " ")
        elif ch == "\n" or ch == "\r":
            out.append(" ⏎ " if ch == "\n" else "")
        elif code < 0x20:
            out.append(chr(0x2400 + code))
        elif code == 0x7F:
            out.append("␡")
        elif 0x80 <= code <= 0x9F or code in _BIDI:
            out.append("�")
        else:
            out.append(ch)
    return "".join(out)


def literal(text: str, style: str | Style = "", *, multiline: bool = False) -> Text:
    """A ``Text`` that shows ``text`` exactly as written (never as markup)."""
    return Text(visible(text, multiline=multiline), style=style, end="")


def join(*parts: Text | str, sep: str = "") -> Text:
    """Join pieces into one ``Text``; plain ``str`` pieces are our own wording, still not parsed."""
    out = Text(end="")
    for i, part in enumerate(parts):
        if i and sep:
            out.append(sep)
        out.append(part if isinstance(part, Text) else Text(part))
    return out
