"""The working set a command or the terminal UI needs: store, machine profiles, rules, settings.

It is the one place where typed text becomes a stored reading (parsed for the test point's kind,
checked for plausibility, saved at once) and where a visit reference (a file or a store id) is
resolved, so the CLI and the UI behave the same.
"""

from __future__ import annotations

import json
import os
from collections.abc import Callable
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path
from typing import TYPE_CHECKING

from fieldkit.errors import (
    AmbiguousInputError,
    ConfirmValueError,
    DataFileError,
    FieldkitError,
    ImpossibleValueError,
)

if TYPE_CHECKING:
    from fieldkit.diagnosis.engine import Knowledge
    from fieldkit.diagnosis.evidence import EvidenceBook
    from fieldkit.diagnosis.results import Diagnosis
from fieldkit.model.bounds import implausible, impossible
from fieldkit.model.condition import Condition
from fieldkit.model.example import example_text
from fieldkit.model.gauge import Gauge
from fieldkit.model.kit import InstrumentKind, KitItem, calibration_warning
from fieldkit.model.loading import ProfileLibrary
from fieldkit.model.profile import MachineProfile, TestPoint
from fieldkit.model.quantity import spelling_of
from fieldkit.model.repair import Departure, WorkItem
from fieldkit.model.roles import Role
from fieldkit.model.visit import Reading, Visit
from fieldkit.settings import Settings, data_home, default_library
from fieldkit.store import SqliteVisitStore, open_store
from fieldkit.tomlfile import read_text, validation_error
from fieldkit.units import (
    Q_,
    DisplaySystem,
    Kind,
    ParsedValue,
    PressureReference,
    Quantity,
    format_value,
    parse_value,
    to_canonical,
    to_gauge,
)

MAX_VISIT_FILE = 20_000_000


def read_visit_file(path: Path) -> tuple[Visit, MachineProfile | None]:
    """A visit from a file: a fieldkit export (with its profile) or a bare visit JSON (the samples)."""
    visit, profile, _kit = read_visit_file_with_kit(path)
    return visit, profile


def read_visit_file_with_kit(path: Path) -> tuple[Visit, MachineProfile | None, list[KitItem]]:
    """As :func:`read_visit_file`, with the kit items an export carries."""
    from pydantic import ValidationError

    from fieldkit.store.transfer import FORMAT_KEY, read_export

    text = read_text(path, MAX_VISIT_FILE)
    try:
        data = json.loads(text)
    except json.JSONDecodeError as exc:
        raise DataFileError(
            str(path), f"not valid JSON: {exc.msg} (column {exc.colno})", line=exc.lineno
        ) from None
    if isinstance(data, dict) and FORMAT_KEY in data:
        return read_export(text, name=str(path))
    try:
        return Visit.model_validate(data), None, []
    except ValidationError as exc:
        raise validation_error(exc, str(path), None) from None


@dataclass
class Workbench:
    store: SqliteVisitStore
    library: ProfileLibrary
    settings: Settings
    rules_folder: Path | None = None

    @classmethod
    def open(
        cls,
        store_path: str | os.PathLike[str] | None = None,
        *,
        profile_dirs: list[Path] | None = None,
        rules_folder: Path | None = None,
        settings: Settings | None = None,
        demo: bool = True,
    ) -> Workbench:
        """``demo`` False leaves the bundled demo machines out (the user's own UI)."""
        return cls(
            open_store(store_path),
            default_library(profile_dirs, demo=demo),
            settings or Settings.load(),
            rules_folder,
        )

    @property
    def knowledge(self) -> Knowledge:
        # Imported here: the start screen needs no rules, and the engine costs ~0.1 s to import.
        from fieldkit.diagnosis.engine import default_knowledge

        return default_knowledge(self.rules_folder)

    @property
    def system(self) -> DisplaySystem:
        return DisplaySystem.named(self.settings.display)

    def close(self) -> None:
        self.store.close()

    # --- visits -------------------------------------------------------------------------
    def resolve(self, ref: str) -> tuple[Visit, MachineProfile]:
        """A visit named by a file path or a store id, with its machine profile."""
        path = Path(ref)
        if ref.endswith(".json") or (path.exists() and path.is_file()):
            visit, embedded = read_visit_file(path)
            profile = embedded if embedded is not None else self.library.get(visit.machine)
            return visit, profile
        visit = self.store.get_visit(ref)
        return visit, self.library.get(visit.machine)

    def profile_for(self, visit: Visit) -> MachineProfile:
        return self.library.get(visit.machine)

    def diagnose(self, visit: Visit, profile: MachineProfile | None = None) -> Diagnosis:
        from fieldkit.diagnosis.engine import diagnose

        # The diagnosis reads what found the fault; after-repair readings are the re-test's.
        return diagnose(
            visit.diagnosis_view(), profile or self.profile_for(visit), self.knowledge, self.system
        )

    # --- complaint and observations -------------------------------------------------------
    @property
    def evidence(self) -> EvidenceBook:
        """The symptoms and observation checks of the rules folder in use."""
        from fieldkit.diagnosis.evidence import evidence_book

        k = self.knowledge
        return evidence_book(k.folder, set(k.faults))

    def set_complaint(self, visit_id: str, complaint: str, symptoms: list[str]) -> Visit:
        unknown = [s for s in symptoms if s not in self.evidence.symptoms]
        if unknown:
            raise FieldkitError(
                f"unknown symptom(s) {', '.join(unknown)}; known: {', '.join(self.evidence.symptoms)}"
            )
        return self.store.update_visit(visit_id, complaint=complaint, symptoms=list(dict.fromkeys(symptoms)))

    def observe(self, visit_id: str, check_id: str, answer: str, *, test_point: str | None = None) -> Visit:
        """Record one answered check (saved at once). Answering again adds a newer answer; the
        newest stands and the earlier one stays in the record."""
        from fieldkit.model.visit import Observation

        check = self.evidence.observations.get(check_id)
        if check is None:
            raise FieldkitError(f"unknown check '{check_id}'; known: {', '.join(self.evidence.observations)}")
        if check.answer(answer) is None:
            raise FieldkitError(
                f"'{answer}' is not an answer to '{check_id}'; "
                f"answers: {', '.join(a.id for a in check.answers)}"
            )
        visit = self.store.get_visit(visit_id)
        circuit = None
        if test_point is not None:
            circuit, _point = self.profile_for(visit).test_point(test_point)
        obs = Observation(
            check=check_id, answer=answer, circuit=circuit.id if circuit else None, test_point=test_point
        )
        return self.store.update_visit(visit_id, observations=[*visit.observations, obs])

    # --- repair, re-test, departure ---------------------------------------------------------
    def add_work(self, visit_id: str, work: WorkItem) -> Visit:
        visit = self.store.get_visit(visit_id)
        return self.store.update_visit(visit_id, work=[*visit.work, work])

    def set_departure(self, visit_id: str, departure: Departure) -> Visit:
        return self.store.update_visit(visit_id, departure=departure)

    def completion_problems(self, visit: Visit) -> list[str]:
        """Why the visit cannot be closed yet (an open danger finding the status does not answer)."""
        from fieldkit.diagnosis.retest import completion_problems, open_dangers

        return completion_problems(visit, open_dangers(visit, self.profile_for(visit), self.knowledge))

    def finish(self, visit_id: str, summary: str) -> Visit:
        """Close the visit, refusing while a danger finding is open and the status does not say why."""
        problems = self.completion_problems(self.store.get_visit(visit_id))
        if problems:
            raise FieldkitError("; ".join(problems))
        return self.store.close_visit(visit_id, summary)

    # --- the kit ------------------------------------------------------------------------
    def pick_gauge(self, visit_id: str, item_id: str) -> tuple[Visit, str]:
        """Put a kit instrument on a visit (a copy of it as it is today). Returns the visit and a
        calibration warning ('' when the instrument is in date on the visit's day)."""
        item = self.store.kit_item(item_id)
        if item.retired:
            raise FieldkitError(
                f"instrument '{item_id}' was retired on {item.retired_on}; pick one in service"
            )
        visit = self.store.add_gauge(visit_id, item.as_gauge())
        return visit, calibration_warning(item, visit.date)

    def keep_in_kit(self, gauge: Gauge) -> Gauge:
        """A gauge typed in on a visit joins the kit (when its id is free and its kind is one the
        kit holds), so the next visit picks it from the list. Returns the gauge as the visit keeps it."""
        kind = next((k for k in InstrumentKind if k.measures is gauge.kind), None)
        if kind is None or any(item.id == gauge.id for item in self.store.kit(include_retired=True)):
            return gauge
        return self.store.add_kit_item(KitItem.from_gauge(gauge, kind)).as_gauge()

    def kit_for_export(self, visit: Visit) -> list[KitItem]:
        """The kit items (retired ones too) the visit's gauges came from."""
        ids = {g.kit_item for g in visit.gauges if g.kit_item}
        return [item for item in self.store.kit(include_retired=True) if item.id in ids]

    def import_visit_file(self, path: Path, *, as_new: bool = False) -> tuple[Visit, list[str]]:
        """Import an export: the visit, and any of its kit items this store does not have yet."""
        visit, _profile, kit = read_visit_file_with_kit(path)
        stored = self.store.import_visit(visit, as_new=as_new)
        return stored, self.store.merge_kit(kit)

    def import_readings_csv(
        self, visit_id: str, path: Path, *, again: bool = False
    ) -> tuple[Visit, list[Reading]]:
        """Import a CSV of readings into a visit, all rows or none. Readings the visit already
        holds (the same file imported before) are refused unless ``again`` says it is on purpose."""
        from fieldkit.store.csv_import import already_in_visit, points_by_id, read_readings_csv

        visit = self.store.get_visit(visit_id)
        profile = self.profile_for(visit)
        readings = read_readings_csv(
            path,
            test_points=points_by_id(profile),
            gauges={g.id for g in visit.gauges},
            decimal_comma=self.settings.decimal_comma,
        )
        repeated = already_in_visit(visit, readings)
        if repeated and not again:
            share = "all" if len(repeated) == len(readings) else f"{len(repeated)} of {len(readings)}"
            raise FieldkitError(
                f"{path}: {share} of its readings are already in visit {visit.job_number} (same test point, "
                "time and value): this file seems to have been imported before, so nothing was imported. "
                "To import it again on purpose: fieldkit import FILE --visit ID --again"
            )
        return visit, self.store.add_readings(visit.id, readings)

    # --- readings -----------------------------------------------------------------------
    def parse_for_point(self, point: TestPoint, text: str) -> ParsedValue:
        """Parse text for a test point: its kind is required, and a separator that reads two ways
        is settled by the point's plausible range (asked about when both are plausible)."""
        parsed = parse_value(
            text,
            point.kind,
            decimal_comma=self.settings.decimal_comma,
            role_name=point.label,
            plausible=plausibility(point),
            example=example_text(point),
        )
        vacuum_or_pressure(point, parsed)
        return parsed

    def check_entry(
        self, visit: Visit, point: TestPoint, parsed: ParsedValue, gauge_id: str | None = None
    ) -> Question | None:
        """Refuse a value no instrument can show (ImpossibleValueError, with the reason); return
        the question to ask about a possible but unlikely one, or None when it can be saved."""
        why = impossible(parsed.quantity, point.kind, parsed.reference, visit.barometric_pressure)
        if why:
            raise ImpossibleValueError(f"'{parsed.text}' refused: {why}")
        return entry_question(visit, point, parsed, visit.gauge(gauge_id))

    def record(
        self,
        visit_id: str,
        point_id: str,
        text: str,
        condition: Condition,
        *,
        gauge: str | None = None,
        note: str = "",
        replaces: str | None = None,
        chosen: ParsedValue | None = None,
        confirmed: bool = False,
        after_repair: bool = False,
        reason: str = "",
    ) -> Reading:
        """Parse and save one reading at once (committed before this returns). ``chosen`` is the
        reading a person picked after :class:`~fieldkit.errors.AmbiguousInputError` asked;
        ``confirmed`` says the person answered yes to :class:`~fieldkit.errors.ConfirmValueError`
        (a value past the gauge or far above the point's maximum). An impossible value is never
        saved (:class:`~fieldkit.errors.ImpossibleValueError`)."""
        visit = self.store.get_visit(visit_id)
        profile = self.profile_for(visit)
        try:
            _circuit, point = profile.test_point(point_id)
        except KeyError:
            raise FieldkitError(f"machine '{profile.id}' has no test point '{point_id}'") from None
        if gauge is not None and visit.gauge(gauge) is None:
            raise FieldkitError(f"visit {visit.id} has no gauge '{gauge}'")
        parsed = chosen if chosen is not None else self.parse_for_point(point, text)
        question = self.check_entry(visit, point, parsed, gauge)
        if question is not None and not confirmed:
            raise ConfirmValueError(question.text, parsed, danger=question.danger)
        reading = Reading(
            test_point=point.id,
            value=parsed.quantity,
            reference=parsed.reference,
            entered=parsed.text,
            condition=condition,
            gauge=gauge,
            note=note,
            after_repair=after_repair,
            reason=reason,
        )
        if replaces:
            if not reason.strip():
                raise FieldkitError(
                    "a correction needs a reason (e.g. 'misread the scale'); it is kept with the value"
                )
            return self.store.correct_reading(visit_id, replaces, reading)
        return self.store.add_reading(visit_id, reading)


@dataclass(frozen=True)
class Question:
    """What to ask before saving a possible but unlikely value."""

    text: str
    #: id of a danger caution to raise at once (the value is above the point's rated maximum)
    danger: str = ""


OVER_PRESSURE = "over-pressure"


def entry_question(
    visit: Visit, point: TestPoint, parsed: ParsedValue, gauge: Gauge | None
) -> Question | None:
    """The question a value raises at this point, or None. Past the chosen gauge's span: the
    gauge may be overranged and damaged, and what it shows only means 'at least' (EN 837-2 keeps
    steady pressure within 3/4 of the scale, from memory). Above the point's rated maximum: the
    over-pressure danger, at once. Far above the point's ranges, or above 2000 bar: a slip?"""
    q, kind = parsed.quantity, point.kind
    asks: list[str] = []
    danger = ""
    gauge_q = q
    if kind is Kind.PRESSURE and parsed.reference is PressureReference.ABSOLUTE:
        gauge_q = to_gauge(q, parsed.reference, visit.barometric_pressure)
    value = to_canonical(gauge_q, kind)
    if kind is Kind.PRESSURE and point.max_pressure is not None:
        top = to_canonical(point.max_pressure, kind)
        if value > top:
            danger = OVER_PRESSURE
            asks.append(
                f"DANGER: {format_value(gauge_q)} is above the {format_value(point.max_pressure)} this "
                "point is rated for; stop, unload the circuit and check the relief before going on"
            )
    if gauge is not None and gauge.kind is kind:
        start = to_canonical(gauge.scale_start, kind) if gauge.scale_start is not None else 0.0
        end = to_canonical(gauge.full_scale, kind)
        if value > end or value < start:
            where = "past the top" if value > end else "below the bottom"
            bound = (
                gauge.full_scale
                if value > end
                else (gauge.scale_start if gauge.scale_start is not None else Q_(0.0, gauge.full_scale.units))
            )
            asks.append(
                f"{format_value(gauge_q, kind=kind)} is {where} of {gauge.id}'s scale "
                f"({gauge_span_text(gauge)}): the gauge may be overranged and damaged, and it "
                f"only shows that the value is at {'least' if value > end else 'most'} "
                f"{format_value(bound, kind=kind)}"
            )
    highs = [r.high for r in point.expected if r.high is not None]
    if kind is Kind.PRESSURE and point.max_pressure is not None:
        highs.append(point.max_pressure)
    unlikely = implausible(q, kind, parsed.reference, highs, visit.barometric_pressure)
    if unlikely and not danger:
        asks.append(unlikely)
    if not asks:
        return None
    return Question("; ".join(asks) + ". Save it as read?", danger)


#: Units vacuum gauges are read in without a sign: a bare value in them at a suction point may be
#: a vacuum or a pressure (common practice: vacuum gauges are marked in inHg or mbar below zero).
_VACUUM_SPELLINGS = ("inHg", "mbar")


def vacuum_or_pressure(point: TestPoint, parsed: ParsedValue) -> None:
    """At a suction point, '7 inHg' with no sign and no 'vac' may mean 7 inHg of vacuum (as a
    vacuum gauge shows it) or 7 inHg above atmosphere: ask, never guess (AmbiguousInputError)."""
    q = parsed.quantity
    if (
        point.role is not Role.SUCTION_PRESSURE
        or parsed.sided
        or q.magnitude <= 0
        or spelling_of(q) not in _VACUUM_SPELLINGS
    ):
        return
    below = Q_(-float(q.magnitude), q.units)
    vacuum = ParsedValue(below, parsed.kind, PressureReference.GAUGE, f"{parsed.text} vac", sided=True)
    raise AmbiguousInputError(
        f"'{parsed.text}' at a suction point: {format_value(q, kind=Kind.PRESSURE)} of vacuum "
        f"({format_value(below)} gauge), or {format_value(q)} above atmosphere? Write '{parsed.text} vac' "
        "for a vacuum",
        (vacuum, parsed),
    )


def gauge_span_text(gauge: Gauge) -> str:
    """A gauge's true span as printed on its dial: '-1 bar–1.5 bar', '30 inHg vac–0', '0–600 bar'."""
    return gauge.span_text()


def plausibility(point: TestPoint) -> Callable[[Quantity], bool] | None:
    """A generous plausibility check for a point: within ten times its expected range or its
    highest pressure. It only decides between two readings of '2,500'; it never rejects a value."""
    highs = [r.high for r in point.expected if r.high is not None]
    if point.max_pressure is not None and point.kind is Kind.PRESSURE:
        # The point's rating is a pressure even where it reads a flow or a temperature.
        highs.append(point.max_pressure)
    if not highs:
        return None
    ceiling = max(to_canonical(h, point.kind) for h in highs) * (1.5 if point.kind is Kind.PRESSURE else 3.0)

    def plausible(q: Quantity) -> bool:
        return abs(to_canonical(q, point.kind)) <= ceiling

    return plausible


def demo_store_path() -> Path:
    return data_home() / "demo.sqlite3"


def demo_store_is_stale(store: SqliteVisitStore, library: ProfileLibrary) -> bool:
    """A demo store made by an earlier fieldkit names machines the bundled demo no longer has
    (the demo machines were renamed once); such a store is rebuilt whole, never half-renamed."""
    known = set(library.ids())
    return any(s.machine not in known for s in store.list_visits())


def retire_demo_store(path: Path) -> Path:
    """Move an outdated demo store (and its WAL files) aside, keeping it, so a fresh one is built.
    Returns where the old file went."""
    stamp = datetime.now(UTC).strftime("%Y%m%dT%H%M%SZ")
    kept = path.with_name(f"{path.name}.replaced-{stamp}")
    for suffix in ("", "-wal", "-shm"):
        old = Path(f"{path}{suffix}")
        if old.exists():
            old.rename(Path(f"{kept}{suffix}"))
    return kept


def seed_demo(store: SqliteVisitStore) -> None:
    """Put the bundled sample visits and the demo kit into a demo store once (an id already there
    is left alone)."""
    from fieldkit.resources import samples_dir

    have = {s.id for s in store.list_visits()}
    for path in sorted((samples_dir() / "visits").glob("*.json")):
        visit, _ = read_visit_file(path)
        if visit.id not in have:
            store.import_visit(visit)
    store.merge_kit(demo_kit())


def demo_kit() -> list[KitItem]:
    """The demo technician's instruments (sample_readings/kit.json, invented): serials and
    calibration dates, one of them overdue to show the warning."""
    from pydantic import ValidationError

    from fieldkit.resources import samples_dir

    path = samples_dir() / "kit.json"
    try:
        data = json.loads(read_text(path, MAX_VISIT_FILE))
        return [KitItem.model_validate(item) for item in data["kit"]]
    except json.JSONDecodeError as exc:
        raise DataFileError(str(path), f"not valid JSON: {exc.msg}", line=exc.lineno) from None
    except (KeyError, TypeError):
        raise DataFileError(str(path), "expected an object with a 'kit' list") from None
    except ValidationError as exc:
        raise validation_error(exc, str(path), None) from None
