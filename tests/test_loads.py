"""Loads: how vehicles and trains lay out their axles and uniform load, how load-case factors
apply (dynamic allowance on axle loads only, multipliers on everything), and clear errors for
bad load input.

Sources: the dynamic allowance (impact) applies to the axle loads of a design vehicle and not
to lane or uniform load, e.g. AASHTO LRFD Bridge Design Specifications, Art. 3.6.2.1 (from
memory); multipliers (multiple presence, distribution, load factors) scale the whole live-load
effect: common practice, no source.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import trundle
from naive_scan import Arrangement, BruteForce, effects_at
from trundle.loads import SearchParameter

# --- layout of axles and uniform load ---------------------------------------------------------


def test_train_layout_by_hand() -> None:
    front = trundle.Vehicle(loads=[1.0, 2.0], spacings=[3.0], name="front")
    back = trundle.Vehicle(loads=[4.0, 5.0, 6.0], spacings=[(1.0, 2.0), 1.5], name="back")
    train = trundle.Train(vehicles=[front, back], gaps=[(5.0, 9.0)],
                          ahead=trundle.AttachedUniform(0.5, length=10.0, gap=2.0),
                          behind=trundle.AttachedUniform(0.3, length=math.inf, gap=1.0))
    params = train.parameters()
    # in the order the train is walked from the front: the gap after the front vehicle, then
    # the back vehicle's own spacing; group() takes the values in the same order
    assert [(p.low, p.high) for p in params] == [(5.0, 9.0), (1.0, 2.0)]
    assert "gap" in params[0].label and "spacing" in params[1].label
    assert all(isinstance(p, SearchParameter) for p in params)
    group = train.group([7.0, 1.5], impact=0.2)
    # front axles at u = 0 and 3; gap 7 to the back vehicle's first axle (u = 10), then
    # 1.5 and 1.5 more
    np.testing.assert_allclose(group.point_u, [0.0, 3.0, 10.0, 11.5, 13.0])
    np.testing.assert_allclose(group.point_P, np.array([1.0, 2.0, 4.0, 5.0, 6.0]) * 1.2)
    # ahead: 2 clear of the front axle, 10 long (u grows backwards, so ahead is negative u);
    # behind: 1 clear of the last axle, unlimited; neither takes the dynamic allowance
    assert sorted(group.uniform) == sorted([(-12.0, -2.0, 0.5), (14.0, math.inf, 0.3)])
    mirrored = group.mirrored()
    np.testing.assert_allclose(mirrored.point_u, [-0.0, -3.0, -10.0, -11.5, -13.0])
    assert sorted(mirrored.uniform) == sorted([(2.0, 12.0, 0.5), (-math.inf, -14.0, 0.3)])


def test_vehicle_spacing_range_and_offsets() -> None:
    truck = trundle.Vehicle(loads=[35.0, 145.0, 145.0], spacings=[4.3, (4.3, 9.0)])
    assert [(p.low, p.high) for p in truck.parameters()] == [(4.3, 9.0)]
    np.testing.assert_allclose(truck.axle_offsets([6.0]), [0.0, 4.3, 10.3])
    np.testing.assert_allclose(truck.axle_offsets(), [0.0, 4.3, 8.6])  # the shortest
    assert truck.total == 325.0
    # a range with equal ends is a fixed spacing, not a search
    assert trundle.Vehicle(loads=[1.0, 1.0], spacings=[(2.0, 2.0)]).parameters() == []


# --- factors -----------------------------------------------------------------------------------


def test_impact_and_multipliers_scale_a_vehicle() -> None:
    beam = trundle.Beam(spans=[12.0, 15.0], supports=["pin", "pin", "fixed"])
    truck = trundle.Vehicle(loads=[1.0, 4.0, 4.0], spacings=[2.0, 3.0])
    plain = trundle.envelope(beam, [truck])
    case = trundle.LoadCase(truck, impact=0.33,
                            factors=(("multiple presence", 1.2), ("distribution", 0.55)))
    assert case.multiplier == pytest.approx(1.2 * 0.55, rel=1e-15)
    factored = trundle.envelope(beam, [case])
    k = 1.33 * 1.2 * 0.55
    scale = np.abs(plain.maximum).max()
    np.testing.assert_allclose(factored.maximum, k * plain.maximum, rtol=1e-12,
                               atol=1e-12 * scale)
    np.testing.assert_allclose(factored.minimum, k * plain.minimum, rtol=1e-12,
                               atol=1e-12 * scale)
    text = case.describe()
    assert "multiple presence" in text and "33" in text


def test_impact_does_not_apply_to_placed_uniform_load_or_its_point_load() -> None:
    beam = trundle.Beam(spans=[10.0, 10.0])
    lane = trundle.UniformLoad(0.64, point_load=18.0)
    plain = trundle.envelope(beam, [lane])
    case = trundle.LoadCase(lane, impact=0.33, factors={"load factor": 1.75})
    factored = trundle.envelope(beam, [case])
    np.testing.assert_allclose(factored.maximum, 1.75 * plain.maximum, rtol=1e-12, atol=1e-12)
    np.testing.assert_allclose(factored.minimum, 1.75 * plain.minimum, rtol=1e-12, atol=1e-12)
    # and the check can tell: with the allowance the moments would be a third larger
    assert np.abs(factored.max("moment") - 1.33 * 1.75 * plain.max("moment")).max() > 1.0


def test_impact_applies_to_the_axles_of_a_train_but_not_its_uniform_load() -> None:
    """A train with uniform load behind it, against the brute force with the axle loads
    raised by the allowance and the uniform load not, the whole multiplied."""
    beam = trundle.Beam(spans=[9.0, 12.0], supports=["pin", "pin", trundle.Spring(40.0)])
    sections = [4.1, 9.0, 15.2]
    loads, spacings, w = [2.0, 5.0], [2.5], 1.2
    train = trundle.Train([trundle.Vehicle(loads=loads, spacings=spacings)],
                          behind=trundle.AttachedUniform(w, length=math.inf, gap=1.0))
    impact, factor = 0.3, 0.9
    env = trundle.envelope(beam, [trundle.LoadCase(train, impact=impact,
                                                   factors=(("lane", factor),))],
                           sections=sections, effects=("moment", "reaction"))
    effects = effects_at(beam, sections, kinds=("moment",))

    def brute(axle_factor: float, uniform_factor: float) -> tuple[np.ndarray, np.ndarray]:
        arrangement = Arrangement(((0.0, axle_factor * loads[0]), (2.5, axle_factor * loads[1])),
                                  ((3.5, math.inf, uniform_factor * w),))
        high, low = BruteForce(beam, effects).extremes(arrangement)
        return factor * high, factor * low

    high, low = brute(1.0 + impact, 1.0)
    index = {e: i for i, e in enumerate(env.effects)}
    found_max = np.array([env.maximum[index[e]] for e in effects])
    found_min = np.array([env.minimum[index[e]] for e in effects])
    scale = np.abs(np.concatenate([high, low])).max()
    np.testing.assert_allclose(found_max, high, rtol=0, atol=1e-9 * scale)
    np.testing.assert_allclose(found_min, low, rtol=0, atol=1e-9 * scale)
    # the allowance on everything would give clearly different numbers
    wrong_high, _ = brute(1.0 + impact, 1.0 + impact)
    assert np.abs(wrong_high - high).max() > 1e-3 * scale


# --- bad input ---------------------------------------------------------------------------------


def _vehicle(**kwargs):
    return lambda: trundle.Vehicle(**kwargs)


V = trundle.Vehicle(loads=[1.0, 2.0], spacings=[3.0])

BAD = [
    (_vehicle(loads=[1.0, 2.0], spacings=[]), "spacings: expected 1"),
    (_vehicle(loads=[1.0, 2.0, 3.0], spacings=[1.0]), "spacings: expected 2"),
    (_vehicle(loads=[], spacings=[]), "at least one axle"),
    (_vehicle(loads=[1.0, -2.0], spacings=[1.0]), "loads[1]"),
    (_vehicle(loads=[1.0, math.nan], spacings=[1.0]), "loads[1]"),
    (_vehicle(loads=["heavy", 2.0], spacings=[1.0]), "loads[0]"),
    (_vehicle(loads=[1.0, 2.0], spacings=[-1.0]), "spacings[0]"),
    (_vehicle(loads=[1.0, 2.0], spacings=[math.inf]), "spacings[0]"),
    (_vehicle(loads=[1.0, 2.0], spacings=[(5.0, 2.0)]), "min <= max"),
    (_vehicle(loads=[1.0, 2.0], spacings=[(-1.0, 2.0)]), "min <= max"),
    (_vehicle(loads=[1.0, 2.0], spacings=[(1.0, 2.0, 3.0)]), "(min, max)"),
    (_vehicle(loads=[1.0, 2.0], spacings=[("a", "b")]), "spacings[0]"),
    (_vehicle(loads=[1.0, 2.0], spacings=None), "spacings"),
    (lambda: trundle.Train(vehicles=[]), "at least one vehicle"),
    (lambda: trundle.Train(vehicles=[V, V], gaps=[]), "gaps: expected 1"),
    (lambda: trundle.Train(vehicles=[V, V], gaps=[(9.0, 4.0)]), "gaps[0]"),
    (lambda: trundle.Train(vehicles=[V, 3.0], gaps=[1.0]), "vehicles[1]"),
    (lambda: trundle.Train(vehicles=[V], ahead=0.5), "ahead"),
    (lambda: trundle.AttachedUniform(-1.0), "w"),
    (lambda: trundle.AttachedUniform(1.0, length=0.0), "length"),
    (lambda: trundle.AttachedUniform(1.0, length=math.nan), "length"),
    (lambda: trundle.AttachedUniform(1.0, gap=-2.0), "gap"),
    (lambda: trundle.UniformLoad(-1.0), "w"),
    (lambda: trundle.UniformLoad(math.inf), "w"),
    (lambda: trundle.UniformLoad(1.0, placement="somewhere"), "placement"),
    (lambda: trundle.UniformLoad(1.0, point_load=-5.0), "point_load"),
    (lambda: trundle.LoadCase(V, impact=-0.1), "impact"),
    (lambda: trundle.LoadCase(V, impact="a third"), "impact"),
    (lambda: trundle.LoadCase(V, factors=(("multiple presence", -1.2),)),
     "multiple presence"),
    (lambda: trundle.LoadCase(V, factors={"lane": math.nan}), "lane"),
    (lambda: trundle.LoadCase(42.0), "load"),
    (lambda: trundle.envelope(trundle.Beam(spans=[10.0]), []), "at least one load"),
    (lambda: trundle.envelope(trundle.Beam(spans=[10.0]), [V], effects=("torque",)),
     "effects"),
    (lambda: trundle.envelope(trundle.Beam(spans=[10.0]), [V], sections=[12.0]),
     "outside the beam"),
]


@pytest.mark.parametrize("make, words", BAD, ids=[w for _, w in BAD])
def test_bad_load_input_gives_a_clear_one_line_error(make, words: str) -> None:
    with pytest.raises(trundle.ModelError) as info:
        make()
    message = str(info.value)
    assert words in message
    assert "\n" not in message
