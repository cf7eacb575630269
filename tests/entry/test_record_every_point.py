"""Item 1 at the Workbench.record level: whatever text a person types at any test point of any
known machine, record() either saves a reading the engine can diagnose, asks (an ambiguous
separator, a value past the gauge or far above the point's maximum), or refuses with a
FieldkitError that says why. Nothing else may escape, and nothing half-saved remains."""

from __future__ import annotations

import math

import pytest
from hypothesis import HealthCheck, event, given, settings
from hypothesis import strategies as st

from fieldkit.errors import AmbiguousInputError, ConfirmValueError, FieldkitError
from fieldkit.model.condition import Condition
from fieldkit.session import Workbench
from fieldkit.units import SPELLINGS, to_canonical

from .every_point import every_point, open_visits, write_template_profiles

UNITS = sorted(SPELLINGS) + ["bar abs", "psia", "inHg vac", "bar(g)", ""]
numbers = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.floats(min_value=-1e4, max_value=1e4).map(lambda x: f"{x:.3f}"),
    st.integers(min_value=-(10**30), max_value=10**30).map(str),
    st.sampled_from(["1e-999", "9.9e307", "2,500", "1.234,5", "١٢", "−3", "0", "1 234", ".5", "-0"]),
)
typed = st.one_of(
    st.builds(lambda n, u: f"{n} {u}".strip(), numbers, st.sampled_from(UNITS)),
    st.text(max_size=70),
)


@pytest.fixture(scope="module")
def bench(tmp_path_factory: pytest.TempPathFactory):
    folder = tmp_path_factory.mktemp("profiles")
    write_template_profiles(folder)
    bench = Workbench.open(tmp_path_factory.mktemp("store") / "walk.sqlite3", profile_dirs=[folder])
    yield bench, open_visits(bench), every_point(bench)
    bench.close()


@settings(max_examples=400, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(data=st.data())
def test_any_text_at_any_point_is_saved_asked_about_or_refused(bench, data) -> None:
    wb, visits, points = bench
    profile, point = data.draw(st.sampled_from(points))
    own_units = sorted(s for s, (_u, kind) in SPELLINGS.items() if kind is point.kind)
    in_own_unit = st.builds(
        lambda n, u: f"{n} {u}",
        st.one_of(numbers, st.floats(min_value=-2, max_value=600).map(lambda x: f"{x:.2f}")),
        st.sampled_from(own_units),
    )
    text = data.draw(st.one_of(in_own_unit, in_own_unit, typed))
    visit_id = visits[profile.id]
    gauge = data.draw(st.sampled_from([None, "G16", "G600", "C1", "FM20", "TH", "TACH"]))
    before = len(wb.store.get_visit(visit_id).readings)
    try:
        reading = wb.record(visit_id, point.id, text, Condition(), gauge=gauge)
    except (AmbiguousInputError, ConfirmValueError) as asked:
        event("asked")
        assert str(asked), "a question must say what it asks"
        assert len(wb.store.get_visit(visit_id).readings) == before  # nothing saved while asking
        return
    except FieldkitError as refused:
        event("refused")
        assert str(refused)
        assert len(wb.store.get_visit(visit_id).readings) == before
        return
    event("saved")
    # Saved: a finite value of the point's own kind, and the visit still diagnoses.
    assert math.isfinite(to_canonical(reading.value, point.kind))
    visit = wb.store.get_visit(visit_id)
    assert len(visit.readings) == before + 1
    result = wb.diagnose(visit, profile)
    assert not any(reading.id in note for note in result.notes), result.notes
