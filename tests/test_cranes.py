"""Crane data -> wheel loads on one rail: moving groups, buffers, and refusal of bad data.

The hand statics of the wheel loads are checked in tests/validation/test_crane_wheel_statics.py.
Every crane here is invented.
"""

from __future__ import annotations

import math

import pytest

import trundle
from trundle.loads.cranes import IMPACT_BY_OPERATION, Crane, buffer_gap


def _crane(**changes: object) -> Crane:
    data = dict(name="east crane", capacity=120.0, bridge_weight=180.0, trolley_weight=30.0,
                span=16.0, hook_approach=0.8, wheel_spacings=(3.2,), buffer_length=4.0)
    data.update(changes)
    return Crane(**data)


def test_moving_groups_of_each_state() -> None:
    crane = _crane(wheel_spacings=(1.4, 3.5, 1.4), buffer_length=7.5)
    w = crane.wheels()
    expected = {"loaded": w.maximum, "unloaded": w.unloaded, "far": w.minimum,
                "lateral": w.lateral}
    for state, load in expected.items():
        vehicle = crane.vehicle(state)
        assert isinstance(vehicle, trundle.Vehicle)
        assert vehicle.loads == (load,) * 4
        assert vehicle.spacings == (1.4, 3.5, 1.4)
        assert state in vehicle.name
    # the states differ (the test above would not notice a mix-up otherwise)
    assert len({w.maximum, w.minimum, w.unloaded, w.lateral}) == 4


def test_buffer_geometry() -> None:
    # wheels centred between the buffers: (4.0 − 3.2)/2 = 0.4 from a wheel to its buffer face
    a = _crane()
    b = _crane(name="west crane", wheel_spacings=(1.2, 3.0, 1.2), buffer_length=6.6)
    assert a.end_distance == pytest.approx(0.4, rel=1e-12)
    assert b.end_distance == pytest.approx(0.6, rel=1e-12)
    assert buffer_gap(a, b) == pytest.approx(1.0, rel=1e-12)
    assert buffer_gap(b, a) == pytest.approx(1.0, rel=1e-12)
    # without a buffer length the wheels may meet
    assert _crane(buffer_length=None).end_distance == 0.0
    # buffer exactly the wheelbase: the wheels of two cranes meet at the buffer faces
    assert _crane(buffer_length=3.2).end_distance == 0.0


@pytest.mark.parametrize("operation", sorted(IMPACT_BY_OPERATION))
def test_operation_sets_the_impact_unless_overridden(operation: str) -> None:
    assert _crane(operation=operation).impact_fraction == IMPACT_BY_OPERATION[operation]
    assert _crane(operation=operation).wheels().impact == IMPACT_BY_OPERATION[operation]
    assert _crane(operation=operation, impact=0.4).wheels().impact == 0.4


def test_hook_at_midspan_is_the_limit() -> None:
    # hook approach = half the span: the trolley can stand only at midspan, both rails alike
    crane = _crane(hook_approach=8.0)
    w = crane.wheels()
    assert w.maximum == pytest.approx(w.minimum, rel=1e-12)


@pytest.mark.parametrize("changes, key", [
    (dict(hook_approach=16.0), "hook_approach"),          # at the crane span
    (dict(hook_approach=20.0), "hook_approach"),          # beyond it
    (dict(hook_approach=9.0), "hook_approach"),           # beyond midspan: no trolley position
    (dict(hook_approach=-0.5), "hook_approach"),
    (dict(operation="radio"), "operation"),
    (dict(buffer_length=3.0), "buffer_length"),           # shorter than the wheelbase 3.2
    (dict(buffer_length=math.nan), "buffer_length"),
    (dict(buffer_length="long"), "buffer_length"),
    (dict(capacity=-10.0), "capacity"),
    (dict(capacity="heavy"), "capacity"),
    (dict(capacity=None), "capacity"),
    (dict(bridge_weight=math.inf), "bridge_weight"),
    (dict(trolley_weight="30 kN"), "trolley_weight"),
    (dict(span=0.0), "span"),
    (dict(span="wide"), "span"),
    (dict(wheel_spacings=(0.0,)), "wheel_spacings"),
    (dict(wheel_spacings=(3.2, -1.0, 3.2)), "wheel_spacings"),
    (dict(wheel_spacings=None), "wheel_spacings"),
    (dict(wheel_spacings=("3.2 m",)), "wheel_spacings"),
    (dict(wheel_loads=(100.0, 40.0)), "wheel_loads"),
    (dict(wheel_loads=(100.0, -40.0, 50.0)), "wheel_loads"),
    (dict(wheel_loads=100.0), "wheel_loads"),
    (dict(impact=-0.1), "impact"),
    (dict(lateral_fraction=math.nan), "lateral_fraction"),
    (dict(longitudinal_fraction="ten"), "longitudinal_fraction"),
    (dict(lateral_share=1.5), "lateral_share"),
    (dict(lateral_share="half"), "lateral_share"),
])
def test_bad_crane_data_is_refused_with_a_one_line_message(changes: dict, key: str) -> None:
    with pytest.raises(trundle.ModelError) as caught:
        _crane(**changes)
    message = str(caught.value)
    assert key in message
    assert "east crane" in message  # names the crane
    assert "expected" in message and "found" in message
    assert "\n" not in message


def test_unknown_state_of_the_moving_group() -> None:
    with pytest.raises(trundle.ModelError, match=r"state: expected .*found 'sideways'"):
        _crane().vehicle("sideways")
