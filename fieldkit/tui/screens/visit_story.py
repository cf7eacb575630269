"""The visit screen's complaint and observation commands (F4, F5), kept out of the entry screen.

Each function takes the visit screen; the screen's actions are one-line calls to these."""

from __future__ import annotations

from typing import Any

from fieldkit.errors import FieldkitError


def open_complaint(screen: Any) -> None:
    from fieldkit.tui.screens.complaint import ComplaintDialog

    if screen.visit is None:
        return
    if screen.closed:
        screen._message("This visit is closed; reopen it to change the complaint.", "error")
        return

    def saved(result: tuple[str, list[str]] | None) -> None:
        if result is None:
            return
        text, symptoms = result
        try:
            screen.bench.set_complaint(screen.visit_id, text, symptoms)
        except FieldkitError as exc:
            screen._message(f"✗ {exc}", "error")
            return
        screen.reload()
        screen._message(f"✓ complaint saved with {len(symptoms)} symptom(s); the ranking counts them", "ok")

    visit = screen.visit
    screen.app.push_screen(ComplaintDialog(screen.bench.evidence, visit.complaint, visit.symptoms), saved)


def open_observations(screen: Any) -> None:
    from fieldkit.diagnosis.evidence import checks_for_role
    from fieldkit.tui.screens.observe import ObserveDialog

    if screen.visit is None:
        return
    if screen.closed:
        screen._message("This visit is closed; reopen it to add what you saw.", "error")
        return
    _circuit, point, _plan = screen.current()
    checks = checks_for_role(screen.bench.evidence, point.role)
    if not checks:
        screen._message(f"No yes/no checks belong to the test at {point.label}.", "info")
        return
    given = {o.check: o.answer for o in screen.visit.observations if o.circuit == _circuit.id}

    def answered(answers: list[tuple[str, str]] | None) -> None:
        if not answers:
            return
        try:
            for check_id, answer in answers:
                screen.bench.observe(screen.visit_id, check_id, answer, test_point=point.id)
        except FieldkitError as exc:
            screen._message(f"✗ {exc}", "error")
            return
        screen.reload()
        screen._message(f"✓ {len(answers)} observation(s) saved; the ranking counts them", "ok")

    screen.app.push_screen(ObserveDialog(point.label, checks, given), answered)


REPAIR_CHOICES = ("work", "retest", "status")


def open_repair(screen: Any) -> None:
    """F6: record work done, switch re-test mode, or set the machine's status."""
    from rich.text import Text

    from fieldkit.tui.screens.dialogs import ChoiceDialog

    if screen.visit is None:
        return
    if screen.closed:
        screen._message("This visit is closed; reopen it to record the repair.", "error")
        return
    retest = screen.entry.retest
    labels = [
        Text("Record work done (a part fitted, a valve adjusted)"),
        Text(
            "Re-test mode: OFF → readings now count as after the repair"
            if not retest
            else "Re-test mode: ON → back to diagnosis readings"
        ),
        Text("The machine's status as you leave it"),
    ]

    def chosen(index: int | None) -> None:
        if index is None:
            return
        what = REPAIR_CHOICES[index]
        if what == "work":
            _record_work(screen)
        elif what == "retest":
            set_retest(screen, not retest)
        else:
            _record_status(screen)

    screen.app.push_screen(ChoiceDialog("Repair and re-test", Text("What now?"), labels), chosen)


def set_retest(screen: Any, on: bool) -> None:
    """Re-test mode: the entry row saves after-repair readings, and says so where the value is typed."""
    from textual.widgets import Input

    screen.entry.retest = on
    screen.add_class("-retest") if on else screen.remove_class("-retest")
    screen.query_one("#value", Input).placeholder = (
        "AFTER REPAIR: value, e.g. 24,5 bar" if on else "value, e.g. 24,5 bar"
    )
    screen._message(
        "Re-test mode ON: readings are saved as after the repair and shown before/after on the card."
        if on
        else "Re-test mode OFF: readings are diagnosis readings again.",
        "info",
    )


def _record_work(screen: Any) -> None:
    from fieldkit.tui.screens.repair import WorkDialog

    def saved(work: Any) -> None:
        if work is None:
            return
        try:
            screen.bench.add_work(screen.visit_id, work)
        except FieldkitError as exc:
            screen._message(f"✗ {exc}", "error")
            return
        screen.reload()
        screen._message(
            f"✓ work recorded: {work.describe()}. F6 → re-test mode to read the points again.", "ok"
        )

    screen.app.push_screen(WorkDialog(screen.bench.settings.decimal_comma), saved)


def _record_status(screen: Any) -> None:
    from fieldkit.diagnosis.retest import open_dangers
    from fieldkit.tui.screens.repair import StatusDialog

    dangers = [f.title for f in open_dangers(screen.visit, screen.profile, screen.bench.knowledge)]

    def saved(departure: Any) -> None:
        if departure is None:
            return
        try:
            screen.bench.set_departure(screen.visit_id, departure)
        except FieldkitError as exc:
            screen._message(f"✗ {exc}", "error")
            return
        screen.reload()
        screen._message(f"✓ status: {departure.status.label}", "ok")

    screen.app.push_screen(StatusDialog(screen.visit.departure, dangers), saved)
