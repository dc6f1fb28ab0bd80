"""Compiled kernels of the exact moving-load scan.

A load group is a list of terms: term t has a weight w_t, an offset d_t behind the group's
reference point ξ, and a kind: 0 for a concentrated load (reads the influence line IL at
ξ − d_t) and 1 for an end of a uniform load (reads the running integral F(x) = ∫₀ˣ IL, so a
uniform load from ξ − e to ξ − s is w·(F(ξ − s) − F(ξ − e))). Between consecutive breaks
(every knot plus every offset) each term reads one polynomial piece, so the response is a
polynomial of degree ≤ 4 in ξ; its extremes lie at the piece ends or where its derivative
vanishes, found in closed form (quadratic) or by bracketing (cubic). The result is exact to
rounding, not to a step.

Kernels take plain arrays only. Each line is independent, so lines run in parallel and each
writes only its own output slot.
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange

from trundle.scan._config import JIT_OPTIONS, PARALLEL_OPTIONS

KIND_POINT = 0
KIND_RUNNING_INTEGRAL = 1


@njit(**JIT_OPTIONS)
def _horner(poly, degree, t):
    value = poly[degree]
    for i in range(degree - 1, -1, -1):
        value = value * t + poly[i]
    return value


@njit(**JIT_OPTIONS)
def _shift_add(poly, coef_high_first, n_coef, s0, weight, work):
    """poly (low first) += weight · p(t + s0), p given highest power first."""
    # Taylor shift by repeated synthetic division; ``work`` is scratch of length 5
    for i in range(n_coef):
        work[i] = coef_high_first[n_coef - 1 - i]  # low first
    for i in range(n_coef):
        for k in range(n_coef - 2, i - 1, -1):
            work[k] += s0 * work[k + 1]
    for i in range(n_coef):
        poly[i] += weight * work[i]


@njit(**JIT_OPTIONS)
def _quadratic_roots(a, b, c, out):
    """Real roots of a t² + b t + c = 0 into out; returns how many (stable formulas)."""
    if a == 0.0:
        if b == 0.0:
            return 0
        out[0] = -c / b
        return 1
    disc = b * b - 4.0 * a * c
    if disc < 0.0:
        return 0
    sq = np.sqrt(disc)
    q = -0.5 * (b + sq) if b >= 0.0 else -0.5 * (b - sq)
    if q == 0.0:
        out[0] = 0.0
        return 1
    out[0] = q / a
    out[1] = c / q
    return 2


@njit(**JIT_OPTIONS)
def _bisect_root(d, lo, hi):
    """A root of the cubic d (low first) in [lo, hi] where d changes sign."""
    f_lo = _horner(d, 3, lo)
    for _ in range(200):
        mid = 0.5 * (lo + hi)
        if mid <= lo or mid >= hi:
            break
        f_mid = _horner(d, 3, mid)
        if (f_mid < 0.0) == (f_lo < 0.0):
            lo, f_lo = mid, f_mid
        else:
            hi = mid
    return 0.5 * (lo + hi)


@njit(**JIT_OPTIONS)
def _critical_points(poly, degree, width, out, scratch):
    """Points in (0, width) where the derivative of poly vanishes; returns how many.
    ``scratch`` holds 10 floats, so the hot loop allocates nothing."""
    n = 0
    tmp = scratch[0:2]
    if degree <= 3:
        m = _quadratic_roots(3.0 * poly[3], 2.0 * poly[2], poly[1], tmp)
        for i in range(m):
            if 0.0 < tmp[i] < width:
                out[n] = tmp[i]
                n += 1
        return n
    d = scratch[2:6]
    d[0], d[1], d[2], d[3] = poly[1], 2.0 * poly[2], 3.0 * poly[3], 4.0 * poly[4]
    if d[3] == 0.0:
        m = _quadratic_roots(d[2], d[1], d[0], tmp)
        for i in range(m):
            if 0.0 < tmp[i] < width:
                out[n] = tmp[i]
                n += 1
        return n
    # split (0, width) where the derivative turns, then bracket each sign change
    cuts = scratch[6:10]
    cuts[0] = 0.0
    n_cuts = 1
    m = _quadratic_roots(3.0 * d[3], 2.0 * d[2], d[1], tmp)
    if m == 2 and tmp[0] > tmp[1]:
        tmp[0], tmp[1] = tmp[1], tmp[0]
    for i in range(m):
        if 0.0 < tmp[i] < width:
            cuts[n_cuts] = tmp[i]
            n_cuts += 1
    cuts[n_cuts] = width
    n_cuts += 1
    for i in range(n_cuts - 1):
        lo, hi = cuts[i], cuts[i + 1]
        f_lo, f_hi = _horner(d, 3, lo), _horner(d, 3, hi)
        if f_lo == 0.0 and 0.0 < lo:
            out[n] = lo
            n += 1
        elif (f_lo < 0.0) != (f_hi < 0.0) and f_hi != 0.0:
            out[n] = _bisect_root(d, lo, hi)
            n += 1
    return n


@njit(**JIT_OPTIONS)
def _locate(knots, x):
    """Piece of x taken from the right: −1 left of the beam, m at or beyond its right end."""
    m = knots.shape[0] - 1
    if x < knots[0]:
        return -1
    if x >= knots[m]:
        return m
    lo, hi = 0, m
    while hi - lo > 1:
        mid = (lo + hi) // 2
        if knots[mid] <= x:
            lo = mid
        else:
            hi = mid
    return lo


@njit(**JIT_OPTIONS)
def _next_real(piece, m, next_node, own):
    """The knot after ``piece`` where the line really changes: the next structural node, or
    the line's own section (``own``), whichever comes first; m at the end."""
    if piece < 0:
        return 0
    nxt = next_node[piece] if piece < m else m
    if piece < own < nxt:
        nxt = own
    return nxt


@njit(**JIT_OPTIONS)
def _real_start(piece, prev_node, own):
    """The knot where the real piece containing knot-piece ``piece`` starts."""
    start = prev_node[piece]
    if start < own <= piece:
        start = own
    return start


@njit(**JIT_OPTIONS)
def _next_break(knots, piece, offset, next_node, own):
    m = knots.shape[0] - 1
    if piece < 0:
        return offset + knots[0]
    if piece < m:
        return offset + knots[_next_real(piece, m, next_node, own)]
    return np.inf


@njit(**JIT_OPTIONS)
def _scan_row(row, line, knots, coef, running, running_end, weight, kind, offsets,
              constant, degree, result, confined, prev_node, next_node, own):
    """Sweep the reference position ξ over every piece of one line's response.

    The group enters at the left (first term at x = 0) and leaves at the right; the breaks
    are merged on the fly from each term's own walk along the knots. A ``confined`` group
    (a crane between its end stops) only stands where every concentrated load is on the
    beam. Result row gets
    (max, ξ at max, side at max, min, ξ at min, side at min); side +1 is the limit from above
    (ξ → b⁺), −1 from below, 0 an interior point. The empty beam counts (value 0, ξ NaN).
    """
    m = knots.shape[0] - 1
    n_terms = weight.shape[0]
    lo = offsets[0]
    hi = offsets[0]
    for t in range(1, n_terms):
        lo = min(lo, offsets[t])
        hi = max(hi, offsets[t])
    hi += knots[m]
    if confined:
        for t in range(n_terms):
            if kind[t] == KIND_POINT:
                lo = max(lo, offsets[t])
                hi = min(hi, knots[m] + offsets[t])
    piece = np.empty(n_terms, dtype=np.int64)
    upcoming = np.empty(n_terms)
    for t in range(n_terms):
        k = _locate(knots, lo - offsets[t])
        piece[t] = _real_start(k, prev_node, own) if 0 <= k < m else k
        upcoming[t] = _next_break(knots, piece[t], offsets[t], next_node, own)
    best_max, pos_max, side_max = 0.0, np.nan, 0.0
    best_min, pos_min, side_min = 0.0, np.nan, 0.0
    poly = np.empty(5)
    crit = np.empty(3)
    work = np.empty(5)
    scratch = np.empty(10)
    xi = lo
    while xi < hi:
        nxt = hi
        for t in range(n_terms):
            if upcoming[t] < nxt:
                nxt = upcoming[t]
        width = nxt - xi
        if width > 0.0:
            for i in range(5):
                poly[i] = 0.0
            poly[0] = constant
            for t in range(n_terms):
                e = piece[t]
                if e < 0:
                    continue
                if kind[t] == KIND_POINT:
                    if e < m:
                        _shift_add(poly, coef[:, e, line], 4, xi - offsets[t] - knots[e],
                                   weight[t], work)
                elif e < m:
                    _shift_add(poly, running[:, e, line], 5, xi - offsets[t] - knots[e],
                               weight[t], work)
                else:
                    poly[0] += weight[t] * running_end[line]
            v0 = poly[0]
            v1 = _horner(poly, degree, width)
            if v0 > best_max:
                best_max, pos_max, side_max = v0, xi, 1.0
            if v0 < best_min:
                best_min, pos_min, side_min = v0, xi, 1.0
            if v1 > best_max:
                best_max, pos_max, side_max = v1, nxt, -1.0
            if v1 < best_min:
                best_min, pos_min, side_min = v1, nxt, -1.0
            n_crit = _critical_points(poly, degree, width, crit, scratch)
            for k in range(n_crit):
                v = _horner(poly, degree, crit[k])
                if v > best_max:
                    best_max, pos_max, side_max = v, xi + crit[k], 0.0
                if v < best_min:
                    best_min, pos_min, side_min = v, xi + crit[k], 0.0
        if nxt == np.inf:
            break
        for t in range(n_terms):
            if upcoming[t] <= nxt:
                piece[t] = _next_real(piece[t], m, next_node, own)
                upcoming[t] = _next_break(knots, piece[t], offsets[t], next_node, own)
        xi = nxt
    result[row, 0] = best_max
    result[row, 1] = pos_max
    result[row, 2] = side_max
    result[row, 3] = best_min
    result[row, 4] = pos_min
    result[row, 5] = side_min


@njit(**JIT_OPTIONS)
def _breaks(m, n_lines, prev_node, next_node, own):
    """Where the lines really break; with no structure given, at every knot."""
    if own is None:
        return np.arange(m + 1), np.arange(1, m + 2), np.full(n_lines, -1)
    return prev_node, next_node, own


@njit(**PARALLEL_OPTIONS)
def scan_rows_parallel(knots, coef, running, running_end, weight, kind, offsets, lines,
                       constant_weight, degree, confined=False, prev_node=None,
                       next_node=None, own=None):
    """Exact extremes of a load group's response, one row per (line, arrangement).

    Parameters
    ----------
    knots : (m + 1,) shared breakpoints of the lines [length]
    coef : (4, m, n_lines) influence-line cubics (PPoly layout, highest power first)
    running : (5, m, n_lines) running integrals F(x) = ∫₀ˣ IL of the lines (quartics)
    running_end : (n_lines,) F at the right end of the beam
    weight, kind : (n_terms,) weight of each term and its kind (KIND_POINT or
        KIND_RUNNING_INTEGRAL)
    offsets : (n_rows, n_terms) or (1, n_terms) offset of each term behind the reference
        point, per row or shared by all rows [length]
    lines : (n_rows,) the line each row scans
    constant_weight : weight of F(L) that never moves (an unlimited load ahead)
    degree : 3 when only concentrated terms, else 4
    confined : only positions with every concentrated load on the beam (a crane between the
        end stops of its runway); otherwise the group enters and leaves the beam
    prev_node, next_node : (m + 1,) for each knot, the structural node at or before it and the
        next one after it (knots between are sections, where most lines do not break)
    own : (n_lines,) the knot of each line's own section (−1 for none). A line is one cubic
        from a structural node or its own section to the next, so the sweep skips the other
        sections' knots. Without these every knot is a break (same result, more pieces).

    Returns
    -------
    (n_rows, 6): max, ξ at max, side at max, min, ξ at min, side at min
    """
    n_rows = lines.shape[0]
    shared = offsets.shape[0] == 1
    result = np.empty((n_rows, 6))
    prev_node_, next_node_, own_ = _breaks(knots.shape[0] - 1, coef.shape[2], prev_node,
                                           next_node, own)
    for row in prange(n_rows):
        line = lines[row]
        _scan_row(row, line, knots, coef, running, running_end, weight, kind,
                  offsets[0] if shared else offsets[row], constant_weight * running_end[line],
                  degree, result, confined, prev_node_, next_node_, own_[line])
    return result


@njit(**JIT_OPTIONS)
def scan_rows_serial(knots, coef, running, running_end, weight, kind, offsets, lines,
                     constant_weight, degree, confined=False, prev_node=None,
                     next_node=None, own=None):
    """``scan_rows_parallel`` on one thread: cheaper for a handful of rows, where starting
    the thread pool costs more than the work."""
    n_rows = lines.shape[0]
    shared = offsets.shape[0] == 1
    result = np.empty((n_rows, 6))
    prev_node_, next_node_, own_ = _breaks(knots.shape[0] - 1, coef.shape[2], prev_node,
                                           next_node, own)
    for row in range(n_rows):
        line = lines[row]
        _scan_row(row, line, knots, coef, running, running_end, weight, kind,
                  offsets[0] if shared else offsets[row], constant_weight * running_end[line],
                  degree, result, confined, prev_node_, next_node_, own_[line])
    return result


# Below this much work (rows x pieces x terms) starting the thread pool costs more than it
# saves; measured on 2 cores, where a busy machine makes the pool slower still.
PARALLEL_FROM_WORK = 1_000_000


def scan_rows(knots, coef, running, running_end, weight, kind, offsets, lines,
              constant_weight, degree, confined=False, prev_node=None, next_node=None,
              own=None):
    """Exact extremes per row; see ``scan_rows_parallel`` for the arguments."""
    n_terms = weight.shape[0]
    work = lines.shape[0] * knots.shape[0] * n_terms * n_terms
    kernel = scan_rows_parallel if work >= PARALLEL_FROM_WORK else scan_rows_serial
    return kernel(knots, coef, running, running_end, weight, kind, offsets, lines,
                  float(constant_weight), int(degree), bool(confined), prev_node, next_node, own)
