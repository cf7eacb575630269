"""Changes to a visit that the visit and start screens make from a dialog, without the UI:
each returns one sentence saying what happened."""

from __future__ import annotations

from pathlib import Path

from fieldkit.errors import FieldkitError
from fieldkit.session import Workbench
from fieldkit.tui.error_text import explain


def import_readings_csv(bench: Workbench, visit_id: str, path: Path) -> str:
    """Import a CSV of readings into a visit (all rows or none); a sentence saying what happened."""

    try:
        visit, readings = bench.import_readings_csv(visit_id, path)
    except FieldkitError as exc:
        return explain(exc, "✗ nothing imported")
    return f"✓ imported {len(readings)} readings from {path.name} into visit {visit.job_number}"
