"""Changes to a visit that the visit and start screens make from a dialog, without the UI:
each returns one sentence saying what happened."""

from __future__ import annotations

from pathlib import Path

from fieldkit.errors import FieldkitError
from fieldkit.session import Workbench
from fieldkit.store.csv_import import kinds_by_test_point, read_readings_csv
from fieldkit.tui.error_text import explain


def import_readings_csv(bench: Workbench, visit_id: str, path: Path) -> str:
    """Import a CSV of readings into a visit (all rows or none); a sentence saying what happened."""

    try:
        visit = bench.store.get_visit(visit_id)
        profile = bench.profile_for(visit)
        readings = read_readings_csv(
            path,
            test_points=kinds_by_test_point(profile),
            gauges={g.id for g in visit.gauges},
            decimal_comma=bench.settings.decimal_comma,
        )
        bench.store.add_readings(visit.id, readings)
    except FieldkitError as exc:
        return explain(exc, "✗ nothing imported")
    return f"✓ imported {len(readings)} readings from {path.name} into visit {visit.job_number}"
