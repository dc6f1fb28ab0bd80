"""Envelopes: the worst reaction, shear, moment and deflection over every load case.

For each line (an effect at a section or a support) the envelope keeps the maximum and the
minimum over all cases, and for each of them the configuration that caused it: the case, the
direction of travel, where the load stood, the searched spacings and, for shear at a jump, on
which side the axle stood. Concurrent effects are evaluated exactly from that configuration.
"""

from __future__ import annotations

import itertools
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.optimize import minimize_scalar

from trundle.influence import Effect, influence_set, piece_sign_intervals
from trundle.loads.cases import LoadCase, as_case
from trundle.loads.patterns import UniformLoad
from trundle.model import Beam, ModelError, Spring
from trundle.scan.engine import LineBatch, TermGroup, group_response, scan_group

FAMILIES = ("moment", "shear_left", "shear_right", "deflection", "reaction", "support_moment")
REQUESTABLE = ("moment", "shear", "deflection", "reaction", "support_moment")
GRID_BUDGET = 81  # coarse-grid evaluations per case before refinement
REFINE_WITHIN = 0.05  # refine cases whose grid extreme is within 5 % of the line's best


@dataclass(frozen=True)
class Governing:
    """What produced one extreme of one line.

    Fields
    ------
    value : the extreme [effect units]
    case : index into ``Envelope.cases`` (−1: the empty beam governs)
    direction : +1 moving towards +x, −1 towards −x, 0 for placed (not moving) loads
    reference : x of the group's reference point (its first axle as given) [length]
    side : +1 the loads stand just right of a jump (limit from above), −1 just left, 0 exact
    searched : values found for the searched spacings/gaps [length]
    pattern : for placed uniform load: the loaded intervals [(x0, x1), …] and the
        position of its concentrated load (or None)
    """

    value: float
    case: int = -1
    direction: int = 0
    reference: float = float("nan")
    side: int = 0
    searched: tuple[float, ...] = ()
    pattern: tuple[tuple[tuple[float, float], ...], float | None] | None = None


EMPTY = Governing(0.0)


def _line_effects(beam: Beam, sections: NDArray[np.float64], requested: Sequence[str]
                  ) -> tuple[list[Effect], dict[str, NDArray[np.int64]]]:
    effects: list[Effect] = []
    index: dict[str, list[int]] = {f: [] for f in FAMILIES}

    def add(family: str, effect: Effect) -> None:
        index[family].append(len(effects))
        effects.append(effect)

    for kind in requested:
        if kind not in REQUESTABLE:
            raise ModelError(f"effects: expected some of {', '.join(REQUESTABLE)}, found {kind!r}")
    for x in sections:
        if "moment" in requested:
            add("moment", Effect("moment", at=float(x)))
        if "shear" in requested:
            add("shear_left", Effect("shear", at=float(x), side="left"))
            add("shear_right", Effect("shear", at=float(x), side="right"))
        if "deflection" in requested:
            add("deflection", Effect("deflection", at=float(x)))
    for k, s in enumerate(beam.supports):
        if "reaction" in requested and s != "free":
            add("reaction", Effect("reaction", support=k))
        restrains = s == "fixed" or (isinstance(s, Spring) and s.kr is not None)
        if "support_moment" in requested and restrains:
            add("support_moment", Effect("support_moment", support=k))
    return effects, {f: np.asarray(v, dtype=np.int64) for f, v in index.items()}


def _grid(params: Sequence[Any]) -> list[tuple[float, ...]]:
    if not params:
        return [()]
    per = max(2, int(round(GRID_BUDGET ** (1.0 / len(params)))))
    axes = [np.linspace(p.low, p.high, per) for p in params]
    return list(itertools.product(*axes))


class _Tracker:
    """Best max/min per line with their governing configuration."""

    def __init__(self, n: int):
        self.max = [EMPTY] * n
        self.min = [EMPTY] * n

    def offer(self, j: int, which: str, g: Governing) -> None:
        current = getattr(self, which)
        if (which == "max" and g.value > current[j].value) or (
                which == "min" and g.value < current[j].value):
            current[j] = g


def _moving_case_scan(batch: LineBatch, case: LoadCase, case_index: int,
                      lines: NDArray[np.int64] | None = None) -> tuple[_Tracker, list]:
    """Grid pass over searched dimensions and both directions; best per line for this case."""
    load = case.load
    params = load.parameters()
    sub = batch if lines is None else _sub_batch(batch, lines)
    tracker = _Tracker(sub.n_lines)
    grid = _grid(params)
    directions = (1, -1) if load.reversible else (1,)
    for values in grid:
        group = load.group(values, case.impact)
        for direction in directions:
            g = group if direction == 1 else group.mirrored()
            r = scan_group(sub, g) * 1.0
            r[:, [0, 3]] *= case.multiplier
            for j in range(sub.n_lines):
                for which, col in (("max", 0), ("min", 3)):
                    if np.isnan(r[j, col + 1]):
                        continue
                    tracker.offer(j, which, Governing(
                        float(r[j, col]), case_index, direction, float(r[j, col + 1]),
                        int(r[j, col + 2]), tuple(float(v) for v in values)))
    return tracker, grid


def _sub_batch(batch: LineBatch, lines: NDArray[np.int64]) -> LineBatch:
    return LineBatch(batch.knots, np.ascontiguousarray(batch.coef[:, :, lines]),
                     np.ascontiguousarray(batch.running[:, :, lines]),
                     np.ascontiguousarray(batch.running_end[lines]))


def _refine(batch: LineBatch, case: LoadCase, case_index: int, j: int, which: str,
            start: Governing) -> Governing:
    """Bounded search of each searched dimension around the best grid value, for one line
    and the direction of travel that governed on the grid."""
    params = case.load.parameters()
    if not params:
        return start
    sub = _sub_batch(batch, np.array([j]))
    col = 0 if which == "max" else 3
    sign = 1.0 if which == "max" else -1.0
    per = max(2, int(round(GRID_BUDGET ** (1.0 / len(params)))))

    def evaluate(trial: list[float]) -> Governing | None:
        group = case.load.group(trial, case.impact)
        r = scan_group(sub, group if start.direction == 1 else group.mirrored())[0]
        if np.isnan(r[col + 1]):
            return None
        return Governing(float(r[col] * case.multiplier), case_index, start.direction,
                         float(r[col + 1]), int(r[col + 2]), tuple(float(t) for t in trial))

    def score(v: float, base: list[float], k: int) -> float:
        g = evaluate([*base[:k], v, *base[k + 1:]])
        return 0.0 if g is None else -sign * g.value

    best = start
    for _sweep in range(1 if len(params) == 1 else 2):
        for k, p in enumerate(params):
            base = list(best.searched)
            step = (p.high - p.low) / (per - 1)
            lo, hi = max(p.low, base[k] - step), min(p.high, base[k] + step)
            res = minimize_scalar(score, bounds=(lo, hi), args=(base, k), method="bounded",
                                  options={"xatol": 1e-8 * max(1.0, batch.length)})
            g = evaluate([*base[:k], float(res.x), *base[k + 1:]])
            if g is not None and sign * g.value > sign * best.value:
                best = g
    return best


def _uniform_case(batch: LineBatch, case: LoadCase, case_index: int, tracker: _Tracker,
                  ordinate_extremes: NDArray[np.float64], beam: Beam) -> None:
    load: UniformLoad = case.load
    m = case.multiplier
    P = load.point_load
    n = batch.n_lines
    if load.placement == "anywhere":
        pos, neg = _signed_areas(batch)
        for j in range(n):
            for which, area, col in (("max", pos[j], 0), ("min", neg[j], 3)):
                value = m * (load.w * area + P * ordinate_extremes[j, col])
                x_p = ordinate_extremes[j, col + 1] if P else None
                # the loaded stretches are where line j has this sign; found when asked for
                sign = 1 if which == "max" else -1
                tracker.offer(j, which, Governing(float(value), case_index, 0,
                                                  pattern=((("sign of line", j, sign),), x_p)))
        return
    ends = beam.support_positions
    F = batch.running_at(ends)  # (n_spans + 1, n)
    per_span = np.diff(F, axis=0)
    spans = list(zip(ends[:-1], ends[1:], strict=True))
    for j in range(n):
        if load.placement == "spans":
            for which, mask, col in (("max", per_span[:, j] > 0, 0),
                                     ("min", per_span[:, j] < 0, 3)):
                value = m * (load.w * per_span[mask, j].sum() + P * ordinate_extremes[j, col])
                x_p = ordinate_extremes[j, col + 1] if P else None
                intervals = tuple(s for s, on in zip(spans, mask, strict=True) if on)
                tracker.offer(j, which, Governing(float(value), case_index, 0,
                                                  pattern=(intervals, x_p)))
        else:
            for which, col in (("max", 0), ("min", 3)):
                value = m * (load.w * batch.running_end[j] + P * ordinate_extremes[j, col])
                x_p = ordinate_extremes[j, col + 1] if P else None
                tracker.offer(j, which, Governing(float(value), case_index, 0,
                                                  pattern=(((0.0, beam.length),), x_p)))


def _signed_areas(batch: LineBatch) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    from trundle.influence import signed_areas

    return signed_areas(batch.knots, batch.coef)


@dataclass(frozen=True, eq=False)
class Envelope:
    """Max and min of every effect over all load cases, with what governs each.

    Fields
    ------
    beam : the Beam
    sections : (n_sections,) x of the sections [length]
    cases : the load cases, in the order given
    effects : one Effect per line; ``index[family]`` gives the lines of a family
        (moment, shear_left, shear_right, deflection, reaction, support_moment)
    governing_max, governing_min : one Governing per line
    batch : the influence lines (shared knots) the envelope was scanned on
    """

    beam: Beam
    sections: NDArray[np.float64]
    cases: tuple[LoadCase, ...]
    effects: tuple[Effect, ...]
    index: dict[str, NDArray[np.int64]]
    governing_max: tuple[Governing, ...]
    governing_min: tuple[Governing, ...]
    batch: LineBatch = field(repr=False)
    _cache: dict = field(default_factory=dict, repr=False, compare=False)

    def _family(self, kind: str, side: str | None) -> str:
        if kind == "shear":
            return "shear_left" if side == "left" else "shear_right"
        if kind not in FAMILIES:
            raise ModelError(f"effect: expected one of moment, shear, deflection, reaction, "
                             f"support_moment; found {kind!r}")
        return kind

    def _aligned(self, family: str, values: NDArray[np.float64]) -> NDArray[np.float64]:
        lines = self.index[family]
        if family in ("reaction", "support_moment"):
            out = np.full(len(self.beam.supports), np.nan)
            out[[e.support for e in (self.effects[i] for i in lines)]] = values[lines]
            return out
        if lines.size == 0:
            raise ModelError(f"the envelope was not asked for {family}")
        return values[lines]

    @property
    def maximum(self) -> NDArray[np.float64]:
        return np.array([g.value for g in self.governing_max])

    @property
    def minimum(self) -> NDArray[np.float64]:
        return np.array([g.value for g in self.governing_min])

    def max(self, kind: str, side: str | None = None) -> NDArray[np.float64]:
        """Maximum per section (or per support for reactions; NaN where there is none)."""
        return self._aligned(self._family(kind, side), self.maximum)

    def min(self, kind: str, side: str | None = None) -> NDArray[np.float64]:
        return self._aligned(self._family(kind, side), self.minimum)

    def lines_of(self, kind: str, side: str | None = None) -> NDArray[np.int64]:
        return self.index[self._family(kind, side)]

    def governing(self, kind: str, which: str = "max", side: str | None = None
                  ) -> list[Governing]:
        source = self.governing_max if which == "max" else self.governing_min
        return [source[i] for i in self.lines_of(kind, side)]

    def response_to(self, g: Governing) -> NDArray[np.float64]:
        """Every line's value under the configuration ``g`` (the concurrent effects)."""
        if g.case < 0:
            return np.zeros(len(self.effects))
        case = self.cases[g.case]
        if isinstance(case.load, UniformLoad):
            intervals, x_p = self.loaded_stretches(g)
            total = np.zeros(len(self.effects))
            for a, b in intervals:
                F = self.batch.running_at(np.array([a, b]))
                total += case.load.w * (F[1] - F[0])
            if x_p is not None and case.load.point_load:
                total += case.load.point_load * self.batch.ordinates(np.array([x_p]), "right")[0]
            return case.multiplier * total
        group = self.group_of(g)
        return case.multiplier * group_response(self.batch, group, g.reference, g.side)

    def loaded_stretches(self, g: Governing) -> tuple[list[tuple[float, float]], float | None]:
        """For placed uniform load: the loaded intervals and where its point load stands."""
        intervals, x_p = g.pattern
        if intervals and intervals[0][0] == "sign of line":
            _, j, sign = intervals[0]
            intervals = piece_sign_intervals(self.batch.knots, self.batch.coef[:, :, j], sign)
        return list(intervals), x_p

    def group_of(self, g: Governing) -> TermGroup:
        case = self.cases[g.case]
        group = case.load.group(g.searched, case.impact)
        return group if g.direction >= 0 else group.mirrored()

    def axle_positions(self, g: Governing) -> NDArray[np.float64]:
        """x of each concentrated load of the governing configuration [length]."""
        if g.case < 0 or isinstance(self.cases[g.case].load, UniformLoad):
            return np.array([])
        return g.reference - np.asarray(self.group_of(g).point_u)

    def absolute(self, kind: str = "moment") -> tuple[AbsoluteExtreme, ...]:
        """Max and min of ``kind`` over every section of every span, per load case."""
        key = f"_absolute_{kind}"
        if key not in self._cache:
            self._cache[key] = tuple(
                extreme
                for span in range(self.beam.n_spans)
                for c, case in enumerate(self.cases)
                for extreme in absolute_extremes(self.beam, case, span, kind, case_index=c))
        return self._cache[key]

    def concurrent(self, kind: str, which: str = "max", side: str | None = None
                   ) -> dict[str, NDArray[np.float64]]:
        """For each line of ``kind``: the values of every family under its governing load.

        Returns a dict family -> (n_lines_of_kind, n_lines_of_family) array; the diagonal of
        the own family is the extreme itself.
        """
        rows = np.array([self.response_to(g) for g in self.governing(kind, which, side)])
        return {f: rows[:, idx] for f, idx in self.index.items() if idx.size}


@dataclass(frozen=True)
class AbsoluteExtreme:
    """The worst value of an effect over every section of one span, and where it occurs.

    Fields
    ------
    span : span index
    case : index of the load case (into the envelope's cases)
    which : "max" or "min"
    value : the extreme [effect units]
    x : section where it occurs [length]
    governing : the load configuration that produces it
    """

    span: int
    case: int
    which: str
    value: float
    x: float
    governing: Governing


def absolute_extremes(beam: Beam, case: LoadCase, span: int, kind: str = "moment",
                      samples: int = 40, case_index: int = 0) -> tuple[AbsoluteExtreme, ...]:
    """Max and min of ``kind`` over all sections of a span: a grid of sections, then a bounded
    search around the best one (the worst section under a moving group is rarely a tenth point).
    """
    if kind not in ("moment", "deflection"):
        raise ModelError(f"absolute extremes: expected moment or deflection, found {kind!r}")
    a, b = beam.support_positions[span], beam.support_positions[span + 1]
    xs = np.linspace(a, b, samples + 1)
    coarse = envelope(beam, [case], sections=xs, effects=(kind,))
    out = []
    for which in ("max", "min"):
        values = coarse.max(kind) if which == "max" else coarse.min(kind)
        sign = 1.0 if which == "max" else -1.0
        i = int(np.argmax(sign * values))
        lo, hi = xs[max(i - 1, 0)], xs[min(i + 1, samples)]

        def at(x: float, which: str = which) -> Envelope:
            return envelope(beam, [case], sections=[x], effects=(kind,))

        def score(x: float, which: str = which, sign: float = sign) -> float:
            e = at(x)
            return -sign * float((e.max(kind) if which == "max" else e.min(kind))[0])

        res = minimize_scalar(score, bounds=(lo, hi), method="bounded",
                              options={"xatol": 1e-7 * (b - a)})
        best_x, best_value = float(xs[i]), float(values[i])
        governing = coarse.governing(kind, which)[i]
        if -res.fun * sign > best_value * sign:
            e = at(float(res.x))
            best_x, best_value = float(res.x), float(-res.fun * sign)
            governing = e.governing(kind, which)[0]
        governing = Governing(governing.value, case_index if governing.case >= 0 else -1,
                              governing.direction, governing.reference, governing.side,
                              governing.searched, governing.pattern)
        out.append(AbsoluteExtreme(span, case_index, which, best_value, best_x, governing))
    return tuple(out)


def envelope(beam: Beam, loads: Iterable[Any], sections: ArrayLike | None = None,
             effects: Sequence[str] = ("moment", "shear", "deflection", "reaction",
                                       "support_moment")) -> Envelope:
    """Exact envelopes of the requested effects over every load case.

    Parameters
    ----------
    beam : Beam
    loads : Vehicle, Train, UniformLoad or LoadCase items
    sections : x of the sections [length]; default the tenth points of every span
    effects : families to compute; "shear" gives both sides of every section
    """
    cases = tuple(as_case(item) for item in loads)
    if not cases:
        raise ModelError("loads: at least one load is needed")
    sections = beam.tenth_points() if sections is None else np.atleast_1d(
        np.asarray(sections, dtype=float))
    line_effects, index = _line_effects(beam, sections, effects)
    lines = influence_set(beam, line_effects)
    batch = LineBatch.from_set(lines)
    n = batch.n_lines
    overall = _Tracker(n)
    ordinate_extremes = scan_group(batch, TermGroup((0.0,), (1.0,)))
    moving: list[tuple[int, LoadCase, _Tracker]] = []
    for c, case in enumerate(cases):
        if isinstance(case.load, UniformLoad):
            _uniform_case(batch, case, c, overall, ordinate_extremes, beam)
            continue
        tracker, _ = _moving_case_scan(batch, case, c)
        moving.append((c, case, tracker))
        for j in range(n):
            overall.offer(j, "max", tracker.max[j])
            overall.offer(j, "min", tracker.min[j])
    # refine searched spacings where a case comes close to governing
    for c, case, tracker in moving:
        if not case.load.parameters():
            continue
        for j in range(n):
            for which in ("max", "min"):
                mine = getattr(tracker, which)[j]
                best = getattr(overall, which)[j]
                if mine.case < 0 or abs(mine.value) < (1 - REFINE_WITHIN) * abs(best.value):
                    continue
                overall.offer(j, which, _refine(batch, case, c, j, which, mine))
    return Envelope(beam, sections, cases, tuple(line_effects), index,
                    tuple(overall.max), tuple(overall.min), batch)
