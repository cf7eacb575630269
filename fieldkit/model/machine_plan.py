"""A machine's test plan in words, and the commented skeleton of a new profile.

``fieldkit machine show`` prints the plan; the machine builder screen shows the same lines, so a
technician sees one answer wherever they look: every point, every range with its condition, the
figures it follows and whether it is only typical.
"""

from __future__ import annotations

from typing import Any

from fieldkit.model.loading import Templates, profile_from_raw
from fieldkit.model.parameters import PARAMETERS
from fieldkit.model.parts import PART_LABELS
from fieldkit.model.profile import Circuit, ExpectedRange, MachineProfile
from fieldkit.model.ranges import compile_bound
from fieldkit.model.roles import ROLES, Role
from fieldkit.model.toml_writer import inline
from fieldkit.units import METRIC, DisplaySystem, format_value


def range_words(rng: ExpectedRange, system: DisplaySystem = METRIC) -> str:
    low = format_value(rng.low, system) if rng.low is not None else None
    high = format_value(rng.high, system) if rng.high is not None else None
    if low and high:
        return f"{low} to {high}"
    return f"at least {low}" if low else f"at most {high}"


def when_words(rng: ExpectedRange) -> str:
    states = [s.value.replace("_", " ") for s in rng.when.function]
    return ", ".join(states) if states else "any condition"


def plan_lines(profile: MachineProfile, system: DisplaySystem = METRIC) -> list[str]:
    """The test plan, one line per point and per range, ready to print or to show."""
    out = [
        f"{profile.name} ({profile.id}): rated {format_value(profile.rated_speed)}, "
        f"{format_value(profile.rated_max_pressure, system)}"
    ]
    for c in profile.circuits:
        out.append("")
        head = f"{c.name} [{c.id}, {c.template or c.kind.value}]"
        out.append(head)
        if c.fitted_parts is not None:
            fitted = ", ".join(PART_LABELS[p] for p in c.fitted_parts) or "none of the optional parts"
            out.append(f"  parts fitted: {fitted}")
        else:
            out.append("  parts fitted: not stated, so every optional part is assumed fitted")
        for name, q in c.parameters.items():
            mark = f"  ({c.typical_parameters[name].split(':')[0]})" if name in c.typical_parameters else ""
            out.append(f"  {PARAMETERS[name][1]}: {format_value(q, system)}{mark}")
        out.extend(f"  ! {note}" for note in relief_notes(c, system))
        for tp in c.test_points:
            where = f" — {tp.location}" if tp.location else ""
            out.append(f"  · {tp.label} [{tp.id}]{where}")
            if not tp.expected:
                out.append("      no expected range: the reading is recorded, not judged")
            for rng in tp.expected:
                mark = f" [{rng.typical}]" if rng.typical else ""
                out.append(f"      {when_words(rng)}: {range_words(rng, system)}{mark}")
                out.append(f"        source: {rng.source}")
    return out


def relief_notes(circuit: Circuit, system: DisplaySystem = METRIC) -> list[str]:
    """What the figures say about which relief governs where (in parallel the lowest setting
    governs): a steering relief at or above the pump's cut-off can never open, which is a fault
    or a wrong figure; a port relief above the main relief is capped by it (the usual case, said
    once so the plan's equal port ranges make sense)."""
    p = circuit.parameters
    notes: list[str] = []
    steering, cutoff = p.get("steering_relief_setting"), p.get("compensator_setting")
    if steering is not None and cutoff is not None and steering >= cutoff:
        notes.append(
            f"steering relief {format_value(steering, system)} is at or above the pump's cut-off "
            f"{format_value(cutoff, system)}: it can never open and the cut-off governs the steering; "
            "check the figure (a steering relief belongs below the cut-off)"
        )
    main = p.get("main_relief_setting")
    if main is None:
        return notes
    capped = [
        name.removeprefix("port_").removesuffix("_relief_setting").upper()
        for name, q in p.items()
        if name.startswith("port_")
        and name.endswith("_relief_setting")
        and q >= main
        and any(tp.relief == f"port_{name[5:7]}" for tp in circuit.test_points)
    ]
    if capped:
        notes.append(
            f"port reliefs {', '.join(capped)} are set at or above the main relief "
            f"{format_value(main, system)}: a stall at those ports reads the main relief, never their own"
        )
    return notes


def skeleton(templates: Templates, chosen: list[str], machine_id: str, name: str) -> str:
    """A commented profile for the chosen templates: every figure the templates use, with its
    typical value and source in a comment, and the optional parts to tick."""
    lines = [
        "# Machine profile written by 'fieldkit machine new'. Fill in the maker's figures; a",
        "# figure left commented out falls back to the template's typical value, and every range",
        "# that uses it is marked typical on screen and on the job card.",
        "# Check it with: fieldkit machine check THIS_FILE",
        "",
        f'id = "{machine_id}"',
        f"name = {_quote(name)}",
        'oil_grade = "VG46"',
        'rated_speed = "2000 rpm"          # the maker\'s rated engine or pump speed',
        'rated_max_pressure = "250 bar"    # the highest pressure the machine is rated for',
    ]
    used_ids: dict[str, int] = {}
    for tid in chosen:
        tmpl, raw = templates[tid]
        used_ids[tid] = used_ids.get(tid, 0) + 1
        cid = tid if used_ids[tid] == 1 else f"{tid}_{used_ids[tid]}"
        lines += ["", "[[circuits]]", f'id = "{cid}"', f"name = {_quote(tmpl.name)}", f'template = "{tid}"']
        if tmpl.parts:
            lines.append("# optional parts: delete the ones this circuit does not have")
            lines.append("fitted_parts = [" + ", ".join(f'"{p.value}"' for p in tmpl.parts) + "]")
        lines += ["", "[circuits.parameters]"]
        names = figures_used(raw)
        for pname in names:
            kind, label = PARAMETERS[pname]
            typical = tmpl.parameters.get(pname)
            hint = (
                f"typical {typical.typical} ({typical.source.split(':')[0]})"
                if typical
                else "no typical value"
            )
            lines.append(f'# {pname} = ""    # {label}; {hint}')
        for tp in tmpl.test_points:
            lines += [
                "",
                "  [[circuits.test_points]]",
                f'  id = "{tp.id.split(".")[-1]}"',
                f"  # location = {_quote(tp.location)}",
            ]
    return "\n".join(lines) + "\n"


def figures_used(raw: dict[str, Any]) -> list[str]:
    """Parameters the template gives a typical for or names in a range, in a stable order."""
    names: list[str] = list(raw.get("parameters", {}) or {})
    for tp in raw.get("test_points", []) or []:
        kind = ROLES[Role(tp["role"])].kind
        for rng in tp.get("expected", []):
            for bound in ("low", "high"):
                if isinstance(rng.get(bound), str):
                    for n in sorted(compile_bound(rng[bound], kind).names):
                        if n in PARAMETERS and n not in names:
                            names.append(n)
    return names


def _quote(text: str) -> str:
    return inline(text)


#: Machine figures for a machine described by one template and nothing else (an evaluation
#: stand-in, not a real machine): a mid-size mobile machine (common practice).
TEMPLATE_MACHINE_SPEED = "2000 rpm"
TEMPLATE_MACHINE_PRESSURE = "250 bar"


def template_machine(templates: Templates, template_id: str) -> MachineProfile:
    """A machine made of one template with no figures: what a technician gets on a machine
    fieldkit has never seen, and what ``fieldkit evaluate --templates`` measures."""
    tmpl, _raw = templates[template_id]
    raw = {
        "id": f"template-{template_id.replace('_', '-')}",
        "name": f"{tmpl.name} (template only)",
        "rated_speed": TEMPLATE_MACHINE_SPEED,
        "rated_max_pressure": TEMPLATE_MACHINE_PRESSURE,
        # The template's usual parts ticked, as the builder offers them: a part the template does
        # not offer (an accumulator on a valve bank) is not assumed.
        "circuits": [
            {
                "id": "c",
                "name": tmpl.name,
                "template": template_id,
                "fitted_parts": [p.value for p in tmpl.parts],
            }
        ],
    }
    return profile_from_raw(raw, templates, f"template {template_id}")


__all__ = [
    "figures_used",
    "plan_lines",
    "range_words",
    "relief_notes",
    "skeleton",
    "template_machine",
    "when_words",
]
