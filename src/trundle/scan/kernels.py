"""Compiled kernels of the exact moving-load scan.

A load group is a list of terms: term t has a weight w_t, an offset d_t behind the group's
reference point ξ, and a kind: 0 for a concentrated load (reads the influence line IL at
ξ − d_t) and 1 for an end of a uniform load (reads the running integral F(x) = ∫₀ˣ IL, so a
uniform load from ξ − e to ξ − s is w·(F(ξ − s) − F(ξ − e))). Between consecutive breaks
(every knot plus every offset) each term reads one polynomial piece, so the response is a
polynomial of degree ≤ 4 in ξ; its extremes lie at the piece ends or where its derivative
vanishes, found in closed form (quadratic) or by bracketing (cubic). The result is exact to
rounding, not to a step.

Kernels take plain arrays only. Each line is stored on its own breaks (the structural nodes
and its own section), so a row's work is the number of structural pieces, however many other
sections there are. Rows are independent: on threads, each thread takes the next chunk of
rows when it is free and runs the same compiled loop body on it (``scan_rows_parallel``).

Compiling costs more than running on a first call (a fresh process with an empty numba cache):
until the compiled loop body is at hand, small calls run its interpreted copy (the first-run
tier below). numba's cost grows with the number of compiled functions (each has a fixed cost
of about 0.1–0.3 s) and with the statements in each. So the loop body calls few helpers, each
compiled once (no literal arguments that would give a second specialisation, no tuple packing, no
builtins that compile an implementation of their own such as min/max), and it allocates
nothing: its work arrays come from the caller. One exception is kept on purpose: the Taylor
shift (``_shift_add``) is compiled for a cubic and for a quartic (literal lengths 4 and 5), so
its loops unroll; with the length read at run time the scan ran 1.2–3 times slower.
"""

from __future__ import annotations

import os
import threading
from concurrent.futures import ThreadPoolExecutor

import numpy as np
from numba import njit

from trundle.core._jit import FirstRunTier
from trundle.scan._config import JIT_OPTIONS

KIND_POINT = 0
KIND_RUNNING_INTEGRAL = 1

# The loop body's helpers keep numba's Python wrappers: without them (no_cpython_wrapper) each
# compiled about 0.05–0.1 s faster on a first run, but calling one from Python then crashed the
# interpreter (a segmentation fault, not an error), a trap not worth half a second once. The
# tests still reach them through small compiled shims.
HELPER_OPTIONS = dict(JIT_OPTIONS)

# rows of the loop body's float work array (see ``scan_workspace``)
_POLY, _SHIFT, _CRIT, _ROOTS, _CAND_VALUE, _CAND_AT, _CAND_SIDE = range(7)
_WORK_ROWS = 7
_WORK_WIDTH = 6  # a piece gives at most 2 ends + 3 critical points, + 1 exact point value


def scan_workspace(n_terms: int) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """The loop body's work arrays for a group of ``n_terms`` terms: the piece each term
    reads, its next break, whether it has just reached a knot, and small float rows (the
    piece's polynomial, Taylor shift scratch, critical points, roots, candidates)."""
    return (np.empty(n_terms, dtype=np.int64), np.empty(n_terms),
            np.empty(n_terms, dtype=np.bool_), np.empty((_WORK_ROWS, _WORK_WIDTH)))


@njit(**HELPER_OPTIONS)
def _horner(poly, degree, t):
    value = poly[degree]
    for i in range(degree - 1, -1, -1):
        value = value * t + poly[i]
    return value


@njit(**HELPER_OPTIONS)
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


@njit(**HELPER_OPTIONS)
def _critical_points(poly, degree, width, out, scratch):
    """Points in (0, width) where the derivative of poly vanishes; returns how many.
    ``scratch`` holds 6 floats (roots, then the cuts), so the hot loop allocates nothing."""
    n = 0
    if degree <= 3 or poly[4] == 0.0:
        # the derivative is a quadratic (4·poly[4] is zero exactly when poly[4] is)
        m = _quadratic_roots(3.0 * poly[3], 2.0 * poly[2], poly[1], scratch)
        for i in range(m):
            if 0.0 < scratch[i] < width:
                out[n] = scratch[i]
                n += 1
        return n
    # a cubic derivative d0 + d1 t + d2 t² + d3 t³: split (0, width) where it turns (the
    # cuts, scratch[2:]), then bracket each sign change by bisection
    d0 = poly[1]
    d1 = 2.0 * poly[2]
    d2 = 3.0 * poly[3]
    d3 = 4.0 * poly[4]
    m = _quadratic_roots(3.0 * d3, 2.0 * d2, d1, scratch)
    if m == 2 and scratch[0] > scratch[1]:
        first = scratch[1]
        scratch[1] = scratch[0]
        scratch[0] = first
    scratch[2] = 0.0
    n_cuts = 1
    for i in range(m):
        if 0.0 < scratch[i] < width:
            scratch[2 + n_cuts] = scratch[i]
            n_cuts += 1
    scratch[2 + n_cuts] = width
    n_cuts += 1
    for i in range(n_cuts - 1):
        lo = scratch[2 + i]
        hi = scratch[3 + i]
        f_lo = ((d3 * lo + d2) * lo + d1) * lo + d0
        f_hi = ((d3 * hi + d2) * hi + d1) * hi + d0
        if f_lo == 0.0 and 0.0 < lo:
            out[n] = lo
            n += 1
        elif (f_lo < 0.0) != (f_hi < 0.0) and f_hi != 0.0:
            for _ in range(200):
                mid = 0.5 * (lo + hi)
                if mid <= lo or mid >= hi:
                    break
                f_mid = ((d3 * mid + d2) * mid + d1) * mid + d0
                if (f_mid < 0.0) == (f_lo < 0.0):
                    lo = mid
                    f_lo = f_mid
                else:
                    hi = mid
            out[n] = 0.5 * (lo + hi)
            n += 1
    return n


@njit(**HELPER_OPTIONS)
def _horner_high(coef_high_first, s):
    value = coef_high_first[0]
    for i in range(1, coef_high_first.shape[0]):
        value = value * s + coef_high_first[i]
    return value


@njit(**HELPER_OPTIONS)
def _point_value(xi, off, piece, arrived, line_knots, m, line_coef, line_running, end_value,
                 weight, kind, own, own_value, constant):
    """The group's effect with its reference point exactly at ξ, every load counted where it
    stands: a load that has just reached knot ``piece[t]`` (``arrived``) reads the line's
    value AT that knot (at an end of the beam: on the beam; at the line's own jump: the value
    of a load standing on the section, ``own_value``); the others read their piece."""
    total = constant
    for t in range(weight.shape[0]):
        p = piece[t]
        if kind[t] == KIND_POINT:
            if arrived[t]:
                if p == own:
                    total += weight[t] * own_value
                elif p >= m:
                    total += weight[t] * _horner_high(line_coef[m - 1],
                                                      line_knots[m] - line_knots[m - 1])
                else:
                    total += weight[t] * line_coef[p, 3]
            elif 0 <= p < m:
                total += weight[t] * _horner_high(line_coef[p], xi - off[t] - line_knots[p])
        else:
            if p < 0:
                continue
            if p >= m:
                total += weight[t] * end_value
            elif arrived[t]:
                total += weight[t] * line_running[p, 4]
            else:
                total += weight[t] * _horner_high(line_running[p], xi - off[t] - line_knots[p])
    return total


@njit(**HELPER_OPTIONS)
def _place_terms(xi, off, kind, knots, m, piece, upcoming, arrived):
    """Put every term at reference position ξ: its piece (taken from the right: −1 left of
    the beam, m at or beyond its right end), its next break and whether it stands exactly on
    a knot; True when a concentrated load stands exactly on an end of the beam."""
    at_end = False
    for t in range(off.shape[0]):
        x = xi - off[t]
        if x < knots[0]:
            p = -1
        elif x >= knots[m]:
            p = m
        else:
            p = 0
            hi = m
            while hi - p > 1:
                mid = (p + hi) // 2
                if knots[mid] <= x:
                    p = mid
                else:
                    hi = mid
        piece[t] = p
        if p < 0:
            upcoming[t] = off[t] + knots[0]
        elif p < m:
            upcoming[t] = off[t] + knots[p + 1]
        else:
            upcoming[t] = np.inf
        arrived[t] = p >= 0 and x == knots[p]
        if arrived[t] and kind[t] == KIND_POINT and (p == 0 or p == m):
            at_end = True
    return at_end


@njit(**HELPER_OPTIONS)
def _advance_terms(nxt, off, kind, knots, m, piece, upcoming, arrived):
    """Move every term whose break is at ``nxt`` into its next piece (``arrived``); True when
    a concentrated load has just reached an end of the beam."""
    at_end = False
    for t in range(off.shape[0]):
        arrived[t] = upcoming[t] <= nxt
        if arrived[t]:
            p = piece[t] + 1 if piece[t] < m else m
            piece[t] = p
            upcoming[t] = off[t] + knots[p + 1] if p < m else np.inf
            if kind[t] == KIND_POINT and (p == 0 or p == m):
                at_end = True
    return at_end


@njit(**HELPER_OPTIONS)
def _shift_add(poly, coef_high_first, n_coef, s0, weight, work):
    """poly (low first) += weight · p(t + s0), p given highest power first, by repeated
    synthetic division; ``n_coef`` is a literal (4 or 5) at both calls: see the module's
    docstring."""
    for i in range(n_coef):
        work[i] = coef_high_first[n_coef - 1 - i]  # low first
    for i in range(n_coef):
        for k in range(n_coef - 2, i - 1, -1):
            work[k] += s0 * work[k + 1]
    for i in range(n_coef):
        poly[i] += weight * work[i]


@njit(**HELPER_OPTIONS)
def _piece_polynomial(poly, constant, piece, kind, weight, offset, n_terms, xi, knots, coef,
                      running, m, end_value, work):
    """poly (low first) = the response on the piece of ξ that starts at ``xi``: every term's
    polynomial (IL for a concentrated load, F for an end of a uniform load, F(L) past the
    beam's right end) shifted to ξ and weighted, plus ``constant``. ``work``: 5 floats."""
    for i in range(5):
        poly[i] = 0.0
    poly[0] = constant
    for t in range(n_terms):
        e = piece[t]
        if e < 0:
            continue
        # poly += weight · p(t + s0), p highest power first: a Taylor shift by repeated
        # synthetic division, written out for a cubic and for a quartic so that both loops
        # have fixed lengths (compiled unrolled: a length read at run time made the whole
        # scan two to three times slower)
        if kind[t] == KIND_POINT:
            if e < m:
                _shift_add(poly, coef[e], 4, xi - offset[t] - knots[e], weight[t], work)
        elif e < m:
            _shift_add(poly, running[e], 5, xi - offset[t] - knots[e], weight[t], work)
        else:
            poly[0] += weight[t] * end_value


@njit(**JIT_OPTIONS)
def _scan_chunk(start, stop, knots, n_pieces, coef, running, running_end, head, tail, peak,
                weight, kind, offsets, lines, constant_weight, degree, confined, prune,
                own_knot, own_value, end_live, result, piece, upcoming, arrived, work):
    """Rows start … stop − 1 into their own slice of ``result``: the one loop body, run on one
    thread or by chunks on several. ``piece``, ``upcoming``, ``arrived``, ``work``:
    the caller's work arrays (``scan_workspace``), one set per thread.

    A row sweeps the reference position ξ over every piece of its line's response (the line's
    own knots only). The group enters at the left (first term at x = 0) and leaves at the
    right. A ``confined`` group (a crane between its end stops) only stands where every
    concentrated load is on the beam. The row gets (max, ξ at max, side at max, min, ξ at
    min, side at min); side +1 is the limit from above (ξ → b⁺), −1 from below, 0 the exact
    position ξ (an interior point, or a load standing exactly on an end of the beam). The
    empty beam counts (value 0, ξ NaN).

    One-sided limits miss one kind of position: a load standing exactly ON an end of the beam
    (from outside it reads nothing, from inside it reads the limit) of a line that is not
    zero there or that jumps there (shear at a free tip: ``own_value``, the value of a load
    standing on the line's own section ``own_knot``). On lines flagged ``end_live`` every
    position where a concentrated load reaches an end is evaluated exactly as well.

    With ``prune`` (concentrated loads only), a row first sweeps from where its leading load
    reaches the line's largest piece to the right, and stops as soon as every load stands at
    or beyond a piece p where the response is at most Σ|w| · tail[p] and that cannot beat
    either extreme; then it sweeps the positions before, from the first one the bound
    ``head`` cannot rule out. Far from its section an influence line of a continuous beam
    dies away, so the work per line stops growing with the number of spans.
    """
    n_terms = weight.shape[0]
    shared = offsets.shape[0] == 1
    poly = work[_POLY]
    shift = work[_SHIFT]
    crit = work[_CRIT]
    roots = work[_ROOTS]
    # the positions each step offers as extremes, in the order they are offered (ties keep
    # the first): a piece's start (side +1), its end (−1), its critical points, then an
    # exact point value where a load has just reached an end of the beam
    cand_value = work[_CAND_VALUE]
    cand_at = work[_CAND_AT]
    cand_side = work[_CAND_SIDE]
    tail_weight = 0.0
    for t in range(n_terms):
        tail_weight += abs(weight[t])
    tail_weight *= 1.0 + 1e-12  # the bound stays a bound after rounding
    for row in range(start, stop):
        line = lines[row]
        m = n_pieces[line]
        line_knots = knots[line]
        line_coef = coef[line]
        line_running = running[line]
        end_value = running_end[line]
        own = own_knot[line]
        own_at = own_value[line]
        live = end_live[line]
        off = offsets[0] if shared else offsets[row]
        lo = off[0]
        hi = off[0]
        trailing = 0
        for t in range(1, n_terms):
            if off[t] < lo:
                lo = off[t]
            if off[t] > hi:
                hi = off[t]
                trailing = t
        lead = lo  # the leading load's offset: it stands at ξ − lead
        hi += line_knots[m]
        if confined:
            for t in range(n_terms):
                if kind[t] == KIND_POINT:
                    if off[t] > lo:
                        lo = off[t]
                    if line_knots[m] + off[t] < hi:
                        hi = line_knots[m] + off[t]
        best_max = 0.0
        pos_max = np.nan
        side_max = 0.0
        best_min = 0.0
        pos_min = np.nan
        side_min = 0.0
        constant = constant_weight * end_value
        split = lo
        if prune:  # the leading load on the line's largest piece, kept within [lo, hi]
            split = line_knots[peak[line]] + lead
            if split < lo:
                split = lo
            if split > hi:
                split = hi
        for phase in range(2):
            xi = split
            until = hi
            bounded = prune
            if phase == 1:
                if split <= lo:
                    break
                # with every load left of knot p the response is at most Σ|w| · head[p]:
                # skip the longest such stretch
                a = 0
                b = m
                while a < b:
                    mid = (a + b + 1) // 2
                    limit = tail_weight * head[line, mid]
                    if limit <= best_max and -limit >= best_min:
                        a = mid
                    else:
                        b = mid - 1
                xi = lo
                if a > 0:
                    if line_knots[a] + lead > lo:
                        xi = line_knots[a] + lead
                    if split < xi:
                        xi = split
                until = split
                bounded = False
                if xi >= split:
                    break
            at_end = _place_terms(xi, off, kind, line_knots, m, piece, upcoming, arrived)
            n_cand = 0
            if live and at_end:
                cand_value[0] = _point_value(xi, off, piece, arrived, line_knots, m, line_coef,
                                             line_running, end_value, weight, kind, own,
                                             own_at, constant)
                cand_at[0] = xi
                cand_side[0] = 0.0
                n_cand = 1
            while True:
                for k in range(n_cand):
                    v = cand_value[k]
                    if v > best_max:
                        best_max = v
                        pos_max = cand_at[k]
                        side_max = cand_side[k]
                    if v < best_min:
                        best_min = v
                        pos_min = cand_at[k]
                        side_min = cand_side[k]
                if not xi < until:
                    break
                if bounded:
                    p = piece[trailing]
                    if p >= 0:
                        limit = tail_weight * tail[line, p if p < m else m]
                        if limit <= best_max and -limit >= best_min:
                            break
                nxt = until  # the nearest break ahead (a term reaching its next piece)
                for t in range(n_terms):
                    if upcoming[t] < nxt:
                        nxt = upcoming[t]
                width = nxt - xi
                n_cand = 0
                if width > 0.0:
                    _piece_polynomial(poly, constant, piece, kind, weight, off, n_terms, xi,
                                      line_knots, line_coef, line_running, m, end_value, shift)
                    cand_value[0] = poly[0]
                    cand_at[0] = xi
                    cand_side[0] = 1.0
                    cand_value[1] = _horner(poly, degree, width)
                    cand_at[1] = nxt
                    cand_side[1] = -1.0
                    n_cand = 2 + _critical_points(poly, degree, width, crit, roots)
                    for k in range(2, n_cand):
                        cand_value[k] = _horner(poly, degree, crit[k - 2])
                        cand_at[k] = xi + crit[k - 2]
                        cand_side[k] = 0.0
                if nxt < np.inf:
                    at_end = _advance_terms(nxt, off, kind, line_knots, m, piece, upcoming,
                                            arrived)
                    if live and at_end:
                        cand_value[n_cand] = _point_value(nxt, off, piece, arrived, line_knots,
                                                          m, line_coef, line_running,
                                                          end_value, weight, kind, own, own_at,
                                                          constant)
                        cand_at[n_cand] = nxt
                        cand_side[n_cand] = 0.0
                        n_cand += 1
                xi = nxt
        result[row, 0] = best_max
        result[row, 1] = pos_max
        result[row, 2] = side_max
        result[row, 3] = best_min
        result[row, 4] = pos_min
        result[row, 5] = side_min


def scan_rows_serial(knots, n_pieces, coef, running, running_end, head, tail, peak, weight,
                     kind, offsets, lines, constant_weight, degree, confined, prune,
                     own_knot=None, own_value=None, end_live=None):
    """Exact extremes of a load group's response, one row per (line, arrangement).

    Parameters
    ----------
    knots : (n_lines, K) each line's own breakpoints (structural nodes and its own section);
        row j uses the first n_pieces[j] + 1 [length]
    n_pieces : (n_lines,)
    coef : (n_lines, K − 1, 4) cubic of each piece, highest power first, local to its start
    running : (n_lines, K − 1, 5) running integral F(x) = ∫₀ˣ IL on each piece (quartics)
    running_end : (n_lines,) F at the right end of the beam
    head, tail : (n_lines, K) bounds on |IL|: over the pieces before knot p, and over piece p
        and every piece after it (used with ``prune``)
    peak : (n_lines,) the piece with the largest bound
    weight, kind : (n_terms,) weight of each term and its kind (KIND_POINT or
        KIND_RUNNING_INTEGRAL)
    offsets : (n_rows, n_terms) or (1, n_terms) offset of each term behind the reference
        point, per row or shared by all rows [length]
    lines : (n_rows,) the line each row scans
    constant_weight : weight of F(L) that never moves (an unlimited load ahead)
    degree : 3 when only concentrated terms, else 4
    confined : only positions with every concentrated load on the beam (a crane between the
        end stops of its runway); otherwise the group enters and leaves the beam
    prune : skip positions that provably cannot beat the extremes (concentrated terms only)
    own_knot, own_value, end_live : (n_lines,) index in each line's knots of the section
        where its line jumps (−1: none), the value of a unit load standing exactly there,
        and whether positions with a load exactly on an end of the beam need evaluating
        (the line is not zero there, or jumps there); default: no line needs it

    Returns
    -------
    (n_rows, 6): max, ξ at max, side at max, min, ξ at min, side at min
    """
    own_knot, own_value, end_live = _own_defaults(knots.shape[0], own_knot, own_value,
                                                  end_live)
    result = np.empty((lines.shape[0], 6))
    scan_chunk(0, lines.shape[0], knots, n_pieces, coef, running, running_end, head, tail,
               peak, weight, kind, offsets, lines, float(constant_weight), int(degree),
               bool(confined), bool(prune), own_knot, own_value, end_live, result)
    return result


def _own_defaults(n_lines, own_knot, own_value, end_live):
    if own_knot is None:
        own_knot = np.full(n_lines, -1, dtype=np.int64)
    if own_value is None:
        own_value = np.zeros(n_lines)
    if end_live is None:
        end_live = np.zeros(n_lines, dtype=np.bool_)
    return (np.ascontiguousarray(own_knot, dtype=np.int64),
            np.ascontiguousarray(own_value, dtype=float),
            np.ascontiguousarray(end_live, dtype=np.bool_))


# ---------------------------------------------------------------------------------------------
# The first run. Compiling the loop body and its helpers costs about 5 s of CPU in a fresh
# process with an empty numba cache, while a small job (the standard job: 31 sections, a truck
# both ways) runs the same loop body through the interpreter in about 0.03 s. So until the
# compiled loop body is at hand, calls run its interpreted copy within a budget of work per
# process (``FirstRunTier``); the first call beyond it compiles.

# Interpreted cost: 14–20 µs per piece visit of ``row_work`` (the standard job, all four
# effects, 10 spans at 301 sections, 12 axles at 201 sections), against 30–70 ns compiled.
# 100,000 visits ≈ 1.5–2 s, under half the cold compile.
INTERPRETED_BUDGET_VISITS = 100_000

_tier = FirstRunTier(_scan_chunk, [_horner, _quadratic_roots, _critical_points, _horner_high,
                                   _point_value, _place_terms, _advance_terms, _shift_add,
                                   _piece_polynomial, _scan_chunk],
                     INTERPRETED_BUDGET_VISITS)


def use_compiled_loop_body() -> None:
    """Run the compiled loop body from now on, compiling it on the next call if it is not at
    hand (for benchmarks that time the compiled kernel, and for tests of it)."""
    _tier.use_compiled()


def interpreted_loop_body():
    """The interpreted copy of the loop body (``_scan_chunk``'s arguments): for tests that
    check it against the compiled one."""
    return _tier.interpreted()


def scan_chunk(start, stop, knots, n_pieces, coef, running, running_end, head, tail, peak,
               weight, kind, offsets, lines, constant_weight, degree, confined, prune,
               own_knot, own_value, end_live, result):
    """The loop body on rows start … stop − 1, arguments already checked and laid out
    (``engine.ScanPlan``), into ``result``; see ``scan_rows_serial``."""
    args = (start, stop, knots, n_pieces, coef, running, running_end, head, tail, peak,
            weight, kind, offsets, lines, constant_weight, degree, confined, prune, own_knot,
            own_value, end_live, result, *scan_workspace(weight.shape[0]))
    if _tier.compiled:  # the usual case, decided by one attribute
        _scan_chunk(*args)
        return
    visits = float(row_work(n_pieces, lines[start:stop], weight.shape[0], prune).sum())
    _tier.function(args, visits)(*args)


# ---------------------------------------------------------------------------------------------
# Threads. The compiled loop body releases the GIL (``nogil``), so plain Python threads run it
# in parallel on disjoint rows of one result array. Rows are cut into more chunks than threads
# and every thread takes the next chunk when it is done with one: the work estimate
# (``row_work``) is only an estimate (pruning stops some rows early), so fixed halves left one
# thread idle for up to 30 % of the call (balance 0.85 on an 80-axle train), and numba's
# own parallel loop over the same halves was slower still (59.5 ms against 48 ms for Python
# threads, serial 65 ms) and cost about 4 s of compiling on its first use.

# Threads are used when each thread's share holds at least this many piece visits (see
# ``row_work``). Calibrated by measurement (2 cores; scripts/bench_envelope.py section 3 and
# the fit described in ``row_work``): the serial kernel costs 35–70 ns per visit on jobs from
# 3 to 80 axles and 31 to 18,000 rows, and handing chunks to a second thread costs some tens of
# µs. 20,000 visits is about 1 ms of work per thread, twenty times that cost.
PARALLEL_FROM_VISITS_PER_THREAD = 20_000
# a chunk holds at least this many visits (about 0.25 ms), and each thread gets about
# CHUNKS_PER_THREAD of them to even out the estimate's errors
CHUNK_FROM_VISITS = 5_000
CHUNKS_PER_THREAD = 8

# the helper threads' pool: process id → (pool, its number of threads); a forked child,
# which has none of its parent's threads, makes its own
_pool: dict[int, tuple[ThreadPoolExecutor, int]] = {}


def _thread_pool(workers: int) -> ThreadPoolExecutor:
    pool, size = _pool.get(os.getpid(), (None, 0))
    if pool is None or size < workers:
        if pool is not None:
            pool.shutdown(wait=False)
        pool = ThreadPoolExecutor(max_workers=workers, thread_name_prefix="trundle-scan")
        _pool.clear()
        _pool[os.getpid()] = (pool, workers)
    return pool


def scan_rows_parallel(knots, n_pieces, coef, running, running_end, head, tail, peak, weight,
                       kind, offsets, lines, constant_weight, degree, confined, prune,
                       bounds, own_knot=None, own_value=None, end_live=None, threads=2):
    """``scan_rows_serial`` on ``threads`` threads: the rows cut into chunks at ``bounds``
    (n_chunks + 1,), each chunk run whole by whichever thread is free, writing only its own
    rows. Always the compiled loop body (a thread of interpreted code would hold the GIL)."""
    own_knot, own_value, end_live = _own_defaults(knots.shape[0], own_knot, own_value,
                                                  end_live)
    use_compiled_loop_body()
    result = np.empty((lines.shape[0], 6))
    common = (knots, n_pieces, coef, running, running_end, head, tail, peak, weight, kind,
              offsets, lines, float(constant_weight), int(degree), bool(confined),
              bool(prune), own_knot, own_value, end_live, result)
    chunks = iter(range(bounds.shape[0] - 1))
    taking = threading.Lock()
    n_terms = weight.shape[0]

    def worker() -> None:
        workspace = scan_workspace(n_terms)
        while True:
            with taking:
                c = next(chunks, None)
            if c is None:
                return
            _scan_chunk(int(bounds[c]), int(bounds[c + 1]), *common, *workspace)

    helpers = max(1, min(int(threads), bounds.shape[0] - 1)) - 1
    pool = _thread_pool(helpers) if helpers else None
    futures = [pool.submit(worker) for _ in range(helpers)] if pool else []
    worker()
    for future in futures:
        future.result()
    return result


def chunk_bounds(work: np.ndarray, threads: int) -> np.ndarray:
    """Cuts of rows into chunks of about equal estimated work (``work``: per row): about
    CHUNKS_PER_THREAD per thread, none below CHUNK_FROM_VISITS."""
    cumulative = np.cumsum(work)
    total = float(cumulative[-1]) if cumulative.shape[0] else 0.0
    n_chunks = int(max(threads, min(threads * CHUNKS_PER_THREAD, total // CHUNK_FROM_VISITS)))
    cuts = np.searchsorted(cumulative, total * np.arange(1, n_chunks) / n_chunks)
    return np.unique(np.concatenate([[0], cuts, [work.shape[0]]])).astype(np.int64)


def row_work(n_pieces: np.ndarray, lines: np.ndarray, n_terms: int, prune: bool
             ) -> np.ndarray:
    """Estimated piece visits of each row: every term crosses every piece of the line (plus
    the stretch where the group enters), so a row visits about (pieces + terms) × terms
    pieces of its response. Measured against the serial kernel's time on ten jobs (3 to 80
    axles, 3 to 100 spans, 31 to 3,001 sections): 35–70 ns per visit, where pieces × terms²
    (the cost of each visit summing every term) spread from 0.8 to 23 ns per unit, because
    a visit's fixed part (critical points, bookkeeping) outweighs its per-term part below
    about 30 terms."""
    pieces = n_pieces[lines]
    if prune:
        pieces = np.minimum(pieces, 12)  # a pruned row visits a few spans around its section
    return (pieces + n_terms) * float(n_terms)


def could_use_threads(n_pieces: np.ndarray, n_rows: int, n_terms: int) -> bool:
    """Whether a call could hold enough work for two threads (an upper bound of the work:
    every row visiting every piece of the longest line)."""
    most = n_rows * (int(n_pieces.max()) + n_terms) * float(n_terms)
    return most >= 2 * PARALLEL_FROM_VISITS_PER_THREAD and _cores() > 1


def scan_rows(knots, n_pieces, coef, running, running_end, head, tail, peak, weight, kind,
              offsets, lines, constant_weight, degree, confined=False, prune=False,
              threads: int | None = None, own_knot=None, own_value=None, end_live=None):
    """Exact extremes per row; see ``scan_rows_serial`` for the arguments. Rows go to
    threads only when each thread gets enough work to pay for it."""
    args = (knots, n_pieces, coef, running, running_end, head, tail, peak, weight, kind,
            offsets, lines, float(constant_weight), int(degree), bool(confined), bool(prune))
    work = None
    if threads is None:
        threads = 1
        n_terms = weight.shape[0]
        # an upper bound first: most calls are far too small to ask about threads at all
        if could_use_threads(n_pieces, lines.shape[0], n_terms):
            work = row_work(n_pieces, lines, n_terms, prune)
            threads = int(min(_cores(), float(work.sum()) // PARALLEL_FROM_VISITS_PER_THREAD))
    own = (own_knot, own_value, end_live)
    if threads <= 1 or lines.shape[0] < 2:
        return scan_rows_serial(*args, *own)
    if work is None:
        work = row_work(n_pieces, lines, weight.shape[0], prune)
    return scan_rows_parallel(*args, chunk_bounds(work, threads), *own, threads=threads)


def _threads() -> int:
    import numba

    return int(numba.get_num_threads())


def _cores() -> int:
    """Cores this process may run on (its CPU affinity), at most numba's thread count (which
    a user sets with NUMBA_NUM_THREADS). Not the load average: it counts this process's own
    recent threads as other load, so a call right after a parallel one kept to one thread
    (63 ms instead of 33 ms for an 80-axle train over 10 spans)."""
    try:
        allowed = len(os.sched_getaffinity(0))
    except (AttributeError, OSError):  # no affinity on this platform
        allowed = os.cpu_count() or 1
    return max(1, min(allowed, _threads()))


@njit(**JIT_OPTIONS)
def _evaluate_lines(knots, n_pieces, coef, x, from_left):
    """(len(x), n_lines): every line's piecewise polynomial at every x (each line on its own
    knots, ``coef`` highest power first); at a knot the piece on the left if ``from_left``,
    else the piece on the right; the end pieces extend beyond the ends."""
    n_lines = knots.shape[0]
    degree = coef.shape[2] - 1
    out = np.empty((x.shape[0], n_lines))
    for j in range(n_lines):
        m = n_pieces[j]
        for i in range(x.shape[0]):
            # the piece k with knots[k] < x ≤ knots[k + 1] (left) or knots[k] ≤ x < … (right)
            lo, hi = 0, m - 1
            while lo < hi:
                mid = (lo + hi + 1) // 2
                k = knots[j, mid]
                if (k < x[i]) if from_left else (k <= x[i]):
                    lo = mid
                else:
                    hi = mid - 1
            s = x[i] - knots[j, lo]
            value = coef[j, lo, 0]
            for p in range(1, degree + 1):
                value = value * s + coef[j, lo, p]
            out[i, j] = value
    return out


# The first run, as for the loop body: compiling ``_evaluate_lines`` costs 0.6–0.8 s in a
# fresh process, while interpreted it costs about 6 µs per line and x (206 calls of the
# floor-girder example: 2,188 of them, 14 ms). 50,000 ≈ 0.3 s, under half the compile.
INTERPRETED_BUDGET_EVALUATIONS = 50_000

_evaluate_tier = FirstRunTier(_evaluate_lines, [_evaluate_lines],
                              INTERPRETED_BUDGET_EVALUATIONS)


def evaluate_lines(knots, n_pieces, coef, x, from_left):
    """(len(x), n_lines): every line's piecewise polynomial at every x; see
    ``_evaluate_lines`` (compiled, or its interpreted copy on a first run)."""
    if _evaluate_tier.compiled:
        return _evaluate_lines(knots, n_pieces, coef, x, from_left)
    args = (knots, n_pieces, coef, x, from_left)
    return _evaluate_tier.function(args, float(x.shape[0]) * knots.shape[0])(*args)


def use_compiled_line_evaluation() -> None:
    """Evaluate lines compiled from now on (see ``use_compiled_loop_body``)."""
    _evaluate_tier.use_compiled()
