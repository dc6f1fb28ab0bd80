"""The static solve (beam.static): reactions and exact diagrams for fixed loads.

Checked against the dense reference of tests/naive.py (point loads, superposed), against the
influence lines (a distributed load is w·∫IL), against closed forms, and for the internal
consistency of its diagrams (M' = V, v' = θ, θ' = −M/EI, jumps at loads and supports).
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.integrate import quad

import trundle
from conftest import random_beam
from naive import floor_scale, naive_solve, spread_points
from trundle.core.statics import DistributedLoad, PointLoad, PointMoment


def _naive_superposed(beam: trundle.Beam, loads: list[PointLoad], sections: np.ndarray):
    """Sum of one dense reference solve per point load."""
    return [naive_solve(beam, ld.x, ld.P, tuple(sections)) for ld in loads]


@pytest.mark.parametrize("seed", range(15))
def test_point_loads_match_dense_reference(seed: int) -> None:
    rng = np.random.default_rng(300 + seed)
    beam = random_beam(rng)
    sections = spread_points(rng, beam, 3)
    positions = spread_points(rng, beam, 3, avoid=sections)
    loads = [PointLoad(float(x), float(rng.uniform(-20.0, 80.0))) for x in positions]
    loads.append(PointLoad(float(beam.support_positions[-1]), 10.0))  # a load on a node
    result = beam.static(loads)
    parts = _naive_superposed(beam, loads, sections)
    total = sum(abs(ld.P) for ld in loads)
    reactions = sum(p.reactions for p in parts)
    couples = sum(p.couples for p in parts)
    np.testing.assert_allclose(result.reactions, reactions, rtol=0, atol=1e-10 * total)
    np.testing.assert_allclose(result.support_moments, couples, rtol=0,
                               atol=1e-10 * total * beam.length)
    for x in sections:
        checks = [
            ("moment", float(result.moment(x)[0]), sum(p.moment(x) for p in parts)),
            ("shear left", float(result.shear(x, side="left")[0]),
             sum(p.shear(x, "left") for p in parts)),
            ("shear right", float(result.shear(x, side="right")[0]),
             sum(p.shear(x, "right") for p in parts)),
            ("deflection", float(result.deflection(x)[0]), sum(p.deflection(x) for p in parts)),
            ("rotation", float(result.rotation(x)[0]), sum(p.rotation(x) for p in parts)),
        ]
        for name, found, expected in checks:
            kind = name.split()[0]
            scale = total * max(floor_scale(beam, kind) * 10, abs(expected))
            assert found == pytest.approx(expected, rel=0, abs=1e-9 * scale), \
                (beam.describe(), name, x)


@pytest.mark.parametrize("seed", range(10))
def test_diagrams_are_consistent(seed: int) -> None:
    """V = dM/dx, θ = dv/dx, dθ/dx = −M/EI inside every piece; V jumps by −P under a load
    and by +R at a support. Source: common practice, no source (beam equilibrium and
    Euler–Bernoulli kinematics with v downward)."""
    rng = np.random.default_rng(400 + seed)
    beam = random_beam(rng)
    points = [PointLoad(float(x), 30.0) for x in spread_points(rng, beam, 2)]
    a, b = np.sort(spread_points(rng, beam, 2, avoid=[ld.x for ld in points]))
    result = beam.static([*points, DistributedLoad(float(a), float(b), 4.0, 9.0)])
    probe = np.sort(spread_points(rng, beam, 12, avoid=[ld.x for ld in points] + [a, b]))
    dM = result.moment_pp.derivative()(probe)
    np.testing.assert_allclose(dM, result.shear(probe), rtol=0, atol=1e-9 * 100)
    dv = result.deflection_pp.derivative()(probe)
    np.testing.assert_allclose(dv, result.rotation(probe), rtol=0,
                               atol=1e-9 * np.abs(result.rotation(probe)).max())
    EI = np.array([next(s.EI0 for s in beam.stiffness_segments if s.x0 <= x <= s.x1)
                   for x in probe])
    curvature = result.rotation_pp.derivative()(probe)
    np.testing.assert_allclose(curvature, -result.moment(probe) / EI, rtol=0,
                               atol=1e-9 * np.abs(result.moment(probe) / EI).max())
    for ld in points:
        jump = result.shear(ld.x, side="right") - result.shear(ld.x, side="left")
        assert jump[0] == pytest.approx(-ld.P, abs=1e-9 * 100)
    for i, x in enumerate(beam.support_positions[1:-1], start=1):
        jump = result.shear(x, side="right") - result.shear(x, side="left")
        assert jump[0] == pytest.approx(result.reactions[i], abs=1e-9 * 100)


@pytest.mark.parametrize("seed", range(6))
def test_uniform_load_equals_line_area(seed: int) -> None:
    """A uniform load w over a stretch gives w·∫IL over it (integrated here by adaptive
    quadrature with the line's knots as breakpoints)."""
    rng = np.random.default_rng(500 + seed)
    beam = random_beam(rng)
    w = 12.5
    a, b = np.sort(spread_points(rng, beam, 2))
    result = beam.static([DistributedLoad(float(a), float(b), w)])
    held = [i for i, s in enumerate(beam.supports) if s != "free"]
    for i in held:
        line = beam.influence("reaction", support=i)
        knots = line.knots[(line.knots > a) & (line.knots < b)]
        area, _ = quad(line, a, b, points=knots if knots.size else None, limit=200,
                       epsabs=1e-13)
        assert result.reactions[i] == pytest.approx(w * area, abs=1e-9 * w * beam.length)
        assert w * line.integrate(a, b) == pytest.approx(w * area, abs=1e-9 * w * beam.length)
    x = float(spread_points(rng, beam, 1, avoid=[a, b])[0])
    line = beam.influence("moment", at=x)
    assert result.moment(x)[0] == pytest.approx(w * line.integrate(a, b),
                                                abs=1e-9 * w * beam.length**2)


def test_point_couple_on_a_simple_span() -> None:
    """Clockwise couple M at c on a simple span L: R0 = −M/L, R1 = M/L; the moment jumps by
    +M at c, from −M·c/L to M·(1 − c/L). Source: common practice, no source (statics)."""
    L, c, M = 8.0, 3.0, 12.0
    result = trundle.Beam(spans=[L]).static([PointMoment(c, M)])
    assert result.reactions == pytest.approx([-M / L, M / L], rel=1e-12)
    assert result.moment(c - 1e-9)[0] == pytest.approx(-M * c / L, rel=1e-6)
    assert result.moment(c + 1e-9)[0] == pytest.approx(M * (1 - c / L), rel=1e-6)
    assert result.shear(5.0)[0] == pytest.approx(-M / L, rel=1e-12)


def test_loads_add_linearly() -> None:
    """Superposition: the solve of two load sets together is the sum of the two solves."""
    beam = trundle.Beam(spans=[9.0, 11.0, 7.0], supports=["fixed", "pin",
                                                          trundle.Spring(300.0), "pin"],
                        hinges=[14.0], EI=[(0.0, 12.0, 900.0), (12.0, 27.0, 1500.0)])
    first = [PointLoad(4.0, 40.0), DistributedLoad(2.0, 15.0, 3.0, 7.0)]
    second = [PointMoment(20.0, -25.0), DistributedLoad(0.0, 27.0, 1.5)]
    both = beam.static(first + second)
    one, two = beam.static(first), beam.static(second)
    x = np.linspace(0.0, 27.0, 41)
    np.testing.assert_allclose(both.reactions, one.reactions + two.reactions, atol=1e-9)
    np.testing.assert_allclose(both.moment(x), one.moment(x) + two.moment(x), atol=1e-8)
    np.testing.assert_allclose(both.deflection(x), one.deflection(x) + two.deflection(x),
                               atol=1e-11)


def test_triangular_load_on_a_simple_span() -> None:
    """Load rising linearly from 0 to w over a simple span L: R0 = wL/6, R1 = wL/3,
    M_max = wL²/(9√3) at x = L/√3. Source: beam-formula tables of steel design manuals
    ("simple beam – load increasing uniformly to one end"), from memory."""
    L, w = 9.0, 6.0
    result = trundle.Beam(spans=[L], EI=2.0e3).static([DistributedLoad(0.0, L, 0.0, w)])
    assert result.reactions == pytest.approx([w * L / 6, w * L / 3], rel=1e-12)
    assert result.moment(L / np.sqrt(3))[0] == pytest.approx(w * L**2 / (9 * np.sqrt(3)),
                                                             rel=1e-12)
    # deflection at mid-span 5wL⁴/(768 EI) for this load, from memory
    assert result.deflection(L / 2)[0] == pytest.approx(5 * w * L**4 / (768 * 2.0e3),
                                                        rel=1e-12)


@pytest.mark.parametrize(("loads", "pattern"), [
    ([PointLoad(12.0, 1.0)], r"load 0: x = 12 lies outside the beam"),
    ([PointLoad(2.0, 1.0), DistributedLoad(5.0, 3.0, 1.0)], r"load 1: expected 0 <= x0 < x1"),
    ([DistributedLoad(-1.0, 3.0, 1.0)], r"load 0: expected 0 <= x0 < x1"),
    (["a wheel"], r"load 0: expected PointLoad, PointMoment or DistributedLoad"),
])
def test_bad_loads(loads: list, pattern: str) -> None:
    with pytest.raises(trundle.ModelError, match=pattern):
        trundle.Beam(spans=[10.0]).static(loads)


@pytest.mark.parametrize("gap", [1e-3, 1e-4, 1e-6])
def test_load_close_to_a_free_end(gap: float) -> None:
    """Cantilever L = 10, EI = 1: the tip deflection under a unit load at ξ is
    ξ²(3L − ξ)/(6EI). Source: beam-formula tables of steel design manuals ("cantilever beam –
    concentrated load at any point"), from memory. A wheel 1 mm or 0.1 mm from the tip is
    an ordinary position for a moving load. (Regression: when every load point was a mesh
    node, the tiny element next to the free end gave wrong numbers or a false "singular"
    ModelError.)"""
    L = 10.0
    xi = L - gap
    beam = trundle.Beam(spans=[L], supports=["fixed", "free"])
    result = beam.static([PointLoad(xi, 1.0)])
    assert result.deflection(L)[0] == pytest.approx(xi**2 * (3 * L - xi) / 6.0, rel=1e-9)
    assert result.moment(L / 2)[0] == pytest.approx(-(xi - L / 2), rel=1e-9)
    assert result.support_moments[0] == pytest.approx(xi, rel=1e-9)


def test_moment_faces_at_the_ends_of_a_fixed_fixed_beam() -> None:
    """Without side= the end moment is read inside the beam (−wL²/12 at both fixed ends,
    from memory, beam-formula tables cited in tests/validation); with side= the face outside
    the beam carries nothing, as for shear."""
    L, w = 10.0, 3.0
    beam = trundle.Beam(spans=[L], supports=["fixed", "fixed"])
    result = beam.static([DistributedLoad(0.0, L, w)])
    assert result.moment(np.array([0.0, L])) == pytest.approx([-w * L**2 / 12] * 2, rel=1e-12)
    assert result.moment(L, side="left")[0] == pytest.approx(-w * L**2 / 12, rel=1e-12)
    assert result.moment(0.0, side="right")[0] == pytest.approx(-w * L**2 / 12, rel=1e-12)
    assert result.moment(np.array([0.0, L]), side="left")[0] == 0.0
    assert result.moment(L, side="right")[0] == 0.0
    xi = np.linspace(0.0, L, 11)
    assert w * beam.influence("moment", at=L).integrate(0.0, L) == pytest.approx(
        -w * L**2 / 12, rel=1e-12)
    assert beam.influence("moment", at=L, side="right")(xi) == pytest.approx(0.0, abs=0.0)
    assert beam.influence("moment", at=0.0, side="left")(xi) == pytest.approx(0.0, abs=0.0)
