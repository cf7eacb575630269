"""Diagnosis accuracy on simulated visits, written to a baseline file so that regressions show.

Run from the repository root (pytest does not collect this file):

    python tests/bench/bench_evaluate.py            # evaluate, print, compare, rewrite the baseline
    python tests/bench/bench_evaluate.py --check    # compare only; exit 1 if any figure fell

The baseline (tests/bench/evaluate_baseline.json) holds top-1/top-3 accuracy overall, per family,
per machine and per fault, the confusions, the healthy no-false-alarm rate and the calibration
(Brier score, reliability bins), all for a fixed seed, so two runs on the same code and rules give
the same file and a diff shows exactly what a rule or simulator change did.
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

from rich.console import Console

from fieldkit.simulate.command import render
from fieldkit.simulate.evaluate import DEFAULT_CASES, evaluate

BASELINE = Path(__file__).with_name("evaluate_baseline.json")
#: A figure that falls by more than this (one case in 20) counts as a regression.
TOLERANCE = 0.05


def _flat(data: dict) -> dict[str, float]:
    out: dict[str, float] = {
        "overall": data["overall"]["top1"],
        "faulty": data["faulty"]["top1"],
        "healthy": data["healthy_no_false_alarm"]["top1"],
    }
    for group in ("by_family", "by_profile", "by_profile_fault"):
        for key, figures in data[group].items():
            out[f"{group}:{key}"] = figures["top1"]
    return out


def compare(old: dict, new: dict) -> list[str]:
    """Top-1 figures that fell by more than the tolerance, worst first."""
    before, after = _flat(old), _flat(new)
    fell = [(after[k] - before[k], k) for k in before if k in after and after[k] < before[k] - TOLERANCE]
    return [f"{k}: top-1 {before[k]:.2f} -> {after[k]:.2f}" for _d, k in sorted(fell)]


def main(argv: list[str] | None = None) -> int:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--cases", type=int, default=DEFAULT_CASES)
    p.add_argument("--seed", type=int, default=1)
    p.add_argument("--check", action="store_true", help="compare with the baseline only; do not rewrite it")
    args = p.parse_args(argv)

    report = evaluate(cases_per_fault=args.cases, seed=args.seed)
    render(report, Console(highlight=False, width=120))
    new = report.to_json()
    old = json.loads(BASELINE.read_text(encoding="utf-8")) if BASELINE.is_file() else None
    same_setup = old is not None and (old["seed"], old["cases_per_fault"]) == (
        new["seed"],
        new["cases_per_fault"],
    )
    regressions = compare(old, new) if same_setup else []
    if old is not None and not same_setup:
        print("baseline was made with another seed or case count: not compared")
    for line in regressions:
        print(f"REGRESSION {line}")
    if same_setup and not regressions:
        print(f"no top-1 figure fell by more than {TOLERANCE:.2f} against {BASELINE.name}")
    if not args.check:
        BASELINE.write_text(json.dumps(new, indent=2, sort_keys=True) + "\n", encoding="utf-8")
        print(f"wrote {BASELINE}")
    return 1 if args.check and regressions else 0


if __name__ == "__main__":
    sys.exit(main())
