"""Euler–Bernoulli stiffness: mesh, element matrices, assembly, one factorisation.

Degrees of freedom per node: deflection v (downward positive) and rotation θ = dv/dx
(clockwise positive). A hinge node carries two rotations, one for each side.

Haunches (EI varying linearly or parabolically along a segment) use the exact stiffness of
a varying-EI Euler–Bernoulli element: the 2 × 2 flexibility of the simply supported element
under its end moments has the entries ∫(h − t)²/EI, ∫t(h − t)/EI and ∫t²/EI (t from the
element's left end); these are integrated by Gauss–Legendre quadrature on panels graded
towards the nearest zero of EI(x) (the pole of 1/EI), 24 points a panel, to rounding, and the
flexibility is inverted. Nodal deflections and rotations are then exact for loads at nodes.
Between nodes a line is kept as the Hermite cubic of its exact nodal values (the scan needs
cubic pieces); its error is at most h⁴/384 · max|(M/EI)''| in each element (the classical
bound of cubic Hermite interpolation), with M the line's own linear moment in that element.
A haunch is ONE element of the mesh (between supports, hinges and sections), so the
stiffness stays as well conditioned as a prismatic beam's; its lines break at the nodes of
``line_nodes``, where their exact values are recovered from the element's end values. Unless
``Beam.haunch_divisions`` fixes the count, those nodes are graded by an a priori estimate of
the bound (``HAUNCH_TOLERANCE``), and ``influence.line_pieces`` checks the bound on every line
it builds and splits the pieces that miss it (no new solve).
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache
from math import factorial

import numpy as np
import scipy.linalg as sla
import scipy.sparse as sp
from numpy.typing import NDArray

from trundle.core.beam import Beam, ModelError, Spring, StiffnessSegment

# what a haunch is analysed to: every influence line within this fraction of its largest
# ordinate (relative to the exact varying-stiffness beam)
HAUNCH_TOLERANCE = 1e-8
# the most elements one varying segment may be cut into when chosen automatically, and the
# most nodes the lines of a whole beam may break at (bounded memory: lines × pieces)
MAX_AUTO_DIVISIONS = 4000
MAX_LINE_NODES = 20_001


@dataclass(frozen=True, eq=False)
class Mesh:
    """Nodes and elements of a beam, with every requested point a node.

    Fields
    ------
    x : (n_nodes,) node positions [length]
    element_dofs : (n_elements, 4) global dofs (v1, θ1, v2, θ2) of each element
    element_EI : (n_elements,) flexural stiffness of each element (at its middle)
    element_segment : (n_elements,) index of the stiffness segment each element lies in
    element_k : (n_elements, 4, 4) exact stiffness of each element (varying EI included)
    element_g1, element_g2 : (n_elements,) bounds of |d(1/EI)/dx| and |d²(1/EI)/dx²| over
        each element (0 where EI is constant): what the Hermite error bound needs
    v_dof, theta_left_dof, theta_right_dof : (n_nodes,) dof numbers at each node
    constrained : (n_dof,) True where a rigid support holds the dof
    spring : (n_dof,) spring stiffness added on the diagonal
    support_nodes : (n_supports,) node index of each support
    """

    x: NDArray[np.float64]
    element_dofs: NDArray[np.int64]
    element_EI: NDArray[np.float64]
    element_segment: NDArray[np.int64]
    element_k: NDArray[np.float64]
    element_g1: NDArray[np.float64]
    element_g2: NDArray[np.float64]
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


_GAUSS_T, _GAUSS_W = np.polynomial.legendre.leggauss(24)
_MAX_GRADED_PANELS = 60  # 2^60 × the distance to the pole covers any interval


def integrals_of_flexibility(segment: StiffnessSegment, xa: NDArray[np.float64],
                             xb: NDArray[np.float64], powers: tuple[tuple[int, int], ...]
                             ) -> NDArray[np.float64]:
    """∫ (x − xa)^p (xb − x)^q / EI(x) dx over [xa, xb] for each (p, q) in ``powers``:
    shape (len(xa), len(powers)). Every interval lies inside ``segment``.

    1/EI is analytic except at the zeros of EI(x) (outside the segment, complex for a
    parabola). Each interval is cut into panels graded geometrically away from its point
    nearest that pole, each panel no longer than twice its distance from the pole, so the
    pole lies outside the Bernstein ellipse of parameter 2 + √3 of every panel and 24-point
    Gauss–Legendre converges to rounding (error ~ ρ^(−48)) however strong the haunch.
    """
    xa = np.atleast_1d(np.asarray(xa, dtype=float))
    xb = np.atleast_1d(np.asarray(xb, dtype=float))
    n = len(xa)
    poles = segment.zeros()
    if poles.size == 0 or n == 0:  # constant EI: ∫ t^p (h − t)^q dt = h^(p+q+1) p! q!/(p+q+1)!
        h = xb - xa
        out = np.empty((n, len(powers)))
        for j, (p, q) in enumerate(powers):
            beta = factorial(p) * factorial(q) / factorial(p + q + 1)
            out[:, j] = h ** (p + q + 1) * beta / segment.EI0
        return out
    pole = poles[0]  # a parabola's two zeros are conjugate: equally far from the real axis
    nearest = np.clip(pole.real, xa, xb)
    reach = np.abs(nearest - pole)  # > 0: EI has no zero on the segment
    farthest = np.maximum(xb - nearest, nearest - xa)
    needed = int(np.ceil(np.log2(farthest / reach + 1.0)).max()) if n else 0
    k = np.arange(min(max(needed, 0), _MAX_GRADED_PANELS) + 1)
    steps = reach[:, None] * (2.0 ** k[None, :] - 1.0)  # (n, K + 1)
    right = np.minimum(nearest[:, None] + steps, xb[:, None])
    left = np.maximum(nearest[:, None] - steps, xa[:, None])[:, ::-1]
    bounds = np.concatenate([left, right[:, 1:]], axis=1)  # (n, 2K + 1), non-decreasing
    used = (np.diff(bounds, axis=1) > 0).any(axis=0)
    lo, hi = bounds[:, :-1][:, used], bounds[:, 1:][:, used]  # (n, P)
    half = 0.5 * (hi - lo)
    x = 0.5 * (hi + lo)[..., None] + half[..., None] * _GAUSS_T  # (n, P, G)
    weight = half[..., None] * _GAUSS_W / segment.at(x)
    t = x - xa[:, None, None]
    r = xb[:, None, None] - x
    out = np.empty((n, len(powers)))
    for j, (p, q) in enumerate(powers):
        out[:, j] = np.sum(weight * t**p * r**q, axis=(1, 2))
    return out


def stiffness_from_flexibility(h: NDArray[np.float64], a: NDArray[np.float64],
                               b: NDArray[np.float64], c: NDArray[np.float64]
                               ) -> NDArray[np.float64]:
    """(n, 4, 4) stiffness for dofs (v1, θ1, v2, θ2) of elements of length h whose
    simply supported flexibility under clockwise end moments is [[a, −b], [−b, c]] / h²,
    a = ∫(h − t)²/EI, b = ∫t(h − t)/EI, c = ∫t²/EI. Inverted in closed form (ac − b² > 0 by
    Cauchy–Schwarz, without cancellation) and carried to the end dofs through the chord
    rotations φ1 = θ1 − (v2 − v1)/h, φ2 = θ2 − (v2 − v1)/h, so rigid motions stay exact."""
    scale = h**2 / (a * c - b * b)
    s11, s12, s22 = scale * c, scale * b, scale * a
    n = len(h)
    T = np.zeros((n, 2, 4))
    T[:, 0] = np.stack([1.0 / h, np.ones(n), -1.0 / h, np.zeros(n)], axis=1)
    T[:, 1] = np.stack([1.0 / h, np.zeros(n), -1.0 / h, np.ones(n)], axis=1)
    S = np.stack([np.stack([s11, s12], axis=1), np.stack([s12, s22], axis=1)], axis=1)
    return np.einsum("nki,nkl,nlj->nij", T, S, T)


_FLEXIBILITY_POWERS = ((0, 2), (1, 1), (2, 0))


def stiffness_between(beam: Beam, segment: NDArray[np.int64], xa: NDArray[np.float64],
                      xb: NDArray[np.float64]) -> NDArray[np.float64]:
    """(n, 4, 4) exact stiffness of the elements [xa, xb], each inside stiffness segment
    ``segment`` of the beam: the prismatic closed form where EI is constant, the inverted
    flexibility of the varying-EI element otherwise."""
    segment = np.atleast_1d(np.asarray(segment, dtype=np.int64))
    xa = np.atleast_1d(np.asarray(xa, dtype=float))
    xb = np.atleast_1d(np.asarray(xb, dtype=float))
    segments = beam.stiffness_segments
    EI = np.array([segments[i].EI0 for i in segment], dtype=float)
    k = element_stiffness(EI, xb - xa)
    for i in np.unique(segment):
        seg = segments[int(i)]
        if not seg.varies:
            continue
        rows = np.flatnonzero(segment == i)
        flex = integrals_of_flexibility(seg, xa[rows], xb[rows], _FLEXIBILITY_POWERS)
        k[rows] = stiffness_from_flexibility(xb[rows] - xa[rows], *flex.T)
    return k


def inverse_EI_slope_bounds(beam: Beam, segment: NDArray[np.int64], xa: NDArray[np.float64],
                            xb: NDArray[np.float64]
                            ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Upper bounds of |g'| and |g''|, g = 1/EI, over each interval [xa, xb] of a segment.

    g' = −EI'/EI², g'' = 2EI'²/EI³ − EI''/EI². EI is monotone along a segment (a parabola has
    its vertex at an end) and |EI'| is largest at an end, so the ends give the bounds."""
    segment = np.atleast_1d(np.asarray(segment, dtype=np.int64))
    xa = np.atleast_1d(np.asarray(xa, dtype=float))
    xb = np.atleast_1d(np.asarray(xb, dtype=float))
    g1 = np.zeros(len(segment))
    g2 = np.zeros(len(segment))
    for i in np.unique(segment):
        seg = beam.stiffness_segments[int(i)]
        if not seg.varies:
            continue
        rows = np.flatnonzero(segment == i)
        ends = np.stack([xa[rows], xb[rows]])
        low = seg.at(ends).min(axis=0)
        slope, curvature = seg.slopes(ends)
        steep = np.abs(slope).max(axis=0)
        g1[rows] = steep / low**2
        g2[rows] = 2.0 * steep**2 / low**3 + np.abs(curvature).max(axis=0) / low**2
    return g1, g2


@lru_cache(maxsize=256)
def _haunch_nodes(beam: Beam, index: int) -> NDArray[np.float64]:
    """Nodes of a varying segment graded so that an a priori estimate of the Hermite error
    stays below a quarter of ``HAUNCH_TOLERANCE``.

    The estimate takes the line's moment M in the haunch as about 8·EI_ref/L² times its
    largest ordinate (a line's ordinates are of order M·L²/(8·EI) over a span L), with
    |M'| ≲ 4|M|/L, EI_ref the largest EI of the spans it touches and L the shortest of
    them: error / ordinate ≈ h⁴/(48 L²) · EI_ref (|g''| + 8|g'|/L). The estimate only places
    the nodes; ``influence.line_pieces`` checks the rigorous bound on the lines themselves.
    """
    seg = beam.stiffness_segments[index]
    ends = beam.support_positions
    tol = 1e-9 * beam.length
    touched = [i for i in range(beam.n_spans)
               if ends[i] < seg.x1 - tol and ends[i + 1] > seg.x0 + tol]
    span = min(beam.spans[i] for i in touched)
    first, last = ends[touched[0]], ends[touched[-1] + 1]
    EI_ref = max(max(s.EI0, s.EI1) for s in beam.stiffness_segments
                 if s.x0 < last - tol and s.x1 > first + tol)
    length = seg.x1 - seg.x0
    # samples uniform and geometric towards both ends (the error density may be steep there)
    geometric = length * np.geomspace(1e-12, 1.0, 200)
    u = np.unique(np.concatenate([np.linspace(0.0, length, 1025), geometric,
                                  length - geometric]))
    u = u[(u >= 0.0) & (u <= length)]
    x = seg.x0 + u
    EI = seg.at(x)
    slope, curvature = seg.slopes(x)
    g1 = np.abs(slope) / EI**2
    g2 = 2.0 * slope**2 / EI**3 + np.abs(curvature) / EI**2
    density = (EI_ref * (g2 + 8.0 * g1 / span)
                        / (48.0 * span**2 * 0.25 * HAUNCH_TOLERANCE)) ** 0.25
    density = np.maximum(density[:-1], density[1:])  # the worse end of each sample interval
    cumulative = np.concatenate([[0.0], np.cumsum(density * np.diff(u))])
    count = int(min(max(np.ceil(cumulative[-1]), 1), MAX_AUTO_DIVISIONS))
    nodes = seg.x0 + np.interp(np.linspace(0.0, cumulative[-1], count + 1), cumulative, u)
    nodes[0], nodes[-1] = seg.x0, seg.x1
    nodes.flags.writeable = False  # cached: shared by every call for this beam
    return nodes


def _merge_points(points: NDArray[np.float64], tol: float) -> NDArray[np.float64]:
    points = np.sort(points)
    keep = np.concatenate([[True], np.diff(points) > tol])
    return points[keep]


def build_mesh(beam: Beam, extra_points: tuple[float, ...] = ()) -> Mesh:
    """Mesh of a beam: supports, hinges, ends of stiffness segments and ``extra_points`` as
    nodes. A haunch is one exact element between them (see ``line_nodes`` for where its
    lines break)."""
    length = beam.length
    tol = 1e-9 * length
    extra = np.asarray(extra_points, dtype=float)
    if extra.size and (extra.min() < -tol or extra.max() > length + tol):
        bad = extra[(extra < -tol) | (extra > length + tol)][0]
        raise ModelError(f"x = {bad:g} lies outside the beam (0 .. {length:g})")
    fixed_points = [beam.support_positions, np.asarray(beam.hinges, dtype=float)]
    for seg in beam.stiffness_segments:
        fixed_points.append(np.array([seg.x0, seg.x1]))
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
    element_segment = np.empty(n_nodes - 1, dtype=np.int64)
    for i, seg in enumerate(beam.stiffness_segments):
        inside = (mids >= seg.x0 - tol) & (mids <= seg.x1 + tol)
        element_EI[inside] = seg.at(mids[inside])
        element_segment[inside] = i
    element_k = stiffness_between(beam, element_segment, x[:-1], x[1:])
    element_g1, element_g2 = inverse_EI_slope_bounds(beam, element_segment, x[:-1], x[1:])

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
    return Mesh(x, element_dofs, element_EI, element_segment, element_k, element_g1,
                element_g2, v_dof, th_l, th_r, constrained, spring, support_nodes)


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
    k = mesh.element_k
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


def line_nodes(beam: Beam, mesh: Mesh, avoid: NDArray[np.float64] | None = None
               ) -> NDArray[np.float64]:
    """Where lines break: the mesh's nodes plus, inside every varying element, the nodes of
    its segment's division (``haunch_divisions`` equal pieces, or graded by
    ``_haunch_nodes``). A division node closer than
    1e-3 of its spacing to a point of ``avoid`` (a section inside an element, which splits
    the piece holding it) is left out."""
    points = [mesh.x]
    for i, seg in enumerate(beam.stiffness_segments):
        if not seg.varies:
            continue
        if beam.haunch_divisions is not None:
            division = np.linspace(seg.x0, seg.x1, int(beam.haunch_divisions) + 1)
        else:
            division = _haunch_nodes(beam, i)
        gap = np.diff(division).min()
        inner = division[1:-1]
        # off the mesh's nodes (supports, hinges inside a haunch) and off the sections
        for near in (mesh.x, np.zeros(0) if avoid is None else np.asarray(avoid, dtype=float)):
            if near.size and inner.size:
                sorted_near = np.sort(near)
                j = np.clip(np.searchsorted(sorted_near, inner), 0, near.size - 1)
                d = np.abs(sorted_near[j] - inner)
                d = np.minimum(d, np.abs(sorted_near[np.maximum(j - 1, 0)] - inner))
                inner = inner[d > 1e-3 * gap]
        points.append(inner)
    x = np.unique(np.concatenate(points))
    if len(x) > MAX_LINE_NODES:
        raise ModelError(f"EI segments: the haunches need {len(x) - 1:,} pieces for the "
                         f"accuracy {HAUNCH_TOLERANCE:g} of the lines, more than the "
                         f"{MAX_LINE_NODES - 1:,} allowed; make the haunches gentler or set "
                         "haunch_divisions to choose the count yourself")
    return x


_INTERIOR_POWERS = ((0, 0), (1, 0), (0, 1), (1, 1))


def interior_values(beam: Beam, segment: NDArray[np.int64], xa: NDArray[np.float64],
                    xb: NDArray[np.float64], ends: NDArray[np.float64],
                    k: NDArray[np.float64], y: NDArray[np.float64]
                    ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Exact deflection and slope at y inside unloaded elements [xa, xb] of varying EI.

    Per point i (arrays of length m): ``ends`` (m, 4, n) the element's end values, ``k``
    (m, 4, 4) its exact stiffness. The moment is linear, M(t) = α + βt with α = Q_θ1,
    α + βh = −Q_θ2 (Q = k·ends), and v'' = −M/EI, so
    v(t) = v1 + θ1·t − α∫(t − τ)/EI − β∫(t − τ)τ/EI and θ(t) = θ1 − α∫1/EI − β∫τ/EI over
    [xa, xa + t]. Returns (v, θ), each (m, n)."""
    Q = np.einsum("mij,mjn->min", k, ends)
    alpha = Q[:, 1]
    beta = (-Q[:, 3] - alpha) / (xb - xa)[:, None]
    t = (y - xa)[:, None]
    I = np.empty((len(y), 4))
    for i in np.unique(segment):
        rows = np.flatnonzero(segment == i)
        I[rows] = integrals_of_flexibility(beam.stiffness_segments[int(i)], xa[rows], y[rows],
                                           _INTERIOR_POWERS)
    v = ends[:, 0] + ends[:, 1] * t - alpha * I[:, 2:3] - beta * I[:, 3:4]
    theta = ends[:, 1] - alpha * I[:, 0:1] - beta * I[:, 1:2]
    return v, theta


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
