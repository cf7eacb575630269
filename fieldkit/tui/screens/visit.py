"""The visit screen: the test plan, the selected step, reading entry and the live diagnosis.

A reading is saved to the store the moment Enter is pressed (Workbench.record commits before it
returns); the visit is read back and diagnosed again at once, in the UI thread, because that
takes a few milliseconds. The next frame carries the 'saved' line and the new ranking (title,
NEXT and LIKELY lines, the ranked-fault list); the findings, the plan's glyphs and the step
panel, a larger redraw, are painted a frame later. Widgets whose text did not change are not
redrawn at all. tests/bench/bench_tui.py times it from the key press to the screen.
"""

from __future__ import annotations

import re
from typing import ClassVar

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import Screen
from textual.widgets import Input, Label, OptionList, Select, Static

from fieldkit.diagnosis.catalogue import Caution
from fieldkit.diagnosis.results import Diagnosis, NextTest, RankedFault
from fieldkit.errors import AmbiguousInputError, FieldkitError
from fieldkit.model.condition import Condition, FunctionState
from fieldkit.model.gauge import Gauge
from fieldkit.model.profile import Circuit, MachineProfile, TestPoint
from fieldkit.model.visit import Reading, Visit, VisitStatus
from fieldkit.session import Workbench
from fieldkit.tui import keys
from fieldkit.tui.plan import (
    PlanCircuit,
    PlanPoint,
    build_plan,
    notes_without_skip,
    skipped_points,
)
from fieldkit.tui.safe_text import literal
from fieldkit.tui.screens.visit_actions import VisitActions
from fieldkit.tui.step import (
    SHORT_STATE,
    default_function,
    gauge_fit,
    last_condition_values,
    step_cautions,
    suggest_gauge,
)
from fieldkit.tui.widgets.bars import caution_strip, next_line, top_fault_line, visit_title
from fieldkit.tui.widgets.changes import show_text
from fieldkit.tui.widgets.faults import FaultList, FindingsView
from fieldkit.tui.widgets.keybar import KeyBar
from fieldkit.tui.widgets.plan_list import PlanList
from fieldkit.tui.widgets.step_panel import StepPanel, StepView
from fieldkit.units import Kind, format_value, parse_value, percent

WIDE_FROM = 118  # columns from which the ranked faults and findings are shown beside the step
# s: one turn of the event loop, for the widgets changed by a save to report to the screen
# before the rest is queued behind their frame (Textual's call_after_refresh alone may run first)
HAND_OVER = 0.001
_BARE_NUMBER = re.compile(r"^\s*[+\-]?\d[\d.,]*\s*$")
VALUE_HINT = "type the value as the gauge shows it (e.g. 24,5 bar · 3,500 psi · 0.75 bar abs); Enter saves it"


class VisitScreen(VisitActions, Screen):
    """One visit, worked through test point by test point."""

    BINDINGS = keys.VISIT
    KEY_HINTS: ClassVar[list[tuple[str, str]]] = [
        ("↑ ↓", "choose a test point (also from the value field)"),
        ("Tab", "next field: gauge, condition, speed, oil"),
        ("Enter", "save the reading (in any entry field)"),
        ("Esc", "back to the visit list"),
    ]
    HORIZONTAL_BREAKPOINTS: ClassVar[list[tuple[int, str]]] = [(0, "-narrow"), (WIDE_FROM, "-wide")]

    def __init__(self, bench: Workbench, visit_id: str, *, demo: bool = False) -> None:
        super().__init__()
        # Textual sets the breakpoint class at the screen's first resize, which comes after the
        # first frame; set from the start, the first frame already has the layout (and the side
        # lists) it keeps, and no style pass is spent on changing it.
        try:
            wide = self.app.size.width >= WIDE_FROM
        except RuntimeError:  # built outside a running app: the first resize decides
            wide = False
        self.add_class("-wide" if wide else "-narrow", update=False)
        self.bench = bench
        self.visit_id = visit_id
        self.demo = demo
        self.visit: Visit | None = None
        self.profile: MachineProfile | None = None
        self.diagnosis: Diagnosis | None = None
        self.plan: list[PlanCircuit] = []
        self.point_id: str | None = None
        self._previous_top: RankedFault | None = None
        self._shown_top: RankedFault | None = None
        self._keep_message = False  # a 'saved' line stays until the next keystroke
        self._side_shown = False

    # --- layout -------------------------------------------------------------------------------
    def compose(self) -> ComposeResult:
        yield Static(id="topbar")
        yield Static(id="next-line")
        yield Static(id="top-fault")
        with Horizontal(id="body"):
            yield PlanList(id="plan")
            with Vertical(id="work"):
                yield StepPanel(id="step")
                with Vertical(id="entry"):
                    with Horizontal(classes="entry-row"):
                        yield Input(
                            placeholder="value, e.g. 24,5 bar", id="value", compact=True, max_length=64
                        )
                        yield Select([], prompt="no gauge", id="gauge", compact=True)
                    with Horizontal(classes="entry-row"):
                        yield Select(
                            [(Text(SHORT_STATE[s]), s) for s in FunctionState],
                            allow_blank=False,
                            value=FunctionState.NEUTRAL,
                            id="function",
                            compact=True,
                        )
                        yield Input(placeholder="speed rpm", id="speed", compact=True, max_length=32)
                        yield Input(placeholder="oil °C", id="oil", compact=True, max_length=32)
                    yield Static(VALUE_HINT, id="parse-msg")
            with Vertical(id="side"):
                yield Label("Likely faults (Enter: why)", classes="side-title")
                yield FaultList(id="side-faults")
                yield Label("Findings", classes="side-title")
                with VerticalScroll(id="side-findings-scroll"):
                    yield FindingsView(id="side-findings")
        yield Static(id="cautions")
        yield KeyBar()

    def on_mount(self) -> None:
        self.reload(first=True)
        self.query_one("#value", Input).focus()

    # --- data ---------------------------------------------------------------------------------
    @property
    def closed(self) -> bool:
        return self.visit is not None and self.visit.status is VisitStatus.CLOSED

    @property
    def next_test(self) -> NextTest | None:
        return self.diagnosis.next_tests[0] if self.diagnosis and self.diagnosis.next_tests else None

    def reload(self, *, first: bool = False) -> None:
        """Read the visit back from the store, diagnose it again (a few ms) and show it all."""
        self._diagnose_again()
        self._show_rest(first=first)

    def _diagnose_again(self) -> None:
        """The visit as stored, its diagnosis, and the lines and list that show the ranking."""
        self.visit = self.bench.store.get_visit(self.visit_id)
        self.profile = self.bench.profile_for(self.visit)
        self._previous_top = self._shown_top
        self.diagnosis = self.bench.diagnose(self.visit, self.profile)
        self._shown_top = self.diagnosis.faults[0] if self.diagnosis.faults else None
        self.plan = build_plan(self.profile, self.diagnosis, self.visit.notes)
        if self.point_id is None:
            nxt = self.next_test
            self.point_id = nxt.test_point if nxt else self.profile.circuits[0].test_points[0].id
        self._show_ranking()

    def _show_ranking(self) -> None:
        assert self.visit is not None and self.profile is not None
        # One-line strips keep their size: no layout pass for them.
        show_text(
            self.query_one("#topbar", Static),
            visit_title(self.visit, self.profile, demo=self.demo),
            layout=False,
        )
        show_text(self.query_one("#next-line", Static), next_line(self.next_test, self.closed), layout=False)
        show_text(
            self.query_one("#top-fault", Static),
            top_fault_line(self.diagnosis, self._previous_top),
            layout=False,
        )
        if self._wide():
            self.query_one("#side-faults", FaultList).show(self.diagnosis)
        else:
            self._side_shown = False

    def _show_rest(self, *, first: bool = False) -> None:
        """Paint the rest from the current diagnosis: findings, the plan's glyphs, the selected
        step and the entry row's state (its defaults too, the first time)."""
        self._show_side()
        nxt = self.next_test
        self.query_one("#plan", PlanList).show(self.plan, nxt.test_point if nxt else None, self.point_id)
        if first:
            self._fill_condition_defaults(force=True)
        self._show_point(reset_entry=first)
        self._show_closed_state()

    def _show_rest_later(self) -> None:
        if self.is_attached and self.visit is not None:
            self._show_rest()

    def _wide(self) -> bool:
        """Whether the side lists are on screen (the breakpoint class)."""
        return self.has_class("-wide")

    def _show_side(self) -> None:
        """The wide layout's fault and finding lists (skipped while they are hidden)."""
        if self._wide():
            self.query_one("#side-faults", FaultList).show(self.diagnosis)
            self.query_one("#side-findings", FindingsView).show(self.diagnosis)
            self._side_shown = True
        else:
            self._side_shown = False

    def on_resize(self) -> None:
        self.call_after_refresh(self._side_after_resize)

    def _side_after_resize(self) -> None:
        if self._wide() and not self._side_shown and self.diagnosis is not None:
            self._show_side()

    def _show_closed_state(self) -> None:
        for wid in ("#value", "#gauge", "#function", "#speed", "#oil"):
            self.query_one(wid).disabled = self.closed
        if self.closed:
            self._message(
                Text(
                    "This visit is closed. Find (F3) → 'Reopen this visit' to add readings, "
                    "or 'Write the job card' to print it again.",
                    end="",
                ),
                "info",
            )

    def current(self) -> tuple[Circuit, TestPoint, PlanPoint | None]:
        assert self.profile is not None and self.point_id is not None
        circuit, point = self.profile.test_point(self.point_id)
        plan_point = next((p for pc in self.plan for p in pc.points if p.id == point.id), None)
        return circuit, point, plan_point

    # --- the selected step --------------------------------------------------------------------
    def _function(self) -> FunctionState:
        value = self.query_one("#function", Select).value
        return value if isinstance(value, FunctionState) else FunctionState.NEUTRAL

    def _gauge(self) -> Gauge | None:
        value = self.query_one("#gauge", Select).value
        return self.visit.gauge(value) if isinstance(value, str) and self.visit is not None else None

    def _show_point(self, *, reset_entry: bool) -> None:
        assert self.visit is not None
        _circuit, point, _pp = self.current()
        if reset_entry:
            self.query_one("#function", Select).value = default_function(point, self.next_test)
            self._set_gauge_options(point)
        self._show_step()

    def _set_gauge_options(self, point: TestPoint) -> None:
        assert self.visit is not None
        fitting = [g for g in self.visit.gauges if g.kind is point.kind]
        select = self.query_one("#gauge", Select)
        select.set_options([(Text(_gauge_label(g), end=""), g.id) for g in fitting])
        best = suggest_gauge(
            point, self.visit.gauges, default_function(point, self.next_test), self.bench.system
        )
        if best is not None:
            select.value = best.id
        elif fitting:
            select.value = fitting[0].id

    def _show_step(self) -> None:
        assert self.profile is not None
        circuit, point, plan_point = self.current()
        function = self._function()
        cautions = step_cautions(self.bench.knowledge, point, function)
        view = StepView(
            profile=self.profile,
            circuit=circuit,
            point=point,
            plan_point=plan_point,
            function=function,
            fit=gauge_fit(point, self._gauge(), function, self.bench.system),
            cautions=cautions,
            next_test=self.next_test,
            system=self.bench.system,
            checks=plan_point.checks if plan_point else [],
        )
        self.query_one("#step", StepPanel).show(view)
        show_text(self.query_one("#cautions", Static), caution_strip(cautions), layout=False)
        self.query_one("#value", Input).placeholder = f"e.g. {_example(point)}"
        self._update_parse_message()

    def step_cautions(self) -> tuple[list[Caution], str]:
        """The current step's cautions and where, for the general caution screen (F2)."""
        if self.profile is None or self.point_id is None:
            return [], ""
        _c, point, _p = self.current()
        return step_cautions(self.bench.knowledge, point, self._function()), point.label

    def _fill_condition_defaults(self, *, force: bool = False) -> None:
        assert self.visit is not None and self.profile is not None
        speed, oil = last_condition_values(self.visit, self.profile)
        speed_in, oil_in = self.query_one("#speed", Input), self.query_one("#oil", Input)
        if speed is not None and (force or not speed_in.value.strip()):
            speed_in.value = format_value(speed, self.bench.system)
        if oil is not None and (force or not oil_in.value.strip()):
            oil_in.value = format_value(oil, self.bench.system)
        oil_in.placeholder = f"oil {self.bench.system.temperature}"

    # --- events -------------------------------------------------------------------------------
    @on(OptionList.OptionHighlighted, "#plan")
    def _point_highlighted(self, event: OptionList.OptionHighlighted) -> None:
        option_id = event.option.id
        if option_id is None or option_id.startswith("circuit:") or option_id == self.point_id:
            return
        self.point_id = option_id
        self._show_point(reset_entry=True)

    @on(OptionList.OptionSelected, "#plan")
    def _point_chosen(self) -> None:
        if not self.closed:
            self.query_one("#value", Input).focus()

    @on(OptionList.OptionSelected, "#side-faults")
    def _fault_chosen(self, event: OptionList.OptionSelected) -> None:
        self.open_fault(event.option.id)

    @on(Select.Changed, "#function")
    @on(Select.Changed, "#gauge")
    def _condition_changed(self) -> None:
        if self.profile is not None and self.point_id is not None:
            self._show_step()

    @on(Input.Changed, "#value")
    @on(Input.Changed, "#speed")
    @on(Input.Changed, "#oil")
    def _typed(self) -> None:
        self._update_parse_message()

    @on(Input.Submitted, "#value")
    @on(Input.Submitted, "#speed")
    @on(Input.Submitted, "#oil")
    def _submitted(self, event: Input.Submitted) -> None:
        event.stop()
        self.save_reading()

    # --- parsing and saving -------------------------------------------------------------------
    def _message(self, text: Text | str, mood: str) -> None:
        widget = self.query_one("#parse-msg", Static)
        show_text(widget, text if isinstance(text, Text) else Text(text, end=""))
        for m in ("ok", "error", "info", "ask"):
            widget.set_class(m == mood, f"-{m}")

    def _with_unit(self, text: str, unit: str) -> str:
        return f"{text.strip()} {unit}" if _BARE_NUMBER.match(text) else text

    def _condition(self) -> Condition:
        """The condition as set in the entry row; a wrong speed or oil temperature is an error
        that names the field."""
        speed_text = self.query_one("#speed", Input).value
        oil_text = self.query_one("#oil", Input).value
        comma = self.bench.settings.decimal_comma
        speed = oil = None
        if speed_text.strip():
            try:
                speed = parse_value(
                    self._with_unit(speed_text, "rpm"), Kind.SPEED, decimal_comma=comma, role_name="speed"
                ).quantity
            except FieldkitError as exc:
                raise FieldkitError(f"speed field: {exc}") from None
        if oil_text.strip():
            try:
                oil = parse_value(
                    self._with_unit(oil_text, self.bench.system.temperature),
                    Kind.TEMPERATURE,
                    decimal_comma=comma,
                    role_name="oil temperature",
                ).quantity
            except FieldkitError as exc:
                raise FieldkitError(f"oil field: {exc}") from None
        return Condition(function=self._function(), speed=speed, oil_temperature=oil)

    def _update_parse_message(self) -> None:
        if self.closed or self.profile is None:
            return
        _c, point, _p = self.current()
        text = self.query_one("#value", Input).value
        if self._keep_message and not text:
            return
        self._keep_message = False
        value_input = self.query_one("#value", Input)
        try:
            self._condition()
        except FieldkitError as exc:
            self._message(literal(f"✗ {exc}"), "error")
            return
        if not text.strip():
            value_input.remove_class("-bad")
            self._message(VALUE_HINT, "info")
            return
        try:
            parsed = self.bench.parse_for_point(point, text)
        except AmbiguousInputError as exc:
            value_input.remove_class("-bad")
            self._message(literal(f"? {exc} Enter asks which."), "ask")
            return
        except FieldkitError as exc:
            value_input.add_class("-bad")
            self._message(literal(f"✗ {exc} (nothing saved)"), "error")
            return
        value_input.remove_class("-bad")
        ref = (
            f" ({parsed.reference.value})"
            if parsed.reference is not None and parsed.reference.value != "gauge"
            else ""
        )
        shown = format_value(parsed.quantity, self.bench.system)
        self._message(
            literal(f"= {shown}{ref} at {point.label}, {self._function().label}: Enter saves"), "ok"
        )

    def unsaved_value(self) -> tuple[str, str] | None:
        """A value typed but not saved, and where (for the quit and leave prompts)."""
        if not self.is_mounted or self.profile is None or self.point_id is None:
            return None
        text = self.query_one("#value", Input).value
        if not text.strip():
            return None
        _c, point, _p = self.current()
        return text, point.label

    def save_reading(self) -> bool:
        """Save the typed value now; True when it is in the store."""
        value_input = self.query_one("#value", Input)
        text = value_input.value
        if self.closed:
            self._message("This visit is closed; reopen it to add readings.", "error")
            return False
        if not text.strip():
            self._message("Type a value first; " + VALUE_HINT, "error")
            return False
        _c, point, _p = self.current()
        try:
            condition = self._condition()
        except FieldkitError as exc:
            self._message(literal(f"✗ {exc} (nothing saved)"), "error")
            return False
        gauge = self._gauge()
        try:
            reading = self.bench.record(
                self.visit_id, point.id, text, condition, gauge=gauge.id if gauge else None
            )
        except AmbiguousInputError as exc:
            self._ask_which(exc, point, condition, gauge)
            return False
        except FieldkitError as exc:
            value_input.add_class("-bad")
            self._message(literal(f"✗ {exc} (nothing saved)"), "error")
            return False
        self._after_save(reading, point)
        return True

    def _ask_which(
        self, exc: AmbiguousInputError, point: TestPoint, condition: Condition, gauge: Gauge | None
    ) -> None:
        from fieldkit.model.quantity import quantity_text
        from fieldkit.tui.screens.dialogs import ChoiceDialog

        choices = list(exc.choices)
        labels = [
            Text(f"{quantity_text(c.quantity)}   (= {format_value(c.quantity, self.bench.system)})", end="")
            for c in choices
        ]

        def chosen(index: int | None) -> None:
            if index is None:
                self._message("Not saved: choose which value the gauge showed, or retype it.", "ask")
                return
            try:
                saved = self.bench.record(
                    self.visit_id,
                    point.id,
                    "",
                    condition,
                    gauge=gauge.id if gauge else None,
                    chosen=choices[index],
                )
            except FieldkitError as err:
                self._message(literal(f"✗ {err} (nothing saved)"), "error")
                return
            self._after_save(saved, point)

        self.app.push_screen(ChoiceDialog("Which value?", literal(str(exc)), labels), chosen)

    def _after_save(self, reading: Reading, point: TestPoint) -> None:
        assert self.visit is not None
        value_input = self.query_one("#value", Input)
        value_input.value = ""
        value_input.remove_class("-bad")
        unskipped = ""
        if point.id in skipped_points(self.visit.notes) and not self.closed:
            self.bench.store.update_visit(self.visit_id, notes=notes_without_skip(self.visit.notes, point.id))
            unskipped = " (no longer marked skipped)"
        self._diagnose_again()
        shown = format_value(reading.value, self.bench.system)
        change = ""
        top, was = self._shown_top, self._previous_top
        if top is not None and was is not None and top.key != was.key:
            change = (
                f" Now most likely: {top.display_title} {percent(top.probability)} "
                f"(was {was.display_title} {percent(was.probability)})."
            )
        self._message(
            literal(
                f"✓ saved {reading.entered or shown} at {point.label}, "
                f"{SHORT_STATE[reading.condition.function]}{unskipped}.{change}"
            ),
            "ok",
        )
        self._keep_message = True
        # The saved line and the new ranking go out in the next frame on their own; the findings,
        # the plan's glyphs and the step panel, the larger redraw, follow in the frame after.
        # Visit, diagnosis and plan are already current: only the painting of those waits.
        self.set_timer(HAND_OVER, self._show_rest_after_next_frame)

    def _show_rest_after_next_frame(self) -> None:
        # By now the widgets changed by the save have told the screen, so this waits for their frame.
        self.call_after_refresh(self._show_rest_later)

    # --- actions ------------------------------------------------------------------------------
    def action_move_point(self, delta: int) -> None:
        plan = self.query_one("#plan", PlanList)
        if delta > 0:
            plan.action_cursor_down()
        else:
            plan.action_cursor_up()

    def action_go_next_test(self) -> None:
        nxt = self.next_test
        if nxt is None:
            self._message("The engine has no further test to suggest.", "info")
            return
        self.select_point(nxt.test_point)
        if not self.closed:
            self.query_one("#value", Input).focus()

    def select_point(self, point_id: str) -> None:
        self.query_one("#plan", PlanList).select_point(point_id)
        if point_id != self.point_id:
            self.point_id = point_id
            self._show_point(reset_entry=True)

    def action_show_faults(self) -> None:
        from fieldkit.tui.screens.diagnosis import DiagnosisScreen

        if self.diagnosis is not None and self.visit is not None:
            self.app.push_screen(DiagnosisScreen(self.diagnosis, self.visit.job_number))

    def open_fault(self, key: str | None) -> None:
        from fieldkit.tui.screens.diagnosis import FaultScreen

        fault = next((f for f in (self.diagnosis.faults if self.diagnosis else []) if f.key == key), None)
        if fault is not None:
            self.app.push_screen(FaultScreen(fault))


def _gauge_label(g: Gauge) -> str:
    start = format_value(g.scale_start) if g.scale_start is not None else "0"
    return f"{g.id} {start}–{format_value(g.full_scale)} cl {g.accuracy_class:g}"


def _example(point: TestPoint) -> str:
    from fieldkit.units import EXAMPLE

    return EXAMPLE[point.kind]
