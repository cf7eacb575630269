"""Expected ranges written as expressions of a circuit's figures, resolved to numbers.

A template cannot know a machine's charge relief setting, but it knows that charge in neutral
sits at that setting, give or take a little. So it writes ``low = "charge_relief_setting - 2 bar"``
in our expression language (:mod:`fieldkit.expr`), and each machine's figures turn that into a
number when its profile loads. A figure the maker did not give falls back to the template's
typical value, and the range says so: its source names every figure it used and where each came
from ("from the maker's figure: charge relief setting 24 bar"), and its ``typical`` mark says
when any of them is only a typical value. The engine, the simulator, the screens and
``fieldkit machine show`` all see the resolved numbers, never the expressions.

This module sits in ``model`` and uses only ``expr`` and ``units``: resolving a plan must not
need the diagnosis engine.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from functools import lru_cache

from fieldkit.expr import Compiled, ExprError, compile_expression, si_value
from fieldkit.model.parameters import PARAMETERS
from fieldkit.units import METRIC, Kind, Quantity, format_si, format_value

#: Machine-wide figures a range may use besides the circuit's parameters.
MACHINE_FIGURES: dict[str, tuple[Kind, str]] = {
    "rated_speed": (Kind.SPEED, "rated speed"),
    "rated_max_pressure": (Kind.PRESSURE, "rated maximum pressure"),
}

MAKER = "from the maker's figure"
COMMON_PRACTICE = "typical (common practice)"
FROM_MEMORY = "from memory"
TYPICAL = "typical"


def typical_mark(source: str) -> str:
    """How a typical value is marked on screen and on the job card, from its source's opening
    words: 'from memory' for a value recalled, else 'typical (common practice)' for the trade's
    usual figure, else plain 'typical' (a cited but generic figure)."""
    head = source.strip().lower()
    if head.startswith("from memory"):
        return FROM_MEMORY
    if head.startswith("common practice"):
        return COMMON_PRACTICE
    return TYPICAL


def weakest(marks: Iterable[str]) -> str:
    """The least certain of several marks: one recalled figure makes the whole range recalled."""
    found = set(marks)
    for mark in (FROM_MEMORY, COMMON_PRACTICE, TYPICAL):
        if mark in found:
            return mark
    return ""


@dataclass(frozen=True)
class Figure:
    """One figure a range may use: its value and where it came from."""

    value: Quantity
    kind: Kind
    label: str
    typical_source: str = ""  # empty when the maker gave it

    @property
    def origin(self) -> str:
        return typical_mark(self.typical_source) if self.typical_source else MAKER

    def text(self) -> str:
        return f"{self.label} {format_value(self.value, kind=self.kind)}"


def symbol_kinds() -> dict[str, Kind]:
    """Every name a range expression may use, with its kind."""
    out = {name: kind for name, (kind, _doc) in PARAMETERS.items()}
    out.update({name: kind for name, (kind, _label) in MACHINE_FIGURES.items()})
    return out


@lru_cache(maxsize=512)
def compile_bound(text: str, kind: Kind) -> Compiled:
    """A range bound as an expression giving a ``kind``; ExprError (with a caret) if it cannot."""
    return compile_expression(text, symbol_kinds(), expect=kind)


def parameter_label(name: str) -> str:
    if name in PARAMETERS:
        return PARAMETERS[name][1]
    return MACHINE_FIGURES[name][1]


@dataclass(frozen=True)
class Resolved:
    """A bound worked out: the value as text a person would type, and the figures it used."""

    text: str
    used: tuple[str, ...]


def resolve_bound(text: str, kind: Kind, figures: Mapping[str, Figure]) -> Resolved:
    """Evaluate one bound. A bound that names no figure is returned as written (``"24 bar"``).

    Raises:
        ExprError: the text is not an expression of this kind, names a figure this circuit
            lacks, or gives no finite value (a figure of zero under a division).
    """
    compiled = compile_bound(text, kind)
    if not compiled.names:
        return Resolved(text, ())
    missing = sorted(n for n in compiled.names if n not in figures)
    if missing:
        raise ExprError(
            f"this range needs {', '.join(missing)}, which the circuit does not give "
            "(add it to the circuit's parameters)",
            text,
            0,
        )
    env = {name: si_value(figures[name].value) for name in compiled.names}
    value = compiled.evaluate(env)
    assert isinstance(value, float)
    return Resolved(format_si(value, kind, METRIC, significant=4), tuple(sorted(compiled.names)))


def figures_text(used: Iterable[str], figures: Mapping[str, Figure]) -> str:
    """'from the maker's figure: charge relief setting 24 bar; from memory: …', maker first."""
    groups: dict[str, list[str]] = {}
    for name in sorted(set(used)):
        fig = figures[name]
        groups.setdefault(fig.origin, []).append(fig.text())
    order = [MAKER, COMMON_PRACTICE, TYPICAL, FROM_MEMORY]
    return "; ".join(f"{origin}: {', '.join(groups[origin])}" for origin in order if origin in groups)


def range_mark(used: Iterable[str], figures: Mapping[str, Figure], source: str) -> str:
    """The range's typical mark: from its figures when it uses any, else from its own source."""
    names = list(used)
    if names:
        return weakest(figures[n].origin for n in names)
    head = source.strip().lower()
    if head.startswith("from memory") or head.startswith("common practice"):
        return typical_mark(source)
    return ""


__all__ = [
    "COMMON_PRACTICE",
    "FROM_MEMORY",
    "MACHINE_FIGURES",
    "MAKER",
    "TYPICAL",
    "Figure",
    "Resolved",
    "compile_bound",
    "figures_text",
    "parameter_label",
    "range_mark",
    "resolve_bound",
    "symbol_kinds",
    "typical_mark",
    "weakest",
]
