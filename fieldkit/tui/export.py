"""Write the job card: the report writers' one when installed, else a plain summary of our own."""

from __future__ import annotations

from pathlib import Path

from fieldkit.diagnosis.results import Diagnosis
from fieldkit.model.profile import MachineProfile
from fieldkit.model.visit import Visit
from fieldkit.settings import data_home
from fieldkit.units import DisplaySystem

FORMATS = ("pdf", "text", "markdown")
JOBCARD_MODULE = "fieldkit.report.jobcard"


def default_folder() -> Path:
    return data_home() / "job-cards"


def jobcard_available() -> bool:
    import importlib.util

    try:
        return importlib.util.find_spec(JOBCARD_MODULE) is not None
    except ModuleNotFoundError:
        return False


def export_job_card(
    visit: Visit,
    profile: MachineProfile,
    diagnosis: Diagnosis,
    folder: Path,
    fmt: str,
    system: DisplaySystem | None = None,
) -> tuple[Path, str]:
    """The file written and a sentence saying what it is. The folder is created if needed."""
    folder = Path(folder).expanduser()
    folder.mkdir(parents=True, exist_ok=True)
    try:
        from fieldkit.report.jobcard import write_job_card
    except ModuleNotFoundError as exc:
        if exc.name not in (JOBCARD_MODULE, "fieldkit.report"):
            raise
        from fieldkit.tui.plain_summary import write_plain_summary

        path = write_plain_summary(visit, profile, diagnosis, folder)
        return path, f"plain-text summary written to {path} (the {fmt} job card writer is not installed)"
    import inspect

    if system is not None and "system" in inspect.signature(write_job_card).parameters:
        path = write_job_card(visit, profile, diagnosis, folder, fmt, system=system)
    else:
        path = write_job_card(visit, profile, diagnosis, folder, fmt)
    return path, f"{fmt} job card written to {path}"
