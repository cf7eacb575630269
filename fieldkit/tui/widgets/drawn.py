"""Text widgets drawn from data, redrawn only when the data they are given changes.

A widget here holds the *data* behind its text (a ranked fault, the next test, a list of
cautions) in a Textual reactive attribute. Textual compares a new value with the old one and
calls the watcher only on a change, so after a reading is saved every line whose data is the
same costs nothing: no new text, no repaint, no layout pass (tests/bench/bench_tui.py).
"""

from __future__ import annotations

from collections.abc import Callable
from typing import ClassVar

from rich.text import Text
from textual.reactive import reactive
from textual.widgets import Static

Draw = Callable[..., Text | str]


class DrawnLine(Static):
    """A line of fixed height: a change of data repaints it without laying the screen out again."""

    LAYOUT: ClassVar[bool] = False

    #: The arguments of the draw function; None draws nothing.
    data: reactive[tuple[object, ...] | None] = reactive(None, repaint=False, init=False)

    def __init__(self, draw: Draw, *, id: str | None = None, classes: str | None = None) -> None:
        super().__init__(id=id, classes=classes)
        self._draw = draw

    def watch_data(self, data: tuple[object, ...] | None) -> None:
        self.update(self._draw(*data) if data is not None else "", layout=self.LAYOUT)


class DrawnBlock(DrawnLine):
    """Text whose height may change with its data: a change lays the screen out again."""

    LAYOUT: ClassVar[bool] = True
