"""Where the bundled data folders are: inside an installed wheel, or at the top of a source checkout.

``rules/`` and ``sample_readings/`` live at the top of the repository so people find and edit them;
a built wheel carries copies under ``fieldkit/_bundled``. An editable install reads the checkout.
"""

from __future__ import annotations

from pathlib import Path

from fieldkit.errors import FieldkitError

_PACKAGE = Path(__file__).resolve().parent


def bundled(name: str) -> Path:
    """Path of a bundled data folder (``rules`` or ``sample_readings``)."""
    for candidate in (_PACKAGE / "_bundled" / name, _PACKAGE.parent / name):
        if candidate.is_dir():
            return candidate
    raise FieldkitError(f"the bundled '{name}' folder is missing from this installation; reinstall fieldkit")


def rules_dir() -> Path:
    return bundled("rules")


def samples_dir() -> Path:
    return bundled("sample_readings")
