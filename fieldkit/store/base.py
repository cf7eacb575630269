"""What the UI and the CLI may ask of a visit store, independent of how it keeps its data.

The screens and commands talk to :class:`VisitStore` only, so tests can hand them another
implementation and the SQLite details stay in :mod:`fieldkit.store.sqlite`.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from typing import Any, Protocol, runtime_checkable

from fieldkit.model.visit import Gauge, Reading, Visit, VisitStatus

#: Header fields :meth:`VisitStore.update_visit` may change. The machine, status and readings
#: are not here: they change through their own operations so history stays consistent.
EDITABLE_FIELDS: frozenset[str] = frozenset(
    {
        "job_number",
        "customer",
        "site",
        "machine_serial",
        "hour_meter",
        "technician",
        "date",
        "oil",
        "barometric_pressure",
        "notes",
        "gauges",
        "complaint",
        "symptoms",
        "observations",
        "work",
        "departure",
        "time_zone",
    }
)


@dataclass(frozen=True, slots=True)
class VisitSummary:
    """One line of a visit list; ``reading_count`` counts readings that stand (not deleted and
    not replaced by a correction), which is what a technician means by 'readings taken'."""

    id: str
    job_number: str
    customer: str
    machine: str
    date: dt.date
    status: VisitStatus
    reading_count: int
    updated_at: dt.datetime
    #: The shop-server login that took the visit, once it has been through a sync ("" before).
    taken_by: str = ""


@runtime_checkable
class VisitStore(Protocol):
    """Visits and their readings, kept durably. Every method raises
    :class:`fieldkit.errors.StoreError` with a plain message when it cannot do what was asked."""

    def create_visit(self, visit: Visit) -> Visit: ...

    def get_visit(self, visit_id: str) -> Visit: ...

    def list_visits(
        self, status: VisitStatus | str | None = None, machine: str | None = None
    ) -> list[VisitSummary]: ...

    def update_visit(self, visit_id: str, **fields: Any) -> Visit: ...

    def add_gauge(self, visit_id: str, gauge: Gauge) -> Visit: ...

    def add_reading(self, visit_id: str, reading: Reading) -> Reading: ...

    def add_readings(self, visit_id: str, readings: Iterable[Reading]) -> list[Reading]: ...

    def correct_reading(self, visit_id: str, old_id: str, new_reading: Reading) -> Reading: ...

    def delete_reading(self, visit_id: str, reading_id: str) -> Reading: ...

    def reading_history(self, visit_id: str, test_point: str) -> list[Reading]: ...

    def close_visit(self, visit_id: str, summary: str) -> Visit: ...

    def reopen_visit(self, visit_id: str) -> Visit: ...

    def machine_history(
        self, machine_id: str, test_point_ids: Sequence[str] | None = None
    ) -> list[tuple[VisitSummary, list[Reading]]]: ...

    def import_visit(self, visit: Visit, *, as_new: bool = False) -> Visit: ...

    def close(self) -> None: ...
