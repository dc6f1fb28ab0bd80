"""Handbook beams: simple span, cantilever, overhang, propped cantilever, fixed-fixed, and
continuous beams of two and three equal spans.

Sources (all from memory; the formulas are the standard ones printed in every such table):
- Steel Construction Manual, American Institute of Steel Construction, Part 3, "Beam Diagrams
  and Formulas" (simple, cantilever, overhanging, fixed-end, propped and two-span continuous
  beams).
- W. C. Young, R. G. Budynas, "Roark's Formulas for Stress and Strain", 7th ed., Table 8.1
  (beam end reactions, moments and deflections).
- Moment and reaction coefficients of continuous beams of equal spans under uniform load
  (0.100 wL², 1.10 wL, 0.117 wL², 1.20 wL, 0.101 wL², 0.075 wL²; 0.0957 wL² for one span of
  two loaded) as tabulated in design aids for continuous beams; re-derived in the comments by
  the three-moment equation.
Each figure is checked through the influence lines (ordinates, w·∫IL) and through
beam.static where a load case fits.
"""

from __future__ import annotations

import numpy as np
import pytest

import trundle
from trundle.core.statics import DistributedLoad, PointLoad

EXACT = 1e-11  # closed forms the solver reproduces to rounding
TABLE = 5e-3  # coefficients printed to three figures: half a unit in the last is up to 0.5 %


def _xi(L: float, n: int = 41, lo: float = 0.0) -> np.ndarray:
    return np.linspace(lo, lo + L, n)


# --- simple span -----------------------------------------------------------------------------


class TestSimpleSpan:
    L, EI = 12.0, 3.0

    @pytest.fixture
    def beam(self) -> trundle.Beam:
        return trundle.Beam(spans=[self.L], EI=self.EI)

    def test_reaction_lines(self, beam: trundle.Beam) -> None:
        # R0 = 1 − ξ/L, R1 = ξ/L (statics)
        xi = _xi(self.L)
        assert beam.influence("reaction", support=0)(xi) == pytest.approx(1 - xi / self.L,
                                                                          rel=EXACT, abs=EXACT)
        assert beam.influence("reaction", support=1)(xi) == pytest.approx(xi / self.L,
                                                                          rel=EXACT, abs=EXACT)

    @pytest.mark.parametrize("side", ["left", "right"])
    def test_shear_line(self, beam: trundle.Beam, side: str) -> None:
        # V(a) = −ξ/L for a load left of a, 1 − ξ/L for a load right of a; −1 jump at ξ = a
        a = 4.5
        line = beam.influence("shear", at=a, side=side)
        xi = _xi(self.L)
        xi = xi[np.abs(xi - a) > 1e-9]
        expected = np.where(xi < a, -xi / self.L, 1 - xi / self.L)
        assert line(xi) == pytest.approx(expected, abs=EXACT)
        assert line(a, side="left") == pytest.approx(-a / self.L, abs=EXACT)
        assert line(a, side="right") == pytest.approx(1 - a / self.L, abs=EXACT)

    def test_shear_at_the_supports(self, beam: trundle.Beam) -> None:
        xi = _xi(self.L)[1:-1]
        # just right of the left support: the left reaction; just left of the right one: −R1
        assert beam.influence("shear", at=0.0, side="right")(xi) == pytest.approx(
            1 - xi / self.L, abs=EXACT)
        assert beam.influence("shear", at=self.L, side="left")(xi) == pytest.approx(
            -xi / self.L, abs=EXACT)
        # outside the beam there is nothing: V = 0
        assert beam.influence("shear", at=0.0, side="left")(xi) == pytest.approx(0.0, abs=EXACT)

    def test_moment_line(self, beam: trundle.Beam) -> None:
        # M(a) = ξ(L − a)/L for ξ ≤ a, a(L − ξ)/L for ξ ≥ a; peak ab/L under the section
        a = 4.5
        line = beam.influence("moment", at=a)
        xi = _xi(self.L)
        expected = np.where(xi <= a, xi * (self.L - a) / self.L, a * (self.L - xi) / self.L)
        assert line(xi) == pytest.approx(expected, abs=EXACT)
        value, where = line.max()
        assert value == pytest.approx(a * (self.L - a) / self.L, rel=EXACT)
        assert where == pytest.approx(a, abs=1e-9)
        assert line.areas()[0] == pytest.approx(a * (self.L - a) / 2, rel=EXACT)
        assert line.areas()[1] == pytest.approx(0.0, abs=EXACT)

    def test_deflection_line(self, beam: trundle.Beam) -> None:
        # load P at ξ, b = L − ξ: v(x) = P b x (L² − b² − x²)/(6 EI L) for x ≤ ξ, mirrored
        # for x ≥ ξ; at the centre under a central load P L³/(48 EI)
        L, EI = self.L, self.EI
        for x in (2.0, L / 2, 9.5):
            line = beam.influence("deflection", at=x)
            xi = _xi(L)
            b = L - xi
            left = b * x * (L**2 - b**2 - x**2) / (6 * EI * L)  # section left of the load
            right = xi * (L - x) * (L**2 - xi**2 - (L - x) ** 2) / (6 * EI * L)
            expected = np.where(x <= xi, left, right)
            assert line(xi) == pytest.approx(expected, rel=EXACT, abs=EXACT * L**3 / EI)
        assert beam.influence("deflection", at=L / 2)(L / 2) == pytest.approx(
            L**3 / (48 * EI), rel=EXACT)

    def test_end_rotation_line(self, beam: trundle.Beam) -> None:
        # θ_A = P a b (L + b)/(6 EI L), clockwise at the left end under a downward load
        L, EI = self.L, self.EI
        xi = _xi(L)
        expected = xi * (L - xi) * (2 * L - xi) / (6 * EI * L)
        assert beam.influence("rotation", at=0.0)(xi) == pytest.approx(expected, abs=EXACT)

    def test_uniform_load(self, beam: trundle.Beam) -> None:
        # wL²/8 at mid-span, 5wL⁴/(384 EI) deflection, wL/2 reactions
        L, EI, w = self.L, self.EI, 2.5
        assert w * beam.influence("moment", at=L / 2).integrate(0, L) == pytest.approx(
            w * L**2 / 8, rel=EXACT)
        assert w * beam.influence("deflection", at=L / 2).integrate(0, L) == pytest.approx(
            5 * w * L**4 / (384 * EI), rel=EXACT)
        result = beam.static([DistributedLoad(0.0, L, w)])
        assert result.reactions == pytest.approx([w * L / 2] * 2, rel=EXACT)
        assert result.moment(L / 2)[0] == pytest.approx(w * L**2 / 8, rel=EXACT)
        assert result.deflection(L / 2)[0] == pytest.approx(5 * w * L**4 / (384 * EI),
                                                            rel=EXACT)


# --- cantilever and overhang -------------------------------------------------------------------


def test_cantilever() -> None:
    # fixed at x = 0, free at L. R0 = 1; the wall's couple (CCW) C0 = ξ; M(x) = −(ξ − x) for
    # ξ > x; tip deflection ξ²(3L − ξ)/(6EI); uniform load: tip deflection wL⁴/(8EI),
    # wall moment wL²/2; tip load: tip rotation PL²/(2EI)
    L, EI, w = 6.0, 2.0, 1.5
    beam = trundle.Beam(spans=[L], EI=EI, supports=["fixed", "free"])
    xi = _xi(L)
    assert beam.influence("reaction", support=0)(xi) == pytest.approx(1.0, rel=EXACT)
    assert beam.influence("support_moment", support=0)(xi) == pytest.approx(xi, abs=EXACT)
    x = 2.0
    assert beam.influence("moment", at=x)(xi) == pytest.approx(np.minimum(x - xi, 0.0),
                                                               abs=EXACT)
    shear = beam.influence("shear", at=x, side="right")(xi[xi != x])
    assert shear == pytest.approx(np.where(xi[xi != x] > x, 1.0, 0.0), abs=EXACT)
    tip = beam.influence("deflection", at=L)
    assert tip(xi) == pytest.approx(xi**2 * (3 * L - xi) / (6 * EI), abs=EXACT)
    assert w * tip.integrate(0, L) == pytest.approx(w * L**4 / (8 * EI), rel=EXACT)
    result = beam.static([DistributedLoad(0.0, L, w)])
    assert result.support_moments[0] == pytest.approx(w * L**2 / 2, rel=EXACT)
    assert result.moment(0.0)[0] == pytest.approx(-w * L**2 / 2, rel=EXACT)
    assert result.deflection(L)[0] == pytest.approx(w * L**4 / (8 * EI), rel=EXACT)
    assert beam.static([PointLoad(L, 1.0)]).rotation(L)[0] == pytest.approx(L**2 / (2 * EI),
                                                                             rel=EXACT)


def test_beam_overhanging_one_support() -> None:
    # supports at 0 and L, free end at L + c. R0 = 1 − ξ/L, R1 = ξ/L over the whole beam;
    # M at the support = −(ξ − L) for a load on the overhang; tip load P: tip deflection
    # P c² (L + c)/(3EI); load at ξ between supports: tip rises by ξ(L − ξ)(L + ξ)c/(6EIL)
    L, c, EI = 10.0, 3.0, 4.0
    beam = trundle.Beam(spans=[L, c], EI=EI, supports=["pin", "pin", "free"])
    xi = _xi(L + c, 53)
    assert beam.influence("reaction", support=0)(xi) == pytest.approx(1 - xi / L, abs=EXACT)
    assert beam.influence("reaction", support=1)(xi) == pytest.approx(xi / L, abs=EXACT)
    assert beam.influence("moment", at=L)(xi) == pytest.approx(np.minimum(L - xi, 0.0),
                                                               abs=EXACT)
    tip = beam.influence("deflection", at=L + c)
    assert tip(L + c) == pytest.approx(c**2 * (L + c) / (3 * EI), rel=EXACT)
    inside = xi[xi <= L]
    assert tip(inside) == pytest.approx(-inside * (L - inside) * (L + inside) * c / (6 * EI * L),
                                        abs=EXACT)


# --- propped cantilever ----------------------------------------------------------------------


class TestProppedCantilever:
    """Fixed at x = 0, pinned at x = L. Uniform load: R_fixed = 5wL/8, R_prop = 3wL/8,
    fixed-end moment wL²/8, max sagging 9wL²/128 at 3L/8 from the prop; central point load:
    R_prop = 5P/16, fixed-end moment 3PL/16. (Common practice; also in the beam-formula tables
    cited above.)"""

    L, EI, w = 9.0, 5.0, 4.0

    @pytest.fixture
    def beam(self) -> trundle.Beam:
        return trundle.Beam(spans=[self.L], EI=self.EI, supports=["fixed", "pin"])

    def test_uniform_load_by_lines(self, beam: trundle.Beam) -> None:
        L, w = self.L, self.w
        assert w * beam.influence("reaction", support=0).integrate(0, L) == pytest.approx(
            5 * w * L / 8, rel=EXACT)
        assert w * beam.influence("reaction", support=1).integrate(0, L) == pytest.approx(
            3 * w * L / 8, rel=EXACT)
        # the wall turns the beam counter-clockwise: a CCW couple of wL²/8
        assert w * beam.influence("support_moment", support=0).integrate(0, L) == \
            pytest.approx(w * L**2 / 8, rel=EXACT)
        assert w * beam.influence("moment", at=5 * L / 8).integrate(0, L) == pytest.approx(
            9 * w * L**2 / 128, rel=EXACT)

    def test_uniform_load_by_static_solve(self, beam: trundle.Beam) -> None:
        L, w = self.L, self.w
        result = beam.static([DistributedLoad(0.0, L, w)])
        assert result.reactions == pytest.approx([5 * w * L / 8, 3 * w * L / 8], rel=EXACT)
        assert result.support_moments[0] == pytest.approx(w * L**2 / 8, rel=EXACT)
        assert result.moment(0.0)[0] == pytest.approx(-w * L**2 / 8, rel=EXACT)
        assert result.moment(5 * L / 8)[0] == pytest.approx(9 * w * L**2 / 128, rel=EXACT)
        assert result.shear(5 * L / 8)[0] == pytest.approx(0.0, abs=EXACT * w * L)

    def test_prop_reaction_line(self, beam: trundle.Beam) -> None:
        # Remove the prop: the cantilever's tip deflection under a unit load at ξ is
        # ξ²(3L − ξ)/(6EI), under a unit tip load L³/(3EI); compatibility gives
        # R_prop(ξ) = ξ²(3L − ξ)/(2L³)
        L = self.L
        xi = _xi(L)
        assert beam.influence("reaction", support=1)(xi) == pytest.approx(
            xi**2 * (3 * L - xi) / (2 * L**3), abs=EXACT)
        assert beam.influence("reaction", support=1)(L / 2) == pytest.approx(5 / 16, rel=EXACT)
        assert beam.influence("support_moment", support=0)(L / 2) == pytest.approx(
            3 * L / 16, rel=EXACT)


# --- fixed-fixed ---------------------------------------------------------------------------


def test_fixed_fixed_beam() -> None:
    # Load P at a, b = L − a: fixed-end moments P a b²/L² (left) and P a² b/L² (right),
    # reactions P b²(3a + b)/L³ and P a²(a + 3b)/L³; central load: PL/8 at mid-span;
    # uniform load: wL²/12 at the ends, wL²/24 at mid-span, deflection wL⁴/(384EI)
    L, EI, w = 10.0, 2.0, 3.0
    beam = trundle.Beam(spans=[L], EI=EI, supports=["fixed", "fixed"])
    a = _xi(L)
    b = L - a
    # couples the supports apply, CCW positive: the left wall CCW, the right wall clockwise
    assert beam.influence("support_moment", support=0)(a) == pytest.approx(a * b**2 / L**2,
                                                                           abs=EXACT)
    assert beam.influence("support_moment", support=1)(a) == pytest.approx(-(a**2) * b / L**2,
                                                                           abs=EXACT)
    assert beam.influence("reaction", support=0)(a) == pytest.approx(
        b**2 * (3 * a + b) / L**3, abs=EXACT)
    assert beam.influence("reaction", support=1)(a) == pytest.approx(
        a**2 * (a + 3 * b) / L**3, abs=EXACT)
    mid = beam.influence("moment", at=L / 2)
    assert mid(L / 2) == pytest.approx(L / 8, rel=EXACT)
    assert w * mid.integrate(0, L) == pytest.approx(w * L**2 / 24, rel=EXACT)
    result = beam.static([DistributedLoad(0.0, L, w)])
    assert result.moment(np.array([0.0, L]))[0] == pytest.approx(-w * L**2 / 12, rel=EXACT)
    assert result.moment(L)[0] == pytest.approx(-w * L**2 / 12, rel=EXACT)
    assert result.support_moments == pytest.approx([w * L**2 / 12, -w * L**2 / 12], rel=EXACT)
    assert result.deflection(L / 2)[0] == pytest.approx(w * L**4 / (384 * EI), rel=EXACT)


# --- continuous beams of equal spans -------------------------------------------------------


class TestTwoEqualSpans:
    L, w = 8.0, 2.0

    @pytest.fixture
    def beam(self) -> trundle.Beam:
        return trundle.Beam(spans=[self.L, self.L], EI=7.0)

    def test_both_spans_loaded(self, beam: trundle.Beam) -> None:
        # reactions 3wL/8, 10wL/8 = 1.25 wL, 3wL/8; support moment −wL²/8; max sagging
        # 9wL²/128 = 0.0703 wL² at 3L/8
        L, w = self.L, self.w
        result = beam.static([DistributedLoad(0.0, 2 * L, w)])
        assert result.reactions == pytest.approx([0.375 * w * L, 1.25 * w * L, 0.375 * w * L],
                                                 rel=EXACT)
        assert result.moment(L)[0] == pytest.approx(-w * L**2 / 8, rel=EXACT)
        assert result.moment(3 * L / 8)[0] == pytest.approx(9 * w * L**2 / 128, rel=EXACT)
        line = beam.influence("reaction", support=1)
        assert w * line.integrate(0, 2 * L) == pytest.approx(1.25 * w * L, rel=EXACT)

    def test_one_span_loaded(self, beam: trundle.Beam) -> None:
        # reactions 7wL/16, 5wL/8, −wL/16; support moment −wL²/16; max sagging
        # (7/16)²/2 wL² = 49/512 wL² = 0.0957 wL² at 7L/16
        L, w = self.L, self.w
        result = beam.static([DistributedLoad(0.0, L, w)])
        assert result.reactions == pytest.approx([7 * w * L / 16, 5 * w * L / 8, -w * L / 16],
                                                 rel=EXACT)
        assert result.moment(L)[0] == pytest.approx(-w * L**2 / 16, rel=EXACT)
        assert result.moment(7 * L / 16)[0] == pytest.approx(0.0957 * w * L**2, rel=TABLE)
        assert result.moment(7 * L / 16)[0] == pytest.approx(49 * w * L**2 / 512, rel=EXACT)
        # the same by the line: w × its positive area, which lies on the loaded span alone
        line = beam.influence("moment", at=7 * L / 16)
        assert w * line.integrate(0, L) == pytest.approx(49 * w * L**2 / 512, rel=EXACT)
        assert w * line.areas()[0] == pytest.approx(49 * w * L**2 / 512, rel=EXACT)

    def test_centre_reaction_line(self, beam: trundle.Beam) -> None:
        # Superposition: take the centre support away; the 2L simple beam deflects at its
        # centre under a unit load at a ≤ L by (formula Pbx(L'² − b² − x²)/(6EIL') with
        # L' = 2L, b = a measured from the far end, x = L) a(3L² − a²)/(12EI), and under a
        # unit centre load by (2L)³/(48EI) = L³/(6EI). The centre reaction restores zero
        # deflection: R1 = a(3L² − a²)/(2L³), and symmetrically for the other span.
        L = self.L
        a = _xi(L)
        line = beam.influence("reaction", support=1)
        expected = a * (3 * L**2 - a**2) / (2 * L**3)
        assert line(a) == pytest.approx(expected, abs=EXACT)
        assert line(2 * L - a) == pytest.approx(expected, abs=EXACT)


class TestThreeEqualSpans:
    L, w = 6.0, 1.5

    @pytest.fixture
    def beam(self) -> trundle.Beam:
        return trundle.Beam(spans=[self.L] * 3, EI=11.0)

    def test_all_spans_loaded(self, beam: trundle.Beam) -> None:
        # three-moment equation, all spans: 4M_B + M_C = −wL²/2 with M_B = M_C gives
        # M_B = −0.100 wL²; R_A = wL/2 + M_B/L = 0.400 wL; R_B = 0.6 + 0.5 = 1.10 wL
        L, w = self.L, self.w
        result = beam.static([DistributedLoad(0.0, 3 * L, w)])
        assert result.moment(np.array([L, 2 * L])) == pytest.approx([-0.1 * w * L**2] * 2,
                                                                     rel=EXACT)
        assert result.reactions == pytest.approx(np.array([0.4, 1.1, 1.1, 0.4]) * w * L,
                                                 rel=EXACT)
        assert w * beam.influence("moment", at=L).integrate(0, 3 * L) == pytest.approx(
            -0.1 * w * L**2, rel=EXACT)

    def test_patterned_live_load_by_line_areas(self, beam: trundle.Beam) -> None:
        # Load on adjacent spans 1 and 2 (where the lines have the worst sign):
        # span 1 alone gives M_B = −wL²/15, span 2 alone −wL²/20, span 3 alone +wL²/60;
        # max hogging at B = −7/60 wL² = −0.117 wL², the positive area is +wL²/60.
        # R_B with spans 1 and 2 loaded: 37/60 + 35/60 = 1.20 wL.
        L, w = self.L, self.w
        pos, neg = beam.influence("moment", at=L).areas()
        assert w * neg == pytest.approx(-0.117 * w * L**2, rel=TABLE)
        assert w * neg == pytest.approx(-7 / 60 * w * L**2, rel=EXACT)
        assert w * pos == pytest.approx(w * L**2 / 60, rel=EXACT)
        pos, _ = beam.influence("reaction", support=1).areas()
        assert w * pos == pytest.approx(1.20 * w * L, rel=EXACT)

    def test_span_patterns_by_static_solve(self, beam: trundle.Beam) -> None:
        # spans 1 and 3 loaded: M_B = −wL²/15 + wL²/60 = −0.05 wL², R_A = 0.45 wL, end-span
        # max 0.45²/2 = 0.101 wL² at 0.45 L; span 2 alone: M_B = M_C = −wL²/20, centre
        # 1/8 − 1/20 = 0.075 wL²
        L, w = self.L, self.w
        ends = beam.static([DistributedLoad(0.0, L, w), DistributedLoad(2 * L, 3 * L, w)])
        assert ends.moment(0.45 * L)[0] == pytest.approx(0.101 * w * L**2, rel=TABLE)
        assert ends.moment(0.45 * L)[0] == pytest.approx(0.10125 * w * L**2, rel=EXACT)
        middle = beam.static([DistributedLoad(L, 2 * L, w)])
        assert middle.moment(1.5 * L)[0] == pytest.approx(0.075 * w * L**2, rel=EXACT)
