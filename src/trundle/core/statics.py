"""Fixed loads on the beam: reactions and exact shear, moment and deflection diagrams.

Every load end is made a node, so inside each element the distributed load is linear and the
diagrams are polynomials found by integrating equilibrium from the element's left end forces
(V' = −w, M' = V, v'' = −M/EI with v downward).
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.interpolate import PPoly

from trundle.core.beam import Beam, ModelError, Spring
from trundle.core.fem import (
    assembly_for,
    integrals_of_flexibility,
    interior_values,
    line_nodes,
)
from trundle.core.influence import _eval_sided


@dataclass(frozen=True)
class PointLoad:
    """A concentrated force P [force], downward positive, at x [length]."""

    x: float
    P: float


@dataclass(frozen=True)
class PointMoment:
    """A concentrated couple M [force·length], clockwise positive, at x [length]."""

    x: float
    M: float


@dataclass(frozen=True)
class DistributedLoad:
    """A distributed load from x0 to x1 [length], downward positive, varying linearly from
    w0 to w1 [force/length] (w1 defaults to w0: uniform)."""

    x0: float
    x1: float
    w0: float
    w1: float | None = None

    @property
    def w_end(self) -> float:
        return self.w0 if self.w1 is None else self.w1

    def at(self, x: NDArray[np.float64]) -> NDArray[np.float64]:
        t = (x - self.x0) / (self.x1 - self.x0)
        inside = (x >= self.x0) & (x <= self.x1)
        return np.where(inside, self.w0 + (self.w_end - self.w0) * t, 0.0)


Load = PointLoad | PointMoment | DistributedLoad


@dataclass(frozen=True, eq=False)
class StaticResult:
    """Reactions and diagrams of one fixed load case.

    Fields
    ------
    reactions : (n_supports,) upward force at each support [force] (0 at a free end)
    support_moments : (n_supports,) couple each support applies to the beam, counter-clockwise
        positive [force·length] (0 where rotation is free)
    shear_pp, moment_pp, deflection_pp, rotation_pp : PPoly diagrams over the beam
    """

    beam: Beam
    reactions: NDArray[np.float64]
    support_moments: NDArray[np.float64]
    shear_pp: PPoly
    moment_pp: PPoly
    deflection_pp: PPoly
    rotation_pp: PPoly

    def shear(self, x: ArrayLike, side: str = "right") -> NDArray[np.float64]:
        """V(x): resultant upward force of everything left of the section; 0 beyond the ends."""
        x = np.atleast_1d(np.asarray(x, dtype=float))
        values = _eval_sided(self.shear_pp, x, side)
        tol = 1e-12 * self.beam.length
        outside = (x < -tol) | (x > self.beam.length + tol)
        outside |= (x <= tol) & (side == "left")
        outside |= (x >= self.beam.length - tol) & (side == "right")
        return np.where(outside, 0.0, values)

    def moment(self, x: ArrayLike, side: str | None = None) -> NDArray[np.float64]:
        """Sagging moment. ``side`` picks the face where a support's couple makes it jump
        (0 beyond the ends, as for shear); without it the moment is read just right of x,
        just left at the right end."""
        if side is None:
            return _eval_sided(self.moment_pp, x, "right")
        x = np.atleast_1d(np.asarray(x, dtype=float))
        values = _eval_sided(self.moment_pp, x, side)
        tol = 1e-12 * self.beam.length
        outside = (x < -tol) | (x > self.beam.length + tol)
        outside |= (x <= tol) & (side == "left")
        outside |= (x >= self.beam.length - tol) & (side == "right")
        return np.where(outside, 0.0, values)

    def deflection(self, x: ArrayLike) -> NDArray[np.float64]:
        return _eval_sided(self.deflection_pp, x, "right")

    def rotation(self, x: ArrayLike, side: str = "right") -> NDArray[np.float64]:
        return _eval_sided(self.rotation_pp, x, side)


def _check_loads(beam: Beam, loads: Iterable[Load]) -> list[Load]:
    out = []
    L = beam.length
    tol = 1e-9 * L
    for i, load in enumerate(loads):
        if isinstance(load, PointLoad | PointMoment):
            if not (-tol <= load.x <= L + tol):
                raise ModelError(f"load {i}: x = {load.x:g} lies outside the beam (0 .. {L:g})")
        elif isinstance(load, DistributedLoad):
            if not (-tol <= load.x0 < load.x1 <= L + tol):
                raise ModelError(f"load {i}: expected 0 <= x0 < x1 <= {L:g}, "
                                 f"found {load.x0:g} .. {load.x1:g}")
        else:
            raise ModelError(f"load {i}: expected PointLoad, PointMoment or DistributedLoad, "
                             f"found {load!r}")
        out.append(load)
    return out


def _shape(s: NDArray[np.float64], h: float) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Hermite shape functions N (…, 4) and their slopes dN/ds at s in an element of length h."""
    t = np.asarray(s, dtype=float) / h
    n = np.stack([1 - 3 * t**2 + 2 * t**3, h * (t - 2 * t**2 + t**3), 3 * t**2 - 2 * t**3,
                  h * (t**3 - t**2)], axis=-1)
    dn = np.stack([(6 * t**2 - 6 * t) / h, 1 - 4 * t + 3 * t**2, (6 * t - 6 * t**2) / h,
                   3 * t**2 - 2 * t], axis=-1)
    return n, dn


_GAUSS_T, _GAUSS_W = np.polynomial.legendre.leggauss(3)  # exact for the quartic N·w
# inside a haunch N is not a polynomial; its pieces are short (the lines' nodes) and N is
# smooth there, so 12 points reach rounding
_GAUSS_T_VARYING, _GAUSS_W_VARYING = np.polynomial.legendre.leggauss(12)
_MOMENT_POWERS = tuple((k, q) for k in range(4) for q in (0, 1))


def _varying_piece(segment, xa: float, xb: float, moment: NDArray[np.float64], v: float,
                   theta: float) -> tuple[NDArray[np.float64], float, float]:
    """Deflection over a piece [xa, xb] of a haunch as a quintic, and its end values.

    ``moment``: the cubic M(τ) on the piece (highest power first), v and θ at its start. With
    v'' = −M/EI: θ(end) = θ − ∫M/EI, v(end) = v + θ·hp − ∫(hp − τ)M/EI, integrated to
    rounding (``fem.integrals_of_flexibility``); the quintic takes the exact v, θ and
    v'' = −M/EI at both ends (Hermite, error ~ hp⁶)."""
    hp = xb - xa
    I = integrals_of_flexibility(segment, np.array([xa]), np.array([xb]), _MOMENT_POWERS)[0]
    powers = moment[::-1]  # M = Σ powers[k] τ^k
    theta_end = theta - sum(powers[k] * I[2 * k] for k in range(4))
    v_end = v + theta * hp - sum(powers[k] * I[2 * k + 1] for k in range(4))
    curv_start = -powers[0] / float(segment.at(np.array(xa)))
    curv_end = -np.polyval(moment, hp) / float(segment.at(np.array(xb)))
    # v(τ) = v + θτ + κ0 τ²/2 + c3 τ³ + c4 τ⁴ + c5 τ⁵ meeting v, θ, κ at the end
    A = np.array([[hp**3, hp**4, hp**5], [3 * hp**2, 4 * hp**3, 5 * hp**4],
                  [6 * hp, 12 * hp**2, 20 * hp**3]])
    rhs = np.array([v_end - v - theta * hp - 0.5 * curv_start * hp**2,
                    theta_end - theta - curv_start * hp, curv_end - curv_start])
    c3, c4, c5 = np.linalg.solve(A, rhs)
    return np.array([c5, c4, c3, 0.5 * curv_start, theta, v]), float(v_end), float(theta_end)


def solve_static(beam: Beam, loads: Iterable[Load]) -> StaticResult:
    """Reactions and exact diagrams for fixed loads.

    The structure is solved on its own nodes (one cached factorisation); loads inside an
    element enter as their consistent nodal loads, which makes the nodal values exact for
    Euler-Bernoulli elements. The diagrams are then integrated piece by piece from each
    element's left-end forces (V' = −w, M' = V, v'' = −M/EI), with every load end a knot.
    """
    loads = _check_loads(beam, loads)
    length = beam.length
    tol = 1e-9 * length
    asm = assembly_for(beam, ())
    mesh = asm.mesh
    xc = mesh.x
    h = mesh.lengths
    n_el = len(h)
    varying = np.array([seg.varies for seg in beam.stiffness_segments])[mesh.element_segment]
    # inside a haunch (one exact element) the deflection is not a polynomial: it is kept as
    # quintic pieces between the nodes its influence lines break at
    points = [line_nodes(beam, mesh) if varying.any() else xc]
    for load in loads:
        points.append([load.x0, load.x1] if isinstance(load, DistributedLoad) else [load.x])
    knots = np.unique(np.clip(np.concatenate(points), 0.0, length))
    knots = knots[np.concatenate([[True], np.diff(knots) > tol])]
    knots[-1] = length
    # snap each knot onto a structural node it nearly touches
    nearest = np.abs(knots[:, None] - xc[None, :]).argmin(axis=1)
    on_node = np.abs(knots - xc[nearest]) <= tol
    knots[on_node] = xc[nearest[on_node]]
    piece_element = np.clip(np.searchsorted(xc, 0.5 * (knots[:-1] + knots[1:])) - 1, 0,
                            n_el - 1)
    n_pieces = len(knots) - 1
    wa = np.zeros(n_pieces)
    wb = np.zeros(n_pieces)
    force_at = np.zeros(len(knots))
    couple_at = np.zeros(len(knots))
    for load in loads:
        if isinstance(load, DistributedLoad):
            inside = (knots[:-1] >= load.x0 - tol) & (knots[1:] <= load.x1 + tol)
            wa[inside] += load.at(np.clip(knots[:-1][inside], load.x0, load.x1))
            wb[inside] += load.at(np.clip(knots[1:][inside], load.x0, load.x1))
        else:
            k = int(np.abs(knots - load.x).argmin())
            if isinstance(load, PointLoad):
                force_at[k] += load.P
            else:
                couple_at[k] += load.M
    # consistent nodal loads
    q = np.zeros((n_el, 4))
    F = np.zeros(mesh.n_dof)

    def shapes(e: int, s: NDArray[np.float64]) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """Shape functions of element e at s (its deflected shapes under unit end values,
        exact for varying EI too: by reciprocity they are its fixed-end forces)."""
        if not varying[e]:
            return _shape(s, h[e])
        m = len(s)
        v, theta = interior_values(beam, np.full(m, mesh.element_segment[e]), np.full(m, xc[e]),
                                   np.full(m, xc[e + 1]), np.broadcast_to(np.eye(4), (m, 4, 4)),
                                   np.broadcast_to(mesh.element_k[e], (m, 4, 4)), xc[e] + s)
        return v, theta

    for p in range(n_pieces):
        if wa[p] == 0.0 and wb[p] == 0.0:
            continue
        e = piece_element[p]
        a, b = knots[p] - xc[e], knots[p + 1] - xc[e]
        t, weights = (_GAUSS_T_VARYING, _GAUSS_W_VARYING) if varying[e] else (_GAUSS_T, _GAUSS_W)
        s = 0.5 * (a + b) + 0.5 * (b - a) * t
        w = wa[p] + (wb[p] - wa[p]) * (s - a) / (b - a)
        n, _ = shapes(e, s)
        q[e] += 0.5 * (b - a) * (weights * w) @ n
    interior = ~np.isin(knots, xc)
    for k in np.flatnonzero((force_at != 0.0) | (couple_at != 0.0)):
        if interior[k]:
            e = int(np.searchsorted(xc, knots[k], side="right")) - 1
            n, dn = shapes(e, np.array([knots[k] - xc[e]]))
            q[e] += force_at[k] * n[0] + couple_at[k] * dn[0]
        else:
            node = int(np.abs(xc - knots[k]).argmin())
            F[mesh.v_dof[node]] += force_at[k]
            F[mesh.theta_right_dof[node]] += couple_at[k]
    np.add.at(F, mesh.element_dofs, q)
    u = asm.expand(asm.solve(F[asm.free])) if asm.free.size else np.zeros(mesh.n_dof)
    R_dof = asm.K @ u - F  # force each restraint applies to the nodes, in dof directions
    reactions = np.zeros(len(beam.supports))
    couples = np.zeros(len(beam.supports))
    for i, (sup, node) in enumerate(zip(beam.supports, mesh.support_nodes, strict=True)):
        v, th = mesh.v_dof[node], mesh.theta_right_dof[node]
        if isinstance(sup, Spring):
            reactions[i] = sup.k * u[v]
            couples[i] = 0.0 if sup.kr is None else sup.kr * u[th]
        elif sup != "free":
            reactions[i] = -R_dof[v]
            if sup == "fixed":
                couples[i] = -R_dof[th]

    k_el = mesh.element_k
    ue = u[mesh.element_dofs]
    Q = np.einsum("eij,ej->ei", k_el, ue) - q
    shear_c = np.zeros((6, n_pieces))
    moment_c = np.zeros((6, n_pieces))
    rot_c = np.zeros((6, n_pieces))
    defl_c = np.zeros((6, n_pieces))
    V = M = v = theta = 0.0
    for p in range(n_pieces):
        e = piece_element[p]
        if knots[p] == xc[e]:  # a new element: start from its own end forces and end values
            V, M, v, theta = -Q[e, 0], Q[e, 1], ue[e, 0], ue[e, 1]
        else:  # a load point inside the element: the diagrams jump
            V -= force_at[p]
            M += couple_at[p]
        hp = knots[p + 1] - knots[p]
        a, dw = wa[p], wb[p] - wa[p]
        EI = mesh.element_EI[e]
        # polynomials in the piece's local t, highest power first
        shear_c[3:, p] = [-dw / (2 * hp), -a, V]
        moment_c[2:, p] = [-dw / (6 * hp), -a / 2, V, M]
        if varying[e]:
            V_end, M_end = np.polyval(shear_c[:, p], hp), np.polyval(moment_c[:, p], hp)
            defl_c[:, p], v, theta = _varying_piece(beam.stiffness_segments[
                mesh.element_segment[e]], knots[p], knots[p + 1], moment_c[2:, p], v, theta)
            rot_c[1:, p] = np.polyder(defl_c[:, p])
            V, M = V_end, M_end
            continue
        rot_c[1:, p] = [dw / (24 * hp * EI), a / (6 * EI), -V / (2 * EI), -M / EI, theta]
        defl_c[:, p] = [dw / (120 * hp * EI), a / (24 * EI), -V / (6 * EI), -M / (2 * EI),
                        theta, v]
        V, M = np.polyval(shear_c[:, p], hp), np.polyval(moment_c[:, p], hp)
        v, theta = np.polyval(defl_c[:, p], hp), np.polyval(rot_c[:, p], hp)
    return StaticResult(beam, reactions, couples,
                        PPoly.construct_fast(shear_c, knots),
                        PPoly.construct_fast(moment_c, knots),
                        PPoly.construct_fast(defl_c, knots),
                        PPoly.construct_fast(rot_c, knots))
