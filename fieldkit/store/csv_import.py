"""Readings from a digital gauge or a data logger, in a CSV layout of fieldkit's own.

The layout, in plain words
--------------------------
* UTF-8 text; a byte-order mark at the start is fine. The first line is a header that names
  the columns, in any order, upper or lower case (``test point`` and ``test-point`` are read as
  ``test_point``). Every later line is one reading; empty lines are skipped.
* Separator: a semicolon if the header line has one (spreadsheets in decimal-comma countries
  write those), else a tab if it has one, else a comma. In a semicolon file a comma inside a
  number is the decimal separator (``24,5`` is 24.5, ``2,500`` is 2.5, and then a dot before
  three digits groups thousands: ``1.250`` is 1250); in other files the caller's
  ``decimal_comma`` setting decides. In a comma file a value with a comma must be quoted
  (``"24,5 bar"``).
* Columns:

  ``time`` (required)
      When the reading was taken, ISO 8601 with a time zone: ``2024-05-01T09:30:00Z`` or
      ``2024-05-01 11:30:00+02:00``. A time without a zone is refused, because nobody can tell
      whether the logger's clock ran on UTC or local time; a caller that knows may pass
      ``naive_tz`` to say which zone such times are in. A date without a time is refused.
  ``test_point`` (required)
      The test point id from the machine profile, e.g. ``drive.charge``.
  ``value`` (required)
      The reading. Its unit is given in exactly one of three ways: in the header
      (``value [bar]``), in a ``unit`` column, or in the cell (``24,5 bar``). A row where none
      or more than one of these gives a unit is an error, even if they agree.
  ``unit``
      The value's unit for that row (``bar``, ``psi``, ``L/min``…).
  ``function``
      What the function was doing: ``neutral``, ``full_stroke``, ``stalled`` or
      ``under_load``. Empty means neutral.
  ``speed``, ``oil_temperature``
      The condition while reading; unit in the header (``speed [rpm]``,
      ``oil_temperature [°C]``) or in the cell (``1800 rpm``), not both. May be empty.
  ``gauge``
      Id of the gauge used (it must be one of the visit's gauges). May be empty.
  ``note``
      Free text.

* Limits: 5 MB of text, 50 000 readings, 4 000 characters in a cell.
* Every row is checked before anything is imported. If any row is wrong, nothing is imported
  and one message lists the wrong rows by line number (the first 20), saying what is wrong.

Values go through :func:`fieldkit.units.parse_value`, never pint's own parser (which would
read ``24,5 bar`` as 245 bar).
"""

from __future__ import annotations

import csv
import datetime as dt
import io
import re
from collections.abc import Mapping
from dataclasses import dataclass, field
from datetime import UTC
from pathlib import Path

from pydantic import ValidationError

from fieldkit.errors import DataFileError, FieldkitError
from fieldkit.model.condition import Condition, FunctionState
from fieldkit.model.example import example_text
from fieldkit.model.profile import MachineProfile, TestPoint
from fieldkit.model.visit import DATE_RANGE, Reading, Visit, in_date_range
from fieldkit.tomlfile import validation_error
from fieldkit.units import EXAMPLE, Kind, ParsedValue, parse_value

MAX_CSV_BYTES = 5_000_000
MAX_ROWS = 50_000
MAX_CELL_CHARS = 4000
MAX_REPORTED = 20

REQUIRED = ("time", "test_point", "value")
OPTIONAL = ("unit", "function", "speed", "oil_temperature", "gauge", "note")
_UNIT_IN_HEADER = {"value": None, "speed": Kind.SPEED, "oil_temperature": Kind.TEMPERATURE}
_HEADER_CELL = re.compile(r"^(?P<name>[^\[\]]*?)\s*(?:\[(?P<unit>[^\[\]]*)\])?$")
_NUMBER_CHARS = set("0123456789+-−–.,  \u00a0\u202f")
_STARTS_WITH_NUMBER = re.compile(r"^[+\-−–]?\s*[0-9.,]*[0-9]")
_CONTROL = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f]")


@dataclass(frozen=True, slots=True)
class _Layout:
    delimiter: str
    columns: dict[str, int]
    header_units: dict[str, str]
    decimal_comma: bool


@dataclass(slots=True)
class _Problems:
    rows: list[tuple[int, str]] = field(default_factory=list)
    count: int = 0

    def add(self, line: int, problems: list[str]) -> None:
        self.count += 1
        if len(self.rows) < MAX_REPORTED:
            self.rows.append((line, "; ".join(problems)))


def kinds_by_test_point(profile: MachineProfile) -> dict[str, Kind]:
    """Each test point id of a machine and the kind it reads."""
    return {tp.id: tp.kind for _circuit, tp in profile.all_test_points()}


def points_by_id(profile: MachineProfile) -> dict[str, TestPoint]:
    """The ``test_points`` argument for a machine: with the points themselves (not only their
    kinds), a value without a unit is told an example from the point's own range."""
    return {tp.id: tp for _circuit, tp in profile.all_test_points()}


def already_in_visit(visit: Visit, readings: list[Reading]) -> list[Reading]:
    """The readings of an import that the visit already holds: same test point, same moment,
    same value. A logger file imported twice would otherwise count every reading twice (and a
    corrected value would come back beside its correction), so the whole visit history is
    compared, corrected and deleted readings included."""
    held = {(r.test_point, r.taken_at, r.value.magnitude, str(r.value.units)) for r in visit.readings}
    return [r for r in readings if (r.test_point, r.taken_at, r.value.magnitude, str(r.value.units)) in held]


def read_readings_csv(path: str | Path, **options: object) -> list[Reading]:
    """Read a CSV file (size-limited, UTF-8) and parse it with :func:`parse_readings_csv`."""
    p = Path(path)
    try:
        size = p.stat().st_size
        if size > MAX_CSV_BYTES:
            raise DataFileError(
                str(p), f"the file is {size:,} bytes; a readings CSV is at most {MAX_CSV_BYTES:,}"
            )
        raw = p.read_bytes()
    except OSError as exc:
        raise DataFileError(str(p), f"cannot read the file ({exc.strerror or exc})") from None
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise DataFileError(str(p), f"not UTF-8 text (byte {exc.start}); save the CSV as UTF-8") from None
    return parse_readings_csv(text, name=str(p), **options)  # type: ignore[arg-type]


def parse_readings_csv(
    text: str,
    *,
    test_points: Mapping[str, Kind] | Mapping[str, TestPoint] | None = None,
    gauges: set[str] | None = None,
    decimal_comma: bool = False,
    naive_tz: dt.tzinfo | None = None,
    name: str = "<readings CSV>",
) -> list[Reading]:
    """Readings from CSV text in the layout above; all of them, or a DataFileError listing every
    wrong row (up to 20). ``test_points`` (id → kind, or id → point for hints drawn from the
    point's range) and ``gauges`` (ids), when given, are what the rows are checked against;
    ``None`` accepts any."""
    if len(text) > MAX_CSV_BYTES or len(text.encode("utf-8", "surrogatepass")) > MAX_CSV_BYTES:
        raise DataFileError(name, f"the text is over {MAX_CSV_BYTES:,} bytes; a readings CSV is smaller")
    text = text.removeprefix("\ufeff")
    first_line = text.split("\n", 1)[0]
    if not first_line.strip():
        raise DataFileError(
            name, "the first line must be a header naming the columns (time, test_point, value…)", line=1
        )
    delimiter = ";" if ";" in first_line else "\t" if "\t" in first_line else ","
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter, strict=True)
    # First pass: split into rows with their starting line (cheap, in C), so the row limit is
    # enforced before any row is validated.
    rows: list[tuple[int, list[str]]] = []
    try:
        layout = _layout(next(reader), delimiter, decimal_comma or delimiter == ";", name)
        last_line = reader.line_num
        for row in reader:
            line, last_line = last_line + 1, reader.line_num
            if any(cell.strip() for cell in row):
                rows.append((line, row))
                if len(rows) > MAX_ROWS:
                    raise DataFileError(name, f"more than {MAX_ROWS:,} readings; split the file", line=line)
    except csv.Error as exc:
        raise DataFileError(
            name, f"the CSV cannot be read here: {exc}", line=reader.line_num or None
        ) from None
    readings: list[Reading] = []
    problems = _Problems()
    for line, row in rows:
        reading, wrong = _row(row, layout, test_points, gauges, naive_tz)
        if wrong:
            problems.add(line, wrong)
        elif reading is not None:
            readings.append(reading)
    if problems.count:
        raise _report(name, problems)
    if not readings:
        raise DataFileError(name, "the file has a header but no readings")
    return readings


def _report(name: str, problems: _Problems) -> DataFileError:
    lines = [f"  line {line}: {what}" for line, what in problems.rows]
    more = problems.count - len(problems.rows)
    if more:
        lines.append(f"  … and {more} more wrong row{'s' if more != 1 else ''}")
    rows = f"{problems.count} row{'s are' if problems.count != 1 else ' is'} wrong"
    message = f"{rows}, so nothing was imported; fix them and import again:\n" + "\n".join(lines)
    return DataFileError(name, message, line=problems.rows[0][0])


def _layout(header: list[str], delimiter: str, decimal_comma: bool, name: str) -> _Layout:
    columns: dict[str, int] = {}
    units: dict[str, str] = {}
    for index, raw in enumerate(header):
        cell = raw.strip().removeprefix("\ufeff")
        match = _HEADER_CELL.match(cell)
        col = re.sub(r"[\s\-]+", "_", match.group("name").strip().lower()) if match else cell
        if not match or col not in REQUIRED + OPTIONAL:
            known = ", ".join(REQUIRED + OPTIONAL)
            raise DataFileError(
                name,
                f"column {index + 1} is called '{cell}', which fieldkit does not know; columns are {known}",
                line=1,
            )
        if col in columns:
            raise DataFileError(name, f"the column '{col}' appears twice in the header", line=1)
        columns[col] = index
        unit = match.group("unit")
        if unit is not None:
            if col not in _UNIT_IN_HEADER:
                raise DataFileError(name, f"the column '{col}' cannot carry a unit in the header", line=1)
            unit = unit.strip()
            try:
                parse_value(f"1 {unit}", _UNIT_IN_HEADER[col])
            except FieldkitError as exc:
                raise DataFileError(
                    name, f"the unit in the header '{cell}' is not usable: {exc}", line=1
                ) from None
            units[col] = unit
    missing = [c for c in REQUIRED if c not in columns]
    if missing:
        raise DataFileError(
            name,
            f"the header lacks the column{'s' if len(missing) > 1 else ''} "
            f"{', '.join(missing)}; it needs time, test_point and value",
            line=1,
        )
    if "unit" in columns and "value" in units:
        raise DataFileError(
            name, "the value's unit is in the header and there is also a unit column; keep one", line=1
        )
    return _Layout(delimiter, columns, units, decimal_comma)


def _row(
    row: list[str],
    layout: _Layout,
    test_points: Mapping[str, Kind] | Mapping[str, TestPoint] | None,
    gauges: set[str] | None,
    naive_tz: dt.tzinfo | None,
) -> tuple[Reading | None, list[str]]:
    wrong: list[str] = []
    if len(row) > len(layout.columns):
        hint = (
            " (a decimal comma in a comma-separated file must be quoted)" if layout.delimiter == "," else ""
        )
        return None, [f"{len(row)} cells but the header names {len(layout.columns)}{hint}"]
    cells = {col: (row[i].strip() if i < len(row) else "") for col, i in layout.columns.items()}
    for col, cell in cells.items():
        if len(cell) > MAX_CELL_CHARS:
            return None, [f"the {col} cell is {len(cell):,} characters; at most {MAX_CELL_CHARS:,}"]
        if _CONTROL.search(cell) or (col != "note" and ("\n" in cell or "\r" in cell)):
            wrong.append(f"the {col} cell holds control characters")
    if wrong:
        return None, wrong

    taken_at = _time(cells["time"], naive_tz, wrong)
    tp = cells["test_point"]
    expect: Kind | None = None
    example: str | None = None
    if not tp:
        wrong.append("test_point is empty")
    elif test_points is not None:
        if tp not in test_points:
            known = sorted(test_points)
            listed = ", ".join(known[:8]) + (" …" if len(known) > 8 else "")
            wrong.append(f"unknown test point '{tp}' (this machine has {listed or 'none'})")
        else:
            known_point = test_points[tp]
            if isinstance(known_point, TestPoint):
                expect, example = known_point.kind, example_text(known_point)
            else:
                expect = known_point
    value = _value(cells, layout, expect, tp, wrong, example)
    condition = _condition(cells, layout, wrong)
    gauge = cells.get("gauge") or None
    if gauge is not None and gauges is not None and gauge not in gauges:
        known_g = ", ".join(sorted(gauges)) or "none"
        wrong.append(f"gauge '{gauge}' is not one of this visit's gauges ({known_g})")
    if wrong or value is None or taken_at is None or condition is None:
        return None, wrong
    try:
        return Reading(
            test_point=tp,
            value=value.quantity,
            reference=value.reference,
            entered=value.text,
            condition=condition,
            gauge=gauge,
            taken_at=taken_at,
            note=cells.get("note", ""),
        ), []
    except ValidationError as exc:
        err = validation_error(exc, "", None)
        return None, [f"{err.key}: {err.detail}" if err.key else err.detail]


def _time(cell: str, naive_tz: dt.tzinfo | None, wrong: list[str]) -> dt.datetime | None:
    if not cell:
        wrong.append("time is empty")
        return None
    example = "2024-05-01T09:30:00Z"
    if len(cell) <= 10:
        wrong.append(f"time '{cell}' has no time of day; write e.g. {example}")
        return None
    try:
        moment = dt.datetime.fromisoformat(cell)
    except ValueError:
        wrong.append(f"time '{cell}' is not an ISO 8601 time such as {example}")
        return None
    if moment.tzinfo is None:
        if naive_tz is None:
            wrong.append(f"time '{cell}' has no time zone; add Z for UTC or an offset such as +02:00")
            return None
        moment = moment.replace(tzinfo=naive_tz)
    if not in_date_range(moment.date()):
        wrong.append(f"time '{cell}' is outside the dates fieldkit works with ({DATE_RANGE})")
        return None
    return moment.astimezone(UTC)


def _has_unit(cell: str) -> bool:
    return any(ch not in _NUMBER_CHARS for ch in cell)


def _quantity(
    cell: str,
    column: str,
    header_unit: str | None,
    column_unit: str | None,
    expect: Kind | None,
    what: str,
    decimal_comma: bool,
    wrong: list[str],
    example: str | None = None,
) -> ParsedValue | None:
    """A value whose unit must come from exactly one place: header, unit column, or the cell."""
    if not _STARTS_WITH_NUMBER.match(cell):
        wrong.append(f"{column} '{cell}' is not a number")
        return None
    ways = [
        w
        for w, present in (
            ("in the header", header_unit),
            ("in the unit column", column_unit),
            ("in the cell", _has_unit(cell)),
        )
        if present
    ]
    if not ways:
        # the point's own example when the row's point is known ("e.g. 62 L/min" misleads on a
        # 0–20 L/min meter), else the kind's usual one
        example = example or EXAMPLE[expect or _UNIT_IN_HEADER[column] or Kind.PRESSURE]
        unit_column = "a unit column, " if column == "value" else ""
        wrong.append(
            f"{column} '{cell}' has no unit: put it in the header ('{column} [{example.split(' ', 1)[1]}]'), "
            f"{unit_column}or the cell ('{example}')"
        )
        return None
    if len(ways) > 1:
        wrong.append(f"{column} '{cell}' has its unit given {' and '.join(ways)}; give it one way only")
        return None
    text = cell if _has_unit(cell) else f"{cell} {header_unit or column_unit}"
    try:
        return parse_value(text, expect, decimal_comma=decimal_comma, role_name=what)
    except FieldkitError as exc:
        wrong.append(str(exc))
        return None


def _value(
    cells: dict[str, str],
    layout: _Layout,
    expect: Kind | None,
    tp: str,
    wrong: list[str],
    example: str | None = None,
) -> ParsedValue | None:
    cell = cells["value"]
    if not cell:
        wrong.append("value is empty")
        return None
    what = f"test point {tp}" if tp else "the value"
    return _quantity(
        cell,
        "value",
        layout.header_units.get("value"),
        cells.get("unit") or None,
        expect,
        what,
        layout.decimal_comma,
        wrong,
        example,
    )


def _condition(cells: dict[str, str], layout: _Layout, wrong: list[str]) -> Condition | None:
    raw = re.sub(r"[\s\-]+", "_", cells.get("function", "").lower())
    function = FunctionState.NEUTRAL
    if raw:
        try:
            function = FunctionState(raw)
        except ValueError:
            choices = ", ".join(f.value for f in FunctionState)
            wrong.append(f"function '{cells['function']}' is not one of {choices}")
    found: dict[str, ParsedValue | None] = {}
    for col, kind in (("speed", Kind.SPEED), ("oil_temperature", Kind.TEMPERATURE)):
        cell = cells.get(col, "")
        found[col] = (
            _quantity(
                cell,
                col,
                layout.header_units.get(col),
                None,
                kind,
                col.replace("_", " "),
                layout.decimal_comma,
                wrong,
            )
            if cell
            else None
        )
    if wrong:
        return None
    speed, oil = found["speed"], found["oil_temperature"]
    return Condition(
        function=function,
        speed=speed.quantity if speed else None,
        oil_temperature=oil.quantity if oil else None,
    )
