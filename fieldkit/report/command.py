"""``fieldkit report VISIT --pdf FILE --text FILE --markdown FILE [--letter] [--fixed-date ISO]``.

Everything is checked and rendered before the first file is written, and the files are put in
place together (:func:`fieldkit.durable.replace_all`): a bad visit, a missing folder, a failing
writer or a full disk leaves no new output at all, and any old file at a named place stays as it
was. ``-`` as a file name writes that format to standard output (the messages then go to
standard error, so the output can be piped).
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path
from typing import TYPE_CHECKING

from fieldkit.durable import replace_all, write_temp
from fieldkit.plaintext import underlying
from fieldkit.report.build import job_card
from fieldkit.report.jobcard import parse_fixed_date, render_card
from fieldkit.report.model import ReportError

if TYPE_CHECKING:  # the workbench opens the store; the annotation alone needs no import
    from fieldkit.session import Workbench

#: The file name that means standard output.
STDOUT = "-"


def _outputs(args: argparse.Namespace) -> list[tuple[str, Path]]:
    wanted = [
        (fmt, Path(path))
        for fmt, path in (("pdf", args.pdf), ("text", args.text), ("markdown", args.markdown))
        if path is not None
    ]
    if not wanted:
        raise ReportError(
            "say where to write the job card: --pdf FILE, --text FILE and/or --markdown FILE "
            "('-' for standard output)"
        )
    to_stdout = [fmt for fmt, path in wanted if str(path) == STDOUT]
    if len(to_stdout) > 1:
        raise ReportError(
            f"only one job card can go to standard output ('-'); {' and '.join(to_stdout)} both asked for it"
        )
    seen: dict[Path, str] = {}
    for fmt, path in wanted:
        if str(path) == STDOUT:
            continue
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
    if source.is_file() and any(
        str(path) != STDOUT and path.resolve() == source.resolve() for _fmt, path in outputs
    ):
        raise ReportError(f"{source}: is the visit being reported; write the job card to another file")
    visit, profile = bench.resolve(args.visit)
    diagnosis = bench.diagnose(visit, profile)
    card = job_card(visit, profile, diagnosis, bench.system)
    rendered = [
        (fmt, path, render_card(card, fmt, letter=args.letter, fixed_date=fixed_date))
        for fmt, path in outputs
    ]
    files = [(fmt, path, data) for fmt, path, data in rendered if str(path) != STDOUT]
    piped = [(fmt, data) for fmt, path, data in rendered if str(path) == STDOUT]
    _write_files(files)
    say = sys.stderr if piped else sys.stdout  # standard output carries the card itself
    for fmt, path, _data in files:
        print(f"wrote the {fmt} job card to {path}", file=say)
    for _fmt, data in piped:
        out = underlying(sys.stdout)  # the card's own text is already cleaned by its writer
        out.flush()
        out.buffer.write(data)
        out.buffer.flush()
    return 0


def _write_files(files: list[tuple[str, Path, bytes]]) -> None:
    """Every file written beside its target first, then all moved into place together."""
    temps: list[tuple[Path, Path]] = []
    try:
        for fmt, path, data in files:
            try:
                temps.append((write_temp(path.parent, data, ".fieldkit-report-"), path))
            except OSError as exc:
                raise ReportError(
                    f"{path.parent}: cannot write the {fmt} job card there ({exc.strerror or exc}); "
                    "no job card was written"
                ) from None
        try:
            replace_all(temps)
        except OSError as exc:
            where = exc.filename or ""
            raise ReportError(
                f"{where}: cannot put the job card in place ({exc.strerror or exc}); no job card was "
                "written and any earlier file is unchanged"
            ) from None
    finally:
        for tmp, _path in temps:
            tmp.unlink(missing_ok=True)
