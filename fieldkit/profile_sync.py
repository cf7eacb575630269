"""Machine profiles through the shop server: versions, and conflicts a person resolves.

A machine profile is a TOML file someone edits by hand, so two edits cannot be merged line by
line without risk: a range copied from one maker's table beside a source from another would be
worse than either. So every saved state of a profile file becomes a *version* that names the
version it was edited from. One line of versions is taken as it comes (the newest file is
written into the profiles folder). Two versions edited from the same version are a conflict:
the file on this laptop is left as it is, the sync says so, and a person picks the one to keep
(``fieldkit sync --keep-profile ID=VERSION``), which records a version that closes both.
"""

from __future__ import annotations

import datetime as dt
import hashlib
import os
import tomllib
from dataclasses import dataclass, field
from datetime import UTC
from pathlib import Path

from fieldkit.durable import sync_folder, write_temp
from fieldkit.errors import FieldkitError
from fieldkit.store.pg_server import ShopServer
from fieldkit.store.replica import ProfileVersion, Replica
from fieldkit.store.sqlite import SqliteVisitStore, iso
from fieldkit.store.sync import Progress, SyncReport, sync

_KNOWN = "profile:"  # replica key: the version this laptop's file was last in step with


def version_id(profile_id: str, parents: tuple[str, ...], text: str) -> str:
    """The same edit of the same version made on two laptops is one version, not a conflict."""
    digest = hashlib.sha256("\x00".join((profile_id, *sorted(parents), text)).encode()).hexdigest()
    return digest[:16]


@dataclass(frozen=True, slots=True)
class ProfileConflict:
    profile_id: str
    heads: tuple[ProfileVersion, ...]

    def lines(self) -> list[str]:
        out = [
            f"profile '{self.profile_id}' was edited twice from the same version; "
            "nothing was merged and the file here was left as it is:"
        ]
        for head in self.heads:
            who = head.author or "this laptop"
            out.append(f"  version {head.id} by {who} at {head.made_at[:16].replace('T', ' ')}")
        out.append(f"  keep one with: fieldkit sync --keep-profile {self.profile_id}=VERSION")
        return out


@dataclass
class ProfileReport:
    recorded: list[str] = field(default_factory=list)
    updated: list[str] = field(default_factory=list)
    conflicts: list[ProfileConflict] = field(default_factory=list)
    skipped: list[str] = field(default_factory=list)

    def lines(self) -> list[str]:
        out: list[str] = []
        if self.recorded:
            out.append(f"profile edits recorded: {', '.join(self.recorded)}")
        if self.updated:
            out.append(f"profiles updated from the server: {', '.join(self.updated)}")
        out.extend(self.skipped)
        for conflict in self.conflicts:
            out.extend(conflict.lines())
        return out


def _files(folder: Path, report: ProfileReport | None = None) -> dict[str, Path]:
    """Profile id -> file, for the readable profile files in the folder."""
    out: dict[str, Path] = {}
    if not folder.is_dir():
        return out
    for path in sorted(folder.glob("*.toml")):
        try:
            profile_id = tomllib.loads(path.read_text(encoding="utf-8"))["id"]
            if not isinstance(profile_id, str):
                raise ValueError("id is not text")
        except (OSError, ValueError, KeyError, tomllib.TOMLDecodeError) as exc:
            if report is not None:
                report.skipped.append(f"{path}: not sent: not a readable profile ({exc})")
            continue
        out[profile_id] = path
    return out


def record_edits(replica: Replica, folder: Path, report: ProfileReport) -> None:
    """Each profile file that differs from the version it was last in step with becomes a version."""
    for profile_id, path in _files(folder, report).items():
        text = path.read_text(encoding="utf-8")
        known = replica.value(_KNOWN + profile_id)
        versions = {v.id: v for v in replica.profile_versions(profile_id)}
        if known and known in versions and versions[known].toml_text == text:
            continue
        if not known:
            same = [v for v in versions.values() if v.toml_text == text]
            if same:
                replica.set_value(_KNOWN + profile_id, same[-1].id)
                continue
        parents = (known,) if known else ()
        version = ProfileVersion(
            version_id(profile_id, parents, text), profile_id, parents, text, iso(dt.datetime.now(UTC))
        )
        replica.add_profile_version(version)
        replica.set_value(_KNOWN + profile_id, version.id)
        report.recorded.append(profile_id)


def _heads(versions: list[ProfileVersion]) -> list[ProfileVersion]:
    parents = {p for v in versions for p in v.parents}
    return [v for v in versions if v.id not in parents]


def settle(replica: Replica, folder: Path, report: ProfileReport) -> None:
    """After a pull: bring each profile file up to its single newest version, or report a conflict."""
    files = _files(folder)
    ids = sorted({v.profile_id for v in replica.profile_versions()})
    for profile_id in ids:
        heads = _heads(replica.profile_versions(profile_id))
        if len(heads) > 1:
            report.conflicts.append(ProfileConflict(profile_id, tuple(heads)))
            continue
        head = heads[0]
        if replica.value(_KNOWN + profile_id) == head.id:
            continue
        _write(files.get(profile_id) or folder / f"{profile_id}.toml", head.toml_text)
        replica.set_value(_KNOWN + profile_id, head.id)
        report.updated.append(profile_id)


def keep(replica: Replica, folder: Path, profile_id: str, chosen: str) -> ProfileVersion:
    """Resolve a conflict: a new version with the chosen text, made from every current head."""
    versions = replica.profile_versions(profile_id)
    heads = _heads(versions)
    match = [v for v in versions if v.id.startswith(chosen)] if chosen else []
    if len(match) != 1:
        known = ", ".join(h.id for h in heads) or "none"
        raise FieldkitError(
            f"profile '{profile_id}' has no single version '{chosen}' (current versions: {known})"
        )
    parents = tuple(sorted(h.id for h in heads))
    text = match[0].toml_text
    version = ProfileVersion(
        version_id(profile_id, parents, text), profile_id, parents, text, iso(dt.datetime.now(UTC))
    )
    replica.add_profile_version(version)
    _write(_files(folder).get(profile_id) or folder / f"{profile_id}.toml", text)
    replica.set_value(_KNOWN + profile_id, version.id)
    return version


def _write(path: Path, text: str) -> None:
    path.parent.mkdir(parents=True, exist_ok=True)
    tmp = write_temp(path.parent, text.encode("utf-8"), f".{path.stem}-")
    try:
        os.replace(tmp, path)
    except BaseException:
        tmp.unlink(missing_ok=True)
        raise
    sync_folder(path.parent)


def sync_with_profiles(
    store: SqliteVisitStore, server: ShopServer, folder: Path, progress: Progress | None = None
) -> tuple[SyncReport, ProfileReport]:
    """The whole ``fieldkit sync``: profile files become versions, records go both ways, then the
    profile files are brought up to date (or their conflicts reported)."""
    profiles = ProfileReport()
    replica = Replica(store)
    record_edits(replica, folder, profiles)
    report = sync(store, server, progress=progress)
    settle(replica, folder, profiles)
    return report, profiles
