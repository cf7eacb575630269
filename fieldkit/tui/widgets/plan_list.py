"""The test plan list: circuits as headings, each test point with a state glyph and word.

The glyph carries the state without colour (· not measured, ✓ in range, ✗ out of range,
? inconclusive, – skipped); the colour classes only repeat it. The point the engine recommends
next is marked with ▸.
"""

from __future__ import annotations

from typing import ClassVar

from rich.style import Style
from rich.text import Text
from textual.widgets import OptionList
from textual.widgets.option_list import Option, OptionDoesNotExist

from fieldkit.tui.plan import PlanCircuit, PlanPoint, PointState
from fieldkit.tui.safe_text import literal
from fieldkit.tui.widgets.changes import same_text


def point_text(p: PlanPoint, *, recommended: bool, styles: dict[PointState, Style] | None = None) -> Text:
    out = Text(end="", no_wrap=True, overflow="ellipsis")
    out.append("▸" if recommended else " ", "bold")
    out.append(f"{p.state.glyph} ", (styles or {}).get(p.state, ""))
    out.append_text(literal(p.point.label))
    if p.checks:
        out.append(f" ×{len(p.checks)}" if len(p.checks) > 1 else "", "dim")
    return out


class PlanList(OptionList):
    """Test points grouped by circuit; highlighting one selects it for the step panel."""

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

    def _state_styles(self) -> dict[PointState, Style]:
        return {
            s: self.get_component_rich_style("plan--" + s.value.replace(" ", "-"), partial=True)
            for s in PointState
        }

    def show(self, plan: list[PlanCircuit], recommended: str | None, selected: str | None) -> None:
        options: list[Option] = []
        styles = self._state_styles()
        for pc in plan:
            head = Text(end="", no_wrap=True, overflow="ellipsis")
            head.append_text(
                literal(pc.circuit.name, self.get_component_rich_style("plan--circuit", partial=True))
            )
            options.append(Option(head, id=f"circuit:{pc.circuit.id}", disabled=True))
            for p in pc.points:
                options.append(Option(point_text(p, recommended=p.id == recommended, styles=styles), id=p.id))
        ids = [o.id for o in options]
        if ids == self._ids:
            # Same plan, new states: swap the changed prompts in place (no rebuild, no jump of the
            # cursor, and nothing redrawn when a reading left every state as it was).
            for index, option in enumerate(options):
                if not same_text(self.get_option_at_index(index).prompt, option.prompt):
                    self.replace_option_prompt_at_index(index, option.prompt)
        else:
            self.clear_options()
            self.add_options(options)
            self._ids = ids
        if selected is not None:
            self.select_point(selected)

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
        return None if option.id is None or option.id.startswith("circuit:") else option.id
