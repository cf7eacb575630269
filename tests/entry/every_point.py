"""Every test point fieldkit knows, and the six things a person may type at each.

The points are those of every bundled demo profile plus one profile built from each circuit
template (a machine with no maker's profile starts that way), so a new template is walked the
day it is added. The inputs are chosen per point from the point's own expected range, its
highest pressure and the gauge the screen suggests, never from the code under test's limits.
"""

from __future__ import annotations

import tomllib
from dataclasses import dataclass
from pathlib import Path

import pint

from fieldkit.model.gauge import Gauge
from fieldkit.model.profile import MachineProfile, TestPoint
from fieldkit.model.visit import Visit
from fieldkit.resources import rules_dir
from fieldkit.session import Workbench
from fieldkit.units import Q_, Kind, format_value, magnitude_in, unit

#: The gauge kit every walked visit carries: the sizes a service van holds (common practice).
GAUGE_KIT = [
    Gauge(id="G16", full_scale="16 bar", accuracy_class=1.0),
    Gauge(id="G60", full_scale="60 bar", accuracy_class=1.0),
    Gauge(id="G600", full_scale="600 bar", accuracy_class=1.0),
    Gauge(id="C1", full_scale="1.5 bar", scale_start="-1 bar", accuracy_class=1.6),
    Gauge(id="FM20", full_scale="20 L/min", accuracy_class=2.0, standard="% of full scale"),
    Gauge(id="FM200", full_scale="200 L/min", accuracy_class=2.0, standard="% of full scale"),
    Gauge(id="TH", full_scale="150 °C", scale_start="-20 °C", accuracy_class=1.0, standard="% of span"),
    Gauge(id="TACH", full_scale="10000 rpm", accuracy_class=0.1, standard="% of full scale"),
]

#: The same kind written in another unit system (US customary where the trade uses one).
OTHER_SYSTEM = {
    Kind.PRESSURE: "psi",
    Kind.FLOW: "gpm",
    Kind.TEMPERATURE: "°F",
    Kind.SPEED: "rev/s",
    Kind.VELOCITY: "in/min",
}
METRIC_SPELLING = {
    Kind.PRESSURE: "bar",
    Kind.FLOW: "L/min",
    Kind.TEMPERATURE: "°C",
    Kind.SPEED: "rpm",
    Kind.VELOCITY: "mm/min",
}


def write_template_profiles(folder: Path) -> list[str]:
    """One profile per circuit template, with nothing but the template in it. Returns the ids."""
    folder.mkdir(parents=True, exist_ok=True)
    ids = []
    for path in sorted((rules_dir() / "templates").glob("*.toml")):
        tid = tomllib.loads(path.read_text(encoding="utf-8"))["id"]
        pid = f"template-{tid.replace('_', '-')}"
        (folder / f"{pid}.toml").write_text(
            f'id = "{pid}"\nname = "Built from template {tid}"\nrated_speed = "2000 rpm"\n'
            f'rated_max_pressure = "350 bar"\n\n[[circuits]]\nid = "c"\nname = "{tid}"\ntemplate = "{tid}"\n',
            encoding="utf-8",
        )
        ids.append(pid)
    return ids


def open_visits(bench: Workbench) -> dict[str, str]:
    """A fresh open visit with the gauge kit on every machine the library knows: profile id → visit id."""
    out = {}
    for profile in bench.library.profiles():
        visit = bench.store.create_visit(
            Visit(job_number=f"WALK-{profile.id}"[:40], machine=profile.id, gauges=GAUGE_KIT)
        )
        out[profile.id] = visit.id
    return out


def every_point(bench: Workbench) -> list[tuple[MachineProfile, TestPoint]]:
    return [(p, tp) for p in bench.library.profiles() for _c, tp in p.all_test_points()]


@dataclass(frozen=True)
class Typed:
    what: str  # typical, other-system, beyond-gauge, wrong-kind, garbage, extreme
    text: str


def _text(q: pint.Quantity, spelling: str) -> str:
    return format_value(q, spelling=spelling, significant=4)


def typical(point: TestPoint) -> pint.Quantity:
    """The middle of the point's first expected range (a one-sided range: just inside its bound)."""
    rng = point.expected[0] if point.expected else None
    if rng is None:
        return {
            Kind.PRESSURE: Q_(20.0, "bar"),
            Kind.FLOW: Q_(10.0, "L/min"),
            Kind.TEMPERATURE: Q_(50.0, "degC"),
            Kind.SPEED: Q_(1800.0, "rpm"),
            Kind.VELOCITY: Q_(2.0, "mm/min"),
        }[point.kind]
    u = unit(
        {"bar": "bar", "L/min": "liter/minute", "°C": "degC", "rpm": "rpm", "mm/min": "mm/min"}[
            METRIC_SPELLING[point.kind]
        ]
    )
    low = magnitude_in(rng.low, u) if rng.low is not None else None
    high = magnitude_in(rng.high, u) if rng.high is not None else None
    if low is not None and high is not None:
        mid = (low + high) / 2
    elif high is not None:
        mid = high * 0.5 if high > 0 else high * 1.5
    else:
        assert low is not None
        mid = low * 1.2 if low > 0 else low * 0.5
    return Q_(mid, u)


def beyond(point: TestPoint, gauge: Gauge | None) -> pint.Quantity:
    """A value a third past the top of the chosen gauge (or of the point's rating), or three
    times the top of its expected range where the kit has no meter of its kind."""
    if gauge is not None:
        return Q_(gauge.full_scale.magnitude * 1.33, gauge.full_scale.units)
    if point.max_pressure is not None and point.kind is Kind.PRESSURE:
        return Q_(point.max_pressure.magnitude * 1.33, point.max_pressure.units)
    # No meter of this kind in the kit: three times the top of the point's expected ranges.
    tops = [r.high for r in point.expected if r.high is not None] or [typical(point)]
    top = max(tops, key=lambda q: abs(q.magnitude))
    return Q_(abs(top.magnitude) * 3 + 1.0, top.units)


def _has_ceiling(point: TestPoint, gauge: Gauge | None) -> bool:
    """Whether anything says how high this point goes: a gauge, its rating or an expected range."""
    return (
        gauge is not None
        or (point.kind is Kind.PRESSURE and point.max_pressure is not None)
        or any(r.high is not None for r in point.expected)
    )


def inputs_for(point: TestPoint, gauge: Gauge | None) -> list[Typed]:
    kind = point.kind
    usual = typical(point)
    wrong = "12 L/min" if kind is Kind.PRESSURE else "12 bar"
    return [
        Typed("typical", _text(usual, METRIC_SPELLING[kind])),
        Typed("other-system", _text(usual, OTHER_SYSTEM[kind])),
        Typed(
            "beyond-gauge" if _has_ceiling(point, gauge) else "large, nothing to judge it by",
            _text(beyond(point, gauge), METRIC_SPELLING[kind]),
        ),
        Typed("wrong-kind", wrong),
        Typed("garbage", "[b]zz[/b] ;[@click=app.quit]"),
        Typed("extreme", f"9.9e307 {METRIC_SPELLING[kind]}"),
    ]
