"""Crane wheels on chains of simple spans (hinges over the interior supports): statics.

Source: common practice, no source. The reaction at an interior support of a chain of simple
spans has the influence line of a triangle of height 1 over the two adjacent spans (statics of
the two simple spans, derived in the tests by hand); the wheel loads come from the statics of
the crane bridge and the default impact fractions (cab 25 %, pendant 10 %), checked in
test_crane_wheel_statics.py and test_asce7_crane_loads.py and recomputed by hand here. The crane
runway on one simple span, against the moving-load formulas of the AISC Manual, is checked in
test_moving_load_formulas.py.

Every crane and runway below is invented. Forces in kN, lengths in m.
"""

from __future__ import annotations

import numpy as np
import pytest

import trundle
from trundle.loads.cranes import Crane, buffer_gap
from trundle.workflows.crane_runway import RunwayResult, RunwaySpec, analyse_runway

REL = 1e-9


def _heavy_crane() -> Crane:
    """Cab-operated (impact 25 %): max wheel load (150 + 250·19/20)/2 = 193.75 kN."""
    return Crane("mill crane", capacity=200.0, bridge_weight=300.0, trolley_weight=50.0,
                 span=20.0, hook_approach=1.0, wheel_spacings=(3.6,), buffer_length=4.4)


def _light_crane() -> Crane:
    """Pendant-operated (impact 10 %): max wheel load (100 + 130·19/20)/2 = 111.75 kN."""
    return Crane("repair crane", capacity=100.0, bridge_weight=200.0, trolley_weight=30.0,
                 span=20.0, hook_approach=1.0, wheel_spacings=(3.0,), buffer_length=4.0,
                 operation="pendant")


HEAVY_WHEEL = 193.75
WHEELBASE = 3.6
LIGHT_WHEEL = 111.75


def test_hand_wheel_loads_used_below() -> None:
    # Source: common practice, no source (bridge statics, recomputed by hand above)
    assert _heavy_crane().wheels().maximum == pytest.approx(HEAVY_WHEEL, rel=1e-12)
    assert _light_crane().wheels().maximum == pytest.approx(LIGHT_WHEEL, rel=1e-12)


# ---------------------------------------------------------------- chains of simple spans

CHAIN_L = 10.0


def _chain() -> trundle.Beam:
    """Three simple spans of 10 m: hinges over both interior supports."""
    return trundle.Beam(spans=[CHAIN_L] * 3, EI=2.0e5, hinges=[CHAIN_L, 2 * CHAIN_L])


def test_one_crane_interior_reaction_of_simple_spans() -> None:
    # Derived by hand: the interior support's line is a triangle of height 1 over the two
    # adjacent spans. Two wheels P at spacing a < L, one over the support, the other a
    # away: R = P(1 + (L − a)/L). (The same as the end reaction formula P(2 − a/L).)
    result = analyse_runway(_chain(), RunwaySpec(cranes=(_heavy_crane(),)))
    P, a, L = HEAVY_WHEEL * 1.25, WHEELBASE, CHAIN_L
    interior = P * (1 + (L - a) / L)  # 242.1875 · 1.64 = 397.1875
    reactions = result.strength.max("reaction")
    assert reactions[1] == pytest.approx(interior, rel=REL)
    assert reactions[2] == pytest.approx(interior, rel=REL)
    # end supports: only one span loads them, the same value by the same formula
    assert reactions[0] == pytest.approx(P * (2 - a / L), rel=REL)
    # where the crane stands: one wheel over the support
    g = result.strength.governing("reaction", "max")[1]
    x = np.sort(result.strength.axle_positions(g))
    assert np.min(np.abs(x - L)) < 1e-9 * L


def test_four_wheel_crane_interior_reaction_of_simple_spans() -> None:
    # Derived by hand: bogies of two wheels 1.5 m apart, 4.0 m between the bogies (offsets
    # 0, 1.5, 5.5, 7.0 m); every wheel fits on the two spans next to the support. Wheel
    # loads by bridge statics: (500/2 + (400 + 80)·(25 − 1.2)/25)/4 = 176.74 kN, with 25 %
    # impact 220.925 kN. Inner wheel of a bogie over the support: triangle ordinates
    # 0.85 + 1 + 0.6 + 0.45 = 2.9 (an outer wheel gives 1 + 0.85 + 0.45 + 0.3 = 2.6), so
    # R = 2.9 · 220.925 = 640.6825 kN.
    crane = Crane("ladle crane", capacity=400.0, bridge_weight=500.0, trolley_weight=80.0,
                  span=25.0, hook_approach=1.2, wheel_spacings=(1.5, 4.0, 1.5),
                  buffer_length=9.0)
    assert crane.wheels().maximum == pytest.approx(176.74, rel=1e-12)
    offsets = [0.0, 1.5, 5.5, 7.0]
    P = 176.74 * 1.25
    candidates = [_tent_reaction([P] * 4, offsets, k, CHAIN_L) for k in range(4)]
    assert max(candidates) == pytest.approx(2.9 * P, rel=1e-12)
    result = analyse_runway(_chain(), RunwaySpec(cranes=(crane,)))
    assert result.strength.max("reaction")[1] == pytest.approx(640.6825, rel=REL)
    assert result.strength.max("reaction")[2] == pytest.approx(640.6825, rel=REL)
    assert result.service.max("reaction")[1] == pytest.approx(2.9 * 176.74, rel=REL)


@pytest.fixture(scope="module")
def two_cranes_on_chain() -> RunwayResult:
    return analyse_runway(_chain(), RunwaySpec(cranes=(_heavy_crane(), _light_crane())))


def _tent_reaction(loads: list[float], offsets: list[float], k: int, L: float) -> float:
    """Interior-support reaction with wheel k over the support, every wheel on the two spans."""
    return sum(P * (1 - abs(u - offsets[k]) / L) for P, u in zip(loads, offsets, strict=True))


def test_two_cranes_buffers_touching_interior_reaction(two_cranes_on_chain) -> None:
    # Derived by hand. The wheels of the two cranes in a row: heavy crane (2 × 242.1875 kN with
    # 25 % impact, 3.6 m apart), clear gap at buffers touching 0.4 + 0.5 = 0.9 m, light crane
    # (2 × 122.925 kN with 10 % impact, 3.0 m apart): offsets 0, 3.6, 4.5, 7.5 m. All four fit
    # within the two spans next to the support (7.5 m < 10 m on each side). The reaction is a
    # sum of triangles of height 1 — piecewise linear and concave while every wheel is on the
    # two spans — so its maximum has a wheel over the support; each triangle shrinks as the
    # gap opens, so buffers touching govern.
    L = CHAIN_L
    heavy, light = HEAVY_WHEEL * 1.25, LIGHT_WHEEL * 1.10
    gap = 0.5 * (4.4 - 3.6) + 0.5 * (4.0 - 3.0)
    assert buffer_gap(_heavy_crane(), _light_crane()) == pytest.approx(gap, rel=1e-12)
    loads = [heavy, heavy, light, light]
    offsets = [0.0, 3.6, 3.6 + gap, 3.6 + gap + 3.0]
    candidates = [_tent_reaction(loads, offsets, k, L) for k in range(4)]
    # worked out: the heavy crane's rear wheel over the support
    # R = 242.1875·(0.64 + 1) + 122.925·(0.91 + 0.61) = 397.1875 + 186.846 = 584.0335
    assert candidates[1] == pytest.approx(584.0335, rel=1e-12)
    assert max(candidates) == candidates[1]
    result = two_cranes_on_chain
    reactions = result.strength.max("reaction")
    assert reactions[1] == pytest.approx(584.0335, rel=REL)
    assert reactions[2] == pytest.approx(584.0335, rel=REL)
    g = result.strength.governing("reaction", "max")[1]
    assert result.strength.cases[g.case].name == "all loaded"
    assert g.searched == pytest.approx((gap,), rel=1e-9)
    x = result.strength.axle_positions(g)
    assert np.ptp(x) == pytest.approx(offsets[-1], rel=1e-12)  # the train as laid out
    assert np.abs(x - L).min() < 1e-9 * L


def test_two_cranes_end_reaction(two_cranes_on_chain) -> None:
    # Derived by hand: an end support's line is one triangle over its span; the heavy crane's
    # front wheel over the support, the rest following on the span:
    # R = 242.1875·(1 + 0.64) + 122.925·(0.55 + 0.25) = 397.1875 + 98.34 = 495.5275
    # (the light crane first gives 122.925·1.7 + 242.1875·0.86 = 417.25, less)
    reactions = two_cranes_on_chain.strength.max("reaction")
    assert reactions[0] == pytest.approx(495.5275, rel=REL)
    assert reactions[3] == pytest.approx(495.5275, rel=REL)


def test_each_crane_alone_is_among_the_combinations(two_cranes_on_chain) -> None:
    # the light crane alone on the chain: P(2 − a/L) with its own 10 % impact
    names = [c.name for c in two_cranes_on_chain.combinations]
    assert names == ["mill crane alone", "repair crane alone", "all loaded",
                     "mill crane loaded, others unloaded", "repair crane loaded, others unloaded"]
    alone = analyse_runway(_chain(), RunwaySpec(cranes=(_light_crane(),)))
    assert alone.strength.max("reaction")[1] == pytest.approx(
        LIGHT_WHEEL * 1.10 * (2 - 3.0 / CHAIN_L), rel=REL)
