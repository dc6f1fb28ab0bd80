"""Haunched (varying-EI) members: convergence of the piecewise-constant subdivision.

Source: the unit-load (virtual work) method, δ = ∫ M·m / EI dx, integrated for the exact
varying EI by scipy.integrate.quad and, for a linear haunch, by sympy in closed form
(common practice, no source). The subdivision takes EI at each element's middle, a midpoint
rule, so the error must fall as h²: about four times smaller each time the number of
divisions doubles.
"""

from __future__ import annotations

import numpy as np
import pytest
import sympy as sp
from scipy.integrate import quad

import trundle
from trundle.core.statics import PointLoad

L = 10.0
HAUNCH = 4.0  # the haunch runs from the wall (x = 0) to x = 4
EI_WALL, EI_SPAN = 4.0, 1.0


def parabolic_EI(x: float) -> float:
    """EI falls from 4 at the wall to 1 at x = 4 along a parabola with its vertex at x = 4,
    then stays 1 (trundle's "parabolic" segment puts the vertex at the smaller EI)."""
    if x >= HAUNCH:
        return EI_SPAN
    return EI_SPAN + (EI_WALL - EI_SPAN) * (1.0 - x / HAUNCH) ** 2


def _cantilever(divisions: int) -> trundle.Beam:
    return trundle.Beam(spans=[L], supports=["fixed", "free"], haunch_divisions=divisions,
                        EI=[(0.0, HAUNCH, EI_WALL, EI_SPAN, "parabolic"),
                            (HAUNCH, L, EI_SPAN)])


def _quad(f, a: float, b: float) -> float:
    value, error = quad(f, a, b, epsabs=0.0, epsrel=1e-13, limit=200)
    assert error < 1e-11 * max(abs(value), 1.0)
    return value


def tip_flexibility() -> float:
    """Tip deflection under a unit tip load: M = m = −(L − x), δ = ∫ (L − x)²/EI dx."""
    return (_quad(lambda s: (L - s) ** 2 / parabolic_EI(s), 0.0, HAUNCH)
            + _quad(lambda s: (L - s) ** 2 / EI_SPAN, HAUNCH, L))


def test_segment_shape_is_the_intended_parabola() -> None:
    segment = _cantilever(8).stiffness_segments[0]
    s = np.linspace(0.0, HAUNCH, 9)
    assert segment.at(s) == pytest.approx([parabolic_EI(v) for v in s], rel=1e-14)


def test_cantilever_tip_deflection_converges_as_h_squared() -> None:
    exact = tip_flexibility()
    counts = [4, 8, 16, 32, 64]
    errors = []
    for n in counts:
        beam = _cantilever(n)
        tip = beam.influence("deflection", at=L)(L)
        # the static solve on the same mesh gives the same number
        assert beam.static([PointLoad(L, 1.0)]).deflection(L)[0] == pytest.approx(tip,
                                                                                   rel=1e-12)
        errors.append(tip - exact)
    errors = np.array(errors)
    ratios = errors[:-1] / errors[1:]
    assert ratios == pytest.approx(4.0, rel=0.05)  # h²
    assert abs(errors[-1]) / exact < 1e-4
    # the midpoint rule on the convex 1/EI underestimates the flexibility: same sign throughout
    assert np.all(np.sign(errors) == np.sign(errors[0]))


def test_default_divisions_are_close_enough() -> None:
    """The default subdivision (24) is within 0.05 % of the exact tip deflection."""
    beam = trundle.Beam(spans=[L], supports=["fixed", "free"],
                        EI=[(0.0, HAUNCH, EI_WALL, EI_SPAN, "parabolic"), (HAUNCH, L, EI_SPAN)])
    assert beam.influence("deflection", at=L)(L) == pytest.approx(tip_flexibility(), rel=5e-4)


# --- an indeterminate haunched beam: propped cantilever with a linear haunch -----------------


HL = 3.0  # linear haunch 3 → 1 over the first 3 m


def _propped(divisions: int) -> trundle.Beam:
    return trundle.Beam(spans=[L], supports=["fixed", "pin"], haunch_divisions=divisions,
                        EI=[(0.0, HL, 3.0, 1.0), (HL, L, 1.0)])


def prop_reaction(xi: float) -> float:
    """Force method, redundant = the prop. On the cantilever a unit load at ξ gives
    M0 = −(ξ − x) for x < ξ, the unit prop force m = −(L − x); the prop reaction is
    R = ∫ M0·m/EI / ∫ m²/EI, both integrals in closed form by sympy."""
    s = sp.Symbol("s")
    Ls, xs, h = sp.Rational(L), sp.Rational(xi), sp.Rational(HL)
    EI = 3 - 2 * s / h

    flex = (sp.integrate((Ls - s) ** 2 / EI, (s, 0, h))
            + sp.integrate((Ls - s) ** 2, (s, h, Ls)))
    coupling = (sp.integrate((xs - s) * (Ls - s) / EI, (s, 0, min(xs, h)))
                + (sp.integrate((xs - s) * (Ls - s), (s, h, xs)) if xs > h else 0))
    return float(sp.N(coupling / flex, 20))


def test_propped_cantilever_with_linear_haunch_converges() -> None:
    positions = [1.5, 5.0, 8.5]
    exact = np.array([prop_reaction(p) for p in positions])
    counts = [6, 12, 24, 48]
    errors = []
    for n in counts:
        line = _propped(n).influence("reaction", support=1)
        errors.append(line(np.array(positions)) - exact)
    errors = np.array(errors)
    worst = np.abs(errors).max(axis=1)
    assert worst[:-1] / worst[1:] == pytest.approx(4.0, rel=0.1)  # h²
    assert worst[-1] < 2e-5 * np.abs(exact).max()
    # sanity: without the haunch the prop line is ξ²(3L − ξ)/(2L³); the stiff wall end draws
    # load to the wall, so the prop gets less
    prismatic = np.array([p**2 * (3 * L - p) / (2 * L**3) for p in positions])
    assert np.all(exact < prismatic)
