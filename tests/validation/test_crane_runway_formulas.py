"""Crane wheels on simple runway girders and on chains of simple spans: closed forms.

Sources:
- AISC Steel Construction Manual, "Beam Diagrams and Formulas", simple beam with two equal
  concentrated moving loads (from memory): M_max = P/(2L)·(L − a/2)² under one load standing
  a/4 from midspan when a < (2 − √2)L ≈ 0.586L, otherwise P·L/4 with one load at midspan;
  maximum end reaction R = P(2 − a/L). The same moving-load formulas appear in most steel
  design manuals.
- Reaction at an interior support of a chain of simple spans (a hinge over each interior
  support): its influence line is a triangle of height 1 over the two adjacent spans (statics of
  the two simple spans, derived in the tests by hand).
- Wheel loads by the statics of the crane bridge and the default impact fractions (cab 25 %,
  pendant 10 %): checked in test_crane_wheel_statics.py and test_crane_defaults.py; here the
  wheel loads are recomputed by hand.

Every crane and runway below is invented. Forces in kN, lengths in m.
"""

from __future__ import annotations

import math

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
LIGHT_WHEEL = 111.75


def test_hand_wheel_loads_used_below() -> None:
    # Source: common practice, no source (bridge statics, recomputed by hand above)
    assert _heavy_crane().wheels().maximum == pytest.approx(HEAVY_WHEEL, rel=1e-12)
    assert _light_crane().wheels().maximum == pytest.approx(LIGHT_WHEEL, rel=1e-12)


# ---------------------------------------------------------------- one crane, simple span

SIMPLE_L = 12.0
WHEELBASE = 3.6
X_STAR = SIMPLE_L / 2 - WHEELBASE / 4  # 5.1: the section of the absolute maximum


@pytest.fixture(scope="module")
def simple_span() -> RunwayResult:
    beam = trundle.Beam(spans=[SIMPLE_L], EI=2.0e5)
    sections = np.sort(np.append(beam.tenth_points(), X_STAR))
    return analyse_runway(beam, RunwaySpec(cranes=(_heavy_crane(),)), sections=sections)


def test_two_wheels_simple_span_moment(simple_span) -> None:
    # Source: AISC Manual, beam diagrams, two equal moving loads (from memory)
    P = HEAVY_WHEEL * 1.25  # strength: wheel loads with the 25 % vertical impact
    a, L = WHEELBASE, SIMPLE_L
    assert a < (2 - math.sqrt(2)) * L
    expected = P / (2 * L) * (L - a / 2) ** 2  # 1049.8828125
    moment = simple_span.strength.max("moment")
    i = int(np.flatnonzero(np.isclose(simple_span.sections, X_STAR))[0])
    assert moment[i] == pytest.approx(expected, rel=REL)
    assert moment.max() == pytest.approx(expected, rel=REL)
    # midspan: one wheel there, the other a further on: P·(L/4 + (L/4 − a/2)) = P(L − a)/2
    j = int(np.flatnonzero(np.isclose(simple_span.sections, L / 2))[0])
    assert moment[j] == pytest.approx(P * (L - a) / 2, rel=REL)
    # the absolute maximum found over every section of the span
    (absolute,) = [e for e in simple_span.strength.absolute("moment") if e.which == "max"]
    assert absolute.value == pytest.approx(expected, rel=REL)
    assert min(abs(absolute.x - X_STAR), abs(absolute.x - (L - X_STAR))) < 1e-5 * L


def test_two_wheels_simple_span_end_reaction(simple_span) -> None:
    # Source: AISC Manual, beam diagrams, two equal moving loads (from memory): R = P(2 − a/L)
    a, L = WHEELBASE, SIMPLE_L
    with_impact = HEAVY_WHEEL * 1.25 * (2 - a / L)  # 411.71875
    np.testing.assert_allclose(simple_span.strength.max("reaction"), [with_impact] * 2,
                               rtol=REL)
    # the service reactions carry no impact (common practice, no source)
    np.testing.assert_allclose(simple_span.service.max("reaction"),
                               [HEAVY_WHEEL * (2 - a / L)] * 2, rtol=REL)


def test_wide_wheelbase_one_wheel_governs() -> None:
    # Source: AISC Manual, beam diagrams, two equal moving loads (from memory): for
    # a > 0.586L one load alone at midspan governs, M = P·L/4
    L, a = 8.0, 5.5
    assert a > (2 - math.sqrt(2)) * L
    crane = Crane("forge crane", capacity=200.0, bridge_weight=300.0, trolley_weight=50.0,
                  span=20.0, hook_approach=1.0, wheel_spacings=(a,), operation="pendant")
    beam = trundle.Beam(spans=[L], EI=2.0e5)
    result = analyse_runway(beam, RunwaySpec(cranes=(crane,)))
    P = HEAVY_WHEEL * 1.10
    assert result.strength.max("moment").max() == pytest.approx(P * L / 4, rel=REL)
    (absolute,) = [e for e in result.strength.absolute("moment") if e.which == "max"]
    assert absolute.value == pytest.approx(P * L / 4, rel=REL)
    assert absolute.x == pytest.approx(L / 2, rel=1e-5)
    np.testing.assert_allclose(result.strength.max("reaction"), [P * (2 - a / L)] * 2,
                               rtol=REL)


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
