"""What every fieldkit screen can be asked by the app: a typed interface, not attribute probing.

The app asks the screens on its stack whether a value is typed but not saved (before quitting),
which cautions the current step carries (F2), to read their data again (after the units change)
and which commands they offer in the command search (F3). A screen overrides what applies.
"""

from __future__ import annotations

from typing import ClassVar

from textual.screen import Screen

from fieldkit.diagnosis.catalogue import Caution
from fieldkit.tui.commands import Commanded


class FieldkitScreen(Commanded, Screen):
    """A full screen of fieldkit."""

    #: Extra rows for the keys help (F1): keys that are not bindings of the screen.
    KEY_HINTS: ClassVar[list[tuple[str, str]]] = []

    def unsaved_value(self) -> tuple[str, str] | None:
        """A value typed but not saved, and where; None when there is none."""
        return None

    def save_reading(self) -> bool:
        """Save the typed value; True when it is in the store."""
        return False

    def step_cautions(self) -> tuple[list[Caution], str]:
        """The cautions of the step on screen and where it is, for the caution screen (F2)."""
        return [], ""

    def reload(self) -> None:
        """Read what the screen shows again (the display units changed)."""
