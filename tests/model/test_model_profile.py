"""Machine profile models: expected ranges that make sense for their test point, and test point
ids that are unique across the machine."""

from __future__ import annotations

import pytest
from pydantic import ValidationError

from fieldkit.model.condition import Condition, FunctionState
from fieldkit.model.profile import Circuit, ExpectedRange, MachineProfile, TestPoint
from fieldkit.model.roles import Role

SOURCE = "common practice"


def test_expected_range_with_low_above_high_is_refused() -> None:
    with pytest.raises(ValidationError, match=r"low \(30(\.0)? bar\) is above high \(20(\.0)? bar\)"):
        ExpectedRange(low="30 bar", high="20 bar", source=SOURCE)


def test_expected_range_compares_bounds_across_units() -> None:
    # 300 psi = 20.68 bar (scipy.constants.psi / bar): below 21 bar, so the range is valid ...
    ExpectedRange(low="300 psi", high="21 bar", source=SOURCE)
    # ... and 320 psi = 22.06 bar is above 21 bar, so it is not.
    with pytest.raises(ValidationError, match="is above high"):
        ExpectedRange(low="320 psi", high="21 bar", source=SOURCE)


def test_expected_range_needs_a_bound() -> None:
    with pytest.raises(ValidationError, match="needs low, high or both"):
        ExpectedRange(source=SOURCE)


def test_expected_range_bounds_must_be_one_kind() -> None:
    with pytest.raises(ValidationError, match="same kind"):
        ExpectedRange(low="20 bar", high="30 L/min", source=SOURCE)


def test_expected_range_of_the_wrong_kind_for_the_role_is_refused() -> None:
    with pytest.raises(ValidationError) as caught:
        TestPoint(
            id="charge",
            role=Role.CHARGE_PRESSURE,
            expected=[{"low": "20 L/min", "high": "30 L/min", "source": SOURCE}],
        )
    assert "charge_pressure needs a pressure, but a bound is a flow" in str(caught.value)


def test_case_drain_range_in_gpm_is_accepted_for_a_flow_role() -> None:
    point = TestPoint(
        id="pump_drain", role=Role.PUMP_CASE_DRAIN_FLOW, expected=[{"high": "1.5 gpm", "source": SOURCE}]
    )
    assert point.label == "pump case drain flow"


def test_expected_range_needs_a_source() -> None:
    with pytest.raises(ValidationError, match="source"):
        ExpectedRange(low="20 bar")


def test_test_point_ids_are_qualified_by_their_circuit() -> None:
    circuit = Circuit(
        id="travel",
        name="Track drive",
        kind="closed_loop_drive",
        test_points=[
            {"id": "charge", "role": "charge_pressure"},
            {"id": "travel.case", "role": "case_pressure"},
        ],
    )
    assert [tp.id for tp in circuit.test_points] == ["travel.charge", "travel.case"]


def test_test_point_qualified_with_another_circuit_is_refused() -> None:
    with pytest.raises(ValidationError, match="'boom.charge' is qualified with another circuit's id"):
        Circuit(
            id="travel",
            name="Track drive",
            kind="closed_loop_drive",
            test_points=[{"id": "boom.charge", "role": "charge_pressure"}],
        )


def test_same_local_id_in_two_circuits_is_two_test_points() -> None:
    profile = MachineProfile(
        id="rig",
        name="Rig",
        rated_speed="2200 rpm",
        rated_max_pressure="350 bar",
        circuits=[
            {
                "id": "left",
                "name": "Left track",
                "kind": "closed_loop_drive",
                "test_points": [{"id": "charge", "role": "charge_pressure"}],
            },
            {
                "id": "right",
                "name": "Right track",
                "kind": "closed_loop_drive",
                "test_points": [{"id": "charge", "role": "charge_pressure"}],
            },
        ],
    )
    assert [tp.id for _c, tp in profile.all_test_points()] == ["left.charge", "right.charge"]
    assert profile.test_point("right.charge")[0].id == "right"


def test_repeated_test_point_in_one_circuit_is_refused() -> None:
    with pytest.raises(ValidationError, match="test point ids repeat: travel.charge"):
        Circuit(
            id="travel",
            name="Track drive",
            kind="closed_loop_drive",
            test_points=[
                {"id": "charge", "role": "charge_pressure"},
                {"id": "travel.charge", "role": "charge_pressure"},
            ],
        )


def test_unknown_circuit_parameter_is_refused_with_the_known_names() -> None:
    with pytest.raises(ValidationError) as caught:
        Circuit(
            id="travel",
            name="Track drive",
            kind="closed_loop_drive",
            parameters={"charge_releif_setting": "24 bar"},
        )
    message = str(caught.value)
    assert "unknown parameter 'charge_releif_setting'" in message and "charge_relief_setting" in message


def test_circuit_parameter_of_the_wrong_kind_is_refused() -> None:
    with pytest.raises(ValidationError, match="parameter 'charge_relief_setting': '24 L/min' is a flow"):
        Circuit(
            id="travel",
            name="Track drive",
            kind="closed_loop_drive",
            parameters={"charge_relief_setting": "24 L/min"},
        )


def test_the_first_matching_range_applies_to_a_reading() -> None:
    point = TestPoint(
        id="charge",
        role=Role.CHARGE_PRESSURE,
        expected=[
            {"when": {"function": ["neutral"]}, "low": "25 bar", "high": "29 bar", "source": SOURCE},
            {"low": "20 bar", "high": "25 bar", "source": SOURCE},
        ],
    )
    neutral = point.expected_for(Condition(function=FunctionState.NEUTRAL))
    stalled = point.expected_for(Condition(function=FunctionState.STALLED))
    assert neutral is not None and neutral.low.magnitude == 25.0
    assert stalled is not None and stalled.low.magnitude == 20.0
