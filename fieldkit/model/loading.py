"""Loading machine profiles and circuit templates from the TOML files people edit.

A circuit that names a template starts from the template's test points and typical figures; the
profile gives the maker's figures (its ``parameters``), which every range written as an
expression follows (:mod:`fieldkit.model.ranges`), overrides single ranges by condition or whole
points by local id, drops points with ``omit_test_points``, and leaves out the points on parts
that are not in its ``fitted_parts``. Every mistake is reported with file, line and key.
"""

from __future__ import annotations

import copy
from pathlib import Path
from typing import Any

from pydantic import Field, ValidationError

from fieldkit.errors import DataFileError
from fieldkit.expr import ExprError
from fieldkit.model.base import Strict
from fieldkit.model.parameters import PARAMETERS
from fieldkit.model.parts import Part
from fieldkit.model.profile import CircuitKind, MachineProfile, Relief, ReliefLayout, TestPoint
from fieldkit.model.quantity import parse_for_kind
from fieldkit.model.ranges import (
    MACHINE_FIGURES,
    Figure,
    compile_bound,
    figures_text,
    range_mark,
    resolve_bound,
)
from fieldkit.model.roles import ROLES, Role
from fieldkit.tomlfile import (
    key_lines,
    line_for,
    load_model,
    parse_toml,
    read_text,
    validate,
    validation_error,
)
from fieldkit.units import Kind

ROLES_BY_VALUE = {r.value for r in Role}


class TypicalFigure(Strict):
    """A template's stand-in for a maker's figure, with where the typical value comes from."""

    typical: str
    source: str = Field(min_length=3, description="'common practice: …', 'from memory: …' or a citation")


class CircuitTemplate(Strict):
    """Typical test points and ranges for a kind of circuit, for a machine with no profile yet.

    ``test_points`` hold the ranges resolved with the template's typical figures (a check that
    every expression works); a machine resolves the raw expressions again with its own figures.
    """

    id: str = Field(pattern=r"^[a-z0-9_]+$")
    kind: CircuitKind
    name: str
    description: str = ""
    parameters: dict[str, TypicalFigure] = Field(default_factory=dict)
    parts: list[Part] = Field(
        default_factory=list, description="optional parts this kind of circuit may have"
    )
    #: Relief settings may be written as expressions of the figures ("main_relief_setting"), so
    #: a machine that enters its figures gets reliefs that follow them.
    reliefs: list[Relief] = Field(default_factory=list)
    relief_layout: ReliefLayout | None = None
    test_points: list[TestPoint] = Field(min_length=1)
    #: The points of each repeated section (a valve bank's work sections), in order. A machine with
    #: fewer sections omits the later ones' points; one with more adds a second circuit.
    sections: list[list[str]] = Field(default_factory=list)

    def sections_fitted(self, omitted: list[str]) -> int:
        """How many sections a circuit has: those before the first whose points are all omitted."""
        for n, points in enumerate(self.sections):
            if set(points) <= set(omitted):
                return n
        return len(self.sections)


#: Machine figures used only to check that a template's expressions give valid ranges.
_CHECK_FIGURES = {"rated_speed": "2000 rpm", "rated_max_pressure": "250 bar"}

Templates = dict[str, tuple[CircuitTemplate, dict[str, Any]]]
#: Where a range was written: file, the line of each bound, key path.
Where = tuple[str, dict[str, int | None], str]


def _typical_figures(raw: dict[str, Any], path: str, lines: dict[tuple[Any, ...], int]) -> dict[str, Figure]:
    out: dict[str, Figure] = {}
    params = raw.get("parameters", {})
    if not isinstance(params, dict):
        return out
    for name, spec in params.items():
        if not isinstance(spec, dict) or name not in PARAMETERS:
            continue  # the model check below reports it with its line
        kind, label = PARAMETERS[name]
        try:
            value = parse_for_kind(kind, spec.get("typical"))
        except (ValueError, TypeError) as exc:
            raise DataFileError(
                path,
                f"typical value of '{name}': {exc}",
                line_for(lines, ("parameters", name)),
                f"parameters.{name}",
            ) from None
        out[name] = Figure(value, kind, label, str(spec.get("source", "")) or "common practice")
    return out


def _machine_figures(raw: dict[str, Any], path: str, lines: dict[tuple[Any, ...], int]) -> dict[str, Figure]:
    out: dict[str, Figure] = {}
    for name, (kind, label) in MACHINE_FIGURES.items():
        text = raw.get(name)
        if text is None:
            continue
        try:
            out[name] = Figure(parse_for_kind(kind, text), kind, label)
        except (ValueError, TypeError) as exc:
            raise DataFileError(path, f"{name}: {exc}", line_for(lines, (name,)), name) from None
    return out


def _resolve_points(
    points: list[dict[str, Any]],
    figures: dict[str, Figure],
    where: dict[int, Where],
    fallback: Where,
    fitted: set[str] | None = None,
) -> list[dict[str, Any]]:
    """Each point's ranges with every bound worked out from the figures and its source saying
    which figures it used; ``where`` maps a range (by id) to the file, line and key it was
    written at, for the error message."""
    out = []
    for tp in points:
        if not isinstance(tp, dict):
            out.append(tp)
            continue
        role = tp.get("role")
        kind = ROLES[Role(role)].kind if role in ROLES_BY_VALUE else None
        expected = tp.get("expected")
        if kind is None or not isinstance(expected, list):
            out.append(tp)
            continue
        ranges = []
        for rng in expected:
            if not isinstance(rng, dict):
                ranges.append(rng)
                continue
            if fitted is not None and rng.get("part") is not None and rng.get("part") not in fitted:
                continue
            path, bound_lines, key = where.get(id(rng), fallback)
            resolved = dict(rng)
            used: list[str] = []
            for bound in ("low", "high"):
                text = rng.get(bound)
                if not isinstance(text, str):
                    continue
                if id(rng) not in where and not compile_bound(text, kind).names <= figures.keys():
                    # A template range needing a figure with no typical value and none given
                    # (a displacement): left out, so the next range for the condition applies.
                    resolved = {}
                    break
                try:
                    res = resolve_bound(text, kind, figures)
                except ExprError as exc:
                    raise DataFileError(
                        path,
                        f"{bound} = {text!r}: {role} needs a {kind.value}; {exc.args[0]}",
                        bound_lines.get(bound),
                        f"{key}.{bound}",
                    ) from None
                resolved[bound] = res.text
                used.extend(res.used)
            if not resolved:
                continue
            source = str(rng.get("source", ""))
            if used:
                resolved["source"] = (
                    f"{figures_text(used, figures)} — {source}" if source else figures_text(used, figures)
                )
            resolved["typical"] = range_mark(used, figures, source)
            if any(isinstance(r, dict) and _same_when(r.get("when"), rng.get("when")) for r in ranges):
                continue  # shadowed by an earlier range for the same condition: never used
            ranges.append(resolved)
        out.append({**tp, "expected": ranges})
    return out


def load_templates(folder: Path) -> Templates:
    """Every template in a folder, validated, with its raw table kept for merging."""
    out: Templates = {}
    for path in sorted(folder.glob("*.toml")):
        text = read_text(path)
        raw = parse_toml(text, str(path))
        lines = key_lines(text)
        figures = _typical_figures(raw, str(path), lines)
        for i, tp in enumerate(
            raw.get("test_points", []) if isinstance(raw.get("test_points"), list) else []
        ):
            for j, rng in enumerate(tp.get("expected", []) if isinstance(tp, dict) else []):
                if isinstance(rng, dict):
                    _check_bounds(rng, tp, str(path), lines, (i, j))
        check = {**figures, **_machine_figures(_CHECK_FIGURES, str(path), {})}
        points = raw.get("test_points")
        checked = dict(raw)
        if isinstance(points, list):
            checked["test_points"] = _resolve_points(points, check, {}, (str(path), {}, "test_points"))
        if "reliefs" in raw:
            checked["reliefs"] = _resolve_reliefs(raw["reliefs"], check, str(path), lines)
        tmpl = validate(CircuitTemplate, checked, str(path), text)
        for i, tp in enumerate(tmpl.test_points):
            if tp.part is not None and tp.part not in tmpl.parts:
                raise DataFileError(
                    str(path),
                    f"test point '{tp.id}' is on part '{tp.part.value}', not in this template's parts",
                    line_for(lines, ("test_points", i, "part")),
                    f"test_points.{i}.part",
                )
        known = {tp.id.split(".")[-1] for tp in tmpl.test_points}
        for n, section in enumerate(tmpl.sections):
            unknown = [p for p in section if p not in known] or ([] if section else ["(none)"])
            if unknown:
                raise DataFileError(
                    str(path),
                    f"section {n + 1} names {', '.join(unknown)}, not a test point of this template",
                    line_for(lines, ("sections",)),
                    f"sections.{n}",
                )
        if tmpl.id in out:
            raise DataFileError(str(path), f"template id '{tmpl.id}' is already used by another file")
        out[tmpl.id] = (tmpl, raw)
    return out


def _resolve_reliefs(
    reliefs: Any, figures: dict[str, Figure], path: str, lines: dict[tuple[Any, ...], int]
) -> Any:
    """A template's reliefs with each setting written as an expression of the figures worked out
    ("main_relief_setting * 110 %"); a plain pressure is kept as written."""
    if not isinstance(reliefs, list):
        return reliefs
    out = []
    for i, relief in enumerate(reliefs):
        if not isinstance(relief, dict) or not isinstance(relief.get("setting"), str):
            out.append(relief)
            continue
        text = relief["setting"]
        try:
            res = resolve_bound(text, Kind.PRESSURE, figures)
        except ExprError as exc:
            raise DataFileError(
                path,
                f"setting = {text!r}: a relief setting is a pressure; {exc.args[0]}",
                line_for(lines, ("reliefs", i, "setting")),
                f"reliefs.{i}.setting",
            ) from None
        out.append({**relief, "setting": res.text})
    return out


def _check_bounds(
    rng: dict[str, Any],
    tp: dict[str, Any],
    path: str,
    lines: dict[tuple[Any, ...], int],
    at: tuple[int, int],
) -> None:
    """Every bound of a template range must be an expression of the point's kind, reported at
    its own line when it is not."""
    role = tp.get("role")
    if role not in ROLES_BY_VALUE:
        return
    kind = ROLES[Role(role)].kind
    for bound in ("low", "high"):
        text = rng.get(bound)
        if not isinstance(text, str):
            continue
        loc = ("test_points", at[0], "expected", at[1], bound)
        try:
            compile_bound(text, kind)
        except ExprError as exc:
            raise DataFileError(
                path, f"{bound} = {text!r}: {exc}", line_for(lines, loc), ".".join(map(str, loc))
            ) from None


def _same_when(a: Any, b: Any) -> bool:
    """Two conditions alike, whatever order their function states are listed in."""

    def norm(w: Any) -> Any:
        if not isinstance(w, dict):
            return w or {}
        f = w.get("function")
        return {**w, "function": sorted(map(str, f))} if isinstance(f, list) else w

    return bool(norm(a) == norm(b))


def _merge_ranges(template: list[Any], own: list[Any]) -> list[Any]:
    """The profile's ranges replace the template's one for one by condition; a range for a new
    condition goes first (specific ranges first: the first match wins)."""
    merged = list(template)
    fresh = []
    for rng in own:
        when = rng.get("when") if isinstance(rng, dict) else None
        for k, old in enumerate(merged):
            if isinstance(old, dict) and isinstance(rng, dict) and _same_when(old.get("when"), when):
                merged[k] = rng
                break
        else:
            fresh.append(rng)
    return fresh + merged


def _fitted(circuit: dict[str, Any]) -> set[str] | None:
    parts = circuit.get("fitted_parts")
    return {str(p) for p in parts} if isinstance(parts, list) else None


def _merge_circuit(
    circuit: dict[str, Any],
    templates: Templates,
    path: str,
    text: str,
    lines: dict[tuple[Any, ...], int],
    index: int,
    machine: dict[str, Figure],
) -> dict[str, Any]:
    where: dict[int, Where] = {}
    for j, tp in enumerate(
        circuit.get("test_points", []) if isinstance(circuit.get("test_points"), list) else []
    ):
        for k, rng in enumerate(tp.get("expected", []) if isinstance(tp, dict) else []):
            loc: tuple[str | int, ...] = ("circuits", index, "test_points", j, "expected", k)
            where[id(rng)] = (
                path,
                {b: line_for(lines, (*loc, b)) for b in ("low", "high")},
                ".".join(map(str, loc)),
            )
    at = line_for(lines, ("circuits", index, "parameters"))
    params_at = (path, {"low": at, "high": at}, f"circuits.{index}.parameters")
    own_figures = _own_figures(circuit, path, lines, index)
    name = circuit.get("template")
    if name is None:
        merged = dict(circuit)
        if isinstance(merged.get("test_points"), list):
            merged["test_points"] = _resolve_points(
                merged["test_points"], {**machine, **own_figures}, where, params_at, _fitted(circuit)
            )
        return merged
    if not isinstance(name, str) or name not in templates:
        known = ", ".join(sorted(templates)) or "none"
        raise DataFileError(
            path,
            f"unknown circuit template '{name}' (known: {known})",
            line_for(lines, ("circuits", index, "template")),
            f"circuits.{index}.template",
        )
    tmpl, raw = templates[name]
    merged = dict(circuit)
    merged.setdefault("kind", raw["kind"])
    typical = {n: f for n, f in _typical_figures(raw, path, {}).items() if n not in own_figures}
    merged["parameters"] = {
        **{n: raw["parameters"][n]["typical"] for n in typical},
        **circuit.get("parameters", {}),
    }
    merged["typical_parameters"] = {n: f.typical_source for n, f in typical.items()}
    own_reliefs = "reliefs" in circuit
    fitted = _fitted(circuit)
    omit = circuit.get("omit_test_points", [])
    known_ids = {tp.get("id") for tp in raw["test_points"]}
    for bad in omit:
        if bad not in known_ids:
            raise DataFileError(
                path,
                f"omit_test_points names '{bad}', which template '{name}' does not have",
                line_for(lines, ("circuits", index, "omit_test_points")),
                f"circuits.{index}.omit_test_points",
            )
    for k, part in enumerate(circuit.get("fitted_parts") or []):
        if part not in {p.value for p in tmpl.parts}:
            raise DataFileError(
                path,
                f"fitted_parts names '{part}', which template '{name}' does not offer "
                f"(it offers: {', '.join(p.value for p in tmpl.parts) or 'none'})",
                line_for(lines, ("circuits", index, "fitted_parts")),
                f"circuits.{index}.fitted_parts.{k}",
            )
    points = [
        copy.deepcopy(tp)
        for tp in raw["test_points"]
        if tp.get("id") not in omit and (fitted is None or tp.get("part") is None or tp.get("part") in fitted)
    ]
    by_id = {tp["id"]: tp for tp in points}
    figures = {**machine, **typical, **own_figures}
    if not own_reliefs and raw.get("reliefs"):
        # The template's reliefs, set from this machine's figures (its own list replaces them).
        merged["reliefs"] = _resolve_reliefs(copy.deepcopy(raw["reliefs"]), figures, path, {})
        if "relief_layout" not in circuit and raw.get("relief_layout"):
            merged["relief_layout"] = copy.deepcopy(raw["relief_layout"])
    for j, tp in enumerate(circuit.get("test_points", [])):
        loc = ("circuits", index, "test_points", j)
        if isinstance(tp, dict) and tp.get("id") in by_id:
            target = by_id[tp["id"]]
            ranges = _merge_ranges(target.get("expected", []), tp.get("expected", []))
            target.update({k: v for k, v in tp.items() if k != "expected"})  # the profile's keys win
            target["expected"] = ranges
            _check_point(_resolve_points([target], figures, where, params_at, fitted)[0], path, text, loc)
        elif isinstance(tp, dict) and tp.get("id") in known_ids:
            continue  # a point this machine's parts or omissions leave out: its overrides go with it
        else:
            _check_point(_resolve_points([tp], figures, where, params_at, fitted)[0], path, text, loc)
            points.append(tp)
    merged["test_points"] = _resolve_points(points, figures, where, params_at, fitted)
    _check_port_reliefs(merged, path, lines, index)
    return merged


def _check_port_reliefs(
    merged: dict[str, Any], path: str, lines: dict[tuple[Any, ...], int], index: int
) -> None:
    """A work port names the port relief it sees; a profile listing its own reliefs must list
    those the template's ports name (or leave reliefs out and take the template's)."""
    reliefs = merged.get("reliefs")
    listed = {r.get("id") for r in reliefs if isinstance(r, dict)} if isinstance(reliefs, list) else set()
    for tp in merged.get("test_points") or []:
        wanted = tp.get("relief") if isinstance(tp, dict) else None
        if isinstance(wanted, str) and wanted not in listed:
            at = ("circuits", index, "reliefs")
            raise DataFileError(
                path,
                f"test point '{tp.get('id')}' is on port relief '{wanted}', which this circuit's reliefs "
                f"do not list (they list: {', '.join(sorted(map(str, listed))) or 'none'}); add it, "
                "omit the point (omit_test_points), or leave reliefs out to take the template's",
                line_for(lines, at) or line_for(lines, ("circuits", index)),
                ".".join(map(str, at)),
            )


def _own_figures(
    circuit: dict[str, Any], path: str, lines: dict[tuple[Any, ...], int], index: int
) -> dict[str, Figure]:
    """The maker's figures a circuit gives (its ``parameters``); a bad one is left for the model
    check, which names its line."""
    out: dict[str, Figure] = {}
    params = circuit.get("parameters", {})
    if not isinstance(params, dict):
        return out
    for name, value in params.items():
        if name not in PARAMETERS:
            continue
        kind, label = PARAMETERS[name]
        try:
            out[name] = Figure(parse_for_kind(kind, value), kind, label)
        except (ValueError, TypeError) as exc:
            raise DataFileError(
                path,
                f"parameter '{name}': {exc}",
                line_for(lines, ("circuits", index, "parameters", name)),
                f"circuits.{index}.parameters.{name}",
            ) from None
    return out


def _check_point(point: Any, path: str, text: str, loc: tuple[Any, ...]) -> None:
    """Validate one of the profile's own test points before the merge renumbers it, so an error
    names the line where the person wrote it."""
    try:
        TestPoint.model_validate(point)
    except ValidationError as exc:
        raise validation_error(exc, path, text, prefix=loc) from None


#: What the merge reads in each circuit and test point, and the TOML type each must have; checked
#: before merging so a wrong type anywhere is named with its key and line, never a TypeError.
_CIRCUIT_SHAPE: dict[str, tuple[type, str]] = {
    "template": (str, "a template id in quotes"),
    "parameters": (dict, "a table of the maker's figures"),
    "test_points": (list, "a list of [[circuits.test_points]] tables"),
    "omit_test_points": (list, "a list of test point ids"),
    "fitted_parts": (list, "a list of part names"),
    "reliefs": (list, "a list of relief tables"),
}
_POINT_SHAPE: dict[str, tuple[type, str]] = {
    "id": (str, "a test point id in quotes"),
    "role": (str, "a role name in quotes"),
    "part": (str, "a part name in quotes"),
    "expected": (list, "a list of [[...expected]] range tables"),
}


def _check_shapes(raw: dict[str, Any], path: str, lines: dict[tuple[Any, ...], int]) -> None:
    """The types the template merge relies on, reported with key and line when wrong."""

    def wrong(loc: tuple[Any, ...], what: str, value: Any) -> DataFileError:
        return DataFileError(
            path,
            f"must be {what}, not {type(value).__name__} {str(value)[:40]!r}",
            line_for(lines, loc),
            ".".join(map(str, loc)),
        )

    circuits = raw.get("circuits")
    if circuits is None:
        return
    if not isinstance(circuits, list):
        raise wrong(("circuits",), "a list of [[circuits]] tables", circuits)
    for i, circuit in enumerate(circuits):
        if not isinstance(circuit, dict):
            raise wrong(("circuits", i), "a [[circuits]] table", circuit)
        for key, (kind, what) in _CIRCUIT_SHAPE.items():
            if key in circuit and not isinstance(circuit[key], kind):
                raise wrong(("circuits", i, key), what, circuit[key])
        for key in ("omit_test_points", "fitted_parts"):
            for k, item in enumerate(circuit.get(key) or []):
                if not isinstance(item, str):
                    raise wrong(("circuits", i, key, k), "a name in quotes", item)
        for j, tp in enumerate(circuit.get("test_points") or []):
            if not isinstance(tp, dict):
                raise wrong(("circuits", i, "test_points", j), "a test point table", tp)
            for key, (kind, what) in _POINT_SHAPE.items():
                if key in tp and not isinstance(tp[key], kind):
                    raise wrong(("circuits", i, "test_points", j, key), what, tp[key])
            for k, rng in enumerate(tp.get("expected") or []):
                if not isinstance(rng, dict):
                    raise wrong(("circuits", i, "test_points", j, "expected", k), "a range table", rng)


def profile_from_raw(raw: dict[str, Any], templates: Templates, path: str, text: str = "") -> MachineProfile:
    """A profile from its parsed TOML table (a file, or the machine builder's form)."""
    lines = key_lines(text) if text else {}
    _check_shapes(raw, path, lines)
    machine = _machine_figures(raw, path, lines)
    circuits = raw.get("circuits")
    if isinstance(circuits, list):
        raw = {
            **raw,
            "circuits": [
                _merge_circuit(c, templates, path, text, lines, i, machine) if isinstance(c, dict) else c
                for i, c in enumerate(circuits)
            ],
        }
    return validate(MachineProfile, raw, path, text)


def load_profile(path: Path, templates: Templates) -> MachineProfile:
    text = read_text(path)
    return profile_from_raw(parse_toml(text, str(path)), templates, str(path), text)


def _load_one(path: Path, templates: Templates) -> MachineProfile:
    """:func:`load_profile`, with any failure the checks above did not foresee still reported as
    this file's problem (a profile folder is people's work: it must never stop the program)."""
    try:
        return load_profile(path, templates)
    except DataFileError:
        raise
    except (OSError, ValueError, TypeError, KeyError, AttributeError, RecursionError, OverflowError) as exc:
        raise DataFileError(
            str(path), f"cannot be read as a machine profile ({type(exc).__name__}: {exc})"
        ) from None


class ProfileLibrary:
    """The machine profiles fieldkit knows: bundled demo profiles and the user's own folders.

    One broken file stops nothing else: a profile that cannot be loaded (a wrong type, a cut-off
    file, binary junk, an id another file already uses) is left out and kept in ``problems``
    with its file, line, key and reason, for every command and the start screen to show; the
    other machines work as before. ``fieldkit machine check FILE`` still fails on it outright.
    """

    def __init__(
        self, folders: list[Path], templates_folder: Path, hidden_folders: list[Path] | None = None
    ) -> None:
        self.templates = load_templates(templates_folder)
        self._profiles: dict[str, tuple[MachineProfile, Path]] = {}
        #: Profiles from ``hidden_folders`` (the bundled demo outside the demo): found by id, so
        #: an old visit on one still opens, but never listed for a new visit.
        self.hidden: set[str] = set()
        #: Profile files left out because they could not be loaded, each naming file and reason.
        self.problems: list[DataFileError] = []
        for folder in [*(hidden_folders or []), *folders]:
            if not folder.is_dir():
                continue
            for path in sorted(folder.glob("*.toml")):
                try:
                    profile = _load_one(path, self.templates)
                    if profile.id in self._profiles and self._profiles[profile.id][1] != path:
                        other = self._profiles[profile.id][1]
                        raise DataFileError(
                            str(path), f"profile id '{profile.id}' is also used by {other}", key="id"
                        )
                except DataFileError as exc:
                    self.problems.append(exc)
                    continue
                self._profiles[profile.id] = (profile, path)
                if folder in (hidden_folders or []):
                    self.hidden.add(profile.id)

    def problem_lines(self) -> list[str]:
        """One line per profile file left out, for a command's standard error or the start screen."""
        return [f"skipped the broken machine profile {exc}" for exc in self.problems]

    def has(self, profile_id: str) -> bool:
        return profile_id in self._profiles

    def get(self, profile_id: str) -> MachineProfile:
        try:
            return self._profiles[profile_id][0]
        except KeyError:
            known = ", ".join(sorted(self._profiles)) or "none"
            broken = (
                f"; {len(self.problems)} broken profile file(s) were left out: "
                + "; ".join(exc.path for exc in self.problems)
                if self.problems
                else ""
            )
            raise DataFileError(
                profile_id, f"no machine profile with this id (known: {known}){broken}"
            ) from None

    def path_of(self, profile_id: str) -> Path:
        return self._profiles[profile_id][1]

    def ids(self) -> list[str]:
        """The machines to list (hidden demo machines left out)."""
        return sorted(p for p in self._profiles if p not in self.hidden)

    def profiles(self) -> list[MachineProfile]:
        return [self._profiles[i][0] for i in self.ids()]

    def add(self, profile: MachineProfile, path: Path) -> None:
        self._profiles[profile.id] = (profile, path)
        self.hidden.discard(profile.id)


__all__ = [
    "CircuitTemplate",
    "Templates",
    "TypicalFigure",
    "profile_from_raw",
    "ProfileLibrary",
    "load_model",
    "load_profile",
    "load_templates",
]
