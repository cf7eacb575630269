"""Item 8 of issue 10: one broken machine profile file stops nothing else.

The fuzz: every key of a bundled profile given a value of the wrong type (a number, a string,
a list, a table, a boolean, a huge number), plus files cut short, binary junk, an empty file and
a second file with an id already used. Each must be reported with its file, key and line, and
left out; the other machines, `fieldkit visits`, `diagnose`, `machine list` and the start
screen keep working.
"""

from __future__ import annotations

import copy
import shutil
import tomllib
from collections.abc import Iterator
from pathlib import Path
from typing import Any

import pytest

from fieldkit.cli import main
from fieldkit.errors import DataFileError
from fieldkit.model.loading import ProfileLibrary, load_profile, load_templates
from fieldkit.model.toml_writer import dumps
from fieldkit.model.visit import Visit
from fieldkit.resources import rules_dir, samples_dir
from fieldkit.settings import user_profiles_dir
from fieldkit.store import open_store

SOURCE = samples_dir() / "profiles" / "tarnhollow-fellborer.toml"
WRONG: list[Any] = [12345, "junk", [1, 2], {"a": 1}, True, 1e308, 10**30, []]
DEMO_VISIT = samples_dir() / "visits" / "demo-open-visit.json"


def _paths(node: Any, prefix: tuple[Any, ...] = ()) -> Iterator[tuple[Any, ...]]:
    if prefix:
        yield prefix
    if isinstance(node, dict):
        for k, v in node.items():
            yield from _paths(v, (*prefix, k))
    elif isinstance(node, list):
        for i, v in enumerate(node):
            yield from _paths(v, (*prefix, i))


def _mutated(raw: dict[str, Any], path: tuple[Any, ...], value: Any) -> dict[str, Any]:
    data = copy.deepcopy(raw)
    node = data
    for p in path[:-1]:
        node = node[p]
    node[path[-1]] = value
    return data


def fuzz_cases() -> list[tuple[str, str]]:
    """(name, file text): every key of the Fellborer profile with each wrong value."""
    raw = tomllib.loads(SOURCE.read_text(encoding="utf-8"))
    out = []
    for path in _paths(raw):
        for value in WRONG:
            out.append((f"{'.'.join(map(str, path))}={value!r}"[:80], dumps(_mutated(raw, path, value))))
    return out


def damaged_files() -> dict[str, bytes]:
    text = SOURCE.read_bytes()
    return {
        "cut-in-half": text[: len(text) // 2],
        "cut-mid-string": text[: text.index(b"Fellborer") + 4],
        "binary-junk": bytes(range(256)) * 8,
        "empty": b"",
        "only-a-comment": b"# nothing here yet\n",
        "huge-numbers": text.replace(b'rated_speed = "2200 rpm"', b'rated_speed = "1e400 rpm"'),
        "huge-integer": text.replace(b"speed_tolerance_pct = 5", b"speed_tolerance_pct = " + b"9" * 400),
        "wrong-type-top": text.replace(b'name = "Fellborer drill rig"', b"name = 12"),
        "utf16": SOURCE.read_text(encoding="utf-8").encode("utf-16"),
        "same-id-twice": text,  # a copy under another name: its id is already used
    }


def test_every_fuzzed_profile_is_refused_with_file_key_and_line_or_loads(tmp_path: Path) -> None:
    templates = load_templates(rules_dir() / "templates")
    cases = fuzz_cases()
    refused = loaded = 0
    unnamed: list[str] = []
    for name, text in cases:
        path = tmp_path / "fuzzed.toml"
        path.write_text(text, encoding="utf-8")
        try:
            load_profile(path, templates)
            loaded += 1
        except DataFileError as exc:  # any other exception fails the test with its traceback
            refused += 1
            if exc.path != str(path) or exc.key is None or exc.line is None or not exc.detail:
                unnamed.append(f"{name}: {exc}")
    assert unnamed == []
    assert refused > 1000 and len(cases) == refused + loaded  # the fuzz reached deep keys


@pytest.mark.parametrize("name", list(damaged_files()))
def test_a_damaged_profile_file_is_left_out_and_named(tmp_path: Path, name: str) -> None:
    folder = tmp_path / "profiles"
    folder.mkdir()
    for other in (samples_dir() / "profiles").glob("*.toml"):
        shutil.copy(other, folder / other.name)
    broken = folder / f"zz-{name}.toml"
    broken.write_bytes(damaged_files()[name])
    lib = ProfileLibrary([folder], rules_dir() / "templates")
    assert lib.ids() == ["brindlecombe-pebblerun", "oskerfield-loamshifter", "tarnhollow-fellborer"]
    (problem,) = lib.problems
    assert problem.path == str(broken) and problem.detail
    assert lib.problem_lines() == [f"skipped the broken machine profile {problem}"]


@pytest.fixture
def broken_folder() -> Path:
    """The user's profile folder holding one broken file (a list where a test point id goes),
    and a store holding the demo's open visit."""
    folder = user_profiles_dir()
    folder.mkdir(parents=True)
    raw = tomllib.loads(SOURCE.read_text(encoding="utf-8"))
    raw["id"] = "my-rig"
    (folder / "my-rig.toml").write_text(dumps(_mutated(raw, ("circuits", 0, "test_points", 0, "id"), [1, 2])))
    with open_store(None) as store:
        store.import_visit(Visit.model_validate_json(DEMO_VISIT.read_text(encoding="utf-8")))
    return folder / "my-rig.toml"


@pytest.mark.parametrize(
    "argv",
    [
        ["visits"],
        ["diagnose", "rhs-25-0301"],
        ["machine", "list", "--demo"],
        ["reading", "list", "rhs-25-0301"],
    ],
    ids=lambda a: " ".join(a[:2]),
)
def test_commands_keep_working_and_warn_with_file_and_key(
    broken_folder: Path, argv: list[str], capsys: pytest.CaptureFixture[str]
) -> None:
    code = main(argv)
    out, err = capsys.readouterr()
    assert code == 0, err
    assert f"warning: skipped the broken machine profile {broken_folder}:" in err
    assert "[circuits.0.test_points.0.id]" in err and "must be a test point id" in err
    assert "Traceback" not in err and out.strip()


async def test_the_start_screen_works_and_shows_the_warning(broken_folder: Path) -> None:
    from textual.widgets import DataTable, Static

    from fieldkit.session import Workbench
    from fieldkit.tui.app import make_app

    bench = Workbench.open(None, demo=True)
    try:
        app = make_app(bench, demo=True)
        async with app.run_test(size=(120, 40)) as pilot:
            for _ in range(40):
                await pilot.pause()
                if app.screen.query("#start-msg"):
                    break
            message = app.screen.query_one("#start-msg", Static).content
            said = getattr(message, "plain", str(message))
            assert str(broken_folder) in said and "circuits.0.test_points.0.id" in said
            assert "Everything else works as usual" in said
            machines = app.screen.query_one("#machines", DataTable)
            assert machines.row_count == 3  # the demo machines, all there
            assert app.screen.query_one("#open-visits", DataTable).row_count >= 1
    finally:
        bench.close()
