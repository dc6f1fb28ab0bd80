"""Wheel loads of an overhead travelling crane on one runway rail, by hand statics.

Source: common practice, no source. The crane bridge is a simple beam between the two runway
rails: the bridge weight is shared equally by the rails; the trolley (with hoist) and the lifted
load stand at the minimum hook approach from the rail being designed and are shared by lever
arms across the crane span; the rail's share is divided equally among its wheels. Lateral force
per wheel = fraction × (capacity + trolley) × this runway's share / wheels on the rail;
longitudinal (tractive) force = fraction × the sum of the maximum wheel loads on the rail.

Every crane below is invented. Forces in kN, lengths in m.
"""

from __future__ import annotations

import pytest

from conftest import make_crane
from trundle.loads.cranes import Crane

REL = 1e-12


def _bay_crane(**changes: object) -> Crane:
    """An invented 20 t cab-operated crane (capacity 200 kN) with two wheels per rail."""
    return make_crane(**{"name": "bay crane", **changes})


def _near_rail_by_moments(bridge: float, lifted: float, span: float, distance: float) -> float:
    """Reaction of the near rail: moments about the far rail, bridge weight at midspan, the
    lifted weight ``distance`` from the near rail."""
    return (bridge * span / 2 + lifted * (span - distance)) / span


def test_two_wheels_per_rail_worked_by_hand() -> None:
    # Source: common practice, no source (statics of the crane bridge as a simple beam).
    crane = _bay_crane()
    # trolley and load at 1.0 m from this rail: R = 300/2 + (200 + 50)·19/20 = 150 + 237.5
    assert crane.rail_reactions()[0] == pytest.approx(387.5, rel=REL)
    # far side: R = 150 + 250·1/20 = 162.5; no lifted load: R = 150 + 50·19/20 = 197.5
    assert crane.rail_reactions()[1] == pytest.approx(162.5, rel=REL)
    assert crane.rail_reactions()[2] == pytest.approx(197.5, rel=REL)
    w = crane.wheels()
    assert (w.maximum, w.minimum, w.unloaded) == pytest.approx((193.75, 81.25, 98.75), rel=REL)
    # lateral per wheel: 0.20·(200 + 50)·0.5 / 2 = 12.5; longitudinal: 0.10·(2·193.75) = 38.75
    assert w.lateral == pytest.approx(12.5, rel=REL)
    assert w.longitudinal == pytest.approx(38.75, rel=REL)
    assert w.impact == pytest.approx(0.25, rel=REL)  # cab-operated


@pytest.mark.parametrize("spacings", [(3.6,), (1.5, 4.0, 1.5), (1.2, 2.8, 1.2)])
@pytest.mark.parametrize("hook", [0.0, 0.9, 2.5, 10.0])
def test_rail_shares_by_lever_arms(spacings: tuple[float, ...], hook: float) -> None:
    # Source: common practice, no source.
    Q, B, T, S = 315.0, 410.0, 72.0, 23.5
    crane = Crane("hall crane", capacity=Q, bridge_weight=B, trolley_weight=T, span=S,
                  hook_approach=hook, wheel_spacings=spacings)
    n = len(spacings) + 1
    near = _near_rail_by_moments(B, Q + T, S, hook)
    far = _near_rail_by_moments(B, Q + T, S, S - hook)
    unloaded = _near_rail_by_moments(B, T, S, hook)
    assert crane.rail_reactions() == pytest.approx((near, far, unloaded), rel=REL)
    # vertical equilibrium of the bridge: both rails together carry everything
    assert near + far == pytest.approx(B + Q + T, rel=REL)
    w = crane.wheels()
    assert crane.wheels_per_rail == n
    assert (w.maximum, w.minimum, w.unloaded) == pytest.approx(
        (near / n, far / n, unloaded / n), rel=REL)
    assert w.lateral == pytest.approx(0.20 * (Q + T) * 0.5 / n, rel=REL)
    assert w.longitudinal == pytest.approx(0.10 * n * w.maximum, rel=REL)
    assert w.longitudinal == pytest.approx(0.10 * near, rel=REL)


def test_four_wheels_per_rail_worked_by_hand() -> None:
    # Source: common practice, no source. Two bogies of two wheels, 1.5 m wheel centres.
    crane = _bay_crane(wheel_spacings=(1.5, 4.0, 1.5), buffer_length=9.0)
    w = crane.wheels()
    assert crane.wheels_per_rail == 4
    assert crane.wheelbase == pytest.approx(7.0, rel=REL)
    # 387.5 / 4, 162.5 / 4, 197.5 / 4
    assert (w.maximum, w.minimum, w.unloaded) == pytest.approx((96.875, 40.625, 49.375),
                                                               rel=REL)
    assert w.lateral == pytest.approx(0.20 * 250.0 * 0.5 / 4, rel=REL)  # 6.25 per wheel
    assert w.longitudinal == pytest.approx(0.10 * 4 * 96.875, rel=REL)  # 38.75 on the rail
    vehicle = crane.vehicle("loaded")
    assert vehicle.loads == pytest.approx((96.875,) * 4, rel=REL)
    assert vehicle.spacings == (1.5, 4.0, 1.5)


def test_explicit_wheel_loads_override_the_statics() -> None:
    # Source: common practice, no source (the crane maker's wheel loads govern when given).
    crane = _bay_crane(wheel_loads=(210.0, 75.0, 101.0))
    w = crane.wheels()
    assert (w.maximum, w.minimum, w.unloaded) == (210.0, 75.0, 101.0)
    assert w.longitudinal == pytest.approx(0.10 * 2 * 210.0, rel=REL)
    # the lateral force still follows capacity and trolley weight
    assert w.lateral == pytest.approx(0.20 * 250.0 * 0.5 / 2, rel=REL)
    assert crane.vehicle("far").loads == (75.0, 75.0)
    assert crane.vehicle("unloaded").loads == (101.0, 101.0)


def test_overridden_fractions_and_lateral_share() -> None:
    # Source: common practice, no source.
    crane = _bay_crane(operation="pendant", impact=0.15, lateral_fraction=0.10,
                       longitudinal_fraction=0.20, lateral_share=0.6,
                       wheel_spacings=(1.5, 4.0, 1.5), buffer_length=8.0)
    w = crane.wheels()
    assert w.impact == 0.15
    assert w.lateral == pytest.approx(0.10 * 250.0 * 0.6 / 4, rel=REL)
    assert w.longitudinal == pytest.approx(0.20 * 387.5, rel=REL)
    assert crane.vehicle("lateral").loads == pytest.approx((w.lateral,) * 4, rel=REL)
