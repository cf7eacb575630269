"""The ``fieldkit`` command. With no sub-command it opens the terminal UI on the user's store.

Each sub-command imports what it needs when it runs, so ``fieldkit convert`` does not pay for
the PDF library and the UI starts without the simulator.
"""

from __future__ import annotations

import argparse
import contextlib
import errno
import json
import os
import sys
from collections.abc import Callable, Iterator, Sequence
from pathlib import Path
from typing import TYPE_CHECKING

from fieldkit import __version__
from fieldkit.errors import FieldkitError
from fieldkit.plaintext import SafeStream

if TYPE_CHECKING:
    from fieldkit.session import Workbench


def _parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="fieldkit",
        description="Log hydraulic test-point readings, check them with physics, rank likely faults, print "
        "the job card.",
    )
    p.add_argument("--version", action="version", version=f"fieldkit {__version__}")
    p.add_argument(
        "--store", metavar="PATH", help="visit store file (default: $FIELDKIT_STORE or the user data folder)"
    )
    p.add_argument(
        "--units",
        choices=["metric", "si", "us"],
        help="display units: bar, MPa or psi (default: your setting)",
    )
    p.add_argument("--decimal-comma", action="store_true", help="read '2,500' as two and a half")
    p.add_argument(
        "--profiles",
        metavar="DIR",
        action="append",
        type=Path,
        default=[],
        help="another folder of machine profiles (may repeat)",
    )
    p.add_argument(
        "--rules", metavar="DIR", type=Path, help="another rules folder (packs, faults, cautions, templates)"
    )
    sub = p.add_subparsers(dest="command", metavar="COMMAND")

    sub.add_parser("demo", help="open the terminal UI on the bundled demo visits (a separate demo store)")

    c = sub.add_parser(
        "convert", help='convert a value as a technician writes it, e.g. convert "3,500 psi" bar'
    )
    c.add_argument("value", help="the value as written, with its unit, e.g. '3,500 psi' or '7 inHg vac'")
    c.add_argument("unit", help="the unit to show it in, e.g. bar, MPa, psi, L/min, gpm, °C")

    s = sub.add_parser("schema", help="print the JSON schema of a visit or a machine profile")
    s.add_argument(
        "what",
        choices=["visit", "profile"],
        nargs="?",
        default="visit",
        help="which schema: a saved visit (default) or a machine profile",
    )

    v = sub.add_parser("visits", help="list the visits in the store")
    v.add_argument("--status", choices=["open", "closed"], help="only open or only closed visits")
    v.add_argument("--machine", metavar="ID", help="only the visits to this machine (its profile id)")

    tz = sub.add_parser("time-zone", help="show or set the time zone a visit's job card prints its times in")
    tz.add_argument("visit", help="visit id in the store")
    tz.add_argument("zone", nargs="?", help="an IANA name such as Europe/London; UTC for UTC")

    e = sub.add_parser("export", help="write a visit (with its machine profile) to a JSON file")
    e.add_argument("visit", help="visit id in the store")
    e.add_argument("--out", type=Path, default=Path("."), help="folder to write into (default: here)")

    i = sub.add_parser("import", help="import a visit JSON file, or a CSV of readings into a visit")
    i.add_argument("file", type=Path, help="a visit JSON file (an export) or a CSV of readings")
    i.add_argument("--visit", help="for a CSV: the visit id the readings belong to")
    i.add_argument(
        "--as-new",
        action="store_true",
        help="import a visit under fresh ids (when it is already in the store)",
    )
    i.add_argument(
        "--again",
        action="store_true",
        help="for a CSV: import its readings even though the visit already holds them (a repeat on purpose)",
    )

    d = sub.add_parser("diagnose", help="findings, ranked faults, next test and cautions for a visit")
    d.add_argument("visit", help="a visit JSON file, or the id of a visit in the store")
    d.add_argument(
        "--json", action="store_true", help="machine-readable output (shape documented in the README)"
    )

    r = sub.add_parser("rules", help="rule pack tools")
    rs = r.add_subparsers(dest="rules_command", metavar="ACTION")
    rc = rs.add_parser(
        "check", help="lint rule packs: unknown names, dimension mismatches, rules that never fire"
    )
    rc.add_argument(
        "folder",
        nargs="?",
        type=Path,
        help="the rules folder to check (default: --rules, else the bundled rules)",
    )

    rep = sub.add_parser("report", help="write the job card for a visit")
    rep.add_argument("visit", help="a visit JSON file, or the id of a visit in the store")
    rep.add_argument(
        "--pdf", type=Path, metavar="FILE", help="write the PDF job card here ('-': standard output)"
    )
    rep.add_argument(
        "--text",
        type=Path,
        metavar="FILE",
        help="write the plain-text job card (80 columns) here ('-': standard output)",
    )
    rep.add_argument(
        "--markdown",
        type=Path,
        metavar="FILE",
        help="write the Markdown job card here ('-': standard output)",
    )
    rep.add_argument("--letter", action="store_true", help="US Letter paper (default A4)")
    rep.add_argument("--fixed-date", metavar="ISO", help="creation date to write (for byte-identical output)")

    sim = sub.add_parser(
        "simulate", help="write a visit a gauge would show on a machine, healthy or with one fault"
    )
    sim.add_argument("profile", help="machine profile id or TOML file")
    sim.add_argument("--fault", metavar="ID", help="the fault to inject (default: a healthy machine)")
    sim.add_argument(
        "--severity", type=float, default=1.0, help="how far the fault has gone, 0 to 1 (default 1)"
    )
    sim.add_argument("--seed", type=int, default=0, help="seed of the gauge noise, for a repeatable visit")
    sim.add_argument(
        "--out", type=Path, metavar="FILE", help="write the visit JSON here (default: standard output)"
    )

    ev = sub.add_parser(
        "evaluate", help="simulate many visits per fault and measure how often the diagnosis is right"
    )
    ev.add_argument(
        "--cases",
        type=int,
        default=None,
        help="simulated visits per fault and machine (default 20; with --double, per pair, default 2)",
    )
    ev.add_argument("--seed", type=int, default=1, help="seed of the simulation, for repeatable figures")
    ev.add_argument(
        "--templates", action="store_true", help="measure machines of one circuit template each (no figures)"
    )
    ev.add_argument(
        "--double",
        action="store_true",
        help="two faults at once: --cases visits for every pair of faults each machine can show "
        "(default 2 per pair), and how often the engine names the pair",
    )

    from fieldkit.kit_command import add_parsers as add_kit_parsers
    from fieldkit.machine_command import add_parsers as add_machine_parsers
    from fieldkit.reading_command import add_parsers as add_reading_parsers
    from fieldkit.sync_command import add_parsers

    add_machine_parsers(sub)
    add_reading_parsers(sub)
    add_parsers(sub)
    add_kit_parsers(sub)
    return p


#: Commands that hand the terminal to the UI: their output is the UI's own, never wrapped.
UI_COMMANDS = (None, "demo")


@contextlib.contextmanager
def _safe_streams() -> Iterator[Callable[[], None]]:
    """Standard output and error pass every character through :func:`fieldkit.plaintext.plain`
    while a command runs: a customer name holding an escape sequence or a bidi override reaches
    the terminal written out (``\\x1b``), whichever command printed it. Yields a function that
    puts the real streams back early (before the terminal UI starts)."""
    out, err = sys.stdout, sys.stderr

    def restore() -> None:
        sys.stdout, sys.stderr = out, err

    sys.stdout, sys.stderr = SafeStream(out), SafeStream(err)
    try:
        yield restore
    finally:
        with contextlib.suppress(Exception):
            sys.stdout.flush()
        restore()


def main(argv: Sequence[str] | None = None) -> int:
    with _safe_streams() as restore:
        args = _parser().parse_args(argv)
        if args.command in UI_COMMANDS:
            restore()
        try:
            return _dispatch(args)
        except FieldkitError as exc:
            print(f"fieldkit: {exc}", file=sys.stderr)
            return 2
        except KeyboardInterrupt:
            return 130
        except BrokenPipeError:  # output piped into `head` and closed early: not an error
            os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
            return 0
        except OSError as exc:
            print(f"fieldkit: {os_error_text(exc)}", file=sys.stderr)
            return 1
        except Exception as exc:  # the last guard: one sentence and a log file, never a traceback
            from fieldkit.crash_log import plain_message, write_crash_log

            doing = f"running 'fieldkit {args.command}'"
            print(f"fieldkit: {plain_message(exc, write_crash_log(exc, doing), doing)}", file=sys.stderr)
            return 1


def os_error_text(exc: OSError) -> str:
    """One line for a failed file operation: which path, and what went wrong in plain words."""
    name = str(exc.filename) if exc.filename is not None else ""
    if len(name) > 80:  # a path too long to use is too long to print whole
        name = f"{name[:40]}…{name[-30:]} ({len(name)} characters)"
    if exc.errno == errno.ENAMETOOLONG:
        what = (
            "the path is too long for this file system (a name holds at most 255 bytes); choose a shorter one"
        )
    else:
        what = exc.strerror or str(exc)
    return f"{name}: {what}" if name else what


def _workbench(args: argparse.Namespace, store: str | None = None, demo: bool = True) -> Workbench:
    from fieldkit.session import Workbench
    from fieldkit.settings import Settings

    settings = Settings.load()
    if args.units:
        settings = settings.model_copy(update={"display": args.units})
    if args.decimal_comma:
        settings = settings.model_copy(update={"decimal_comma": True})
    bench = Workbench.open(
        store or args.store, profile_dirs=args.profiles, rules_folder=args.rules, settings=settings, demo=demo
    )
    if args.command not in UI_COMMANDS:  # the UI shows them on its start screen
        for line in bench.library.problem_lines():
            print(f"fieldkit: warning: {line}", file=sys.stderr)
        if bench.store.read_only:
            print(
                f"fieldkit: note: the store {bench.store.path} is read-only here; "
                "it is opened for reading only",
                file=sys.stderr,
            )
    return bench


def _dispatch(args: argparse.Namespace) -> int:
    cmd = args.command
    if cmd is None:
        return _run_ui(args, demo=False)
    if cmd == "demo":
        return _run_ui(args, demo=True)
    if cmd == "convert":
        return _convert(args)
    if cmd == "schema":
        return _schema(args)
    if cmd == "rules":
        return _rules(args)
    if cmd == "simulate":
        from fieldkit.simulate.command import run_simulate

        return run_simulate(args)
    if cmd == "evaluate":
        from fieldkit.simulate.command import run_evaluate

        return run_evaluate(args)
    if cmd == "machine":
        from fieldkit.machine_command import run_machine

        return run_machine(args)
    if cmd in ("server", "sync"):
        from fieldkit.sync_command import run_server, run_sync

        return run_server(args) if cmd == "server" else run_sync(args)
    bench = _workbench(args)
    try:
        if cmd == "visits":
            return _visits(bench, args)
        if cmd == "export":
            return _export(bench, args)
        if cmd == "time-zone":
            return _time_zone(bench, args)
        if cmd == "import":
            return _import(bench, args)
        if cmd == "diagnose":
            return _diagnose(bench, args)
        if cmd == "reading":
            from fieldkit.reading_command import run_reading

            return run_reading(bench, args)
        if cmd == "kit":
            from fieldkit.kit_command import run_kit

            return run_kit(bench, args)
        if cmd == "report":
            from fieldkit.report.command import run_report

            return run_report(bench, args)
    finally:
        bench.close()
    raise FieldkitError(f"unknown command {cmd}")


def _run_ui(args: argparse.Namespace, demo: bool) -> int:
    from fieldkit.session import demo_store_is_stale, demo_store_path, retire_demo_store, seed_demo

    store = args.store
    if demo:
        store = str(demo_store_path())
    bench = _workbench(args, store, demo=demo)  # the user's own UI lists only the user's machines
    try:
        if demo:
            if demo_store_is_stale(bench.store, bench.library):
                bench.close()
                kept = retire_demo_store(demo_store_path())
                print(
                    f"fieldkit: the demo store was made by an earlier version; it is kept as {kept} "
                    "and a fresh demo is built",
                    file=sys.stderr,
                )
                bench = _workbench(args, store, demo=demo)
            seed_demo(bench.store)
        from fieldkit.tui.app import make_app

        app = make_app(bench, demo=demo)
        app.run()
    finally:
        bench.close()
    code = getattr(app, "return_code", 0)
    if code:
        crash = getattr(app, "crash", None)
        if crash is not None:
            from fieldkit.crash_log import plain_message

            error, log = crash
            print(f"fieldkit: {plain_message(error, log, 'running the terminal UI')}", file=sys.stderr)
        return code
    return 0


def _convert(args: argparse.Namespace) -> int:
    from fieldkit.errors import ImpossibleValueError
    from fieldkit.model.bounds import impossible
    from fieldkit.units import convert, format_value, kind_of, parse_value

    parsed = parse_value(args.value)
    # The same physical bounds a reading meets: '-5 bar abs' is no pressure at all.
    why = impossible(parsed.quantity, parsed.kind, parsed.reference)
    if why:
        raise ImpossibleValueError(f"'{parsed.text}' refused: {why}")
    shown = convert(parsed.quantity, args.unit)
    text = format_value(shown, kind=kind_of(shown), spelling=args.unit)
    ref = f" ({parsed.reference.value})" if parsed.reference and parsed.reference.value != "gauge" else ""
    print(f"{text}{ref}")
    return 0


def _schema(args: argparse.Namespace) -> int:
    from fieldkit.model.profile import MachineProfile
    from fieldkit.model.visit import Visit

    model = Visit if args.what == "visit" else MachineProfile
    schema = model.model_json_schema()
    schema["$comment"] = (
        f"fieldkit {args.what} schema, version {model.model_fields['schema_version'].default}"
    )
    print(json.dumps(schema, indent=2, ensure_ascii=False))
    return 0


def _rules(args: argparse.Namespace) -> int:
    if args.rules_command != "check":
        raise FieldkitError("say 'fieldkit rules check [FOLDER]'")
    from fieldkit.diagnosis.engine import Knowledge
    from fieldkit.diagnosis.lint import problems
    from fieldkit.resources import rules_dir

    folder = args.folder or args.rules or rules_dir()
    from fieldkit.diagnosis.actions import load_actions
    from fieldkit.diagnosis.catalogue import load_cautions, load_faults
    from fieldkit.diagnosis.rulepack import load_packs
    from fieldkit.model.loading import load_templates

    faults = load_faults(folder / "faults.toml")
    cautions = load_cautions(folder / "cautions.toml")
    knowledge = Knowledge(
        load_packs(folder), faults, cautions, folder, load_actions(folder, faults, cautions)
    )
    if (folder / "templates").is_dir():
        load_templates(folder / "templates")
    found = problems(knowledge)
    for p in found:
        print(p)
    errors = sum(p.error for p in found)
    print(
        f"{len(knowledge.rules)} rules, {len(knowledge.faults)} faults, {len(knowledge.cautions)} cautions, "
        f"{len(knowledge.actions)} action tests: "
        f"{errors} errors, {len(found) - errors} warnings"
    )
    return 1 if errors else 0


def _visits(bench: Workbench, args: argparse.Namespace) -> int:
    rows = bench.store.list_visits(status=args.status, machine=args.machine)
    if not rows:
        print("no visits in the store")
        return 0
    print(f"{'id':<14}{'job':<14}{'date':<12}{'status':<8}{'readings':>8}  machine / customer")
    for s in rows:
        print(
            f"{s.id:<14}{s.job_number[:13]:<14}{s.date.isoformat():<12}{s.status.value:<8}"
            f"{s.reading_count:>8}  "
            f"{s.machine} / {s.customer}"
        )
    return 0


def _time_zone(bench: Workbench, args: argparse.Namespace) -> int:
    from fieldkit.model.visit import check_time_zone

    visit = bench.store.get_visit(args.visit)
    if args.zone is None:
        print(visit.time_zone or "UTC")
        return 0
    try:
        zone = "" if args.zone.strip().upper() == "UTC" else check_time_zone(args.zone)
    except ValueError as exc:
        raise FieldkitError(f"time zone not changed: {exc}") from None
    bench.store.update_visit(visit.id, time_zone=zone)
    print(f"visit {visit.id}: the job card's times are in {zone or 'UTC'}")
    return 0


def _export(bench: Workbench, args: argparse.Namespace) -> int:
    from fieldkit.store.transfer import export_file_name, export_visit_json, write_export

    visit = bench.store.get_visit(args.visit)
    profile = bench.library.get(visit.machine)
    text = export_visit_json(visit, profile, bench.kit_for_export(visit))
    path = write_export(text, args.out, export_file_name(visit))
    print(f"wrote {path}")
    _kept, left_out = visit.without_unreadable()
    if left_out:
        print(
            f"left out {len(left_out)} reading(s) whose stored value cannot be read "
            f"({', '.join(f'{r.id} {r.entered!r}' for r in left_out)}); they stay in this store",
            file=sys.stderr,
        )
    return 0


def _import(bench: Workbench, args: argparse.Namespace) -> int:
    path: Path = args.file
    if path.suffix.lower() == ".csv":
        if not args.visit:
            raise FieldkitError("a CSV of readings needs --visit ID (the visit they belong to)")
        visit, readings = bench.import_readings_csv(args.visit, path, again=args.again)
        print(f"imported {len(readings)} readings into visit {visit.id}")
        return 0
    from fieldkit.session import read_visit_file

    visit, _embedded = read_visit_file(path)
    # A visit can only be worked on with its machine's profile installed: refuse before storing.
    if not bench.library.has(visit.machine):
        from fieldkit.settings import user_profiles_dir

        raise FieldkitError(
            f"{path}: machine profile '{visit.machine}' is not installed; put its TOML file in "
            f"{user_profiles_dir()} (or pass --profiles DIR) and import again"
        )
    stored, kit_added = bench.import_visit_file(path, as_new=args.as_new)
    print(f"imported visit {stored.id} ({stored.job_number}, {len(stored.readings)} readings)")
    if kit_added:
        print(f"added to the kit: {', '.join(kit_added)}")
    return 0


def _diagnose(bench: Workbench, args: argparse.Namespace) -> int:
    visit, profile = bench.resolve(args.visit)
    result = bench.diagnose(visit, profile)
    if args.json:
        print(json.dumps(result.to_json(), indent=2, ensure_ascii=False))
        return 0
    from fieldkit.report.console import print_diagnosis

    print_diagnosis(result, visit, profile)
    return 0
