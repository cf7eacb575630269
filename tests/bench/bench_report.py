"""How long writing the PDF job card takes for a 40-reading visit, warm (fonts and rules loaded once).

The visit is the worn-charge-pump demo visit with its readings taken again in turn, each pass a few
per cent apart, until there are 40. The diagnosis is made once; each timed run builds the report
model, renders the PDF and writes it atomically (``write_job_card``), as the UI's export does.

Run from the repository root (a script, not a test; pytest never collects it):

    python tests/bench/bench_report.py              # median of 15 runs after 2 warm-up runs
    python tests/bench/bench_report.py --runs 40 --format text
"""

from __future__ import annotations

import argparse
import importlib
import statistics
import sys
import tempfile
import time
from pathlib import Path

from fieldkit.report.jobcard import write_job_card
from fieldkit.session import Workbench

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT / "tests" / "report"))
_builders = importlib.import_module("report_builders")  # tests/report is a folder, not a package
WORN_CHARGE_PUMP, many_readings = _builders.WORN_CHARGE_PUMP, _builders.many_readings

READINGS = 40


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=15)
    parser.add_argument("--warmup", type=int, default=2)
    parser.add_argument("--format", default="pdf", choices=["pdf", "text", "markdown"])
    args = parser.parse_args()

    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        bench = Workbench.open(folder / "visits.sqlite3")
        try:
            visit, profile = bench.resolve(str(WORN_CHARGE_PUMP))
            visit = many_readings(visit, READINGS)
            started = time.perf_counter()
            diagnosis = bench.diagnose(visit, profile)
            diagnose_s = time.perf_counter() - started
            assert len(diagnosis.checks) == READINGS
            times = []
            path = folder
            for run in range(args.warmup + args.runs):
                started = time.perf_counter()
                path = write_job_card(visit, profile, diagnosis, folder, args.format, fixed_date="2025-05-14")
                elapsed = time.perf_counter() - started
                if run >= args.warmup:
                    times.append(elapsed)
            size = path.stat().st_size
            pages = f", {_pages(path)} pages" if args.format == "pdf" else ""
        finally:
            bench.close()

    print(
        f"{args.format} job card, {READINGS} readings ({size:,} bytes{pages}); diagnosis once: "
        f"{diagnose_s * 1000:.0f} ms"
    )
    print(
        f"write_job_card over {len(times)} warm runs: median {statistics.median(times) * 1000:.0f} ms, "
        f"min {min(times) * 1000:.0f} ms, max {max(times) * 1000:.0f} ms"
    )
    return 0


def _pages(path: Path) -> int:
    from pypdf import PdfReader

    return len(PdfReader(str(path)).pages)


if __name__ == "__main__":
    raise SystemExit(main())
