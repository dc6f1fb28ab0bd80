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

from trundle.influence import _eval_sided
from trundle.model import Beam, ModelError, Spring
from trundle.stiffness import assembly_for, element_stiffness


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

    def moment(self, x: ArrayLike) -> NDArray[np.float64]:
        return _eval_sided(self.moment_pp, x, "right")

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


def solve_static(beam: Beam, loads: Iterable[Load]) -> StaticResult:
    loads = _check_loads(beam, loads)
    points = []
    for load in loads:
        points.extend([load.x0, load.x1] if isinstance(load, DistributedLoad) else [load.x])
    asm = assembly_for(beam, points)
    mesh = asm.mesh
    h = mesh.lengths
    n_el = len(h)
    # linear distributed load per element: w(s) = wa + (wb - wa) s / h
    wa = np.zeros(n_el)
    wb = np.zeros(n_el)
    F = np.zeros(mesh.n_dof)
    for load in loads:
        if isinstance(load, DistributedLoad):
            left = mesh.x[:-1]
            right = mesh.x[1:]
            tol = 1e-9 * beam.length
            inside = (left >= load.x0 - tol) & (right <= load.x1 + tol)
            wa[inside] += load.at(np.clip(left[inside], load.x0, load.x1))
            wb[inside] += load.at(np.clip(right[inside], load.x0, load.x1))
        elif isinstance(load, PointLoad):
            F[mesh.v_dof[mesh.node_at(load.x)]] += load.P
        else:
            F[mesh.theta_right_dof[mesh.node_at(load.x)]] += load.M
    # consistent nodal loads of linear loads (uniform part + triangular part)
    dw = wb - wa
    q = np.stack([wa * h / 2 + 3 * dw * h / 20, wa * h**2 / 12 + dw * h**2 / 30,
                  wa * h / 2 + 7 * dw * h / 20, -wa * h**2 / 12 - dw * h**2 / 20], axis=1)
    np.add.at(F, mesh.element_dofs, q)
    u = asm.expand(asm.solve(F[asm.free])) if asm.free.size else np.zeros(mesh.n_dof)
    R_dof = asm.K @ u - F  # force each restraint applies to the nodes, in dof directions
    reactions = np.zeros(len(beam.supports))
    couples = np.zeros(len(beam.supports))
    for i, (s, node) in enumerate(zip(beam.supports, mesh.support_nodes, strict=True)):
        v, th = mesh.v_dof[node], mesh.theta_right_dof[node]
        if isinstance(s, Spring):
            reactions[i] = s.k * u[v]
            couples[i] = 0.0 if s.kr is None else s.kr * u[th]
        elif s != "free":
            reactions[i] = -R_dof[v]
            if s == "fixed":
                couples[i] = -R_dof[th]

    k_el = element_stiffness(mesh.element_EI, h)
    ue = u[mesh.element_dofs]
    Q = np.einsum("eij,ej->ei", k_el, ue) - q
    V0 = -Q[:, 0]
    M0 = Q[:, 1]
    # polynomials in s, highest power first (degree 5 for deflection)
    shear_c = np.zeros((6, n_el))
    shear_c[3], shear_c[4], shear_c[5] = -dw / (2 * h), -wa, V0
    moment_c = np.zeros((6, n_el))
    moment_c[2], moment_c[3], moment_c[4], moment_c[5] = -dw / (6 * h), -wa / 2, V0, M0
    EI = mesh.element_EI
    # v'' = -M/EI: integrate twice; v(0) = v1, v'(0) = θ1
    rot_c = np.zeros((6, n_el))
    rot_c[1], rot_c[2], rot_c[3], rot_c[4] = (-moment_c[2] / 4 / EI, -moment_c[3] / 3 / EI,
                                               -moment_c[4] / 2 / EI, -moment_c[5] / EI)
    rot_c[5] = ue[:, 1]
    defl_c = np.zeros((6, n_el))
    defl_c[0:5] = rot_c[1:6] / np.arange(5, 0, -1)[:, None]
    defl_c[5] = ue[:, 0]
    knots = mesh.x
    return StaticResult(beam, reactions, couples,
                        PPoly.construct_fast(shear_c, knots),
                        PPoly.construct_fast(moment_c, knots),
                        PPoly.construct_fast(defl_c, knots),
                        PPoly.construct_fast(rot_c, knots))
