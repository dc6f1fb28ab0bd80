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
OFF_LEFT = -1  # the term stands left of the beam (before x = 0)
OFF_RIGHT = -2  # the term stands right of the beam (beyond x = L)


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
def _scan_one_line(j, breaks, coef, running, running_end, term_weight, term_kind,
                   term_piece, term_s0, constant, degree, result):
    """Max and min of one line's response over all pieces; result row j gets
    (max, ξ at max, side at max, min, ξ at min, side at min). Side: +1 the limit from above
    (ξ → b⁺), −1 from below, 0 an interior point."""
    n_pieces = len(breaks) - 1
    n_terms = len(term_weight)
    best_max, pos_max, side_max = 0.0, np.nan, 0.0
    best_min, pos_min, side_min = 0.0, np.nan, 0.0
    poly = np.empty(5)
    crit = np.empty(3)
    work = np.empty(5)
    scratch = np.empty(10)
    for p in range(n_pieces):
        width = breaks[p + 1] - breaks[p]
        if width <= 0.0:
            continue
        for i in range(5):
            poly[i] = 0.0
        poly[0] = constant[j]
        for t in range(n_terms):
            e = term_piece[p, t]
            w = term_weight[t]
            if e == OFF_LEFT:
                continue
            if term_kind[t] == KIND_POINT:
                if e == OFF_RIGHT:
                    continue
                _shift_add(poly, coef[:, e, j], 4, term_s0[p, t], w, work)
            else:
                if e == OFF_RIGHT:
                    poly[0] += w * running_end[j]
                    continue
                _shift_add(poly, running[:, e, j], 5, term_s0[p, t], w, work)
        # ends of the piece: one-sided limits
        v0 = poly[0]
        v1 = _horner(poly, degree, width)
        if v0 > best_max:
            best_max, pos_max, side_max = v0, breaks[p], 1.0
        if v0 < best_min:
            best_min, pos_min, side_min = v0, breaks[p], 1.0
        if v1 > best_max:
            best_max, pos_max, side_max = v1, breaks[p + 1], -1.0
        if v1 < best_min:
            best_min, pos_min, side_min = v1, breaks[p + 1], -1.0
        n_crit = _critical_points(poly, degree, width, crit, scratch)
        for k in range(n_crit):
            v = _horner(poly, degree, crit[k])
            if v > best_max:
                best_max, pos_max, side_max = v, breaks[p] + crit[k], 0.0
            if v < best_min:
                best_min, pos_min, side_min = v, breaks[p] + crit[k], 0.0
    result[j, 0] = best_max
    result[j, 1] = pos_max
    result[j, 2] = side_max
    result[j, 3] = best_min
    result[j, 4] = pos_min
    result[j, 5] = side_min


@njit(**PARALLEL_OPTIONS)
def scan_lines_parallel(breaks, coef, running, running_end, term_weight, term_kind, term_piece,
               term_s0, constant, degree):
    """Exact extremes of a load group's response for every line.

    Parameters
    ----------
    breaks : (n_pieces + 1,) sorted reference positions ξ where any term crosses a knot
    coef : (4, m, n_lines) influence-line cubics (PPoly layout, highest power first)
    running : (5, m, n_lines) running integrals of the lines (quartics)
    running_end : (n_lines,) running integral over the whole beam
    term_weight, term_kind : (n_terms,) weight and kind of each term
    term_piece : (n_pieces, n_terms) line piece each term reads on each piece, or OFF_*
    term_s0 : (n_pieces, n_terms) local coordinate of each term at the start of each piece
    constant : (n_lines,) response that does not move (e.g. an unlimited load ahead)
    degree : 3 when only concentrated terms, else 4

    Returns
    -------
    (n_lines, 6): max, ξ at max, side at max, min, ξ at min, side at min
    """
    n_lines = coef.shape[2]
    result = np.empty((n_lines, 6))
    for j in prange(n_lines):
        _scan_one_line(j, breaks, coef, running, running_end, term_weight, term_kind,
                       term_piece, term_s0, constant, degree, result)
    return result


@njit(**JIT_OPTIONS)
def scan_lines_serial(breaks, coef, running, running_end, term_weight, term_kind, term_piece,
                      term_s0, constant, degree):
    """``scan_lines_parallel`` on one thread: cheaper for a handful of lines, where starting
    the thread pool costs more than the work."""
    n_lines = coef.shape[2]
    result = np.empty((n_lines, 6))
    for j in range(n_lines):
        _scan_one_line(j, breaks, coef, running, running_end, term_weight, term_kind,
                       term_piece, term_s0, constant, degree, result)
    return result


PARALLEL_FROM_LINES = 64  # below this many lines the serial kernel is faster


def scan_lines(breaks, coef, running, running_end, term_weight, term_kind, term_piece,
               term_s0, constant, degree):
    """Exact extremes for every line; see ``scan_lines_parallel`` for the arguments."""
    kernel = scan_lines_parallel if coef.shape[2] >= PARALLEL_FROM_LINES else scan_lines_serial
    return kernel(breaks, coef, running, running_end, term_weight, term_kind, term_piece,
                  term_s0, constant, degree)
