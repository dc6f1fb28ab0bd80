"""Influence lines by Müller-Breslau, exact as piecewise cubics.

A force effect E at a section is read from the end forces of one element next to it:
E = r·(k_e u_e − q_e(ξ)), where q_e is the consistent load vector of the unit load at ξ.
With z = K⁻¹ (L_eᵀ k_e r) the line is the Hermite cubic of z in every element, less r in the
element the effect is read from: the deflected shape of the structure under the unit
dislocation (kink, slide, lift) that releases the effect. A reaction at a rigid support is the
shape with that support displaced by one unit. Where EI is constant the line is exactly cubic
between nodes, so a ``scipy.interpolate.PPoly`` with knots at the nodes holds it without
approximation. Inside a haunch (EI varying) the nodal values are exact and the line is the
Hermite cubic of them between closely spaced nodes, within ``fem.HAUNCH_TOLERANCE`` of its
largest ordinate (checked on every line; see ``line_pieces``).
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from functools import lru_cache
from typing import Literal

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.interpolate import PPoly

from trundle.core._repr import html_table, short
from trundle.core.beam import Beam, ModelError, Spring
from trundle.core.fem import (
    HAUNCH_TOLERANCE,
    MAX_LINE_NODES,
    assembly_for,
    hermite_coefficients,
    integrals_of_flexibility,
    inverse_EI_slope_bounds,
    stiffness_between,
)
from trundle.core.fem import line_nodes as fem_line_nodes

EFFECT_KINDS = ("reaction", "support_moment", "moment", "shear", "deflection", "rotation")
# what each effect measures, for labels and unit lookup
EFFECT_QUANTITY = {
    "reaction": "force",
    "support_moment": "moment",
    "moment": "moment",
    "shear": "force",
    "deflection": "deflection",
    "rotation": "rotation",
}


@dataclass(frozen=True)
class Effect:
    """One response quantity: ``kind`` at a point ``at`` or at support number ``support``.

    ``side`` ("left"/"right") picks the one-sided value of shear, of rotation at a hinge and of
    moment where a support's couple makes it jump (moment is read just right if not given).
    """

    kind: str
    at: float | None = None
    support: int | None = None
    side: Literal["left", "right"] | None = None

    def __post_init__(self) -> None:
        if self.kind not in EFFECT_KINDS:
            raise ModelError(f"effect: expected one of {', '.join(EFFECT_KINDS)}, "
                             f"found {self.kind!r}")
        if self.kind in ("reaction", "support_moment"):
            if self.support is None:
                raise ModelError(f"effect {self.kind!r} needs support=<number>")
        elif self.at is None:
            raise ModelError(f"effect {self.kind!r} needs at=<x>")
        if self.side not in (None, "left", "right"):
            raise ModelError(f"side: expected 'left' or 'right', found {self.side!r}")
        if self.kind == "shear" and self.side is None:
            object.__setattr__(self, "side", "right")

    @property
    def label(self) -> str:
        if self.kind in ("reaction", "support_moment"):
            return f"{self.kind} {self.support}"
        side = (f" {self.side}" if self.side and self.kind in ("shear", "rotation", "moment")
                else "")
        return f"{self.kind}{side} at {self.at:g}"

    @property
    def quantity(self) -> str:
        return EFFECT_QUANTITY[self.kind]


def _eval_sided(pp: PPoly, x: ArrayLike, side: str) -> NDArray[np.float64]:
    """Evaluate a PPoly taking the left- or right-hand limit at breakpoints."""
    x = np.atleast_1d(np.asarray(x, dtype=float))
    knots = pp.x
    idx = np.searchsorted(knots, x, side="left" if side == "left" else "right") - 1
    idx = np.clip(idx, 0, len(knots) - 2)
    s = x - knots[idx]
    c = pp.c
    out = np.zeros((len(x), *c.shape[2:]))
    for power in range(c.shape[0]):
        out = out * s.reshape((-1,) + (1,) * (c.ndim - 2)) + c[power, idx]
    return out


class InfluenceLine:
    """One influence line: effect value for a unit downward load at x.

    Call it with positions; ``side="left"`` takes the left-hand limit at a jump.
    """

    def __init__(self, ppoly: PPoly, effect: Effect):
        self.ppoly = ppoly
        self.effect = effect

    @property
    def knots(self) -> NDArray[np.float64]:
        return self.ppoly.x

    @property
    def coefficients(self) -> NDArray[np.float64]:
        return self.ppoly.c

    def __call__(self, x: ArrayLike, side: str = "right") -> NDArray[np.float64] | float:
        values = _eval_sided(self.ppoly, x, side)
        return float(values[0]) if np.ndim(x) == 0 else values

    def _extreme(self, sign: float) -> tuple[float, float]:
        candidates = [self.knots]
        deriv = self.ppoly.derivative()
        roots = deriv.roots(extrapolate=False)
        candidates.append(roots[np.isfinite(roots)])
        x = np.concatenate(candidates)
        values = np.concatenate([_eval_sided(self.ppoly, x, "left"),
                                 _eval_sided(self.ppoly, x, "right")])
        xs = np.concatenate([x, x])
        i = int(np.argmax(sign * values))
        return float(values[i]), float(xs[i])

    def max(self) -> tuple[float, float]:
        """(largest ordinate, x where it occurs); one-sided limits count at jumps."""
        return self._extreme(1.0)

    def min(self) -> tuple[float, float]:
        """(smallest ordinate, x where it occurs)."""
        return self._extreme(-1.0)

    def integrate(self, a: float, b: float) -> float:
        return float(self.ppoly.integrate(a, b))

    def areas(self) -> tuple[float, float]:
        """(∫ max(IL, 0), ∫ min(IL, 0)) over the beam, exact root to root."""
        pos, neg = signed_areas(self.knots, self.coefficients[..., None])
        return float(pos[0]), float(neg[0])

    def __repr__(self) -> str:
        (high, x_high), (low, x_low) = self.max(), self.min()
        return (f"InfluenceLine({self.effect.label}, {len(self.knots) - 1} pieces; max "
                f"{high:.5g} at x = {x_high:g}, min {low:.5g} at x = {x_low:g})")

    def _repr_html_(self) -> str:
        """A small table for Jupyter: the extremes and where they occur, the areas."""
        (high, x_high), (low, x_low) = self.max(), self.min()
        positive, negative = self.areas()
        rows = [["max ordinate", short(high), short(x_high)],
                ["min ordinate", short(low), short(x_low)],
                ["area where positive", short(positive), ""],
                ["area where negative", short(negative), ""]]
        return html_table(f"Influence line: {self.effect.label}", ["", "value", "x"], rows,
                          f"piecewise cubic, {len(self.knots) - 1} pieces, exact (within "
                          "1e-8 of the largest ordinate inside a haunch); a unit downward "
                          "load at x")


class InfluenceSet:
    """A batch of influence lines sharing one set of knots.

    Fields
    ------
    knots : (m + 1,) breakpoints [length]
    coefficients : (4, m, n_lines) cubic coefficients per piece, highest power first, in the
        local variable x − knots[i] (the ``scipy.interpolate.PPoly`` layout)
    effects : the effect of each line
    """

    def __init__(self, knots: NDArray[np.float64], coefficients: NDArray[np.float64],
                 effects: Sequence[Effect], node_knots: NDArray[np.int64] | None = None,
                 own_knots: NDArray[np.int64] | None = None,
                 pieces: LinePieces | None = None):
        self.knots = np.ascontiguousarray(knots, dtype=float)
        self.coefficients = np.ascontiguousarray(coefficients, dtype=float)
        self.effects = tuple(effects)
        # where the lines really break: the structure's nodes (all lines) and each line's own
        # section (own_knots, −1 for none); None when not known
        self.node_knots = node_knots
        self.own_knots = own_knots
        # the same lines each on its own breaks, when built by influence_set
        self.pieces = pieces
        self.ppoly = PPoly.construct_fast(self.coefficients, self.knots, extrapolate=False)

    def __len__(self) -> int:
        return len(self.effects)

    def __call__(self, x: ArrayLike, side: str = "right") -> NDArray[np.float64]:
        """Ordinates, shape (len(x), n_lines)."""
        return _eval_sided(self.ppoly, x, side)

    def line(self, i: int) -> InfluenceLine:
        return InfluenceLine(
            PPoly.construct_fast(np.ascontiguousarray(self.coefficients[:, :, i]), self.knots),
            self.effects[i],
        )

    def signed_areas(self) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """(∫ max(IL, 0), ∫ min(IL, 0)) for every line, exact between real roots."""
        return signed_areas(self.knots, self.coefficients)


def _sign_pieces(knots: NDArray[np.float64], c: NDArray[np.float64]
                 ) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.float64]]:
    """Cut one line (coefficients (4, m)) at its knots and real roots.

    Returns the cut points, the integral of the line between consecutive cuts, and the line's
    value in the middle of each stretch (whose sign holds over the whole stretch).
    """
    pp, cuts, mids = _sign_cuts(knots, c)
    running = pp.antiderivative()
    parts = np.diff(running(cuts))
    return cuts, parts, mids


# cuts and signs of lines already searched, by the line's values (knots and coefficients):
# the scan's signed areas and the records' loaded stretches search the same lines
_CUTS: dict[tuple, tuple[NDArray[np.float64], NDArray[np.float64]]] = {}
_CUTS_KEEP = 200_000


def _sign_cuts(knots: NDArray[np.float64], c: NDArray[np.float64]
               ) -> tuple[PPoly, NDArray[np.float64], NDArray[np.float64]]:
    """The line as a PPoly, its cuts (knots and real roots) and its value in the middle of
    each stretch between cuts."""
    c = np.ascontiguousarray(c, dtype=float)
    knots = np.ascontiguousarray(knots, dtype=float)
    pp = PPoly.construct_fast(c, knots, extrapolate=False)
    key = (c.shape, knots.tobytes(), c.tobytes())
    found = _CUTS.get(key)
    if found is None:
        roots = pp.roots(discontinuity=False, extrapolate=False)
        # sorted without repeats (np.unique, at a fraction of its cost on a few values)
        cuts = np.array(sorted(set(knots.tolist() + roots[np.isfinite(roots)].tolist())))
        mids = pp(0.5 * (cuts[:-1] + cuts[1:]))
        if len(_CUTS) >= _CUTS_KEEP:
            _CUTS.clear()
        cuts.setflags(write=False)
        mids.setflags(write=False)
        found = _CUTS[key] = (cuts, mids)
    return pp, found[0], found[1]


def signed_areas(knots: NDArray[np.float64], coefficients: NDArray[np.float64]
                 ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Positive and negative areas of piecewise cubics, split exactly at their real roots."""
    n_lines = coefficients.shape[2]
    pos = np.zeros(n_lines)
    neg = np.zeros(n_lines)
    for j in range(n_lines):
        _, parts, mids = _sign_pieces(knots, coefficients[:, :, j])
        pos[j] = parts[mids > 0].sum()
        neg[j] = parts[mids < 0].sum()
    return pos, neg


def piece_sign_intervals(knots: NDArray[np.float64], coefficients: NDArray[np.float64],
                         sign: int) -> list[tuple[float, float]]:
    """Merged intervals of x where one line (coefficients (4, m)) has the given sign."""
    return sign_intervals(knots, coefficients)[0 if sign > 0 else 1]


def sign_intervals(knots: NDArray[np.float64], coefficients: NDArray[np.float64]
                   ) -> tuple[list[tuple[float, float]], list[tuple[float, float]]]:
    """Merged intervals of x where one line (coefficients (4, m)) is positive, and where it
    is negative: both from one search of its roots."""
    _, cuts, mids = _sign_cuts(knots, coefficients)
    found: tuple[list[tuple[float, float]], list[tuple[float, float]]] = ([], [])
    for a, b, m in zip(cuts[:-1].tolist(), cuts[1:].tolist(), mids.tolist(), strict=True):
        if m == 0.0 or m != m:  # zero (or NaN): neither sign
            continue
        out = found[0] if m > 0 else found[1]
        if out and out[-1][1] == a:
            out[-1] = (out[-1][0], b)
        else:
            out.append((a, b))
    return found


def _as_effects(effects: Iterable[Effect | tuple | str]) -> list[Effect]:
    out = []
    for e in effects:
        if isinstance(e, Effect):
            out.append(e)
        elif isinstance(e, dict):
            out.append(Effect(**e))
        else:
            raise ModelError(f"expected an Effect, found {e!r}")
    return out


# recovery rows r on the element's end forces (v1, θ1, v2, θ2) -> effect at one end
_ROW_AT_LEFT_END = {"moment": (0.0, 1.0, 0.0, 0.0), "shear": (-1.0, 0.0, 0.0, 0.0)}
_ROW_AT_RIGHT_END = {"moment": (0.0, 0.0, 0.0, -1.0), "shear": (0.0, 0.0, 1.0, 0.0)}


def _taylor_shift(c: NDArray[np.float64], d: NDArray[np.float64]) -> NDArray[np.float64]:
    """Cubics c (4, …; highest power first) re-expanded about a point d further along."""
    c3, c2, c1, c0 = c
    return np.stack([c3, c2 + 3 * c3 * d, c1 + (2 * c2 + 3 * c3 * d) * d,
                     c0 + (c1 + (c2 + c3 * d) * d) * d])


@dataclass(frozen=True, eq=False)
class LinePieces:
    """Influence lines stored as what they are: a line is one cubic per structural element
    (between supports, hinges, stiffness changes), and a line whose section lies inside an
    element has that element split in two at the section. Memory is lines x elements, not
    lines x every section's knot.

    Fields
    ------
    knots : (n, K) each line's own breakpoints, K = n_elements + 2; row j uses the first
        ``n_pieces[j] + 1`` entries, the rest repeat the beam's length [length]
    n_pieces : (n,) pieces of each line (n_elements, or n_elements + 1 when split)
    coefficients : (n, K − 1, 4) cubic of each piece, highest power first, in x − knot
    effects : the effect of each line
    nodes : (n_elements + 1,) x of the structural nodes [length]
    sections : (n_sections,) x of the sections that split an element [length]
    identity : (n,) for each line the first line built the same way: the two lines are
        identical (shear just left and right of a section inside an element; every line that
        is zero by construction shares the identity of the first such line)
    split_at : (n,) index in the line's knots of its own section, −1 where it splits nothing
    """

    knots: NDArray[np.float64]
    n_pieces: NDArray[np.int64]
    coefficients: NDArray[np.float64]
    effects: tuple[Effect, ...]
    nodes: NDArray[np.float64]
    sections: NDArray[np.float64]
    identity: NDArray[np.int64]
    split_at: NDArray[np.int64]

    def __len__(self) -> int:
        return len(self.effects)

    @property
    def length(self) -> float:
        return float(self.nodes[-1])


def line_pieces(beam: Beam, effects: Iterable[Effect]) -> LinePieces:
    """Influence lines of many effects from one factorisation, each on its own breaks only.

    The structure is solved on its own nodes only (supports, hinges, stiffness changes), which
    keeps the stiffness well conditioned however many sections are asked for. A section inside
    an element splits it into two sub-elements whose shared node is condensed out exactly: the
    adjoint load of the section enters the element's end dofs, and the section's own
    deflection and rotation are recovered from the end values afterwards.

    Haunches: a varying-EI element has its exact stiffness (``fem.stiffness_between``), so
    every nodal value is exact; inside it the line breaks at the nodes of ``fem.line_nodes``,
    where its exact values are recovered from the element's end values
    (``fem.interior_values``), and it is the Hermite cubic of those values between them. With
    ``beam.haunch_divisions`` None every line is checked against the bound of
    ``fem.hermite_error_bound`` and must stay within ``HAUNCH_TOLERANCE`` of the largest of its
    nodal ordinates; a segment where some line misses it gets finer line nodes (the bound
    falls as h⁴), without solving again.
    """
    effects = _as_effects(effects)
    length = beam.length
    tol = 1e-9 * length
    for e in effects:
        if e.at is not None and not (-tol <= e.at <= length + tol):
            raise ModelError(f"{e.label}: x lies outside the beam (0 .. {length:g})")
        if e.support is not None and not (0 <= e.support < len(beam.supports)):
            raise ModelError(f"{e.label}: the beam has supports 0 .. {len(beam.supports) - 1}")
    asm = assembly_for(beam, ())
    mesh = asm.mesh
    xc = mesh.x
    h = mesh.lengths
    n_el = len(h)
    k_el = mesh.element_k
    n_lines = len(effects)

    rhs = np.zeros((asm.free.size, n_lines))
    free_pos = np.full(mesh.n_dof, -1)
    free_pos[asm.free] = np.arange(asm.free.size)
    prescribed: list[tuple[int, int]] = []  # (line, dof) with a unit dislocation imposed
    recovery: list[tuple[int, int, NDArray[np.float64]]] = []  # (line, element, r)
    zero_lines: list[int] = []
    inner: list[tuple[int, int, float, Effect]] = []  # sections inside elements
    # how each line is built; equal keys give identical lines
    built: dict[tuple, int] = {}
    identity = np.empty(n_lines, dtype=np.int64)

    def same_as(j: int, key: tuple) -> None:
        identity[j] = built.setdefault(key, j)

    def add_element_load(j: int, element: int, g: NDArray[np.float64]) -> None:
        for local, dof in enumerate(mesh.element_dofs[element]):
            if free_pos[dof] >= 0:
                rhs[free_pos[dof], j] += g[local]

    def zero(j: int) -> None:
        zero_lines.append(j)
        same_as(j, ("zero",))

    for j, e in enumerate(effects):
        if e.kind in ("reaction", "support_moment"):
            support = beam.supports[e.support]
            node = mesh.support_nodes[e.support]
            dof = mesh.v_dof[node] if e.kind == "reaction" else mesh.theta_right_dof[node]
            if e.kind == "reaction" and support == "free":
                raise ModelError(f"support {e.support} is free: it has no reaction")
            if e.kind == "support_moment" and not (
                support == "fixed" or (isinstance(support, Spring) and support.kr is not None)
            ):
                raise ModelError(f"support {e.support} does not restrain rotation: "
                                 "it has no reaction couple")
            same_as(j, (e.kind, e.support))
            if isinstance(support, Spring):
                stiffness = support.k if e.kind == "reaction" else support.kr
                rhs[free_pos[dof], j] += stiffness
            else:
                prescribed.append((j, dof))
                col = asm.K[:, [dof]].toarray().ravel()
                rhs[:, j] = -col[asm.free]
            continue
        x = min(max(float(e.at), 0.0), length)
        node = int(np.argmin(np.abs(xc - x)))
        if abs(xc[node] - x) > tol:
            # inside an element neither side counts: no point force or couple acts there
            same_as(j, (e.kind, x))
            inner.append((j, int(np.searchsorted(xc, x, side="right")) - 1, x, e))
            continue
        if e.kind in ("deflection", "rotation"):
            if e.kind == "deflection":
                dof = mesh.v_dof[node]
            else:
                dof = mesh.theta_left_dof[node] if e.side == "left" else mesh.theta_right_dof[node]
            if mesh.constrained[dof]:
                zero(j)
            elif free_pos[dof] >= 0:
                same_as(j, ("dof", dof))
                rhs[free_pos[dof], j] += 1.0
            else:
                same_as(j, ("dof", dof))
            continue
        # moment or shear at a node, read from the element on the chosen side of the node;
        # the moment jumps too where a support holds rotation (its couple), so side= counts
        # for it as well; without side= the moment is read just right of the node
        if e.kind == "moment" and e.side is None:
            use_right = node < n_el
        else:
            use_right = e.side == "right"
            if (use_right and node == n_el) or (not use_right and node == 0):
                zero(j)  # nothing beyond the beam's end: V = 0 there
                continue
        element = node if use_right else node - 1
        same_as(j, (e.kind, node, use_right))
        r = np.array(_ROW_AT_LEFT_END[e.kind] if use_right else _ROW_AT_RIGHT_END[e.kind])
        add_element_load(j, element, k_el[element] @ r)
        recovery.append((j, element, r))

    inner_data = _condense_inner_sections(inner, beam, mesh, h)
    if inner_data is not None:
        lines_in, elements_in, dofs_in, loads_in = inner_data[:4]
        for k in range(4):
            free = free_pos[dofs_in[:, k]] >= 0
            np.add.at(rhs, (free_pos[dofs_in[free, k]], lines_in[free]), loads_in[free, k])

    u = asm.expand(asm.solve(rhs)) if asm.free.size else np.zeros((mesh.n_dof, n_lines))
    for j, dof in prescribed:
        u[dof, j] = 1.0
    values = u[mesh.element_dofs]  # (n_el, 4, n_lines)
    for j, element, r in recovery:
        values[element, :, j] -= r
    if zero_lines:
        values[:, :, zero_lines] = 0.0
    left = right = None
    if inner_data is not None:
        left, right = _inner_values(values, inner_data)
        if zero_lines:
            gone = np.isin(inner_data[0], zero_lines)
            left[gone] = right[gone] = 0.0

    # where the lines break: the mesh's nodes, and inside a haunch the nodes of its division
    varying = np.array([seg.varies for seg in beam.stiffness_segments])[mesh.element_segment]
    if varying.any():
        x = fem_line_nodes(beam, mesh, avoid=inner_data[4] if inner_data is not None
                           else np.zeros(0))
        for _ in range(_REFINEMENTS):
            fine = _haunch_lines(beam, mesh, values, inner_data, left, right, x)
            ratio = fine[-1]
            if beam.haunch_divisions is not None or (ratio <= 1.0).all():
                break
            if len(x) > MAX_LINE_NODES:
                break
            # the bound falls as h⁴: split each piece that misses it into enough equal parts
            parts = np.where(ratio > 1.0, np.ceil(np.maximum(ratio, 1.0) ** 0.25 * 1.1), 1)
            parts = parts.astype(np.int64)
            start = np.repeat(x[:-1], parts)
            step = np.repeat(np.diff(x) / parts, parts)
            within = np.arange(parts.sum()) - np.repeat(np.cumsum(parts) - parts, parts)
            x = np.append(start + within * step, x[-1])
        if beam.haunch_divisions is None and (ratio > 1.0).any():
            bad = mesh.element_segment[np.clip(np.searchsorted(mesh.x, x[:-1][ratio > 1.0],
                                                               side="right") - 1, 0,
                                               n_el - 1)]
            where = ", ".join(f"{beam.stiffness_segments[i].x0:g}.."
                              f"{beam.stiffness_segments[i].x1:g}" for i in np.unique(bad))
            raise ModelError(f"EI segment(s) at x = {where}: the influence lines do not reach "
                             f"the relative accuracy {HAUNCH_TOLERANCE:g} with the most pieces "
                             "allowed; set haunch_divisions to choose the count yourself")
        xc = x
        values, pieces_in, c_in = fine[:3]
        if inner_data is not None:
            left = np.concatenate([values[pieces_in, :2, inner_data[0]], left[:, 2:]], axis=1)
            right = np.concatenate([right[:, :2], values[pieces_in, 2:, inner_data[0]]], axis=1)
    elif inner_data is not None:
        pieces_in, c_in = inner_data[1], inner_data[5]
    h = np.diff(xc)
    n_el = len(h)
    coarse = hermite_coefficients(values, h)  # (4, n_el, n_lines)

    # every line on the structural pieces; a padding piece of zero width at the end
    coefficients = np.zeros((n_lines, n_el + 1, 4))
    coefficients[:, :n_el] = coarse.transpose(2, 1, 0)
    knots = np.empty((n_lines, n_el + 2))
    knots[:, :n_el + 1] = xc
    knots[:, n_el + 1] = length
    n_pieces = np.full(n_lines, n_el, dtype=np.int64)
    sections = np.zeros(0)
    split_at = np.full(n_lines, -1, dtype=np.int64)
    if inner_data is not None:
        lines_in, elements_in = inner_data[0], pieces_in
        sections = inner_data[4]
        left_coef = hermite_coefficients(left, c_in)
        right_coef = hermite_coefficients(right, h[elements_in] - c_in)
        # the element of the section splits: pieces after it move one place along
        piece = np.arange(n_el + 1)
        source = np.where(piece[None, :] <= elements_in[:, None], piece, piece - 1)
        coefficients[lines_in] = coarse.transpose(2, 1, 0)[lines_in[:, None], source]
        coefficients[lines_in, elements_in] = left_coef.T
        coefficients[lines_in, elements_in + 1] = right_coef.T
        knot = np.arange(n_el + 2)
        knot_source = np.where(knot[None, :] <= elements_in[:, None], knot, knot - 1)
        knots[lines_in] = xc[knot_source]
        knots[lines_in, elements_in + 1] = sections
        n_pieces[lines_in] = n_el + 1
        split_at[lines_in] = elements_in + 1
    return LinePieces(knots, n_pieces, coefficients, tuple(effects), xc.copy(), sections,
                      identity, split_at)


# how many times line_pieces may refine the line nodes of the haunches before it gives up
_REFINEMENTS = 6


def _haunch_lines(beam: Beam, mesh, values: NDArray[np.float64], inner_data: tuple | None,
                  left: NDArray[np.float64] | None, right: NDArray[np.float64] | None,
                  x: NDArray[np.float64]) -> tuple:
    """The lines on the nodes ``x`` (the mesh's nodes and, inside each haunch, its division;
    sections inside elements lie off them).

    Returns (values (n_pieces, 4, n_lines) exact at every node, the piece holding each section
    inside an element, the section's distance from that piece's start, and for every piece
    the largest ratio of a line's Hermite error bound to HAUNCH_TOLERANCE × its largest nodal
    ordinate).

    In an unloaded element a line's moment is linear, M = α + β·t (t from the element's left
    end xa; α, β from its exact end forces), and v'' = −M/EI, so at a node y inside it
    v(y) = v(xa) + θ(xa)·(y − xa) − α·I01(y) − β·I11(y), θ(y) = θ(xa) − α·I00(y) − β·I10(y),
    with Ipq(y) = ∫ t^p (y − x)^q / EI over [xa, y], shared by all lines. A line with its
    section s inside the element has one such moment on each side; right of s the same
    integrals serve, less their part over [xa, s]."""
    n_lines = values.shape[2]
    parent = np.clip(np.searchsorted(mesh.x, 0.5 * (x[:-1] + x[1:])) - 1, 0, len(mesh.x) - 2)
    n_pieces = len(x) - 1
    out = np.empty((n_pieces, 4, n_lines))
    starts_element = x[:-1] == mesh.x[parent]
    ends_element = x[1:] == mesh.x[parent + 1]
    out[starts_element, :2] = values[parent[starts_element], :2]
    out[ends_element, 2:] = values[parent[ends_element], 2:]
    inside = np.flatnonzero(~ends_element)  # piece i ends at an inner node, piece i + 1 starts
    element = parent[inside]
    y = x[inside + 1]
    xa = mesh.x[element]
    I = _node_integrals(beam, x.tobytes())  # (m, 4): I00 I10 I01 I11 at the inner nodes
    alpha, beta = _linear_moment(mesh, values, element)
    ends = values[element]
    t = (y - xa)[:, None]
    v = ends[:, 0] + ends[:, 1] * t - alpha * I[:, 2:3] - beta * I[:, 3:4]
    theta = ends[:, 1] - alpha * I[:, 0:1] - beta * I[:, 1:2]
    if inner_data is not None:
        lines_in, elements_in, xs = inner_data[0], inner_data[1], inner_data[4]
        pair_line, pair_node, QL, QR = _inner_pairs(inner_data, element, left, right)
        if pair_node.size:
            e = elements_in[pair_line]
            s0 = mesh.x[e]
            section = xs[pair_line]
            yy = y[pair_node]
            Iy = I[pair_node]
            on_left = yy < section
            # left of the section: the left sub-element's moment, from xa
            a_l = QL[pair_line, 1]
            b_l = (-QL[pair_line, 3] - a_l) / (section - s0)
            lv = left[pair_line]
            v_left = lv[:, 0] + lv[:, 1] * (yy - s0) - a_l * Iy[:, 2] - b_l * Iy[:, 3]
            t_left = lv[:, 1] - a_l * Iy[:, 0] - b_l * Iy[:, 1]
            # right of it: M = α' + β'·t with t from xa; the integrals less their part to s
            Is = _integrals(beam, mesh.element_segment[elements_in], mesh.x[elements_in],
                            xs)[pair_line]
            b_r = (-QR[pair_line, 3] - QR[pair_line, 1]) / (mesh.x[e + 1] - section)
            a_r = QR[pair_line, 1] - b_r * (section - s0)
            rv = right[pair_line]
            d = yy - section
            v_right = (rv[:, 0] + rv[:, 1] * d
                       - a_r * (Iy[:, 2] - Is[:, 2] - d * Is[:, 0])
                       - b_r * (Iy[:, 3] - Is[:, 3] - d * Is[:, 1]))
            t_right = rv[:, 1] - a_r * (Iy[:, 0] - Is[:, 0]) - b_r * (Iy[:, 1] - Is[:, 1])
            v[pair_node, lines_in[pair_line]] = np.where(on_left, v_left, v_right)
            theta[pair_node, lines_in[pair_line]] = np.where(on_left, t_left, t_right)
    out[inside, 2], out[inside, 3] = v, theta
    out[inside + 1, 0], out[inside + 1, 1] = v, theta

    pieces_in = c_in = None
    if inner_data is not None:
        pieces_in = np.searchsorted(x, inner_data[4], side="right") - 1
        c_in = inner_data[4] - x[pieces_in]
    ratio = _haunch_excess(beam, mesh, values, x, parent, out, inner_data, left, right,
                           pieces_in, c_in)
    return out, pieces_in, c_in, ratio


_INTEGRAL_POWERS = ((0, 0), (1, 0), (0, 1), (1, 1))


@lru_cache(maxsize=64)
def _node_integrals(beam: Beam, nodes: bytes) -> NDArray[np.float64]:
    """``_integrals`` at every line node inside a mesh element, from that element's left end
    (the same nodes serve every call on a beam unless its sections move them: cached)."""
    mesh = assembly_for(beam, ()).mesh
    x = np.frombuffer(nodes, dtype=np.float64)
    parent = np.clip(np.searchsorted(mesh.x, 0.5 * (x[:-1] + x[1:])) - 1, 0, len(mesh.x) - 2)
    inside = np.flatnonzero(x[1:] != mesh.x[parent + 1])
    element = parent[inside]
    out = _integrals(beam, mesh.element_segment[element], mesh.x[element], x[inside + 1])
    out.flags.writeable = False
    return out


def _integrals(beam: Beam, segment: NDArray[np.int64], xa: NDArray[np.float64],
               y: NDArray[np.float64]) -> NDArray[np.float64]:
    """(m, 4): ∫ t^p (y − x)^q / EI over [xa, y], t = x − xa, for (p, q) = (0, 0), (1, 0),
    (0, 1), (1, 1)."""
    out = np.zeros((len(y), 4))
    for i in np.unique(segment):
        rows = np.flatnonzero(segment == i)
        out[rows] = integrals_of_flexibility(beam.stiffness_segments[int(i)], xa[rows],
                                             y[rows], _INTEGRAL_POWERS)
    return out


def _pairs(element: NDArray[np.int64], wanted: NDArray[np.int64]
           ) -> tuple[NDArray[np.int64], NDArray[np.int64]]:
    """For each entry n of ``wanted``, every index i with element[i] == wanted[n]
    (``element`` sorted): the pairs (n, i) as two flat arrays."""
    start = np.searchsorted(element, wanted, side="left")
    count = np.searchsorted(element, wanted, side="right") - start
    pair = np.repeat(np.arange(len(wanted)), count)
    offset = np.arange(count.sum()) - np.repeat(np.cumsum(count) - count, count)
    return pair, start[pair] + offset


def _inner_pairs(inner_data: tuple, element: NDArray[np.int64], left: NDArray[np.float64],
                 right: NDArray[np.float64]) -> tuple:
    """Lines whose section lies inside a varying element, paired with the entries of
    ``element`` in that element (:func:`_pairs`), and the end forces of each side of those
    sections (left and right parts of the element)."""
    pair_line, pair_other = _pairs(element, inner_data[1])
    if not pair_other.size:
        return pair_line, pair_other, None, None
    QL = np.einsum("nij,nj->ni", inner_data[9], left)
    QR = np.einsum("nij,nj->ni", inner_data[10], right)
    return pair_line, pair_other, QL, QR


def _haunch_excess(beam: Beam, mesh, values: NDArray[np.float64], x: NDArray[np.float64],
                   parent: NDArray[np.int64], fine: NDArray[np.float64],
                   inner_data: tuple | None, left: NDArray[np.float64] | None,
                   right: NDArray[np.float64] | None, pieces_in: NDArray[np.int64] | None,
                   c_in: NDArray[np.float64] | None) -> NDArray[np.float64]:
    """For every piece between line nodes: the largest ratio, over the lines, of the bound of
    its Hermite error to HAUNCH_TOLERANCE × the line's largest nodal ordinate (0 where EI is
    constant: the cubic is exact there).

    The bound: with w'' = −M/EI and M linear, w'''' = −(M·g'' + 2·M'·g'), g = 1/EI, and the
    cubic Hermite interpolant on a piece of length h errs by at most h⁴/384 · max|w''''|
    (the classical bound, e.g. Burden & Faires, Numerical Analysis, 9th ed., thm 3.9), here
    ≤ h⁴/384 · (max|M|·max|g''| + 2·|β|·max|g'|) with |M| largest at an end of the piece."""
    n_pieces = len(x) - 1
    ratio_out = np.zeros(n_pieces)
    h = np.diff(x)
    g1, g2 = inverse_EI_slope_bounds(beam, mesh.element_segment[parent], x[:-1], x[1:])
    chosen = np.flatnonzero(g2 > 0.0)
    if chosen.size == 0:
        return ratio_out
    scale = np.maximum(np.abs(fine[:, 0]).max(axis=0), np.abs(fine[:, 2]).max(axis=0))
    if inner_data is not None:
        np.maximum.at(scale, inner_data[0], np.abs(left[:, 2]))
    allowed = HAUNCH_TOLERANCE * scale
    element = parent[chosen]
    alpha, beta = _linear_moment(mesh, values, element)
    a = alpha + beta * (x[chosen] - mesh.x[element])[:, None]
    b = alpha + beta * (x[chosen + 1] - mesh.x[element])[:, None]
    np.abs(a, out=a)
    np.abs(b, out=b)
    np.maximum(a, b, out=a)
    a *= (h[chosen] ** 4 / 384.0 * g2[chosen])[:, None]
    np.abs(beta, out=beta)
    beta *= (h[chosen] ** 4 / 192.0 * g1[chosen])[:, None]
    bound = a
    bound += beta
    if inner_data is not None:
        # a line with its section inside the element: the moment of the side each piece lies
        # on; the piece holding the section is two cubics, each bounded on its own length
        lines_in, elements_in, xs = inner_data[0], inner_data[1], inner_data[4]
        pair_line, pair_row, QL, QR = _inner_pairs(inner_data, element, left, right)
        if pair_row.size:
            e = elements_in[pair_line]
            xa, xb, section = mesh.x[e], mesh.x[e + 1], xs[pair_line]
            beta_l = (-QL[pair_line, 3] - QL[pair_line, 1]) / (section - xa)
            beta_r = (-QR[pair_line, 3] - QR[pair_line, 1]) / (xb - section)
            piece = chosen[pair_row]
            p0, p1 = x[piece], x[piece + 1]
            end_l = np.minimum(p1, section)
            start_r = np.maximum(p0, section)
            m_left = np.maximum(np.abs(QL[pair_line, 1] + beta_l * (p0 - xa)),
                                np.abs(QL[pair_line, 1] + beta_l * (end_l - xa)))
            m_right = np.maximum(np.abs(QR[pair_line, 1] + beta_r * (start_r - section)),
                                 np.abs(QR[pair_line, 1] + beta_r * (p1 - section)))
            len_l = np.maximum(end_l - p0, 0.0)
            len_r = np.maximum(p1 - start_r, 0.0)
            G1, G2 = g1[piece], g2[piece]
            part_l = len_l**4 / 384.0 * (m_left * G2 + 2.0 * np.abs(beta_l) * G1)
            part_r = len_r**4 / 384.0 * (m_right * G2 + 2.0 * np.abs(beta_r) * G1)
            bound[pair_row, lines_in[pair_line]] = np.maximum(part_l, part_r)
    # a line that is zero at every node is zero: nothing to bound
    inverse = np.divide(1.0, allowed, out=np.zeros_like(allowed), where=allowed > 0.0)
    bound *= inverse[None, :]
    ratio_out[chosen] = bound.max(axis=1)
    return ratio_out


def _linear_moment(mesh, values: NDArray[np.float64], element: NDArray[np.int64]
                   ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """The linear moment M = α + β·(x − xa) of every line in each of ``element`` (repeats
    allowed; each distinct element is worked out once) from its exact end forces:
    α = Q_θ1, α + β·h = −Q_θ2."""
    distinct, where = np.unique(element, return_inverse=True)
    Q = np.matmul(mesh.element_k[distinct], values[distinct])  # (d, 4, n_lines)
    alpha = Q[:, 1]
    beta = (-Q[:, 3] - alpha) / mesh.lengths[distinct][:, None]
    return alpha[where], beta[where]


def influence_set(beam: Beam, effects: Iterable[Effect]) -> InfluenceSet:
    """Influence lines of many effects from one factorisation; all share the same knots
    (the structure's nodes and every section), the layout of ``scipy.interpolate.PPoly``.

    Sharing knots costs lines x sections; the envelope works on ``line_pieces`` instead.
    """
    pieces = line_pieces(beam, effects)
    length = beam.length
    tol = 1e-9 * length
    xc = pieces.nodes
    knots = np.unique(np.concatenate([xc, pieces.sections]))
    knots = knots[np.concatenate([[True], np.diff(knots) > tol])]
    knots[-1] = length
    n_el = len(xc) - 1
    n_lines = len(pieces)
    element = np.clip(np.searchsorted(xc, 0.5 * (knots[:-1] + knots[1:])) - 1, 0, n_el - 1)
    # which of its own pieces each line reads on each shared piece: the element, one
    # further along behind a line's own split
    which = np.broadcast_to(element[:, None], (len(element), n_lines)).copy()
    split = np.flatnonzero(pieces.n_pieces > n_el)
    if split.size:
        own = pieces.knots[split, pieces.split_at[split]]
        behind = knots[:-1, None] >= own[None, :] - tol
        which[:, split] += behind
    start = np.take_along_axis(pieces.knots.T, which, axis=0)  # (m, n)
    source = pieces.coefficients[np.arange(n_lines)[None, :], which].transpose(2, 0, 1)
    coefficients = _taylor_shift(source, knots[:-1, None] - start)
    node_knots = np.flatnonzero(np.isin(knots, xc))
    own_knots = np.full(n_lines, -1, dtype=np.int64)
    if split.size:
        own_knots[split] = np.argmin(np.abs(knots[None, :] - own[:, None]), axis=1)
    return InfluenceSet(knots, coefficients, pieces.effects, node_knots, own_knots, pieces)


def _condense_inner_sections(inner: list, beam: Beam, mesh, h: NDArray[np.float64]
                             ) -> tuple | None:
    """Adjoint loads of sections that fall inside elements, condensed to the element ends.

    Each section splits its element into two sub-elements meeting at node s with dofs
    (v_s, θ_s). The local adjoint load g on (v_a, θ_a, v_s, θ_s, v_b, θ_b) is condensed to
    g_ends − K_es K_ss⁻¹ g_s; after the solve, z_s = K_ss⁻¹ (g_s − K_se z_ends).
    """
    if not inner:
        return None
    lines = np.array([j for j, *_ in inner])
    elements = np.array([el for _, el, _, _ in inner])
    x = np.array([xs for _, _, xs, _ in inner])
    kinds = [e.kind for *_, e in inner]
    c = x - mesh.x[elements]
    # the exact stiffness of each sub-element (of its own part of a haunch)
    segment = mesh.element_segment[elements]
    k_left = stiffness_between(beam, segment, mesh.x[elements], x)
    k_right = stiffness_between(beam, segment, x, mesh.x[elements + 1])
    n = len(inner)
    k6 = np.zeros((n, 6, 6))
    k6[:, :4, :4] += k_left
    k6[:, 2:, 2:] += k_right
    g6 = np.zeros((n, 6))
    rows = np.zeros((n, 4))
    # which sub-element an effect is read from: −1 none, 0 the left one, 1 the right one.
    # Inside an element no point force acts at the section, so moment and shear read the same
    # from either side; the longer sub-element keeps the stiffness entries moderate however
    # close the section is to a node.
    sub = np.where(c <= 0.5 * h[elements], 1, 0)
    for i, kind in enumerate(kinds):
        if kind == "deflection":
            g6[i, 2], sub[i] = 1.0, -1
        elif kind == "rotation":
            g6[i, 3], sub[i] = 1.0, -1
        elif sub[i] == 1:
            rows[i] = _ROW_AT_LEFT_END[kind]
            g6[i, 2:6] = k_right[i] @ rows[i]
        else:
            rows[i] = _ROW_AT_RIGHT_END[kind]
            g6[i, 0:4] = k_left[i] @ rows[i]
    ends = [0, 1, 4, 5]
    rhs_local = np.concatenate([g6[:, 2:4, None], k6[:, 2:4][:, :, ends]], axis=2)  # (n, 2, 5)
    solved = np.linalg.solve(k6[:, 2:4, 2:4], rhs_local)
    loads = g6[:, ends] - np.einsum("nij,nj->ni", k6[:, ends, 2:4], solved[:, :, 0])
    dofs = mesh.element_dofs[elements]
    return lines, elements, dofs, loads, x, c, solved, rows, sub, k_left, k_right


def _inner_values(values: NDArray[np.float64], inner_data: tuple
                  ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """End values (n_inner, 4) of the sub-elements left and right of sections inside
    elements (the line's exact cubics there are their Hermite cubics)."""
    lines, elements, _, _, x, c, solved, rows, sub = inner_data[:9]
    z_end = values[elements, :, lines]  # (n, 4)
    z_s = solved[:, :, 0] - np.einsum("nij,nj->ni", solved[:, :, 1:], z_end)
    left = np.concatenate([z_end[:, :2], z_s], axis=1) - rows * (sub == 0)[:, None]
    right = np.concatenate([z_s, z_end[:, 2:]], axis=1) - rows * (sub == 1)[:, None]
    return left, right


def influence_batch(beam: Beam, kind: str, at: ArrayLike | None = None,
                    supports: ArrayLike | None = None, side: str | None = None) -> InfluenceSet:
    """Lines of one effect kind at many sections (``at=``) or supports (``supports=``)."""
    if kind in ("reaction", "support_moment"):
        chosen = range(len(beam.supports)) if supports is None else np.atleast_1d(supports)
        effects = [Effect(kind, support=int(k)) for k in chosen]
    else:
        effects = [Effect(kind, at=float(x), side=side) for x in np.atleast_1d(at)]
    return influence_set(beam, effects)
