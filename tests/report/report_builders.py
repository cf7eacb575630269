"""Visits for the job-card tests, built from the invented demo visits in sample_readings/.

Everything here is demo data: the hostile job numbers and notes are made up to attack the
writers (table pipes, Markdown links, control characters, symbols outside Latin-1).
"""

from __future__ import annotations

from datetime import timedelta
from pathlib import Path

from fieldkit.diagnosis.results import Diagnosis
from fieldkit.model.profile import MachineProfile
from fieldkit.model.visit import Visit
from fieldkit.session import Workbench
from fieldkit.units import Kind, kind_of

ROOT = Path(__file__).resolve().parents[2]
VISITS = ROOT / "sample_readings" / "visits"
SAMPLE_VISITS = sorted(VISITS.glob("*.json"))
WORN_CHARGE_PUMP = VISITS / "fellborer-charge-pump-worn.json"

#: A note a technician might type on a tablet: symbols the PDF core fonts cannot print.
UNICODE_NOTE = "Δp ≥ 3 bar ± 0.2 °C µm"
#: Text that a Markdown or markup reader would act on if it were not escaped.
HOSTILE = "J|17 *urgent* [x](y) <b>bold</b> `tick` _under_ \\ end|"


def open_bench(folder: Path) -> Workbench:
    return Workbench.open(folder / "visits.sqlite3")


def load(bench: Workbench, path: Path = WORN_CHARGE_PUMP) -> tuple[Visit, MachineProfile]:
    return bench.resolve(str(path))


def diagnosed(bench: Workbench, visit: Visit, profile: MachineProfile) -> Diagnosis:
    return bench.diagnose(visit, profile)


def with_text(visit: Visit, **fields: str) -> Visit:
    """The visit with header or note fields replaced (no re-validation: the tests feed odd text)."""
    return visit.model_copy(update=fields)


def with_reading_note(visit: Visit, index: int, note: str) -> Visit:
    readings = list(visit.readings)
    readings[index] = readings[index].model_copy(update={"note": note})
    return visit.model_copy(update={"readings": readings})


def many_readings(visit: Visit, count: int = 40) -> Visit:
    """The visit's readings taken again in turn until there are ``count``, each pass a few per
    cent apart (temperatures and speeds unchanged), as a long morning of re-reading would give."""
    current = visit.current_readings()
    start = min(r.taken_at for r in current)
    factors = (1.0, 0.96, 1.04, 0.92, 1.08)
    readings = []
    for i in range(count):
        base = current[i % len(current)]
        factor = factors[(i // len(current)) % len(factors)]
        value = base.value
        if kind_of(value) not in (Kind.TEMPERATURE, Kind.SPEED):
            value = value * factor
        readings.append(
            base.model_copy(
                update={
                    "id": f"m{i:03d}",
                    "value": value,
                    "taken_at": start + timedelta(minutes=2 * i),
                    "replaces": None,
                    "after_repair": False,
                }
            )
        )
    return visit.model_copy(update={"readings": readings, "id": f"{visit.id}-x{count}"})
