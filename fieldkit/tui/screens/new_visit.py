"""Start a new visit: machine profile, job number, customer, hour meter, technician, oil.

Technician, customer and oil are remembered in Settings for the next visit. The gauges of the
last visit can be brought along: a technician carries the same case of gauges from job to job.
"""

from __future__ import annotations

from pydantic import ValidationError
from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.containers import Grid, Horizontal, Vertical
from textual.widgets import Button, Checkbox, Input, Label, Select, Static

from fieldkit.errors import FieldkitError
from fieldkit.model.gauge import Gauge
from fieldkit.model.visit import Visit
from fieldkit.session import Workbench
from fieldkit.tui import keys
from fieldkit.tui.error_text import explain
from fieldkit.tui.safe_text import literal
from fieldkit.tui.screens.base import FieldkitScreen
from fieldkit.tui.widgets.keybar import KeyBar

FIELDS = ("job", "customer", "site", "serial", "hours", "technician", "oil", "zone")


def last_gauges(bench: Workbench) -> list[Gauge]:
    """The gauges of the most recently changed visit that had any."""
    for s in sorted(bench.store.list_visits(), key=lambda s: s.updated_at, reverse=True):
        visit = bench.store.get_visit(s.id)
        if visit.gauges:
            return list(visit.gauges)
    return []


def parse_hours(text: str) -> float | None:
    text = text.strip().replace("\u202f", "").replace(" ", "")
    if not text:
        return None
    if text.count(",") == 1 and "." not in text and len(text.split(",")[1]) != 3:
        text = text.replace(",", ".")  # 8315,5 h
    text = text.replace(",", "").removesuffix("h")
    try:
        return float(text)
    except ValueError:
        raise FieldkitError(f"hour meter: '{text}' is not a number of hours") from None


class NewVisitScreen(FieldkitScreen):
    BINDINGS = keys.NEW_VISIT

    def __init__(self, bench: Workbench, machine: str | None = None) -> None:
        super().__init__()
        self.bench = bench
        self.machine = machine
        self.gauges = last_gauges(bench)

    def compose(self) -> ComposeResult:
        s = self.bench.settings
        profiles = [
            (literal(f"{self.bench.library.get(pid).name} ({pid})"), pid) for pid in self.bench.library.ids()
        ]
        yield Static(
            Text("New visit · Enter moves on · ctrl+s starts the visit · Esc cancels", style="bold", end=""),
            id="topbar",
        )
        with Vertical(id="new-visit-body"):
            with Grid(classes="form"):
                yield Label("Machine")
                yield Select(
                    profiles,
                    value=self.machine if self.machine else (profiles[0][1] if profiles else Select.NULL),
                    allow_blank=not profiles,
                    id="machine",
                    compact=True,
                )
                yield Label("Job number")
                yield Input(placeholder="required, e.g. RHS-25-0400", id="job", max_length=40, compact=True)
                yield Label("Customer")
                yield Input(s.customer, id="customer", max_length=200, compact=True)
                yield Label("Site")
                yield Input(id="site", max_length=200, compact=True)
                yield Label("Serial")
                yield Input(placeholder="machine serial number", id="serial", max_length=60, compact=True)
                yield Label("Hour meter")
                yield Input(placeholder="e.g. 8315", id="hours", max_length=20, compact=True)
                yield Label("Technician")
                yield Input(s.technician, id="technician", max_length=120, compact=True)
                yield Label("Oil")
                yield Input(s.oil, placeholder="e.g. VG46 mineral", id="oil", max_length=60, compact=True)
                yield Label("Time zone")
                yield Input(
                    s.time_zone,
                    placeholder="e.g. Europe/London (empty: UTC); the job card's times",
                    id="zone",
                    max_length=60,
                    compact=True,
                )
            yield Checkbox(
                self._gauge_label(bool(self.gauges)),
                value=bool(self.gauges),
                id="bring-gauges",
                disabled=not self.gauges,
            )
            yield Static("", id="new-error", classes="inline-error")
            with Horizontal(classes="dialog-buttons"):
                yield Button("Start visit (ctrl+s)", id="create", variant="primary")
                yield Button("Cancel (Esc)", id="cancel")
        yield KeyBar()

    def on_mount(self) -> None:
        self.query_one("#job", Input).focus()

    def _gauge_label(self, on: bool) -> Text:
        """The checkbox's state in words too: its mark differs only in colour."""
        if not self.gauges:
            return Text("No earlier visit has gauges: add them in the visit with ^g")
        ids = ", ".join(g.id for g in self.gauges)
        return literal(
            f"{'YES' if on else 'NO'}: bring the {len(self.gauges)} gauges of the last visit ({ids})"
        )

    @on(Checkbox.Changed, "#bring-gauges")
    def _gauges_toggled(self, event: Checkbox.Changed) -> None:
        event.checkbox.label = self._gauge_label(event.value)

    @on(Input.Submitted)
    def _enter(self, event: Input.Submitted) -> None:
        event.stop()
        if event.input.id == "zone":
            self.action_create()
        else:
            self.focus_next()

    @on(Button.Pressed, "#create")
    def _create_pressed(self) -> None:
        self.action_create()

    @on(Button.Pressed, "#cancel")
    def _cancel_pressed(self) -> None:
        self.action_cancel()

    def action_cancel(self) -> None:
        self.dismiss(None)

    def action_create(self) -> None:
        values = {f: self.query_one(f"#{f}", Input).value.strip() for f in FIELDS}
        machine = self.query_one("#machine", Select).value
        error = self.query_one("#new-error", Static)
        if not isinstance(machine, str):
            error.update("✗ choose a machine profile")
            return
        if not values["job"]:
            error.update("✗ a job number is needed (it names the job card)")
            self.query_one("#job", Input).focus()
            return
        try:
            hours = parse_hours(values["hours"])
            gauges = self.gauges if self.query_one("#bring-gauges", Checkbox).value else []
            visit = Visit(
                job_number=values["job"],
                customer=values["customer"],
                site=values["site"],
                machine=machine,
                machine_serial=values["serial"],
                hour_meter=hours,
                technician=values["technician"],
                oil=values["oil"],
                time_zone=values["zone"],
                gauges=gauges,
            )
            stored = self.bench.store.create_visit(visit)
        except (FieldkitError, ValidationError) as exc:
            error.update(literal(explain(exc, "✗ not started")))
            return
        self._remember(values)
        self.dismiss(stored.id)

    def _remember(self, values: dict[str, str]) -> None:
        """Keep technician, customer and oil for the next visit; a settings file that cannot be
        written only costs the defaults, never the visit."""
        settings = self.bench.settings.model_copy(
            update={
                "technician": values["technician"],
                "customer": values["customer"],
                "oil": values["oil"],
                "time_zone": values["zone"],
            }
        )
        self.bench.settings = settings
        try:
            settings.save()
        except OSError as exc:
            self.app.notify(f"defaults not remembered: {exc}", severity="warning", markup=False)
