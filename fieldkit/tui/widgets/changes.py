"""Redraw a widget only when what it shows has changed.

Every ``Static.update`` makes Textual render the widget again and, by default, lay out the whole
screen. After a reading is saved most of the visit screen reads the same as before; skipping
those widgets keeps the frame that brings the new ranking short (tests/bench/bench_tui.py).
"""

from __future__ import annotations

from rich.text import Text
from textual.widgets import Static


def same_text(a: object, b: object) -> bool:
    """True when two contents would draw the same: equal strings, or Rich texts with the same
    characters, spans and whole-text settings (``Text.__eq__`` alone ignores the base style)."""
    if isinstance(a, Text) and isinstance(b, Text):
        return (
            a == b
            and a.style == b.style
            and a.justify == b.justify
            and a.overflow == b.overflow
            and a.no_wrap == b.no_wrap
            and a.end == b.end
        )
    if isinstance(a, str) and isinstance(b, str):
        return a == b
    return False


def show_text(widget: Static, content: Text | str, *, layout: bool = True) -> bool:
    """Give ``widget`` new content unless it already shows the same; True when it changed."""
    if same_text(widget.content, content):
        return False
    widget.update(content, layout=layout)
    return True
