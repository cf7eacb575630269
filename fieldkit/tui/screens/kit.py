"""The technician's instrument kit (k on the start screen): every gauge and meter with its span,
class, serial and calibration date; add, edit and retire from the keyboard.

Retiring never deletes: the item stays in the kit's record and on every visit that used it (each
visit keeps its own copy), it is only no longer offered for new readings."""

from __future__ import annotations

import datetime as dt

from pydantic import ValidationError
from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.containers import Grid, Vertical
from textual.widgets import Button, Input, Label, OptionList, Select, Static
from textual.widgets.option_list import Option

from fieldkit.errors import FieldkitError
from fieldkit.model.gauge import EN837_CLASSES
from fieldkit.model.kit import InstrumentKind, KitItem, calibration_warning, parse_span
from fieldkit.session import Workbench
from fieldkit.tui import keys
from fieldkit.tui.error_text import explain
from fieldkit.tui.safe_text import literal
from fieldkit.tui.screens.base import FieldkitScreen
from fieldkit.tui.screens.dialogs import ConfirmDialog, Dialog
from fieldkit.tui.widgets.keybar import KeyBar
from fieldkit.units import format_value


def kit_line(item: KitItem, today: dt.date) -> Text:
    """One instrument in a line: the words carry the state (no colour needed)."""
    due = item.calibration_due.isoformat() if item.calibration_due else "no date"
    out = Text(end="", no_wrap=True, overflow="ellipsis")
    out.append(f"{item.id:<7}", "bold")
    out.append(f"{item.span_text():<17} cl {item.accuracy_class:<4g}")
    out.append(f"s/n {item.serial or '—':<11} due {due}")
    if item.retired_on is not None:
        out.append(f"  RETIRED {item.retired_on.isoformat()}", "dim")
    elif calibration_warning(item, today):
        out.append("  OVERDUE", "bold reverse")
    return out


def item_from_form(
    item_id: str, kind: str, span: str, accuracy: str, serial: str, due: str, label: str, comma: bool = False
) -> KitItem:
    """A KitItem from the form's text; each mistake names its field."""
    try:
        start, top = parse_span(span, comma)
    except FieldkitError as exc:
        raise FieldkitError(f"span: {exc}") from None
    try:
        cls = float(accuracy.strip().replace(",", "."))
    except ValueError:
        raise FieldkitError(
            f"class: '{accuracy}' is not a number (EN 837-1 classes: "
            f"{', '.join(f'{c:g}' for c in EN837_CLASSES)})"
        ) from None
    due_date = None
    if due.strip():
        try:
            due_date = dt.date.fromisoformat(due.strip())
        except ValueError:
            raise FieldkitError(f"calibration due: '{due}' is not a date; write it as 2027-03-31") from None
    standard = (
        "EN 837-1" if kind == InstrumentKind.PRESSURE_GAUGE.value else "% of span (instrument's own data)"
    )
    return KitItem(
        id=item_id.strip(),
        kind=InstrumentKind(kind),
        label=label.strip(),
        full_scale=top,
        scale_start=start,
        accuracy_class=cls,
        standard=standard,
        serial=serial.strip(),
        calibration_due=due_date,
    )


class KitItemDialog(Dialog):
    """Add an instrument (``current`` None) or edit one; dismisses with a KitItem or None."""

    BINDINGS = keys.COMPLAINT  # ctrl+s saves, Esc cancels

    def __init__(self, current: KitItem | None, taken: set[str], comma: bool = False) -> None:
        super().__init__()
        self._current, self._taken, self._comma = current, taken, comma

    def compose(self) -> ComposeResult:
        cur = self._current
        span = ""
        if cur is not None:  # as the form reads it back: '0..60 bar' style, or the top alone
            top = format_value(cur.full_scale)
            span = top if cur.scale_start is None else f"{format_value(cur.scale_start).split()[0]}..{top}"
        with Vertical(classes="dialog"):
            title = "Add an instrument" if cur is None else f"Edit {cur.id}"
            yield Label(literal(title, "bold"), classes="dialog-title")
            with Grid(classes="form"):
                yield Label("Id")
                yield Input(
                    cur.id if cur else "",
                    placeholder="e.g. G60",
                    id="k-id",
                    compact=True,
                    disabled=cur is not None,
                )
                yield Label("Kind")
                yield Select(
                    [(Text(k.label), k.value) for k in InstrumentKind],
                    value=cur.kind.value if cur else InstrumentKind.PRESSURE_GAUGE.value,
                    allow_blank=False,
                    id="k-kind",
                    compact=True,
                )
                yield Label("Span")
                yield Input(
                    span, placeholder="0..60 bar, -1..15 bar, 0..150 L/min", id="k-span", compact=True
                )
                yield Label("Class %")
                yield Input(f"{cur.accuracy_class:g}" if cur else "1", id="k-class", compact=True)
                yield Label("Serial")
                yield Input(cur.serial if cur else "", id="k-serial", compact=True)
                yield Label("Cal. due")
                yield Input(
                    cur.calibration_due.isoformat() if cur and cur.calibration_due else "",
                    placeholder="e.g. 2027-03-31",
                    id="k-due",
                    compact=True,
                )
                yield Label("Label")
                yield Input(cur.label if cur else "", placeholder="optional", id="k-label", compact=True)
            yield Static("", id="k-error", classes="inline-error")
            yield Button("Save (ctrl+s)", id="k-save", variant="primary")
        yield KeyBar()

    def on_mount(self) -> None:
        self.query_one("#k-span" if self._current else "#k-id", Input).focus()

    @on(Input.Submitted)
    def _enter(self, event: Input.Submitted) -> None:
        event.stop()
        if event.input.id == "k-label":
            self.action_save()
        else:
            self.focus_next()

    @on(Button.Pressed, "#k-save")
    def _pressed(self) -> None:
        self.action_save()

    def action_save(self) -> None:
        value = {
            w: self.query_one(f"#{w}", Input).value
            for w in ("k-id", "k-span", "k-class", "k-serial", "k-due", "k-label")
        }
        error = self.query_one("#k-error", Static)
        if self._current is None and value["k-id"].strip() in self._taken:
            error.update(
                literal(f"the kit already has '{value['k-id'].strip()}' (retired ones keep their id)")
            )
            return
        try:
            item = item_from_form(
                value["k-id"],
                str(self.query_one("#k-kind", Select).value),
                value["k-span"],
                value["k-class"],
                value["k-serial"],
                value["k-due"],
                value["k-label"],
                self._comma,
            )
        except (FieldkitError, ValidationError) as exc:
            error.update(literal(explain(exc)))
            return
        self.dismiss(item)


class KitScreen(FieldkitScreen):
    """The kit, retired instruments included (marked), one line each."""

    BINDINGS = keys.KIT

    def __init__(self, bench: Workbench) -> None:
        super().__init__()
        self.bench = bench
        self.today = dt.datetime.now(dt.UTC).date()

    def compose(self) -> ComposeResult:
        yield Static(
            Text("Your instrument kit · a add · e edit · x retire · Esc back", style="bold", end=""),
            id="topbar",
        )
        yield OptionList(id="kit-list")
        yield Static("", id="kit-msg")
        yield KeyBar()

    def on_mount(self) -> None:
        self._fill()
        self.query_one("#kit-list", OptionList).focus()

    def _items(self) -> list[KitItem]:
        return self.bench.store.kit(include_retired=True)

    def _fill(self, keep: str | None = None) -> None:
        box = self.query_one("#kit-list", OptionList)
        box.clear_options()
        items = self._items()
        box.add_options([Option(kit_line(i, self.today), id=i.id) for i in items])
        if not items:
            self._say("The kit is empty: a adds an instrument.")
        ids = [i.id for i in items]
        if keep in ids:
            box.highlighted = ids.index(keep)

    def _say(self, text: str) -> None:
        self.query_one("#kit-msg", Static).update(literal(text))

    def _selected(self) -> KitItem | None:
        box = self.query_one("#kit-list", OptionList)
        if box.highlighted is None:
            return None
        item_id = box.get_option_at_index(box.highlighted).id
        return next((i for i in self._items() if i.id == item_id), None)

    def action_add_item(self) -> None:
        def saved(item: KitItem | None) -> None:
            if item is None:
                return
            try:
                self.bench.store.add_kit_item(item)
            except FieldkitError as exc:
                self._say(f"✗ not added: {exc}")
                return
            self._fill(item.id)
            self._say(f"✓ {item.id} added to the kit")

        taken = {i.id for i in self._items()}
        self.app.push_screen(KitItemDialog(None, taken, self.bench.settings.decimal_comma), saved)

    def action_edit_item(self) -> None:
        current = self._selected()
        if current is None:
            self._say("Choose an instrument first (↑ ↓).")
            return
        if current.retired:
            self._say(f"{current.id} is retired; old visits keep it as it was.")
            return

        def saved(item: KitItem | None) -> None:
            if item is None:
                return
            fields = item.model_dump(exclude={"id", "retired_on"})
            try:
                self.bench.store.edit_kit_item(current.id, **fields)
            except FieldkitError as exc:
                self._say(f"✗ not changed: {exc}")
                return
            self._fill(current.id)
            self._say(f"✓ {current.id} changed; visits that used it keep their copy")

        self.app.push_screen(KitItemDialog(current, set(), self.bench.settings.decimal_comma), saved)

    def action_retire_item(self) -> None:
        current = self._selected()
        if current is None or current.retired:
            self._say("Choose an instrument in service first (↑ ↓).")
            return

        def answer(yes: bool | None) -> None:
            if not yes:
                return
            try:
                self.bench.store.retire_kit_item(current.id)
            except FieldkitError as exc:
                self._say(f"✗ {exc}")
                return
            self._fill(current.id)
            self._say(f"✓ {current.id} retired; the visits that used it still show it")

        self.app.push_screen(
            ConfirmDialog(
                "Retire this instrument?",
                literal(f"Retire {current.id}? It is no longer offered for readings; old visits keep it."),
            ),
            answer,
        )

    def action_back(self) -> None:
        self.app.pop_screen()
