"""``fieldkit machine new | check | show | list``: machine profiles from the command line.

User profiles live in the ``profiles`` folder of the user data folder, beside the store; the
bundled demo machines are listed only with ``--demo``.
"""

from __future__ import annotations

import argparse
import re
import sys
from pathlib import Path
from typing import Any

from fieldkit.errors import FieldkitError
from fieldkit.model.loading import ProfileLibrary, Templates, load_profile, load_templates
from fieldkit.model.machine_plan import plan_lines, skeleton
from fieldkit.model.profile import MachineProfile
from fieldkit.resources import rules_dir, samples_dir
from fieldkit.settings import save_profile_text, user_profiles_dir

_ID = re.compile(r"^[a-z0-9][a-z0-9_\-]*$")


def add_parsers(sub: Any) -> None:
    m = sub.add_parser("machine", help="machine profiles: new, check, show, list")
    ms = m.add_subparsers(dest="machine_command", metavar="ACTION")
    new = ms.add_parser("new", help="write a commented profile skeleton for chosen circuit templates")
    new.add_argument("id", help="machine id: lower case, digits, - and _")
    new.add_argument(
        "--template",
        "-t",
        action="append",
        default=[],
        metavar="T",
        help="a circuit template (repeat for several circuits, the same one twice for two of a kind)",
    )
    new.add_argument("--name", help="the machine's name (default: the id)")
    new.add_argument("--out", type=Path, help="file to write (default: ID.toml in your profiles folder)")
    check = ms.add_parser("check", help="validate a profile file; errors name file, line and key")
    check.add_argument("file", type=Path, help="the profile TOML file to check")
    show = ms.add_parser("show", help="print a machine's test plan with every range and its source")
    show.add_argument("machine", help="machine id, or a profile TOML file")
    show.add_argument("--demo", action="store_true", help="look among the bundled demo machines too")
    ls = ms.add_parser("list", help="list your machines (and the demo ones with --demo)")
    ls.add_argument("--demo", action="store_true", help="include the bundled demo machines")
    ms.add_parser("templates", help="list the circuit templates a machine can be built from")


def _templates(args: argparse.Namespace) -> Templates:
    folder = (args.rules or rules_dir()) / "templates"
    return load_templates(folder)


def library(args: argparse.Namespace, demo: bool) -> ProfileLibrary:
    """The user's machines (and the demo ones when asked); a demo machine is still found by id."""
    demo_folder = samples_dir() / "profiles"
    folders = ([demo_folder] if demo else []) + [user_profiles_dir(), *args.profiles]
    hidden = [] if demo else [demo_folder]
    lib = ProfileLibrary(folders, (args.rules or rules_dir()) / "templates", hidden_folders=hidden)
    for line in lib.problem_lines():
        print(f"fieldkit: warning: {line}", file=sys.stderr)
    return lib


def run_machine(args: argparse.Namespace) -> int:
    action = args.machine_command
    if action == "new":
        return _new(args)
    if action == "check":
        profile = load_profile(args.file, _templates(args))
        points = sum(len(c.test_points) for c in profile.circuits)
        ranges = sum(len(tp.expected) for c in profile.circuits for tp in c.test_points)
        print(
            f"{args.file}: machine '{profile.id}' is valid: {len(profile.circuits)} circuits, "
            f"{points} test points, {ranges} expected ranges"
        )
        for c in profile.circuits:
            if c.fitted_parts is None:
                print(
                    f"{args.file}: note: circuit '{c.id}' states no fitted_parts, so every optional "
                    "part is assumed fitted (its points, faults and cautions all apply); list the parts "
                    "it has, or fitted_parts = [] for none"
                )
        return 0
    if action == "show":
        for line in plan_lines(_profile(args)):
            print(line)
        return 0
    if action == "list":
        return _list(args)
    if action == "templates":
        for tid, (tmpl, _raw) in sorted(_templates(args).items()):
            print(f"{tid:<22}{tmpl.name}")
        return 0
    raise FieldkitError("say 'fieldkit machine new|check|show|list|templates' (see fieldkit machine -h)")


def _profile(args: argparse.Namespace) -> MachineProfile:
    given = Path(args.machine)
    if given.suffix == ".toml" and given.exists():
        return load_profile(given, _templates(args))
    return library(args, args.demo).get(args.machine)


def _new(args: argparse.Namespace) -> int:
    if not _ID.match(args.id) or len(args.id) > 60:
        raise FieldkitError(f"'{args.id}' cannot be a machine id: use lower case letters, digits, - and _")
    templates = _templates(args)
    if not args.template:
        raise FieldkitError(
            "name at least one circuit template with --template (known: " + ", ".join(sorted(templates)) + ")"
        )
    unknown = [t for t in args.template if t not in templates]
    if unknown:
        raise FieldkitError(f"unknown template {', '.join(unknown)} (known: {', '.join(sorted(templates))})")
    out: Path = args.out or user_profiles_dir() / f"{args.id}.toml"
    text = skeleton(templates, args.template, args.id, args.name or args.id)
    save_profile_text(out, text, replace=False)
    print(f"wrote {out}; fill in the maker's figures, then: fieldkit machine check {out}")
    return 0


def _list(args: argparse.Namespace) -> int:
    lib = library(args, args.demo)
    if not lib.ids():
        print(
            "no machines yet: 'fieldkit machine new' or the UI's new machine writes one to "
            f"{user_profiles_dir()}"
        )
        return 0
    for pid in lib.ids():
        p = lib.get(pid)
        kinds = ", ".join(c.template or c.kind.value for c in p.circuits)
        print(f"{pid:<28}{p.name[:30]:<32}{kinds}")
    return 0
