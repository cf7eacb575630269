"""The key hints at the foot of every screen: Textual's Footer, laid out in two rows when the
window is narrow so that no key (F1 Keys, F2 Procedures, ^q Quit) falls off the right edge."""

from __future__ import annotations

import math

from textual import events
from textual.app import ComposeResult
from textual.widgets import Footer

WIDE = 120


class KeyBar(Footer):
    DEFAULT_CSS = """
    KeyBar { layout: grid; grid-columns: auto; grid-gutter: 0 0; height: 2; }
    KeyBar.-one-row { height: 1; }
    """

    def __init__(self) -> None:
        super().__init__(compact=True)
        self._rows = 0

    def compose(self) -> ComposeResult:
        widgets = list(super().compose())
        keys = [w for w in widgets if not w.has_class("-command-palette")]
        rows = 1 if self.app.size.width >= WIDE else 2
        self._rows = rows
        self.set_class(rows == 1, "-one-row")
        self.styles.grid_size_columns = max(1, math.ceil(len(keys) / rows))
        yield from widgets

    def on_resize(self, event: events.Resize) -> None:
        rows = 1 if self.app.size.width >= WIDE else 2
        if self._rows and rows != self._rows:
            self.refresh(recompose=True)
