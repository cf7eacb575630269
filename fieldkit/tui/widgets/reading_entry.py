"""The entry rows of the visit screen: the value as the gauge shows it, the gauge, the machine
state, engine speed and oil temperature, and the line under them that says what Enter will save.

The widget parses as the technician types and saves on Enter (Workbench.record commits before it
returns), then posts :class:`ReadingEntry.Saved`; the screen diagnoses again and redraws. Its
``point`` and ``closed`` are reactive: choosing another point or closing the visit is all the
screen has to say.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.containers import Horizontal, Vertical
from textual.message import Message
from textual.reactive import reactive
from textual.widgets import Input, Select

from fieldkit.errors import AmbiguousInputError, ConfirmValueError, FieldkitError
from fieldkit.model.condition import Condition, ConditionSource, FunctionState
from fieldkit.model.example import example_text
from fieldkit.model.gauge import Gauge
from fieldkit.model.profile import MachineProfile, TestPoint
from fieldkit.model.roles import Role
from fieldkit.model.visit import Reading, Visit
from fieldkit.session import Workbench
from fieldkit.tui.guard import guarded
from fieldkit.tui.safe_text import literal
from fieldkit.tui.step import SHORT_STATE, last_condition_values, suggest_gauge
from fieldkit.tui.widgets.drawn import DrawnBlock
from fieldkit.units import Kind, ParsedValue, format_value, parse_value

_BARE_NUMBER = re.compile(r"^\s*[+\-]?\d[\d.,]*\s*$")
VALUE_HINT = "type the value as the gauge shows it (e.g. 24,5 bar · 3,500 psi · 0.75 bar abs); Enter saves it"
MOODS = ("ok", "error", "info", "ask")
FIELDS = ("#value", "#gauge", "#function", "#speed", "#oil")


def message_text(text: str) -> Text:
    return literal(text)


def gauge_label(g: Gauge) -> str:
    return f"{g.id} {g.span_text()} cl {g.accuracy_class:g}"


class ReadingEntry(Vertical):
    """Value, gauge and condition for the selected point; Enter in any field saves the reading."""

    @dataclass
    class Saved(Message):
        """A reading is in the store."""

        reading: Reading
        point: TestPoint

    @dataclass
    class Ambiguous(Message):
        """The typed value reads two ways (``2,500``): the screen asks which, then calls
        :meth:`ReadingEntry.save_choice`."""

        error: AmbiguousInputError
        point: TestPoint
        condition: Condition
        gauge: Gauge | None

    @dataclass
    class Confirm(Message):
        """A possible but unlikely value (past the gauge, above the point's rating): the screen
        asks, then calls :meth:`ReadingEntry.save_confirmed`."""

        error: ConfirmValueError
        point: TestPoint
        condition: Condition
        gauge: Gauge | None

    @dataclass
    class Danger(Message):
        """The typed value calls for a danger caution at once (``over-pressure``), or no longer
        does (``caution`` is "")."""

        caution: str

    @dataclass
    class ConditionChanged(Message):
        """The machine state or the gauge was changed: the step's advice may differ."""

    #: The test point a value is typed for.
    point: reactive[TestPoint | None] = reactive(None, init=False)
    #: A closed visit takes no readings: the fields are disabled.
    closed: reactive[bool] = reactive(False, init=False)
    #: Re-test mode (F6): readings saved now are after-repair readings.
    retest: bool = False

    def __init__(self, bench: Workbench, visit_id: str, *, id: str | None = None) -> None:
        super().__init__(id=id)
        self.bench = bench
        self.visit_id = visit_id
        #: The visit as last read from the store (its gauges), set by the screen.
        self.visit: Visit | None = None
        self._keep_message = False  # a 'saved' line stays until the next keystroke
        self._danger = ""  # the danger caution the typed value raised
        #: Where the text now in the speed and oil fields came from, and that text: a value the
        #: program filled in (a reading's) or typed for an earlier reading is an assumption.
        self._sources: dict[str, ConditionSource] = {}
        self._filled: dict[str, str] = {}

    def compose(self) -> ComposeResult:
        with Horizontal(classes="entry-row"):
            yield Input(placeholder="value, e.g. 24,5 bar", id="value", compact=True, max_length=64)
            yield Select([], prompt="no gauge", id="gauge", compact=True)
        with Horizontal(classes="entry-row"):
            yield Select(
                [(Text(SHORT_STATE[s]), s) for s in FunctionState],
                allow_blank=False,
                value=FunctionState.NEUTRAL,
                id="function",
                compact=True,
            )
            yield Input(placeholder="rpm not read", id="speed", compact=True, max_length=32)
            yield Input(placeholder="°C not read", id="oil", compact=True, max_length=32)
        yield DrawnBlock(message_text, id="parse-msg")

    def on_mount(self) -> None:
        self.say(self.value_hint(), "info")

    # --- reactive state -----------------------------------------------------------------------
    def watch_point(self, old: TestPoint | None, point: TestPoint | None) -> None:
        value = self.query_one("#value", Input)
        if old is not None and point is not None and old.id != point.id and value.value.strip():
            # A value typed for one point must never be saved at another: it goes, and says so.
            dropped = value.value.strip()
            value.value = ""
            value.remove_class("-bad")
            self._raise_danger("")
            self.say(
                f"'{dropped}' typed at {old.label} was not saved; it was cleared on moving, "
                f"so it cannot be saved at {point.label}",
                "info",
                keep=True,
            )
        self._show_example()
        self.update_message()

    def _show_example(self) -> None:
        """The entry box's example comes from the point's own range in the state set (item 9)."""
        if self.point is not None:
            self.query_one("#value", Input).placeholder = f"e.g. {example_text(self.point, self.function)}"

    def value_hint(self) -> str:
        """What to type here, with this point's own example."""
        if self.point is None:
            return VALUE_HINT
        example = example_text(self.point, self.function)
        return f"type the value as the gauge shows it, e.g. {example}; Enter saves it"

    def watch_closed(self, closed: bool) -> None:
        for wid in FIELDS:
            self.query_one(wid).disabled = closed
        if closed:
            self.say(
                "This visit is closed. Find (F3) → 'Reopen this visit' to add readings, "
                "or 'Write the job card' to print it again.",
                "info",
            )

    # --- what is set --------------------------------------------------------------------------
    @property
    def function(self) -> FunctionState:
        value = self.query_one("#function", Select).value
        return value if isinstance(value, FunctionState) else FunctionState.NEUTRAL

    @function.setter
    def function(self, state: FunctionState) -> None:
        self.query_one("#function", Select).value = state

    @property
    def gauge(self) -> Gauge | None:
        value = self.query_one("#gauge", Select).value
        return self.visit.gauge(value) if isinstance(value, str) and self.visit is not None else None

    def offer_gauges(self, point: TestPoint, function: FunctionState, choose: str | None = None) -> None:
        """The visit's gauges that read this point's kind, the best suited one chosen (or ``choose``)."""
        assert self.visit is not None
        fitting = [g for g in self.visit.gauges if g.kind is point.kind]
        select = self.query_one("#gauge", Select)
        select.set_options([(Text(gauge_label(g), end=""), g.id) for g in fitting])
        best = suggest_gauge(point, self.visit.gauges, function, self.bench.system)
        if choose is not None and any(g.id == choose for g in fitting):
            select.value = choose
        elif best is not None:
            select.value = best.id
        else:  # no gauge of the visit can show what this point reads: none is pretended to
            select.clear()

    def fill_condition_defaults(self, profile: MachineProfile, *, force: bool = False) -> None:
        """Speed and oil temperature from the visit's latest speed and oil temperature readings,
        where the fields are empty (or always); nothing ("not measured") where there is none."""
        assert self.visit is not None
        speed, oil = last_condition_values(self.visit, profile)
        speed_in, oil_in = self.query_one("#speed", Input), self.query_one("#oil", Input)
        if speed is not None and (force or not speed_in.value.strip()):
            self._set_condition_field(
                "#speed", format_value(speed, self.bench.system), ConditionSource.READING
            )
        if oil is not None and (force or not oil_in.value.strip()):
            self._set_condition_field("#oil", format_value(oil, self.bench.system), ConditionSource.READING)
        speed_in.placeholder = "rpm not read"
        oil_in.placeholder = f"{self.bench.system.temperature} not read"

    def _set_condition_field(self, field: str, text: str, source: ConditionSource) -> None:
        """Fill a condition field from the program (not typed): remember where the value came from."""
        box = self.query_one(field, Input)
        self._sources[field] = source
        self._filled[field] = text
        box.value = text

    def follow_reading(self, reading: Reading, point: TestPoint) -> None:
        """A speed or oil temperature reading was just saved: later conditions follow it."""
        field = {Role.PUMP_SPEED: "#speed", Role.OIL_TEMPERATURE: "#oil"}.get(point.role)
        if field is not None:
            self._set_condition_field(
                field, format_value(reading.value, self.bench.system), ConditionSource.READING
            )

    def _source_of(self, field: str) -> ConditionSource:
        """Typed now, or as filled in by the program / typed for an earlier reading."""
        text = self.query_one(field, Input).value
        if self._filled.get(field) == text:
            return self._sources.get(field, ConditionSource.TYPED)
        return ConditionSource.TYPED

    def unsaved_value(self) -> tuple[str, str] | None:
        """A value typed but not saved, and where (for the quit and leave prompts)."""
        if not self.is_mounted or self.point is None:
            return None
        text = self.query_one("#value", Input).value
        return (text, self.point.label) if text.strip() else None

    def clear_value(self) -> None:
        self.query_one("#value", Input).value = ""

    # --- the line under the fields ------------------------------------------------------------
    def say(self, text: str, mood: str, *, keep: bool = False) -> None:
        """Show a sentence under the fields; ``keep`` holds it until the next keystroke."""
        widget = self.query_one("#parse-msg", DrawnBlock)
        widget.data = (text,)
        for m in MOODS:
            widget.set_class(m == mood, f"-{m}")
        self._keep_message = keep

    def _with_unit(self, text: str, unit: str) -> str:
        return f"{text.strip()} {unit}" if _BARE_NUMBER.match(text) else text

    def condition(self) -> Condition:
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
        return Condition(
            function=self.function,
            speed=speed,
            oil_temperature=oil,
            speed_from=self._source_of("#speed") if speed is not None else None,
            oil_from=self._source_of("#oil") if oil is not None else None,
        )

    def show_problem(self, text: str) -> None:
        """An unexpected error, in plain words, where the technician is looking (tui/guard.py)."""
        self.say(f"✗ {text}", "error", keep=True)

    def _raise_danger(self, caution: str) -> None:
        if caution != self._danger:
            self._danger = caution
            self.post_message(self.Danger(caution))

    @guarded("checking the typed value")
    def update_message(self) -> None:
        """Say what Enter would save, or what is wrong with what is typed."""
        point = self.point
        if self.closed or point is None:
            return
        value_input = self.query_one("#value", Input)
        text = value_input.value
        if self._keep_message and not text:
            return
        self._keep_message = False
        try:
            self.condition()
        except FieldkitError as exc:
            self.say(f"✗ {exc}", "error")
            return
        if not text.strip():
            value_input.remove_class("-bad")
            self._raise_danger("")
            self.say(self.value_hint(), "info")
            return
        try:
            parsed = self.bench.parse_for_point(point, text)
        except AmbiguousInputError as exc:
            value_input.remove_class("-bad")
            self.say(f"? {exc} Enter asks which.", "ask")
            return
        except FieldkitError as exc:
            value_input.add_class("-bad")
            self.say(f"✗ {exc} (nothing saved)", "error")
            return
        if self.visit is None:
            return
        try:
            question = self.bench.check_entry(
                self.visit, point, parsed, self.gauge.id if self.gauge else None
            )
        except FieldkitError as exc:
            value_input.add_class("-bad")
            self.say(f"✗ {exc} (nothing saved)", "error")
            return
        self._raise_danger(question.danger if question else "")
        value_input.remove_class("-bad")
        if question is not None:
            self.say(f"? {question.text} Enter asks.", "ask")
            return
        ref = (
            f" ({parsed.reference.value})"
            if parsed.reference is not None and parsed.reference.value != "gauge"
            else ""
        )
        shown = format_value(parsed.quantity, self.bench.system)
        self.say(f"= {shown}{ref} at {point.label}, {self.function.label}: Enter saves", "ok")

    # --- events -------------------------------------------------------------------------------
    @on(Select.Changed, "#function")
    @on(Select.Changed, "#gauge")
    def _condition_changed(self, event: Select.Changed) -> None:
        event.stop()
        self._show_example()
        self.update_message()
        self.post_message(self.ConditionChanged())

    @on(Input.Changed)
    def _typed(self, event: Input.Changed) -> None:
        event.stop()
        self.update_message()

    @on(Input.Submitted)
    def _submitted(self, event: Input.Submitted) -> None:
        event.stop()
        self.save()

    # --- saving -------------------------------------------------------------------------------
    @guarded("saving the reading")
    def save(self) -> bool:
        """Save the typed value now; True when it is in the store (then :class:`Saved` is posted)."""
        value_input = self.query_one("#value", Input)
        text = value_input.value
        point = self.point
        if self.closed:
            self.say("This visit is closed; reopen it to add readings.", "error")
            return False
        if not text.strip():
            self.say("Type a value first; " + self.value_hint(), "error")
            return False
        if point is None:
            return False
        try:
            condition = self.condition()
        except FieldkitError as exc:
            self.say(f"✗ {exc} (nothing saved)", "error")
            return False
        gauge = self.gauge
        try:
            reading = self.bench.record(
                self.visit_id,
                point.id,
                text,
                condition,
                gauge=gauge.id if gauge else None,
                after_repair=self.retest,
            )
        except AmbiguousInputError as exc:
            self.post_message(self.Ambiguous(exc, point, condition, gauge))
            return False
        except ConfirmValueError as exc:
            self._raise_danger(exc.danger)
            self.say(f"? {exc} Answer the question to save it.", "ask")
            self.post_message(self.Confirm(exc, point, condition, gauge))
            return False
        except FieldkitError as exc:
            value_input.add_class("-bad")
            self.say(f"✗ {exc} (nothing saved)", "error")
            return False
        self._saved(reading, point)
        return True

    def _saved(self, reading: Reading, point: TestPoint) -> None:
        # A condition typed for this reading is, for the next one, only what was typed before.
        for field, source in (("#speed", reading.condition.speed_from), ("#oil", reading.condition.oil_from)):
            if source is ConditionSource.TYPED:
                self._sources[field] = ConditionSource.CARRIED
                self._filled[field] = self.query_one(field, Input).value
        self.follow_reading(reading, point)
        # The screen says "saved" once it has diagnosed again; clearing the field must not put
        # the typing hint there first (a redraw for nothing in the frame that matters).
        self._keep_message = True
        value_input = self.query_one("#value", Input)
        value_input.value = ""
        value_input.remove_class("-bad")
        self.post_message(self.Saved(reading, point))

    def save_choice(self, ask: ReadingEntry.Ambiguous, index: int | None) -> None:
        """Save the value the technician chose after an :class:`Ambiguous` (None: they did not)."""
        if index is None:
            self.say("Not saved: choose which value the gauge showed, or retype it.", "ask")
            return
        choice = ask.error.choices[index]
        assert isinstance(choice, ParsedValue)  # the units parser offers parsed values
        try:
            saved = self.bench.record(
                self.visit_id,
                ask.point.id,
                "",
                ask.condition,
                gauge=ask.gauge.id if ask.gauge else None,
                chosen=choice,
                after_repair=self.retest,
            )
        except ConfirmValueError as exc:  # the value chosen is itself unlikely here: ask that too
            self._raise_danger(exc.danger)
            self.say(f"? {exc} Answer the question to save it.", "ask")
            self.post_message(self.Confirm(exc, ask.point, ask.condition, ask.gauge))
            return
        except FieldkitError as err:
            self.say(f"✗ {err} (nothing saved)", "error")
            return
        self._saved(saved, ask.point)

    def save_confirmed(self, ask: ReadingEntry.Confirm, yes: bool | None) -> None:
        """Save the value after a :class:`Confirm` only when the technician said yes."""
        if not yes:
            self.say("Not saved: retype the value, or press Enter again and confirm it.", "ask")
            return
        try:
            saved = self.bench.record(
                self.visit_id,
                ask.point.id,
                "",
                ask.condition,
                gauge=ask.gauge.id if ask.gauge else None,
                chosen=ask.error.choice,  # type: ignore[arg-type]
                confirmed=True,
            )
        except FieldkitError as err:
            self.say(f"✗ {err} (nothing saved)", "error")
            return
        self._saved(saved, ask.point)
