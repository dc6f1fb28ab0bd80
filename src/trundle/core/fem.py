"""Euler–Bernoulli stiffness: mesh, element matrices, assembly, one factorisation.

Degrees of freedom per node: deflection v (downward positive) and rotation θ = dv/dx
(clockwise positive). A hinge node carries two rotations, one for each side.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np
import scipy.linalg as sla
import scipy.sparse as sp
from numpy.typing import NDArray

from trundle.core.beam import Beam, ModelError, Spring


@dataclass(frozen=True, eq=False)
class Mesh:
    """Nodes and elements of a beam, with every requested point a node.

    Fields
    ------
    x : (n_nodes,) node positions [length]
    element_dofs : (n_elements, 4) global dofs (v1, θ1, v2, θ2) of each element
    element_EI : (n_elements,) flexural stiffness of each element
    v_dof, theta_left_dof, theta_right_dof : (n_nodes,) dof numbers at each node
    constrained : (n_dof,) True where a rigid support holds the dof
    spring : (n_dof,) spring stiffness added on the diagonal
    support_nodes : (n_supports,) node index of each support
    """

    x: NDArray[np.float64]
    element_dofs: NDArray[np.int64]
    element_EI: NDArray[np.float64]
    v_dof: NDArray[np.int64]
    theta_left_dof: NDArray[np.int64]
    theta_right_dof: NDArray[np.int64]
    constrained: NDArray[np.bool_]
    spring: NDArray[np.float64]
    support_nodes: NDArray[np.int64]

    @property
    def n_dof(self) -> int:
        return len(self.constrained)

    @property
    def lengths(self) -> NDArray[np.float64]:
        return np.diff(self.x)



def element_stiffness(EI: NDArray[np.float64], h: NDArray[np.float64]) -> NDArray[np.float64]:
    """(n, 4, 4) stiffness matrices for dofs (v1, θ1, v2, θ2)."""
    k = np.empty((len(h), 4, 4))
    c = EI / h**3
    k[:, 0] = np.stack([12 * c, 6 * h * c, -12 * c, 6 * h * c], axis=1)
    k[:, 1] = np.stack([6 * h * c, 4 * h * h * c, -6 * h * c, 2 * h * h * c], axis=1)
    k[:, 2] = -k[:, 0]
    k[:, 3] = np.stack([6 * h * c, 2 * h * h * c, -6 * h * c, 4 * h * h * c], axis=1)
    return k


def _merge_points(points: NDArray[np.float64], tol: float) -> NDArray[np.float64]:
    points = np.sort(points)
    keep = np.concatenate([[True], np.diff(points) > tol])
    return points[keep]


def build_mesh(beam: Beam, extra_points: tuple[float, ...] = ()) -> Mesh:
    length = beam.length
    tol = 1e-9 * length
    extra = np.asarray(extra_points, dtype=float)
    if extra.size and (extra.min() < -tol or extra.max() > length + tol):
        bad = extra[(extra < -tol) | (extra > length + tol)][0]
        raise ModelError(f"x = {bad:g} lies outside the beam (0 .. {length:g})")
    fixed_points = [beam.support_positions, np.asarray(beam.hinges, dtype=float)]
    for seg in beam.stiffness_segments:
        n = beam.haunch_divisions if seg.varies else 1
        fixed_points.append(np.linspace(seg.x0, seg.x1, n + 1))
    base = _merge_points(np.concatenate(fixed_points), tol)
    # snap requested points onto existing nodes so a section at a support is that support
    if extra.size:
        nearest = np.abs(extra[:, None] - base[None, :]).min(axis=1)
        extra = np.clip(extra[nearest > tol], 0.0, length)
    x = _merge_points(np.concatenate([base, extra]), tol)
    x[0], x[-1] = 0.0, length
    n_nodes = len(x)
    hinge_nodes = {int(np.argmin(np.abs(x - h))) for h in beam.hinges}

    v_dof = np.empty(n_nodes, dtype=np.int64)
    th_l = np.empty(n_nodes, dtype=np.int64)
    th_r = np.empty(n_nodes, dtype=np.int64)
    d = 0
    for i in range(n_nodes):
        v_dof[i] = d
        th_l[i] = d + 1
        th_r[i] = d + 2 if i in hinge_nodes else d + 1
        d = th_r[i] + 1
    n_dof = d
    element_dofs = np.stack([v_dof[:-1], th_r[:-1], v_dof[1:], th_l[1:]], axis=1)

    mids = 0.5 * (x[:-1] + x[1:])
    element_EI = np.empty(n_nodes - 1)
    for seg in beam.stiffness_segments:
        inside = (mids >= seg.x0 - tol) & (mids <= seg.x1 + tol)
        element_EI[inside] = seg.at(mids[inside])

    constrained = np.zeros(n_dof, dtype=bool)
    spring = np.zeros(n_dof)
    support_nodes = np.array([int(np.argmin(np.abs(x - xs))) for xs in beam.support_positions])
    for s, node in zip(beam.supports, support_nodes, strict=True):
        if s == "pin":
            constrained[v_dof[node]] = True
        elif s == "fixed":
            constrained[[v_dof[node], th_l[node], th_r[node]]] = True
        elif isinstance(s, Spring):
            spring[v_dof[node]] += s.k
            if s.kr is not None:
                spring[th_r[node]] += s.kr
    return Mesh(x, element_dofs, element_EI, v_dof, th_l, th_r, constrained, spring,
                support_nodes)


@dataclass(frozen=True, eq=False)
class Assembly:
    """The assembled stiffness and its banded Cholesky factor over the free dofs.

    Dofs are numbered node by node, so K_ff is banded (half-bandwidth ≤ 4, hinges included)
    and one factorisation serves any number of right-hand sides at banded cost.
    """

    mesh: Mesh
    K: sp.csr_matrix  # full matrix, springs included
    free: NDArray[np.int64]
    factor: NDArray[np.float64]  # upper banded Cholesky factor of K_ff

    def solve(self, rhs_free: NDArray[np.float64]) -> NDArray[np.float64]:
        """Solve K_ff u = rhs for one or many right-hand sides (columns)."""
        return sla.cho_solve_banded((self.factor, False), rhs_free, check_finite=False)

    def expand(self, u_free: NDArray[np.float64]) -> NDArray[np.float64]:
        full = np.zeros((self.mesh.n_dof, *u_free.shape[1:]))
        full[self.free] = u_free
        return full


def _upper_band(matrix: sp.csr_matrix) -> NDArray[np.float64]:
    coo = matrix.tocoo()
    upper = coo.col >= coo.row
    rows, cols, vals = coo.row[upper], coo.col[upper], coo.data[upper]
    bandwidth = int((cols - rows).max()) if vals.size else 0
    band = np.zeros((bandwidth + 1, matrix.shape[0]))
    np.add.at(band, (bandwidth + rows - cols, cols), vals)
    return band


def assemble(mesh: Mesh) -> Assembly:
    k = element_stiffness(mesh.element_EI, mesh.lengths)
    rows = np.repeat(mesh.element_dofs, 4, axis=1).ravel()
    cols = np.tile(mesh.element_dofs, (1, 4)).ravel()
    K = sp.coo_matrix((k.ravel(), (rows, cols)), shape=(mesh.n_dof, mesh.n_dof)).tocsr()
    K = (K + sp.diags(mesh.spring)).tocsr()
    free = np.flatnonzero(~mesh.constrained)
    band = _upper_band(K[free][:, free])
    try:
        factor = sla.cholesky_banded(band, lower=False, check_finite=False)
    except np.linalg.LinAlgError:
        raise ModelError("unstable model: the stiffness matrix is singular") from None
    # a pivot that lost (almost) all of its row's diagonal means a mechanism the rigid-body
    # check missed; compare row by row, since element sizes may differ by orders of magnitude
    if band.size and (factor[-1] ** 2 <= 1e-13 * band[-1]).any():
        raise ModelError("unstable model: the stiffness matrix is singular")
    return Assembly(mesh, K, free, factor)


@lru_cache(maxsize=32)
def _cached_assembly(beam: Beam, points: tuple[float, ...]) -> Assembly:
    return assemble(build_mesh(beam, points))


def assembly_for(beam: Beam, points: NDArray[np.float64] | tuple[float, ...] = ()) -> Assembly:
    """Mesh, assemble and factorise once for a beam and a set of points that must be nodes."""
    key = tuple(np.unique(np.round(np.asarray(points, dtype=float), 12)).tolist())
    return _cached_assembly(beam, key)


def hermite_coefficients(values: NDArray[np.float64], h: NDArray[np.float64]
                         ) -> NDArray[np.float64]:
    """PPoly coefficients (4, m, …) of the Hermite cubics with end values (v1, θ1, v2, θ2).

    ``values`` has shape (m, 4, …); ``h`` (m,) element lengths. Highest power first.
    """
    v1, t1, v2, t2 = (values[:, i] for i in range(4))
    hh = h.reshape((-1,) + (1,) * (v1.ndim - 1))
    out = np.empty((4, *v1.shape))
    dv = v2 - v1
    out[1] = (3 * dv / hh - 2 * t1 - t2) / hh
    out[0] = (t1 + t2 - 2 * dv / hh) / hh**2
    out[2] = t1
    out[3] = v1
    return out
