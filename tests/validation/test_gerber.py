"""Statically determinate beams with internal hinges (Gerber beams, suspended spans) and
hinges over supports.

Source: statics of rigid bodies; influence lines of determinate beams are straight segments
(common practice, no source; derived in the comments below).
"""

from __future__ import annotations

import numpy as np
import pytest

import trundle
from trundle.core.statics import DistributedLoad

EXACT = 1e-11


# Three spans 20 + 30 + 20 with hinges 6 m into the centre span: two anchor pieces
# (0..26 on supports at 0 and 20, 44..70 on supports at 50 and 70) carry a suspended span
# 26..44 of 18 m.
L1, L2, L3 = 20.0, 30.0, 20.0
H1, H2 = 26.0, 44.0
S = H2 - H1


@pytest.fixture(scope="module")
def gerber() -> trundle.Beam:
    return trundle.Beam(spans=[L1, L2, L3], EI=3.0e4, hinges=[H1, H2])


def _hinge_forces(xi: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Forces the suspended span puts on the anchors (downward) for a unit load at ξ on it:
    a simple beam H1..H2, so (H2 − ξ)/S at H1 and (ξ − H1)/S at H2, zero elsewhere."""
    on = (xi >= H1) & (xi <= H2)
    return np.where(on, (H2 - xi) / S, 0.0), np.where(on, (xi - H1) / S, 0.0)


def expected_reactions(xi: np.ndarray) -> np.ndarray:
    left, right = _hinge_forces(xi)
    on_left = xi < H1  # load on the left anchor: a simple beam 0..20 with overhang to 26
    on_right = xi > H2  # (a load on a hinge counts once, as a hinge force)
    R0 = np.where(on_left, (L1 - xi) / L1, 0.0)
    R1 = np.where(on_left, xi / L1, 0.0)
    # hinge force at 26 on the left anchor: moments about support 1 (x = 20) give
    # R0·20 = −6·F, so R0 = −0.3 F and R1 = 1.3 F
    R0 = R0 - 0.3 * left
    R1 = R1 + 1.3 * left
    # mirror image on the right anchor (supports at 50 and 70, hinge at 44)
    R2 = np.where(on_right, (L1 + L2 + L3 - xi) / L3, 0.0) + 1.3 * right
    R3 = np.where(on_right, (xi - L1 - L2) / L3, 0.0) - 0.3 * right
    return np.stack([R0, R1, R2, R3])


def test_reaction_lines_by_statics(gerber: trundle.Beam) -> None:
    assert gerber.degree_of_indeterminacy == 0
    xi = np.linspace(0.0, 70.0, 141)
    expected = expected_reactions(xi)
    for i in range(4):
        assert gerber.influence("reaction", support=i)(xi) == pytest.approx(expected[i],
                                                                            abs=EXACT)


def test_support_moment_and_suspended_span_moment(gerber: trundle.Beam) -> None:
    xi = np.linspace(0.0, 70.0, 141)
    left, _ = _hinge_forces(xi)
    # M at support 1 (x = 20), from the right-hand overhang of the left anchor: a load on
    # the overhang hogs by its lever arm, the hinge force by 6 m; nothing from elsewhere
    on_overhang = (xi >= L1) & (xi < H1)
    expected = np.where(on_overhang, -(xi - L1), 0.0) - 6.0 * left
    assert gerber.influence("moment", at=L1)(xi) == pytest.approx(expected, abs=EXACT)
    # M at the middle of the suspended span (x = 35, a = b = 9): the simple-span line
    mid = 35.0
    on = (xi >= H1) & (xi <= H2)
    simple = np.where(xi <= mid, (xi - H1) * (H2 - mid) / S, (mid - H1) * (H2 - xi) / S)
    assert gerber.influence("moment", at=mid)(xi) == pytest.approx(np.where(on, simple, 0.0),
                                                                   abs=EXACT)


def test_lines_are_straight_segments(gerber: trundle.Beam) -> None:
    """A determinate structure's lines have no curvature: every cubic and quadratic
    coefficient vanishes (Müller-Breslau: the released structure moves as rigid pieces)."""
    effects = [trundle.Effect("reaction", support=i) for i in range(4)]
    effects += [trundle.Effect("moment", at=x) for x in (10.0, 20.0, 23.0, 35.0, 60.0)]
    effects += [trundle.Effect("shear", at=x, side="left") for x in (20.0, 30.0, 50.0)]
    lines = gerber.influence_set(effects)
    scale = 30.0
    assert np.abs(lines.coefficients[:2]).max() < EXACT * scale


def test_uniform_load_by_static_solve(gerber: trundle.Beam) -> None:
    # w over the whole beam: the suspended span puts wS/2 = 9w on each anchor tip; left anchor
    # (0..26, supports 0 and 20): moments about x = 20 give R0 = (w·26·(20 − 13) − 9w·6)/20
    # = 6.4w, so R1 = 26w + 9w − 6.4w = 28.6w; by symmetry R3 = 6.4w, R2 = 28.6w;
    # M at x = 20: −w·6²/2 − 9w·6 = −72w; centre of the suspended span wS²/8 = 40.5w
    w = 2.0
    result = gerber.static([DistributedLoad(0.0, 70.0, w)])
    assert result.reactions == pytest.approx(np.array([6.4, 28.6, 28.6, 6.4]) * w, rel=EXACT)
    assert result.moment(20.0)[0] == pytest.approx(-72.0 * w, rel=EXACT)
    assert result.moment(35.0)[0] == pytest.approx(40.5 * w, rel=EXACT)
    assert result.moment(np.array([H1, H2])) == pytest.approx([0.0, 0.0], abs=EXACT * 100)
    line = gerber.influence("reaction", support=0)
    assert w * line.integrate(0.0, 70.0) == pytest.approx(6.4 * w, rel=EXACT)


def test_two_spans_with_a_hinge_in_the_second() -> None:
    # spans 10 + 12, hinge at 12 (2 m into span 2): the left piece 0..12 on supports 0 and 10
    # carries a suspended span 12..22 (simple beam on the hinge and support 2)
    beam = trundle.Beam(spans=[10.0, 12.0], EI=1.0, hinges=[12.0])
    assert beam.degree_of_indeterminacy == 0
    xi = np.linspace(0.0, 22.0, 45)
    hinge = np.where(xi >= 12.0, (22.0 - xi) / 10.0, 0.0)
    R2 = np.where(xi >= 12.0, (xi - 12.0) / 10.0, 0.0)
    R0 = np.where(xi < 12.0, (10.0 - xi) / 10.0, 0.0) - 0.2 * hinge
    assert beam.influence("reaction", support=0)(xi) == pytest.approx(R0, abs=EXACT)
    assert beam.influence("reaction", support=2)(xi) == pytest.approx(R2, abs=EXACT)
    assert beam.influence("reaction", support=1)(xi) == pytest.approx(1 - R0 - R2, abs=EXACT)
    M1 = np.where((xi >= 10.0) & (xi < 12.0), 10.0 - xi, 0.0) - 2.0 * hinge
    assert beam.influence("moment", at=10.0)(xi) == pytest.approx(M1, abs=EXACT)


@pytest.mark.parametrize("EI", [1.0, [(0.0, 7.0, 2.0), (7.0, 20.0, 5.0)]])
def test_hinges_over_supports_make_simple_spans(EI: object) -> None:
    """A continuous girder with a hinge over every interior support is a row of simple spans:
    every line equals the simple-span line of its own span and is zero elsewhere."""
    spans = [7.0, 5.0, 8.0]
    ends = np.concatenate([[0.0], np.cumsum(spans)])
    beam = trundle.Beam(spans=spans, EI=EI, hinges=list(ends[1:-1]))
    assert beam.degree_of_indeterminacy == 0
    xi = np.linspace(0.0, ends[-1], 81)
    for k in range(3):
        a, b = ends[k], ends[k + 1]
        on = (xi >= a) & (xi <= b)
        L = b - a
        R_left = np.where(on, (b - xi) / L, 0.0)
        R_right = np.where(on, (xi - a) / L, 0.0)
        # an interior support collects from both of its spans
        if k == 0:
            assert beam.influence("reaction", support=0)(xi) == pytest.approx(R_left,
                                                                              abs=EXACT)
        x = a + 0.3 * L
        simple = np.where(xi <= x, (xi - a) * (b - x) / L, (x - a) * (b - xi) / L)
        assert beam.influence("moment", at=x)(xi) == pytest.approx(np.where(on, simple, 0.0),
                                                                   abs=EXACT)
        assert beam.influence("moment", at=b)(xi) == pytest.approx(0.0, abs=EXACT)
        if k < 2:
            a2, b2 = ends[k + 1], ends[k + 2]
            on2 = (xi > a2) & (xi <= b2)  # a load over the support counted once
            R_next = np.where(on2, (b2 - xi) / (b2 - a2), 0.0)
            assert beam.influence("reaction", support=k + 1)(xi) == pytest.approx(
                R_right + R_next, abs=EXACT)
