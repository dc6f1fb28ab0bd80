"""Patterned live load: building patterns of whole spans, load wherever adverse, and a lane
load whose intensity depends on the loaded length.

Rules, as named in the results:

- :data:`WHOLE_SPANS`: uniform load on the worst set of whole spans for each line (the
  building pattern); the governing pattern is reported as "spans 1, 3 loaded" (spans counted
  from 1 at the left);
- :data:`WHEREVER_ADVERSE`: uniform load on every stretch where the line has the adverse sign;
- :data:`LEVEL_SEARCH`: a lane load w(L) that depends on the loaded length L, on the worst
  loaded set, found exactly: for a given length the best set is where the line is highest
  (a level set {line ≥ t}), so the search runs over the level t, with a branch-and-bound
  certificate (every part of the t range left out has an upper bound below the value found);
- :data:`WHOLE_SEGMENTS`: the same lane load on a set of whole adverse segments (stretches
  between zeros of the line), the best subset found by trying every subset.
"""

from __future__ import annotations

import heapq
import itertools
import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.interpolate import PPoly

from trundle.analysis.case_envelopes import CaseEnvelope
from trundle.analysis.rules import FAMILIES
from trundle.core.beam import Beam, ModelError
from trundle.core.influence import Effect, _eval_sided, influence_set

WHOLE_SPANS = "uniform load on the worst set of whole spans"
WHEREVER_ADVERSE = "uniform load wherever the influence line is adverse"
LEVEL_SEARCH = "loaded-length-dependent lane load on the worst loaded set (exact level search)"
WHOLE_SEGMENTS = "loaded-length-dependent lane load on the worst set of whole adverse segments"
MAX_SEGMENTS = 16  # 2^16 subsets at most: bounded time


def _lines(beam: Beam, sections: NDArray[np.float64]) -> tuple[list[tuple[str, int]], Any]:
    """Effects in the order of :data:`FAMILIES`: [(family, index within family)], lines."""
    effects: list[Effect] = []
    where: list[tuple[str, int]] = []
    for family in FAMILIES:
        if family == "reaction":
            for k, s in enumerate(beam.supports):
                if s != "free":
                    effects.append(Effect("reaction", support=k))
                    where.append((family, k))
            continue
        for i, x in enumerate(sections):
            if family == "moment":
                effects.append(Effect("moment", at=float(x)))
            elif family == "deflection":
                effects.append(Effect("deflection", at=float(x)))
            else:
                effects.append(Effect("shear", at=float(x), side=family.split("_")[1]))
            where.append((family, i))
    return where, influence_set(beam, effects)


def _blank(beam: Beam, sections: NDArray[np.float64]) -> tuple[dict, dict]:
    values, governing = {}, {}
    for family in FAMILIES:
        size = len(beam.supports) if family == "reaction" else sections.size
        for which in ("max", "min"):
            values[family, which] = np.full(size, np.nan)
            governing[family, which] = [""] * size
    return values, governing


def spans_words(loaded: Sequence[int]) -> str:
    """'spans 1, 3 loaded' (spans counted from 1), 'span 2 loaded' or 'no span loaded'."""
    if not loaded:
        return "no span loaded"
    label = "span" if len(loaded) == 1 else "spans"
    return f"{label} {', '.join(str(s + 1) for s in loaded)} loaded"


def patterned_uniform(beam: Beam, w: float, sections: ArrayLike, placement: str = "spans",
                      name: str = "patterned live load") -> CaseEnvelope:
    """Uniform live load ``w`` [force/length] patterned for every line.

    ``placement`` "spans": the worst set of whole spans (a span is loaded for the maximum when
    its integral of the line is positive, for the minimum when negative); "adverse": wherever
    the line has the adverse sign. Deflection is included (service values).
    """
    if isinstance(w, bool) or not isinstance(w, int | float) or not math.isfinite(w) or w < 0:
        raise ModelError(f"patterned live load {name!r}: w: expected a load >= 0, found {w!r}")
    if placement not in ("spans", "adverse"):
        raise ModelError(f"patterned live load {name!r}: placement: expected \"spans\" or "
                         f"\"adverse\", found {placement!r}")
    sections = np.atleast_1d(np.asarray(sections, dtype=float))
    where, lines = _lines(beam, sections)
    values, governing = _blank(beam, sections)
    ends = beam.support_positions
    for j, (family, i) in enumerate(where):
        line = lines.line(j)
        if placement == "spans":
            per_span = np.array([line.integrate(a, b) for a, b in zip(ends[:-1], ends[1:],
                                                                       strict=True)])
            scale = max(np.abs(per_span).max(), 1e-300)
            for which, sign in (("max", 1.0), ("min", -1.0)):
                loaded = [s for s, v in enumerate(per_span) if sign * v > 1e-12 * scale]
                values[family, which][i] = w * float(per_span[loaded].sum()) if loaded else 0.0
                governing[family, which][i] = spans_words(loaded)
        else:
            positive, negative = line.areas()
            values[family, "max"][i] = w * positive
            values[family, "min"][i] = w * negative
            governing[family, "max"][i] = governing[family, "min"][i] = "wherever adverse"
    rule = WHOLE_SPANS if placement == "spans" else WHEREVER_ADVERSE
    blank = {k: ("",) * len(v) for k, v in governing.items()}
    return CaseEnvelope(name, sections, values, {k: tuple(v) for k, v in governing.items()},
                        blank, rule)


# ------------------------------------------------------------------------------------------
# lane load depending on the loaded length


@dataclass(frozen=True)
class LaneIntensity:
    """A lane-load intensity w(L) [force/length] of the loaded length L [length].

    Either a table ``lengths``/``intensities`` (linear between points, constant beyond the
    first and last), or a power law w = ``coefficient`` · L^``exponent`` held between
    ``lower`` and ``upper`` (None: no bound). Every value must be ≥ 0.
    """

    lengths: tuple[float, ...] = ()
    intensities: tuple[float, ...] = ()
    coefficient: float | None = None
    exponent: float = 0.0
    lower: float | None = None
    upper: float | None = None

    def __post_init__(self) -> None:
        table = bool(self.lengths) or bool(self.intensities)
        if table == (self.coefficient is not None):
            raise ModelError("lane intensity: expected a table (lengths and intensities) or a "
                             "power law (coefficient, exponent), not both or neither")
        if table:
            L = np.asarray(self.lengths, dtype=float)
            w = np.asarray(self.intensities, dtype=float)
            if L.size != w.size or L.size < 1:
                raise ModelError(f"lane intensity: expected as many intensities as lengths, "
                                 f"found {w.size} and {L.size}")
            if not (np.all(np.isfinite(L)) and np.all(np.isfinite(w))) or np.any(w < 0) \
                    or np.any(L < 0) or np.any(np.diff(L) <= 0):
                raise ModelError("lane intensity: expected increasing lengths >= 0 and "
                                 "intensities >= 0")
        else:
            assert self.coefficient is not None
            if not math.isfinite(self.coefficient) or self.coefficient < 0 or \
                    not math.isfinite(self.exponent):
                raise ModelError(f"lane intensity: expected a coefficient >= 0 and a finite "
                                 f"exponent, found {self.coefficient!r}, {self.exponent!r}")
            if self.exponent < 0 and self.upper is None:
                raise ModelError("lane intensity: a power law with a negative exponent needs "
                                 "an upper bound (it is unbounded at short lengths)")

    def __call__(self, length: float) -> float:
        if self.lengths:
            return float(np.interp(length, self.lengths, self.intensities))
        assert self.coefficient is not None
        value = self.coefficient * length ** self.exponent if length > 0 else (
            self.coefficient if self.exponent == 0 else (0.0 if self.exponent > 0 else math.inf))
        if self.upper is not None:
            value = min(value, self.upper)
        if self.lower is not None:
            value = max(value, self.lower)
        return float(value)

    def max_between(self, a: float, b: float) -> float:
        """The largest w(L) for a ≤ L ≤ b (exact: table points and ends; a power law, with
        its bounds, is monotone)."""
        candidates = [self(a), self(b)]
        if self.lengths:
            candidates += [w for L, w in zip(self.lengths, self.intensities, strict=True)
                           if a <= L <= b]
        return max(candidates)

    def upper_line(self, a: float, b: float) -> tuple[list[float], list[float]]:
        """A piecewise-linear function ≥ w(L) on a ≤ L ≤ b, as (breakpoints, values).

        A table is its own bound. A power law is bounded by its chord where it is convex
        (exponent ≤ 0 or ≥ 1) and by its tangent at the middle where it is concave; the
        bounds ``lower``/``upper`` clip that line (crossings become breakpoints)."""
        if self.lengths:
            points = [a, *[L for L in self.lengths if a < L < b], b]
            return points, [self(L) for L in points]
        assert self.coefficient is not None
        e, c = self.exponent, self.coefficient

        def raw(L: float) -> float:
            return c * L**e if L > 0 else (c if e == 0 else (0.0 if e > 0 else math.inf))

        if e <= 0 or e >= 1 or a <= 0:
            p, q = raw(a), raw(b)
        else:
            m = 0.5 * (a + b)
            slope = c * e * m ** (e - 1)
            p, q = raw(m) + slope * (a - m), raw(m) + slope * (b - m)
        points, values = [a, b], [p, q]
        for level in (self.upper, self.lower):
            if level is None or not (math.isfinite(p) and math.isfinite(q)):
                continue
            if (p - level) * (q - level) < 0:
                s = (level - p) / (q - p)
                points.insert(1, a + s * (b - a))
                values.insert(1, level)
        if self.upper is not None:
            values = [min(v, self.upper) for v in values]
        if self.lower is not None:
            values = [max(v, self.lower) for v in values]
        return points, values

    def describe(self) -> str:
        if self.lengths:
            return "w(L) from a table: " + ", ".join(
                f"{L:g}: {w:g}" for L, w in zip(self.lengths, self.intensities, strict=True))
        text = f"w(L) = {self.coefficient:g} * L^{self.exponent:g}"
        if self.lower is not None:
            text += f", at least {self.lower:g}"
        if self.upper is not None:
            text += f", at most {self.upper:g}"
        return text


@dataclass(frozen=True)
class LoadedSet:
    """The loaded stretches [(x0, x1), …], their total length, the intensity and the value."""

    stretches: tuple[tuple[float, float], ...]
    length: float
    intensity: float
    value: float

    def words(self) -> str:
        if not self.stretches:
            return "nothing loaded"
        parts = ", ".join(f"{a:.4g}..{b:.4g}" for a, b in self.stretches)
        return f"loaded {parts} (L = {self.length:.4g}, w = {self.intensity:.4g})"


def _level_set(pp: PPoly, antiderivative: PPoly, t: float
               ) -> tuple[float, float, list[tuple[float, float]]]:
    """(length, integral, stretches) of {pp ≥ t} (t > 0)."""
    shifted = PPoly(pp.c.copy(), pp.x, extrapolate=False)
    shifted.c[-1] -= t
    roots = np.asarray(shifted.roots(discontinuity=True, extrapolate=False), dtype=float)
    cuts = np.unique(np.concatenate([pp.x, roots[np.isfinite(roots)]]))
    mids = 0.5 * (cuts[:-1] + cuts[1:])
    inside = pp(mids) >= t
    stretches: list[tuple[float, float]] = []
    for (a, b), on in zip(zip(cuts[:-1], cuts[1:], strict=True), inside, strict=True):
        if not on or b <= a:
            continue
        if stretches and abs(stretches[-1][1] - a) <= 1e-12 * (pp.x[-1] - pp.x[0]):
            stretches[-1] = (stretches[-1][0], float(b))
        else:
            stretches.append((float(a), float(b)))
    length = sum(b - a for a, b in stretches)
    area = sum(float(antiderivative(b) - antiderivative(a)) for a, b in stretches)
    return length, area, stretches


def worst_loaded_set(pp: PPoly, intensity: LaneIntensity, tolerance: float = 1e-9,
                     max_evaluations: int = 4000) -> LoadedSet:
    """The loaded set maximising w(L)·∫ line over all sets, exactly (level search over t with a
    branch-and-bound certificate to ``tolerance`` relative).

    Intervals of t still open after ``max_evaluations`` (or narrower than 1e-13 of the range,
    at a plateau of the line where the level set jumps) are closed with their upper bound,
    which is conservative.
    """
    critical = pp.derivative().roots(discontinuity=True, extrapolate=False)
    x = np.concatenate([pp.x, critical[np.isfinite(critical)]])
    # one-sided limits count: a shear line jumps at its section
    top = float(max(np.max(_eval_sided(pp, x, "left")), np.max(_eval_sided(pp, x, "right"))))
    if not top > 0:
        return LoadedSet((), 0.0, intensity(0.0), 0.0)
    antiderivative = pp.antiderivative()
    cache: dict[float, tuple[float, float, list]] = {}

    def at(t: float) -> tuple[float, float, list]:
        if t not in cache:
            cache[t] = _level_set(pp, antiderivative, t)
        return cache[t]

    def value(t: float) -> float:
        length, area, _ = at(t)
        return intensity(length) * area

    low = top * 1e-14  # {line ≥ 0+}: every adverse stretch
    best_t = max((low, top), key=value)
    best = value(best_t)

    def bound(a: float, b: float) -> float:
        """An upper bound of w(L(t))·A(t) for a ≤ t ≤ b, second order in b − a.

        As a function of the loaded length, the best area A*(L) (the level set's) is concave
        with slope t = the level (the line's decreasing rearrangement), so it lies below its
        tangents at both ends: A ≤ A_b + b·(L − L_b) and A ≤ A_a + a·(L − L_a). With a
        piecewise-linear bound of w, the product is maximised piece by piece exactly."""
        la, aa, _ = at(a)
        lb, ab, _ = at(b)
        if not la > lb:
            return intensity.max_between(lb, la) * aa
        points, values = intensity.upper_line(lb, la)
        if not all(math.isfinite(v) for v in values):
            return math.inf

        def area_bound(L: float) -> float:
            return min(ab + b * (L - lb), aa + a * (L - la), aa)

        # the two tangents cross where their values are equal
        if b != a:
            cross = (aa - ab - a * la + b * lb) / (b - a)
            if lb < cross < la:
                w_cross = float(np.interp(cross, points, values))
                order = np.argsort([*points, cross])
                points = list(np.asarray([*points, cross])[order])
                values = list(np.asarray([*values, w_cross])[order])
        best_bound = -math.inf
        for p, q, wp, wq in zip(points[:-1], points[1:], values[:-1], values[1:], strict=True):
            ap, aq = area_bound(p), area_bound(q)
            best_bound = max(best_bound, wp * ap, wq * aq)
            dw, da = wq - wp, aq - ap
            if dw * da < 0:  # an interior maximum of the quadratic
                s_star = -(wp * da + ap * dw) / (2 * dw * da)
                if 0 < s_star < 1:
                    best_bound = max(best_bound, (wp + dw * s_star) * (ap + da * s_star))
        return best_bound

    heap = [(-bound(low, top), low, top)]
    evaluations = 0
    closed_bound = -math.inf
    while heap:
        negative, a, b = heapq.heappop(heap)
        upper = -negative
        if upper <= best + tolerance * abs(best) + 1e-300:
            break
        if evaluations >= max_evaluations or b - a <= 1e-13 * top:
            closed_bound = max(closed_bound, upper)
            continue
        mid = 0.5 * (a + b)
        evaluations += 1
        v = value(mid)
        if v > best:
            best, best_t = v, mid
        for lo, hi in ((a, mid), (mid, b)):
            u = bound(lo, hi)
            if u > best + tolerance * abs(best):
                heapq.heappush(heap, (-u, lo, hi))
    length, area, stretches = at(best_t)
    result = LoadedSet(tuple(stretches), length, intensity(length), best)
    if closed_bound > best:  # unresolved: report the bound (conservative)
        result = LoadedSet(tuple(stretches), length, intensity(length), closed_bound)
    return result


def worst_whole_segments(pp: PPoly, intensity: LaneIntensity) -> LoadedSet:
    """The best subset of whole adverse segments (maximal stretches where the line > 0)."""
    _, _, segments = _level_set(pp, pp.antiderivative(), 0.0)
    antiderivative = pp.antiderivative()
    segments = [(a, b) for a, b in segments if float(antiderivative(b) - antiderivative(a)) > 0]
    if len(segments) > MAX_SEGMENTS:
        raise ModelError(f"whole adverse segments: expected at most {MAX_SEGMENTS} segments for "
                         f"the subset search, found {len(segments)}; use the exact level search")
    lengths = [b - a for a, b in segments]
    areas = [float(antiderivative(b) - antiderivative(a)) for a, b in segments]
    best = LoadedSet((), 0.0, intensity(0.0), 0.0)
    for r in range(1, len(segments) + 1):
        for subset in itertools.combinations(range(len(segments)), r):
            length = sum(lengths[i] for i in subset)
            value = intensity(length) * sum(areas[i] for i in subset)
            if value > best.value:
                best = LoadedSet(tuple(segments[i] for i in subset), length, intensity(length),
                                 value)
    return best


def family_effect(beam: Beam, family: str, where: float | int) -> Effect:
    """The effect of a family (:data:`FAMILIES`) at a section x, or at support ``where`` for
    a reaction: the same effect :func:`loaded_length_lane` enumerates for that line."""
    if family == "reaction":
        return Effect("reaction", support=int(where))
    if family in ("moment", "deflection"):
        return Effect(family, at=float(where))
    if family not in ("shear_left", "shear_right"):
        raise ModelError(f"effect family: expected one of {', '.join(FAMILIES)}, found "
                         f"{family!r}")
    return Effect("shear", at=float(where), side=family.split("_")[1])


def lane_loaded_set(beam: Beam, intensity: LaneIntensity, family: str, where: float | int,
                    which: str, whole_segments: bool = False, tolerance: float = 1e-9
                    ) -> LoadedSet:
    """The worst loaded set of one line of :func:`loaded_length_lane` (its stretches, length,
    intensity), with the value signed as the envelope's (negative for "min"): where the lane
    load stands for that value, found by the same search."""
    line = influence_set(beam, [family_effect(beam, family, where)]).line(0)
    pp = PPoly(line.coefficients.copy(), line.knots, extrapolate=False)
    sign = 1.0 if which == "max" else -1.0
    signed = PPoly(sign * pp.c, pp.x, extrapolate=False)
    found = (worst_whole_segments(signed, intensity) if whole_segments
             else worst_loaded_set(signed, intensity, tolerance))
    return LoadedSet(found.stretches, found.length, found.intensity, sign * found.value)


def loaded_length_lane(beam: Beam, intensity: LaneIntensity, sections: ArrayLike,
                       whole_segments: bool = False, name: str = "lane load w(L)",
                       tolerance: float = 1e-9) -> CaseEnvelope:
    """The lane load w(L) on the worst loaded set for every line (max and min).

    ``whole_segments`` restricts the loaded set to whole adverse segments. The rule used is
    the envelope's ``rule``; ``governing`` gives the loaded stretches of each value.
    """
    sections = np.atleast_1d(np.asarray(sections, dtype=float))
    where, lines = _lines(beam, sections)
    values, governing = _blank(beam, sections)
    for j, (family, i) in enumerate(where):
        line = lines.line(j)
        pp = PPoly(line.coefficients.copy(), line.knots, extrapolate=False)
        for which, sign in (("max", 1.0), ("min", -1.0)):
            signed = PPoly(sign * pp.c, pp.x, extrapolate=False)
            found = (worst_whole_segments(signed, intensity) if whole_segments
                     else worst_loaded_set(signed, intensity, tolerance))
            values[family, which][i] = sign * found.value
            governing[family, which][i] = found.words()
    blank = {k: ("",) * len(v) for k, v in governing.items()}
    return CaseEnvelope(name, sections, values, {k: tuple(v) for k, v in governing.items()},
                        blank, WHOLE_SEGMENTS if whole_segments else LEVEL_SEARCH)
