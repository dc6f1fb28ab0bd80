"""Run the compiled scan over a batch of influence lines for one arrangement of loads.

A *term group* describes one rigid arrangement of loads in group coordinates u (u = 0 at the
reference axle, u growing backwards, so a load at u stands at x = ξ − u). The engine turns it
into the break list and the per-piece lookups the kernel needs, calls the kernel, and offers an
exact evaluation of the group's response at a given ξ for concurrent effects.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from functools import cached_property
from typing import Any

import numpy as np
from numpy.typing import NDArray

from trundle.core.influence import InfluenceSet, LinePieces, signed_areas
from trundle.scan.kernels import (
    KIND_POINT,
    KIND_RUNNING_INTEGRAL,
    could_use_threads,
    evaluate_lines,
    scan_chunk,
    scan_rows,
)

# lines with at least this many pieces are swept from their largest piece outwards and stop
# where a bound proves nothing further can matter (see kernels._scan_chunk); shorter lines
# are swept once from left to right
PRUNE_FROM_PIECES = 8


@dataclass(frozen=True, eq=False)
class LineBatch:
    """Influence lines prepared for scanning, each on its own breaks: cubics, their running
    integrals and bounds, in the layout the kernels read (see ``scan_rows_serial``).

    Fields
    ------
    line_knots : (n, K) each line's breakpoints; row j uses the first n_pieces[j] + 1 [length]
    n_pieces : (n,)
    line_coef : (n, K − 1, 4) cubic coefficients per piece, highest power first
    line_running : (n, K − 1, 5) quartic coefficients of F(x) = ∫₀ˣ IL per piece
    running_end : (n,) F at the right end of the beam
    head, tail : (n, K) bounds on |IL| before knot p and from piece p on; peak : (n,) the
        piece with the largest bound
    knots : every point where some line breaks (structural nodes and sections), sorted
    identity : (n,) lines built the same way share it (see ``LinePieces.identity``)
    own_knot, own_value : (n,) index in each line's knots of the section where a shear line
        jumps (−1 for other lines) and the value of a unit load standing exactly on it: on
        the far side of the cut (just left of a section, a load on it is right of the cut)
    end_live : (n,) a load standing exactly on an end of the beam reads something a one-sided
        limit does not: the line is not zero there, or it jumps there (shear at a free tip)
    """

    line_knots: NDArray[np.float64]
    n_pieces: NDArray[np.int64]
    line_coef: NDArray[np.float64]
    line_running: NDArray[np.float64]
    running_end: NDArray[np.float64]
    head: NDArray[np.float64]
    tail: NDArray[np.float64]
    peak: NDArray[np.int64]
    knots: NDArray[np.float64]
    identity: NDArray[np.int64]
    own_knot: NDArray[np.int64]
    own_value: NDArray[np.float64]
    end_live: NDArray[np.bool_]

    @classmethod
    def from_pieces(cls, pieces: LinePieces) -> LineBatch:
        return cls.from_arrays(pieces.knots, pieces.n_pieces, pieces.coefficients,
                               np.unique(np.concatenate([pieces.nodes, pieces.sections])),
                               pieces.identity, pieces.effects)

    @classmethod
    def from_set(cls, lines: InfluenceSet) -> LineBatch:
        """From lines on shared knots: each on its own breaks when the set knows them
        (built by ``influence_set``), else every line on every shared knot."""
        if lines.pieces is not None:
            return cls.from_pieces(lines.pieces)
        n = len(lines)
        knots = np.ascontiguousarray(np.broadcast_to(lines.knots, (n, len(lines.knots))))
        return cls.from_arrays(knots, np.full(n, len(lines.knots) - 1, dtype=np.int64),
                               lines.coefficients.transpose(2, 1, 0), lines.knots,
                               np.arange(n, dtype=np.int64), lines.effects)

    @classmethod
    def from_arrays(cls, knots: NDArray[np.float64], n_pieces: NDArray[np.int64],
                    coef: NDArray[np.float64], all_knots: NDArray[np.float64],
                    identity: NDArray[np.int64], effects: Sequence[Any] | None = None
                    ) -> LineBatch:
        n, n_knots = knots.shape
        own_knot, own_value, end_live = _own_points(knots, n_pieces, coef, effects)
        h = np.diff(knots, axis=1)  # zero on the padding
        running = np.zeros((n, n_knots - 1, 5))
        running[:, :, 0] = coef[:, :, 0] / 4.0
        running[:, :, 1] = coef[:, :, 1] / 3.0
        running[:, :, 2] = coef[:, :, 2] / 2.0
        running[:, :, 3] = coef[:, :, 3]
        piece_integrals = ((((running[:, :, 0] * h + running[:, :, 1]) * h + running[:, :, 2])
                            * h + running[:, :, 3]) * h)
        cumulative = np.cumsum(piece_integrals, axis=1)
        running[:, 1:, 4] = cumulative[:, :-1]
        # a bound on |IL| over each closed piece: Σ |c_k| h^k
        bound = (((np.abs(coef[:, :, 0]) * h + np.abs(coef[:, :, 1])) * h
                  + np.abs(coef[:, :, 2])) * h + np.abs(coef[:, :, 3]))
        valid = np.arange(n_knots - 1)[None, :] < n_pieces[:, None]
        bound = np.where(valid, bound, 0.0)
        # a load standing on a line's own jump reads own_value: the pieces on either side
        # bound it too (at a free tip it is the only nonzero value of the line)
        for j in np.flatnonzero(own_knot >= 0):
            k = own_knot[j]
            for q in (k - 1, k):
                if 0 <= q < n_pieces[j]:
                    bound[j, q] = max(bound[j, q], abs(own_value[j]))
        head = np.zeros((n, n_knots))
        head[:, 1:] = np.maximum.accumulate(bound, axis=1)
        tail = np.zeros((n, n_knots))
        tail[:, :-1] = np.maximum.accumulate(bound[:, ::-1], axis=1)[:, ::-1]
        return cls(np.ascontiguousarray(knots, dtype=float),
                   np.ascontiguousarray(n_pieces, dtype=np.int64),
                   np.ascontiguousarray(coef, dtype=float), running,
                   np.ascontiguousarray(cumulative[:, -1]), head, tail,
                   np.argmax(bound, axis=1).astype(np.int64),
                   np.ascontiguousarray(all_knots, dtype=float),
                   np.ascontiguousarray(identity, dtype=np.int64), own_knot, own_value,
                   end_live)

    def subset(self, lines: NDArray[np.int64]) -> LineBatch:
        """The same batch restricted to some lines."""
        return LineBatch(self.line_knots[lines], self.n_pieces[lines], self.line_coef[lines],
                         self.line_running[lines], self.running_end[lines], self.head[lines],
                         self.tail[lines], self.peak[lines], self.knots,
                         self.identity[lines], self.own_knot[lines], self.own_value[lines],
                         self.end_live[lines])

    @property
    def n_lines(self) -> int:
        return self.line_coef.shape[0]

    @property
    def length(self) -> float:
        return float(self.knots[-1])

    @cached_property
    def coef(self) -> NDArray[np.float64]:
        """(4, m, n) the lines on the shared ``knots`` (PPoly layout). Costs lines × every
        knot: for a few lines or for output, not for the scan."""
        return self._shared(self.line_coef)

    @cached_property
    def signed_areas(self) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """(∫ max(IL, 0), ∫ min(IL, 0)) of every line, split exactly at its real roots, each
        line on its own breaks (linear in the pieces; kept with the batch, which the
        envelope's prepared-lines cache shares between calls)."""
        n = self.n_lines
        pos, neg = np.zeros(n), np.zeros(n)
        for j in range(n):
            m = int(self.n_pieces[j])
            p, q = signed_areas(self.line_knots[j, :m + 1], self.line_coef[j, :m, :].T[:, :, None])
            pos[j], neg[j] = p[0], q[0]
        return pos, neg

    @cached_property
    def running(self) -> NDArray[np.float64]:
        """(5, m, n) the running integrals on the shared ``knots``."""
        return self._shared(self.line_running)

    @cached_property
    def _shared_breaks(self) -> tuple[NDArray[np.int64], NDArray[np.int64], NDArray[np.int64]]:
        """(prev_node, next_node, own) of the shared layout: for each shared knot the
        structural node at or before it and the next one after it, and each line's own
        section as a shared knot (−1 for none); a knot is structural when every line breaks
        there."""
        m = len(self.knots) - 1
        is_node = np.ones(m + 1, dtype=bool)
        own = np.full(self.n_lines, -1, dtype=np.int64)
        for j in range(self.n_lines):
            mine = np.isin(self.knots, self.line_knots[j, :self.n_pieces[j] + 1])
            is_node &= mine
        is_node[[0, -1]] = True
        nodes = np.flatnonzero(is_node)
        for j in range(self.n_lines):
            extra = np.setdiff1d(self.line_knots[j, :self.n_pieces[j] + 1], self.knots[nodes])
            if extra.size:
                own[j] = int(np.searchsorted(self.knots, extra[0]))
        index = np.arange(m + 1)
        prev_node = nodes[np.searchsorted(nodes, index, side="right") - 1].astype(np.int64)
        after = np.searchsorted(nodes, index, side="right")
        next_node = np.where(after < len(nodes), nodes[np.minimum(after, len(nodes) - 1)],
                             m).astype(np.int64)
        return prev_node, next_node, own

    @property
    def prev_node(self) -> NDArray[np.int64]:
        """Shared layout (with ``coef``): the structural node at or before each knot."""
        return self._shared_breaks[0]

    @property
    def next_node(self) -> NDArray[np.int64]:
        """Shared layout: the structural node after each knot."""
        return self._shared_breaks[1]

    @property
    def own(self) -> NDArray[np.int64]:
        """Shared layout: the knot of each line's own section (−1 for none)."""
        return self._shared_breaks[2]

    def _shared(self, coef: NDArray[np.float64]) -> NDArray[np.float64]:
        starts = self.knots[:-1]
        which = np.empty((len(starts), self.n_lines), dtype=np.int64)
        for j in range(self.n_lines):
            own = self.line_knots[j, :self.n_pieces[j] + 1]
            which[:, j] = np.clip(np.searchsorted(own, starts, side="right") - 1, 0,
                                  self.n_pieces[j] - 1)
        lines = np.arange(self.n_lines)[None, :]
        d = starts[:, None] - self.line_knots[lines, which]
        source = coef[lines, which]  # (m, n, c), highest power first
        degree = coef.shape[2] - 1
        out = np.zeros((degree + 1, *which.shape))
        # Taylor shift by d: Horner's scheme on the derivatives
        for k in range(degree + 1):  # coefficient of t^k after the shift
            total = np.zeros(which.shape)
            for i in range(k, degree + 1):  # from the term c_i t^i (i = power)
                total += source[:, :, degree - i] * math.comb(i, k) * d ** (i - k)
            out[degree - k] = total
        return out

    def _rows(self, lines: NDArray[np.int64] | None, *arrays: NDArray) -> tuple[NDArray, ...]:
        """``arrays`` (one row per line) for every line, or only for ``lines``: a few lines'
        values cost a few lines' work, so a value per section stays linear in sections."""
        return arrays if lines is None else tuple(a[lines] for a in arrays)

    def running_at(self, x: NDArray[np.float64], lines: NDArray[np.int64] | None = None
                   ) -> NDArray[np.float64]:
        """F(x) for every line (or for ``lines``), (len(x), n); F = 0 left of the beam and
        F(L) right of it."""
        x = np.asarray(x, dtype=float)
        knots, n_pieces, running, end = self._rows(lines, self.line_knots, self.n_pieces,
                                                   self.line_running, self.running_end)
        out = evaluate_lines(knots, n_pieces, running, np.clip(x, 0.0, self.length), False)
        out[x <= 0.0] = 0.0
        out[x >= self.length] = end
        return out

    def ordinates(self, x: NDArray[np.float64], side: str,
                  lines: NDArray[np.int64] | None = None) -> NDArray[np.float64]:
        """IL(x) for every line (or for ``lines``), (len(x), n), as the one-sided limit from
        ``side`` ("left", "right"), or for a load standing exactly at x (``side="point"``).

        A load approaching an end of the beam from outside reads nothing: the left-hand limit
        is zero at x ≤ 0 and the right-hand limit zero at x ≥ L. A load standing on an end
        is on the beam; one standing on a shear line's own section reads ``own_value``.
        """
        if side == "point":
            return self._point_ordinates(np.asarray(x, dtype=float), lines)
        x = self.snapped(x)
        knots, n_pieces, coef = self._rows(lines, self.line_knots, self.n_pieces,
                                           self.line_coef)
        out = evaluate_lines(knots, n_pieces, coef, np.ascontiguousarray(x), side == "left")
        out[self.off_beam(x, side)] = 0.0
        return out

    def snapped(self, x: NDArray[np.float64]) -> NDArray[np.float64]:
        """x, with every point within rounding of a structural knot moved onto it: a load
        placed at ξ − u may miss a knot by rounding (0.45 − 0.15 ≠ 0.3), and a one-sided
        limit must then be read at the knot itself, or it reads the other side of a jump."""
        x = np.asarray(x, dtype=float)
        nearest = np.clip(np.searchsorted(self.knots, x), 1, len(self.knots) - 1)
        nearest = np.where(np.abs(self.knots[nearest - 1] - x) < np.abs(self.knots[nearest] - x),
                           nearest - 1, nearest)
        close = np.abs(self.knots[nearest] - x) <= 1e-12 * max(1.0, self.length)
        return np.where(close, self.knots[nearest], x)

    def off_beam(self, x: NDArray[np.float64], side: str) -> NDArray[np.bool_]:
        """Where the one-sided limit from ``side`` ("left", "right") reads nothing: a load
        approaching an end of the beam from outside."""
        if side == "left":
            return (x <= 0.0) | (x > self.length)
        return (x < 0.0) | (x >= self.length)

    def _point_ordinates(self, x: NDArray[np.float64], lines: NDArray[np.int64] | None = None
                         ) -> NDArray[np.float64]:
        # inside the beam the line is continuous except at a shear line's own section; at
        # the right end the load is on the beam: the limit from inside
        x = np.atleast_1d(x)
        out = self.ordinates(x, "right", lines)
        tolerance = 1e-12 * max(1.0, self.length)
        at_right_end = np.abs(x - self.length) <= tolerance
        if at_right_end.any():
            out[at_right_end] = self.ordinates(np.full(int(at_right_end.sum()), self.length),
                                               "left", lines)
        knots, own_knot, own_value = self._rows(lines, self.line_knots, self.own_knot,
                                                self.own_value)
        owning = np.flatnonzero(own_knot >= 0)
        if owning.size:
            own_x = knots[owning, own_knot[owning]]
            load, line = np.nonzero(np.abs(x[:, None] - own_x[None, :]) <= tolerance)
            out[load, owning[line]] = own_value[owning[line]]
        return out


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
    uniform = bool((kinds == KIND_RUNNING_INTEGRAL).any())
    # bounds on |IL| only hold concentrated loads in check
    prune = not uniform and constant == 0.0 and int(batch.n_pieces.max()) >= PRUNE_FROM_PIECES
    return scan_rows(batch.line_knots, batch.n_pieces, batch.line_coef, batch.line_running,
                     batch.running_end, batch.head, batch.tail, batch.peak,
                     np.ascontiguousarray(weights, dtype=float),
                     np.ascontiguousarray(kinds, dtype=np.int64),
                     np.ascontiguousarray(offsets, dtype=float),
                     np.ascontiguousarray(lines, dtype=np.int64), constant,
                     4 if uniform else 3, confined, prune, own_knot=batch.own_knot,
                     own_value=batch.own_value, end_live=batch.end_live)


class ScanPlan:
    """Every argument of one kernel call, checked and laid out once, so a load scanned again
    over the same lines (the envelope keeps plans with its lines) pays only the kernel."""

    def __init__(self, batch: LineBatch, weights: NDArray[np.float64],
                 kinds: NDArray[np.int64], offsets: NDArray[np.float64],
                 lines: NDArray[np.int64], constant: float = 0.0, confined: bool = False):
        uniform = bool((kinds == KIND_RUNNING_INTEGRAL).any())
        prune = (not uniform and constant == 0.0
                 and int(batch.n_pieces.max()) >= PRUNE_FROM_PIECES)
        self.n_rows = int(lines.shape[0])
        self.args = (batch.line_knots, batch.n_pieces, batch.line_coef, batch.line_running,
                     batch.running_end, batch.head, batch.tail, batch.peak,
                     np.ascontiguousarray(weights, dtype=float),
                     np.ascontiguousarray(kinds, dtype=np.int64),
                     np.ascontiguousarray(offsets, dtype=float),
                     np.ascontiguousarray(lines, dtype=np.int64), float(constant),
                     4 if uniform else 3, bool(confined), bool(prune))
        self.own = (batch.own_knot, batch.own_value, batch.end_live)
        # most calls are far too small for threads: decided here once
        self.small = not could_use_threads(batch.n_pieces, self.n_rows, weights.shape[0])

    def run(self) -> NDArray[np.float64]:
        """(n_rows, 6), as ``scan_arrangements``."""
        if self.small:
            result = np.empty((self.n_rows, 6))
            scan_chunk(0, self.n_rows, *self.args, *self.own, result)
            return result
        return scan_rows(*self.args, own_knot=self.own[0], own_value=self.own[1],
                         end_live=self.own[2])


def group_response(batch: LineBatch, group: TermGroup, xi: float, side: float = 0.0,
                   lines: NDArray[np.int64] | None = None) -> NDArray[np.float64]:
    """The group's effect on every line (or on ``lines``) with its reference point at ξ: the
    limit from below (side < 0), from above (side > 0), or exactly at ξ (side 0: every load
    counted where it stands, on an end of the beam or on a section)."""
    weights, offsets, kinds, constant = group.terms()
    x = xi - offsets
    limit = "left" if side < 0 else "right" if side > 0 else "point"
    end = batch.running_end if lines is None else batch.running_end[lines]
    total = constant * end.copy()
    point = kinds == KIND_POINT
    if point.any():
        total += weights[point] @ batch.ordinates(x[point], limit, lines)
    if (~point).any():
        total += weights[~point] @ batch.running_at(x[~point], lines)
    return total


# a line value below this fraction of the line's largest is rounding noise of an exact zero
_NOISE = 1e-12


def _own_points(knots: NDArray[np.float64], n_pieces: NDArray[np.int64],
                coef: NDArray[np.float64], effects: Sequence[Any] | None
                ) -> tuple[NDArray[np.int64], NDArray[np.float64], NDArray[np.bool_]]:
    """(own_knot, own_value, end_live) of every line (see ``LineBatch``).

    V is the upward resultant of everything left of the cut, so a load crossing the cut from
    left to right raises a shear line by one: just left of a section a load standing on it
    is right of the cut (the line's right-hand limit, or its left-hand limit + 1 at the right
    end of the beam, where no piece follows); just right of it the load is left of the cut
    (the left-hand limit, or the right-hand limit − 1 at the left end).
    """
    n = knots.shape[0]
    own_knot = np.full(n, -1, dtype=np.int64)
    own_value = np.zeros(n)
    end_live = np.zeros(n, dtype=bool)
    if effects is None or n == 0:
        return own_knot, own_value, end_live
    # every line at once (a loop over thousands of lines cost more than the scan)
    rows = np.arange(n)
    m = np.asarray(n_pieces, dtype=np.int64)
    h = knots[rows, m] - knots[rows, m - 1]
    c = coef[rows, m - 1]
    start = coef[:, 0, 3]
    end = ((c[:, 0] * h + c[:, 1]) * h + c[:, 2]) * h + c[:, 3]
    valid = np.arange(coef.shape[1])[None, :] < m[:, None]
    largest = np.where(valid[:, :, None], np.abs(coef), 0.0).max(axis=(1, 2))
    scale = np.maximum(largest, 1.0) * _NOISE
    live = (np.abs(start) > scale) | (np.abs(end) > scale)
    shear = np.array([getattr(e, "kind", None) == "shear" and e.at is not None
                      for e in effects], dtype=bool)
    if shear.any():
        j = np.flatnonzero(shear)
        at = np.array([effects[i].at for i in j], dtype=float)
        left = np.array([effects[i].side == "left" for i in j], dtype=bool)
        mj = m[j]
        distance = np.abs(knots[j] - at[:, None])
        distance[np.arange(knots.shape[1])[None, :] > mj[:, None]] = np.inf
        k = np.argmin(distance, axis=1)
        own_knot[j] = k
        # just left of the section: the right-hand limit, or the left-hand one + 1 at the
        # right end of the beam
        value_left = np.where(k < mj, coef[j, np.minimum(k, mj - 1), 3], end[j] + 1.0)
        # just right of it: the left-hand limit, or the right-hand one − 1 at the left end
        before = np.maximum(k - 1, 0)
        cp = coef[j, before]
        hk = knots[j, k] - knots[j, before]
        value_right = np.where(
            k > 0, ((cp[:, 0] * hk + cp[:, 1]) * hk + cp[:, 2]) * hk + cp[:, 3],
            start[j] - 1.0)
        own_value[j] = np.where(left, value_left, value_right)
        at_start = (k == 0) & (np.abs(own_value[j] - start[j]) > scale[j])
        at_end = (k == mj) & (np.abs(own_value[j] - end[j]) > scale[j])
        live[j] |= at_start | at_end
    end_live[:] = live
    return own_knot, own_value, end_live
