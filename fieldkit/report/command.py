"""``fieldkit report VISIT --pdf FILE --text FILE --markdown FILE [--letter] [--fixed-date ISO]``.

Everything is checked and rendered before the first file is written, so a bad visit, a missing
folder or a failing writer leaves no output at all rather than some of the files.
"""

from __future__ import annotations

import argparse
from pathlib import Path
from typing import TYPE_CHECKING

from fieldkit.report.build import job_card
from fieldkit.report.jobcard import parse_fixed_date, render_card, write_atomic
from fieldkit.report.model import ReportError

if TYPE_CHECKING:  # the workbench opens the store; the annotation alone needs no import
    from fieldkit.session import Workbench


def _outputs(args: argparse.Namespace) -> list[tuple[str, Path]]:
    wanted = [
        (fmt, Path(path))
        for fmt, path in (("pdf", args.pdf), ("text", args.text), ("markdown", args.markdown))
        if path is not None
    ]
    if not wanted:
        raise ReportError("say where to write the job card: --pdf FILE, --text FILE and/or --markdown FILE")
    seen: dict[Path, str] = {}
    for fmt, path in wanted:
        key = path.resolve()
        if key in seen:
            raise ReportError(
                f"{path}: named for both the {seen[key]} and the {fmt} job card; give each its own file"
            )
        seen[key] = fmt
        if path.is_dir():
            raise ReportError(f"{path}: is a folder; give a file name for the {fmt} job card")
        if not path.parent.is_dir():
            raise ReportError(f"{path.parent}: no such folder for the {fmt} job card")
    return wanted


def run_report(bench: Workbench, args: argparse.Namespace) -> int:
    outputs = _outputs(args)
    fixed_date = parse_fixed_date(args.fixed_date)
    source = Path(args.visit)
    if source.is_file() and any(path.resolve() == source.resolve() for _fmt, path in outputs):
        raise ReportError(f"{source}: is the visit being reported; write the job card to another file")
    visit, profile = bench.resolve(args.visit)
    diagnosis = bench.diagnose(visit, profile)
    card = job_card(visit, profile, diagnosis, bench.system)
    rendered = [
        (fmt, path, render_card(card, fmt, letter=args.letter, fixed_date=fixed_date))
        for fmt, path in outputs
    ]
    for fmt, path, data in rendered:
        written = write_atomic(path, data)
        print(f"wrote the {fmt} job card to {written}")
    return 0
