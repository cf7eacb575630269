"""Time the terminal UI where a technician waits: start-up to the first screen, opening a visit,
and Enter on a reading until the ranked faults on screen are updated.

Run it by hand (it is not collected by pytest):

    python tests/bench/bench_tui.py [--rounds 10]

Everything runs against a throw-away demo store in a temporary FIELDKIT_HOME. Times are wall
clock on this machine, headless (Textual's test driver: the screen is composed, laid out and
rendered to an off-screen buffer, so terminal output speed is not included).
"""

from __future__ import annotations

import argparse
import asyncio
import json
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

CHILD = r"""
import asyncio, json, os, sys, time
from fieldkit.session import Workbench, seed_demo
from fieldkit.tui.app import make_app

async def main():
    bench = Workbench.open(sys.argv[1])
    seed_demo(bench.store)
    app = make_app(bench, demo=True)
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        first = time.time()
    bench.close()
    print(json.dumps({"first_screen": first}))

asyncio.run(main())
"""


def cold_start(store: Path) -> float:
    """Seconds from spawning `python` to the start screen drawn (imports, store, profiles, UI).
    The store is seeded beforehand, as on every start after the first `fieldkit demo`."""
    from fieldkit.session import Workbench, seed_demo

    bench = Workbench.open(store)
    seed_demo(bench.store)
    bench.close()
    t0 = time.time()
    out = subprocess.run([sys.executable, "-c", CHILD, str(store)], capture_output=True, text=True, check=True,
                         env={**os.environ})
    return json.loads(out.stdout.strip().splitlines()[-1])["first_screen"] - t0


async def in_process(store: Path, rounds: int, size: tuple[int, int]) -> dict[str, list[float]]:
    from fieldkit.session import Workbench, seed_demo
    from fieldkit.tui.app import make_app
    from fieldkit.tui.screens.visit import VisitScreen
    from fieldkit.tui.widgets.faults import FaultList

    bench = Workbench.open(store)
    seed_demo(bench.store)
    times: dict[str, list[float]] = {"start_to_first_screen": [], "open_visit": [], "enter_to_faults": [],
                                     "save_handler": [], "save_handler_to_repaint": [],
                                     "diagnose_only": [], "record_only": []}
    t0 = time.perf_counter()
    app = make_app(bench, demo=True)
    async with app.run_test(size=size) as pilot:
        await pilot.pause()
        times["start_to_first_screen"].append(time.perf_counter() - t0)
        t0 = time.perf_counter()
        await pilot.press("r")
        while not isinstance(app.screen, VisitScreen):
            await pilot.pause()
        await pilot.pause()
        times["open_visit"].append(time.perf_counter() - t0)
        screen = app.screen
        assert isinstance(screen, VisitScreen)
        value = screen.query_one("#value")
        side = screen.query_one("#side-faults", FaultList)
        likely = screen.query_one("#top-fault")
        for i in range(rounds):
            value.value = f"{20 + i * 0.5:.1f} bar"  # charge pressure, drifting down the band and below
            await pilot.pause()
            before = len(screen.visit.current_readings())
            t0 = time.perf_counter()
            await pilot.press("enter")
            while len(screen.visit.current_readings()) == before:
                await pilot.pause()
            await pilot.pause()  # the repaint with the new ranking
            times["enter_to_faults"].append(time.perf_counter() - t0)
            top = screen.diagnosis.faults[0]
            assert top.display_title in likely.content.plain  # the LIKELY line shows the new ranking
            if screen.has_class("-wide"):  # and the wide layout's list of ranked faults
                assert side.get_option_at_index(0).id == top.key
        # The same without the test driver's key delivery: the Enter handler itself (store commit,
        # diagnosis, widget updates), and until the screen has been repainted with the result.
        for i in range(rounds):
            value.value = f"{24 + i * 0.1:.1f} bar"
            await pilot.pause()
            t0 = time.perf_counter()
            assert screen.save_reading()
            times["save_handler"].append(time.perf_counter() - t0)
            await pilot.pause()
            times["save_handler_to_repaint"].append(time.perf_counter() - t0)
        visit = bench.store.get_visit(screen.visit_id)
        for _ in range(rounds):
            t0 = time.perf_counter()
            bench.diagnose(visit)
            times["diagnose_only"].append(time.perf_counter() - t0)
        await pilot.press("ctrl+q")
    from fieldkit.model.condition import Condition

    for _ in range(rounds):
        t0 = time.perf_counter()
        bench.record(visit.id, "travel.case", "0.8 bar", Condition())
        times["record_only"].append(time.perf_counter() - t0)
    bench.close()
    return times


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rounds", type=int, default=10)
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        os.environ["FIELDKIT_HOME"] = str(Path(tmp) / "home")
        cold = [cold_start(Path(tmp) / f"cold{i}.sqlite3") for i in range(3)]
        narrow = asyncio.run(in_process(Path(tmp) / "narrow.sqlite3", args.rounds, (80, 24)))
        wide = asyncio.run(in_process(Path(tmp) / "wide.sqlite3", args.rounds, (150, 40)))
    times = {"cold_process_start_to_first_screen": cold,
             **{f"{k} (80x24)": v for k, v in narrow.items()},
             **{f"{k} (150x40)": v for k, v in wide.items() if k not in ("diagnose_only", "record_only")}}
    print(f"{'measure':<46}{'n':>4}{'median ms':>12}{'max ms':>10}")
    for name, values in times.items():
        print(f"{name:<46}{len(values):>4}{statistics.median(values) * 1000:>12.1f}{max(values) * 1000:>10.1f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
