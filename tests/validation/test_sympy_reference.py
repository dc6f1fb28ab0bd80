"""Indeterminate beams solved symbolically with sympy, as a second independent reference.

Source: the Euler–Bernoulli differential equation EI v'''' = 0 between load points, integrated
exactly by sympy (general cubic per segment) with the boundary, continuity, hinge, support and
jump conditions written out below, solved as one linear system in exact rationals or with the
load position as a symbol. No stiffness matrix is involved.

Conventions (trundle's): v downward, θ = v' clockwise, M = −EI v'' sagging, V = M' the upward
resultant left of a section; a support's reaction R (upward) raises V by R, its couple C
(counter-clockwise) lowers M by C; a downward load P lowers V by P.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pytest
import sympy as sp

import trundle

x = sp.Symbol("x")
REL = 1e-12


@dataclass
class Point:
    at: sp.Expr
    support: str | tuple = "none"  # "pin" | "fixed" | "free" | "none" | ("spring", k, kr)
    hinge: bool = False
    load: sp.Expr = sp.Integer(0)


@dataclass
class OdeBeam:
    """A beam as points (left to right) and the EI of each segment between them."""

    points: list[Point]
    EI: list[sp.Expr]
    coeffs: list[list[sp.Symbol]] = field(default_factory=list)

    def solve(self) -> dict:
        n = len(self.EI)
        c = [sp.symbols(f"c{i}_0:4") for i in range(n)]
        v = [c[i][0] + c[i][1] * x + c[i][2] * x**2 + c[i][3] * x**3 for i in range(n)]
        reactions, couples, eqs = {}, {}, []

        def th(i):
            return sp.diff(v[i], x)

        def M(i):
            return -self.EI[i] * sp.diff(v[i], x, 2)

        def V(i):
            return sp.diff(M(i), x)

        for j, p in enumerate(self.points):
            left, right = (j - 1 if j > 0 else None), (j if j < n else None)
            at = {x: p.at}
            kind = p.support[0] if isinstance(p.support, tuple) else p.support
            R = sp.Symbol(f"R{j}") if kind in ("pin", "fixed", "spring") else sp.Integer(0)
            holds_turn = kind == "fixed" or (kind == "spring" and p.support[2] is not None)
            C = sp.Symbol(f"C{j}") if holds_turn else sp.Integer(0)
            if R != 0:
                reactions[j] = R
            if C != 0:
                couples[j] = C
            V_left = V(left).subs(at) if left is not None else 0
            V_right = V(right).subs(at) if right is not None else 0
            M_left = M(left).subs(at) if left is not None else 0
            M_right = M(right).subs(at) if right is not None else 0
            eqs.append(sp.Eq(V_right - V_left, R - p.load))
            eqs.append(sp.Eq(M_right - M_left, -C))
            if left is not None and right is not None:
                eqs.append(sp.Eq(v[left].subs(at), v[right].subs(at)))
                if p.hinge:
                    eqs.append(sp.Eq(M_left, 0))
                else:
                    eqs.append(sp.Eq(th(left).subs(at), th(right).subs(at)))
            seg = right if right is not None else left
            if kind in ("pin", "fixed"):
                eqs.append(sp.Eq(v[seg].subs(at), 0))
            if kind == "fixed":
                eqs.append(sp.Eq(th(seg).subs(at), 0))
            if kind == "spring":
                _, k, kr = p.support
                eqs.append(sp.Eq(R, k * v[seg].subs(at)))  # a compressed spring pushes up
                if kr is not None:
                    eqs.append(sp.Eq(C, kr * th(seg).subs(at)))
        unknowns = [s for ci in c for s in ci] + list(reactions.values()) + list(couples.values())
        (solution,) = sp.linsolve(eqs, unknowns)
        values = dict(zip(unknowns, solution, strict=True))
        shapes = [sp.cancel(vi.subs(values)) for vi in v]
        return {
            "reactions": {j: sp.cancel(values[R]) for j, R in reactions.items()},
            "couples": {j: sp.cancel(values[C]) for j, C in couples.items()},
            "v": shapes,
            "M": [sp.cancel(-self.EI[i] * sp.diff(shapes[i], x, 2)) for i in range(n)],
        }

    def segment_of(self, at: float) -> int:
        edges = [float(p.at) for p in self.points]
        return min(max(int(np.searchsorted(edges, at, side="right")) - 1, 0), len(self.EI) - 1)


# --- propped cantilever, fully symbolic -----------------------------------------------------


def test_propped_cantilever_symbolic() -> None:
    """Fixed at 0, pinned at L, unit load at ξ: the prop's line is ξ²(3L − ξ)/(2L³) and the
    wall's couple ξ(L − ξ)(2L − ξ)/(2L²), for any L and EI."""
    L, EI, xi = sp.symbols("L EI xi", positive=True)
    ode = OdeBeam([Point(0, "fixed"), Point(xi, load=sp.Integer(1)), Point(L, "pin")], [EI, EI])
    sol = ode.solve()
    assert sp.simplify(sol["reactions"][2] - xi**2 * (3 * L - xi) / (2 * L**3)) == 0
    assert sp.simplify(sol["couples"][0] - xi * (L - xi) * (2 * L - xi) / (2 * L**2)) == 0
    # and trundle's lines at load positions on one numeric beam
    Ln, EIn = 7.5, 2.5
    beam = trundle.Beam(spans=[Ln], EI=EIn, supports=["fixed", "pin"])
    positions = np.linspace(0.3, 7.2, 9)
    subs = {L: Ln, EI: EIn}
    prop = [float(sol["reactions"][2].subs({**subs, xi: p})) for p in positions]
    wall = [float(sol["couples"][0].subs({**subs, xi: p})) for p in positions]
    assert beam.influence("reaction", support=1)(positions) == pytest.approx(prop, rel=REL)
    assert beam.influence("support_moment", support=0)(positions) == pytest.approx(wall,
                                                                                   rel=REL)
    # deflection under the load, from the symbolic shape
    under = [float(sol["v"][0].subs({**subs, xi: p, x: p})) for p in positions]
    found = [beam.influence("deflection", at=float(p))(float(p)) for p in positions]
    assert found == pytest.approx(under, rel=REL)


# --- two unequal spans, load position as a symbol ---------------------------------------------


L1, L2, EI2 = sp.Rational(5), sp.Rational(8), sp.Rational(3)


def _two_span_solution(in_first: bool) -> dict:
    xi = sp.Symbol("xi", positive=True)
    load = Point(xi, load=sp.Integer(1))
    middle = Point(L1, "pin")
    points = ([Point(0, "pin"), load, middle, Point(L1 + L2, "pin")] if in_first
              else [Point(0, "pin"), middle, load, Point(L1 + L2, "pin")])
    return OdeBeam(points, [EI2] * 3).solve() | {"xi": xi}


@pytest.fixture(scope="module")
def two_span() -> dict:
    return {True: _two_span_solution(True), False: _two_span_solution(False)}


def test_two_unequal_spans(two_span: dict) -> None:
    beam = trundle.Beam(spans=[float(L1), float(L2)], EI=float(EI2))
    positions = np.concatenate([np.linspace(0.25, 4.75, 7), np.linspace(5.5, 12.5, 8)])
    sections = {"moment": [2.0, 9.0], "deflection": [2.5, 9.0]}
    for p in positions:
        sol = two_span[bool(p < float(L1))]
        at = {sol["xi"]: sp.Rational(p)}
        # the three reactions (points are numbered left to right in the ODE set-up)
        Rs = [float(r.subs(at)) for _, r in sorted(sol["reactions"].items())]
        for i, R in enumerate(Rs):
            assert beam.influence("reaction", support=i)(p) == pytest.approx(R, rel=REL,
                                                                             abs=1e-13)
        # section values from the solved shape, in the segment holding the section
        edges = sorted([0.0, float(L1), float(L1 + L2), float(p)])
        for kind, xs in sections.items():
            for s in xs:
                seg = min(int(np.searchsorted(edges, s, side="right")) - 1, 2)
                expr = sol["M" if kind == "moment" else "v"][seg]
                expected = float(expr.subs(at).subs(x, s))
                found = beam.influence(kind, at=s)(p)
                assert found == pytest.approx(expected, rel=REL, abs=1e-12), (kind, s, p)


def test_two_unequal_spans_closed_form_of_middle_reaction(two_span: dict) -> None:
    """For ξ in the first span the middle reaction is a cubic in ξ vanishing at ξ = 0 and
    equal to 1 at ξ = L1; the symbolic result must show exactly that."""
    sol = two_span[True]
    xi = sol["xi"]
    R1 = sp.expand(sol["reactions"][2])
    assert sp.degree(R1, xi) == 3
    assert R1.subs(xi, 0) == 0
    assert R1.subs(xi, L1) == 1


# --- stepped EI, hinge, springs and a fixed end: numeric load positions, exact rationals ---


def test_stepped_beam_with_hinge_and_springs() -> None:
    """Spans 6 + 4 + 5: fixed at 0, a spring (k, kr) at 6, a pin at 10, a spring k at 15;
    a hinge at 12; EI 2 up to x = 3, 5 beyond."""
    k1, kr1, k3 = sp.Rational(3, 2), sp.Rational(20), sp.Rational(4, 5)
    beam = trundle.Beam(spans=[6.0, 4.0, 5.0], EI=[(0.0, 3.0, 2.0), (3.0, 15.0, 5.0)],
                        supports=["fixed", trundle.Spring(1.5, 20.0), "pin",
                                  trundle.Spring(0.8)],
                        hinges=[12.0])
    assert beam.degree_of_indeterminacy == 3
    section = 8.0
    for p in (1.5, 4.0, 7.25, 11.0, 13.5):
        xi = sp.Rational(p)
        pts = {0: Point(0, "fixed"), 3: Point(3), 6: Point(6, ("spring", k1, kr1)),
               8: Point(8), 10: Point(10, "pin"), 12: Point(12, hinge=True),
               15: Point(15, ("spring", k3, None))}
        pts[float(p)] = Point(xi, load=sp.Integer(1))
        ordered = [pts[key] for key in sorted(pts)]
        EI = [sp.Integer(2) if float(a.at) < 3 else sp.Integer(5)
              for a in ordered[:-1]]
        ode = OdeBeam(ordered, EI)
        sol = ode.solve()
        index = {float(pt.at): j for j, pt in enumerate(ordered)}
        R = {i: float(sol["reactions"][index[xs]]) for i, xs in enumerate([0.0, 6.0, 10.0, 15.0])}
        C0 = float(sol["couples"][index[0.0]])
        C1 = float(sol["couples"][index[6.0]])
        for i in range(4):
            assert beam.influence("reaction", support=i)(p) == pytest.approx(R[i], rel=1e-11,
                                                                             abs=1e-13)
        assert beam.influence("support_moment", support=0)(p) == pytest.approx(C0, rel=1e-11)
        assert beam.influence("support_moment", support=1)(p) == pytest.approx(C1, rel=1e-11,
                                                                               abs=1e-13)
        seg = ode.segment_of(section)
        M_expected = float(sol["M"][seg].subs(x, section))
        v_expected = float(sol["v"][seg].subs(x, section))
        assert beam.influence("moment", at=section)(p) == pytest.approx(M_expected, rel=1e-11,
                                                                        abs=1e-12)
        assert beam.influence("deflection", at=section)(p) == pytest.approx(v_expected,
                                                                            rel=1e-11)
        # rotation either side of the hinge differs; both from the solved shape
        for side, seg_h in (("left", index[12.0] - 1), ("right", index[12.0])):
            turn = float(sp.diff(sol["v"][seg_h], x).subs(x, 12))
            assert beam.influence("rotation", at=12.0, side=side)(p) == pytest.approx(
                turn, rel=1e-11)
