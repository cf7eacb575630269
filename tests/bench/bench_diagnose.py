"""How long one diagnosis takes: a 40-reading visit on the Fellborer drill rig, judged with the bundled
rule packs, and with the packs replicated ten times (every rule copied under a new id) to see how
the cost grows with the number of rules.

Run from the repository root (it is a script, not a test; pytest never collects it):

    python tests/bench/bench_diagnose.py                 # medians and the ratio
    python tests/bench/bench_diagnose.py --profile       # plus the cProfile hot spots
    python tests/bench/bench_diagnose.py --runs 200

Goal (from the issue): under 20 ms typical for the bundled packs, cost growing no worse than
linearly in the number of rules (ratio at most about 10 for ten times the rules).
"""

from __future__ import annotations

import argparse
import cProfile
import io
import pstats
import re
import shutil
import statistics
import tempfile
import time
from datetime import timedelta
from pathlib import Path

from fieldkit.diagnosis.engine import Knowledge, diagnose
from fieldkit.model.loading import ProfileLibrary
from fieldkit.model.profile import MachineProfile
from fieldkit.model.visit import Visit

ROOT = Path(__file__).resolve().parents[2]
RULES = ROOT / "rules"
SOURCE_VISIT = ROOT / "sample_readings" / "visits" / "fellborer-charge-pump-worn.json"
READINGS = 40
COPIES = 10
_RULE_ID = re.compile(r'^(id\s*=\s*")([a-z][a-z0-9\-]*)(")', re.MULTILINE)


def forty_reading_visit() -> tuple[Visit, MachineProfile]:
    """The worn-charge-pump visit's 16 readings, taken again in turn until there are 40 (a
    technician re-reading points through the morning); every one stands."""
    visit = Visit.model_validate_json(SOURCE_VISIT.read_text(encoding="utf-8"))
    profile = ProfileLibrary([ROOT / "sample_readings" / "profiles"], RULES / "templates").get(visit.machine)
    start = min(r.taken_at for r in visit.readings)
    readings = [
        visit.readings[i % len(visit.readings)].model_copy(
            update={"id": f"b{i:02d}", "taken_at": start + timedelta(minutes=3 * i), "replaces": None}
        )
        for i in range(READINGS)
    ]
    return visit.model_copy(update={"readings": readings}), profile


def replicated_rules(folder: Path, copies: int) -> Path:
    """A rules folder whose packs hold every bundled rule ``copies`` times, ids suffixed -c1, -c2…"""
    (folder / "packs").mkdir(parents=True)
    for name in ("faults.toml", "cautions.toml"):
        shutil.copy(RULES / name, folder / name)
    for pack in sorted((RULES / "packs").glob("*.toml")):
        text = pack.read_text(encoding="utf-8")
        for k in range(1, copies + 1):
            renamed = _RULE_ID.sub(lambda m, k=k: f"{m.group(1)}{m.group(2)}-c{k}{m.group(3)}", text)
            (folder / "packs" / f"{pack.stem}-c{k}.toml").write_text(renamed, encoding="utf-8")
    return folder


def timings_ms(visit: Visit, profile: MachineProfile, knowledge: Knowledge, runs: int) -> tuple[float, float]:
    """Median and fastest run: on a shared machine the fastest is the cost without interference."""
    for _ in range(3):  # warm caches (pint conversions, viscosity curves)
        diagnose(visit, profile, knowledge)
    times = []
    for _ in range(runs):
        t0 = time.perf_counter()
        diagnose(visit, profile, knowledge)
        times.append(time.perf_counter() - t0)
    return statistics.median(times) * 1000.0, min(times) * 1000.0


def hot_spots(visit: Visit, profile: MachineProfile, knowledge: Knowledge, runs: int, top: int = 15) -> str:
    prof = cProfile.Profile()
    prof.enable()
    for _ in range(runs):
        diagnose(visit, profile, knowledge)
    prof.disable()
    out = io.StringIO()
    pstats.Stats(prof, stream=out).sort_stats("tottime").print_stats(top)
    return out.getvalue()


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--runs", type=int, default=60, help="timed runs per rule set (default 60)")
    parser.add_argument("--profile", action="store_true", help="print the cProfile hot spots")
    args = parser.parse_args(argv)

    visit, profile = forty_reading_visit()
    base = Knowledge.load(RULES)
    with tempfile.TemporaryDirectory() as tmp:
        many = Knowledge.load(replicated_rules(Path(tmp) / "rules", COPIES))
    assert len(visit.current_readings()) == READINGS
    assert len(many.rules) == COPIES * len(base.rules)

    t_base, fast_base = timings_ms(visit, profile, base, args.runs)
    t_many, fast_many = timings_ms(visit, profile, many, max(10, args.runs // 3))
    print(f"visit: {READINGS} readings on {profile.id}")
    print(
        f"bundled packs   : {len(base.rules):4d} rules  median {t_base:7.2f} ms  (fastest {fast_base:7.2f} "
        "ms)"
    )
    print(
        f"replicated x{COPIES:<3d}: {len(many.rules):4d} rules  median {t_many:7.2f} ms  (fastest "
        f"{fast_many:7.2f} ms)"
    )
    print(
        f"ratio of medians {t_many / t_base:.2f} (fastest {fast_many / fast_base:.2f}) "
        f"for {len(many.rules) / len(base.rules):.0f}x the rules"
    )
    if args.profile:
        print("\n--- hot spots, bundled packs ---")
        print(hot_spots(visit, profile, base, 30))
        print("--- hot spots, replicated packs ---")
        print(hot_spots(visit, profile, many, 10))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
