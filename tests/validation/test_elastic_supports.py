"""Elastic supports (vertical springs k, rotational springs kr) against compatibility closed
forms and against rigid supports as the springs stiffen.

Source: force method (remove the spring's reaction, restore compatibility including the
spring's own give), with the handbook deflections of simple beams and cantilevers
(Steel Construction Manual, AISC, Part 3, "Beam Diagrams and Formulas", from memory);
common practice, no source, for the rigid limit.
"""

from __future__ import annotations

import numpy as np
import pytest

import trundle
from trundle import Spring
from trundle.core.statics import DistributedLoad, PointLoad

EXACT = 1e-11

L, EI = 8.0, 6.0


def _centre_spring_reaction(a: np.ndarray, k: float) -> np.ndarray:
    """Two equal spans L on an elastic middle support k, unit load at a ≤ L.

    Without the middle support the 2L simple beam deflects at its centre by
    a(3L² − a²)/(12EI) under the load and by L³/(6EI) per unit upward centre force; the
    spring shortens by R/k. Compatibility: a(3L² − a²)/(12EI) − R·L³/(6EI) = R/k.
    """
    return a * (3 * L**2 - a**2) / (12 * EI) / (L**3 / (6 * EI) + 1.0 / k)


@pytest.mark.parametrize("k_rel", [0.5, 3.0, 40.0])  # spring stiffness in units of EI/L³
def test_two_spans_on_an_elastic_middle_support(k_rel: float) -> None:
    k = k_rel * EI / L**3
    beam = trundle.Beam(spans=[L, L], EI=EI, supports=["pin", Spring(k), "pin"])
    a = np.linspace(0.0, L, 33)
    line = beam.influence("reaction", support=1)
    expected = _centre_spring_reaction(a, k)
    assert line(a) == pytest.approx(expected, rel=EXACT, abs=EXACT)
    assert line(2 * L - a) == pytest.approx(expected, rel=EXACT, abs=EXACT)
    # uniform load on both spans: 5w(2L)⁴/(384EI) = 5wL⁴/(24EI) of free deflection
    w = 3.0
    R = 5 * w * L**4 / (24 * EI) / (L**3 / (6 * EI) + 1.0 / k)
    result = beam.static([DistributedLoad(0.0, 2 * L, w)])
    assert result.reactions[1] == pytest.approx(R, rel=EXACT)
    assert result.deflection(L)[0] == pytest.approx(R / k, rel=EXACT)
    assert w * line.integrate(0.0, 2 * L) == pytest.approx(R, rel=EXACT)


def test_stiff_spring_tends_to_the_rigid_support() -> None:
    """The gap to the rigid two-span beam shrinks in proportion to 1/k."""
    rigid = trundle.Beam(spans=[L, L], EI=EI)
    x = np.linspace(0.0, 2 * L, 65)
    effects = [trundle.Effect("reaction", support=1), trundle.Effect("moment", at=L),
               trundle.Effect("moment", at=0.4 * L), trundle.Effect("deflection", at=0.4 * L)]
    reference = rigid.influence_set(effects)(x)
    gaps = []
    for k_rel in (1e3, 1e5, 1e7):
        elastic = trundle.Beam(spans=[L, L], EI=EI,
                               supports=["pin", Spring(k_rel * EI / L**3), "pin"])
        gaps.append(np.abs(elastic.influence_set(effects)(x) - reference).max(axis=0))
    gaps = np.array(gaps)
    ratios = gaps[:-1] / gaps[1:]
    assert ratios == pytest.approx(100.0, rel=0.05)
    # at k = 10⁷ EI/L³ the spring gives 10⁻⁷ L³/EI per unit reaction: a few 10⁻⁶ of each line
    assert (gaps[-1] / np.abs(reference).max(axis=0)).max() < 1e-5


def test_simple_span_on_one_spring() -> None:
    """Pin at 0, spring k at L: statically determinate, so the reactions are the rigid ones,
    and every deflection adds the rigid-body drop of the chord: the spring settles by
    R1/k = ξ/(Lk), so the section x drops by x·ξ/(L²k) on top of the simple-beam value."""
    k = 2.0 * EI / L**3
    beam = trundle.Beam(spans=[L], EI=EI, supports=["pin", Spring(k)])
    xi = np.linspace(0.0, L, 33)
    assert beam.influence("reaction", support=1)(xi) == pytest.approx(xi / L, abs=EXACT)
    x = 0.5 * L
    b = L - xi
    bending = np.where(x <= xi, b * x * (L**2 - b**2 - x**2),
                       xi * (L - x) * (L**2 - xi**2 - (L - x) ** 2)) / (6 * EI * L)
    drop = x * xi / (L**2 * k)
    assert beam.influence("deflection", at=x)(xi) == pytest.approx(bending + drop, abs=EXACT)


def test_cantilever_on_a_rotational_and_vertical_spring() -> None:
    """Left end on a spring (k, kr) and free at the right: determinate. A tip load P gives
    R = P and a support couple P·L; the support settles P/k and turns P·L/kr, so the tip
    drops by P/k + P·L²/kr + P·L³/(3EI)."""
    k, kr, P = 50.0, 400.0, 2.0
    beam = trundle.Beam(spans=[L], EI=EI, supports=[Spring(k, kr), "free"])
    assert beam.degree_of_indeterminacy == 0
    result = beam.static([PointLoad(L, P)])
    assert result.reactions[0] == pytest.approx(P, rel=EXACT)
    assert result.support_moments[0] == pytest.approx(P * L, rel=EXACT)
    assert result.deflection(L)[0] == pytest.approx(P / k + P * L**2 / kr + P * L**3 / (3 * EI),
                                                    rel=EXACT)
    assert beam.influence("support_moment", support=0)(np.array([0.0, L / 2, L])) == \
        pytest.approx([0.0, L / 2, L], abs=EXACT)


def test_rotational_spring_between_pin_and_fixed() -> None:
    """A far end on a stiff vertical spring with a rotational spring kr: the end couple under
    a uniform load follows M = (wL³/(24EI)) / (L/(3EI) + 1/kr) (simple-beam end rotation
    wL³/(24EI) restored by the end moment's M·L/(3EI) and the spring's M/kr; exact apart from
    the vertical spring's give, which is made negligible here). kr → 0 gives the propped
    beam's pin, kr → ∞ the fixed end wL²/8."""
    w = 1.0
    for kr_rel in (0.3, 3.0, 30.0):
        kr = kr_rel * EI / L
        beam = trundle.Beam(spans=[L], EI=EI, supports=["pin", Spring(1e9 * EI / L**3, kr)])
        M = w * L**3 / (24 * EI) / (L / (3 * EI) + 1.0 / kr)
        result = beam.static([DistributedLoad(0.0, L, w)])
        # the right end is turned clockwise by the spring's hogging couple
        assert result.moment(L)[0] == pytest.approx(-M, rel=1e-7)
        assert -result.support_moments[1] == pytest.approx(M, rel=1e-7)
    fixed = trundle.Beam(spans=[L], EI=EI, supports=["pin", "fixed"])
    assert fixed.static([DistributedLoad(0.0, L, w)]).moment(L)[0] == pytest.approx(
        -w * L**2 / 8, rel=EXACT)
