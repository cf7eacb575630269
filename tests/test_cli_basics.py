"""The `fieldkit` command's basic plumbing: help, schemas, and moving visits in and out of a store.

Every test uses a store file inside its tmp folder (``--store``); the autouse fixture in
conftest.py keeps FIELDKIT_HOME away from the real user data folder as well.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest

from fieldkit.cli import main
from fieldkit.model.base import SCHEMA_VERSION
from fieldkit.model.visit import Visit
from fieldkit.resources import samples_dir
from fieldkit.store import open_store
from fieldkit.store.transfer import read_visit_json

COMMANDS = (
    "demo",
    "convert",
    "schema",
    "visits",
    "export",
    "import",
    "diagnose",
    "rules",
    "report",
    "simulate",
    "evaluate",
)
SAMPLE = samples_dir() / "visits" / "fellborer-no-fault.json"


@pytest.fixture
def store(tmp_path: Path) -> Path:
    return tmp_path / "van-laptop" / "visits.sqlite3"


def run(capsys: pytest.CaptureFixture[str], *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def sample_visit() -> Visit:
    return Visit.model_validate_json(SAMPLE.read_text(encoding="utf-8"))


def stored_visits(store: Path) -> list[Visit]:
    with open_store(store) as opened:
        return [opened.get_visit(s.id) for s in opened.list_visits()]


def test_help_lists_every_command(capsys: pytest.CaptureFixture[str]) -> None:
    with pytest.raises(SystemExit) as done:
        main(["--help"])
    assert done.value.code == 0
    out = capsys.readouterr().out
    assert out.startswith("usage: fieldkit")
    missing = [c for c in COMMANDS if f"    {c} " not in out]
    assert missing == []


@pytest.mark.parametrize(
    ("what", "must_have"),
    [
        ("visit", {"readings", "gauges", "job_number"}),
        ("profile", {"circuits", "rated_speed", "test_window"}),
    ],
)
def test_schema_prints_json_with_a_version_comment(
    capsys: pytest.CaptureFixture[str], what: str, must_have: set[str]
) -> None:
    code, out, _err = run(capsys, "schema", what)
    assert code == 0
    schema = json.loads(out)
    assert schema["$comment"] == f"fieldkit {what} schema, version {SCHEMA_VERSION}"
    assert schema["type"] == "object"
    assert schema["additionalProperties"] is False  # strict files: unknown keys are mistakes
    assert must_have <= set(schema["properties"])


def test_schema_is_a_valid_json_schema_that_sample_visits_satisfy(capsys: pytest.CaptureFixture[str]) -> None:
    jsonschema = pytest.importorskip("jsonschema")  # reference validator (PyPI), used as an oracle
    _code, out, _err = run(capsys, "schema", "visit")
    schema = json.loads(out)
    jsonschema.Draft202012Validator.check_schema(schema)
    validator = jsonschema.Draft202012Validator(schema)
    for path in sorted((samples_dir() / "visits").glob("*.json")):
        errors = [e.message for e in validator.iter_errors(json.loads(path.read_text(encoding="utf-8")))]
        assert errors == [], path.name
    _code, out, _err = run(capsys, "schema", "profile")
    jsonschema.Draft202012Validator.check_schema(json.loads(out))


def test_visits_on_an_empty_store_says_so(capsys: pytest.CaptureFixture[str], store: Path) -> None:
    code, out, _err = run(capsys, "--store", str(store), "visits")
    assert code == 0
    assert out == "no visits in the store\n"


def test_import_list_and_export_a_visit(
    capsys: pytest.CaptureFixture[str], store: Path, tmp_path: Path
) -> None:
    original = sample_visit()
    code, out, err = run(capsys, "--store", str(store), "import", str(SAMPLE))
    assert code == 0, err
    assert f"imported visit {original.id} ({original.job_number}, {len(original.readings)} readings)" in out

    code, out, _err = run(capsys, "--store", str(store), "visits")
    assert code == 0
    rows = out.splitlines()
    assert rows[0].split()[:2] == ["id", "job"]
    assert len(rows) == 2 and rows[1].split()[:2] == [original.id, original.job_number]
    assert original.machine in rows[1]

    outbox = tmp_path / "outbox"
    outbox.mkdir()
    code, out, err = run(capsys, "--store", str(store), "export", original.id, "--out", str(outbox))
    assert code == 0, err
    written = list(outbox.glob("*.json"))
    assert len(written) == 1 and out == f"wrote {written[0]}\n"
    visit, profile = read_visit_json(written[0])
    assert visit == original
    assert visit.model_dump_json() == original.model_dump_json()
    assert profile is not None and profile.id == original.machine


def test_truncated_visit_file_is_refused_and_the_store_is_left_alone(
    capsys: pytest.CaptureFixture[str], store: Path, tmp_path: Path
) -> None:
    assert run(capsys, "--store", str(store), "import", str(SAMPLE))[0] == 0
    before = stored_visits(store)
    text = SAMPLE.read_text(encoding="utf-8")
    cut = text[: len(text) // 2]
    broken = tmp_path / "cut-short.json"
    broken.write_text(cut, encoding="utf-8")

    code, out, err = run(capsys, "--store", str(store), "import", "--as-new", str(broken))
    assert code == 2
    assert out == ""
    # json.JSONDecodeError reports the line where the text stops: the last line of the cut file.
    last_line = cut.count("\n") + 1
    assert err.startswith(f"fieldkit: {broken}:{last_line}: not valid JSON"), err
    assert stored_visits(store) == before


def test_rules_check_passes_on_the_bundled_rules(capsys: pytest.CaptureFixture[str]) -> None:
    code, out, _err = run(capsys, "rules", "check")
    assert code == 0, out
    assert re.fullmatch(
        r"\d+ rules, \d+ faults, \d+ cautions, \d+ action tests: 0 errors, \d+ warnings", out.splitlines()[-1]
    )
