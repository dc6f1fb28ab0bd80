"""How accurate a haunch is: trundle's lines against the exact varying-stiffness beam.

A haunch is one exact varying-EI element in the solve, and its lines are Hermite cubics of
exact nodal values between graded nodes, checked to stay within ``HAUNCH_TOLERANCE`` (1e-8)
of each line's largest ordinate (README, docs/model-file.md).

Reference, independent of trundle's finite elements: the force method (flexibility method;
from memory: any structural analysis text, e.g. Hibbeler, Structural Analysis, the chapter on
the force method) with the flexibility integrals δ_ij = ∫ m_i m_j / EI dx of the exact
varying stiffness evaluated by ``scipy.integrate.quad``; deflections by the reduction theorem
(unit-load method on the released structure, from memory, same texts):
δ_c(a) = ∫ M_a(x) m_c(x) / EI dx, M_a the indeterminate moment under the unit load at a,
m_c the released structure's moment under a unit load at c.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np
import pytest
from scipy.integrate import quad

import trundle
from trundle.core import influence as influence_module
from trundle.core.fem import HAUNCH_TOLERANCE, stiffness_between
from trundle.core.influence import Effect, line_pieces
from trundle.core.statics import DistributedLoad, PointLoad


def _integral(f: Callable[[float], float], a: float, b: float, points: list[float]) -> float:
    inside = sorted(p for p in points if a < p < b)
    value, error = quad(f, a, b, points=inside or None, epsabs=0.0, epsrel=1e-13, limit=500)
    assert error <= 1e-11 * max(abs(value), 1.0)
    return value


# --- case A: two spans of 10, pinned, linear 1:4 haunches either side of the middle support --

SEGMENTS_A = [(0.0, 6.0, 1.0), (6.0, 10.0, 1.0, 4.0, "linear"),
              (10.0, 14.0, 4.0, 1.0, "linear"), (14.0, 20.0, 1.0)]
BREAKS_A = [6.0, 10.0, 14.0]
SPAN_A = 20.0


def _EI_A(x: float) -> float:
    if 6.0 <= x <= 10.0:
        return 1.0 + 3.0 * (x - 6.0) / 4.0
    if 10.0 < x <= 14.0:
        return 4.0 - 3.0 * (x - 10.0) / 4.0
    return 1.0


def _simple_moment(a: float) -> Callable[[float], float]:
    """Moment of the simply supported 20 m beam (the released structure) under a unit load
    at a, sagging positive."""
    return lambda x: (1.0 - a / SPAN_A) * x if x <= a else a * (1.0 - x / SPAN_A)


def _m_middle(x: float) -> float:  # unit upward force at the middle support
    return -0.5 * (x if x <= 10.0 else SPAN_A - x)


def _middle_reaction_A(a: float, spring: float | None = None) -> float:
    """X = −δ10/(δ11 + 1/k): the middle support's reaction (k = ∞ for a rigid support)."""
    m0 = _simple_moment(a)
    pts = [a, *BREAKS_A]
    d11 = _integral(lambda x: _m_middle(x) ** 2 / _EI_A(x), 0.0, SPAN_A, pts)
    d10 = _integral(lambda x: _m_middle(x) * m0(x) / _EI_A(x), 0.0, SPAN_A, pts)
    return -d10 / (d11 + (0.0 if spring is None else 1.0 / spring))


def _moment_A(a: float, s: float) -> float:
    return _simple_moment(a)(s) + _middle_reaction_A(a) * _m_middle(s)


def _deflection_A(a: float, c: float) -> float:
    X = _middle_reaction_A(a)
    m0, mc = _simple_moment(a), _simple_moment(c)
    return _integral(lambda x: (m0(x) + X * _m_middle(x)) * mc(x) / _EI_A(x), 0.0, SPAN_A,
                     [a, c, *BREAKS_A])


# --- case B: propped cantilever (fixed at 0, pin at 10), parabolic haunch 4 -> 1 over 0..4 --

L_B, HAUNCH_B = 10.0, 4.0
SEGMENTS_B = [(0.0, HAUNCH_B, 4.0, 1.0, "parabolic"), (HAUNCH_B, L_B, 1.0)]


def _EI_B(x: float) -> float:
    """Vertex (zero slope) at x = 4, the smaller EI, as trundle's "parabolic" shape."""
    return 1.0 + 3.0 * (1.0 - x / HAUNCH_B) ** 2 if x < HAUNCH_B else 1.0


def _cantilever_moment(a: float) -> Callable[[float], float]:
    """Moment of the cantilever fixed at 0 (the released structure) under a unit downward
    load at a: hogging −(a − x) left of the load."""
    return lambda x: -(a - x) if x < a else 0.0


def _prop_B(a: float) -> float:
    """Prop reaction: X = ∫ (a − x)(L − x)/EI / ∫ (L − x)²/EI (m1 = L − x for a unit upward
    force at the prop)."""
    pts = [a, HAUNCH_B]
    flex = _integral(lambda x: (L_B - x) ** 2 / _EI_B(x), 0.0, L_B, pts)
    coupling = _integral(lambda x: -_cantilever_moment(a)(x) * (L_B - x) / _EI_B(x), 0.0,
                         L_B, pts)
    return coupling / flex


def _moment_B(a: float, s: float) -> float:
    return _cantilever_moment(a)(s) + _prop_B(a) * (L_B - s)


def _deflection_B(a: float, c: float) -> float:
    X = _prop_B(a)
    m0, mc = _cantilever_moment(a), _cantilever_moment(c)
    return _integral(lambda x: (m0(x) + X * (L_B - x)) * mc(x) / _EI_B(x), 0.0, L_B,
                     [a, c, HAUNCH_B])


LOADS_A = [0.7, 3.3, 6.05, 7.77, 8.31, 9.93, 10.4, 12.2, 13.9, 17.0]
LOADS_B = [0.05, 0.9, 1.77, 2.51, 3.333, 3.98, 5.1, 7.7, 9.6]

CASES = {
    # name: (beam, effect, reference(a), load positions)
    "A reaction 1": (SEGMENTS_A, None, Effect("reaction", support=1), _middle_reaction_A,
                     LOADS_A),
    "A moment in haunch": (SEGMENTS_A, None, Effect("moment", at=8.3),
                           lambda a: _moment_A(a, 8.3), LOADS_A),
    "A moment at support": (SEGMENTS_A, None, Effect("moment", at=10.0),
                            lambda a: _moment_A(a, 10.0), LOADS_A),
    "A deflection in haunch": (SEGMENTS_A, None, Effect("deflection", at=7.1),
                               lambda a: _deflection_A(a, 7.1), LOADS_A),
    "A deflection mid-span": (SEGMENTS_A, None, Effect("deflection", at=4.0),
                              lambda a: _deflection_A(a, 4.0), LOADS_A),
    "B prop reaction": (SEGMENTS_B, ["fixed", "pin"], Effect("reaction", support=1), _prop_B,
                        LOADS_B),
    "B support moment": (SEGMENTS_B, ["fixed", "pin"], Effect("support_moment", support=0),
                         # the wall's couple (counter-clockwise on the beam) is −M(0)
                         lambda a: -_moment_B(a, 0.0), LOADS_B),
    "B moment in haunch": (SEGMENTS_B, ["fixed", "pin"], Effect("moment", at=2.5),
                           lambda a: _moment_B(a, 2.5), LOADS_B),
    "B deflection in haunch": (SEGMENTS_B, ["fixed", "pin"], Effect("deflection", at=2.0),
                               lambda a: _deflection_B(a, 2.0), LOADS_B),
    "B deflection near the wall": (SEGMENTS_B, ["fixed", "pin"],
                                   Effect("deflection", at=0.3),
                                   lambda a: _deflection_B(a, 0.3), LOADS_B),
    "B deflection in span": (SEGMENTS_B, ["fixed", "pin"], Effect("deflection", at=7.0),
                             lambda a: _deflection_B(a, 7.0), LOADS_B),
}


def _beam(segments, supports, divisions=None) -> trundle.Beam:
    spans = [10.0, 10.0] if segments is SEGMENTS_A else [L_B]
    return trundle.Beam(spans=spans, EI=segments, supports=supports,
                        haunch_divisions=divisions)


def _largest(line) -> float:
    return max(abs(line.max()[0]), abs(line.min()[0]))


@pytest.mark.parametrize("name", list(CASES))
def test_lines_within_the_stated_tolerance_of_the_force_method(name: str) -> None:
    segments, supports, effect, reference, loads = CASES[name]
    line = _beam(segments, supports).influence_set([effect]).line(0)
    scale = _largest(line)
    for a in loads:
        exact = reference(a)
        assert abs(line(a) - exact) <= HAUNCH_TOLERANCE * scale, (name, a, line(a), exact)
    # the stated tolerance is 1e-8 relative to the line's largest ordinate
    assert HAUNCH_TOLERANCE == 1e-8


def test_many_lines_at_once_are_as_accurate() -> None:
    """Sections all along the beam in one call (inside the haunches, at their ends, at the
    support), so the sections split pieces of the haunches' division."""
    beam = _beam(SEGMENTS_A, None)
    sections = [3.0, 6.0, 7.1, 8.3, 9.99, 10.0, 11.5, 16.0]
    effects = [Effect("moment", at=s) for s in sections]
    effects += [Effect("deflection", at=s) for s in sections]
    lines = beam.influence_set(effects)
    for j, e in enumerate(effects):
        line = lines.line(j)
        scale = _largest(line)
        for a in (2.0, 6.5, 8.0, 9.5, 10.2, 12.9):
            exact = _moment_A(a, e.at) if e.kind == "moment" else _deflection_A(a, e.at)
            # (deflection at the support: a zero line; the reference rounds to ~1e-15)
            assert abs(line(a) - exact) <= HAUNCH_TOLERANCE * scale + 1e-13, (e.label, a)


def test_a_spring_support_beside_haunches() -> None:
    k = 0.05  # soft enough to matter: the spring takes visibly less than a rigid support
    beam = trundle.Beam(spans=[10.0, 10.0], EI=SEGMENTS_A,
                        supports=["pin", trundle.Spring(k), "pin"])
    line = beam.influence("reaction", support=1)
    scale = _largest(line)
    for a in (2.0, 7.77, 10.0, 12.5):
        exact = _middle_reaction_A(a, spring=k)
        assert abs(line(a) - exact) <= HAUNCH_TOLERANCE * scale
    assert abs(_middle_reaction_A(10.0, spring=k)) < 0.9 * abs(_middle_reaction_A(10.0))


def test_nodal_ordinates_are_exact_whatever_the_division() -> None:
    """The element's stiffness is exact, so ordinates at the mesh's nodes (supports, haunch
    ends) agree with the reference to rounding even with one piece per haunch."""
    for divisions in (1, 3):
        line = _beam(SEGMENTS_A, None, divisions).influence("reaction", support=1)
        for a in (6.0, 14.0):
            assert line(a) == pytest.approx(_middle_reaction_A(a), rel=1e-11, abs=1e-13)


def test_fixed_division_converges_as_h_to_the_fourth() -> None:
    """With ``haunch_divisions`` fixed, the error inside the haunch is that of a Hermite cubic
    of exact nodal values: it falls about 16 times when the pieces are halved."""
    points = np.linspace(6.0, 10.0, 41)[1:-1] + 0.0137
    exact = np.array([_middle_reaction_A(a) for a in points])
    errors = []
    for divisions in (4, 8, 16):
        line = _beam(SEGMENTS_A, None, divisions).influence("reaction", support=1)
        errors.append(np.abs(line(np.array(points)) - exact).max())
    ratios = np.array(errors[:-1]) / np.array(errors[1:])
    assert np.all((ratios > 10.0) & (ratios < 24.0)), ratios


def test_the_error_bound_is_honest(monkeypatch: pytest.MonkeyPatch) -> None:
    """The bound line_pieces checks (the largest bound / (tolerance × ordinate)) is never
    below the error measured against the reference, on a coarse fixed division where the
    errors are large enough to measure."""
    seen: list[np.ndarray] = []
    original = influence_module._haunch_lines

    def spy(*args, **kwargs):
        result = original(*args, **kwargs)
        seen.append(result[-1])
        return result

    monkeypatch.setattr(influence_module, "_haunch_lines", spy)
    for name in ("A reaction 1", "A moment in haunch", "B prop reaction",
                 "B deflection in haunch", "B moment in haunch"):
        segments, supports, effect, reference, _ = CASES[name]
        beam = _beam(segments, supports, 4)
        seen.clear()
        line = line_pieces(beam, [effect])
        bound_ratio = seen[-1].max()
        ppoly_line = beam.influence_set([effect]).line(0)
        scale = np.abs(ppoly_line(line.nodes)).max()  # largest nodal ordinate
        lo, hi = (6.0, 14.0) if segments is SEGMENTS_A else (0.0, HAUNCH_B)
        probe = np.linspace(lo, hi, 61)[1:-1] + 0.013
        measured = max(abs(ppoly_line(a) - reference(a)) for a in probe)
        assert measured / (HAUNCH_TOLERANCE * scale) <= bound_ratio, name
        assert measured > 0.0


def test_automatic_division_meets_the_tolerance_densely() -> None:
    """Automatic division (the default) against the reference at many load positions inside
    the haunches: never more than the stated tolerance."""
    beam = _beam(SEGMENTS_B, ["fixed", "pin"])
    line = beam.influence("deflection", at=2.0)
    scale = _largest(line)
    for a in np.linspace(0.0, HAUNCH_B, 41)[1:] - 0.017:
        assert abs(line(a) - _deflection_B(a, 2.0)) <= HAUNCH_TOLERANCE * scale


def test_element_stiffness_against_the_inverted_flexibility() -> None:
    """The varying element's stiffness against an independent inversion: the flexibility of
    the simply supported element under end moments (scipy quad), mapped to the end dofs."""
    beam = trundle.Beam(spans=[10.0], EI=[(0.0, 4.0, 1.0, 5.0, "linear"),
                                          (4.0, 10.0, 5.0, 0.5, "parabolic")])
    for seg, xa, xb in ((0, 0.5, 3.5), (1, 4.0, 10.0), (1, 9.0, 9.7)):
        EI = beam.stiffness_segments[seg].at
        h = xb - xa

        def flexibility(weight, EI=EI, xa=xa, xb=xb):
            return quad(lambda x: weight(x) / EI(x), xa, xb, epsabs=0, epsrel=1e-13)[0]

        f11 = flexibility(lambda x, xb=xb, h=h: ((xb - x) / h) ** 2)
        f22 = flexibility(lambda x, xa=xa, h=h: ((x - xa) / h) ** 2)
        f12 = -flexibility(lambda x, xa=xa, xb=xb, h=h: (x - xa) * (xb - x) / h**2)
        S = np.linalg.inv(np.array([[f11, f12], [f12, f22]]))
        T = np.array([[1 / h, 1, -1 / h, 0], [1 / h, 0, -1 / h, 1]])
        expected = T.T @ S @ T
        k = stiffness_between(beam, np.array([seg]), np.array([xa]), np.array([xb]))[0]
        assert k == pytest.approx(expected, rel=1e-11, abs=1e-11 * np.abs(expected).max())
        assert np.allclose(k, k.T, rtol=0, atol=1e-12 * np.abs(k).max())
        for rigid in ([1, 0, 1, 0], [0, 1, h, 1]):  # lift and rotation about the left end
            assert np.abs(k @ np.array(rigid, float)).max() <= 1e-11 * np.abs(k).max()
    # prismatic: the classical 12EI/h³ ... matrix, bit for bit
    prismatic = stiffness_between(trundle.Beam([6.0], EI=2.0), np.array([0]), np.array([1.0]),
                                  np.array([4.0]))[0]
    assert prismatic[0, 0] == 12 * 2.0 / 27.0 and prismatic[1, 1] == 4 * 2.0 / 3.0


def test_fixed_loads_on_a_haunched_beam() -> None:
    """beam.static inside and beside a haunch: reactions and deflections under a uniform and a
    point load against the force method (same reference)."""
    beam = _beam(SEGMENTS_B, ["fixed", "pin"])
    w = 1.0
    result = beam.static([DistributedLoad(0.0, L_B, w), PointLoad(2.7, 3.0)])

    def cantilever_load(x: float) -> float:
        return -w * (L_B - x) ** 2 / 2.0 - 3.0 * max(2.7 - x, 0.0)

    flex = _integral(lambda x: (L_B - x) ** 2 / _EI_B(x), 0.0, L_B, [HAUNCH_B])
    coupling = _integral(lambda x: -cantilever_load(x) * (L_B - x) / _EI_B(x), 0.0, L_B,
                         [2.7, HAUNCH_B])
    prop = coupling / flex
    assert result.reactions[1] == pytest.approx(prop, rel=1e-11)
    assert result.reactions[0] == pytest.approx(w * L_B + 3.0 - prop, rel=1e-11)
    for c in (1.3, 2.7, 3.6, 6.5):
        mc = _cantilever_moment(c)
        exact = _integral(lambda x, mc=mc: (cantilever_load(x) + prop * (L_B - x)) * mc(x)
                          / _EI_B(x), 0.0, L_B, [c, 2.7, HAUNCH_B])
        assert result.deflection(c)[0] == pytest.approx(exact, rel=1e-9)
        assert result.moment(c)[0] == pytest.approx(cantilever_load(c) + prop * (L_B - c),
                                                    rel=1e-11)


def test_a_hinge_inside_a_haunch() -> None:
    """Fixed at 0, hinge at 3 inside the parabolic haunch 0..4, pin at 10 (statically
    determinate, so statics and the unit-load method give the reference directly): the part
    3..10 is simply supported on the hinge and the pin, the part 0..3 a cantilever carrying
    the hinge force V_h = (10 − a)/7 for a load at a ≥ 3."""
    beam = trundle.Beam(spans=[L_B], supports=["fixed", "pin"], hinges=[3.0], EI=SEGMENTS_B)

    def cantilever_deflection(c: float, a: float) -> float:  # at c, unit load at a (≤ 3)
        return _integral(lambda x: (c - x) * (a - x) / _EI_B(x), 0.0, min(a, c), [])

    def hinge_force(a: float) -> float:
        return (L_B - a) / 7.0 if a >= 3.0 else 0.0

    def deflection(c: float, a: float) -> float:
        if a <= 3.0:
            return cantilever_deflection(c, a)
        return hinge_force(a) * cantilever_deflection(c, 3.0)

    prop = beam.influence("reaction", support=1)
    for a in (1.0, 3.0, 3.5, 6.2, 9.0):
        assert prop(a) == pytest.approx((a - 3.0) / 7.0 if a > 3.0 else 0.0, abs=1e-12)
    for c in (1.6, 3.0):
        line = beam.influence("deflection", at=c)
        scale = _largest(line)
        for a in (0.4, 1.6, 2.35, 2.99, 3.0, 3.7, 5.0, 8.8):
            assert abs(line(a) - deflection(c, a)) <= HAUNCH_TOLERANCE * scale, (c, a)
