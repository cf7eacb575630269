"""The import contracts of pyproject.toml hold, and every deferred import is on purpose.

``lint-imports`` (import-linter) checks the layer map of DEVELOPERS.md, the contracts inside
report/ and simulate/, and that no import cycle exists, counting imports made inside functions.
An import inside a function is allowed where it is listed with its reason under
``[tool.fieldkit.deferred-imports]``; a listed module that defers nothing any more is stale.
"""

from __future__ import annotations

import ast
import subprocess
import sys
import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def _is_type_checking(test: ast.expr) -> bool:
    return (isinstance(test, ast.Name) and test.id == "TYPE_CHECKING") or (
        isinstance(test, ast.Attribute) and test.attr == "TYPE_CHECKING"
    )


def deferred_imports(source: str) -> set[str]:
    """Modules imported inside a function body (type-checking blocks aside)."""
    found: set[str] = set()

    def visit(node: ast.AST, in_function: bool) -> None:
        if isinstance(node, ast.If) and _is_type_checking(node.test):
            return
        if in_function and isinstance(node, ast.Import):
            found.update(a.name for a in node.names)
        elif in_function and isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
            found.add(node.module)
        inside = in_function or isinstance(node, ast.FunctionDef | ast.AsyncFunctionDef | ast.Lambda)
        for child in ast.iter_child_nodes(node):
            visit(child, inside)

    visit(ast.parse(source), False)
    return found


def modules_deferring() -> dict[str, set[str]]:
    out: dict[str, set[str]] = {}
    for path in sorted((ROOT / "fieldkit").rglob("*.py")):
        name = ".".join(path.relative_to(ROOT).with_suffix("").parts).removesuffix(".__init__")
        found = deferred_imports(path.read_text(encoding="utf-8"))
        if found:
            out[name] = found
    return out


def listed() -> dict[str, str]:
    config = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))
    return config["tool"]["fieldkit"]["deferred-imports"]


def test_the_finder_sees_an_import_inside_a_function_and_nothing_else() -> None:
    source = (
        "import os\nfrom typing import TYPE_CHECKING\nif TYPE_CHECKING:\n    import json\n"
        "def f():\n    from fieldkit.units import percent\n    import csv\n"
    )
    assert deferred_imports(source) == {"fieldkit.units", "csv"}


def test_every_deferred_import_is_listed_with_its_reason() -> None:
    reasons = listed()
    unlisted = {m: sorted(found) for m, found in modules_deferring().items() if m not in reasons}
    assert unlisted == {}, "import at the top, or list the module with its reason in pyproject.toml"
    assert all(len(reason.split()) >= 4 for reason in reasons.values())


def test_no_listed_deferral_is_stale() -> None:
    stale = sorted(set(listed()) - set(modules_deferring()))
    assert stale == [], "these modules defer no import any more: remove them from the list"


def test_the_import_contracts_hold() -> None:
    done = subprocess.run(
        [str(Path(sys.executable).parent / "lint-imports"), "--no-cache"],
        cwd=ROOT,
        capture_output=True,
        text=True,
        timeout=300,
        check=False,
        env={"PYTHONPATH": str(ROOT), "PATH": str(Path(sys.executable).parent)},
    )
    assert done.returncode == 0, done.stdout[-3000:] + done.stderr[-2000:]
