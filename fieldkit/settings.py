"""Where fieldkit keeps the user's things, and the few preferences a technician sets once.

The store path comes from ``--store``, else ``FIELDKIT_STORE``, else the user data folder. Settings
are a small JSON file beside it (display units, decimal comma, remembered visit defaults).
"""

from __future__ import annotations

import json
import os
from pathlib import Path

from platformdirs import user_data_path
from pydantic import Field, ValidationError

from fieldkit.durable import sync_folder, write_temp
from fieldkit.errors import FieldkitError
from fieldkit.model.base import Strict
from fieldkit.model.loading import ProfileLibrary
from fieldkit.resources import rules_dir, samples_dir

APP = "fieldkit"
STORE_ENV = "FIELDKIT_STORE"
HOME_ENV = "FIELDKIT_HOME"


def data_home() -> Path:
    """The user data folder (``FIELDKIT_HOME`` overrides it, which tests use to stay out of the real one)."""
    override = os.environ.get(HOME_ENV)
    return Path(override) if override else user_data_path(APP, appauthor=False)


def default_store_path(cli_value: str | os.PathLike[str] | None = None) -> Path:
    if cli_value:
        return Path(cli_value)
    env = os.environ.get(STORE_ENV)
    if env:
        return Path(env)
    return data_home() / "visits.sqlite3"


def user_profiles_dir() -> Path:
    return data_home() / "profiles"


class Settings(Strict):
    display: str = Field(default="metric", pattern="^(metric|si|us)$")
    decimal_comma: bool = False
    technician: str = ""
    customer: str = ""
    oil: str = ""
    #: IANA time zone for new visits (e.g. 'Europe/London'); '' = UTC.
    time_zone: str = ""

    @classmethod
    def load(cls, path: Path | None = None) -> Settings:
        """Settings, or defaults when the file is missing or unreadable (a broken settings file
        must never stop a technician from logging readings; the UI says it was reset)."""
        path = path or data_home() / "settings.json"
        try:
            return cls.model_validate(json.loads(path.read_text(encoding="utf-8")))
        except (OSError, ValueError, ValidationError):
            return cls()

    def save(self, path: Path | None = None) -> None:
        path = path or data_home() / "settings.json"
        path.parent.mkdir(parents=True, exist_ok=True)
        tmp = path.with_suffix(".tmp")
        tmp.write_text(self.model_dump_json(indent=2), encoding="utf-8")
        os.replace(tmp, path)


def default_library(extra: list[Path] | None = None, *, demo: bool = True) -> ProfileLibrary:
    """The user's profile folder and any extra folders named, plus the bundled demo profiles
    unless ``demo`` is False (the user's own UI shows only the user's machines)."""
    demo_folder = samples_dir() / "profiles"
    folders = [*([demo_folder] if demo else []), user_profiles_dir(), *(extra or [])]
    return ProfileLibrary(folders, rules_dir() / "templates", hidden_folders=[] if demo else [demo_folder])


def save_profile_text(path: Path, text: str, *, replace: bool) -> Path:
    """Write a machine profile whole or not at all (temporary file, fsync, rename). With
    ``replace`` False an existing file is never overwritten: a new machine cannot eat an old one."""
    path.parent.mkdir(parents=True, exist_ok=True)
    tmp = write_temp(path.parent, text.encode("utf-8"), f".{path.stem}-")
    try:
        if replace:
            os.replace(tmp, path)
        else:
            os.link(tmp, path)  # fails with FileExistsError instead of overwriting
    except FileExistsError:
        raise FieldkitError(f"{path} already exists; it is left as it is") from None
    finally:
        if tmp.exists():
            tmp.unlink()
    sync_folder(path.parent)
    return path
