"""The core (units, model, physics, diagnosis) must not pull in the UI, the database or the PDF
library: it runs in the CLI, in tests and behind the UI alike, and starts fast.

Each check runs in a fresh interpreter, since this test process has imported everything already.
One interpreter imports the core modules one after another and notes, after each, which forbidden
packages have appeared; a module's own imports are a subset of what all of them import, so an empty
result for the whole set means every module is clean on its own too.
"""

from __future__ import annotations

import json
import pkgutil
import subprocess
import sys

import fieldkit.diagnosis
import fieldkit.expr
import fieldkit.model
import fieldkit.physics
import fieldkit.store

FORBIDDEN_IN_CORE = ("textual", "sqlite3", "fpdf")
FORBIDDEN_IN_STORE = ("textual", "fpdf")

PROBE = """
import importlib, json, sys
forbidden = {forbidden!r}
seen = {{}}
for name in {modules!r}:
    importlib.import_module(name)
    new = [f for f in forbidden if f in sys.modules and f not in seen.values()]
    for f in new:
        seen[name] = f
print(json.dumps({{"first_importer": seen, "present": [f for f in forbidden if f in sys.modules]}}))
"""


def submodules(package: object) -> list[str]:
    return sorted(m.name for m in pkgutil.walk_packages(package.__path__, package.__name__ + "."))  # type: ignore[attr-defined]


CORE_MODULES = [
    "fieldkit.units",
    "fieldkit.errors",
    "fieldkit.expr",
    *submodules(fieldkit.expr),
    "fieldkit.model",
    *submodules(fieldkit.model),
    "fieldkit.physics",
    *submodules(fieldkit.physics),
    "fieldkit.diagnosis",
    *submodules(fieldkit.diagnosis),
]


def probe(modules: list[str], forbidden: tuple[str, ...]) -> dict[str, object]:
    code = PROBE.format(modules=modules, forbidden=forbidden)
    done = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, timeout=120, check=False
    )
    assert done.returncode == 0, done.stderr
    return json.loads(done.stdout)


def test_core_module_list_covers_loading_physics_and_the_engine() -> None:
    for name in (
        "fieldkit.model.loading",
        "fieldkit.diagnosis.engine",
        "fieldkit.physics.reliefs",
        "fieldkit.physics.pumps_motors",
        "fieldkit.expr.parser",
    ):
        assert name in CORE_MODULES
    assert len(submodules(fieldkit.physics)) >= 10


def test_core_modules_import_no_ui_database_or_pdf_library() -> None:
    result = probe(CORE_MODULES, FORBIDDEN_IN_CORE)
    assert result == {"first_importer": {}, "present": []}


def test_store_imports_no_ui_or_pdf_library() -> None:
    result = probe(["fieldkit.store", *submodules(fieldkit.store)], FORBIDDEN_IN_STORE)
    assert result == {"first_importer": {}, "present": []}


def test_the_probe_would_see_a_forbidden_import() -> None:
    # The check itself must be able to fail: importing the store does bring in sqlite3.
    result = probe(["fieldkit.units", "fieldkit.store"], ("sqlite3",))
    assert result == {"first_importer": {"fieldkit.store": "sqlite3"}, "present": ["sqlite3"]}
