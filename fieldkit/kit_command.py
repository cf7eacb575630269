"""`fieldkit kit …`: the technician's instruments, kept once for every visit."""

from __future__ import annotations

import argparse
import datetime as dt
from typing import TYPE_CHECKING, Any

from pydantic import ValidationError

from fieldkit.errors import FieldkitError
from fieldkit.model.kit import InstrumentKind, KitItem, calibration_warning, parse_span
from fieldkit.tomlfile import validation_error

if TYPE_CHECKING:
    from fieldkit.session import Workbench

KINDS = [k.value for k in InstrumentKind]


def _date(text: str) -> dt.date:
    try:
        return dt.date.fromisoformat(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"'{text}' is not a date; write it as 2027-03-31") from None


def _item_options(p: argparse.ArgumentParser, *, required: bool) -> None:
    p.add_argument("--kind", choices=KINDS, required=required, help="what the instrument measures")
    p.add_argument(
        "--span",
        required=required,
        help="scale, its two ends as the dial is marked: '0..60 bar', '-1..15 bar' (compound), "
        "'30 inHg vac..0' or '-30..0 inHg' (vacuum), '0..150 L/min'",
    )
    p.add_argument(
        "--class",
        dest="accuracy_class",
        type=float,
        required=required,
        help="accuracy class: limit of error as %% of span (EN 837-1 for gauges)",
    )
    p.add_argument("--serial", help="the serial number on the instrument")
    p.add_argument("--due", type=_date, help="calibration due date, e.g. 2027-03-31")
    p.add_argument("--label", help="a short name of your own, e.g. 'small charge gauge'")


def add_parsers(sub: Any) -> None:
    k = sub.add_parser("kit", help="your instruments (gauges, thermometers, flow meters, tachometers)")
    ks = k.add_subparsers(dest="kit_command", metavar="ACTION", required=True)
    ls = ks.add_parser("list", help="the instruments in service (and retired ones with --all)")
    ls.add_argument("--all", action="store_true", help="list retired instruments too")
    add = ks.add_parser("add", help="add an instrument")
    add.add_argument("id", help="an id of your own for the instrument, e.g. g60")
    _item_options(add, required=True)
    ed = ks.add_parser("edit", help="change an instrument (new calibration date, serial, …)")
    ed.add_argument("id", help="the instrument's id")
    _item_options(ed, required=False)
    rt = ks.add_parser("retire", help="take an instrument out of service; old visits keep it")
    rt.add_argument("id", help="the instrument's id")
    use = ks.add_parser("use", help="put an instrument on a visit")
    use.add_argument("id", help="the instrument's id")
    use.add_argument("--visit", required=True, help="visit id")


def _fields(args: argparse.Namespace, decimal_comma: bool) -> dict[str, object]:
    out: dict[str, object] = {}
    if args.kind:
        out["kind"] = args.kind
    if args.span:
        try:
            start, top = parse_span(args.span, decimal_comma)
        except FieldkitError as exc:
            raise FieldkitError(
                f"--span {args.span!r}: {exc} (write the dial's ends, e.g. '0..60 bar', '-1..1.5 bar', "
                "'30 inHg vac..0')"
            ) from None
        out["scale_start"], out["full_scale"] = start, top
    for name in ("accuracy_class", "serial", "label"):
        if getattr(args, name) is not None:
            out[name] = getattr(args, name)
    if args.due is not None:
        out["calibration_due"] = args.due
    return out


def _line(item: KitItem, today: dt.date) -> str:
    due = item.calibration_due.isoformat() if item.calibration_due else "—"
    flag = " CALIBRATION OVERDUE" if calibration_warning(item, today) else ""
    retired = f" (retired {item.retired_on.isoformat()})" if item.retired_on else ""
    return (
        f"{item.id:<12}{item.kind.label:<16}{item.span_text():<22}class {item.accuracy_class:<5g}"
        f"{item.serial or '—':<14}due {due}{flag}{retired}"
    )


def run_kit(bench: Workbench, args: argparse.Namespace) -> int:
    today = dt.datetime.now(dt.UTC).date()
    store = bench.store
    action = args.kit_command
    if action == "list":
        items = store.kit(include_retired=args.all)
        if not items:
            print("the kit is empty: add an instrument with `fieldkit kit add`")
        for item in items:
            print(_line(item, today))
        return 0
    if action == "add":
        try:
            item = KitItem.model_validate({"id": args.id, **_fields(args, bench.settings.decimal_comma)})
        except ValidationError as exc:
            raise validation_error(exc, f"kit item {args.id}", None) from None
        print(f"added {_line(store.add_kit_item(item), today)}")
    elif action == "edit":
        fields = _fields(args, bench.settings.decimal_comma)
        if not fields:
            raise FieldkitError("nothing to change: give --span, --class, --serial, --due, --label or --kind")
        print(f"changed {_line(store.edit_kit_item(args.id, **fields), today)}")
    elif action == "retire":
        print(f"retired {_line(store.retire_kit_item(args.id), today)}")
    elif action == "use":
        visit, warning = bench.pick_gauge(args.visit, args.id)
        print(f"visit {visit.job_number} now has {args.id}")
        if warning:
            print(f"warning: {warning}")
    return 0
