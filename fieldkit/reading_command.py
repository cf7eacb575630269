"""``fieldkit reading list | correct | delete``: one visit's readings from the command line.

The readings trail of the UI (``^r``), for a technician at a terminal or a workshop clerk: list
every reading with its id and whether it stands, correct one (a new value that replaces it, with
the reason kept) or delete one (marked deleted, the reason kept in the visit's notes). Nothing is
overwritten: the store keeps the old value either way. It also reaches what the UI's plan cannot:
a stored reading the diagnosis skips (a value an earlier version stored that cannot be read, a
value of the wrong kind, a test point the machine's profile no longer has).
"""

from __future__ import annotations

import argparse
from typing import TYPE_CHECKING, Any

from fieldkit.diagnosis.measure import measure_visit
from fieldkit.errors import FieldkitError
from fieldkit.units import format_value

if TYPE_CHECKING:
    from fieldkit.model.visit import Reading, Visit
    from fieldkit.session import Workbench


def add_parsers(sub: Any) -> None:
    r = sub.add_parser("reading", help="list, correct or delete a visit's readings (history kept)")
    rs = r.add_subparsers(dest="reading_command", metavar="ACTION", required=True)
    ls = rs.add_parser("list", help="every reading of a visit with its id and whether it stands")
    ls.add_argument("visit", help="the id of a visit in the store")
    ls.add_argument("--all", action="store_true", help="show corrected and deleted readings too")
    fix = rs.add_parser("correct", help="replace a reading with a corrected value (the old one is kept)")
    fix.add_argument("visit", help="the id of a visit in the store")
    fix.add_argument("reading", help="the reading's id (see 'fieldkit reading list')")
    fix.add_argument("value", help="the corrected value as written, e.g. '24.5 bar'")
    fix.add_argument("--reason", required=True, help="why it is corrected; kept with the new value")
    fix.add_argument(
        "--confirm",
        action="store_true",
        help="save a possible but unlikely value (past the gauge, above the point's rating) as given",
    )
    rm = rs.add_parser("delete", help="mark a reading deleted (it stays in the record)")
    rm.add_argument("visit", help="the id of a visit in the store")
    rm.add_argument("reading", help="the reading's id (see 'fieldkit reading list')")
    rm.add_argument("--reason", required=True, help="why it is deleted; kept in the visit's notes")


def _status(r: Reading, visit: Visit, usable: set[str]) -> str:
    if r.deleted_at is not None:
        return "deleted"
    if any(x.replaces == r.id for x in visit.readings):
        return "corrected"
    if r.unreadable or r.id not in usable:
        return "SKIPPED"
    return "stands"


def run_reading(bench: Workbench, args: argparse.Namespace) -> int:
    action = args.reading_command
    visit = bench.store.get_visit(args.visit)
    if action == "list":
        return _list(bench, visit, show_all=args.all)
    if not args.reason.strip():
        raise FieldkitError("say why with --reason (e.g. 'misread the inner scale'); it is kept")
    old = next((r for r in visit.readings if r.id == args.reading), None)
    if old is None:
        raise FieldkitError(
            f"visit {visit.job_number} has no reading '{args.reading}' (see 'fieldkit reading list')"
        )
    if action == "correct" and not any(
        tp.id == old.test_point for _c, tp in bench.profile_for(visit).all_test_points()
    ):
        raise FieldkitError(
            f"reading {old.id} is at test point '{old.test_point}', which machine '{visit.machine}' no "
            "longer has; a correction stays at its point, so delete it (fieldkit reading delete) and "
            "enter the value at the right point"
        )
    if action == "delete":
        bench.store.delete_reading(visit.id, old.id, reason=args.reason)
        print(
            f"reading {old.id} ('{old.entered}' at {old.test_point}) is deleted; "
            "the reason is in the visit's notes"
        )
        return 0
    new = bench.record(
        visit.id,
        old.test_point,
        args.value,
        old.condition,
        gauge=old.gauge,
        note=old.note,
        replaces=old.id,
        confirmed=args.confirm,
        after_repair=old.after_repair,
        reason=args.reason.strip(),
    )
    print(
        f"reading {old.id} ('{old.entered}') is corrected to '{new.entered}' as reading {new.id}; "
        "both are kept"
    )
    return 0


def _list(bench: Workbench, visit: Visit, *, show_all: bool) -> int:
    measured, notes = measure_visit(visit, bench.profile_for(visit))
    usable = {m.reading.id for m in measured}
    rows = [r for r in visit.readings if show_all or _status(r, visit, usable) in ("stands", "SKIPPED")]
    if not rows:
        print(f"visit {visit.job_number} has no readings")
        return 0
    print(f"{'id':<14}{'status':<10}{'test point':<28}{'entered':<18}{'value':<16}taken (UTC)")
    for r in rows:
        value = "—" if r.unreadable else format_value(r.value, bench.system)
        print(
            f"{r.id:<14}{_status(r, visit, usable):<10}{r.test_point[:27]:<28}{r.entered[:17]:<18}"
            f"{value[:15]:<16}{r.taken_at:%Y-%m-%d %H:%M}"
        )
    for note in notes:
        print(f"note: {note}")
    return 0
