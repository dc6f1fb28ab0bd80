"""The exact largest moment anywhere in one span under a rigid group of concentrated loads.

Statics of the stretch of beam between the span's left end a (just right of it) and a section
x ≤ b: no support, couple or other force acts inside a span, so for any placement of the loads

    M(x) = M(a⁺) + V(a⁺)·(x − a) − Σ_{loads k with a < p_k < x} P_k (x − p_k),

with M(a⁺) = Σ P_k m(p_k) and V(a⁺) = Σ P_k v(p_k) read from the influence lines m, v of the
moment and the shear just right of a (exact piecewise cubics). For one placement M is
piecewise linear in x and its slope only drops where a (downward) load stands, so M is concave
in x: its minimum over the span is at an end, its maximum at an end or under a load. With the
load group at t (load k at p_k = t − u_k) and the section under load i (x = t − u_i):

    g_i(t) = Σ_k P_k [m(t − u_k) + v(t − u_k)(t − u_i − a)] − Σ_{k: u_k > u_i, a < t − u_k}
             P_k (u_k − u_i),

a piecewise quartic in t whose breaks are where a load meets a knot of the lines (the span's
ends are knots) and where load i enters or leaves the span. On each piece the maximum is at an
end (both one-sided limits of every break are ends of pieces) or at a real root of the cubic
derivative. The largest over every piece of every g_i is the exact maximum over every section
strictly inside the span and every position of the group (the span's ends are read from their
own lines by the envelope). Nothing is sampled and no single peak is assumed.

Only arrays go in and out; the caller builds the lines and the load group.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

# breaks closer than this fraction of the beam's length are one break (rounding of knot + u)
_MERGE = 1e-12
# bisection steps on [0, 1] for a root of the derivative: 2^-60 is below double precision
_BISECTIONS = 60
# pieces × loads handled per batch (bounds the memory of the work arrays)
_CHUNK = 200_000
# beyond these sizes the exact method is not attempted (bounded time and memory); the caller
# falls back to the sampled search and says it is not certified
MAX_BREAKS = 4_000_000  # loads × knots of the lines
MAX_WORK = 300_000_000  # pieces × loads


@dataclass(frozen=True)
class UnderAxleMaximum:
    """The largest moment with the section under a load, over every section strictly inside
    the span and every position of the group.

    Fields
    ------
    value : the maximum [moment] (−inf when the section can never be under a load)
    reference : position t of the group's reference point (load k at t − u_k) [length]
    side : +1 the limit as t approaches from above, −1 from below, 0 attained at t itself
    axle : index of the load the section stands under
    x : the section, t − u[axle] [length]
    pieces : number of polynomial pieces examined (for benchmarks)
    """

    value: float
    reference: float
    side: int
    axle: int
    x: float
    pieces: int


def _taylor_shift(c: NDArray[np.float64], d: NDArray[np.float64]) -> NDArray[np.float64]:
    """Cubics c (..., 4; highest power first) in s re-expanded in τ = s − d."""
    c3, c2, c1, c0 = c[..., 0], c[..., 1], c[..., 2], c[..., 3]
    return np.stack([c3, c2 + 3 * c3 * d, c1 + (2 * c2 + 3 * c3 * d) * d,
                     c0 + (c1 + (c2 + c3 * d) * d) * d], axis=-1)


def _horner(p: NDArray[np.float64], s: NDArray[np.float64]) -> NDArray[np.float64]:
    """p (..., n; highest power first) at s (broadcast against p[..., 0])."""
    out = np.zeros(np.broadcast_shapes(p[..., 0].shape, np.shape(s)))
    for k in range(p.shape[-1]):
        out = out * s + p[..., k]
    return out


def quartic_maxima(poly: NDArray[np.float64]) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Per row, the maximum of a quartic (N, 5; highest power first, variable s) over the
    closed interval [0, 1] and where it is: (value, s).

    The candidates are both ends, the real roots of the cubic derivative p′ and the roots of
    p″ (ends of the stretches where p′ is monotone). Each stretch between them whose ends give
    p′ opposite signs holds exactly one root, found by bisection to double precision; no
    closed form whose leading coefficient may vanish is used.
    """
    n = poly.shape[0]
    d1 = poly[:, :4] * np.array([4.0, 3.0, 2.0, 1.0])  # p′, highest power first
    d2 = d1[:, :3] * np.array([3.0, 2.0, 1.0])  # p″ = A s² + B s + C
    A, B, C = d2[:, 0], d2[:, 1], d2[:, 2]
    # roots of p″ (stable form), NaN where there are none
    r = np.full((n, 2), np.nan)
    scale = np.maximum(np.maximum(np.abs(A), np.abs(B)), np.abs(C))
    scale = np.where(scale > 0, scale, 1.0)
    quad = np.abs(A) > 1e-14 * scale
    disc = B * B - 4 * A * C
    ok = quad & (disc >= 0)
    with np.errstate(divide="ignore", invalid="ignore"):
        q = -0.5 * (B + np.copysign(np.sqrt(np.where(ok, disc, 0.0)), B))
        r[ok, 0] = (q / np.where(A != 0, A, 1.0))[ok]
        r[ok, 1] = np.where(q != 0, C / np.where(q != 0, q, 1.0), np.nan)[ok]
        lin = ~quad & (np.abs(B) > 1e-14 * scale)
        r[lin, 0] = (-C / np.where(B != 0, B, 1.0))[lin]
    r = np.where((r > 0.0) & (r < 1.0), r, np.nan)
    r.sort(axis=1)  # NaN last
    # stretch ends: 0, r1, r2, 1 (a missing root repeats the previous end)
    ends = np.empty((n, 4))
    ends[:, 0] = 0.0
    ends[:, 1] = np.where(np.isnan(r[:, 0]), 0.0, r[:, 0])
    ends[:, 2] = np.where(np.isnan(r[:, 1]), ends[:, 1], r[:, 1])
    ends[:, 3] = 1.0
    lo, hi = ends[:, :3].copy(), ends[:, 1:].copy()
    f_lo = _horner(d1[:, None, :], lo)
    f_hi = _horner(d1[:, None, :], hi)
    bracket = (np.sign(f_lo) * np.sign(f_hi) <= 0) & (hi > lo)
    rising = f_lo < f_hi
    for _ in range(_BISECTIONS):
        mid = 0.5 * (lo + hi)
        f_mid = _horner(d1[:, None, :], mid)
        # keep the half whose ends still bracket the sign change of a monotone p′
        go_right = np.where(rising, f_mid < 0.0, f_mid > 0.0)
        lo = np.where(go_right, mid, lo)
        hi = np.where(go_right, hi, mid)
    roots = np.where(bracket, 0.5 * (lo + hi), 0.0)
    candidates = np.concatenate([ends, roots], axis=1)  # (n, 7): ends, p″ roots, p′ roots
    values = _horner(poly[:, None, :], candidates)
    best = np.argmax(values, axis=1)
    rows = np.arange(n)
    return values[rows, best], candidates[rows, best]


def _merged(breaks: NDArray[np.float64], tolerance: float) -> NDArray[np.float64]:
    breaks = np.sort(breaks)
    keep = np.concatenate([[True], np.diff(breaks) > tolerance])
    return breaks[keep]


def moment_under_axles(knots: NDArray[np.float64], moment_coef: NDArray[np.float64],
                       shear_coef: NDArray[np.float64], a: float, b: float,
                       offsets: NDArray[np.float64], weights: NDArray[np.float64],
                       confined: bool = False) -> UnderAxleMaximum | None:
    """The exact maximum of M(x) over a < x < b with x under a load, every position of the
    group (see the module docstring).

    Parameters
    ----------
    knots : (K + 1,) breaks of both lines, 0 … L [length]
    moment_coef, shear_coef : (K, 4) the lines m and v of the moment and the shear just right
        of a, highest power first in x − knots[k]
    a, b : the span's ends [length]
    offsets : (n,) u of every load: it stands at t − u [length]
    weights : (n,) the loads P (≥ 0) [force]
    confined : the group only stands with every load on the beam

    Returns None when the job exceeds ``MAX_BREAKS`` or ``MAX_WORK`` (not attempted).
    """
    knots = np.asarray(knots, dtype=float)
    u = np.asarray(offsets, dtype=float)
    P = np.asarray(weights, dtype=float)
    length = float(knots[-1])
    tolerance = _MERGE * max(length, 1.0)
    if u.size * knots.size > MAX_BREAKS:
        return None
    all_breaks = np.sort((knots[None, :] + u[:, None]).ravel())
    domains = []
    for i in range(u.size):
        lo, hi = a + u[i], b + u[i]
        if confined:
            lo, hi = max(lo, float(u.max())), min(hi, length + float(u.min()))
        domains.append((lo, hi))
    lows = np.array([d[0] for d in domains])
    highs = np.array([d[1] for d in domains])
    count = (np.searchsorted(all_breaks, highs) - np.searchsorted(all_breaks, lows, "right"))
    if float(np.maximum(count + 1, 0).sum()) * u.size > MAX_WORK:
        return None
    # every piece of every g_i: its start, its end and its axle i
    starts, ends, axles = [], [], []
    for i, (lo, hi) in enumerate(domains):
        if not hi > lo:
            continue
        inside = all_breaks[np.searchsorted(all_breaks, lo, "right"):
                            np.searchsorted(all_breaks, hi)]
        t = _merged(np.concatenate([[lo, hi], inside]), tolerance)
        if t.size < 2:
            continue
        starts.append(t[:-1])
        ends.append(t[1:])
        axles.append(np.full(t.size - 1, i))
    if not starts:
        return UnderAxleMaximum(-np.inf, np.nan, 0, -1, np.nan, 0)
    t0_all, t1_all = np.concatenate(starts), np.concatenate(ends)
    i_all = np.concatenate(axles)
    best = (-np.inf, 0)  # (value, piece)
    best_s = 0.0
    chunk = max(1, _CHUNK // max(u.size, 1))
    for first in range(0, t0_all.size, chunk):
        rows = slice(first, first + chunk)
        values, s = _piece_maxima(knots, moment_coef, shear_coef, a, u, P, t0_all[rows],
                                  t1_all[rows], i_all[rows])
        q = int(np.argmax(values))
        if values[q] > best[0]:
            best, best_s = (float(values[q]), first + q), float(s[q])
    value, q = best
    t0, t1, i = float(t0_all[q]), float(t1_all[q]), int(i_all[q])
    at_start, at_end = best_s == 0.0, best_s == 1.0
    reference = t0 if at_start else t1 if at_end else t0 + best_s * (t1 - t0)
    side = 1 if at_start else -1 if at_end else 0
    return UnderAxleMaximum(value, reference, side, i, reference - float(u[i]), t0_all.size)


def _piece_maxima(knots: NDArray[np.float64], moment_coef: NDArray[np.float64],
                  shear_coef: NDArray[np.float64], a: float, u: NDArray[np.float64],
                  P: NDArray[np.float64], t0: NDArray[np.float64], t1: NDArray[np.float64],
                  section_axle: NDArray[np.int64]
                  ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """The maximum of g_i on each piece [t0, t1] (i = ``section_axle``) and where it is, as
    s = (t − t0) / (t1 − t0) ∈ [0, 1]."""
    h = t1 - t0
    mid = 0.5 * (t0 + t1)
    x_mid = mid[:, None] - u[None, :]  # (N, n): where each load stands mid-piece
    on = (x_mid > knots[0]) & (x_mid < knots[-1])
    k = np.clip(np.searchsorted(knots, x_mid, side="right") - 1, 0, len(knots) - 2)
    d = (t0[:, None] - u[None, :]) - knots[k]  # x − knot at τ = 0
    weight = np.where(on, P[None, :], 0.0)
    m = _taylor_shift(moment_coef[k], d)  # (N, n, 4) in τ = t − t0
    v = _taylor_shift(shear_coef[k], d)
    u_i = u[section_axle]
    e = (t0 - u_i - a)[:, None]  # x − a at τ = 0
    poly = np.zeros((t0.size, 5))
    poly[:, 1:] = np.einsum("qj,qjc->qc", weight, m)
    # v · (τ + e), weighted and summed over the loads
    wv = weight[:, :, None] * v
    poly[:, 0] += wv[:, :, 0].sum(axis=1)
    poly[:, 1] += (wv[:, :, 1] + e * wv[:, :, 0]).sum(axis=1)
    poly[:, 2] += (wv[:, :, 2] + e * wv[:, :, 1]).sum(axis=1)
    poly[:, 3] += (wv[:, :, 3] + e * wv[:, :, 2]).sum(axis=1)
    poly[:, 4] += (e * wv[:, :, 3]).sum(axis=1)
    # loads between the span's left end and the section: − P_k (x − p_k) = − P_k (u_k − u_i)
    behind = u[None, :] - u_i[:, None]
    between = (x_mid > a) & (behind > 0.0)
    poly[:, 4] -= np.where(between, P[None, :] * behind, 0.0).sum(axis=1)
    # in s = τ / h ∈ [0, 1]: the coefficient of s^p is c_p h^p
    scaled = poly * (h[:, None] ** np.arange(4, -1, -1)[None, :])
    return quartic_maxima(scaled)
