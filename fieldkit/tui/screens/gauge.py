"""Add a gauge or meter to the visit: picked from the technician's kit, or typed in (and then
kept in the kit for the next visit)."""

from __future__ import annotations

import datetime as dt

from pydantic import ValidationError
from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.containers import Grid, Vertical
from textual.widgets import Button, Input, Label, Select, Static

from fieldkit.errors import FieldkitError
from fieldkit.model.gauge import EN837_CLASSES, Gauge
from fieldkit.model.kit import KitItem, calibration_warning
from fieldkit.tui import keys
from fieldkit.tui.error_text import explain
from fieldkit.tui.safe_text import literal
from fieldkit.tui.screens.dialogs import Dialog
from fieldkit.tui.widgets.keybar import KeyBar
from fieldkit.units import Kind, kind_of, parse_value

OTHER_STANDARD = "% of full scale (meter's own data)"


def build_gauge(
    gauge_id: str,
    full_scale: str,
    scale_start: str,
    accuracy: str,
    standard: str,
    label: str,
    decimal_comma: bool = False,
) -> Gauge:
    """A Gauge from the form's text, or a FieldkitError/ValidationError that says which field is wrong."""
    try:
        top = parse_value(full_scale, decimal_comma=decimal_comma).quantity
    except FieldkitError as exc:
        raise FieldkitError(f"full scale: {exc}") from None
    start = None
    if scale_start.strip():
        try:
            start = parse_value(scale_start, kind_of(top), decimal_comma=decimal_comma).quantity
        except FieldkitError as exc:
            raise FieldkitError(f"scale start: {exc}") from None
    try:
        cls = float(accuracy.strip().replace(",", "."))
    except ValueError:
        raise FieldkitError(
            f"accuracy class: '{accuracy}' is not a number (EN 837-1 classes: "
            f"{', '.join(f'{c:g}' for c in EN837_CLASSES)})"
        ) from None
    if kind_of(top) is not Kind.PRESSURE and standard == "EN 837-1":
        standard = OTHER_STANDARD
    return Gauge(
        id=gauge_id.strip(),
        label=label.strip(),
        full_scale=top,
        scale_start=start,
        accuracy_class=cls,
        standard=standard,
    )


class AddGaugeDialog(Dialog):
    BINDINGS = keys.ADD_GAUGE

    def __init__(
        self,
        taken: set[str],
        decimal_comma: bool = False,
        kit: list[KitItem] | None = None,
        on_day: dt.date | None = None,
    ) -> None:
        super().__init__()
        self._taken, self._decimal_comma = taken, decimal_comma
        self._kit = [k for k in kit or [] if k.id not in taken and not k.retired]
        self._day = on_day

    def _kit_label(self, item: KitItem) -> Text:
        overdue = self._day is not None and calibration_warning(item, self._day)
        text = f"{item.id}  {item.kind.label} {item.span_text()} class {item.accuracy_class:g}"
        if item.serial:
            text += f"  s/n {item.serial}"
        if overdue:
            text += "  calibration overdue"
        return Text(text, end="")

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label(Text("Add a gauge or meter", style="bold"), classes="dialog-title")
            with Grid(classes="form"):
                yield Label("From kit")
                yield Select(
                    [(self._kit_label(k), k.id) for k in self._kit],
                    prompt="type a new one below" if self._kit else "kit is empty: type one below",
                    id="g-kit",
                    compact=True,
                )
                yield Label("Id")
                yield Input(placeholder="e.g. G250", id="g-id", compact=True)
                yield Label("Full scale")
                yield Input(placeholder="e.g. 250 bar, 100 L/min", id="g-top", compact=True)
                yield Label("Scale start")
                yield Input(placeholder="empty for 0; -1 bar for compound", id="g-start", compact=True)
                yield Label("Class %")
                yield Input(value="1.6", placeholder="EN 837-1: 0.6 1 1.6 2.5", id="g-class", compact=True)
                yield Label("Standard")
                yield Select(
                    [(Text("EN 837-1 (pressure gauge)"), "EN 837-1"), (Text(OTHER_STANDARD), OTHER_STANDARD)],
                    value="EN 837-1",
                    allow_blank=False,
                    id="g-standard",
                    compact=True,
                )
                yield Label("Label")
                yield Input(placeholder="optional, e.g. 0-250 bar glycerine", id="g-label", compact=True)
            yield Static("", id="g-error", classes="inline-error")
            yield Button("Add (ctrl+s)", id="g-add", variant="primary")
        yield KeyBar()

    def on_mount(self) -> None:
        if self._kit:
            self.query_one("#g-kit", Select).focus()
        else:
            self.query_one("#g-id", Input).focus()

    @on(Input.Submitted)
    def _enter(self, event: Input.Submitted) -> None:
        event.stop()
        if event.input.id == "g-label":
            self.action_add()
        else:
            self.focus_next()

    @on(Button.Pressed, "#g-add")
    def _pressed(self) -> None:
        self.action_add()

    def action_add(self) -> None:
        picked = self.query_one("#g-kit", Select).value
        if isinstance(picked, str):
            item = next(k for k in self._kit if k.id == picked)
            self.dismiss(item.as_gauge())
            return
        value = {
            w: self.query_one(f"#{w}", Input).value
            for w in ("g-id", "g-top", "g-start", "g-class", "g-label")
        }
        standard = self.query_one("#g-standard", Select).value
        error = self.query_one("#g-error", Static)
        if value["g-id"].strip() in self._taken:
            error.update(literal(f"this visit already has a gauge '{value['g-id'].strip()}'"))
            return
        try:
            gauge = build_gauge(
                value["g-id"],
                value["g-top"],
                value["g-start"],
                value["g-class"],
                str(standard),
                value["g-label"],
                self._decimal_comma,
            )
        except (FieldkitError, ValidationError) as exc:
            error.update(literal(explain(exc)))
            return
        self.dismiss(gauge)
