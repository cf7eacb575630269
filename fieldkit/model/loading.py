"""Loading machine profiles and circuit templates from the TOML files people edit.

A circuit that names a template starts from the template's test points and parameters; the
profile then overrides them by local id (the maker's figures win) or drops them with
``omit_test_points``. Every mistake is reported with file, line and key.
"""

from __future__ import annotations

import copy
from pathlib import Path
from typing import Any

from pydantic import Field, ValidationError

from fieldkit.errors import DataFileError
from fieldkit.model.base import Strict
from fieldkit.model.profile import CircuitKind, MachineProfile, Relief, TestPoint
from fieldkit.tomlfile import (
    key_lines,
    line_for,
    load_model,
    parse_toml,
    read_text,
    validate,
    validation_error,
)


class CircuitTemplate(Strict):
    """Typical test points and ranges for a kind of circuit, for a machine with no profile yet."""

    id: str = Field(pattern=r"^[a-z0-9_]+$")
    kind: CircuitKind
    name: str
    description: str = ""
    parameters: dict[str, Any] = Field(default_factory=dict)
    reliefs: list[Relief] = Field(default_factory=list)
    test_points: list[TestPoint] = Field(min_length=1)


def load_templates(folder: Path) -> dict[str, tuple[CircuitTemplate, dict[str, Any]]]:
    """Every template in a folder, validated, with its raw table kept for merging."""
    out: dict[str, tuple[CircuitTemplate, dict[str, Any]]] = {}
    for path in sorted(folder.glob("*.toml")):
        text = read_text(path)
        raw = parse_toml(text, str(path))
        tmpl = validate(CircuitTemplate, raw, str(path), text)
        for i, tp in enumerate(tmpl.test_points):
            for j, rng in enumerate(tp.expected):
                if not rng.source.strip():
                    raise DataFileError(
                        str(path),
                        "every template range needs a source",
                        line_for(key_lines(text), ("test_points", i, "expected", j)),
                    )
        if tmpl.id in out:
            raise DataFileError(str(path), f"template id '{tmpl.id}' is already used by another file")
        out[tmpl.id] = (tmpl, raw)
    return out


def _merge_circuit(
    circuit: dict[str, Any],
    templates: dict[str, tuple[CircuitTemplate, dict[str, Any]]],
    path: str,
    text: str,
    lines: dict[tuple[Any, ...], int],
    index: int,
) -> dict[str, Any]:
    name = circuit.get("template")
    if name is None:
        return circuit
    if not isinstance(name, str) or name not in templates:
        known = ", ".join(sorted(templates)) or "none"
        raise DataFileError(
            path,
            f"unknown circuit template '{name}' (known: {known})",
            line_for(lines, ("circuits", index, "template")),
            f"circuits.{index}.template",
        )
    _tmpl, raw = templates[name]
    merged = dict(circuit)
    merged.setdefault("kind", raw["kind"])
    merged["parameters"] = {**raw.get("parameters", {}), **circuit.get("parameters", {})}
    if "reliefs" not in circuit and raw.get("reliefs"):
        merged["reliefs"] = copy.deepcopy(raw["reliefs"])
    omit = circuit.get("omit_test_points", [])
    points = [copy.deepcopy(tp) for tp in raw["test_points"] if tp.get("id") not in omit]
    by_id = {tp["id"]: tp for tp in points}
    known_ids = {tp.get("id") for tp in raw["test_points"]}
    for bad in omit:
        if bad not in known_ids:
            raise DataFileError(
                path,
                f"omit_test_points names '{bad}', which template '{name}' does not have",
                line_for(lines, ("circuits", index, "omit_test_points")),
            )
    for j, tp in enumerate(circuit.get("test_points", [])):
        if isinstance(tp, dict) and tp.get("id") in by_id:
            by_id[tp["id"]].update(tp)  # the profile's keys replace the template's
            _check_point(by_id[tp["id"]], path, text, ("circuits", index, "test_points", j))
        else:
            _check_point(tp, path, text, ("circuits", index, "test_points", j))
            points.append(tp)
    merged["test_points"] = points
    return merged


def _check_point(point: Any, path: str, text: str, loc: tuple[Any, ...]) -> None:
    """Validate one of the profile's own test points before the merge renumbers it, so an error
    names the line where the person wrote it."""
    try:
        TestPoint.model_validate(point)
    except ValidationError as exc:
        raise validation_error(exc, path, text, prefix=loc) from None


def load_profile(path: Path, templates: dict[str, tuple[CircuitTemplate, dict[str, Any]]]) -> MachineProfile:
    text = read_text(path)
    raw = parse_toml(text, str(path))
    lines = key_lines(text)
    circuits = raw.get("circuits")
    if isinstance(circuits, list):
        raw = {
            **raw,
            "circuits": [
                _merge_circuit(c, templates, str(path), text, lines, i) if isinstance(c, dict) else c
                for i, c in enumerate(circuits)
            ],
        }
    return validate(MachineProfile, raw, str(path), text)


class ProfileLibrary:
    """The machine profiles fieldkit knows: bundled demo profiles and the user's own folders."""

    def __init__(self, folders: list[Path], templates_folder: Path) -> None:
        self.templates = load_templates(templates_folder)
        self._profiles: dict[str, tuple[MachineProfile, Path]] = {}
        for folder in folders:
            if not folder.is_dir():
                continue
            for path in sorted(folder.glob("*.toml")):
                profile = load_profile(path, self.templates)
                if profile.id in self._profiles and self._profiles[profile.id][1] != path:
                    other = self._profiles[profile.id][1]
                    raise DataFileError(
                        str(path), f"profile id '{profile.id}' is also used by {other}", key="id"
                    )
                self._profiles[profile.id] = (profile, path)

    def get(self, profile_id: str) -> MachineProfile:
        try:
            return self._profiles[profile_id][0]
        except KeyError:
            known = ", ".join(sorted(self._profiles)) or "none"
            raise DataFileError(profile_id, f"no machine profile with this id (known: {known})") from None

    def path_of(self, profile_id: str) -> Path:
        return self._profiles[profile_id][1]

    def ids(self) -> list[str]:
        return sorted(self._profiles)

    def profiles(self) -> list[MachineProfile]:
        return [self._profiles[i][0] for i in self.ids()]

    def add(self, profile: MachineProfile, path: Path) -> None:
        self._profiles[profile.id] = (profile, path)


def default_library(extra: list[Path] | None = None) -> ProfileLibrary:
    """Bundled demo profiles plus the user's profile folder and any extra folders named."""
    from fieldkit.resources import rules_dir, samples_dir
    from fieldkit.settings import user_profiles_dir

    folders = [samples_dir() / "profiles", user_profiles_dir(), *(extra or [])]
    return ProfileLibrary(folders, rules_dir() / "templates")


__all__ = [
    "CircuitTemplate",
    "ProfileLibrary",
    "default_library",
    "load_model",
    "load_profile",
    "load_templates",
]
