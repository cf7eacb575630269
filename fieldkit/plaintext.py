"""Text from people and data files, made safe to print without changing what it says.

A customer name, a note or a machine name may hold a pasted terminal escape (``ESC [2J`` clears
the screen, ``ESC ]0;…BEL`` retitles the window), a right-to-left override that makes a line read
backwards, a zero-width space that makes two ids look alike, or (from JSON) a lone surrogate. The
job cards, every command's terminal output and its error messages print the same cleaned text:
one implementation, here, below every layer that prints.
"""

from __future__ import annotations

import io
import unicodedata
from typing import TextIO

#: Unicode categories written out as an escape: controls, format characters (bidi overrides and
#: isolates, zero-width spaces and joiners, the byte-order mark) and the line/paragraph separators.
_ESCAPED = {"Cc", "Cf", "Zl", "Zp"}


def plain(text: str) -> str:
    """User text made safe to print, without changing what it says.

    Tabs become spaces and line ends become ``\\n``; other control and format characters (an
    escape sequence pasted from a terminal, a NUL, a right-to-left override, a zero-width space)
    are written out as ``\\x1b`` or ``\\u202e`` so they are visible but inert, and a lone surrogate
    (possible in JSON) becomes U+FFFD so the file can be encoded.
    """
    text = str(text).replace("\r\n", "\n").replace("\r", "\n").replace("\t", " ")
    out: list[str] = []
    for ch in text:
        if ch == "\n":
            out.append(ch)
            continue
        cat = unicodedata.category(ch)
        if cat in _ESCAPED:
            # \x1b below U+0020, \u202e above: inside a JSON string both read back as the same
            # character (JSON escapes C0 itself, so only the \u form ever lands inside one).
            out.append(f"\\x{ord(ch):02x}" if ord(ch) < 0x20 else f"\\u{ord(ch):04x}")
        elif cat == "Cs":
            out.append("\ufffd")
        else:
            out.append(ch)
    return "".join(out)


def one_line(text: str) -> str:
    """User text for a place that holds one line (a header field, a table cell)."""
    return " / ".join(part.strip() for part in plain(text).split("\n") if part.strip())


class SafeStream(io.TextIOBase):
    """A text stream that passes everything written through :func:`plain`.

    The command line puts it over standard output and standard error while a command runs, so no
    print of any command, error or library message can send a stored escape sequence to the
    terminal. It says it is not a terminal, so a rich console writing through it emits no colour
    codes of its own (which would be escaped); a command that wants colour hands its console the
    stream underneath (:func:`underlying`) and cleans each piece of text itself.
    """

    def __init__(self, inner: TextIO) -> None:
        super().__init__()
        self.inner = inner

    def write(self, s: str) -> int:
        self.inner.write(plain(s))
        return len(s)

    def flush(self) -> None:
        self.inner.flush()

    def isatty(self) -> bool:
        return False

    def writable(self) -> bool:
        return True

    def fileno(self) -> int:
        return self.inner.fileno()

    @property
    def encoding(self) -> str:  # type: ignore[override]
        return getattr(self.inner, "encoding", "utf-8") or "utf-8"

    @property
    def buffer(self) -> object:
        """The byte stream underneath, for a binary output (a PDF written to standard output)."""
        return self.inner.buffer


def underlying(stream: TextIO) -> TextIO:
    """The stream a :class:`SafeStream` writes to (the stream itself otherwise)."""
    return stream.inner if isinstance(stream, SafeStream) else stream


__all__ = ["SafeStream", "one_line", "plain", "underlying"]
