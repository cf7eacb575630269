"""A store with one open visit (and the gauge kit) on every machine fieldkit knows: the bundled
demo profiles and one profile built from each circuit template."""

from __future__ import annotations

from collections.abc import Iterator
from pathlib import Path

import pytest

from fieldkit.session import Workbench

from .every_point import open_visits, write_template_profiles


@pytest.fixture
def walk_bench(tmp_path: Path) -> Iterator[tuple[Workbench, dict[str, str]]]:
    folder = tmp_path / "template-profiles"
    write_template_profiles(folder)
    bench = Workbench.open(tmp_path / "walk.sqlite3", profile_dirs=[folder])
    try:
        yield bench, open_visits(bench)
    finally:
        bench.close()
