"""Compiled kernels of the exact search over searched spacings and gaps.

A moving load whose spacings and gaps are searched splits into rigid *sub-groups* (the loads
that move together whatever the searched values are), chained by *links* (η_g − η_{g+1}, the
sum of the searched values between them, free in an interval). At a maximiser every link is
at its lower bound, at its upper bound or strictly inside; the sub-groups joined by links at a
bound form rigid *blocks*, and each block then stands where its own rigid response has a local
maximum: at a break (taken as either one-sided limit), at a critical point inside a piece, or
at an end of the interval it may stand in (a confined crane). ``block_candidates`` lists those
positions for one block on one line (the same closed forms as ``kernels._scan_chunk``, every
candidate kept instead of the best); ``search_lines`` solves, for every assignment of the links
to {lower bound, upper bound, free}, the chain of blocks by dynamic programming over their
candidates (a sliding-window maximum per free link), and keeps the best. The result is the
global extreme over every position and every searched value, exact to rounding.
"""

from __future__ import annotations

import numpy as np
from numba import njit

from trundle.core._jit import FirstRunTier
from trundle.scan._config import JIT_OPTIONS
from trundle.scan.kernels import (
    _CRIT,
    _POLY,
    _ROOTS,
    _SHIFT,
    _WORK_ROWS,
    _WORK_WIDTH,
    KIND_POINT,
    _advance_terms,
    _critical_points,
    _horner,
    _horner_high,
    _piece_polynomial,
    _place_terms,
    _point_value,
    _quadratic_roots,
    _shift_add,
)

FREE = 2  # link code: strictly inside its range (0: at its lower bound, 1: at its upper)


def candidate_capacity(n_terms: int, n_pieces: int) -> int:
    """Most candidates one block of ``n_terms`` terms can give on a line of ``n_pieces``
    pieces: every piece of its response gives both ends and at most three critical points,
    plus the two stretches off the beam, and one exact point value per break (a load standing
    exactly on an end of the beam)."""
    return (n_terms * (n_pieces + 1) + 1) * 6 + 3


@njit(**JIT_OPTIONS)
def block_candidates(knots, m, coef, running, end_value, weight, kind, offset, degree,
                     confined, own, own_value, live, pos, val, side, start):
    """Every position where a rigid block can stand at a local extreme of its own response
    on one line, written from index ``start`` of ``pos``/``val``/``side``; returns the index
    after the last one written.

    The block's terms (``weight``, ``kind``, ``offset`` behind the block's reference point, as
    in ``kernels._scan_chunk``) read line pieces ``knots[:m + 1]``, ``coef`` (cubics, highest
    power first) and ``running`` (quartics of ∫₀ˣ IL), ``end_value`` = ∫₀ᴸ IL. Candidates: both
    ends of every piece of the response (side +1: the limit from above at the piece's start;
    −1: from below at its end), every interior critical point (side 0) and, unless
    ``confined``, the two stretches with the block wholly off the beam (at the first break
    from below and at the last from above). A ``confined`` block with concentrated loads
    stands only with every one of them on the beam; it gives nothing if it cannot.

    On a line flagged ``live`` (``kernels._scan_chunk``: a load standing exactly on an end of
    the beam reads something neither one-sided limit reads, e.g. shear at a free tip, whose
    own section ``own`` reads ``own_value``) every position where a concentrated load stands
    exactly on an end is a candidate too (side 0), valued as it stands.
    """
    n_terms = weight.shape[0]
    length = knots[m]
    lo = offset[0]
    hi = offset[0]
    for t in range(1, n_terms):
        lo = min(lo, offset[t])
        hi = max(hi, offset[t])
    hi += length
    restricted = False
    if confined:
        for t in range(n_terms):
            if kind[t] == KIND_POINT:
                if not restricted:
                    lo, hi, restricted = offset[t], length + offset[t], True
                else:
                    lo = max(lo, offset[t])
                    hi = min(hi, length + offset[t])
    k = start
    if restricted and not lo < hi:
        return k
    piece = np.empty(n_terms, dtype=np.int64)
    upcoming = np.empty(n_terms)
    arrived = np.empty(n_terms, dtype=np.bool_)
    work = np.empty((_WORK_ROWS, _WORK_WIDTH))
    poly = work[_POLY]
    shift = work[_SHIFT]
    crit = work[_CRIT]
    roots = work[_ROOTS]
    # written as single statements, not tuples: numba compiles tuple packing slowly
    if not restricted:
        pos[k] = lo  # every term still left of the beam
        val[k] = 0.0
        side[k] = -1.0
        k += 1
    xi = lo
    at_end = _place_terms(xi, offset, kind, knots, m, piece, upcoming, arrived)
    while True:
        if live and at_end:
            pos[k] = xi
            val[k] = _point_value(xi, offset, piece, arrived, knots, m, coef, running,
                                  end_value, weight, kind, own, own_value, 0.0)
            side[k] = 0.0
            k += 1
        if not xi < hi:
            break
        nxt = hi  # the nearest break ahead (a term reaching its next piece)
        for t in range(n_terms):
            if upcoming[t] < nxt:
                nxt = upcoming[t]
        width = nxt - xi
        if width > 0.0:
            _piece_polynomial(poly, 0.0, piece, kind, weight, offset, n_terms, xi, knots, coef,
                              running, m, end_value, shift)
            n_crit = _critical_points(poly, degree, width, crit, roots)
            # the piece's start, its critical points, its end
            for c in range(n_crit + 2):
                if c == 0:
                    pos[k] = xi
                    val[k] = poly[0]
                    side[k] = 1.0
                elif c <= n_crit:
                    pos[k] = xi + crit[c - 1]
                    val[k] = _horner(poly, degree, crit[c - 1])
                    side[k] = 0.0
                else:
                    pos[k] = nxt
                    val[k] = _horner(poly, degree, width)
                    side[k] = -1.0
                k += 1
        at_end = _advance_terms(nxt, offset, kind, knots, m, piece, upcoming, arrived)
        xi = nxt
    if not restricted:
        beyond = 0.0  # every term right of the beam: uniform loads read all of ∫₀ᴸ IL
        for t in range(n_terms):
            if kind[t] != KIND_POINT:
                beyond += weight[t] * end_value
        pos[k] = hi
        val[k] = beyond
        side[k] = 1.0
        k += 1
    return k


@njit(**JIT_OPTIONS)
def _sort_block(pos, val, side, start, stop):
    """Candidates start … stop − 1 in increasing position, equal positions in the order they
    were written (a stable sort). The sweep writes them in order but for the few critical
    points of one piece, so an insertion sort does linear work here (and compiles in a
    fraction of the time numpy's argsort and fancy indexing take on a first run)."""
    for i in range(start + 1, stop):
        p = pos[i]
        v = val[i]
        s = side[i]
        j = i - 1
        while j >= start and pos[j] > p:
            pos[j + 1] = pos[j]
            val[j + 1] = val[j]
            side[j + 1] = side[j]
            j -= 1
        pos[j + 1] = p
        val[j + 1] = v
        side[j + 1] = s


@njit(**JIT_OPTIONS)
def chain_maximum(pos, signed, block_start, blocks, n_blocks, shift, link_of, link_lo,
                  link_hi, margin, best, back, window):
    """Dynamic programming over a chain of blocks: the largest Σ signed(c_b) over one
    candidate c_b per block such that each free link between consecutive blocks stays
    strictly inside its range (by ``margin``).

    ``blocks[:n_blocks]`` are block ids; block b's candidates are ``block_start[b]`` …
    ``block_start[b + 1]`` − 1, sorted by position. Between blocks p and q (consecutive) the
    link ``link_of[p]`` = pos_p − ``shift[p]`` − pos_q must lie in (``link_lo``, ``link_hi``).
    ``best`` and ``back`` (the candidate of the previous block chosen) are written at the
    blocks' own candidate slots; ``window`` is scratch. Returns (value, candidate of the last
    block), value −inf if no choice satisfies the links.
    """
    first = blocks[0]
    for c in range(block_start[first], block_start[first + 1]):
        best[c] = signed[c]
        back[c] = -1
    for b in range(1, n_blocks):
        p = blocks[b - 1]
        q = blocks[b]
        p0, p1 = block_start[p], block_start[p + 1]
        j = link_of[p]
        low = shift[p] + link_lo[j] + margin
        high = shift[p] + link_hi[j] - margin
        head = 0
        tail = 0  # window[head:tail]: candidates of p, best values decreasing
        right = p0
        for c in range(block_start[q], block_start[q + 1]):
            wl = pos[c] + low
            wr = pos[c] + high
            while right < p1 and pos[right] <= wr:
                while tail > head and best[window[tail - 1]] <= best[right]:
                    tail -= 1
                window[tail] = right
                tail += 1
                right += 1
            while tail > head and pos[window[head]] < wl:
                head += 1
            if tail > head and best[window[head]] > -np.inf:
                best[c] = signed[c] + best[window[head]]
                back[c] = window[head]
            else:
                best[c] = -np.inf
                back[c] = -1
    last = blocks[n_blocks - 1]
    value = -np.inf
    chosen = -1
    for c in range(block_start[last], block_start[last + 1]):
        if best[c] > value:
            value = best[c]
            chosen = c
    return value, chosen


@njit(**JIT_OPTIONS)
def _search_lines(knots, n_pieces, coef, running, running_end, own_knot, own_value, end_live,
                 lines, block_term_start,
                 term_weight, term_kind, term_offset, block_degree, block_shift, block_last,
                 confined, assign_blocks, assign_count, assign_codes, link_lo, link_hi,
                 margin, capacity):
    """The global max and min over positions and searched links of each row's line.

    Returns (values (n_rows, 2): max and min of the sum of the blocks' responses (without
    the arrangement's constant part); links (n_rows, 2, n_links): the link values at each
    extreme). A value of ∓inf means no arrangement can stand (a confined load too long).
    """
    n_rows = lines.shape[0]
    n_blocks = block_term_start.shape[0] - 1
    n_links = link_lo.shape[0]
    n_assign = assign_blocks.shape[0]
    values = np.empty((n_rows, 2))
    links = np.zeros((n_rows, 2, n_links))
    pos = np.empty(capacity)
    val = np.empty(capacity)
    side = np.empty(capacity)
    signed = np.empty(capacity)
    best = np.empty(capacity)
    back = np.empty(capacity, dtype=np.int64)
    window = np.empty(capacity, dtype=np.int64)
    block_start = np.empty(n_blocks + 1, dtype=np.int64)
    picked = np.empty(n_links + 1, dtype=np.int64)
    for row in range(n_rows):
        line = lines[row]
        m = n_pieces[line]
        # an int64 from the start: a literal 0 here makes numba compile the candidate kernels
        # twice (once for the literal, once for the int64 it widens to)
        k = np.int64(0)
        for b in range(n_blocks):
            block_start[b] = k
            t0, t1 = block_term_start[b], block_term_start[b + 1]
            k1 = block_candidates(knots[line], m, coef[line], running[line],
                                  running_end[line], term_weight[t0:t1], term_kind[t0:t1],
                                  term_offset[t0:t1], block_degree[b], confined,
                                  own_knot[line], own_value[line], end_live[line], pos, val,
                                  side, k)
            _sort_block(pos, val, side, k, k1)
            k = k1
        block_start[n_blocks] = k
        for w in range(2):
            sign = 1.0 if w == 0 else -1.0
            for c in range(k):
                signed[c] = sign * val[c]
            top = -np.inf
            for a in range(n_assign):
                nb = assign_count[a]
                blocks = assign_blocks[a]
                value, chosen = chain_maximum(pos, signed, block_start, blocks, nb,
                                              block_shift, block_last, link_lo, link_hi,
                                              margin, best, back, window)
                if value > top:
                    top = value
                    # walk back from the last block to the first
                    c = chosen
                    for b in range(nb - 1, -1, -1):
                        picked[b] = c
                        c = back[c]
                    for j in range(n_links):
                        code = assign_codes[a, j]
                        links[row, w, j] = link_lo[j] if code == 0 else link_hi[j]
                    for b in range(nb - 1):
                        p = blocks[b]
                        j = block_last[p]
                        links[row, w, j] = pos[picked[b]] - block_shift[p] - pos[picked[b + 1]]
            values[row, w] = sign * top
    return values, links


# The first run (see ``core._jit.FirstRunTier``): compiling these kernels and the loop body's
# helpers they call costs about 5 s in a fresh process with an empty numba cache; a small
# search runs interpreted in a fraction of a second. The work of a call is counted as rows ×
# candidate capacity × (1 + assignments): the candidates of each row, and one pass of the
# chain over them per assignment. Interpreted: 0.65–1.6 µs per unit (the standard truck with
# one searched spacing over 31 sections, and two searched spacings over 201 sections); compiled
# about 300 times less. 1,000,000 units ≈ 0.7–1.6 s, under half the compile.
INTERPRETED_BUDGET_UNITS = 1_000_000

_tier = FirstRunTier(_search_lines, [_horner, _quadratic_roots, _critical_points,
                                     _horner_high, _point_value, _place_terms, _advance_terms,
                                     _shift_add, _piece_polynomial, block_candidates,
                                     _sort_block, chain_maximum, _search_lines],
                     INTERPRETED_BUDGET_UNITS)


def search_lines(knots, n_pieces, coef, running, running_end, own_knot, own_value, end_live,
                 lines, block_term_start, term_weight, term_kind, term_offset, block_degree,
                 block_shift, block_last, confined, assign_blocks, assign_count, assign_codes,
                 link_lo, link_hi, margin, capacity):
    """The global max and min over positions and searched links of each row's line: see
    ``_search_lines`` (compiled, or its interpreted copy on a first run)."""
    args = (knots, n_pieces, coef, running, running_end, own_knot, own_value, end_live, lines,
            block_term_start, term_weight, term_kind, term_offset, block_degree, block_shift,
            block_last, confined, assign_blocks, assign_count, assign_codes, link_lo, link_hi,
            margin, capacity)
    if _tier.compiled:
        return _search_lines(*args)
    work = float(lines.shape[0]) * capacity * (1 + assign_blocks.shape[0])
    return _tier.function(args, work)(*args)


def use_compiled_search() -> None:
    """Run the compiled search from now on (benchmarks and tests of it)."""
    _tier.use_compiled()


def interpreted_search():
    """The interpreted copy of ``_search_lines`` (for tests that check it bit for bit)."""
    return _tier.interpreted()
