"""Passage histories: every line's response as a load group crosses the beam once."""

from __future__ import annotations

import numpy as np
from numpy.typing import NDArray

from trundle.scan.engine import LineBatch, TermGroup


def passage_history(batch: LineBatch, group: TermGroup, samples: int = 2001
                    ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Every line's response as the group crosses once: (ξ (N,), values (N, n_lines)).

    Sampled at every break (an axle over a knot) and on a fine even grid in between. A
    confined group (a crane) travels from one end of the beam to the other with every
    wheel on it; another enters and leaves.
    """
    weights, offsets, kinds, constant = group.terms()
    lo, hi = offsets.min(), batch.length + offsets.max()
    if group.confined:
        lo, hi = offsets.max(), batch.length + offsets.min()
    breaks = (batch.knots[None, :] + offsets[:, None]).ravel()
    xi = np.unique(np.concatenate([np.linspace(lo, hi, samples), breaks[(breaks >= lo)
                                                                        & (breaks <= hi)]]))
    values = np.zeros((xi.size, batch.n_lines))
    for w, d in zip(weights, offsets, strict=True):
        values += w * batch.ordinates(xi - d, "right")
    return xi, values


# t = 0, 1/3, 2/3, 1 -> coefficients of a + b t + c t² + d t³ (the response is exactly a cubic
# in ξ between two consecutive breaks when every load is concentrated)
_CUBIC_FROM_FOUR = np.linalg.inv(np.vander(np.array([0.0, 1 / 3, 2 / 3, 1.0]), 4,
                                           increasing=True))


def exact_turning_points(batch: LineBatch, weights: NDArray[np.float64],
                         offsets: NDArray[np.float64]
                         ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Every line's response to concentrated loads crossing once, as the exact sequence of
    its turning points: (ξ (N,), values (N, n_lines)), the loads at ξ − offsets.

    Between consecutive breaks (a load over a knot) the response is one cubic in ξ, so its
    local extremes are the ends of the interval (both one-sided limits at a break, so a jump
    of a shear line is kept) and the roots of its derivative. The cubic of each interval is
    found from four values in it (exact for a cubic, to rounding), its stationary points in
    closed form, and the response is then evaluated there directly. Everything a rainflow
    count needs, with no sampling step: rows where a line has no stationary point repeat an
    end value (harmless to the count), so every line shares the ξ of its rows only where it
    has one there.
    """
    weights = np.asarray(weights, dtype=float)
    offsets = np.asarray(offsets, dtype=float)
    lo, hi = offsets.min(), batch.length + offsets.max()
    breaks = (batch.knots[None, :] + offsets[:, None]).ravel()
    xi = np.unique(np.concatenate([[lo, hi], breaks[(breaks >= lo) & (breaks <= hi)]]))
    a, b = xi[:-1], xi[1:]
    width = b - a

    def response(x: NDArray[np.float64], side: str) -> NDArray[np.float64]:
        flat = x.ravel()
        total = np.zeros((flat.size, batch.n_lines))
        for w, d in zip(weights, offsets, strict=True):
            total += w * batch.ordinates(flat - d, side)
        return total.reshape(*x.shape, batch.n_lines)

    start = response(a, "right")  # (k, lines): limit from above at the interval's start
    end = response(b, "left")
    inner = response(a[:, None] + width[:, None] * np.array([1 / 3, 2 / 3])[None, :], "right")
    four = np.stack([start, inner[:, 0], inner[:, 1], end], axis=1)  # (k, 4, lines)
    coef = np.einsum("ij,kjl->kil", _CUBIC_FROM_FOUR, four)  # a, b, c, d per (k, line)
    qa, qb, qc = 3.0 * coef[:, 3], 2.0 * coef[:, 2], coef[:, 1]  # derivative qa t² + qb t + qc
    scale = np.abs(four).max(axis=1) + 1e-300
    with np.errstate(divide="ignore", invalid="ignore"):
        disc = qb * qb - 4.0 * qa * qc
        sq = np.sqrt(np.where(disc >= 0.0, disc, np.nan))
        q = -0.5 * (qb + np.copysign(sq, qb))
        quadratic = np.abs(qa) > 1e-14 * scale
        r1 = np.where(quadratic, q / qa, -qc / qb)
        r2 = np.where(quadratic, qc / q, np.nan)
    roots = np.sort(np.stack([r1, r2], axis=1), axis=1)  # (k, 2, lines), NaN last
    # a stationary point within a hair of a break is that break's value to rounding (the slope
    # is zero there), and read at the break itself it would snap to the other side of a jump
    hair = 1e-9 * max(1.0, batch.length) / np.where(width > 0.0, width, 1.0)
    inside = (roots > hair[:, None, None]) & (roots < 1.0 - hair[:, None, None])
    t = np.where(inside, roots, np.nan)
    at = a[:, None, None] + width[:, None, None] * t  # (k, 2, lines)
    n_lines = batch.n_lines
    values = np.empty((a.size, 4, n_lines))
    values[:, 0] = start
    values[:, 3] = end
    for j in range(n_lines):  # a line's own stationary points, evaluated exactly
        for r in range(2):
            found = inside[:, r, j]
            column = np.where(r == 0, start[:, j], end[:, j])  # a repeated end: no turn
            if found.any():
                column = column.copy()
                column[found] = response(at[found, r, j], "right")[:, j]
            values[:, 1 + r, j] = column
    positions = np.stack([a, np.where(inside[:, 0].any(axis=1),
                                      np.nanmin(np.where(inside[:, 0], at[:, 0], np.inf),
                                                axis=1), a),
                          np.where(inside[:, 1].any(axis=1),
                                   np.nanmax(np.where(inside[:, 1], at[:, 1], -np.inf),
                                             axis=1), b), b], axis=1)
    # the group enters from the empty beam and leaves to it: a line with a jump at an end (a
    # reaction there) starts from its left-hand limit and ends at its right-hand one
    before = response(np.array([lo]), "left")
    after = response(np.array([hi]), "right")
    return (np.concatenate([[lo], positions.ravel(), [hi]]),
            np.concatenate([before, values.reshape(-1, n_lines), after]))
