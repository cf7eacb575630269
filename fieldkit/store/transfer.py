"""One visit as a JSON file of our own: hand-over between laptops, e-mail to the office, backup.

The file is an envelope ``{"fieldkit_visit": 1, "exported_at": …, "visit": {…}, "profile": {…} | null,
"kit": […]}``.
``fieldkit_visit`` is the envelope's format version (a file from a newer fieldkit is refused with
a message saying so); ``visit`` and ``profile`` are the models' own JSON, with every quantity as
the text a person would type (``"24.5 bar"``) written exactly, so export → import gives back
equal models. The profile travels along so the office can read the visit without the
technician's profile folder.

Reading is strict: a size limit, syntax errors with line and column, duplicate keys refused,
and validation errors with the key path (``visit.readings.3.value``).
"""

from __future__ import annotations

import contextlib
import datetime as dt
import enum
import json
import os
from datetime import UTC
from pathlib import Path
from typing import Any

import pint
from pydantic import ValidationError

from fieldkit.durable import sync_folder, write_temp
from fieldkit.errors import DataFileError
from fieldkit.model.base import SCHEMA_VERSION, Strict
from fieldkit.model.kit import KitItem
from fieldkit.model.profile import MachineProfile
from fieldkit.model.quantity import quantity_text
from fieldkit.model.visit import Visit
from fieldkit.store.filenames import export_stem, safe_file_name
from fieldkit.tomlfile import validation_error

FORMAT_KEY = "fieldkit_visit"
FORMAT_VERSION = 1
MAX_EXPORT_BYTES = 20_000_000
_TEXT_NAME = "<visit JSON>"


class _Envelope(Strict):
    fieldkit_visit: int
    exported_at: dt.datetime
    visit: Visit
    profile: MachineProfile | None = None
    #: The kit items the visit's gauges were picked from, so the office (or the next laptop)
    #: learns the instruments too. Older exports have none.
    kit: list[KitItem] = []


def _plain(value: Any) -> Any:
    """JSON for what pydantic leaves as objects (a profile's parameter table holds quantities)."""
    if isinstance(value, pint.Quantity):
        return quantity_text(value)
    if isinstance(value, enum.Enum):
        return value.value
    if isinstance(value, (dt.date, dt.datetime)):
        return value.isoformat()
    raise TypeError(f"cannot write {type(value).__name__} to a visit export")


def export_visit_json(
    visit: Visit, profile: MachineProfile | None = None, kit: list[KitItem] | None = None
) -> str:
    """The export text for a visit (and the profile it was measured against, and the kit items
    its gauges came from, if given). Readings whose stored value could not be read are left out
    (:meth:`~fieldkit.model.visit.Visit.without_unreadable`): the file must import anywhere."""
    visit, _left_out = visit.without_unreadable()
    envelope = {
        FORMAT_KEY: FORMAT_VERSION,
        "exported_at": dt.datetime.now(UTC).isoformat(timespec="seconds").replace("+00:00", "Z"),
        "visit": json.loads(visit.model_dump_json()),
        "profile": json.loads(json.dumps(profile.model_dump(), default=_plain))
        if profile is not None
        else None,
        "kit": [json.loads(item.model_dump_json()) for item in kit or []],
    }
    return json.dumps(envelope, ensure_ascii=False, indent=2) + "\n"


def export_file_name(visit: Visit) -> str:
    """A safe file name for a visit's export: job number, machine and date."""
    return safe_file_name(export_stem(visit.job_number, visit.machine, visit.date.isoformat()), ".json")


# --- reading -------------------------------------------------------------------------------


def _source_text(source: str | bytes | os.PathLike[str], name: str | None) -> tuple[str, str]:
    if isinstance(source, os.PathLike):
        path = Path(source)
        label = name or str(path)
        try:
            size = path.stat().st_size
            if size > MAX_EXPORT_BYTES:
                raise DataFileError(
                    label, f"the file is {size:,} bytes; a visit export is at most {MAX_EXPORT_BYTES:,}"
                )
            raw = path.read_bytes()
        except OSError as exc:
            raise DataFileError(label, f"cannot read the file ({exc.strerror or exc})") from None
    elif isinstance(source, bytes):
        label, raw = name or _TEXT_NAME, source
    elif isinstance(source, str):
        label = name or _TEXT_NAME
        if len(source) > MAX_EXPORT_BYTES or len(source.encode("utf-8", "surrogatepass")) > MAX_EXPORT_BYTES:
            raise DataFileError(
                label, f"the text is over {MAX_EXPORT_BYTES:,} bytes; a visit export is smaller"
            )
        return label, source.removeprefix("\ufeff")
    else:
        raise DataFileError(
            name or _TEXT_NAME, f"expected JSON text or a file path, got {type(source).__name__}"
        )
    if len(raw) > MAX_EXPORT_BYTES:
        raise DataFileError(
            label, f"the file is {len(raw):,} bytes; a visit export is at most {MAX_EXPORT_BYTES:,}"
        )
    try:
        return label, raw.decode("utf-8").removeprefix("\ufeff")
    except UnicodeDecodeError as exc:
        raise DataFileError(label, f"not UTF-8 text (byte {exc.start}); is this a visit export?") from None


def _no_duplicates(pairs: list[tuple[str, Any]]) -> dict[str, Any]:
    out: dict[str, Any] = {}
    for key, value in pairs:
        if key in out:
            raise ValueError(f"the key '{key}' appears twice in one object")
        out[key] = value
    return out


def _no_constants(word: str) -> Any:
    raise ValueError(f"'{word}' is not a number JSON allows")


def _parse(text: str, label: str) -> Any:
    if not text.strip():
        raise DataFileError(label, "the file is empty; expected a fieldkit visit export")
    try:
        return json.loads(text, object_pairs_hook=_no_duplicates, parse_constant=_no_constants)
    except json.JSONDecodeError as exc:
        raise DataFileError(
            label,
            f"not valid JSON: {exc.msg} (line {exc.lineno}, column {exc.colno}); "
            "was the file cut short or edited by hand?",
            line=exc.lineno,
        ) from None
    except RecursionError:
        raise DataFileError(label, "the JSON is nested far too deeply to be a visit export") from None
    except ValueError as exc:
        raise DataFileError(label, f"not a valid visit export: {exc}") from None


def _check_versions(data: Any, label: str) -> None:
    if not isinstance(data, dict) or FORMAT_KEY not in data:
        raise DataFileError(label, f"this is not a fieldkit visit export (no '{FORMAT_KEY}' key at the top)")
    version = data[FORMAT_KEY]
    if not isinstance(version, int) or isinstance(version, bool) or version < 1:
        raise DataFileError(label, f"'{FORMAT_KEY}' must be a whole number such as 1", key=FORMAT_KEY)
    if version > FORMAT_VERSION:
        raise DataFileError(
            label,
            f"this export was made by a newer fieldkit (format {version}; this program "
            f"reads format {FORMAT_VERSION}); update fieldkit to read it",
            key=FORMAT_KEY,
        )
    for part in ("visit", "profile"):
        inner = data.get(part)
        if isinstance(inner, dict) and isinstance(inner.get("schema_version"), int):
            if inner["schema_version"] > SCHEMA_VERSION:
                raise DataFileError(
                    label,
                    f"the {part} was written by a newer fieldkit (schema {inner['schema_version']}; "
                    f"this program knows {SCHEMA_VERSION}); update fieldkit to read it",
                    key=f"{part}.schema_version",
                )


def read_visit_json(
    source: str | bytes | os.PathLike[str], *, name: str | None = None
) -> tuple[Visit, MachineProfile | None]:
    """Read an export (without its kit; see :func:`read_export`)."""
    visit, profile, _kit = read_export(source, name=name)
    return visit, profile


def read_export(
    source: str | bytes | os.PathLike[str], *, name: str | None = None
) -> tuple[Visit, MachineProfile | None, list[KitItem]]:
    """Read an export. ``source`` is the JSON text (``str``/``bytes``) or a path (``pathlib.Path``);
    a plain ``str`` is always taken as text, never as a file name. ``name`` labels messages."""
    label, text = _source_text(source, name)
    data = _parse(text, label)
    _check_versions(data, label)
    try:
        envelope = _Envelope.model_validate(data)
    except ValidationError as exc:
        raise validation_error(exc, label, None) from None
    return envelope.visit, envelope.profile, envelope.kit


# --- writing -------------------------------------------------------------------------------


def write_export(text: str, folder: str | os.PathLike[str], name: str, *, overwrite: bool = False) -> Path:
    """Write an export into ``folder`` (which must exist) under a sanitised ``name``.

    The write is atomic (temporary file in the same folder, fsync, rename), so a full disk or a
    pulled USB stick leaves the old file or none, never half a file. An existing file is kept
    unless ``overwrite``: the new one gets `` (2)``, `` (3)``… Returns the path written.
    """
    where = Path(folder)
    if not where.is_dir():
        raise DataFileError(str(where), "no such folder; choose an existing folder for the export")
    stem = name[:-5] if name.lower().endswith(".json") else name
    file_name = safe_file_name(stem, ".json")
    target = where / file_name
    if target.parent != where or Path(file_name).name != file_name:  # belt and braces
        raise DataFileError(str(where), f"refusing the file name {file_name!r}")
    try:
        tmp = write_temp(where, text.encode("utf-8"), ".fieldkit-export-")
    except OSError as exc:
        raise DataFileError(str(where), f"cannot write in this folder ({exc.strerror or exc})") from None
    try:
        try:
            final = _place(tmp, target, overwrite)
        except OSError as exc:
            raise DataFileError(str(target), f"cannot write the export ({exc.strerror or exc})") from None
    finally:
        with contextlib.suppress(FileNotFoundError):
            tmp.unlink()
    sync_folder(where)
    return final


def _place(tmp: Path, target: Path, overwrite: bool) -> Path:
    if overwrite:
        os.replace(tmp, target)
        return target
    stem = target.name[: -len(".json")]
    for n in range(1, 1000):
        candidate = target if n == 1 else target.with_name(f"{stem} ({n}).json")
        try:
            os.link(tmp, candidate)  # atomic and never overwrites
            return candidate
        except FileExistsError:
            continue
        except OSError:  # no hard links on this file system (FAT): check, then rename
            if candidate.exists():
                continue
            os.replace(tmp, candidate)
            return candidate
    raise DataFileError(str(target.parent), f"too many exports named {stem!r} already; move some away")
