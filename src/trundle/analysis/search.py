"""The exact search of searched spacings and gaps: the global extreme, with no grid and no
assumption of one peak.

Every searched spacing or gap adds to the offsets of all loads behind it, so the terms of a
moving load split into rigid *sub-groups* g = 0 … G − 1 (the terms whose offsets move with the
same searched values), each one ahead of the next. With η_g the position of sub-group g, the
response is Σ_g R_g(η_g), each R_g the response of a rigid group, and the only constraints
are that each *link* η_g − η_{g+1} (the sum of the searched values between them) stays in its
range [lo_g, hi_g] — and, for a confined load (a crane between end stops), that every axle
stands on the beam.

At a maximiser (one-sided limits at jumps counting) each link is at lo, at hi or strictly
inside. Sub-groups joined by links at a bound form rigid *blocks*; every block can move a
little on its own, so it stands at a local maximum of its own response: at a break (taken
from either side), at a critical point of a piece, or at an end of where it may stand. For
each of the 3^(G − 1) assignments of the links, ``scan.candidates.search_lines`` lists each
block's candidates (blocks are shared by many assignments and listed once per line) and solves
the chain by dynamic programming; the best assignment is the global extreme. The searched
values are read back from the chosen positions, and the exact fixed-spacing scan at those
values must give the same extreme (a self-check that raises an internal error if not).
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from trundle.core.beam import ModelError
from trundle.scan.candidates import FREE, candidate_capacity, search_lines
from trundle.scan.engine import LineBatch, scan_arrangements
from trundle.scan.kernels import KIND_RUNNING_INTEGRAL

MAX_LINKS = 9  # 3^9 = 19683 link assignments per line: beyond that the cost is not reasonable
CHECK_TOLERANCE = 1e-9  # self-check: the search and the fixed-spacing scan agree to this


class SearchError(RuntimeError):
    """The search and the exact fixed-spacing scan disagree: a defect in trundle, not in the
    model."""


@dataclass(frozen=True)
class SearchPlan:
    """The chain of sub-groups of one arrangement and every block the search needs.

    Fields
    ------
    n_links : G − 1
    link_lo, link_hi : (n_links,) range of each link [length]
    link_params : per link, (parameter indices, coefficients): link = Σ coefficient · value
    fixed_params : parameters that move no sub-group against another (held at their lower
        bound: they only shift the whole load, which the scan covers)
    block_term_start, term_weight, term_kind, term_offset : the terms of every block, offsets
        behind the block's reference point (the position of its first sub-group)
    block_degree : 3, or 4 with uniform-load terms
    block_shift : (n_blocks,) η of the first sub-group − η of the last (the fixed links inside)
    block_last : (n_blocks,) the block's last sub-group (the link after it)
    assign_blocks, assign_count, assign_codes : per assignment of the links (codes 0 lower
        bound, 1 upper bound, 2 free), the blocks of the chain in order
    """

    n_links: int
    link_lo: NDArray[np.float64]
    link_hi: NDArray[np.float64]
    link_params: tuple[tuple[NDArray[np.int64], NDArray[np.float64]], ...]
    fixed_params: NDArray[np.int64]
    block_term_start: NDArray[np.int64]
    term_weight: NDArray[np.float64]
    term_kind: NDArray[np.int64]
    term_offset: NDArray[np.float64]
    block_degree: NDArray[np.int64]
    block_shift: NDArray[np.float64]
    block_last: NDArray[np.int64]
    assign_blocks: NDArray[np.int64]
    assign_count: NDArray[np.int64]
    assign_codes: NDArray[np.int64]

    def parameter_values(self, links: NDArray[np.float64], low: NDArray[np.float64],
                         high: NDArray[np.float64]) -> NDArray[np.float64]:
        """(…, n_params) searched values giving link values ``links`` (…, n_links): a link of
        several parameters moves them all by the same fraction of their ranges."""
        links = np.asarray(links, dtype=float)
        out = np.broadcast_to(low, (*links.shape[:-1], low.size)).copy()
        for j, (idx, coefficient) in enumerate(self.link_params):
            span = self.link_hi[j] - self.link_lo[j]
            t = np.clip((links[..., j] - self.link_lo[j]) / span, 0.0, 1.0)[..., None]
            width = high[idx] - low[idx]
            out[..., idx] = np.where(coefficient > 0, low[idx] + t * width,
                                     high[idx] - t * width)
        return out


def plan_search(weights: NDArray[np.float64], kinds: NDArray[np.int64],
                base: NDArray[np.float64], slope: NDArray[np.float64],
                low: NDArray[np.float64], high: NDArray[np.float64],
                what: str = "moving load") -> SearchPlan:
    """The chain structure of an arrangement whose offsets are ``base + values @ slope``.

    Raises ModelError if the searched values do not form a chain (each sub-group's searched
    values contain those of the one before): the exact search would not apply, and no other
    search is offered in its place.
    """
    n_params, n_terms = slope.shape
    columns = np.round(slope.T, 12)  # (n_terms, n_params): how each term's offset moves
    distinct, group_of = np.unique(columns, axis=0, return_inverse=True)
    group_of = np.asarray(group_of).ravel()
    support = distinct != 0.0
    order = np.argsort(support.sum(axis=1), kind="stable")
    distinct, support = distinct[order], support[order]
    rank = np.empty_like(order)
    rank[order] = np.arange(order.size)
    group_of = rank[group_of]
    n_groups = distinct.shape[0]
    for g in range(n_groups - 1):
        inner, outer = support[g], support[g + 1]
        nested = (not np.any(inner & ~outer) and np.any(outer & ~inner)
                  and np.array_equal(distinct[g][inner], distinct[g + 1][inner]))
        if not nested:
            raise ModelError(f"{what}: its searched spacings and gaps do not form a chain (each "
                             "load behind another moved by the same searched values and more); "
                             "the exact search cannot take it")
    n_links = n_groups - 1
    if n_links > MAX_LINKS:
        raise ModelError(f"{what}: expected at most {MAX_LINKS} independently searched "
                         f"stretches between its loads, found {n_links}; fix some spacings or "
                         "gaps")
    link_params = []
    link_lo = np.zeros(n_links)
    link_hi = np.zeros(n_links)
    for j in range(n_links):
        d = distinct[j + 1] - distinct[j]
        idx = np.flatnonzero(d != 0.0).astype(np.int64)
        coefficient = d[idx]
        ends = np.stack([coefficient * low[idx], coefficient * high[idx]])
        link_lo[j], link_hi[j] = ends.min(axis=0).sum(), ends.max(axis=0).sum()
        link_params.append((idx, coefficient))
    moved = np.zeros(n_params, dtype=bool)
    for idx, _ in link_params:
        moved[idx] = True
    fixed_params = np.flatnonzero(~moved).astype(np.int64)
    terms_of = [np.flatnonzero(group_of == g) for g in range(n_groups)]

    # every block: sub-groups i … j with the links inside at a bound (0 lower, 1 upper)
    block_id: dict[tuple, int] = {}
    term_start = [0]
    t_weight: list[float] = []
    t_kind: list[int] = []
    t_offset: list[float] = []
    degree, shift, last = [], [], []
    for i in range(n_groups):
        for j in range(i, n_groups):
            for codes in itertools.product((0, 1), repeat=j - i):
                behind = 0.0  # η_i − η_g for the sub-group g being added
                for g in range(i, j + 1):
                    if g > i:
                        l = g - 1
                        behind += link_lo[l] if codes[l - i] == 0 else link_hi[l]
                    for t in terms_of[g]:
                        t_weight.append(float(weights[t]))
                        t_kind.append(int(kinds[t]))
                        t_offset.append(float(base[t]) + behind)
                block_id[(i, j, codes)] = len(shift)
                term_start.append(len(t_weight))
                members = np.concatenate([terms_of[g] for g in range(i, j + 1)])
                degree.append(4 if np.any(kinds[members] == KIND_RUNNING_INTEGRAL) else 3)
                shift.append(behind)
                last.append(j)
    assign_codes = np.array(list(itertools.product((0, 1, FREE), repeat=n_links)),
                            dtype=np.int64).reshape(-1, n_links)
    assign_blocks = np.full((assign_codes.shape[0], n_groups), -1, dtype=np.int64)
    assign_count = np.zeros(assign_codes.shape[0], dtype=np.int64)
    for a, codes in enumerate(assign_codes):
        first = 0
        for g in range(n_groups):
            if g == n_groups - 1 or codes[g] == FREE:
                inside = tuple(int(c) for c in codes[first:g])
                assign_blocks[a, assign_count[a]] = block_id[(first, g, inside)]
                assign_count[a] += 1
                first = g + 1
    return SearchPlan(n_links, link_lo, link_hi, tuple(link_params), fixed_params,
                      np.asarray(term_start, dtype=np.int64), np.asarray(t_weight, dtype=float),
                      np.asarray(t_kind, dtype=np.int64), np.asarray(t_offset, dtype=float),
                      np.asarray(degree, dtype=np.int64), np.asarray(shift, dtype=float),
                      np.asarray(last, dtype=np.int64), assign_blocks, assign_count,
                      assign_codes)


@dataclass(frozen=True)
class SearchedExtremes:
    """Exact extremes over positions and searched values, one per line.

    Fields
    ------
    value : (2, n) max and min (0 where the empty beam governs)
    xi : (2, n) reference position at the extreme (NaN: the empty beam) [length]
    side : (2, n) +1 / −1 the one-sided limit from above / below at a jump, 0 exact
    searched : (2, n, n_params) the searched values at the extreme [length]
    """

    value: NDArray[np.float64]
    xi: NDArray[np.float64]
    side: NDArray[np.int64]
    searched: NDArray[np.float64]


def searched_extremes(batch: LineBatch, weights: NDArray[np.float64], kinds: NDArray[np.int64],
                      constant: float, base: NDArray[np.float64], slope: NDArray[np.float64],
                      low: NDArray[np.float64], high: NDArray[np.float64], confined: bool,
                      lines: NDArray[np.int64] | None = None, what: str = "moving load"
                      ) -> SearchedExtremes:
    """The global max and min of every line over the reference position and the searched
    values (box ``low`` … ``high``), exact to rounding, with the configuration of each."""
    low = np.asarray(low, dtype=float)
    high = np.asarray(high, dtype=float)
    lines = np.arange(batch.n_lines, dtype=np.int64) if lines is None else lines
    plan = plan_search(weights, kinds, base, slope, low, high, what)
    n_block_terms = np.diff(plan.block_term_start)
    capacity = int(sum(candidate_capacity(int(t), int(batch.n_pieces.max()))
                       for t in n_block_terms))
    margin = 1e-12 * batch.length
    values, links = search_lines(
        batch.line_knots, batch.n_pieces, batch.line_coef, batch.line_running,
        batch.running_end, batch.own_knot, batch.own_value, batch.end_live,
        np.ascontiguousarray(lines, dtype=np.int64), plan.block_term_start,
        plan.term_weight, plan.term_kind, plan.term_offset, plan.block_degree,
        plan.block_shift, plan.block_last, bool(confined), plan.assign_blocks,
        plan.assign_count, plan.assign_codes, plan.link_lo, plan.link_hi, margin, capacity)
    values = values + constant * batch.running_end[lines][:, None]
    n = lines.size
    scale = _rounding_scale(batch, weights, kinds, constant, lines)
    value = np.zeros((2, n))
    xi = np.full((2, n), np.nan)
    side = np.zeros((2, n), dtype=np.int64)
    searched = np.zeros((2, n, low.size))
    for w, col in ((0, 0), (1, 3)):
        sign = 1.0 if w == 0 else -1.0
        # the empty beam counts (value 0), as in the scan
        dp = np.where(sign * values[:, w] > 0.0, values[:, w], 0.0)
        bound = CHECK_TOLERANCE * np.maximum(scale, np.abs(dp))
        todo = np.arange(n)
        # the exact fixed-spacing scan at the values found must reach the same extreme.
        # Where the search joins blocks standing at one-sided limits, its value is a limit
        # that the links found reach only a hair shorter (or longer): a confined load whose
        # wheels then span the beam exactly (at both end stops) is, for the scan, not
        # standing; a load that stands just right of a section (a limit from above) while
        # the last one stands exactly on a free tip has, at those links, that last load a
        # hair beyond the tip. The scan at the nudged links then confirms the value.
        nudge = 1e-11 * batch.length
        for step in (0.0, nudge, -nudge):
            trial = np.clip(links[todo, w] + step, plan.link_lo, plan.link_hi)
            found = plan.parameter_values(trial, low, high)
            check = scan_arrangements(batch, weights, kinds, base[None, :] + found @ slope,
                                      lines[todo], constant, confined)
            scanned = np.where(np.isnan(check[:, col + 1]), 0.0, check[:, col])
            agree = np.abs(scanned - dp[todo]) <= bound[todo]
            done = todo[agree]
            # equal to rounding: keep the larger, and the scan's position and side
            value[w, done] = np.where(sign * scanned[agree] >= sign * dp[done],
                                      scanned[agree], dp[done])
            xi[w, done] = check[agree, col + 1]
            side[w, done] = check[agree, col + 2].astype(np.int64)
            searched[w, done] = found[agree]
            if step == 0.0:
                first_found, first_scanned = found, scanned
            todo = todo[~agree]
            if todo.size == 0:
                break
        if todo.size:
            j = int(todo[0])
            raise SearchError(
                f"{what}: internal error: the exact search gives {dp[j]!r} on line "
                f"{int(lines[j])} but the fixed-spacing scan at the values it found "
                f"({first_found[j].tolist()}) gives {first_scanned[j]!r}; please report this")
        value[w] = np.where(np.isnan(xi[w]), 0.0, value[w])
    return SearchedExtremes(value, xi, side, searched)


def _rounding_scale(batch: LineBatch, weights: NDArray[np.float64], kinds: NDArray[np.int64],
                    constant: float, lines: NDArray[np.int64]) -> NDArray[np.float64]:
    """Per line, the size of the largest sum the response is made of: the scale of rounding."""
    largest = batch.head[lines, batch.n_pieces[lines]]  # bound of |IL| over the whole line
    point = kinds != KIND_RUNNING_INTEGRAL
    total = np.abs(weights[point]).sum() * largest
    total += (np.abs(weights[~point]).sum() + abs(constant)) * largest * batch.length
    return total
