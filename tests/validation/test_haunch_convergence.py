"""Haunched (varying-EI) members against closed forms and the unit-load method.

Source: the unit-load (virtual work) method, δ = ∫ M·m / EI dx (common practice, no source),
integrated for the exact varying EI by scipy.integrate.quad and, for linear EI, by sympy in
closed form (logarithms). trundle's haunch element has the exact varying stiffness, so an
ordinate at a node is exact to rounding for any division, and between nodes the line is
within HAUNCH_TOLERANCE (1e-8) of its largest ordinate.
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


def test_cantilever_tip_deflection_is_exact_for_any_division() -> None:
    exact = tip_flexibility()
    for n in (1, 2, 8, None):
        beam = _cantilever(n)
        tip = beam.influence("deflection", at=L)(L)
        assert tip == pytest.approx(exact, rel=1e-12)
        # the static solve gives the same number
        assert beam.static([PointLoad(L, 1.0)]).deflection(L)[0] == pytest.approx(exact,
                                                                                  rel=1e-12)


def test_cantilever_deflection_line_inside_the_haunch() -> None:
    """Tip deflection for a unit load at a inside the haunch (Maxwell: the deflection at a
    under a tip load), ∫ (L − s)(a − s)/EI over [0, a], within 1e-8 of the line's largest
    ordinate (the tip's own)."""
    line = _cantilever(None).influence("deflection", at=L)
    largest = tip_flexibility()
    for a in (0.37, 1.5, 2.22, 3.01, 3.9):
        exact = _quad(lambda s, a=a: (L - s) * (a - s) / parabolic_EI(s), 0.0, a)
        assert abs(line(a) - exact) <= 1e-8 * largest


def test_linear_taper_cantilever_closed_form() -> None:
    """A cantilever whose EI falls linearly from EI0 at the wall to EI1 at the tip: tip
    deflection ∫ (L − x)²/EI(x) dx and tip rotation ∫ (L − x)/EI(x) dx under a unit tip load,
    in closed form by sympy."""
    x = sp.Symbol("x", positive=True)
    Ls, EI0, EI1 = sp.Integer(8), sp.Integer(5), sp.Integer(1)
    EI = EI0 + (EI1 - EI0) * x / Ls
    deflection = sp.integrate((Ls - x) ** 2 / EI, (x, 0, Ls))
    rotation = sp.integrate((Ls - x) / EI, (x, 0, Ls))
    assert deflection.has(sp.log)  # a true closed form, not a polynomial
    beam = trundle.Beam(spans=[8.0], supports=["fixed", "free"], EI=[(0.0, 8.0, 5.0, 1.0)])
    tip = float(sp.N(deflection, 30))
    assert beam.influence("deflection", at=8.0)(8.0) == pytest.approx(tip, rel=1e-12)
    assert beam.static([PointLoad(8.0, 1.0)]).rotation(8.0)[0] == pytest.approx(
        float(sp.N(rotation, 30)), rel=1e-12)
    # the deflection at mid-length under the tip load, ∫ (L − x)(L/2 − x)/EI over [0, L/2]
    middle = float(sp.N(sp.integrate((Ls - x) * (Ls / 2 - x) / EI, (x, 0, Ls / 2)), 30))
    assert beam.static([PointLoad(8.0, 1.0)]).deflection(4.0)[0] == pytest.approx(middle,
                                                                                 rel=1e-12)
    line = beam.influence("deflection", at=8.0)
    assert abs(line(4.0) - middle) <= 1e-8 * tip


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


def test_propped_cantilever_with_linear_haunch() -> None:
    positions = [1.5, 3.0, 5.0, 8.5]
    exact = np.array([prop_reaction(p) for p in positions])
    line = _propped(None).influence("reaction", support=1)
    # the prop line's largest ordinate is 1 (a load on the prop)
    assert np.abs(line(np.array(positions)) - exact).max() <= 1e-8
    # at the haunch's end (a node) exact to rounding, whatever the division
    for n in (1, 5, None):
        assert _propped(n).influence("reaction", support=1)(3.0) == pytest.approx(
            prop_reaction(3.0), rel=1e-12)
    # sanity: without the haunch the prop line is ξ²(3L − ξ)/(2L³); the stiff wall end draws
    # load to the wall, so the prop gets less
    prismatic = np.array([p**2 * (3 * L - p) / (2 * L**3) for p in positions])
    assert np.all(exact < prismatic)
