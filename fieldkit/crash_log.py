"""Where an unexpected error goes: a log file a person can send, and one plain sentence on screen.

The technician at the machine should never see a traceback, and must never lose a reading:
every reading is committed before the screen says 'saved', so after an unexpected error the
visit and its readings are already safe on disk. The details (traceback, versions) go to a file
under the user data folder whose path is shown, so the problem can be reported.
"""

from __future__ import annotations

import os
import platform
import sys
import tempfile
import traceback
from datetime import UTC, datetime
from pathlib import Path

from fieldkit import __version__
from fieldkit.settings import data_home


def logs_dir() -> Path:
    return data_home() / "logs"


def write_crash_log(exc: BaseException, doing: str = "") -> Path:
    """Write the error's details to a new file and return its path (a temporary folder when the
    data folder cannot be written: the log must not fail in its turn)."""
    stamp = datetime.now(UTC).strftime("%Y%m%dT%H%M%S%fZ")
    text = (
        f"fieldkit {__version__} on Python {platform.python_version()} ({sys.platform})\n"
        f"time: {datetime.now(UTC).isoformat()}\n"
        f"while: {doing or 'running'}\n\n"
        + "".join(traceback.format_exception(type(exc), exc, exc.__traceback__))
    )
    for folder in (logs_dir(), Path(tempfile.gettempdir())):
        try:
            folder.mkdir(parents=True, exist_ok=True)
            path = folder / f"fieldkit-error-{stamp}-{os.getpid()}.log"
            path.write_text(text, encoding="utf-8")
            return path
        except OSError:
            continue
    return Path("(the error could not be written to any log file)")


def plain_message(exc: BaseException, log: Path, doing: str = "") -> str:
    """One sentence for the screen: what happened, that nothing saved is lost, where the details are."""
    what = f" while {doing}" if doing else ""
    return (
        f"fieldkit met an unexpected problem{what} ({type(exc).__name__}). Every reading already "
        f"saved is safe in the store. Details were written to {log}"
    )
