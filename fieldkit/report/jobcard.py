"""Writing a job card to disk: one format at a time, atomically, never outside the chosen place.

A job card is rendered completely in memory first and only then written, through a temporary
file in the same folder that is renamed over the target (``os.replace``). A writer that fails,
a full disk or a pulled USB stick therefore leaves the previous file or none, never half a
report. File names come from what a technician typed (the job number), so they pass through
:func:`fieldkit.store.filenames.safe_file_name` and are checked to stay inside the folder.
"""

from __future__ import annotations

import contextlib
import os
from datetime import UTC, datetime
from pathlib import Path

from fieldkit.diagnosis.results import Diagnosis
from fieldkit.durable import sync_folder, write_temp
from fieldkit.model.profile import MachineProfile
from fieldkit.model.visit import DATE_RANGE, Visit, in_date_range
from fieldkit.report.build import job_card
from fieldkit.report.model import JobCard, ReportError
from fieldkit.store.filenames import export_stem, safe_file_name
from fieldkit.units import DisplaySystem

#: Format name → file suffix.
FORMATS = {"pdf": ".pdf", "text": ".txt", "markdown": ".md"}


def parse_fixed_date(value: datetime | str | None) -> datetime | None:
    """A creation date for reproducible PDFs: a datetime, or ISO 8601 text (a date alone is midnight
    UTC; a time without a zone is taken as UTC)."""
    if value is None or isinstance(value, datetime):
        stamp = value
    else:
        try:
            stamp = datetime.fromisoformat(value.strip())
        except ValueError:
            raise ReportError(
                f"fixed date '{value}' is not an ISO 8601 date or time "
                "(for example 2025-05-14 or 2025-05-14T08:30:00Z)"
            ) from None
    if stamp is not None and stamp.tzinfo is None:
        stamp = stamp.replace(tzinfo=UTC)
    if stamp is not None and not in_date_range(stamp.date()):
        raise ReportError(f"fixed date '{value}' is outside the dates fieldkit works with ({DATE_RANGE})")
    return stamp


def _check_format(fmt: str) -> str:
    if fmt not in FORMATS:
        raise ReportError(f"unknown job card format '{fmt}'; choose one of {', '.join(FORMATS)}")
    return FORMATS[fmt]


def render_card(
    card: JobCard, fmt: str, *, letter: bool = False, fixed_date: datetime | str | None = None
) -> bytes:
    """The job card as the bytes of one format. The PDF library is imported only for ``pdf``."""
    _check_format(fmt)
    if fmt == "pdf":
        from fieldkit.report.pdf import render_pdf

        return render_pdf(card, letter=letter, fixed_date=parse_fixed_date(fixed_date))
    if fmt == "text":
        from fieldkit.report.text import render_text

        return render_text(card).encode("utf-8")
    from fieldkit.report.markdown import render_markdown

    return render_markdown(card).encode("utf-8")


def job_card_name(visit: Visit, fmt: str) -> str:
    """A file name (no folder) from the job number, the machine and the date."""
    return safe_file_name(
        export_stem(visit.job_number, visit.machine, visit.date.isoformat()) + " job card",
        _check_format(fmt),
        default="job card",
    )


def write_atomic(path: Path, data: bytes) -> Path:
    """Put ``data`` at ``path`` all at once: a temporary file beside it, flushed to disk, then renamed."""
    path = Path(path)
    folder = path.parent
    if not folder.is_dir():
        raise ReportError(f"{folder}: no such folder; create it or choose another place for the job card")
    if path.is_dir():
        raise ReportError(f"{path}: is a folder; give a file name for the job card")
    try:
        tmp = write_temp(folder, data, ".fieldkit-report-")
    except OSError as exc:
        raise ReportError(f"{folder}: cannot write in this folder ({exc.strerror or exc})") from None
    try:
        os.replace(tmp, path)
    except OSError as exc:
        raise ReportError(f"{path}: cannot write the job card ({exc.strerror or exc})") from None
    finally:
        with contextlib.suppress(FileNotFoundError):
            tmp.unlink()
    sync_folder(folder)
    return path


def write_job_card(
    visit: Visit,
    profile: MachineProfile,
    diagnosis: Diagnosis,
    folder: Path,
    fmt: str,
    *,
    letter: bool = False,
    fixed_date: datetime | str | None = None,
    system: DisplaySystem | None = None,
) -> Path:
    """Write the visit's job card into ``folder`` under a name made from job number and machine.

    A card already there for the same job, machine and date is replaced (atomically).
    Returns the path written.
    """
    folder = Path(folder)
    name = job_card_name(visit, fmt)
    target = folder / name
    if Path(name).name != name or target.parent != folder:  # safe_file_name guarantees it; check anyway
        raise ReportError(f"{folder}: refusing the file name {name!r}")
    card = job_card(visit, profile, diagnosis, system)
    return write_atomic(target, render_card(card, fmt, letter=letter, fixed_date=fixed_date))


def write_report(
    path: Path,
    visit: Visit,
    profile: MachineProfile,
    diagnosis: Diagnosis,
    fmt: str | None = None,
    *,
    letter: bool = False,
    fixed_date: datetime | str | None = None,
    system: DisplaySystem | None = None,
) -> Path:
    """Write the job card to exactly ``path`` (the command line's ``--pdf FILE``).

    ``fmt`` defaults to the one the suffix names (.pdf, .txt, .md).
    """
    path = Path(path)
    if fmt is None:
        by_suffix = {suffix: name for name, suffix in FORMATS.items()}
        fmt = by_suffix.get(path.suffix.lower())
        if fmt is None:
            raise ReportError(f"{path}: cannot tell the format from the suffix; use .pdf, .txt or .md")
    card = job_card(visit, profile, diagnosis, system)
    return write_atomic(path, render_card(card, fmt, letter=letter, fixed_date=fixed_date))
