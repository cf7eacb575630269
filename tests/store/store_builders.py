"""Invented demo data for the store tests: a fictional hire company, machine and technician.

Nothing here is a real company, person or machine; the numbers are made up for the tests.
"""

from __future__ import annotations

import datetime as dt
import hashlib
import sqlite3
from datetime import UTC
from pathlib import Path
from typing import Any

from fieldkit.model.profile import MachineProfile
from fieldkit.model.visit import Condition, FunctionState, Gauge, Reading, Visit

MACHINE = "demo-crawler-7"
CHARGE = "drive.charge"
CASE_DRAIN = "drive.case_drain"
LOOP_A = "drive.loop_a"

T0 = dt.datetime(2024, 5, 14, 8, 30, tzinfo=UTC)


def gauge(gauge_id: str = "g60", full_scale: str = "60 bar", accuracy_class: float = 1.0) -> Gauge:
    return Gauge(id=gauge_id, label="test-kit gauge", full_scale=full_scale, accuracy_class=accuracy_class)


def reading(test_point: str = CHARGE, value: str = "24.5 bar", minute: int = 0, **extra: Any) -> Reading:
    extra.setdefault(
        "condition", Condition(function=FunctionState.NEUTRAL, speed="1800 rpm", oil_temperature="52 °C")
    )
    return Reading(
        test_point=test_point, value=value, entered=value, taken_at=T0 + dt.timedelta(minutes=minute), **extra
    )


def visit(**extra: Any) -> Visit:
    fields: dict[str, Any] = {
        "job_number": "BPH-0417",
        "customer": "Brackenfield Plant Hire",
        "site": "Quarry Lane depot",
        "machine": MACHINE,
        "technician": "R. Vellacott",
        "date": dt.date(2024, 5, 14),
        "gauges": [gauge()],
    }
    fields.update(extra)
    return Visit(**fields)


def visit_with_readings(count: int = 12, **extra: Any) -> Visit:
    readings = [reading(CHARGE, f"{22 + i % 5}.5 bar", minute=i, gauge="g60") for i in range(count)]
    return visit(readings=readings, **extra)


def profile() -> MachineProfile:
    return MachineProfile.model_validate(
        {
            "id": MACHINE,
            "name": "Demo crawler 7 (invented)",
            "rated_speed": "2200 rpm",
            "rated_max_pressure": "350 bar",
            "circuits": [
                {
                    "id": "drive",
                    "name": "Travel drive",
                    "kind": "closed_loop_drive",
                    "parameters": {"charge_relief_setting": "24 bar", "pump_displacement": "71 cc/rev"},
                    "test_points": [
                        {
                            "id": "charge",
                            "role": "charge_pressure",
                            "expected": [
                                {"low": "20 bar", "high": "28 bar", "source": "invented demo figure"}
                            ],
                        },
                        {"id": "case_drain", "role": "pump_case_drain_flow"},
                        {"id": "loop_a", "role": "loop_a_pressure"},
                    ],
                }
            ],
        }
    )


def digest(path: Path) -> str:
    """The file's bytes as a hash, to prove a refused file was not touched."""
    return hashlib.sha256(path.read_bytes()).hexdigest()


def raw_rows(path: Path) -> tuple[int, int]:
    """Visit and reading rows counted with plain sqlite3, independent of the store's own code."""
    conn = sqlite3.connect(path.resolve().as_uri() + "?mode=ro", uri=True)
    try:
        return (
            conn.execute("SELECT count(*) FROM visit").fetchone()[0],
            conn.execute("SELECT count(*) FROM reading").fetchone()[0],
        )
    finally:
        conn.close()


def integrity(path: Path) -> list[str]:
    conn = sqlite3.connect(path)
    try:
        return [row[0] for row in conn.execute("PRAGMA integrity_check")]
    finally:
        conn.close()
