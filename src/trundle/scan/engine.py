"""Run the compiled scan over a batch of influence lines for one arrangement of loads.

A *term group* describes one rigid arrangement of loads in group coordinates u (u = 0 at the
reference axle, u growing backwards, so a load at u stands at x = ξ − u). The engine turns it
into the break list and the per-piece lookups the kernel needs, calls the kernel, and offers an
exact evaluation of the group's response at a given ξ for concurrent effects.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np
from numpy.typing import NDArray
from scipy.interpolate import PPoly

from trundle.core.influence import InfluenceSet, _eval_sided
from trundle.scan.kernels import KIND_POINT, KIND_RUNNING_INTEGRAL, scan_rows


@dataclass(frozen=True, eq=False)
class LineBatch:
    """Influence lines prepared for scanning: cubics, their running integrals, shared knots.

    Fields
    ------
    knots : (m + 1,) shared breakpoints [length]
    coef : (4, m, n) cubic coefficients, highest power first
    running : (5, m, n) quartic coefficients of F(x) = ∫₀ˣ IL
    running_end : (n,) F at the right end of the beam
    prev_node, next_node, own : where each line really breaks (see scan_rows_parallel);
        None: at every knot
    """

    knots: NDArray[np.float64]
    coef: NDArray[np.float64]
    running: NDArray[np.float64]
    running_end: NDArray[np.float64]
    prev_node: NDArray[np.int64] | None = None
    next_node: NDArray[np.int64] | None = None
    own: NDArray[np.int64] | None = None

    @classmethod
    def from_set(cls, lines: InfluenceSet) -> LineBatch:
        knots = lines.knots
        c = lines.coefficients
        h = np.diff(knots)
        running = np.zeros((5, *c.shape[1:]))
        running[0] = c[0] / 4.0
        running[1] = c[1] / 3.0
        running[2] = c[2] / 2.0
        running[3] = c[3]
        piece_integrals = (((running[0] * h[:, None] + running[1]) * h[:, None] + running[2])
                           * h[:, None] + running[3]) * h[:, None]
        cumulative = np.cumsum(piece_integrals, axis=0)
        running[4, 1:] = cumulative[:-1]
        prev_node = next_node = own = None
        if lines.node_knots is not None:
            is_node = np.zeros(len(knots), dtype=bool)
            is_node[lines.node_knots] = True
            is_node[[0, -1]] = True
            nodes = np.flatnonzero(is_node)
            prev_node = nodes[np.searchsorted(nodes, np.arange(len(knots)), side="right") - 1]
            after = np.searchsorted(nodes, np.arange(len(knots)), side="right")
            next_node = np.where(after < len(nodes), nodes[np.minimum(after, len(nodes) - 1)],
                                 len(knots) - 1).astype(np.int64)
            own = np.ascontiguousarray(lines.own_knots, dtype=np.int64)
        return cls(knots, np.ascontiguousarray(c), np.ascontiguousarray(running),
                   np.ascontiguousarray(cumulative[-1]), prev_node, next_node, own)

    def subset(self, lines: NDArray[np.int64]) -> LineBatch:
        """The same batch restricted to some lines."""
        return LineBatch(self.knots, np.ascontiguousarray(self.coef[:, :, lines]),
                         np.ascontiguousarray(self.running[:, :, lines]),
                         np.ascontiguousarray(self.running_end[lines]), self.prev_node,
                         self.next_node, None if self.own is None
                         else np.ascontiguousarray(self.own[lines]))

    @property
    def n_lines(self) -> int:
        return self.coef.shape[2]

    @property
    def length(self) -> float:
        return float(self.knots[-1])

    def running_at(self, x: NDArray[np.float64]) -> NDArray[np.float64]:
        """F(x) for every line, (len(x), n); F = 0 left of the beam and F(L) right of it."""
        x = np.asarray(x, dtype=float)
        idx = np.clip(np.searchsorted(self.knots, x, side="right") - 1, 0, len(self.knots) - 2)
        s = np.clip(x, 0.0, self.length) - self.knots[idx]
        out = np.zeros((len(x), self.n_lines))
        for power in range(5):
            out = out * s[:, None] + self.running[power, idx]
        out[x <= 0.0] = 0.0
        out[x >= self.length] = self.running_end
        return out

    def ordinates(self, x: NDArray[np.float64], side: str) -> NDArray[np.float64]:
        """IL(x) for every line, (len(x), n), as the one-sided limit from ``side``.

        A load approaching an end of the beam from outside reads nothing: the left-hand limit
        is zero at x ≤ 0 and the right-hand limit zero at x ≥ L.
        """
        x = np.asarray(x, dtype=float)
        # a load placed at ξ − u may miss a knot by rounding (0.45 − 0.15 ≠ 0.3); a one-sided
        # limit must then be read at the knot itself, or it reads the other side of a jump
        nearest = np.clip(np.searchsorted(self.knots, x), 1, len(self.knots) - 1)
        nearest = np.where(np.abs(self.knots[nearest - 1] - x) < np.abs(self.knots[nearest] - x),
                           nearest - 1, nearest)
        close = np.abs(self.knots[nearest] - x) <= 1e-12 * max(1.0, self.length)
        x = np.where(close, self.knots[nearest], x)
        out = _eval_sided(self._ppoly, x, side)
        if side == "left":
            out[(x <= 0.0) | (x > self.length)] = 0.0
        else:
            out[(x < 0.0) | (x >= self.length)] = 0.0
        return out

    @cached_property
    def _ppoly(self) -> PPoly:
        return PPoly.construct_fast(self.coef, self.knots)


@dataclass(frozen=True)
class TermGroup:
    """A rigid arrangement of loads in group coordinates (u grows backwards).

    Fields
    ------
    point_u, point_P : positions [length] and values [force] of concentrated loads
    uniform : tuple of (u_start, u_end, w): uniform loads [force/length] over
        u_start ≤ u ≤ u_end; either end may be ±inf (unlimited)
    confined : the group only stands with every concentrated load on the beam (a crane
        between its end stops), instead of entering and leaving it
    """

    point_u: tuple[float, ...]
    point_P: tuple[float, ...]
    uniform: tuple[tuple[float, float, float], ...] = ()
    confined: bool = False

    def mirrored(self) -> TermGroup:
        """The same group running the other way."""
        return TermGroup(tuple(-u for u in self.point_u), self.point_P,
                         tuple((-b, -a, w) for a, b, w in self.uniform), self.confined)

    def terms(self) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.int64], float]:
        """(weights, offsets, kinds, weight of F(L) that never moves)."""
        weights = list(self.point_P)
        offsets = list(self.point_u)
        kinds = [KIND_POINT] * len(weights)
        constant = 0.0
        for a, b, w in self.uniform:
            # the load covers x from ξ − b to ξ − a: w·(F(ξ − a) − F(ξ − b))
            if np.isneginf(a):
                constant += w
            else:
                weights.append(w)
                offsets.append(a)
                kinds.append(KIND_RUNNING_INTEGRAL)
            if not np.isposinf(b):
                weights.append(-w)
                offsets.append(b)
                kinds.append(KIND_RUNNING_INTEGRAL)
        return (np.asarray(weights, dtype=float), np.asarray(offsets, dtype=float),
                np.asarray(kinds, dtype=np.int64), constant)

    @property
    def has_uniform(self) -> bool:
        return bool(self.uniform)


def scan_group(batch: LineBatch, group: TermGroup) -> NDArray[np.float64]:
    """(n_lines, 6): max, ξ at max, side at max, min, ξ at min, side at min.

    ξ is the position of the group's u = 0 point. Side +1 means the extreme is the limit as ξ
    approaches from above (the loads stand just right of a jump), −1 from below, 0 exact.
    When the empty beam governs, the value is 0 and ξ is NaN.
    """
    weights, offsets, kinds, constant = group.terms()
    if weights.size == 0:
        out = np.zeros((batch.n_lines, 6))
        out[:, [1, 4]] = np.nan
        out[:, 0] = np.maximum(constant * batch.running_end, 0.0)
        out[:, 3] = np.minimum(constant * batch.running_end, 0.0)
        return out
    return scan_arrangements(batch, weights, kinds, offsets[None, :],
                             np.arange(batch.n_lines), constant, group.confined)


def scan_arrangements(batch: LineBatch, weights: NDArray[np.float64], kinds: NDArray[np.int64],
                      offsets: NDArray[np.float64], lines: NDArray[np.int64],
                      constant: float = 0.0, confined: bool = False) -> NDArray[np.float64]:
    """One row per (line, arrangement): ``offsets`` (n_rows or 1, n_terms), ``lines`` (n_rows,)."""
    degree = 4 if (kinds == KIND_RUNNING_INTEGRAL).any() else 3
    return scan_rows(batch.knots, batch.coef, batch.running, batch.running_end,
                     np.ascontiguousarray(weights, dtype=float),
                     np.ascontiguousarray(kinds, dtype=np.int64),
                     np.ascontiguousarray(offsets, dtype=float),
                     np.ascontiguousarray(lines, dtype=np.int64), constant, degree, confined,
                     batch.prev_node, batch.next_node, batch.own)


def group_response(batch: LineBatch, group: TermGroup, xi: float, side: float = 0.0
                   ) -> NDArray[np.float64]:
    """The group's effect on every line with its reference point at ξ (one-sided if asked)."""
    weights, offsets, kinds, constant = group.terms()
    x = xi - offsets
    limit = "left" if side < 0 else "right"
    total = constant * batch.running_end.copy()
    point = kinds == KIND_POINT
    if point.any():
        total += weights[point] @ batch.ordinates(x[point], limit)
    if (~point).any():
        total += weights[~point] @ batch.running_at(x[~point])
    return total
