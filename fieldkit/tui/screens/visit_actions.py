"""The visit screen's dialogs and commands: readings trail, gauges, skipping, notes, history,
finishing, CSV import and the command search entries. Kept apart from the screen's layout and
reading entry (visit.py) so each file reads on its own."""

from __future__ import annotations

from collections.abc import Callable, Iterable
from pathlib import Path
from typing import TYPE_CHECKING

from rich.text import Text
from textual.widgets import Input, Select

from fieldkit.errors import FieldkitError
from fieldkit.model.gauge import Gauge
from fieldkit.session import Workbench
from fieldkit.tui.messages import explain
from fieldkit.tui.plan import PointState, notes_with_skip, notes_without_skip
from fieldkit.tui.safe_text import literal

if TYPE_CHECKING:
    from fieldkit.tui.screens.visit import VisitScreen

    _Base = VisitScreen
else:
    _Base = object


class VisitActions(_Base):
    """Mixed into VisitScreen: the actions that open a dialog or another screen."""

    def action_point_readings(self) -> None:
        from fieldkit.tui.screens.readings import ReadingsScreen

        _c, point, _p = self.current()
        self.app.push_screen(ReadingsScreen(self.bench, self.visit_id, point), lambda _r: self.reload())

    def action_add_gauge(self) -> None:
        from fieldkit.tui.screens.gauge import AddGaugeDialog

        if self.closed or self.visit is None:
            self._message("This visit is closed; reopen it to add a gauge.", "error")
            return

        def added(gauge: Gauge | None) -> None:
            if gauge is None:
                return
            try:
                self.bench.store.add_gauge(self.visit_id, gauge)
            except FieldkitError as exc:
                self._message(literal(f"✗ {exc}"), "error")
                return
            self.reload()
            _c, point, _p = self.current()
            self._set_gauge_options(point)
            if gauge.kind is point.kind:
                self.query_one("#gauge", Select).value = gauge.id
            self._message(literal(f"✓ gauge {gauge.id} added to the visit"), "ok")

        self.app.push_screen(
            AddGaugeDialog({g.id for g in self.visit.gauges}, self.bench.settings.decimal_comma), added
        )

    def action_skip_point(self) -> None:
        from fieldkit.tui.screens.dialogs import ConfirmDialog, LinePrompt

        if self.closed or self.visit is None:
            self._message("This visit is closed; reopen it to change the plan.", "error")
            return
        _c, point, plan_point = self.current()
        if plan_point is not None and plan_point.checks:
            self._message(
                literal(f"{point.label} already has readings; delete them (^r) before skipping it."), "error"
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
                    self._message(literal(f"{point.label} is back in the plan"), "ok")

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
                self._message(literal(f"✗ {exc}"), "error")
                return
            self.reload()
            self._message(literal(f"– {point.label} marked skipped (written in the visit notes)"), "ok")

        self.app.push_screen(
            LinePrompt(
                "Skip this test point",
                literal(
                    f"Why is {point.label} not measured? The reason goes into the visit notes and the job card."
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
                self._message(literal(f"✗ notes not saved: {exc}"), "error")
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
                self._message(literal(result), "ok")

        self.app.push_screen(FinishScreen(self.bench, self.visit, self.profile, self.diagnosis), done)

    def write_job_card(self) -> None:
        from fieldkit.tui.screens.finish import JobCardDialog

        if self.visit is not None and self.profile is not None and self.diagnosis is not None:
            self.app.push_screen(
                JobCardDialog(self.visit, self.profile, self.diagnosis, self.bench.system),
                lambda r: self._message(literal(r), "ok") if r else None,
            )

    def reopen(self) -> None:
        try:
            self.bench.store.reopen_visit(self.visit_id)
        except FieldkitError as exc:
            self._message(literal(f"✗ {exc}"), "error")
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
                self._message(literal(message), "ok" if message.startswith("✓") else "error")

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
                self.query_one("#value", Input).value = ""
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
                    lambda pid=point.id: self.select_point(pid),
                )
        if self.diagnosis is not None:
            for f in self.diagnosis.faults[:8]:
                yield (
                    f"Why: {f.display_title}",
                    "findings for and against",
                    lambda key=f.key: self.open_fault(key),
                )


def import_readings_csv(bench: Workbench, visit_id: str, path: Path) -> str:
    """Import a CSV of readings into a visit (all rows or none); a sentence saying what happened."""
    from fieldkit.store.csv_import import kinds_by_test_point, read_readings_csv

    try:
        visit = bench.store.get_visit(visit_id)
        profile = bench.profile_for(visit)
        readings = read_readings_csv(
            path,
            test_points=kinds_by_test_point(profile),
            gauges={g.id for g in visit.gauges},
            decimal_comma=bench.settings.decimal_comma,
        )
        bench.store.add_readings(visit.id, readings)
    except FieldkitError as exc:
        return explain(exc, "✗ nothing imported")
    return f"✓ imported {len(readings)} readings from {path.name} into visit {visit.job_number}"
