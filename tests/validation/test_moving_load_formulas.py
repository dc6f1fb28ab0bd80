"""Moving concentrated loads on a simple span: closed-form maxima.

Source: AISC Steel Construction Manual, "Beam Diagrams and Formulas", simple beam with two
equal concentrated moving loads and with two unequal concentrated moving loads (from memory):

- two equal loads P at spacing a: M_max = P/(2L)·(L − a/2)², under one load standing a/4 from
  midspan (the other beyond it), when a < (2 − √2)L ≈ 0.586L; otherwise one load alone at
  midspan governs, M_max = PL/4;
- maximum end reaction (and end shear) R = P(2 − a/L), one load over the support;
- two unequal loads: the largest moment stands under the heavier load P1 when midspan bisects
  the distance e between that load and the resultant: M = (P1 + P2)(L − e)²/(4L) with
  e = P2·a/(P1 + P2) (derived in the test from statics), unless P1 alone at midspan,
  P1·L/4, is larger or the lighter load would have left the span.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import trundle
from conftest import make_crane
from trundle.analysis.envelope import AbsoluteExtreme
from trundle.workflows.crane_runway import RunwayResult, RunwaySpec, analyse_runway

L = 20.0
SQRT2_LIMIT = 2.0 - math.sqrt(2.0)  # a/L below which two equal loads beat one


def _absolute_max(env: trundle.Envelope) -> AbsoluteExtreme:
    (found,) = [a for a in env.absolute("moment") if a.which == "max"]
    return found


@pytest.mark.parametrize("a", [2.0, 6.0, 11.5, 12.0, 16.0])
def test_two_equal_moving_loads_maximum_moment(a: float) -> None:
    P = 10.0
    beam = trundle.Beam(spans=[L])
    pair = trundle.Vehicle(loads=[P, P], spacings=[a])
    two_govern = a < SQRT2_LIMIT * L
    expected = P / (2 * L) * (L - a / 2) ** 2 if two_govern else P * L / 4
    x_star = L / 2 - a / 4 if two_govern else L / 2
    env = trundle.envelope(beam, [pair], sections=[x_star], effects=("moment",))
    assert env.max("moment")[0] == pytest.approx(expected, rel=1e-12)
    # the governing position: one load at the section, the other a further on (towards
    # midspan) or, when one load governs, off the span
    g = env.governing("moment", "max")[0]
    x = np.sort(env.axle_positions(g))
    if two_govern:
        np.testing.assert_allclose(x, [x_star, x_star + a], atol=1e-9 * L)
    else:
        on = x[(x >= 0.0) & (x <= L)]
        np.testing.assert_allclose(on, [L / 2], atol=1e-9 * L)
    absolute = _absolute_max(env)
    assert absolute.value == pytest.approx(expected, rel=1e-9)
    # by symmetry the section is x* or L − x*
    assert min(abs(absolute.x - x_star), abs(absolute.x - (L - x_star))) < 1e-5 * L


def test_the_two_load_rule_switches_at_0_586_span() -> None:
    """Just below and just above a = (2 − √2)L the two formulas swap (they are equal there)."""
    P = 1.0
    beam = trundle.Beam(spans=[L])
    for a, two_govern in ((0.58 * L, True), (0.59 * L, False)):
        pair = trundle.Vehicle(loads=[P, P], spacings=[a])
        env = trundle.envelope(beam, [pair], sections=[L / 2 - a / 4, L / 2],
                               effects=("moment",))
        two, one = P / (2 * L) * (L - a / 2) ** 2, P * L / 4
        assert (two > one) == two_govern
        assert env.max("moment").max() == pytest.approx(max(two, one), rel=1e-12)


@pytest.mark.parametrize("a", [3.0, 8.0, 15.0])
def test_two_equal_moving_loads_maximum_end_reaction(a: float) -> None:
    P = 10.0
    beam = trundle.Beam(spans=[L])
    env = trundle.envelope(beam, [trundle.Vehicle(loads=[P, P], spacings=[a])],
                           sections=[0.0, L], effects=("reaction", "shear"))
    expected = P * (2 - a / L)
    np.testing.assert_allclose(env.max("reaction"), [expected, expected], rtol=1e-12)
    # the end shear is the end reaction
    assert env.max("shear", side="right")[0] == pytest.approx(expected, rel=1e-12)
    assert env.min("shear", side="left")[1] == pytest.approx(-expected, rel=1e-12)
    g = env.governing("reaction", "max")[0]
    np.testing.assert_allclose(np.sort(env.axle_positions(g)), [0.0, a], atol=1e-9 * L)


@pytest.mark.parametrize("P1, P2, a", [(12.0, 4.0, 6.0), (12.0, 4.0, 16.0), (9.0, 6.0, 4.0),
                                       (9.0, 6.0, 12.0)])
def test_two_unequal_moving_loads_maximum_moment(P1: float, P2: float, a: float) -> None:
    beam = trundle.Beam(spans=[L])
    R = P1 + P2
    e = P2 * a / R  # heavy load to the resultant
    x_heavy = (L - e) / 2  # midspan bisects the heavy load and the resultant
    # moment under the heavy load with the light one a further on: R_A·x, R_A = R(L − x − e)/L
    two = R * (L - e) ** 2 / (4 * L)
    two_valid = x_heavy + a <= L
    one = P1 * L / 4
    expected = max(two, one) if two_valid else one
    sections = [x_heavy, L / 2]
    # the vehicle may run either way, the heavy load in front or behind
    env = trundle.envelope(beam, [trundle.Vehicle(loads=[P1, P2], spacings=[a])],
                           sections=sections, effects=("moment",))
    if two_valid:
        assert env.max("moment")[0] == pytest.approx(two, rel=1e-12)
        g = env.governing("moment", "max")[0]
        x = env.axle_positions(g)  # heavy first, as the loads were given
        np.testing.assert_allclose(x, [x_heavy, x_heavy + a], atol=1e-9 * L)
    assert env.max("moment")[1] >= one * (1 - 1e-12)
    absolute = _absolute_max(env)
    assert absolute.value == pytest.approx(expected, rel=1e-9)
    x_best = x_heavy if two_valid and two > one else L / 2
    assert min(abs(absolute.x - x_best), abs(absolute.x - (L - x_best))) < 1e-5 * L


# --- the crane runway workflow on one simple span: the same formulas ----------------------------
# (the invented crane of tests/conftest.py: cab-operated, impact 25 %, maximum wheel load
# (150 + 250·19/20)/2 = 193.75 kN by the statics of test_crane_wheel_statics.py; kN, m)

HEAVY_WHEEL = 193.75
REL = 1e-9

SIMPLE_L = 12.0
WHEELBASE = 3.6
X_STAR = SIMPLE_L / 2 - WHEELBASE / 4  # 5.1: the section of the absolute maximum


@pytest.fixture(scope="module")
def simple_span() -> RunwayResult:
    beam = trundle.Beam(spans=[SIMPLE_L], EI=2.0e5)
    sections = np.sort(np.append(beam.tenth_points(), X_STAR))
    return analyse_runway(beam, RunwaySpec(cranes=(make_crane("mill crane"),)), sections=sections)


def test_two_wheels_simple_span_moment(simple_span) -> None:
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
    # R = P(2 − a/L)
    a, L = WHEELBASE, SIMPLE_L
    with_impact = HEAVY_WHEEL * 1.25 * (2 - a / L)  # 411.71875
    np.testing.assert_allclose(simple_span.strength.max("reaction"), [with_impact] * 2,
                               rtol=REL)
    # the service reactions carry no impact (common practice, no source)
    np.testing.assert_allclose(simple_span.service.max("reaction"),
                               [HEAVY_WHEEL * (2 - a / L)] * 2, rtol=REL)


def test_wide_wheelbase_one_wheel_governs() -> None:
    # for a > 0.586L one load alone at midspan governs, M = P·L/4
    L, a = 8.0, 5.5
    assert a > (2 - math.sqrt(2)) * L
    crane = make_crane("forge crane", wheel_spacings=(a,), buffer_length=None,
                       operation="pendant")
    beam = trundle.Beam(spans=[L], EI=2.0e5)
    result = analyse_runway(beam, RunwaySpec(cranes=(crane,)))
    P = HEAVY_WHEEL * 1.10
    assert result.strength.max("moment").max() == pytest.approx(P * L / 4, rel=REL)
    (absolute,) = [e for e in result.strength.absolute("moment") if e.which == "max"]
    assert absolute.value == pytest.approx(P * L / 4, rel=REL)
    assert absolute.x == pytest.approx(L / 2, rel=1e-5)
    np.testing.assert_allclose(result.strength.max("reaction"), [P * (2 - a / L)] * 2,
                               rtol=REL)
