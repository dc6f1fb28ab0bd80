"""Slow, obviously-correct references for the moving-load scan; none of them uses trundle's scan.

Twins of the compiled kernels in ``trundle.scan.kernels`` (plain Python, no numba):

- ``taylor_shift``: p(t + s0) by the binomial theorem, term by term;
- ``quadratic_roots``: real roots of a t² + b t + c in 50-digit arithmetic (mpmath);
- ``critical_points``: where the derivative of a polynomial vanishes, from ``numpy.roots``;
- ``plain_scan``: the whole scan of one load arrangement over one influence line: a loop over
  the pieces between breaks and over the loads, the response polynomial of each piece built by
  composing polynomials (``numpy.polynomial``), its extremes at the piece ends and at the
  critical points.

Brute force (no influence lines, no scan): ``brute_force_extremes`` moves the loads across the
beam on a fine grid of positions and solves the beam statically at every one, refines every
promising grid maximum between its neighbours with ``scipy.optimize.minimize_scalar``
(bounded), and evaluates exactly the positions where the response may kink or jump (a load or
a load end standing over a section, a hinge, a support or an end of the beam), taking the
one-sided limits there from equilibrium.

The static solve is ``ReferenceSolver``: a dense stiffness solve on a fixed mesh with
work-equivalent nodal loads (exact for Euler–Bernoulli elements), and equilibrium of the part
left of a section; it shares no code with trundle. It was written because ``beam.static`` once
made every load point a node, and the very short element next to a hinge, stiffness step,
spring or free end cost it digits; a brute force visits such positions all the time. The two
solvers are checked against each other in test_envelope_bruteforce.py.

Load arrangements are given in group coordinates u (u = 0 at the reference axle, u growing
backwards): a concentrated load at u stands at x = ξ − u, a uniform load (u0, u1, w) covers
ξ − u1 ≤ x ≤ ξ − u0 (either end may be infinite).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import mpmath
import numpy as np
from numpy.polynomial import Polynomial
from scipy.optimize import minimize_scalar

import trundle

# --- twins of the kernel helpers -------------------------------------------------------------


def taylor_shift(coef_high_first: list[float], s0: float) -> list[float]:
    """Coefficients (lowest power first) of p(t + s0), p given highest power first."""
    low_first = list(reversed(list(coef_high_first)))
    out = [0.0] * len(low_first)
    for k, c in enumerate(low_first):
        for i in range(k + 1):  # (t + s0)^k = Σ C(k, i) t^i s0^(k − i)
            out[i] += c * math.comb(k, i) * s0 ** (k - i)
    return out


def quadratic_roots(a: float, b: float, c: float) -> list[float]:
    """Real roots of a t² + b t + c = 0, each once, from 50-digit arithmetic; a linear
    equation when a = 0, nothing when a = b = 0."""
    with mpmath.workdps(50):
        A, B, C = mpmath.mpf(a), mpmath.mpf(b), mpmath.mpf(c)
        if A == 0:
            return [] if B == 0 else [float(-C / B)]
        disc = B * B - 4 * A * C
        if disc < 0:
            return []
        sq = mpmath.sqrt(disc)
        return sorted({float((-B - sq) / (2 * A)), float((-B + sq) / (2 * A))})


def critical_points(poly_low_first: list[float], width: float) -> list[float]:
    """Real points in (0, width) where the derivative of the polynomial vanishes."""
    p = Polynomial(poly_low_first).deriv()
    coefficients = np.trim_zeros(p.coef[::-1], "f")  # highest power first
    if coefficients.size <= 1:
        return []
    roots = np.roots(coefficients)
    scale = max(1.0, width)
    real = [float(r.real) for r in roots if abs(r.imag) <= 1e-9 * scale]
    return sorted(r for r in real if 0.0 < r < width)


# --- a plain scan of one line -----------------------------------------------------------------


@dataclass(frozen=True)
class Arrangement:
    """Loads in group coordinates: concentrated (u, P) and uniform (u0, u1, w)."""

    points: tuple[tuple[float, float], ...]
    uniform: tuple[tuple[float, float, float], ...] = ()

    def mirrored(self) -> Arrangement:
        return Arrangement(tuple((-u, P) for u, P in self.points),
                           tuple((-u1, -u0, w) for u0, u1, w in self.uniform))

    def offsets(self) -> list[float]:
        """Every finite offset where a load or a load end stands."""
        out = [u for u, _ in self.points]
        for u0, u1, _ in self.uniform:
            out += [u for u in (u0, u1) if math.isfinite(u)]
        return out


@dataclass
class PlainLine:
    """One influence line as plain Python lists: knots and cubic pieces (lowest power first)."""

    knots: list[float]
    pieces: list[list[float]]
    # a shear line's own section and the value of a unit load standing exactly on it (the
    # one place where the value at a point is neither one-sided limit at an end of the beam)
    own: tuple[float, float] | None = None
    running_pieces: list[list[float]] = field(init=False)  # ∫₀ˣ IL, quartic per piece

    def __post_init__(self) -> None:
        total = 0.0
        self.running_pieces = []
        for k, c in enumerate(self.pieces):
            integral = [total] + [c[i] / (i + 1) for i in range(len(c))]
            self.running_pieces.append(integral)
            h = self.knots[k + 1] - self.knots[k]
            total = sum(a * h**i for i, a in enumerate(integral))
        self.total = total

    @classmethod
    def from_ppoly(cls, knots: np.ndarray, coef_high_first: np.ndarray,
                   effect: trundle.Effect | None = None) -> PlainLine:
        line = cls([float(x) for x in knots],
                   [[float(v) for v in coef_high_first[::-1, k]]
                    for k in range(coef_high_first.shape[1])])
        if effect is not None and effect.kind == "shear":
            # V is the upward resultant of everything left of the cut: a load standing on
            # the section is right of the cut just left of it (reads as a load just right of
            # the section; at the right end of the beam nothing follows: the load just left
            # of it plus the unit load itself), left of the cut just right of it
            c, L = float(effect.at), line.length
            if effect.side == "left":
                value = line.ordinate(c, "left") + 1.0 if c >= L else line.ordinate(c, "right")
            else:
                value = line.ordinate(c, "right") - 1.0 if c <= 0.0 else line.ordinate(c, "left")
            line.own = (c, value)
        return line

    @property
    def length(self) -> float:
        return self.knots[-1]

    def _piece(self, x: float, side: str) -> int:
        for k in range(len(self.pieces)):
            a, b = self.knots[k], self.knots[k + 1]
            if (side == "right" and a <= x < b) or (side == "left" and a < x <= b):
                return k
        raise AssertionError("x is on the beam")

    def ordinate(self, x: float, side: str) -> float:
        """IL(x) as the one-sided limit; a load approaching an end from outside reads 0."""
        if side == "right" and not (0.0 <= x < self.length):
            return 0.0
        if side == "left" and not (0.0 < x <= self.length):
            return 0.0
        k = self._piece(x, side)
        s = x - self.knots[k]
        return sum(c * s**i for i, c in enumerate(self.pieces[k]))

    def point(self, x: float) -> float:
        """IL for a load standing exactly at x: on the beam at its ends (the limit from
        inside), the own value on a shear line's section, 0 off the beam."""
        tol = 1e-12 * max(1.0, self.length)
        if x < -tol or x > self.length + tol:
            return 0.0
        if self.own is not None and abs(x - self.own[0]) <= tol:
            return self.own[1]
        if x >= self.length - tol:
            return self.ordinate(self.length, "left")
        return self.ordinate(max(x, 0.0), "right")

    def running(self, x: float) -> float:
        """F(x) = ∫₀ˣ IL, 0 left of the beam and F(L) right of it."""
        if x <= 0.0:
            return 0.0
        if x >= self.length:
            return self.total
        k = self._piece(x, "right")
        s = x - self.knots[k]
        return sum(c * s**i for i, c in enumerate(self.running_pieces[k]))

    def response(self, loads: Arrangement, xi: float, side: float = 0.0) -> float:
        """The arrangement's effect with its reference point at ξ (limit from above for
        side > 0, from below for side < 0, every load where it stands for side 0)."""
        if side == 0:
            total = sum(P * self.point(xi - u) for u, P in loads.points)
        else:
            limit = "left" if side < 0 else "right"
            total = sum(P * self.ordinate(xi - u, limit) for u, P in loads.points)
        for u0, u1, w in loads.uniform:
            upper = self.total if u0 == -math.inf else self.running(xi - u0)
            lower = 0.0 if u1 == math.inf else self.running(xi - u1)
            total += w * (upper - lower)
        return total


def plain_scan(line: PlainLine, loads: Arrangement) -> tuple[float, float, float,
                                                            float, float, float]:
    """(max, ξ at max, side, min, ξ at min, side) of the arrangement's effect over every ξ.

    The empty beam counts (value 0, ξ NaN). Side +1: the limit as ξ approaches from above,
    −1 from below, 0 the exact position (an interior point, or a load standing exactly on an
    end of the beam, where neither limit sees it).
    """
    offsets = loads.offsets()
    L = line.length
    lo, hi = min(offsets), L + max(offsets)
    breaks = sorted({k + u for k in line.knots for u in offsets} | {lo, hi})
    breaks = [b for b in breaks if lo <= b <= hi]
    best_max = (0.0, math.nan, 0.0)
    best_min = (0.0, math.nan, 0.0)
    for b0, b1 in zip(breaks[:-1], breaks[1:], strict=True):
        width = b1 - b0
        if width <= 0.0:
            continue
        mid = 0.5 * (b0 + b1)
        t = Polynomial([0.0, 1.0])
        poly = Polynomial([0.0])
        for u, P in loads.points:
            x_mid = mid - u
            if 0.0 < x_mid < L:
                k = line._piece(x_mid, "right")
                poly = poly + P * Polynomial(line.pieces[k])(t + (b0 - u - line.knots[k]))
        for u0, u1, w in loads.uniform:
            for u, sign in ((u0, 1.0), (u1, -1.0)):
                if not math.isfinite(u):
                    poly = poly + (w * line.total if u == -math.inf else 0.0)
                    continue
                x_mid = mid - u
                if x_mid >= L:
                    poly = poly + sign * w * line.total
                elif x_mid > 0.0:
                    k = line._piece(x_mid, "right")
                    shifted = Polynomial(line.running_pieces[k])(t + (b0 - u - line.knots[k]))
                    poly = poly + sign * w * shifted
        candidates = [(poly(0.0), b0, 1.0), (poly(width), b1, -1.0)]
        candidates += [(poly(r), b0 + r, 0.0) for r in critical_points(list(poly.coef), width)]
        # a load standing exactly on an end of the beam: neither limit sees it there
        for b in (b0, b1):
            if any(abs(b - u - end) <= 1e-12 * max(1.0, L)
                   for u, _ in loads.points for end in (0.0, L)):
                candidates.append((line.response(loads, b, 0.0), b, 0.0))
        for value, xi, side in candidates:
            if value > best_max[0]:
                best_max = (float(value), xi, side)
            if value < best_min[0]:
                best_min = (float(value), xi, side)
    return (*best_max, *best_min)


# --- an exact static reference without tiny elements -------------------------------------------


class ReferenceSolver:
    """Static solve of a beam under concentrated and uniform loads, by the stiffness method on
    a fixed mesh (nodes at the supports, hinges, EI steps and the sections only) with
    work-equivalent nodal loads, which give exact nodal displacements for Euler–Bernoulli
    elements of constant EI. Loads never become nodes, so a load a hair's breadth from a node
    costs no accuracy. Reactions come from the nodal equilibrium K·u − F; shear and moment at a
    section from equilibrium of everything left of it; deflection from the section's node.

    Stepped EI only. Shares no code with trundle (only the beam's data are read).
    """

    def __init__(self, beam: trundle.Beam, sections: list[float] = ()):
        self.beam = beam
        L = beam.length
        points = [*beam.support_positions, *beam.hinges, *sections]
        for seg in beam.stiffness_segments:
            if seg.EI0 != seg.EI1:
                raise ValueError("the reference handles stepped (piecewise constant) EI only")
            points += [seg.x0, seg.x1]
        nodes: list[float] = []
        for p in sorted(points):
            if not nodes or p - nodes[-1] > 1e-9 * L:
                nodes.append(float(p))
        self.nodes = np.asarray(nodes)
        n = len(nodes)
        hinge_nodes = {int(np.argmin(np.abs(self.nodes - h))) for h in beam.hinges}
        self.v, self.th_left, self.th_right = [], [], []
        d = 0
        for i in range(n):
            self.v.append(d)
            self.th_left.append(d + 1)
            self.th_right.append(d + 2 if i in hinge_nodes else d + 1)
            d = self.th_right[-1] + 1
        self.n_dof = d
        self.h = np.diff(self.nodes)
        self.element_dofs = [[self.v[e], self.th_right[e], self.v[e + 1], self.th_left[e + 1]]
                             for e in range(n - 1)]
        K = np.zeros((d, d))
        for e in range(n - 1):
            mid = 0.5 * (self.nodes[e] + self.nodes[e + 1])
            EI = next(s.EI0 for s in beam.stiffness_segments if s.x0 <= mid <= s.x1)
            h = self.h[e]
            k = EI / h**3 * np.array([[12.0, 6 * h, -12.0, 6 * h],
                                      [6 * h, 4 * h * h, -6 * h, 2 * h * h],
                                      [-12.0, -6 * h, 12.0, -6 * h],
                                      [6 * h, 2 * h * h, -6 * h, 4 * h * h]])
            K[np.ix_(self.element_dofs[e], self.element_dofs[e])] += k
        held = np.zeros(d, dtype=bool)
        self.support_nodes = [int(np.argmin(np.abs(self.nodes - x)))
                              for x in beam.support_positions]
        for s, i in zip(beam.supports, self.support_nodes, strict=True):
            if s == "pin":
                held[self.v[i]] = True
            elif s == "fixed":
                held[[self.v[i], self.th_left[i], self.th_right[i]]] = True
            elif isinstance(s, trundle.Spring):
                K[self.v[i], self.v[i]] += s.k
                if s.kr is not None:
                    K[self.th_right[i], self.th_right[i]] += s.kr
        self.K = K
        self.free = ~held
        self.K_ff_inv = np.linalg.inv(K[np.ix_(self.free, self.free)])
        # Hermite shape functions in the local coordinate s and their antiderivatives, kept
        # as coefficient lists (lowest power first): the brute-force references solve
        # thousands of times, and numpy's Polynomial call costs more than the solve
        self.shapes = []
        for h in self.h:
            t = Polynomial([0.0, 1.0 / h])
            N = [1 - 3 * t**2 + 2 * t**3, h * (t - 2 * t**2 + t**3), 3 * t**2 - 2 * t**3,
                 h * (-(t**2) + t**3)]
            self.shapes.append(([[float(c) for c in f.coef] for f in N],
                                [[float(c) for c in f.integ().coef] for f in N]))

    def _element(self, x: float) -> int:
        return int(min(max(np.searchsorted(self.nodes, x, side="right") - 1, 0),
                       len(self.h) - 1))

    def solve(self, points: list[tuple[float, float]],
              uniform: list[tuple[float, float, float]] = ()) -> ReferenceResult:
        """Concentrated loads (x, P) and uniform loads (x0, x1, w), all on the beam."""
        F = np.zeros(self.n_dof)
        for x, P in points:
            e = self._element(x)
            N, _ = self.shapes[e]
            s = x - self.nodes[e]
            F[self.element_dofs[e]] += P * np.array([_horner_low(f, s) for f in N])
        for x0, x1, w in uniform:
            for e in range(len(self.h)):
                a = max(x0, self.nodes[e]) - self.nodes[e]
                b = min(x1, self.nodes[e + 1]) - self.nodes[e]
                if b > a:
                    _, I = self.shapes[e]
                    F[self.element_dofs[e]] += w * np.array([_horner_low(f, b)
                                                             - _horner_low(f, a) for f in I])
        u = np.zeros(self.n_dof)
        u[self.free] = self.K_ff_inv @ F[self.free]
        restraint = self.K @ u - F  # force each restraint puts on its node (down / clockwise)
        n_s = len(self.beam.supports)
        reactions, couples = np.zeros(n_s), np.zeros(n_s)
        for k, (s, i) in enumerate(zip(self.beam.supports, self.support_nodes, strict=True)):
            if s in ("pin", "fixed"):
                reactions[k] = -restraint[self.v[i]]
            if s == "fixed":
                couples[k] = -restraint[self.th_right[i]]
            if isinstance(s, trundle.Spring):
                reactions[k] = s.k * u[self.v[i]]  # a compressed spring pushes up
                if s.kr is not None:
                    couples[k] = s.kr * u[self.th_right[i]]  # and resists a clockwise turn
        return ReferenceResult(self, list(points), list(uniform), u, reactions, couples)


def _horner_low(coef_low_first: list[float], s: float) -> float:
    """A polynomial (lowest power first) at s."""
    value = 0.0
    for c in reversed(coef_low_first):
        value = value * s + c
    return value


@dataclass
class ReferenceResult:
    solver: ReferenceSolver
    points: list[tuple[float, float]]
    uniform: list[tuple[float, float, float]]
    u: np.ndarray
    reactions: np.ndarray  # upward
    couples: np.ndarray  # counter-clockwise

    def shear(self, x: float, side: str) -> float:
        """Upward resultant of everything left of the section; a support or an axle exactly at
        x counts for side="right" only."""
        L = self.solver.beam.length
        if (side == "left" and x <= 0.0) or (side == "right" and x >= L):
            return 0.0
        left = (lambda p: p < x) if side == "left" else (lambda p: p <= x)
        total = sum(R for R, p in zip(self.reactions, self.solver.beam.support_positions,
                                      strict=True) if left(p))
        total -= sum(P for p, P in self.points if left(p))
        total -= sum(w * (min(x1, x) - x0) for x0, x1, w in self.uniform if x0 < x)
        return float(total)

    def moment(self, x: float) -> float:
        """Sagging moment: clockwise moments about the section of everything left of it."""
        xs = self.solver.beam.support_positions
        m = sum(R * (x - p) - C for R, C, p in zip(self.reactions, self.couples, xs,
                                                   strict=True) if p <= x)
        m -= sum(P * (x - p) for p, P in self.points if p < x)
        for x0, x1, w in self.uniform:
            if x0 < x:
                b = min(x1, x)
                m -= w * (b - x0) * (x - 0.5 * (x0 + b))
        return float(m)

    def deflection(self, x: float) -> float:
        i = int(np.argmin(np.abs(self.solver.nodes - x)))
        assert abs(self.solver.nodes[i] - x) <= 1e-9 * self.solver.beam.length, "not a node"
        return float(self.u[self.solver.v[i]])

    def effect(self, e: trundle.Effect) -> float:
        if e.kind == "reaction":
            return float(self.reactions[e.support])
        if e.kind == "support_moment":
            return float(self.couples[e.support])
        if e.kind == "moment":
            return self.moment(e.at)
        if e.kind == "shear":
            return self.shear(e.at, e.side)
        if e.kind == "deflection":
            return self.deflection(e.at)
        raise ValueError(e.kind)


# --- brute force: one static solve per load position ---------------------------------------------


def beam_nodes(beam: trundle.Beam) -> np.ndarray:
    """Supports, hinges and stiffness steps."""
    pts = [*beam.support_positions, *beam.hinges]
    for seg in beam.stiffness_segments:
        pts += [seg.x0, seg.x1]
    return np.unique(np.asarray(pts, dtype=float))


def static_effects(solver: ReferenceSolver, effects: list[trundle.Effect],
                   axles: list[tuple[float, float]],
                   uniform: list[tuple[float, float, float]] = (),
                   limit: int = 0) -> np.ndarray:
    """Every effect under axles (x, P) and uniform loads (x0, x1, w) from one static solve;
    the parts of the loads off the beam are dropped.

    ``limit`` = +1 / −1 gives the one-sided limit as the whole arrangement approaches its
    position from the right / left (ξ from above / below). It matters only for an axle exactly
    at an end of the beam (it is on the beam in the limit from inside) and for an axle exactly
    at a shear section (left of the section in the limit from below, right of it from above).
    """
    L = solver.beam.length
    exact = 1e-12 * L
    on_beam: list[tuple[float, float]] = []
    marks = [0.0, L, *(float(e.at) for e in effects if e.at is not None)]
    for x, P in axles:
        for mark in marks:  # an axle put on a mark stands exactly there, not a rounding off it
            if abs(x - mark) <= exact:
                x = mark
        if x < 0.0 or x > L:
            continue
        if (x == 0.0 and limit < 0) or (x == L and limit > 0):
            continue  # just off the beam in this limit
        on_beam.append((x, P))
    loaded = [(max(x0, 0.0), min(x1, L), w) for x0, x1, w in uniform]
    res = solver.solve(on_beam, [(a, b, w) for a, b, w in loaded if b > a])
    values = np.empty(len(effects))
    for j, e in enumerate(effects):
        values[j] = res.effect(e)
        if e.kind == "shear" and limit:
            # the reference counts an axle exactly at the section on the right side only;
            # from below (limit −1) it stands left of the section, from above right of it
            for x, P in on_beam:
                if x == e.at:
                    if e.side == "left" and limit < 0:
                        values[j] -= P
                    elif e.side == "right" and limit > 0:
                        values[j] += P
    return values


class BruteForce:
    """Brute-force extremes of some effects under one arrangement moving across the beam.

    Grid: ``steps`` positions per shortest span. Every grid maximum within ``refine_within``
    of the effect's largest grid value is refined between its neighbours (bounded Brent); the
    positions where the response may kink or jump are evaluated exactly from both sides.
    """

    def __init__(self, beam: trundle.Beam, effects: list[trundle.Effect], steps: int = 400,
                 refine_within: float = 1e-3):
        self.beam = beam
        self.effects = list(effects)
        sections = sorted({float(e.at) for e in self.effects if e.at is not None})
        self.solver = ReferenceSolver(beam, sections)
        self.step = min(beam.spans) / steps
        self.refine_within = refine_within
        self.evaluations = 0

    def values(self, loads: Arrangement, xi: float, limit: int = 0) -> np.ndarray:
        self.evaluations += 1
        axles = [(xi - u, P) for u, P in loads.points]
        uniform = [(xi - u1, xi - u0, w) for u0, u1, w in loads.uniform]
        return static_effects(self.solver, self.effects, axles, uniform, limit)

    def special_positions(self, loads: Arrangement) -> list[float]:
        """ξ where a load or a load end stands over a section, hinge, support, stiffness step
        or beam end: the only places where the response can kink or jump."""
        points = set(beam_nodes(self.beam).tolist())
        points |= {float(e.at) for e in self.effects if e.at is not None}
        return sorted({p + u for p in points for u in loads.offsets()})

    def extremes(self, loads: Arrangement, reversible: bool = True
                 ) -> tuple[np.ndarray, np.ndarray]:
        """(max, min) of every effect over all positions (both directions if reversible);
        the empty beam counts, so max ≥ 0 ≥ min."""
        n = len(self.effects)
        best_max, best_min = np.zeros(n), np.zeros(n)
        for arrangement in ([loads, loads.mirrored()] if reversible else [loads]):
            high, low = self._one_direction(arrangement)
            best_max = np.maximum(best_max, high)
            best_min = np.minimum(best_min, low)
        return best_max, best_min

    def _one_direction(self, loads: Arrangement) -> tuple[np.ndarray, np.ndarray]:
        L = self.beam.length
        offsets = loads.offsets()
        lo, hi = min(offsets), L + max(offsets)
        grid = np.linspace(lo, hi, int(math.ceil((hi - lo) / self.step)) + 1)
        # the grid's ends put a load exactly on an end of the beam: take the limit from inside
        # there (one-sided limits are what counts at a jump, as at the special positions)
        limits = np.zeros(len(grid), dtype=int)
        limits[0], limits[-1] = 1, -1
        table = np.array([self.values(loads, xi, int(limit))
                          for xi, limit in zip(grid, limits, strict=True)])
        best_max = np.maximum(table.max(axis=0), 0.0)
        best_min = np.minimum(table.min(axis=0), 0.0)
        for xi in self.special_positions(loads):
            for limit in (1, -1):
                v = self.values(loads, xi, limit)
                best_max = np.maximum(best_max, v)
                best_min = np.minimum(best_min, v)
        # measure closeness against the largest value of the effect's kind, so a line that is
        # zero up to rounding (a part the load cannot reach) is not refined peak by peak
        kinds = np.array([e.kind for e in self.effects])
        size = np.array([np.abs(table[:, kinds == k]).max() for k in kinds])
        for j in range(len(self.effects)):
            for sign in (1.0, -1.0):
                c = sign * table[:, j]
                peaks = np.flatnonzero((c[1:-1] >= c[:-2]) & (c[1:-1] >= c[2:])
                                       & ((c[1:-1] > c[:-2]) | (c[1:-1] > c[2:]))) + 1
                # only peaks that can beat the empty beam (0) and the best grid value
                promising = (c[peaks] >= c.max() - self.refine_within * size[j]) & (
                    c[peaks] > 1e-9 * size[j])
                for k in peaks[promising]:
                    found = self._refine(loads, j, sign, grid[k - 1], grid[k + 1])
                    best_max = np.maximum(best_max, found)
                    best_min = np.minimum(best_min, found)
        return best_max, best_min

    def _refine(self, loads: Arrangement, j: int, sign: float, a: float, b: float
                ) -> np.ndarray:
        """Bounded search for the extreme of effect j between two grid neighbours; returns the
        values of every effect at the best position found."""
        seen: list[np.ndarray] = []

        def objective(xi: float) -> float:
            v = self.values(loads, xi)
            seen.append(v)
            return -sign * v[j]

        minimize_scalar(objective, bounds=(a, b), method="bounded",
                        options={"xatol": 1e-10 * self.beam.length})
        return seen[int(np.argmax([sign * v[j] for v in seen]))]


def brute_force_extremes(beam: trundle.Beam, effects: list[trundle.Effect], loads: Arrangement,
                         reversible: bool = True, steps: int = 400
                         ) -> tuple[np.ndarray, np.ndarray]:
    """(max, min) of each effect over every position of the arrangement, by static solves."""
    return BruteForce(beam, effects, steps=steps).extremes(loads, reversible)


# --- random test cases ---------------------------------------------------------------------------


def random_sections(rng: np.random.Generator, beam: trundle.Beam, count: int) -> list[float]:
    """Sections spread over the beam, clear of its nodes and of one another."""
    taken = list(beam_nodes(beam))
    out: list[float] = []
    while len(out) < count:
        x = float(np.round(rng.uniform(0.0, beam.length), 3))
        if all(abs(x - t) >= 0.3 for t in taken + out):
            out.append(x)
    return sorted(out)


def random_axles(rng: np.random.Generator, beam: trundle.Beam, low: int = 2, high: int = 5
                 ) -> tuple[list[float], list[float]]:
    """(loads, spacings) of a random vehicle of ``low``–``high`` axles."""
    n = int(rng.integers(low, high + 1))
    loads = np.round(rng.uniform(0.5, 3.0, n), 3).tolist()
    spacings = np.round(rng.uniform(0.05, 0.3, n - 1) * beam.length, 3).tolist()
    return loads, spacings


def effects_at(beam: trundle.Beam, sections: list[float],
               kinds: tuple[str, ...] = ("moment", "shear", "deflection")
               ) -> list[trundle.Effect]:
    """Line effects at the sections (both sides of shear) and every reaction and couple."""
    E = trundle.Effect
    out: list[trundle.Effect] = []
    for x in sections:
        for kind in kinds:
            if kind == "shear":
                out += [E("shear", at=x, side="left"), E("shear", at=x, side="right")]
            else:
                out.append(E(kind, at=x))
    for k, s in enumerate(beam.supports):
        if s != "free":
            out.append(E("reaction", support=k))
        if s == "fixed" or (isinstance(s, trundle.Spring) and s.kr is not None):
            out.append(E("support_moment", support=k))
    return out


# --- the exact search of searched spacings and gaps: twins and a dense-grid reference --------


def _plain_read(knots, coef_high_first, x: float) -> float:
    """A piecewise polynomial (highest power first per piece) at x strictly inside a piece."""
    m = len(knots) - 1
    k = min(max(int(np.searchsorted(knots, x, side="right")) - 1, 0), m - 1)
    return float(np.polyval(coef_high_first[k], x - knots[k]))


def _plain_block_value(knots, coef, running, end_value, weights, kinds, offsets,
                       xi: float) -> float:
    """The block's response at ξ (no load on a break): concentrated loads read IL (zero off
    the beam), uniform-load ends read F(x) = ∫₀ˣ IL (0 left of the beam, F(L) right of it)."""
    length = knots[-1]
    total = 0.0
    for w, kind, d in zip(weights, kinds, offsets, strict=True):
        x = xi - d
        if kind == 0:
            total += w * (_plain_read(knots, coef, x) if 0.0 < x < length else 0.0)
        else:
            total += w * (0.0 if x <= 0.0 else end_value if x >= length
                          else _plain_read(knots, running, x))
    return total


def plain_block_candidates(knots, coef, running, end_value, weights, kinds, offsets,
                           confined: bool, scale: float = 1.0, standing=None
                           ) -> list[tuple[float, float, float]]:
    """Twin of ``trundle.scan.candidates.block_candidates``: (position, value, side) of every
    piece end (both one-sided limits), every interior critical point and, unless confined, the
    stretches wholly off the beam. Each piece's polynomial is recovered by interpolating the
    response at five interior points (exact for degree ≤ 4), its critical points by
    ``numpy.roots`` of the derivative; a piece whose values differ by less than 1e-10 ·
    ``scale`` is constant (no critical point).

    With ``standing`` (a function of concentrated loads [(x, P)] giving their effect with
    every load standing exactly where it is, e.g. a static solve), also every position where
    a concentrated load stands exactly on an end of the beam (side 0; see
    ``plain_end_positions``): there neither one-sided limit sees that load (from outside it
    is off the beam; from inside it is not yet on the end, where a shear line of a section at
    a free tip jumps). Such a position is valued as the loads stand: the concentrated ones by
    ``standing``, the uniform ones' ends by F(x) = ∫₀ˣ IL (continuous, so no side matters)."""
    length = float(knots[-1])
    offsets = [float(d) for d in offsets]
    lo, hi = min(offsets), max(offsets) + length
    points = [d for d, kind in zip(offsets, kinds, strict=True) if kind == 0]
    restricted = confined and bool(points)
    if restricted:
        lo, hi = max(points), length + min(points)
        if not lo < hi:
            return []
    breaks = sorted({float(k) + d for k in knots for d in offsets} | {lo, hi})
    breaks = [b for b in breaks if lo <= b <= hi]
    out = [] if restricted else [(lo, 0.0, -1.0)]
    for a, b in zip(breaks[:-1], breaks[1:], strict=True):
        width = b - a
        if width <= 0.0:
            continue
        if width <= 1e-9 * length:
            # two breaks a rounding step apart (an axle meets a knot as another meets the
            # next one): a fit over so short a piece is noise; the response is continuous
            # inside it, so its middle value holds at both ends
            v = _plain_block_value(knots, coef, running, end_value, weights, kinds, offsets,
                                   a + 0.5 * width)
            out += [(a, v, 1.0), (b, v, -1.0)]
            continue
        t = 0.5 * width * (1.0 - np.cos(np.pi * (np.arange(5) + 0.5) / 5))
        y = [_plain_block_value(knots, coef, running, end_value, weights, kinds, offsets,
                                a + ti) for ti in t]
        poly = Polynomial.fit(t, y, 4, domain=[0.0, width], window=[0.0, width])
        out.append((a, float(poly(0.0)), 1.0))
        flat = float(np.ptp(y)) <= 1e-10 * scale
        for r in ([] if flat else poly.deriv().roots()):
            if abs(r.imag) <= 1e-9 * width and 0.0 < r.real < width:
                out.append((a + float(r.real), float(poly(r.real)), 0.0))
        out.append((b, float(poly(width)), -1.0))
    if standing is not None:
        for xi in plain_end_positions(length, offsets, kinds, lo, hi):
            loads = [(xi - d, w) for w, kind, d in zip(weights, kinds, offsets, strict=True)
                     if kind == 0]
            value = standing(loads)
            for w, kind, d in zip(weights, kinds, offsets, strict=True):
                if kind != 0:
                    x = xi - d
                    value += w * (0.0 if x <= 0.0 else end_value if x >= length
                                  else _plain_read(knots, running, x))
            out.append((xi, value, 0.0))
    if not restricted:
        beyond = sum(w * end_value for w, kind in zip(weights, kinds, strict=True) if kind != 0)
        out.append((hi, beyond, 1.0))
    return out


def plain_end_positions(length: float, offsets, kinds, lo: float, hi: float) -> list[float]:
    """Every reference position in [lo, hi] where a concentrated load (kind 0, at ``offset``
    behind the reference point) stands exactly on an end of the beam (x = 0 or x = length),
    each once."""
    found: list[float] = []
    for d, kind in zip(offsets, kinds, strict=True):
        if kind != 0:
            continue
        for end in (0.0, length):
            xi = float(d) + end
            if lo - 1e-12 * length <= xi <= hi + 1e-12 * length and not any(
                    abs(xi - f) <= 1e-12 * length for f in found):
                found.append(xi)
    return sorted(found)


def plain_chain_maximum(blocks: list[list[tuple[float, float]]], shifts: list[float],
                        ranges: list[tuple[float, float]], margin: float) -> float:
    """Twin of ``trundle.scan.candidates.chain_maximum``: every combination of one candidate
    (position, value) per block, kept when each link pos_b − shift_b − pos_{b+1} lies strictly
    inside its range (by ``margin``); the largest sum (−inf if none)."""
    import itertools

    best = -math.inf
    for choice in itertools.product(*blocks):
        ok = all(lo + margin <= choice[b][0] - shifts[b] - choice[b + 1][0] <= hi - margin
                 for b, (lo, hi) in enumerate(ranges))
        if ok:
            best = max(best, sum(v for _, v in choice))
    return best


def _frozen_vehicle(load, values):
    """The vehicle or train with every searched value fixed at ``values``."""
    values = list(values)
    if isinstance(load, trundle.Vehicle):
        spacings = [values.pop(0) if isinstance(s, tuple) else s for s in load.spacings]
        return trundle.Vehicle(loads=load.loads, spacings=spacings, reversible=load.reversible,
                               confined=load.confined)
    vehicles, gaps = [], []
    for i, v in enumerate(load.vehicles):
        n = len(v.parameters())
        vehicles.append(_frozen_vehicle(v, values[:n]))
        values = values[n:]
        if i < len(load.gaps):
            gap = load.gaps[i]
            gaps.append(values.pop(0) if isinstance(gap, tuple) else gap)
    return trundle.Train(vehicles=vehicles, gaps=gaps, ahead=load.ahead, behind=load.behind,
                         reversible=load.reversible, confined=load.confined)


def fixed_spacing_extreme(beam, load, values, section: float, kind: str = "moment",
                          which: str = "max") -> float:
    """trundle's exact fixed-spacing envelope of one effect at one section (0, the empty
    beam, where a confined load with these spacings cannot stand on the beam)."""
    try:
        e = trundle.envelope(beam, [_frozen_vehicle(load, values)], sections=[section],
                             effects=(kind,))
    except trundle.ModelError as error:
        if "cannot stand on the beam" not in str(error):
            raise
        return 0.0
    return float((e.max(kind) if which == "max" else e.min(kind))[0])


def dense_grid_search(beam, load, section: float, kind: str = "moment", which: str = "max",
                      per_dimension: int = 41, refine: int = 3) -> float:
    """Reference for a searched envelope: the exact fixed-spacing envelope on a fine grid of
    the searched values (every grid point), then a local bounded search, one dimension at a
    time, around the best few grid points. A lower bound of the true extreme."""
    import itertools

    params = load.parameters()
    axes = [np.linspace(p.low, p.high, per_dimension) for p in params]
    sign = 1.0 if which == "max" else -1.0
    scored = []
    for values in itertools.product(*axes):
        scored.append((sign * fixed_spacing_extreme(beam, load, values, section, kind, which),
                       values))
    scored.sort(key=lambda item: -item[0])
    best = scored[0][0]
    for _, values in scored[:refine]:
        values = list(values)
        for k, p in enumerate(params):
            step = (p.high - p.low) / (per_dimension - 1)

            def objective(v: float, k: int = k, values: list = values) -> float:
                trial = list(values)
                trial[k] = v
                return -sign * fixed_spacing_extreme(beam, load, trial, section, kind, which)

            res = minimize_scalar(objective, bounds=(max(p.low, values[k] - step),
                                                     min(p.high, values[k] + step)),
                                  method="bounded", options={"xatol": 1e-9 * (p.high - p.low)})
            if -res.fun > best:
                best = -res.fun
                values[k] = float(res.x)
    return sign * best


def plain_merge_directions(scans: list[np.ndarray], directions: list[int]
                           ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Twin of the envelope's merge of both directions (``analysis.envelope.merge_scans``):
    each direction's (n, 6) scan offered in turn to the empty beam (value 0, ξ NaN); a NaN ξ
    is never taken, a tie keeps the earlier one."""
    n = scans[0].shape[0]
    value = np.zeros((2, n))
    xi = np.full((2, n), np.nan)
    side = np.zeros((2, n), dtype=np.int64)
    direction = np.zeros((2, n), dtype=np.int64)
    for scan, d in zip(scans, directions, strict=True):
        for j in range(n):
            for w, col in ((0, 0), (1, 3)):
                v, x = scan[j, col], scan[j, col + 1]
                if math.isnan(x):
                    continue
                if (v > value[w, j]) if w == 0 else (v < value[w, j]):
                    value[w, j], xi[w, j] = v, x
                    side[w, j], direction[w, j] = int(scan[j, col + 2]), d
    return value, xi, side, direction
