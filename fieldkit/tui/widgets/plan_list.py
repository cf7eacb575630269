"""The test plan list: circuits as headings, each test point with a state glyph and word.

The glyph carries the state without colour (· not measured, ✓ in range, ✗ out of range,
? inconclusive, – skipped); the colour classes only repeat it. ``▸`` marks the selected point, the
one the step panel shows: it moves with the highlight and nowhere else, so the list and the panel
always agree. The point the engine recommends next is marked ``→`` (the NEXT line names it too);
saving a reading never moves the selection to it.

Readings standing at a point the machine's profile no longer has are listed last, under "Other
readings", one row per such point marked ``!``: highlighting one posts :class:`OtherChosen`,
Enter on it :class:`OtherPicked` (the screen opens their trail to move or delete them).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import ClassVar

from rich.style import Style
from rich.text import Text
from textual import on
from textual.message import Message
from textual.widgets import OptionList
from textual.widgets.option_list import Option, OptionDoesNotExist

from fieldkit.tui.plan import OtherPoint, PlanCircuit, PlanPoint, PointState
from fieldkit.tui.safe_text import literal

OTHER = "other:"  # option id prefix of a row for a point the profile no longer has
OTHER_HEADING = "Other readings (off the plan)"


def other_text(o: OtherPoint) -> Text:
    out = Text(end="", no_wrap=True, overflow="ellipsis")
    out.append(" ! ", "bold")
    out.append_text(literal(o.point_id))
    out.append(": ")
    out.append_text(literal(o.summary))
    return out


def point_text(
    p: PlanPoint,
    *,
    recommended: bool,
    selected: bool = False,
    styles: dict[PointState, Style] | None = None,
) -> Text:
    out = Text(end="", no_wrap=True, overflow="ellipsis")
    out.append("▸" if selected else " ", "bold")
    out.append(f"{p.state.glyph} ", (styles or {}).get(p.state, ""))
    if recommended:
        out.append("→ ", "bold")
    out.append_text(literal(p.point.label))
    if p.checks:
        out.append(f" ×{len(p.checks)}" if len(p.checks) > 1 else "", "dim")
    return out


class PlanList(OptionList):
    """Test points grouped by circuit. Moving onto a point posts :class:`PointChosen` (the screen
    shows its step); Enter on it posts :class:`PointPicked` (the screen moves to value entry)."""

    @dataclass
    class PointChosen(Message):
        """The highlight moved onto a test point."""

        point_id: str

    @dataclass
    class PointPicked(Message):
        """Enter was pressed on a test point."""

        point_id: str

    @dataclass
    class OtherChosen(Message):
        """The highlight moved onto a point the machine's profile no longer has."""

        point_id: str

    @dataclass
    class OtherPicked(Message):
        """Enter was pressed on a point the machine's profile no longer has."""

        point_id: str

    COMPONENT_CLASSES: ClassVar[set[str]] = {
        "plan--not-measured",
        "plan--in-range",
        "plan--out-of-range",
        "plan--inconclusive",
        "plan--skipped",
        "plan--circuit",
    }

    def __init__(self, *, id: str | None = None) -> None:
        super().__init__(id=id)
        self._ids: list[str | None] = []
        #: What each row was drawn from, to redraw only the rows whose point changed.
        self._drawn: list[object] = []
        self._styles: dict[PointState, Style] = {}
        #: The point marked ▸ (the highlighted one, as the screen shows it).
        self._marked_id: str | None = None
        self._plan_points: dict[str, tuple[PlanPoint, bool]] = {}

    def _state_styles(self) -> dict[PointState, Style]:
        return {
            s: self.get_component_rich_style("plan--" + s.value.replace(" ", "-"), partial=True)
            for s in PointState
        }

    def show(
        self,
        plan: list[PlanCircuit],
        recommended: str | None,
        selected: str | None,
        others: Sequence[OtherPoint] = (),
    ) -> None:
        styles = self._state_styles()
        ids: list[str | None] = []
        drawn: list[object] = []
        for pc in plan:
            ids.append(f"circuit:{pc.circuit.id}")
            drawn.append(pc.circuit.name)
            for p in pc.points:
                ids.append(p.id)
                drawn.append((p, p.id == recommended, p.id == selected))
        if others:
            ids.append("heading:other")
            drawn.append(OTHER_HEADING)
        for o in others:
            # the summary is part of the id: a changed value rebuilds the list
            ids.append(f"{OTHER}{o.point_id}={o.summary}")
            drawn.append(o.summary)
        self._plan_points = {d[0].id: (d[0], d[1]) for d in drawn if isinstance(d, tuple)}
        self._marked_id = selected
        if ids == self._ids and styles == self._styles:
            # Same plan, new states: swap the changed rows in place (no rebuild, no jump of the
            # cursor, and nothing redrawn when a reading left every state as it was).
            for index, (old, new) in enumerate(zip(self._drawn, drawn, strict=True)):
                if old != new and isinstance(new, tuple):
                    point, recommended_here, selected_here = new
                    self.replace_option_prompt_at_index(
                        index,
                        point_text(
                            point, recommended=recommended_here, selected=selected_here, styles=styles
                        ),
                    )
        else:
            options: list[Option] = []
            for pc in plan:
                head = Text(end="", no_wrap=True, overflow="ellipsis")
                head.append_text(
                    literal(pc.circuit.name, self.get_component_rich_style("plan--circuit", partial=True))
                )
                options.append(Option(head, id=f"circuit:{pc.circuit.id}", disabled=True))
                for p in pc.points:
                    options.append(
                        Option(
                            point_text(
                                p, recommended=p.id == recommended, selected=p.id == selected, styles=styles
                            ),
                            id=p.id,
                        )
                    )
            if others:
                head = Text(end="", no_wrap=True, overflow="ellipsis")
                head.append(OTHER_HEADING, self.get_component_rich_style("plan--circuit", partial=True))
                options.append(Option(head, id="heading:other", disabled=True))
            options.extend(Option(other_text(o), id=f"{OTHER}{o.point_id}") for o in others)
            self.clear_options()
            self.add_options(options)
            self._ids = ids
        self._drawn = drawn
        self._styles = styles
        if selected is not None:
            self.select_point(selected)

    @on(OptionList.OptionHighlighted)
    def _highlighted(self, event: OptionList.OptionHighlighted) -> None:
        event.stop()
        point_id = event.option.id
        if point_id is not None and point_id.startswith(OTHER):
            self._mark_selected(None)
            self.post_message(self.OtherChosen(point_id.removeprefix(OTHER)))
        elif point_id is not None and not point_id.startswith("circuit:"):
            self._mark_selected(point_id)
            self.post_message(self.PointChosen(point_id))

    def _mark_selected(self, point_id: str | None) -> None:
        """Move ▸ to the highlighted point (two rows redrawn)."""
        old, self._marked_id = self._marked_id, point_id
        if old == point_id:
            return
        for pid in (old, point_id):
            if pid is None or pid not in self._plan_points:
                continue
            point, recommended = self._plan_points[pid]
            index = self.get_option_index(pid)
            self.replace_option_prompt_at_index(
                index,
                point_text(point, recommended=recommended, selected=pid == point_id, styles=self._styles),
            )
            self._drawn[index] = (point, recommended, pid == point_id)

    @on(OptionList.OptionSelected)
    def _selected(self, event: OptionList.OptionSelected) -> None:
        event.stop()
        point_id = event.option.id
        if point_id is not None and point_id.startswith(OTHER):
            self.post_message(self.OtherPicked(point_id.removeprefix(OTHER)))
        elif point_id is not None and not point_id.startswith("circuit:"):
            self.post_message(self.PointPicked(point_id))

    def select_point(self, point_id: str) -> None:
        try:
            index = self.get_option_index(point_id)
        except OptionDoesNotExist:  # not in this machine's plan: keep the current highlight
            return
        if self.highlighted != index:
            self.highlighted = index

    @property
    def point_id(self) -> str | None:
        if self.highlighted is None:
            return None
        option = self.get_option_at_index(self.highlighted)
        return None if option.id is None or option.id.startswith(("circuit:", OTHER)) else option.id

    @property
    def other_id(self) -> str | None:
        """The point under the highlight when it is one the profile no longer has."""
        if self.highlighted is None:
            return None
        option = self.get_option_at_index(self.highlighted)
        return option.id.removeprefix(OTHER) if option.id and option.id.startswith(OTHER) else None
