"""Every reading entered at one test point, including the ones corrected or deleted.

Nothing is overwritten: a correction is a new reading that replaces the old one
(store.correct_reading) and a deletion only marks the reading (store.delete_reading); this
screen shows the whole trail so the job card and the technician agree on what happened.

It also serves a point the machine's profile no longer has (the profile was edited after the
visit): its readings cannot be corrected in place, since a correction stays at its point, so
``e`` moves one to a point of the plan (a new reading there, the old one deleted, the reason kept
with both) and ``x`` deletes it.
"""

from __future__ import annotations

from collections.abc import Callable

from rich.text import Text
from textual.app import ComposeResult
from textual.widgets import DataTable, Static

from fieldkit.errors import AmbiguousInputError, FieldkitError
from fieldkit.model.profile import MachineProfile, TestPoint
from fieldkit.model.visit import Reading
from fieldkit.session import Workbench
from fieldkit.tui import keys
from fieldkit.tui.safe_text import literal
from fieldkit.tui.screens.base import FieldkitScreen
from fieldkit.tui.screens.dialogs import ChoiceDialog, ConfirmDialog, LinePrompt
from fieldkit.tui.widgets.keybar import KeyBar
from fieldkit.units import format_value, kind_of


def reading_status(
    r: Reading, readings: list[Reading], point: TestPoint | None = None, *, in_plan: bool = True
) -> str:
    """'stands', 'corrected by …' or 'deleted …'; a standing reading the diagnosis cannot use
    (stored by an earlier version: unreadable, of the wrong kind, or at a point the profile no
    longer has) says so, to be put right."""
    newer = next((x for x in readings if x.replaces == r.id), None)
    if r.deleted_at is not None:
        return f"deleted {r.deleted_at:%Y-%m-%d %H:%M}"
    if newer is not None:
        return f"corrected by {newer.id}"
    if r.unreadable:
        return "stands, unreadable: skipped"
    if not in_plan:
        return "stands, not in the plan: skipped"
    if point is not None and kind_of(r.value) is not point.kind:
        return f"stands, a {kind_of(r.value).value}: skipped"
    return "stands" + (f" (corrects {r.replaces})" if r.replaces else "")


def shown_value(r: Reading, bench: Workbench) -> str:
    """The value in the display units, or a dash for a stored value that could not be read."""
    if r.unreadable:
        return "—"
    try:
        return format_value(r.value, bench.system)
    except FieldkitError:
        return r.entered or "—"


class ReadingsScreen(FieldkitScreen):
    BINDINGS = keys.READINGS

    def __init__(
        self,
        bench: Workbench,
        visit_id: str,
        point: TestPoint | None,
        *,
        point_id: str = "",
        profile: MachineProfile | None = None,
    ) -> None:
        """``point`` is a point of the plan; for one the profile no longer has, ``point`` is None,
        ``point_id`` names it and ``profile`` offers the points a reading can be moved to."""
        super().__init__()
        if point is None and (not point_id or profile is None):
            raise ValueError("a point outside the plan needs its id and the machine's profile")
        self.bench, self.visit_id, self.point = bench, visit_id, point
        self.point_id = point.id if point is not None else point_id
        self.profile = profile
        self.readings: list[Reading] = []

    def compose(self) -> ComposeResult:
        title = Text(end="", no_wrap=True, overflow="ellipsis")
        title.append("Readings at ", "bold")
        if self.point is not None:
            title.append_text(literal(self.point.label, "bold"))
            title.append(" · e corrects · x deletes · the trail is kept")
        else:
            title.append_text(literal(self.point_id, "bold"))
            title.append(" (not in this machine's plan) · e moves to a plan point · x deletes")
        yield Static(title, id="topbar")
        yield DataTable(id="trail", cursor_type="row", zebra_stripes=True)
        yield Static("", id="trail-msg")
        yield KeyBar()

    def on_mount(self) -> None:
        self.refresh_table()
        self.query_one("#trail", DataTable).focus()

    def refresh_table(self) -> None:
        self.readings = self.bench.store.reading_history(self.visit_id, self.point_id)
        table = self.query_one("#trail", DataTable)
        table.clear(columns=True)
        table.add_columns("id", "status", "entered", "value", "condition", "gauge", "taken (UTC)")
        for r in self.readings:
            table.add_row(
                literal(r.id),
                literal(self._status(r)),
                literal(r.entered),
                literal(shown_value(r, self.bench)),
                literal(r.condition.describe()),
                literal(r.gauge or "—"),
                Text(f"{r.taken_at:%Y-%m-%d %H:%M}"),
                key=r.id,
            )
        if not self.readings:
            self._say("No readings at this point yet.")

    def _status(self, r: Reading) -> str:
        return reading_status(r, self.readings, self.point, in_plan=self.point is not None)

    def _say(self, message: str) -> None:
        self.query_one("#trail-msg", Static).update(literal(message))

    def _selected(self) -> Reading | None:
        table = self.query_one("#trail", DataTable)
        if not self.readings or table.cursor_row is None or table.cursor_row >= len(self.readings):
            return None
        return self.readings[table.cursor_row]

    def _value_check(self, point: TestPoint) -> Callable[[str], str]:
        """The live check of a corrected or moved value: what the point's own entry box would say."""

        def check(text: str) -> str:
            try:
                self.bench.parse_for_point(point, text)
            except AmbiguousInputError as exc:
                return f"{exc} Type it without the separator (e.g. 2500 or 2.5)."
            except FieldkitError as exc:
                return str(exc)
            return ""

        return check

    def _standing(self) -> Reading | None:
        r = self._selected()
        if r is None:
            self._say("Choose a reading first.")
            return None
        status = self._status(r)
        if not status.startswith("stands"):
            self._say(f"Reading {r.id} is {status}; only a standing reading can be changed.")
            return None
        return r

    def action_correct(self) -> None:

        old = self._standing()
        if old is None:
            return
        if self.point is None:
            self._move(old)
            return
        point = self.point
        check = self._value_check(point)

        def corrected(text: str | None) -> None:
            if text is None:
                return

            def because(reason: str | None) -> None:
                if reason is None:
                    self._say("Not corrected: a correction needs its reason.")
                    return
                try:
                    new = self.bench.record(
                        self.visit_id,
                        point.id,
                        text,
                        old.condition,
                        gauge=old.gauge,
                        note=old.note,
                        replaces=old.id,
                        after_repair=old.after_repair,
                        reason=reason.strip(),
                    )
                except FieldkitError as exc:
                    self._say(f"✗ {exc} (nothing saved)")
                    return
                self.refresh_table()
                self._say(
                    f"✓ {old.entered} corrected to {new.entered}; "
                    "the old value and the reason stay in the trail"
                )

            self.app.push_screen(
                LinePrompt(
                    "Why is it corrected?",
                    "The reason is kept with the corrected value (e.g. misread the inner scale).",
                    placeholder="reason",
                    check=lambda t: "" if t.strip() else "type the reason for the correction",
                ),
                because,
            )

        self.app.push_screen(
            LinePrompt(
                "Correct a reading",
                literal(
                    f"Reading {old.id} was entered as {old.entered!r} ({old.condition.describe()}). The "
                    "corrected value:"
                ),
                value=old.entered,
                check=check,
            ),
            corrected,
        )

    def _move(self, old: Reading) -> None:
        """A reading at a point the profile no longer has, to the point it belongs to: the
        technician picks the point (of the reading's kind, when its value can be read), confirms
        the value and gives the reason; the value is saved there and the old reading deleted,
        each naming the other."""
        assert self.profile is not None
        kind = None if old.unreadable else kind_of(old.value)
        targets = [tp for _c, tp in self.profile.all_test_points() if kind is None or tp.kind is kind]
        if not targets:
            self._say(
                f"This machine has no {kind.value if kind else ''} test point to move it to; delete it."
            )
            return

        def chosen(index: int | None) -> None:
            if index is None:
                return
            target = targets[index]
            check = self._value_check(target)

            def valued(text: str | None) -> None:
                if text is not None:
                    self.app.push_screen(self._reason_prompt("moved"), lambda why: moved(text, why))

            def moved(text: str, reason: str | None) -> None:
                if reason is None:
                    self._say("Not moved: a move needs its reason.")
                    return
                why = " ".join(reason.split())
                try:
                    new = self.bench.record(
                        self.visit_id,
                        target.id,
                        text,
                        old.condition,
                        gauge=old.gauge,
                        note=old.note,
                        after_repair=old.after_repair,
                        reason=f"moved from {old.test_point} (reading {old.id}): {why}",
                    )
                except FieldkitError as exc:
                    self._say(f"✗ {exc} (nothing saved, nothing deleted)")
                    return
                try:
                    self.bench.store.delete_reading(
                        self.visit_id, old.id, reason=f"moved to {target.id} as reading {new.id}: {why}"
                    )
                except FieldkitError as exc:
                    self._say(f"✗ saved at {target.label} as {new.id}, but {old.id} is not deleted: {exc}")
                    self.refresh_table()
                    return
                self.refresh_table()
                self._say(
                    f"✓ {old.entered} moved to {target.label} as reading {new.id}; the trail keeps both"
                )

            self.app.push_screen(
                LinePrompt(
                    "The value at the new point",
                    literal(f"Reading {old.id} was entered as {old.entered!r}. Its value at {target.label}:"),
                    value=old.entered,
                    check=check,
                ),
                valued,
            )

        self.app.push_screen(
            ChoiceDialog(
                "Move to which test point?",
                literal(
                    f"{old.entered} ({old.condition.describe()}) was read at {old.test_point}, which this "
                    "machine's plan no longer has. Where was it read?"
                ),
                [literal(f"{tp.label} ({tp.id})") for tp in targets],
            ),
            chosen,
        )

    def _reason_prompt(self, done: str) -> LinePrompt:
        return LinePrompt(
            f"Why is it {done}?",
            "The reason is kept with both readings (e.g. the point was renamed in the profile).",
            placeholder="reason",
            check=lambda t: "" if t.strip() else f"type the reason it is {done}",
        )

    def action_delete(self) -> None:

        r = self._standing()
        if r is None:
            return

        def because(reason: str | None) -> None:
            if reason is None:
                self._say("Not deleted: a deletion needs its reason.")
                return
            try:
                self.bench.store.delete_reading(self.visit_id, r.id, reason=reason.strip())
            except FieldkitError as exc:
                self._say(f"✗ {exc}")
                return
            self.refresh_table()
            self._say(f"Reading {r.id} marked deleted; it stays in the trail, the reason in the visit notes.")

        def confirmed(yes: bool | None) -> None:
            if not yes:
                return
            self.app.push_screen(
                LinePrompt(
                    "Why is it deleted?",
                    "The reason is kept in the visit's notes (e.g. gauge not yet connected).",
                    placeholder="reason",
                    check=lambda t: "" if t.strip() else "type the reason for the deletion",
                ),
                because,
            )

        self.app.push_screen(
            ConfirmDialog(
                "Delete this reading?",
                literal(
                    f"{r.entered} ({r.condition.describe()}) will no longer count. It stays in the record "
                    "as deleted."
                ),
                yes="Delete",
                no="Keep",
            ),
            confirmed,
        )

    def action_cancel(self) -> None:
        self.dismiss(None)
