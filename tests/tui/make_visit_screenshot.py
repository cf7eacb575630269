"""Regenerate docs/visit-screen.svg: the visit screen on the demo visit, as the README shows it.

    python tests/tui/make_visit_screenshot.py [--out docs/visit-screen.svg] [--size 100x30]

Runs the app headless on a throw-away demo store, resumes the demo visit, saves one reading
(charge pressure at full stroke, typed in psi) so both an in-range and a low band show, and
writes Textual's own SVG screenshot. Not a test (pytest collects only test_*.py).
"""

from __future__ import annotations

import argparse
import asyncio
import os
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]


async def shoot(out: Path, size: tuple[int, int]) -> None:
    from textual.widgets import Select

    from fieldkit.model.condition import FunctionState
    from fieldkit.session import Workbench, seed_demo
    from fieldkit.tui.app import make_app
    from fieldkit.tui.screens.visit import VisitScreen

    with tempfile.TemporaryDirectory() as tmp:
        os.environ["FIELDKIT_HOME"] = str(Path(tmp) / "home")
        bench = Workbench.open(Path(tmp) / "demo.sqlite3")
        seed_demo(bench.store)
        app = make_app(bench, demo=True)
        async with app.run_test(size=size) as pilot:
            await pilot.pause()
            await pilot.press("r")
            while not isinstance(app.screen, VisitScreen):
                await pilot.pause()
            screen = app.screen
            screen.select_point("travel.charge")
            await pilot.pause()
            screen.query_one("#function", Select).value = FunctionState.FULL_STROKE
            await pilot.pause()
            await pilot.press(*"160 psi", "enter")
            await pilot.pause()
            out.parent.mkdir(parents=True, exist_ok=True)
            out.write_text(app.export_screenshot(title="fieldkit · visit screen (demo)"), encoding="utf-8")
        bench.close()


def main() -> None:
    parser = argparse.ArgumentParser(description="Regenerate the visit screen screenshot.")
    parser.add_argument("--out", type=Path, default=ROOT / "docs" / "visit-screen.svg")
    parser.add_argument("--size", default="100x30", help="columns x rows")
    args = parser.parse_args()
    cols, rows = (int(n) for n in args.size.lower().split("x"))
    asyncio.run(shoot(args.out, (cols, rows)))
    print(f"wrote {args.out}")


if __name__ == "__main__":
    main()
