"""Invented data for the shop-server tests (the Ravensgill Hydraulic Field Service scenario):
two technicians' laptops, a drill rig, gauges and readings. The numbers are made up."""

from __future__ import annotations

import datetime as dt
from datetime import UTC
from pathlib import Path
from typing import Any

from fieldkit.model.kit import KitItem
from fieldkit.model.visit import Gauge, Reading, Visit
from fieldkit.store.sqlite import SqliteVisitStore

RIG = "tarnhollow-fellborer"
CHARGE = "travel.charge"
T0 = dt.datetime(2026, 3, 14, 9, 0, tzinfo=UTC)


def gauge(gauge_id: str = "g60") -> Gauge:
    return Gauge(id=gauge_id, label="shop kit gauge", full_scale="60 bar", accuracy_class=1.0)


def visit(job: str = "RHF-0101", **extra: Any) -> Visit:
    fields: dict[str, Any] = {
        "job_number": job,
        "customer": "Ravensgill quarry",
        "site": "north bench",
        "machine": RIG,
        "technician": "invented tech",
        "date": dt.date(2026, 3, 14),
        "gauges": [gauge()],
    }
    fields.update(extra)
    return Visit(**fields)


def reading(value: str = "24.5 bar", minute: int = 0, test_point: str = CHARGE, **extra: Any) -> Reading:
    return Reading(
        test_point=test_point,
        value=value,
        entered=value,
        taken_at=T0 + dt.timedelta(minutes=minute),
        gauge="g60",
        **extra,
    )


def laptop(folder: Path, name: str) -> SqliteVisitStore:
    folder.mkdir(parents=True, exist_ok=True)
    return SqliteVisitStore(folder / f"{name}.sqlite3")


def state(store: SqliteVisitStore) -> dict[str, Any]:
    """Everything a technician could see, in an order that does not depend on arrival order."""
    out: dict[str, Any] = {}
    for summary in store.list_visits():
        v = store.get_visit(summary.id)
        data = v.model_dump(mode="json")
        data["readings"] = sorted(data["readings"], key=lambda r: r["id"])
        out[v.id] = data
    return out


def kit_gauge(item_id: str = "k60", **extra: Any) -> KitItem:
    """An invented shop gauge: 0..60 bar, class 1.0, a made-up serial."""
    fields: dict[str, Any] = {
        "id": item_id,
        "kind": "pressure_gauge",
        "label": "charge gauge",
        "full_scale": "60 bar",
        "accuracy_class": 1.0,
        "serial": "RHF-G-0060",
        "calibration_due": dt.date(2026, 9, 30),
    }
    fields.update(extra)
    return KitItem(**fields)
