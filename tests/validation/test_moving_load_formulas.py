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
from trundle.analysis.envelope import AbsoluteExtreme

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
