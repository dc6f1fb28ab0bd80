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

from trundle.core.beam import Beam, ModelError, Spring
from trundle.core.influence import Effect, line_pieces, piece_sign_intervals, signed_areas
from trundle.loads.cases import LoadCase, Together, as_case
from trundle.loads.patterns import UniformLoad
from trundle.scan.engine import (
    KIND_POINT,
    LineBatch,
    TermGroup,
    group_response,
    scan_arrangements,
    scan_group,
)

FAMILIES = ("moment", "shear_left", "shear_right", "deflection", "reaction", "support_moment")
REQUESTABLE = ("moment", "shear", "deflection", "reaction", "support_moment")
GRID_BUDGET = 33  # coarse-grid evaluations per case before refinement
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
    pattern : for placed uniform load: the loaded intervals [(x0, x1), …]; its
        concentrated load (if any) stands at ``reference``, on ``side`` of a jump
    parts : for loads acting together: the Governing of each part, whose ``case`` is the
        part's index in the Together
    """

    value: float
    case: int = -1
    direction: int = 0
    reference: float = float("nan")
    side: int = 0
    searched: tuple[float, ...] = ()
    pattern: tuple | None = None
    parts: tuple[Governing, ...] = ()


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


class _CaseResult:
    """Per-line extremes of one load case, as arrays, and the Governing of any of them.

    ``value[w]``, ``xi[w]``, ``side[w]``, ``direction[w]``, ``searched[w]`` for w = 0 (max)
    and 1 (min); placed uniform load keeps ``pattern[w]`` instead of positions.
    """

    def __init__(self, case_index: int, n: int, n_params: int = 0):
        self.case = case_index
        self.value = np.zeros((2, n))
        self.xi = np.full((2, n), np.nan)
        self.side = np.zeros((2, n), dtype=np.int64)
        self.direction = np.zeros((2, n), dtype=np.int64)
        self.searched = np.zeros((2, n, n_params))
        self.pattern: list[list[Any]] | None = None
        self.parts: list[_CaseResult] = []  # loads acting together: one result per part

    def offer(self, w: int, rows: NDArray[np.int64], value, xi, side, direction, searched
              ) -> None:
        """Keep, row by row, whichever is worse (larger for max, smaller for min)."""
        sign = 1.0 if w == 0 else -1.0
        better = (sign * value > sign * self.value[w, rows]) & ~np.isnan(xi)
        r = rows[better]
        self.value[w, r] = value[better]
        self.xi[w, r] = xi[better]
        self.side[w, r] = side[better]
        self.direction[w, r] = direction if np.isscalar(direction) else direction[better]
        self.searched[w, r] = searched if searched.ndim == 1 else searched[better]

    def governing(self, w: int, j: int) -> Governing:
        if self.parts:
            return Governing(float(self.value[w, j]), self.case,
                             parts=tuple(p.governing(w, j) for p in self.parts))
        if self.pattern is not None:
            return Governing(float(self.value[w, j]), self.case, 0, float(self.xi[w, j]),
                             int(self.side[w, j]), pattern=self.pattern[w][j])
        if np.isnan(self.xi[w, j]):
            return EMPTY
        return Governing(float(self.value[w, j]), self.case, int(self.direction[w, j]),
                         float(self.xi[w, j]), int(self.side[w, j]),
                         tuple(float(v) for v in self.searched[w, j]))


@dataclass(frozen=True)
class _Arrangement:
    """The terms of a moving load in one direction; offsets are linear in the searched values
    (every spacing and gap adds to the offsets of the loads behind it)."""

    weights: NDArray[np.float64]
    kinds: NDArray[np.int64]
    constant: float
    base: NDArray[np.float64]  # (n_terms,) offsets with every searched value at 0
    slope: NDArray[np.float64]  # (n_params, n_terms)
    confined: bool = False  # stands only with every concentrated load on the beam

    def offsets(self, values: NDArray[np.float64]) -> NDArray[np.float64]:
        return self.base[None, :] + np.atleast_2d(values) @ self.slope


def _arrangements(case: LoadCase) -> dict[int, _Arrangement]:
    load = case.load
    k = len(load.parameters())
    out = {}
    for direction in ((1, -1) if load.reversible else (1,)):
        def terms(values: Sequence[float], direction: int = direction) -> tuple:
            group = load.group(list(values), case.impact)
            return (group if direction == 1 else group.mirrored()).terms()

        weights, base, kinds, constant = terms([0.0] * k)
        confined = load.group([0.0] * k, case.impact).confined
        slope = np.zeros((k, base.size))
        for i, row in enumerate(np.eye(k)):
            slope[i] = terms(row)[1] - base
        out[direction] = _Arrangement(weights * case.multiplier, kinds,
                                      constant * case.multiplier, base, slope, confined)
    return out


def _check_fits(case: LoadCase, arrangement: _Arrangement, length: float) -> None:
    """A confined load (a crane between its end stops) longer than the beam cannot stand on
    it anywhere: refuse it rather than report the empty beam's zeros as its envelope."""
    point = arrangement.kinds == KIND_POINT
    if not arrangement.confined or not point.any():
        return
    # every spacing and gap adds to the offsets of the loads behind it, so the group is
    # shortest with every searched value at its low end
    low = np.array([p.low for p in case.load.parameters()], dtype=float)
    offsets = arrangement.offsets(low)[0, point]
    extent = float(offsets.max() - offsets.min())
    if extent > length * (1.0 + 1e-12):
        name = getattr(case.load, "name", "") or case.name or "load"
        raise ModelError(f"load {name!r}: confined to the beam (between end stops), but its "
                         f"axles span at least {extent:g}, more than the beam's length "
                         f"{length:g}: it cannot stand on the beam")


def _moving_grid(batch: LineBatch, case: LoadCase, case_index: int,
                 arrangements: dict[int, _Arrangement]) -> _CaseResult:
    """Every line, every grid value of the searched dimensions, both directions: one kernel
    call per direction, a row per (grid value, line)."""
    params = case.load.parameters()
    n = batch.n_lines
    result = _CaseResult(case_index, n, len(params))
    grid = np.array(_grid(params), dtype=float).reshape(len(_grid(params)), len(params))
    lines = np.arange(n)
    for direction, arr in arrangements.items():
        offsets = np.repeat(arr.offsets(grid), n, axis=0)
        r = scan_arrangements(batch, arr.weights, arr.kinds, offsets, np.tile(lines, len(grid)),
                              arr.constant, arr.confined).reshape(len(grid), n, 6)
        for w, col in ((0, 0), (1, 3)):
            sign = 1.0 if w == 0 else -1.0
            score = np.where(np.isnan(r[:, :, col + 1]), -np.inf, sign * r[:, :, col])
            g = np.argmax(score, axis=0)
            pick = r[g, lines]
            result.offer(w, lines, pick[:, col], pick[:, col + 1],
                         pick[:, col + 2].astype(np.int64), direction, grid[g])
    return result


_INVERSE_GOLDEN = (np.sqrt(5.0) - 1.0) / 2.0


def _refine(batch: LineBatch, case: LoadCase, result: _CaseResult,
            arrangements: dict[int, _Arrangement], tasks: list[NDArray[np.int64]]) -> None:
    """Golden-section search of each searched dimension around each line's best grid value,
    in its governing direction; ``tasks[w]`` lists the lines to refine for the max (w = 0)
    and the min (w = 1). All tasks of a direction advance in lockstep, one kernel call per
    step."""
    params = case.load.parameters()
    if not params or not any(t.size for t in tasks):
        return
    per = max(2, int(round(GRID_BUDGET ** (1.0 / len(params)))))
    for _sweep in range(1 if len(params) == 1 else 2):
        for k, p in enumerate(params):
            step = (p.high - p.low) / (per - 1)
            # the searched value to 1e-8 of its range: the extreme is then within about
            # 1e-8 of itself even where it has a kink in the searched value
            tolerance = 1e-8 * (p.high - p.low)
            for direction, arr in arrangements.items():
                which = np.concatenate([np.full(t.size, w) for w, t in enumerate(tasks)])
                lines = np.concatenate(tasks)
                keep = result.direction[which, lines] == direction
                which, lines = which[keep], lines[keep]
                if lines.size == 0:
                    continue
                base = result.searched[which, lines].copy()
                a = np.maximum(p.low, base[:, k] - step)
                b = np.minimum(p.high, base[:, k] + step)
                col = np.where(which == 0, 0, 3)
                sign = np.where(which == 0, 1.0, -1.0)
                rows = np.arange(lines.size)

                def evaluate(points: NDArray[np.float64], base=base, arr=arr, k=k,
                             direction=direction, which=which, lines=lines, col=col,
                             sign=sign, rows=rows) -> NDArray[np.float64]:
                    values = base.copy()
                    values[:, k] = points
                    r = scan_arrangements(batch, arr.weights, arr.kinds, arr.offsets(values),
                                          lines, arr.constant, arr.confined)
                    value, xi, side = r[rows, col], r[rows, col + 1], r[rows, col + 2]
                    for w in (0, 1):
                        mine = which == w
                        result.offer(w, lines[mine], value[mine], xi[mine],
                                     side[mine].astype(np.int64), direction, values[mine])
                    return sign * np.where(np.isnan(xi), 0.0, value)

                width = float((b - a).max())
                if width <= tolerance:
                    continue
                n_iter = int(np.ceil(np.log(tolerance / width) / np.log(_INVERSE_GOLDEN)))
                c = b - _INVERSE_GOLDEN * (b - a)
                d = a + _INVERSE_GOLDEN * (b - a)
                fc, fd = evaluate(c), evaluate(d)
                for _ in range(n_iter):
                    left = fc > fd  # the maximum lies in [a, d]
                    a = np.where(left, a, c)
                    b = np.where(left, d, b)
                    c_new = np.where(left, b - _INVERSE_GOLDEN * (b - a), d)
                    d_new = np.where(left, c, a + _INVERSE_GOLDEN * (b - a))
                    fresh = evaluate(np.where(left, c_new, d_new))
                    fc, fd = np.where(left, fresh, fd), np.where(left, fc, fresh)
                    c, d = c_new, d_new


def _uniform_case(batch: LineBatch, case: LoadCase, case_index: int,
                  ordinate_extremes: NDArray[np.float64], beam: Beam) -> _CaseResult:
    load: UniformLoad = case.load
    m = case.multiplier
    P = load.point_load
    n = batch.n_lines
    result = _CaseResult(case_index, n)
    result.pattern = [[None] * n, [None] * n]
    if load.placement == "anywhere":
        pos, neg = signed_areas(batch.knots, batch.coef)
        for w, area, col, sign in ((0, pos, 0, 1), (1, neg, 3, -1)):
            result.value[w] = m * (load.w * area + P * ordinate_extremes[:, col])
            for j in range(n):
                # the loaded stretches are where line j has this sign; found when asked for
                result.pattern[w][j] = ("sign of line", j, sign)
        _point_load_position(result, ordinate_extremes, P)
        return result
    ends = beam.support_positions
    per_span = np.diff(batch.running_at(ends), axis=0)  # (n_spans, n)
    spans = list(zip(ends[:-1], ends[1:], strict=True))
    for w, col in ((0, 0), (1, 3)):
        if load.placement == "spans":
            mask = per_span > 0 if w == 0 else per_span < 0
            area = np.where(mask, per_span, 0.0).sum(axis=0)
        else:
            mask = np.ones_like(per_span, dtype=bool)
            area = batch.running_end.copy()
        result.value[w] = m * (load.w * area + P * ordinate_extremes[:, col])
        for j in range(n):
            result.pattern[w][j] = tuple(
                (float(a), float(b)) for (a, b), on in zip(spans, mask[:, j], strict=True) if on)
    _point_load_position(result, ordinate_extremes, P)
    if load.placement == "everywhere":  # all or nothing: live load may also be absent
        result.value[0] = np.maximum(result.value[0], 0.0)
        result.value[1] = np.minimum(result.value[1], 0.0)
    return result


def _point_load_position(result: _CaseResult, ordinate_extremes: NDArray[np.float64],
                         point_load: float) -> None:
    if point_load:
        for w, col in ((0, 0), (1, 3)):
            result.xi[w] = ordinate_extremes[:, col + 1]
            result.side[w] = ordinate_extremes[:, col + 2].astype(np.int64)


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
        if isinstance(case, Together):
            return sum((self._response(case.parts[p.case], p) for p in g.parts if p.case >= 0),
                       np.zeros(len(self.effects)))
        return self._response(case, g)

    def _response(self, case: LoadCase, g: Governing) -> NDArray[np.float64]:
        if isinstance(case.load, UniformLoad):
            intervals, x_p = self._stretches(g)
            total = np.zeros(len(self.effects))
            for a, b in intervals:
                F = self.batch.running_at(np.array([a, b]))
                total += case.load.w * (F[1] - F[0])
            if x_p is not None and case.load.point_load:
                side = "left" if g.side < 0 else "right"
                total += case.load.point_load * self.batch.ordinates(np.array([x_p]), side)[0]
        else:
            total = group_response(self.batch, self._group(case, g), g.reference, g.side)
        factor = np.full(len(self.effects), case.multiplier)
        factor[self.index["deflection"]] = case.service_multiplier  # no strength load factor
        return factor * total

    def loaded_stretches(self, g: Governing) -> tuple[list[tuple[float, float]], float | None]:
        """For placed uniform load: the loaded intervals and where its point load stands
        (for loads acting together: those of its placed parts)."""
        if g.parts:
            case = self.cases[g.case]
            stretches: list[tuple[float, float]] = []
            x_p = None
            for p in g.parts:
                if p.case >= 0 and isinstance(case.parts[p.case].load, UniformLoad):
                    more, x = self._stretches(p)
                    stretches.extend(more)
                    x_p = x if x is not None else x_p
            return stretches, x_p
        return self._stretches(g)

    def _stretches(self, g: Governing) -> tuple[list[tuple[float, float]], float | None]:
        intervals = g.pattern
        if intervals and intervals[0] == "sign of line":
            _, j, sign = intervals
            intervals = piece_sign_intervals(self.batch.knots, self.batch.coef[:, :, j], sign)
        x_p = None if np.isnan(g.reference) else g.reference
        return list(intervals or ()), x_p

    def group_of(self, g: Governing) -> TermGroup:
        return self._group(self.cases[g.case], g)

    @staticmethod
    def _group(case: LoadCase, g: Governing) -> TermGroup:
        group = case.load.group(g.searched, case.impact)
        return group if g.direction >= 0 else group.mirrored()

    def axle_positions(self, g: Governing) -> NDArray[np.float64]:
        """x of each concentrated load of the governing configuration [length] (for loads
        acting together: of every moving part)."""
        if g.case < 0:
            return np.array([])
        case = self.cases[g.case]
        if isinstance(case, Together):
            found = [self._axles(case.parts[p.case], p) for p in g.parts if p.case >= 0]
            return np.concatenate(found) if found else np.array([])
        return self._axles(case, g)

    def _axles(self, case: LoadCase, g: Governing) -> NDArray[np.float64]:
        if isinstance(case.load, UniformLoad):
            return np.array([])
        return g.reference - np.asarray(self._group(case, g).point_u)

    def absolute(self, kind: str = "moment") -> tuple[AbsoluteExtreme, ...]:
        """Max and min of ``kind`` over every section of every span, per load case."""
        key = f"_absolute_{kind}"
        if key not in self._cache:
            found: list[AbsoluteExtreme] = []
            for c, case in enumerate(self.cases):
                coarse = _coarse_sections(self.beam, case, kind)
                found.extend((span, c, extreme) for span in range(self.beam.n_spans)
                             for extreme in absolute_extremes(self.beam, case, span, kind,
                                                              case_index=c, coarse=coarse))
            found.sort(key=lambda item: (item[0], item[1]))
            self._cache[key] = tuple(extreme for *_, extreme in found)
        return self._cache[key]

    def concurrent(self, kind: str, which: str = "max", side: str | None = None
                   ) -> dict[str, NDArray[np.float64]]:
        """For each line of ``kind``: the values of every family under its governing load.

        Returns a dict family -> (n_lines_of_kind, n_lines_of_family) array; the diagonal of
        the own family is the extreme itself.
        """
        lines = self.lines_of(kind, side)
        rows = np.array([self.concurrent_to(g, int(j))
                         for g, j in zip(self.governing(kind, which, side), lines, strict=True)])
        return {f: rows[:, idx] for f, idx in self.index.items() if idx.size}

    def concurrent_to(self, g: Governing, line: int) -> NDArray[np.float64]:
        """Every line's value under the configuration ``g`` that governs ``line``, with every
        load counted where it stands: an axle standing exactly on a section is right of the
        cut just left of it and left of the cut just right of it, so the shear on the two
        faces differs by the axle load.

        The scan reports an extreme as a limit (ξ → b from above or below) where a load
        crosses a break. Where ``line`` is continuous there (moment, deflection, reactions:
        a load crossing a point does not make them jump), the value at ξ = b itself is the
        same extreme, and that exact configuration is the one whose concurrent effects are
        given; otherwise (a shear extreme, or a load leaving the beam) the limit is kept.
        """
        limit = self.response_to(g)
        if g.case < 0 or self.effects[line].kind == "shear":
            return limit
        exact = self.response_to(_at_point(g))
        size = max(abs(limit[line]), np.abs(limit).max() * 1e-6, 1e-300)
        return exact if abs(exact[line] - limit[line]) <= 1e-9 * size else limit

    def axle_face(self, g: Governing, x: float, kind: str = "shear",
                  side: int | None = None) -> str:
        """Where an axle of the configuration governing an extreme of ``kind`` at section x
        stands: "on" (exactly on the section), "left" / "right" (just left / right of it:
        the limit from that side, for shear, whose line jumps there), "" when no
        concentrated load of ``g`` stands at x. For other kinds the extreme is the same with
        the axle on the section (see ``concurrent_to``). ``side`` overrides ``g.side`` (a
        part of loads acting together)."""
        side = g.side if side is None else side
        positions = self.axle_positions(g)
        if positions.size == 0 or not np.any(np.abs(positions - x)
                                             <= 1e-9 * max(1.0, self.beam.length)):
            return ""
        if kind != "shear" or side == 0:
            return "on"
        return "right" if side > 0 else "left"


def _at_point(g: Governing) -> Governing:
    """``g`` with its loads exactly where they stand (side 0), parts alike."""
    return Governing(g.value, g.case, g.direction, g.reference, 0, g.searched, g.pattern,
                     tuple(_at_point(p) for p in g.parts))


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


@dataclass(frozen=True)
class _Frozen:
    """A moving load with its searched spacings and gaps held at given values."""

    load: Any
    values: tuple[float, ...]

    @property
    def name(self) -> str:
        return self.load.name

    @property
    def reversible(self) -> bool:
        return self.load.reversible

    def parameters(self) -> list:
        return []

    def group(self, values: Sequence[float] = (), impact: float = 0.0) -> TermGroup:
        return self.load.group(self.values, impact)

    def describe(self) -> str:
        return self.load.describe()


def _standalone(source: Envelope, g: Governing, case: int) -> Governing:
    """``g`` of envelope ``source`` with its loaded stretches named outright (not as a line of
    ``source``) and its case index set, so it can stand in another envelope."""
    pattern = g.pattern
    if pattern is not None:
        pattern = tuple(source._stretches(g)[0])
    parts = tuple(_standalone(source, p, p.case) for p in g.parts)
    return Governing(g.value, case, g.direction, g.reference, g.side, g.searched, pattern,
                     parts)


ABSOLUTE_SAMPLES = 40  # sections per span searched before the bounded refinement


def _coarse_sections(beam: Beam, case: LoadCase, kind: str,
                     samples: int = ABSOLUTE_SAMPLES) -> Envelope:
    """One grid envelope over ``samples`` sections of every span, to locate the worst ones
    (searched spacings at their grid values: the refinement that follows searches them)."""
    ends = beam.support_positions
    xs = np.unique(np.concatenate([np.linspace(a, b, samples + 1)
                                   for a, b in zip(ends[:-1], ends[1:], strict=True)]))
    return envelope(beam, [case], sections=xs, effects=(kind,), refine=False)


def absolute_extremes(beam: Beam, case: LoadCase, span: int, kind: str = "moment",
                      samples: int = ABSOLUTE_SAMPLES, case_index: int = 0,
                      extremes: Sequence[str] = ("max", "min"),
                      coarse: Envelope | None = None) -> tuple[AbsoluteExtreme, ...]:
    """Max and min of ``kind`` over all sections of a span: a grid of sections, then a bounded
    search around the best one (the worst section under a moving group is rarely a tenth point).

    Every trial section gets the exact scan over all positions and both directions. Searched
    spacings and gaps are held at their best values while the section is refined, then
    searched again at the refined section, and the section refined once more (coordinate
    ascent; each step can only improve the value).
    """
    if kind not in ("moment", "deflection"):
        raise ModelError(f"absolute extremes: expected moment or deflection, found {kind!r}")
    a, b = beam.support_positions[span], beam.support_positions[span + 1]
    if coarse is None:
        coarse = envelope(beam, [case], sections=np.linspace(a, b, samples + 1),
                          effects=(kind,), refine=False)
    tol = 1e-9 * beam.length
    inside = np.flatnonzero((coarse.sections >= a - tol) & (coarse.sections <= b + tol))
    xs = coarse.sections[inside]
    searched = (isinstance(case, LoadCase) and not isinstance(case.load, UniformLoad)
                and bool(case.load.parameters()))
    out = []
    for which in extremes:
        values = (coarse.max(kind) if which == "max" else coarse.min(kind))[inside]
        sign = 1.0 if which == "max" else -1.0
        i = int(np.argmax(sign * values))
        lo, hi = xs[max(i - 1, 0)], xs[min(i + 1, len(xs) - 1)]
        best_x, best_value = float(xs[i]), float(values[i])
        governing = coarse.governing(kind, which)[inside[i]]
        source = coarse
        rounds = 0 if governing.case < 0 else 2 if searched else 1  # nothing to refine if empty
        for _round in range(rounds):
            trial_case = case
            if searched:
                trial_case = LoadCase(_Frozen(case.load, governing.searched), case.impact,
                                      case.factors, case.name)

            def score(x: float, trial_case: LoadCase = trial_case, which: str = which,
                      sign: float = sign) -> float:
                e = envelope(beam, [trial_case], sections=[x], effects=(kind,))
                return -sign * float((e.max(kind) if which == "max" else e.min(kind))[0])

            res = minimize_scalar(score, bounds=(lo, hi), method="bounded",
                                  options={"xatol": 1e-7 * (b - a)})
            # the full search (spacings and gaps free again) at the refined section
            e = envelope(beam, [case], sections=[float(res.x)], effects=(kind,))
            value = float((e.max(kind) if which == "max" else e.min(kind))[0])
            if sign * value <= sign * best_value:
                break
            best_x, best_value = float(res.x), value
            governing = e.governing(kind, which)[0]
            source = e
        governing = _standalone(source, governing, case_index if governing.case >= 0 else -1)
        out.append(AbsoluteExtreme(span, case_index, which, best_value, best_x, governing))
    return tuple(out)


def _together(batch: LineBatch, together: Together, c: int, single: Any,
              index: dict[str, NDArray[np.int64]], refine: bool) -> _CaseResult:
    """Loads acting together: each part at its own worst, so the extreme of the sum is the
    sum of the parts' extremes (each counts the empty beam). Parts are refined on their own
    and their deflections taken without their own load factors before they are added."""
    result = _CaseResult(c, batch.n_lines)
    for k, part in enumerate(together.parts):
        part_result, arrangements = single(part, k)
        if arrangements is not None and refine:
            tasks = [np.flatnonzero(~np.isnan(part_result.xi[w])) for w in (0, 1)]
            _refine(batch, part, part_result, arrangements, tasks)
        part_result.value[:, index["deflection"]] /= part.load_factor
        result.parts.append(part_result)
        result.value += part_result.value
    return result


def envelope(beam: Beam, loads: Iterable[Any], sections: ArrayLike | None = None,
             effects: Sequence[str] = ("moment", "shear", "deflection", "reaction",
                                       "support_moment"), refine: bool = True) -> Envelope:
    """Exact envelopes of the requested effects over every load case.

    Parameters
    ----------
    beam : Beam
    loads : Vehicle, Train, UniformLoad or LoadCase items
    sections : x of the sections [length]; default the tenth points of every span
    effects : families to compute; "shear" gives both sides of every section
    refine : search spacings and gaps beyond their coarse grid (default); without it the
        values are those of the best grid point, lower bounds of the exact extremes
    """
    cases = tuple(as_case(item) for item in loads)
    if not cases:
        raise ModelError("loads: at least one load is needed")
    sections = beam.tenth_points() if sections is None else np.atleast_1d(
        np.asarray(sections, dtype=float))
    line_effects, index_all, full_batch, keep, inverse, index, batch = _prepared_lines(
        beam, sections, tuple(effects))
    n = batch.n_lines
    # largest and smallest ordinate of every line: where a placed load's point load stands
    placed = any(isinstance(p.load, UniformLoad) for c in cases
                 for p in (c.parts if isinstance(c, Together) else (c,)))
    ordinate_extremes = scan_group(batch, TermGroup((0.0,), (1.0,))) if placed else None
    results: list[_CaseResult] = []
    moving: list[tuple[LoadCase, _CaseResult, dict[int, _Arrangement]]] = []

    def single(case: LoadCase, c: int) -> tuple[_CaseResult, dict | None]:
        if isinstance(case.load, UniformLoad):
            return _uniform_case(batch, case, c, ordinate_extremes, beam), None
        arrangements = _arrangements(case)
        _check_fits(case, arrangements[1], beam.length)
        return _moving_grid(batch, case, c, arrangements), arrangements

    for c, case in enumerate(cases):
        if isinstance(case, Together):
            results.append(_together(batch, case, c, single, index, refine))
            continue
        result, arrangements = single(case, c)
        results.append(result)
        if arrangements is not None:
            moving.append((case, result, arrangements))
    # deflection stays at service level, without the strength load factor of each case
    service = np.ones((len(cases), n))
    for c, case in enumerate(cases):
        service[c, index["deflection"]] = 1.0 / case.load_factor
    # refine searched dimensions where a case comes close to governing on the grid
    stacked = np.array([r.value for r in results]) * service[:, None, :]  # (n_cases, 2, n)
    best = np.stack([stacked[:, 0].max(axis=0), stacked[:, 1].min(axis=0)])
    for case, result, arrangements in moving if refine else ():
        c = results.index(result)
        tasks = []
        for w in (0, 1):
            close = np.abs(result.value[w] * service[c]) >= (1 - REFINE_WITHIN) * np.abs(best[w])
            close &= ~np.isnan(result.xi[w])
            tasks.append(np.flatnonzero(close))
        _refine(batch, case, result, arrangements, tasks)
    for c, result in enumerate(results):
        result.value *= service[c]
    stacked = np.array([r.value for r in results])
    winners = np.stack([stacked[:, 0].argmax(axis=0), stacked[:, 1].argmin(axis=0)])
    scale = np.zeros(n)
    for lines_of_family in index.values():
        if lines_of_family.size:
            scale[lines_of_family] = np.abs(stacked[:, :, lines_of_family]).max()
    governing = [[], []]
    for w in (0, 1):
        distinct = []
        for j in range(n):
            g = results[winners[w, j]].governing(w, j)
            # rounding noise around an empty-beam zero is not a governing load
            if abs(g.value) <= 1e-12 * scale[j]:
                g = EMPTY
            distinct.append(_renumbered(g, keep))
        governing[w] = [distinct[u] for u in inverse]
    return Envelope(beam, sections, cases, tuple(line_effects), index_all,
                    tuple(governing[0]), tuple(governing[1]), full_batch)


# lines ready to scan, by beam, sections and families (values, not identities): a beam
# checked again, under other loads, reuses them
_PREPARED: dict[tuple, tuple] = {}
_PREPARED_KEEP = 8


def _prepared_lines(beam: Beam, sections: NDArray[np.float64], families: tuple[str, ...]
                    ) -> tuple:
    """(effects, index, every line, keep, inverse, distinct index, distinct lines)."""
    # a Beam compares by identity; its repr spells out every value that defines it
    key = (repr(beam), np.ascontiguousarray(sections, dtype=float).tobytes(), families)
    found = _PREPARED.get(key)
    if found is None:
        line_effects, index = _line_effects(beam, sections, families)
        # each line on its own breaks: memory and work grow with lines x structural pieces
        full_batch = LineBatch.from_pieces(line_pieces(beam, line_effects))
        # identical lines (shear just left and right of a section inside a span, zero lines)
        # are scanned once; the distinct index is in terms of the distinct lines
        keep, inverse, index_all, distinct = _distinct_lines(full_batch.identity, index,
                                                             full_batch.end_live)
        batch = full_batch if keep.size == full_batch.n_lines else full_batch.subset(keep)
        found = (tuple(line_effects), index_all, full_batch, keep, inverse, distinct, batch)
        if len(_PREPARED) >= _PREPARED_KEEP:
            _PREPARED.pop(next(iter(_PREPARED)))
        _PREPARED[key] = found
    return found


def _distinct_lines(identity: NDArray[np.int64], index: dict[str, NDArray[np.int64]],
                    end_live: NDArray[np.bool_] | None = None
                    ) -> tuple[NDArray[np.int64], NDArray[np.int64], dict, dict]:
    """Lines of the same family built the same way (``LinePieces.identity``), kept once.

    Shear just left and just right of a section inside a span are one line, except where a
    load can stand on an end of the beam while the line is not zero there (``end_live``):
    a load standing on the section then reads a different value on each face.

    Returns (keep, inverse, index, distinct index): line ``keep[u]`` stands for distinct line
    u, line j is distinct line ``inverse[j]``, and the family index in both numberings.
    """
    n = identity.size
    family = np.zeros(n, dtype=np.int64)
    for code, (name, lines) in enumerate(index.items()):
        # shear just left and just right of a section inside a span are the same line
        family[lines] = -1 if name.startswith("shear") else code
        if end_live is not None and name.startswith("shear"):
            family[lines[end_live[lines]]] = code
    key = (family + 1) * n + identity
    _, keep, inverse = np.unique(key, return_index=True, return_inverse=True)
    # number the distinct lines in the order they first appear
    order = np.argsort(keep)
    rank = np.empty_like(order)
    rank[order] = np.arange(order.size)
    keep, inverse = keep[order].astype(np.int64), rank[np.asarray(inverse).ravel()]
    distinct = {f: np.unique(inverse[lines]).astype(np.int64) for f, lines in index.items()}
    return keep, inverse, index, distinct


def _renumbered(g: Governing, keep: NDArray[np.int64]) -> Governing:
    """``g`` with a placed load's "sign of line" pattern pointing at the full set of lines."""
    pattern = g.pattern
    if pattern and pattern[0] == "sign of line":
        pattern = ("sign of line", int(keep[pattern[1]]), pattern[2])
    parts = tuple(_renumbered(p, keep) for p in g.parts)
    if pattern is g.pattern and not parts:
        return g
    return Governing(g.value, g.case, g.direction, g.reference, g.side, g.searched, pattern,
                     parts)


def kind_and_side(family: str) -> tuple[str, str | None]:
    """A result family as (effect kind, side): "shear_left" -> ("shear", "left")."""
    if family in ("shear_left", "shear_right"):
        return "shear", family[6:]
    return family, None
