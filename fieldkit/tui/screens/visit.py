"""The visit screen: the test plan, the selected step, reading entry and the live diagnosis.

The screen is made of widgets that hold their own state and tell it what happened: the plan
list posts :class:`PlanList.PointChosen` when the highlight moves onto a point, the entry rows
post :class:`ReadingEntry.Saved` once a reading is in the store (Workbench.record commits before
it returns). The screen then reads the visit back and diagnoses it again at once, in the UI
thread, because that takes a few milliseconds. The next frame carries the 'saved' line and the
new ranking (title, NEXT and LIKELY lines, the ranked-fault list); the findings, the plan's
glyphs and the step panel, a larger redraw, are painted a frame later. A line whose data did not
change is not redrawn at all (:mod:`fieldkit.tui.widgets.drawn`). tests/bench/bench_tui.py times
it from the key press to the screen.

The commands that open a dialog or another screen (readings trail, gauges, skipping, notes,
history, finishing, CSV import) are at the end; their store edits are in
:mod:`fieldkit.tui.visit_edits`.
"""

from __future__ import annotations

import functools
from collections.abc import Callable, Iterable
from pathlib import Path
from typing import ClassVar

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.widgets import Input, Label, OptionList

from fieldkit.diagnosis.catalogue import Caution
from fieldkit.diagnosis.results import Diagnosis, NextTest, RankedFault
from fieldkit.errors import FieldkitError
from fieldkit.model.gauge import Gauge
from fieldkit.model.profile import Circuit, MachineProfile, TestPoint
from fieldkit.model.quantity import quantity_text
from fieldkit.model.visit import Visit, VisitStatus
from fieldkit.session import Workbench
from fieldkit.tui import keys
from fieldkit.tui.guard import guarded
from fieldkit.tui.plan import (
    OtherPoint,
    PlanCircuit,
    PlanPoint,
    PointState,
    build_plan,
    notes_with_skip,
    notes_without_skip,
    other_points,
    skipped_points,
)
from fieldkit.tui.safe_text import literal
from fieldkit.tui.screens.base import FieldkitScreen
from fieldkit.tui.step import SHORT_STATE, default_function, gauge_fit, step_cautions
from fieldkit.tui.visit_edits import import_readings_csv
from fieldkit.tui.widgets.bars import caution_strip, likely_line, next_line, visit_title
from fieldkit.tui.widgets.drawn import DrawnLine
from fieldkit.tui.widgets.faults import FaultList, FindingsView
from fieldkit.tui.widgets.keybar import KeyBar
from fieldkit.tui.widgets.plan_list import PlanList
from fieldkit.tui.widgets.reading_entry import ReadingEntry
from fieldkit.tui.widgets.step_panel import StepPanel, StepView
from fieldkit.units import ParsedValue, format_value, percent

WIDE_FROM = 118  # columns from which the ranked faults and findings are shown beside the step
# s: one turn of the event loop, for the widgets changed by a save to report to the screen
# before the rest is queued behind their frame (Textual's call_after_refresh alone may run first)
HAND_OVER = 0.001


class VisitScreen(FieldkitScreen):
    """One visit, worked through test point by test point."""

    BINDINGS = keys.VISIT
    KEY_HINTS: ClassVar[list[tuple[str, str]]] = [
        ("↑ ↓", "choose a test point (also from the value field)"),
        ("Tab", "next field: gauge, condition, speed, oil"),
        ("Enter", "save the reading (in any entry field)"),
        ("Esc", "back to the visit list"),
    ]
    HORIZONTAL_BREAKPOINTS = [(0, "-narrow"), (WIDE_FROM, "-wide")]

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
        #: readings standing at points the profile no longer has, listed after the plan
        self.others: list[OtherPoint] = []
        self.point_id: str | None = None
        self._previous_top: RankedFault | None = None
        self._shown_top: RankedFault | None = None
        self._side_shown = False

    # --- layout -------------------------------------------------------------------------------
    def compose(self) -> ComposeResult:
        yield DrawnLine(visit_title, id="topbar")
        yield DrawnLine(next_line, id="next-line")
        yield DrawnLine(likely_line, id="top-fault")
        with Horizontal(id="body"):
            yield PlanList(id="plan")
            with Vertical(id="work"):
                yield StepPanel(id="step")
                yield ReadingEntry(self.bench, self.visit_id, id="entry")
            with Vertical(id="side"):
                yield Label("Likely faults (Enter: why)", classes="side-title")
                yield FaultList(id="side-faults")
                yield Label("Findings", classes="side-title")
                with VerticalScroll(id="side-findings-scroll"):
                    yield FindingsView(id="side-findings")
        yield DrawnLine(caution_strip, id="cautions")
        yield KeyBar()

    def on_mount(self) -> None:
        self.reload(first=True)
        self.query_one("#value", Input).focus()

    @property
    def entry(self) -> ReadingEntry:
        return self.query_one("#entry", ReadingEntry)

    def _message(self, text: str, mood: str) -> None:
        self.entry.say(text, mood)

    def show_problem(self, text: str) -> None:
        """An unexpected error, in plain words, where the technician is looking (tui/guard.py)."""
        self.entry.show_problem(text)

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
        self.entry.visit = self.visit
        self._previous_top = self._shown_top
        self.diagnosis = self.bench.diagnose(self.visit, self.profile)
        self._shown_top = self.diagnosis.faults[0] if self.diagnosis.faults else None
        self.plan = build_plan(self.profile, self.diagnosis, self.visit.notes)
        self.others = other_points(self.visit, self.profile, self.bench.system)
        if self.point_id is None:
            nxt = self.next_test
            self.point_id = nxt.test_point if nxt else self.profile.circuits[0].test_points[0].id
        self._show_ranking()

    def _show_ranking(self) -> None:
        assert self.visit is not None and self.profile is not None
        # One-line strips keep their size: a change repaints them, with no layout pass.
        self.query_one("#topbar", DrawnLine).data = (self.visit, self.profile, self.demo)
        self.query_one("#next-line", DrawnLine).data = (self.next_test, self.closed)
        self.query_one("#top-fault", DrawnLine).data = (self._shown_top, self._previous_top)
        if self._wide():
            self.query_one("#side-faults", FaultList).show(self.diagnosis)
        else:
            self._side_shown = False

    def _show_rest(self, *, first: bool = False) -> None:
        """Paint the rest from the current diagnosis: findings, the plan's glyphs, the selected
        step and the entry row's state (its defaults too, the first time)."""
        assert self.profile is not None
        self._show_side()
        nxt = self.next_test
        self.query_one("#plan", PlanList).show(
            self.plan, nxt.test_point if nxt else None, self.point_id, self.others
        )
        if first:
            self.entry.fill_condition_defaults(self.profile, force=True)
        self._show_point(reset_entry=first)
        self.entry.closed = self.closed

    @guarded("redrawing the visit")
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

    def current(self) -> tuple[Circuit, TestPoint, PlanPoint | None]:
        assert self.profile is not None and self.point_id is not None
        circuit, point = self.profile.test_point(self.point_id)
        plan_point = next((p for pc in self.plan for p in pc.points if p.id == point.id), None)
        return circuit, point, plan_point

    # --- the selected step --------------------------------------------------------------------
    @guarded("showing the test point")
    def _show_point(self, *, reset_entry: bool) -> None:
        assert self.visit is not None
        _circuit, point, _pp = self.current()
        entry = self.entry
        if reset_entry:
            function = default_function(point, self.next_test)
            entry.function = function
            entry.offer_gauges(point, function)
        entry.point = point
        self._show_step()

    def _show_step(self) -> None:
        assert self.profile is not None
        circuit, point, plan_point = self.current()
        entry = self.entry
        function = entry.function
        cautions = step_cautions(self.bench.knowledge, circuit, point, function, diagnosis=self.diagnosis)
        view = StepView(
            profile=self.profile,
            circuit=circuit,
            point=point,
            plan_point=plan_point,
            function=function,
            fit=gauge_fit(point, entry.gauge, function, self.bench.system),
            cautions=cautions,
            next_test=self.next_test,
            system=self.bench.system,
            checks=plan_point.checks if plan_point else [],
        )
        self.query_one("#step", StepPanel).show(view)
        self.query_one("#cautions", DrawnLine).data = (tuple(cautions),)

    def step_cautions(self) -> tuple[list[Caution], str]:
        """The current step's cautions and where, for the general caution screen (F2)."""
        if self.profile is None or self.point_id is None:
            return [], ""
        circuit, point, _p = self.current()
        cautions = step_cautions(
            self.bench.knowledge, circuit, point, self.entry.function, diagnosis=self.diagnosis
        )
        return cautions, point.label

    # --- what the widgets say -----------------------------------------------------------------
    def on_plan_list_point_chosen(self, event: PlanList.PointChosen) -> None:
        if event.point_id != self.point_id:
            self.point_id = event.point_id
            self._show_point(reset_entry=True)

    def on_plan_list_point_picked(self) -> None:
        if not self.closed:
            self.query_one("#value", Input).focus()

    def on_plan_list_other_chosen(self, event: PlanList.OtherChosen) -> None:
        # The step and the value field still belong to the last plan point: the focus leaves
        # the value field so nothing typed now is saved there by mistake.
        plan = self.query_one("#plan", PlanList)
        if not plan.has_focus:
            plan.focus()
        self._message(
            f"{event.point_id} is not in this machine's plan (its profile was changed): Enter shows "
            "its readings, to move one to a plan point or delete it.",
            "info",
        )

    def on_plan_list_other_picked(self, event: PlanList.OtherPicked) -> None:
        self.open_other_readings(event.point_id)

    def open_other_readings(self, point_id: str) -> None:
        from fieldkit.tui.screens.readings import ReadingsScreen

        if self.profile is None:
            return
        self.app.push_screen(
            ReadingsScreen(self.bench, self.visit_id, None, point_id=point_id, profile=self.profile),
            lambda _r: self.reload(),
        )

    @on(OptionList.OptionSelected, "#side-faults")
    def _fault_chosen(self, event: OptionList.OptionSelected) -> None:
        self.open_fault(event.option.id)

    def on_reading_entry_condition_changed(self) -> None:
        if self.profile is not None and self.point_id is not None:
            self._show_step()

    def on_reading_entry_saved(self, event: ReadingEntry.Saved) -> None:
        self.after_save(event)

    def on_reading_entry_ambiguous(self, event: ReadingEntry.Ambiguous) -> None:
        from fieldkit.tui.screens.dialogs import ChoiceDialog

        choices = [c for c in event.error.choices if isinstance(c, ParsedValue)]
        # A bare '7 inHg' at a suction point: the choices are written differently ('7 inHg vac')
        # and differ in sign, so each is named as written and by its side of atmosphere.
        sides = len({c.quantity.magnitude > 0 for c in choices}) > 1
        written = len({c.text for c in choices}) > 1
        labels = [
            Text(
                f"{c.text if written else quantity_text(c.quantity)}   "
                f"(= {format_value(c.quantity, self.bench.system)}"
                + (f", {'below' if c.quantity.magnitude < 0 else 'above'} atmosphere)" if sides else ")"),
                end="",
            )
            for c in choices
        ]
        self.app.push_screen(
            ChoiceDialog("Which value?", literal(str(event.error)), labels),
            lambda index: self.entry.save_choice(event, index),
        )

    def on_reading_entry_confirm(self, event: ReadingEntry.Confirm) -> None:
        from fieldkit.tui.screens.dialogs import ConfirmDialog

        self.app.push_screen(
            ConfirmDialog(
                "Save this value?", literal(str(event.error)), yes="Save as read", no="Do not save"
            ),
            lambda yes: self.entry.save_confirmed(event, yes),
        )

    def on_reading_entry_danger(self, event: ReadingEntry.Danger) -> None:
        """A typed value above the point's rating raises its danger caution in the strip at once."""
        if self.profile is not None and self.point_id is not None:
            self._show_cautions(event.caution)

    def _show_cautions(self, danger: str = "") -> None:
        circuit, point, _p = self.current()
        cautions = step_cautions(
            self.bench.knowledge, circuit, point, self.entry.function, diagnosis=self.diagnosis
        )
        extra = self.bench.knowledge.cautions.get(danger) if danger else None
        if extra is not None and extra not in cautions:
            cautions = [extra, *cautions]
        self.query_one("#cautions", DrawnLine).data = (tuple(cautions),)

    # --- saving -------------------------------------------------------------------------------
    def unsaved_value(self) -> tuple[str, str] | None:
        """A value typed but not saved, and where (for the quit and leave prompts)."""
        if not self.is_mounted or self.profile is None:
            return None
        return self.entry.unsaved_value()

    def save_reading(self) -> bool:
        """Save the typed value now; True when it is in the store."""
        return self.entry.save()

    @guarded("saving the reading")
    def after_save(self, saved: ReadingEntry.Saved) -> None:
        """A reading is in the store: diagnose again and show the ranking in the next frame."""
        assert self.visit is not None
        reading, point = saved.reading, saved.point
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
        self.entry.say(
            f"✓ saved {reading.entered or shown} at {point.label}, "
            f"{SHORT_STATE[reading.condition.function]}{unskipped}.{change}",
            "ok",
            keep=True,
        )
        # The saved line and the new ranking go out in the next frame on their own; the findings,
        # the plan's glyphs and the step panel, the larger redraw, follow in the frame after.
        # Visit, diagnosis and plan are already current: only the painting of those waits.
        self.set_timer(HAND_OVER, self._show_rest_after_next_frame)

    def _show_rest_after_next_frame(self) -> None:
        # By now the widgets changed by the save have told the screen, so this waits for their frame.
        self.call_after_refresh(self._show_rest_later)

    # --- moving about -------------------------------------------------------------------------
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

    # --- commands that open a dialog or another screen ----------------------------------------
    def action_point_readings(self) -> None:
        from fieldkit.tui.screens.readings import ReadingsScreen

        other = self.query_one("#plan", PlanList).other_id
        if other is not None:
            self.open_other_readings(other)
            return
        _c, point, _p = self.current()
        self.app.push_screen(ReadingsScreen(self.bench, self.visit_id, point), lambda _r: self.reload())

    def action_complaint(self) -> None:
        from fieldkit.tui.screens.visit_story import open_complaint

        open_complaint(self)

    def action_observe(self) -> None:
        from fieldkit.tui.screens.visit_story import open_observations

        open_observations(self)

    def action_repair(self) -> None:
        from fieldkit.tui.screens.visit_story import open_repair

        open_repair(self)

    def action_add_gauge(self) -> None:
        from fieldkit.tui.screens.gauge import AddGaugeDialog

        if self.closed or self.visit is None:
            self._message("This visit is closed; reopen it to add a gauge.", "error")
            return

        def added(gauge: Gauge | None) -> None:
            if gauge is None:
                return
            from fieldkit.model.kit import calibration_warning

            try:
                if gauge.kit_item is None:
                    gauge = self.bench.keep_in_kit(gauge)
                self.bench.store.add_gauge(self.visit_id, gauge)
            except FieldkitError as exc:
                self._message(f"✗ {exc}", "error")
                return
            self.reload()
            _c, point, _p = self.current()
            self.entry.offer_gauges(point, self.entry.function, choose=gauge.id)
            warning = calibration_warning(gauge, self.visit.date) if self.visit is not None else ""
            if warning:
                # A toast as well: the step panel redraws for the new gauge.
                self.app.notify(
                    f"⚠ {warning}", title="Calibration", severity="warning", timeout=12, markup=False
                )
                self._message(f"⚠ {warning}", "error")
            else:
                self._message(f"✓ gauge {gauge.id} added to the visit", "ok")

        self.app.push_screen(
            AddGaugeDialog(
                {g.id for g in self.visit.gauges},
                self.bench.settings.decimal_comma,
                self.bench.store.kit(),
                self.visit.date,
            ),
            added,
        )

    def action_skip_point(self) -> None:
        from fieldkit.tui.screens.dialogs import ConfirmDialog, LinePrompt

        if self.closed or self.visit is None:
            self._message("This visit is closed; reopen it to change the plan.", "error")
            return
        _c, point, plan_point = self.current()
        if plan_point is not None and plan_point.checks:
            self._message(
                f"{point.label} already has readings; delete them (^r) before skipping it.", "error"
            )
            return
        visit = self.visit
        if plan_point is not None and plan_point.state is PointState.SKIPPED:

            def unskip(yes: bool | None) -> None:
                if yes:
                    self.bench.store.update_visit(
                        self.visit_id, notes=notes_without_skip(visit.notes, point.id)
                    )
                    self.reload()
                    self._message(f"{point.label} is back in the plan", "ok")

            self.app.push_screen(
                ConfirmDialog(
                    "Put it back?", literal(f"{point.label} is marked skipped. Put it back in the plan?")
                ),
                unskip,
            )
            return

        def skip(reason: str | None) -> None:
            if reason is None:
                return
            try:
                self.bench.store.update_visit(
                    self.visit_id, notes=notes_with_skip(visit.notes, point, reason)
                )
            except FieldkitError as exc:
                self._message(f"✗ {exc}", "error")
                return
            self.reload()
            self._message(f"– {point.label} marked skipped (written in the visit notes)", "ok")

        self.app.push_screen(
            LinePrompt(
                "Skip this test point",
                literal(
                    f"Why is {point.label} not measured? The reason goes into the visit notes and the job "
                    "card."
                ),
                value="no access on this machine",
            ),
            skip,
        )

    def action_machine_history(self) -> None:
        from fieldkit.tui.screens.history import HistoryScreen

        if self.visit is not None and self.profile is not None:
            self.app.push_screen(HistoryScreen(self.bench, self.profile, self.visit))

    def action_edit_notes(self) -> None:
        from fieldkit.tui.screens.dialogs import NotesDialog

        if self.closed or self.visit is None:
            self._message("This visit is closed; its notes are part of the record.", "error")
            return

        def saved(notes: str | None) -> None:
            if notes is None:
                return
            try:
                self.bench.store.update_visit(self.visit_id, notes=notes)
            except FieldkitError as exc:
                self._message(f"✗ notes not saved: {exc}", "error")
                return
            self.reload()
            self._message("✓ notes saved", "ok")

        self.app.push_screen(NotesDialog(self.visit.notes), saved)

    def action_finish_visit(self) -> None:
        from fieldkit.tui.screens.finish import FinishScreen

        if self.visit is None or self.profile is None or self.diagnosis is None:
            return
        if self.closed:
            self.write_job_card()
            return
        if self.unsaved_value() is not None:
            self._message(
                "A value is typed but not saved: press Enter to save it, or clear it, then finish.", "error"
            )
            return

        def done(result: str | None) -> None:
            self.reload()
            if result:
                self._message(result, "ok")

        self.app.push_screen(FinishScreen(self.bench, self.visit, self.profile, self.diagnosis), done)

    def write_job_card(self) -> None:
        from fieldkit.tui.screens.finish import JobCardDialog

        if self.visit is not None and self.profile is not None and self.diagnosis is not None:
            self.app.push_screen(
                JobCardDialog(self.visit, self.profile, self.diagnosis, self.bench.system),
                lambda r: self._message(r, "ok") if r else None,
            )

    def reopen(self) -> None:
        try:
            self.bench.store.reopen_visit(self.visit_id)
        except FieldkitError as exc:
            self._message(f"✗ {exc}", "error")
            return
        self.reload()
        self._message("Visit reopened: readings can be added again.", "ok")

    def import_csv(self) -> None:
        from fieldkit.tui.screens.dialogs import LinePrompt, existing_file

        if self.closed:
            self._message("This visit is closed; reopen it to import readings.", "error")
            return

        def chosen(path: str | None) -> None:
            if path:
                message = import_readings_csv(self.bench, self.visit_id, Path(path.strip()).expanduser())
                self.reload()
                self._message(message, "ok" if message.startswith("✓") else "error")

        self.app.push_screen(
            LinePrompt(
                "Import readings (CSV)",
                "Path of a CSV file of readings (fieldkit's CSV layout):",
                check=existing_file((".csv",)),
            ),
            chosen,
        )

    def action_leave(self) -> None:
        from fieldkit.tui.screens.dialogs import ConfirmDialog

        unsaved = self.unsaved_value()
        if unsaved is None:
            self.app.pop_screen()
            return

        def answer(discard: bool | None) -> None:
            if discard:
                self.entry.clear_value()
                self.app.pop_screen()

        typed, where = unsaved
        self.app.push_screen(
            ConfirmDialog(
                "Leave without saving?",
                Text.assemble(
                    "The value ",
                    literal(repr(typed), "bold"),
                    " typed for ",
                    literal(where, "bold"),
                    " is not saved. Leave and throw it away?",
                    end="",
                ),
                yes="Throw it away",
                no="Stay",
            ),
            answer,
        )

    def palette_commands(self) -> Iterable[tuple[str, str, Callable[[], object]]]:
        yield "Next recommended test", "select the point the engine suggests", self.action_go_next_test
        yield "Ranked faults and findings", "the live diagnosis in full", self.action_show_faults
        yield "Readings at this point", "history, corrections, deletions", self.action_point_readings
        yield "Add a gauge", "id, range and accuracy class", self.action_add_gauge
        yield "Skip this test point", "the reason goes into the notes", self.action_skip_point
        yield "Machine history", "earlier visits side by side", self.action_machine_history
        yield "Visit notes", "edit the notes", self.action_edit_notes
        yield "Import readings (CSV)", "from a logger or a digital gauge", self.import_csv
        if self.closed:
            yield "Reopen this visit", "to add or correct readings", self.reopen
            yield "Write the job card", "PDF, text or Markdown", self.write_job_card
        else:
            yield "Finish the visit", "summary, notes, job card", self.action_finish_visit
        yield "Back to the visit list", "leave this visit", self.action_leave
        if self.profile is not None:
            for circuit, point in self.profile.all_test_points():
                yield (
                    f"Go to {point.label} ({circuit.id})",
                    "select this test point",
                    functools.partial(self.select_point, point.id),
                )
        if self.diagnosis is not None:
            for f in self.diagnosis.faults[:8]:
                yield (
                    f"Why: {f.display_title}",
                    "findings for and against",
                    functools.partial(self.open_fault, f.key),
                )
