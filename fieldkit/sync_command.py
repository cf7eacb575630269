"""``fieldkit server init URL``, ``fieldkit server add-technician NAME`` and ``fieldkit sync``.

Kept out of cli.py so the command line starts without psycopg; see the README section
"A shop server for several technicians".
"""

from __future__ import annotations

import argparse
import sys
from typing import Any

from fieldkit.errors import FieldkitError


def add_parsers(sub: Any) -> None:
    srv = sub.add_parser("server", help="set up the shop server (PostgreSQL) that laptops sync with")
    ss = srv.add_subparsers(dest="server_command", metavar="ACTION")
    init = ss.add_parser(
        "init", help="create or upgrade fieldkit's tables, roles and access rules in a database"
    )
    init.add_argument("url", help="the database, as its owner: postgresql://USER@HOST/DB or 'service=NAME'")
    add = ss.add_parser(
        "add-technician", help="create a login that may add to its own visits and kit and read all"
    )
    add.add_argument("name", help="login name: lower-case letters, digits and _")
    add.add_argument("--supervisor", action="store_true", help="may add to every technician's visits and kit")
    add.add_argument(
        "--url", help="the database as its owner (default: $FIELDKIT_SERVER or libpq's PG* settings)"
    )

    sy = sub.add_parser(
        "sync", help="send this laptop's new records to the shop server and fetch the others'"
    )
    sy.add_argument("--url", help="the shop server (default: $FIELDKIT_SERVER or libpq's PG* settings)")
    sy.add_argument(
        "--keep-profile",
        metavar="ID=VERSION",
        action="append",
        default=[],
        help="resolve a machine profile conflict by keeping one version (as the sync listed it)",
    )


def run_server(args: argparse.Namespace) -> int:
    from fieldkit.store.pg_server import add_technician, init_server, server_conninfo

    if args.server_command == "init":
        before, after = init_server(args.url)
        if before == after:
            print(f"the shop server is already at layout {after}; nothing to do")
        else:
            print(
                f"the shop server is set up (layout {before} → {after}); add logins with 'fieldkit server "
                "add-technician NAME'"
            )
        return 0
    if args.server_command == "add-technician":
        password = add_technician(server_conninfo(args.url), args.name, supervisor=args.supervisor)
        kind = "supervisor" if args.supervisor else "technician"
        print(
            f"created the {kind} login '{args.name}' with the password below (shown once; not stored by "
            "fieldkit):"
        )
        print(password)
        print(
            "on that laptop put it in ~/.pgpass or a service file (see the README), never in a project file"
        )
        return 0
    raise FieldkitError("say 'fieldkit server init URL' or 'fieldkit server add-technician NAME'")


def run_sync(args: argparse.Namespace) -> int:
    from fieldkit.profile_sync import keep, sync_with_profiles
    from fieldkit.settings import user_profiles_dir
    from fieldkit.store import open_store
    from fieldkit.store.pg_server import ShopServer, server_conninfo
    from fieldkit.store.replica import Replica

    conninfo = server_conninfo(args.url)
    folder = user_profiles_dir()
    store = open_store(args.store)
    try:
        for choice in args.keep_profile:
            profile_id, _, version = choice.partition("=")
            kept = keep(Replica(store), folder, profile_id.strip(), version.strip())
            print(f"profile '{kept.profile_id}': kept version {version.strip()} (recorded as {kept.id})")
        with ShopServer(conninfo) as server:

            def progress(phase: str, done: int, total: int) -> None:
                word = "sending" if phase == "up" else "receiving"
                print(f"\r{word} {done}/{total}", end="", file=sys.stderr, flush=True)

            report, profiles = sync_with_profiles(
                store, server, folder, progress=progress if sys.stderr.isatty() else None
            )
        if sys.stderr.isatty():
            print(file=sys.stderr)
        for line in (*report.lines(), *profiles.lines()):
            print(line)
    finally:
        store.close()
    return 0
