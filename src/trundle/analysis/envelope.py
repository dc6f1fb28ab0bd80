"""Envelopes: the worst reaction, shear, moment and deflection over every load case.

For each line (an effect at a section or a support) the envelope keeps the maximum and the
minimum over all cases, and for each of them the configuration that caused it: the case, the
direction of travel, where the load stood, the searched spacings and, for shear at a jump, on
which side the axle stood. Concurrent effects are evaluated exactly from that configuration.
"""

from __future__ import annotations

import dataclasses
import itertools
import weakref
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.optimize import minimize_scalar

from trundle.analysis.absolute_moment import moment_under_axles
from trundle.analysis.search import SearchError, searched_extremes
from trundle.core._repr import html_table, short
from trundle.core.beam import Beam, ModelError, Spring
from trundle.core.fem import assembly_for
from trundle.core.influence import Effect, LinePieces, line_pieces, sign_intervals
from trundle.loads.cases import LoadCase, Together, as_case
from trundle.loads.patterns import UniformLoad
from trundle.loads.vehicles import Train, Vehicle
from trundle.scan.engine import (
    KIND_POINT,
    LineBatch,
    ScanPlan,
    TermGroup,
    group_response,
    scan_arrangements,
    scan_group,
)

FAMILIES = ("moment", "shear_left", "shear_right", "deflection", "reaction", "support_moment")
REQUESTABLE = ("moment", "shear", "deflection", "reaction", "support_moment")
GRID_BUDGET = 33  # grid evaluations per case when the search is not asked for (refine=False)


@dataclass(frozen=True)
class Governing:
    """What produced one extreme of one line: which load, standing where.

    Fields
    ------
    value : the extreme [effect units], with the case's impact and factors (deflection
        without the strength load factor)
    case : index into ``Envelope.cases`` of the load case that produces it (−1: nothing
        loads the line that way, the empty beam governs with 0)
    direction : +1 the load travels towards +x, −1 towards −x, 0 for placed (not moving)
        loads
    reference : where the load stands [length]: x of the moving group's reference point,
        which is its first concentrated load as listed (axle 1 of a vehicle; the wheels of
        the other axles follow behind it, against the direction of travel); for a placed
        uniform load, x of its concentrated load (NaN without one); NaN for the empty beam.
        ``Envelope.axle_positions(g)`` gives x of every concentrated load
    side : which one-sided limit ``value`` is when a load stands on a break of the line:
        +1 the load stands just right of it (x → from above), −1 just left of it, 0 the value
        is taken with the load inside a piece. It matters where the line jumps (a shear line
        at its own section): there the extreme exists only as that limit, so the load stands
        a hair's breadth to that side of ``reference``'s break; where the line is continuous
        (moment, deflection, reactions) both limits are equal and ``side`` is only a record
    searched : values found for the load's searched spacings and gaps, in the order the load
        lists them [length] (empty when nothing is searched)
    pattern : for a placed uniform load: the loaded intervals [(x0, x1), …] (or, inside an
        envelope, a reference to the line whose sign decides them: read it with
        ``Envelope.loaded_stretches(g)``)
    parts : for loads acting together: the Governing of each part, whose ``case`` is the
        part's index in the Together
    load : the name of the load case (of the part, inside ``parts``); "" for the empty beam
    """

    value: float
    case: int = -1
    direction: int = 0
    reference: float = float("nan")
    side: int = 0
    searched: tuple[float, ...] = ()
    pattern: tuple | None = None
    parts: tuple[Governing, ...] = ()
    load: str = ""

    def __repr__(self) -> str:
        if self.case < 0:
            return f"Governing({self.value:.6g}, empty beam)"
        words = [f"{self.value:.6g}", f"load {self.load!r}" if self.load else
                 f"case {self.case}"]
        if self.direction:
            words.append("towards +x" if self.direction > 0 else "towards -x")
        if self.reference == self.reference:  # not NaN
            words.append(f"reference at x = {self.reference:.6g}")
        if self.side:
            words.append("limit from the right" if self.side > 0 else "limit from the left")
        if self.searched:
            words.append("searched " + ", ".join(f"{v:.6g}" for v in self.searched))
        if self.pattern is not None and self.pattern and self.pattern[0] != "sign of line":
            words.append(f"{len(self.pattern)} loaded stretch(es)")
        if self.parts:
            words.append("parts: " + "; ".join(repr(p) for p in self.parts))
        return f"Governing({', '.join(words)})"


EMPTY = Governing(0.0)


def _line_effects(beam: Beam, sections: NDArray[np.float64], requested: Sequence[str],
                  moment_sides: tuple[str | None, ...] | None = None
                  ) -> tuple[list[Effect], dict[str, NDArray[np.int64]]]:
    """The lines of the requested families; ``moment_sides`` (one per section) reads the
    moment just left or just right of a support whose couple makes it jump (default: right,
    the ``Effect`` default)."""
    effects: list[Effect] = []
    index: dict[str, list[int]] = {f: [] for f in FAMILIES}

    def add(family: str, effect: Effect) -> None:
        index[family].append(len(effects))
        effects.append(effect)

    for kind in requested:
        if kind not in REQUESTABLE:
            raise ModelError(f"effects: expected some of {', '.join(REQUESTABLE)}, found {kind!r}")
    for row, x in enumerate(sections):
        if "moment" in requested:
            side = None if moment_sides is None else moment_sides[row]
            add("moment", Effect("moment", at=float(x), side=side))
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


_SIGNS = np.array([[1.0], [-1.0]])  # max, min: larger is worse, smaller is worse


class _CaseResult:
    """Per-line extremes of one load case, as arrays, and the Governing of any of them.

    ``value[w]``, ``xi[w]``, ``side[w]``, ``direction[w]``, ``searched[w]`` for w = 0 (max)
    and 1 (min); placed uniform load keeps ``pattern[w]`` instead of positions.

    A case whose directions were scanned in one kernel call (``merged``) keeps only its values
    as arrays and reads where the load stood from the kernel's rows when a Governing is
    asked for (most callers read only the values); ``xi``, ``side``, ``direction`` and
    ``searched`` are laid out as arrays only if read.
    """

    def __init__(self, case_index: int, n: int, n_params: int = 0):
        self.case = case_index
        self.value = np.zeros((2, n))
        self._xi: NDArray[np.float64] | None = np.full((2, n), np.nan)
        self._side: NDArray[np.int64] | None = np.zeros((2, n), dtype=np.int64)
        self._direction: NDArray[np.int64] | None = np.zeros((2, n), dtype=np.int64)
        self._searched: NDArray[np.float64] | None = np.zeros((2, n, n_params))
        # (kernel rows, directions, which direction's row each extreme came from) of a
        # merged scan whose positions are not laid out yet
        self._rows: tuple | None = None
        self.pattern: list[list[Any]] | None = None
        self.parts: list[_CaseResult] = []  # loads acting together: one result per part

    @classmethod
    def merged(cls, case_index: int, scan: NDArray[np.float64],
               directions: NDArray[np.int64]) -> _CaseResult:
        """The result of one kernel call holding every direction's rows (``scan``, direction
        k at rows k·n … k·n + n − 1), each line keeping the worse of the directions."""
        self = cls.__new__(cls)
        self.case = case_index
        self.value = merge_scans(scan, directions.shape[0])
        self._xi = self._side = self._direction = self._searched = None
        self._rows = (scan, directions)
        self.pattern = None
        self.parts = []
        return self

    def _lay_out(self) -> None:
        """The positions of a merged scan as arrays (for a caller that reads them). The
        rows stay: ``governing`` keeps reading them, and a reader in another thread that
        finds a field not yet laid out lays it out again (the same arrays)."""
        scan, directions = self._rows
        n = self.value.shape[1]
        xi = np.full((2, n), np.nan)
        side = np.zeros((2, n), dtype=np.int64)
        direction = np.zeros((2, n), dtype=np.int64)
        # each direction offered in turn, as ``_taken`` does line by line
        kept = np.zeros((2, n))
        for k in range(directions.shape[0]):
            _offer_rows(scan[k * n:(k + 1) * n], directions[k], kept, xi, side, direction)
        self._searched = np.zeros((2, n, 0))
        self._side, self._direction, self._xi = side, direction, xi

    def _own_arrays(self) -> None:
        """Before the arrays are changed (``offer``): laid out, and the rows forgotten, so
        that ``governing`` reads the arrays."""
        if self._rows is not None:
            self._lay_out()
            self._rows = None

    @property
    def xi(self) -> NDArray[np.float64]:
        if self._xi is None:
            self._lay_out()
        return self._xi

    @property
    def side(self) -> NDArray[np.int64]:
        if self._side is None:
            self._lay_out()
        return self._side

    @property
    def direction(self) -> NDArray[np.int64]:
        if self._direction is None:
            self._lay_out()
        return self._direction

    @property
    def searched(self) -> NDArray[np.float64]:
        if self._searched is None:
            self._lay_out()
        return self._searched

    def offer(self, w: int, rows: NDArray[np.int64] | None, value, xi, side, direction,
              searched) -> None:
        """Keep, row by row, whichever is worse (larger for max, smaller for min); ``rows``
        None: one row per line, in order."""
        self._own_arrays()
        if rows is None:  # every line, in order (the common call): masks, no index arrays
            current = self.value[w]
            better = (value > current) if w == 0 else (value < current)
            better &= ~np.isnan(xi)
            np.copyto(current, value, where=better)
            np.copyto(self.xi[w], xi, where=better)
            np.copyto(self.side[w], side, where=better, casting="unsafe")
            np.copyto(self.direction[w], direction, where=better, casting="unsafe")
            if self.searched.shape[2]:
                np.copyto(self.searched[w], searched,
                          where=better if searched.ndim == 1 else better[:, None])
            return
        sign = 1.0 if w == 0 else -1.0
        better = (sign * value > sign * self.value[w, rows]) & ~np.isnan(xi)
        r = rows[better]
        self.value[w, r] = value[better]
        self.xi[w, r] = xi[better]
        self.side[w, r] = side[better]
        self.direction[w, r] = direction if np.isscalar(direction) else direction[better]
        self.searched[w, r] = searched if searched.ndim == 1 else searched[better]

    def offer_scan(self, r: NDArray[np.float64], direction: int) -> None:
        """``offer`` of a kernel's (n_lines, 6) result for every line, max and min at once
        (nothing searched): the same choices, in fewer array operations."""
        self._own_arrays()
        _offer_rows(r, direction, self.value, self.xi, self.side, self.direction)

    def governing(self, w: int, j: int) -> Governing:
        if self.parts:
            return Governing(float(self.value[w, j]), self.case,
                             parts=tuple(p.governing(w, j) for p in self.parts))
        if self._rows is not None:  # a merged scan: straight from the kernel's row
            scan, directions = self._rows
            k = _taken(scan, directions.shape[0], w, j)
            if k < 0:
                return EMPTY
            row = scan[k * self.value.shape[1] + j]
            return Governing(float(self.value[w, j]), self.case, int(directions[k]),
                             float(row[3 * w + 1]), int(row[3 * w + 2]), ())
        if self.pattern is not None:
            return Governing(float(self.value[w, j]), self.case, 0, float(self.xi[w, j]),
                             int(self.side[w, j]), pattern=self.pattern[w][j])
        if np.isnan(self.xi[w, j]):
            return EMPTY
        return Governing(float(self.value[w, j]), self.case, int(self.direction[w, j]),
                         float(self.xi[w, j]), int(self.side[w, j]),
                         tuple(float(v) for v in self.searched[w, j]))


def _offer_rows(r: NDArray[np.float64], direction: int, value: NDArray[np.float64],
                xi: NDArray[np.float64], side: NDArray[np.int64],
                direction_kept: NDArray[np.int64]) -> None:
    """Offer a kernel's (n_lines, 6) rows of one direction to the (2, n) max/min arrays kept
    so far: a row replaces what is kept where it is strictly worse (larger max, smaller min)
    and stands at a real position (ξ not NaN)."""
    offered = r[:, 0::3].T  # (2, n): max, min
    at = r[:, 1::3].T
    better = (offered * _SIGNS > value * _SIGNS) & ~np.isnan(at)
    np.copyto(value, offered, where=better)
    np.copyto(xi, at, where=better)
    np.copyto(side, r[:, 2::3].T, where=better, casting="unsafe")
    np.copyto(direction_kept, direction, where=better, casting="unsafe")


def merge_scans(scan: NDArray[np.float64], n_directions: int) -> NDArray[np.float64]:
    """(2, n) max (row 0) and min (row 1) per line over the directions' extremes, as
    offering each direction's rows in turn to the empty beam (value 0, ξ NaN) would keep
    them: ``scan`` (n_directions · n, 6) holds direction k at rows k·n … k·n + n − 1 (as a
    kernel call returns them). A row whose ξ is NaN (nothing loads the line that way) is
    never taken. Offering in turn keeps the largest (for max; the smallest for min) of 0 and
    the values at a real position, so that is what is worked out here, in a few array
    operations; which direction gave it is found when asked for (``_taken``)."""
    n = scan.shape[0] // n_directions
    rows = scan.reshape(n_directions, n, 6)
    # larger is worse for max, smaller for min: max and min both as a largest
    signed = rows[:, :, 0::3] * _SIGNS_LAST
    signed[np.isnan(rows[:, :, 1::3])] = -np.inf  # never taken: never beats the empty 0
    kept = np.fmax(np.fmax.reduce(signed, axis=0), 0.0)  # fmax: a NaN value is never taken
    # back to the sign of each extreme; + 0.0 turns the empty beam's −0.0 into 0.0
    return (kept * _SIGNS_LAST + 0.0).T


_SIGNS_LAST = np.array([1.0, -1.0])  # max, min along the last axis


def _taken(scan: NDArray[np.float64], n_directions: int, w: int, j: int) -> int:
    """The direction k whose row gave line j's max (w = 0) or min (w = 1) in
    ``merge_scans`` (−1: the empty beam): each direction offered in turn, a NaN ξ never
    taken, ties to the earlier direction."""
    n = scan.shape[0] // n_directions
    kept, taken = 0.0, -1
    for k in range(n_directions):
        value, xi = scan[k * n + j, 3 * w], scan[k * n + j, 3 * w + 1]
        if xi == xi and ((value > kept) if w == 0 else (value < kept)):
            kept, taken = value, k
    return taken


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


# arrangements by value (a load case compares and hashes by every number of its load, its
# impact and its factors), for the load kinds known to do so: a load checked again on
# another beam, or at other sections, reuses them
_ARRANGEMENTS: dict[LoadCase, dict[int, _Arrangement]] = {}
_ARRANGEMENTS_KEEP = 64


def _case_key(case: LoadCase) -> LoadCase | None:
    """The value of a moving load case, for caches: the case itself, which compares and
    hashes by value (frozen dataclasses all the way down: every load, spacing, gap, impact,
    factor and name); cheaper than its repr, which spells out the same values. None: a load
    kind not known to compare by every value, or an unhashable field, not cached."""
    load = case.load
    inner = load.load if isinstance(load, _Frozen) else load
    if type(inner) not in (Vehicle, Train):
        return None
    try:
        hash(case)
    except TypeError:  # a field of a type that does not hash (a list as a name)
        return None
    return case


def _arrangements(case: LoadCase, key: Any = ...) -> dict[int, _Arrangement]:
    """The terms of ``case`` per direction (``key``: its ``_case_key``, if known)."""
    if key is ...:
        key = _case_key(case)
    found = _ARRANGEMENTS.get(key) if key is not None else None
    if found is None:
        found = _build_arrangements(case)
        if key is not None:
            if len(_ARRANGEMENTS) >= _ARRANGEMENTS_KEEP:
                _ARRANGEMENTS.pop(next(iter(_ARRANGEMENTS)), None)
            _ARRANGEMENTS[key] = found
    return found


def _build_arrangements(case: LoadCase) -> dict[int, _Arrangement]:
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
    if not arrangement.confined:
        return
    point = arrangement.kinds == KIND_POINT
    if not point.any():
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


# kernel arguments of the loads scanned over a batch of lines, by the value of the load
# case, kept for as long as the lines are (see _PREPARED)
_PLANS: weakref.WeakKeyDictionary[LineBatch, dict[LoadCase, Any]] = weakref.WeakKeyDictionary()
_PLANS_KEEP = 16


def _both_directions(batch: LineBatch, case: LoadCase,
                     arrangements: dict[int, _Arrangement], key: Any = ...
                     ) -> list[tuple[NDArray[np.int64], NDArray[np.float64]]]:
    """[(directions, (n_directions · n_lines, 6) scan of every line)] for a load without
    searched values:
    both directions in one kernel call when they differ only in their offsets (a group and
    its mirror image: the same weights and kinds). The kernel's arguments are laid out once
    and kept with the lines, by the value of the load case (``key``: its ``_case_key``, if
    known)."""
    if key is ...:
        key = _case_key(case)
    kept = _PLANS.get(batch) if key is not None else {}
    if kept is None:
        kept = _PLANS.setdefault(batch, {})
    plans = kept.get(key)
    if plans is None:
        plans = _scan_plans(batch, arrangements)
        if key is not None:
            if len(kept) >= _PLANS_KEEP:  # a sweep over load values: the oldest go
                kept.pop(next(iter(kept)), None)
            kept[key] = plans
    return [(directions, plan.run()) for directions, plan in plans]


def _scan_plans(batch: LineBatch, arrangements: dict[int, _Arrangement]
                ) -> list[tuple[NDArray[np.int64], ScanPlan]]:
    n = batch.n_lines
    arrs = list(arrangements.items())
    if len(arrs) == 2:
        (d0, a0), (d1, a1) = arrs
        if (a0.constant == a1.constant and a0.confined == a1.confined
                and np.array_equal(a0.weights, a1.weights)
                and np.array_equal(a0.kinds, a1.kinds)):
            offsets = np.repeat(np.stack([a0.base, a1.base]), n, axis=0)
            rows = np.tile(np.arange(n), 2)
            return [(np.array([d0, d1], dtype=np.int64),
                     ScanPlan(batch, a0.weights, a0.kinds, offsets, rows, a0.constant,
                              a0.confined))]
    lines = np.arange(n)
    return [(np.array([direction], dtype=np.int64),
             ScanPlan(batch, arr.weights, arr.kinds, arr.base[None, :], lines, arr.constant,
                      arr.confined))
            for direction, arr in arrs]


def _moving_grid(batch: LineBatch, case: LoadCase, case_index: int,
                 arrangements: dict[int, _Arrangement], key: Any = ...) -> _CaseResult:
    """Every line, every grid value of the searched dimensions, both directions: one kernel
    call per direction, a row per (grid value, line)."""
    n = batch.n_lines
    if not next(iter(arrangements.values())).slope.shape[0]:  # nothing searched
        # one row per line and direction
        scans = _both_directions(batch, case, arrangements, key)
        if len(scans) == 1:  # both directions in one kernel call
            directions, r = scans[0]
            return _CaseResult.merged(case_index, r, directions)
        result = _CaseResult(case_index, n)
        for directions, r in scans:
            result.offer_scan(r, directions[0])
        return result
    params = case.load.parameters()
    result = _CaseResult(case_index, n, len(params))
    lines = np.arange(n)
    grid = np.array(_grid(params), dtype=float).reshape(len(_grid(params)), len(params))
    for direction, arr in arrangements.items():
        offsets = np.repeat(arr.offsets(grid), n, axis=0)
        r = scan_arrangements(batch, arr.weights, arr.kinds, offsets, np.tile(lines, len(grid)),
                              arr.constant, arr.confined).reshape(len(grid), n, 6)
        for w, col in ((0, 0), (1, 3)):
            sign = 1.0 if w == 0 else -1.0
            score = np.where(np.isnan(r[:, :, col + 1]), -np.inf, sign * r[:, :, col])
            g = np.argmax(score, axis=0)
            pick = r[g, lines]
            result.offer(w, None, pick[:, col], pick[:, col + 1],
                         pick[:, col + 2].astype(np.int64), direction, grid[g])
    return result


def _searched_case(batch: LineBatch, case: LoadCase, case_index: int,
                   arrangements: dict[int, _Arrangement]) -> _CaseResult:
    """Every line's exact extremes over every position and every searched value, both
    directions (``analysis.search``: no grid, no assumption of one peak)."""
    params = case.load.parameters()
    low = np.array([p.low for p in params], dtype=float)
    high = np.array([p.high for p in params], dtype=float)
    result = _CaseResult(case_index, batch.n_lines, len(params))
    for direction, arr in arrangements.items():
        found = searched_extremes(batch, arr.weights, arr.kinds, arr.constant, arr.base,
                                  arr.slope, low, high, arr.confined,
                                  what=f"load case {case.name!r}")
        for w in (0, 1):
            result.offer(w, None, found.value[w], found.xi[w], found.side[w], direction,
                         found.searched[w])
    return result


def _uniform_case(batch: LineBatch, case: LoadCase, case_index: int,
                  ordinate_extremes: NDArray[np.float64], beam: Beam) -> _CaseResult:
    load: UniformLoad = case.load
    m = case.multiplier
    P = load.point_load
    n = batch.n_lines
    result = _CaseResult(case_index, n)
    result.pattern = [[None] * n, [None] * n]
    if load.placement == "anywhere":
        pos, neg = _lines_memo(batch, "signed areas")
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
    governing_max, governing_min : one Governing per line (a sequence that builds each
        Governing when first read)
    batch : the influence lines (shared knots) the envelope was scanned on
    """

    beam: Beam
    sections: NDArray[np.float64]
    cases: tuple[LoadCase, ...]
    effects: tuple[Effect, ...]
    index: dict[str, NDArray[np.int64]]
    governing_max: Sequence[Governing]
    governing_min: Sequence[Governing]
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
        return _values(self.governing_max)

    @property
    def minimum(self) -> NDArray[np.float64]:
        return _values(self.governing_min)

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

    def response_to(self, g: Governing, lines: NDArray[np.int64] | None = None
                    ) -> NDArray[np.float64]:
        """Every line's value (or the value of ``lines``) under the configuration ``g`` (the
        concurrent effects)."""
        n = len(self.effects) if lines is None else len(lines)
        if g.case < 0:
            return np.zeros(n)
        case = self.cases[g.case]
        if isinstance(case, Together):
            return sum((self._response(case.parts[p.case], p, lines)
                        for p in g.parts if p.case >= 0), np.zeros(n))
        return self._response(case, g, lines)

    def _response(self, case: LoadCase, g: Governing, lines: NDArray[np.int64] | None
                  ) -> NDArray[np.float64]:
        chosen = np.arange(len(self.effects)) if lines is None else np.asarray(lines)
        if isinstance(case.load, UniformLoad):
            intervals, x_p = self._stretches(g)
            total = np.zeros(len(chosen))
            for a, b in intervals:
                F = self.batch.running_at(np.array([a, b]), lines)
                total += case.load.w * (F[1] - F[0])
            if x_p is not None and case.load.point_load:
                side = "left" if g.side < 0 else "right"
                total += case.load.point_load * self.batch.ordinates(np.array([x_p]), side,
                                                                     lines)[0]
        else:
            total = group_response(self.batch, self._group(case, g), g.reference, g.side,
                                   lines)
        factor = np.full(len(chosen), case.multiplier)
        # no strength load factor on deflections
        factor[np.isin(chosen, self.index["deflection"])] = case.service_multiplier
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
            key = ("signs of line", j)  # the records ask several times, for max and min
            if key not in self._cache:
                m = int(self.batch.n_pieces[j])  # the line on its own breaks: linear in sections
                self._cache[key] = sign_intervals(self.batch.line_knots[j, :m + 1],
                                                  self.batch.line_coef[j, :m, :].T)
            intervals = self._cache[key][0 if sign > 0 else 1]
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
                # the sampled search's grid, only where some extreme still needs it
                coarse = (None if all(exact_absolute(case, kind, w) for w in ("max", "min"))
                          else _coarse_sections(self.beam, case, kind))
                found.extend((span, c, extreme) for span in range(self.beam.n_spans)
                             for extreme in absolute_extremes(self.beam, case, span, kind,
                                                              case_index=c, coarse=coarse))
            found.sort(key=lambda item: (item[0], item[1]))
            self._cache[key] = tuple(extreme for *_, extreme in found)
        return self._cache[key]

    # --- for people and for scripts (additive: nothing below is used by the search) ------

    def _where(self, line: int) -> str:
        effect = self.effects[line]
        if effect.kind in ("reaction", "support_moment"):
            return f"support {effect.support}"
        return f"x = {effect.at:.6g}"

    def _extreme_rows(self) -> list[list[str]]:
        """Per family computed: the largest max and the smallest min, where, which load."""
        rows = []
        maximum, minimum = self.maximum, self.minimum
        for family in FAMILIES:
            lines = self.index[family]
            if not lines.size:
                continue
            hi = int(lines[np.argmax(maximum[lines])])
            lo = int(lines[np.argmin(minimum[lines])])
            rows.append([family.replace("_", " "),
                         short(maximum[hi]), self._where(hi),
                         self.governing_max[hi].load or "—",
                         short(minimum[lo]), self._where(lo),
                         self.governing_min[lo].load or "—"])
        return rows

    def __repr__(self) -> str:
        names = ", ".join(case.name for case in self.cases)
        if len(names) > 60:
            names = names[:57] + "..."
        text = [f"{self.beam.n_spans} span(s)", f"{len(self.sections)} sections",
                f"{len(self.cases)} load case(s) ({names})"]
        for row in self._extreme_rows():
            if row[0] in ("moment", "reaction"):
                text.append(f"{row[0]} max {row[1]} at {row[2]} ({row[3]}), min {row[4]} at "
                            f"{row[5]} ({row[6]})")
        return "<Envelope " + "; ".join(text) + ">"

    def _repr_html_(self) -> str:
        """A small table for Jupyter: per effect the worst max and min, where, which load."""
        names = ", ".join(case.name for case in self.cases)
        return html_table(
            f"Envelope: {self.beam.n_spans} span(s), {len(self.sections)} sections",
            ["effect", "max", "where", "load", "min", "where", "load"], self._extreme_rows(),
            f"load cases: {names}. Every section: env.records(); "
            "pandas.DataFrame(env.records()) if pandas is installed.")

    def records(self, kind: str | None = None) -> list[dict[str, Any]]:
        """The envelope as plain records (one dict per row), e.g.
        ``pandas.DataFrame(env.records())``; trundle does not need pandas.

        kind None : one record per section: ``x`` [length], ``span`` (numbered from 1; a
            section at a support belongs to the span on its left), then for every section
            family computed (moment, shear_left, shear_right, deflection) ``<family>_max``,
            ``<family>_max_load``, ``<family>_min``, ``<family>_min_load``
        kind "moment", "shear" or "deflection" : one record per section (shear: two, ``side``
            "left" and "right"): ``x``, ``span``, ``max``, ``max_load``, ``max_reference``,
            ``min``, ``min_load``, ``min_reference`` (``reference``: see :class:`Governing`)
        kind "reaction" or "support_moment" : one record per support that has one:
            ``support`` (from 0), ``x``, then as above
        Loads are named; "" where the empty beam governs.
        """
        if kind in ("reaction", "support_moment"):
            out = []
            ends = self.beam.support_positions
            for line in self.index[kind]:
                support = self.effects[line].support
                out.append({"support": support, "x": float(ends[support]),
                            **self._pair(int(line))})
            return out
        if kind is not None:
            sides: tuple[str | None, ...] = ("left", "right") if kind == "shear" else (None,)
            out = []
            for side in sides:
                lines = self.lines_of(kind, side)
                if not lines.size:
                    raise ModelError(f"the envelope was not asked for {kind}")
                for row, line in enumerate(lines):
                    x = float(self.sections[row])
                    record: dict[str, Any] = {"x": x, "span": self.beam.span_of(x) + 1}
                    if side is not None:
                        record["side"] = side
                    record.update(self._pair(int(line)))
                    out.append(record)
            if kind == "shear":
                out.sort(key=lambda r: (r["x"], r["side"] == "right"))
            return out
        out = []
        families = [f for f in ("moment", "shear_left", "shear_right", "deflection")
                    if self.index[f].size]
        for row, x in enumerate(self.sections):
            record = {"x": float(x), "span": self.beam.span_of(float(x)) + 1}
            for family in families:
                line = int(self.index[family][row])
                high, low = self.governing_max[line], self.governing_min[line]
                record[f"{family}_max"] = high.value
                record[f"{family}_max_load"] = high.load
                record[f"{family}_min"] = low.value
                record[f"{family}_min_load"] = low.load
            out.append(record)
        return out

    def _pair(self, line: int) -> dict[str, Any]:
        high, low = self.governing_max[line], self.governing_min[line]
        return {"max": high.value, "max_load": high.load, "max_reference": high.reference,
                "min": low.value, "min_load": low.load, "min_reference": low.reference}

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

    def concurrent_matching(self, kind: str, which: str, families: Sequence[str]
                            ) -> dict[str, NDArray[np.float64]]:
        """For each line of ``kind``: the value of the line in the same place of each of
        ``families`` (the shear at the same section) under its governing load: the diagonal
        of :meth:`concurrent`, without its lines × lines work."""
        lines = self.lines_of(kind)
        families = [f for f in families if self.index[f].size == lines.size]
        out = {f: np.zeros(len(lines)) for f in families}
        for i, (g, j) in enumerate(zip(self.governing(kind, which), lines, strict=True)):
            wanted = np.array([j, *(self.index[f][i] for f in families)], dtype=np.int64)
            values = self.concurrent_to(g, int(j), wanted)
            for k, f in enumerate(families):
                out[f][i] = values[k + 1]
        return out

    def concurrent_to(self, g: Governing, line: int, lines: NDArray[np.int64] | None = None
                      ) -> NDArray[np.float64]:
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
        limit = self.response_to(g, lines)
        if g.case < 0 or self.effects[line].kind == "shear":
            return limit
        exact = self.response_to(_at_point(g), lines)
        own = line if lines is None else int(np.flatnonzero(np.asarray(lines) == line)[0])
        size = max(abs(limit[own]), np.abs(limit).max() * 1e-6, 1e-300)
        return exact if abs(exact[own] - limit[own]) <= 1e-9 * size else limit

    def axle_face(self, g: Governing, x: float, kind: str = "shear",
                  side: int | None = None,
                  positions: NDArray[np.float64] | None = None) -> str:
        """Where an axle of the configuration governing an extreme of ``kind`` at section x
        stands: "on" (exactly on the section), "left" / "right" (just left / right of it:
        the limit from that side, for shear, whose line jumps there), "" when no
        concentrated load of ``g`` stands at x. For other kinds the extreme is the same with
        the axle on the section (see ``concurrent_to``). ``side`` overrides ``g.side`` (a
        part of loads acting together); ``positions``: ``axle_positions(g)`` when known."""
        side = g.side if side is None else side
        if positions is None:
            positions = self.axle_positions(g)
        tolerance = 1e-9 * max(1.0, self.beam.length)
        if not any(abs(p - x) <= tolerance for p in positions.tolist()):
            return ""
        if kind != "shear" or side == 0:
            return "on"
        return "right" if side > 0 else "left"


def _values(governing: Sequence[Governing]) -> NDArray[np.float64]:
    """The value of every Governing, without building them where they are kept as arrays."""
    values = getattr(governing, "values", None)
    if values is not None:
        return values.copy()
    return np.array([g.value for g in governing])


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
    certified : True when ``value`` is the exact extreme over every section of the span (to
        rounding; see ``exact_absolute``); False when it comes from a sampled search refined
        locally, which assumes one peak between samples and may read low
    """

    span: int
    case: int
    which: str
    value: float
    x: float
    governing: Governing
    certified: bool = True


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
    return dataclasses.replace(g, case=case, pattern=pattern, parts=parts)


ABSOLUTE_SAMPLES = 40  # sections per span of the sampled search (where no exact method applies)


def _coarse_sections(beam: Beam, case: LoadCase, kind: str,
                     samples: int = ABSOLUTE_SAMPLES) -> Envelope:
    """One grid envelope over ``samples`` sections of every span, to locate the worst ones
    (searched spacings at their grid values: the refinement that follows searches them)."""
    ends = beam.support_positions
    xs = np.unique(np.concatenate([np.linspace(a, b, samples + 1)
                                   for a, b in zip(ends[:-1], ends[1:], strict=True)]))
    return envelope(beam, [case], sections=xs, effects=(kind,), refine=False)


def exact_absolute(case: Any, kind: str, which: str) -> bool:
    """Whether ``absolute_extremes`` gives the exact (certified) extreme for this case.

    The smallest moment anywhere in a span is always exact: every load acts downward, so
    under any placement the moment is concave along a span and least at one of its ends,
    whose envelopes are exact. The largest moment is exact for a rigid group of concentrated
    loads (vehicles, axle groups, cranes, trains with fixed spacings and gaps; impact and
    factors; both directions; confined or not): the maximum stands under a load
    (``analysis.absolute_moment``). Searched spacings or gaps, uniform load attached to a
    train, placed uniform load and loads acting together are found by the sampled search
    (not certified), and so is a job beyond the exact method's size limits
    (``absolute_moment.MAX_BREAKS``, ``MAX_WORK``: ``certified`` is then False in the result
    though this says True). Deflection anywhere, for every load, comes from a branch and
    bound with a certificate (``_bounded_deflection``: within 1e-9 of the span's largest
    deflection), or, where its budget of boxes runs out, from the sampled search (then
    ``certified`` is False in the result)."""
    if kind == "deflection":
        return True  # certified unless the box budget runs out (see _bounded_deflection)
    if which == "min":
        return True
    if not isinstance(case, LoadCase) or isinstance(case.load, UniformLoad):
        return False
    if case.load.parameters():
        return False
    return not case.load.group((), case.impact).uniform


def _span_end_lines(beam: Beam, span: int) -> tuple:
    """(knots, moment line, shear line) just right of the span's left end, on shared knots."""
    key = (beam._value_key, span)
    found = _SPAN_LINES.get(key)
    if found is None:
        a = float(beam.support_positions[span])
        pieces = line_pieces(beam, [Effect("moment", at=a, side="right"),
                                    Effect("shear", at=a, side="right")])
        knots = np.unique(pieces.knots[:, :int(pieces.n_pieces.max()) + 1])
        # both lines on the union of their breaks (the structural nodes: a is one)
        coef = []
        for j in range(2):
            own = pieces.knots[j, :pieces.n_pieces[j] + 1]
            k = np.clip(np.searchsorted(own, knots[:-1], side="right") - 1, 0,
                        pieces.n_pieces[j] - 1)
            shift = knots[:-1] - own[k]
            c = pieces.coefficients[j, k]
            c3, c2, c1, c0 = c[:, 0], c[:, 1], c[:, 2], c[:, 3]
            coef.append(np.stack([c3, c2 + 3 * c3 * shift,
                                  c1 + (2 * c2 + 3 * c3 * shift) * shift,
                                  c0 + (c1 + (c2 + c3 * shift) * shift) * shift], axis=1))
        found = (knots, coef[0], coef[1])
        if len(_SPAN_LINES) >= 64:
            _SPAN_LINES.pop(next(iter(_SPAN_LINES)))
        _SPAN_LINES[key] = found
    return found


_SPAN_LINES: dict[tuple, tuple] = {}


def absolute_extremes(beam: Beam, case: LoadCase, span: int, kind: str = "moment",
                      samples: int = ABSOLUTE_SAMPLES, case_index: int = 0,
                      extremes: Sequence[str] = ("max", "min"),
                      coarse: Envelope | None = None, beyond: float = 0.0
                      ) -> tuple[AbsoluteExtreme, ...]:
    """Max and min of ``kind`` over all sections of a span (just right of its left support
    to just left of its right support).

    Exact where ``exact_absolute`` says so: the moment's minimum from the envelopes of the
    span's two ends, its maximum also under every load of a rigid group of concentrated
    loads (``analysis.absolute_moment``; no sampling, no assumption of one peak). Otherwise
    (``certified`` False in the result) a grid of ``samples`` sections then a bounded search
    around the best one, never below the span's ends: every trial section gets the exact
    scan over all positions and both directions; searched spacings and gaps are held at
    their best values while the section is refined, then searched again at the refined
    section, and the section refined once more (coordinate ascent). That search assumes one
    peak between neighbouring samples and may read low.

    ``beyond`` (deflection only, a size ≥ 0): a caller that already holds a deflection of
    that size (a check taking the worst of both senses) asks only for values beyond it; a
    certified result smaller than ``beyond`` then proves that nothing in the span exceeds
    ``beyond`` (to the tolerance), not that the value returned is the extreme.
    """
    if kind not in ("moment", "deflection"):
        raise ModelError(f"absolute extremes: expected moment or deflection, found {kind!r}")
    a, b = float(beam.support_positions[span]), float(beam.support_positions[span + 1])
    ends = None
    if kind == "moment":
        ends = _envelope(beam, [case], [a, b], ("moment",), True, ("right", "left"))
    out = []
    for which in extremes:
        sign = 1.0 if which == "max" else -1.0
        certified = exact_absolute(case, kind, which)
        best: tuple[float, float, Governing, Envelope | None] | None = None
        if ends is not None:
            values = ends.max(kind) if which == "max" else ends.min(kind)
            j = int(np.argmax(sign * values))
            best = (float(values[j]), (a, b)[j], ends.governing(kind, which)[j], ends)
        if certified and which == "max" and kind == "moment":
            found = _under_axles(beam, case, span, case_index, best, ends)
            certified = found is not None  # None: too big a job for the exact method
            best = found if found is not None else best
        if kind == "deflection":
            best = _bounded_deflection(beam, case, span, which, beyond)
            certified = best is not None  # None: the box budget did not suffice
        if not certified:
            if coarse is None:
                coarse = envelope(beam, [case], sections=np.linspace(a, b, samples + 1),
                                  effects=(kind,), refine=False)
            found = _sampled_extreme(beam, case, kind, which, a, b, coarse)
            if best is None or sign * found[0] > sign * best[0]:
                best = found
        value, x, governing, source = best
        if source is not None:
            governing = _standalone(source, governing,
                                    case_index if governing.case >= 0 else -1)
        out.append(AbsoluteExtreme(span, case_index, which, value, x, governing, certified))
    return tuple(out)


def _under_axles(beam: Beam, case: LoadCase, span: int, case_index: int,
                 best: tuple, ends: Envelope) -> tuple | None:
    """The span ends' best (``best``) or, where larger, the exact maximum under a load (None
    when the job is beyond the exact method's limits: ``absolute_moment.MAX_WORK``)."""
    a, b = float(beam.support_positions[span]), float(beam.support_positions[span + 1])
    knots, moment, shear = _span_end_lines(beam, span)
    scale = max(abs(float(ends.max("moment").max())), abs(float(ends.min("moment").min())))
    for direction, arrangement in _arrangements(case).items():
        found = moment_under_axles(knots, moment, shear, a, b, arrangement.base,
                                   arrangement.weights, arrangement.confined)
        if found is None:
            return None
        # above the ends by more than rounding (an empty span reads ~1e-13 of its ends)
        if found.value > best[0] + 1e-12 * max(scale, abs(found.value)):
            g = Governing(found.value, case_index, direction, found.reference, found.side,
                          load=case.name)
            best = (found.value, found.x, g, None)
    return best


# the certified search of the absolute deflection: boxes per span at the start, the largest
# number of boxes examined before giving up (then the sampled search, not certified), the
# relative tolerance of the certificate
DEFLECTION_START_BOXES = 40
DEFLECTION_BOX_BUDGET = 4000
DEFLECTION_TOLERANCE = 1e-9
DEFLECTION_SPLIT = 8


def _moment_bounds(beam: Beam, case: Any, span: int) -> tuple[float, float] | None:
    """(lower, upper) bounds of the moment anywhere in the span under every placement, at
    service level (without the load factor): the moment is concave along the span, so it is
    above the smaller end and below the exact maximum where there is one, else below each
    end's value continued with its end shear. None where the end shear cannot be had."""
    a, b = float(beam.support_positions[span]), float(beam.support_positions[span + 1])
    ends = _envelope(beam, [case], [a, b], ("moment",), True, ("right", "left"))
    low = float(min(ends.min("moment")))
    found = (absolute_extremes(beam, case, span, "moment", extremes=("max",))[0]
             if exact_absolute(case, "moment", "max") else None)
    if found is not None and found.certified:
        up = found.value
    else:
        try:
            shear = envelope(beam, [case], sections=[a, b], effects=("shear",))
        except SearchError:
            return None  # the exact search of spacings at a free end: not certified here
        length = b - a
        up = min(float(ends.max("moment")[0])
                 + max(float(shear.max("shear", "right")[0]), 0.0) * length,
                 float(ends.max("moment")[1])
                 + max(-float(shear.min("shear", "left")[1]), 0.0) * length)
    parts = case.parts if isinstance(case, Together) else (case,)
    factor = min(p.load_factor for p in parts)  # service level; an upper bound for each part
    return low / factor, up / factor


def _least_stiffness(beam: Beam, a: float, b: float) -> float:
    mesh = assembly_for(beam, ()).mesh
    inside = (mesh.x[1:] > a) & (mesh.x[:-1] < b)
    return float(mesh.element_EI[inside].min())


def _bounded_deflection(beam: Beam, case: Any, span: int, which: str, beyond: float = 0.0
                        ) -> tuple[float, float, Governing, Envelope] | None:
    """The extreme deflection anywhere in the span, certified to ``DEFLECTION_TOLERANCE`` of
    the span's largest deflection, or None when ``DEFLECTION_BOX_BUDGET`` boxes do not
    suffice.

    Branch and bound over boxes [x_m − r, x_m + r] of the span (never across a hinge, where
    the rotation jumps). For one placement δ'' = −M/EI, so by Taylor's theorem with the
    remainder in integral form δ(x_m + s) ≤ δ(x_m) + θ(x_m)·s + K s²/2 with K the largest
    −M/EI over the span (from ``_moment_bounds`` and the least EI). Over every placement the
    first two terms are the envelope of the line δ + s·θ at x_m, convex in s, so largest at
    s = ±r: the box's bound is the larger envelope of δ ± r·θ plus K r²/2 (the same with
    signs turned for the minimum). The value is the exact envelope at a box's middle; boxes
    whose bound cannot beat it by the tolerance are dropped, the others split.
    """
    sign = 1.0 if which == "max" else -1.0
    a, b = float(beam.support_positions[span]), float(beam.support_positions[span + 1])
    bounds = _moment_bounds(beam, case, span)
    if bounds is None:
        return None
    low, up = bounds
    curvature = (max(-low, 0.0) if which == "max" else max(up, 0.0)) / _least_stiffness(
        beam, a, b)
    # boxes never straddle a node (hinge: the rotation jumps; stiffness step) and a node is
    # evaluated itself, not a hair from it (a section a hair from a node costs digits)
    nodes = assembly_for(beam, ()).mesh.x
    tol = 1e-9 * beam.length
    cuts = [a, *[float(x) for x in nodes if a + tol < x < b - tol], b]
    boxes = []
    for lo, hi in zip(cuts[:-1], cuts[1:], strict=True):
        n = max(2, int(np.ceil(DEFLECTION_START_BOXES * (hi - lo) / (b - a))))
        edges = np.linspace(lo, hi, n + 1)
        boxes.extend(zip(edges[:-1], edges[1:], strict=True))
    box = np.array(boxes)
    best: tuple[float, float, Governing, Envelope] | None = None
    scale = 0.0
    examined = 0
    while box.size:
        examined += len(box)
        if examined > DEFLECTION_BOX_BUDGET:
            return None
        mid, r = box.mean(axis=1), 0.5 * (box[:, 1] - box[:, 0])
        # the exact envelope at every box's middle and ends: an extreme at an end of a box
        # (a free tip, a node) is then found as it is, not approached from inside
        where = np.unique(np.concatenate([mid, box.ravel()]))
        at = envelope(beam, [case], sections=where, effects=("deflection",))
        values = at.max("deflection") if which == "max" else at.min("deflection")
        scale = max(scale, float(np.abs(at.max("deflection")).max()),
                    float(np.abs(at.min("deflection")).max()))
        j = int(np.argmax(sign * values))
        if best is None or sign * values[j] > sign * best[0]:
            best = (float(values[j]), float(where[j]), at.governing("deflection", which)[j],
                    at)
        pieces = line_pieces(beam, [e for x in mid for e in (Effect("deflection", at=float(x)),
                                                             Effect("rotation", at=float(x)))])
        if not np.array_equal(pieces.knots[0::2], pieces.knots[1::2]):
            return None  # not expected: both lines break where the structure and x_m do
        deflection, rotation = pieces.coefficients[0::2], pieces.coefficients[1::2]
        combined = np.concatenate([deflection + r[:, None, None] * rotation,
                                   deflection - r[:, None, None] * rotation])
        n = len(mid)
        lines = LinePieces(np.concatenate([pieces.knots[0::2]] * 2),
                           np.concatenate([pieces.n_pieces[0::2]] * 2), combined,
                           tuple(pieces.effects[0::2]) * 2, pieces.nodes, pieces.sections,
                           np.arange(2 * n, dtype=np.int64),
                           np.concatenate([pieces.split_at[0::2]] * 2))
        reach = _envelope(beam, [case], mid, ("deflection",), True, deflection_lines=lines)
        linear = reach.max("deflection") if which == "max" else reach.min("deflection")
        bound = np.maximum(sign * linear[:n], sign * linear[n:]) + curvature * r * r / 2
        # a box stays open only where it could beat both the best found and ``beyond``
        open_box = bound > max(sign * best[0], beyond) + DEFLECTION_TOLERANCE * max(scale,
                                                                                    1e-300)
        # each open box in DEFLECTION_SPLIT (fewer rounds: a round costs two envelopes)
        kept = box[open_box]
        edges = kept[:, :1] + (kept[:, 1:] - kept[:, :1]) * np.linspace(
            0.0, 1.0, DEFLECTION_SPLIT + 1)[None, :]
        box = np.stack([edges[:, :-1], edges[:, 1:]], axis=2).reshape(-1, 2)
    return best


def _sampled_extreme(beam: Beam, case: LoadCase, kind: str, which: str, a: float, b: float,
                     coarse: Envelope) -> tuple[float, float, Governing, Envelope]:
    """The sampled search (not certified): the best of the sampled sections, refined by a
    bounded scalar search between its neighbours."""
    tol = 1e-9 * beam.length
    inside = np.flatnonzero((coarse.sections >= a - tol) & (coarse.sections <= b + tol))
    xs = coarse.sections[inside]
    searched = (isinstance(case, LoadCase) and not isinstance(case.load, UniformLoad)
                and bool(case.load.parameters()))
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

        def score(x: float, trial_case: LoadCase = trial_case) -> float:
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
    return best_value, best_x, governing, source


def _together(batch: LineBatch, together: Together, c: int, single: Any,
              index: dict[str, NDArray[np.int64]], refine: bool) -> _CaseResult:
    """Loads acting together: each part at its own worst, so the extreme of the sum is the
    sum of the parts' extremes (each counts the empty beam). Each part's searched values are
    searched on their own (in ``single``) and its deflections taken without its own load
    factor before the parts are added."""
    result = _CaseResult(c, batch.n_lines)
    for k, part in enumerate(together.parts):
        part_result, _arrangements = single(part, k)
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
    refine : search spacings and gaps exactly over their whole ranges (default; see
        ``analysis.search``); without it the values are those of the best point of a coarse
        grid of the searched values, lower bounds of the exact extremes
    """
    return _envelope(beam, loads, sections, effects, refine)


def _envelope(beam: Beam, loads: Iterable[Any], sections: ArrayLike | None,
              effects: Sequence[str], refine: bool,
              moment_sides: tuple[str | None, ...] | None = None,
              deflection_lines: LinePieces | None = None) -> Envelope:
    """``envelope``; ``moment_sides`` (one per section) reads the moment just left or just
    right of a support whose couple makes it jump (the span ends of absolute extremes);
    ``deflection_lines`` are scanned as the deflection family instead of the lines of the
    sections (any lines: the bounds of the absolute deflection; service level like it)."""
    cases = tuple(as_case(item) for item in loads)
    if not cases:
        raise ModelError("loads: at least one load is needed")
    sections = beam.tenth_points() if sections is None else np.atleast_1d(
        np.asarray(sections, dtype=float))
    if deflection_lines is None:
        line_effects, index_all, full_batch, keep, inverse, index, batch = _prepared_lines(
            beam, sections, tuple(effects), moment_sides)
    else:
        n_custom = len(deflection_lines)
        line_effects = deflection_lines.effects
        index = {f: np.zeros(0, dtype=np.int64) for f in FAMILIES}
        index["deflection"] = np.arange(n_custom, dtype=np.int64)
        index_all, keep, inverse = index, index["deflection"], index["deflection"]
        full_batch = batch = LineBatch.from_pieces(deflection_lines)
    n = batch.n_lines
    # largest and smallest ordinate of every line: where a placed load's point load stands
    placed = any(isinstance(p.load, UniformLoad) for c in cases
                 for p in (c.parts if isinstance(c, Together) else (c,)))
    ordinate_extremes = _lines_memo(batch, "ordinate extremes") if placed else None
    results: list[_CaseResult] = []

    def single(case: LoadCase, c: int) -> tuple[_CaseResult, dict | None]:
        if isinstance(case.load, UniformLoad):
            return _uniform_case(batch, case, c, ordinate_extremes, beam), None
        key = _case_key(case)
        arrangements = _arrangements(case, key)
        _check_fits(case, arrangements[1], beam.length)
        if refine and arrangements[1].slope.shape[0]:  # searched spacings or gaps
            return _searched_case(batch, case, c, arrangements), arrangements
        return _moving_grid(batch, case, c, arrangements, key), arrangements

    for c, case in enumerate(cases):
        if isinstance(case, Together):
            results.append(_together(batch, case, c, single, index, refine))
            continue
        results.append(single(case, c)[0])
    # deflection stays at service level, without the strength load factor of each case
    deflection = index["deflection"]
    for case, result in zip(cases, results, strict=True):
        if deflection.size and case.load_factor != 1.0:
            result.value[:, deflection] *= 1.0 / case.load_factor
    if len(results) == 1:  # one case (the common call): it governs every line
        best = results[0].value  # (2, lines)
        winners = np.zeros((2, n), dtype=np.int64)
        magnitude = np.abs(best)
    else:
        stacked = np.array([r.value for r in results])  # (cases, 2, lines)
        lines = np.arange(n)
        winners = np.stack([stacked[:, 0].argmax(axis=0), stacked[:, 1].argmin(axis=0)])
        best = np.stack([stacked[winners[w], w, lines] for w in (0, 1)])
        magnitude = np.abs(stacked).max(axis=0)
    families = [lines for lines in index.values() if lines.size]
    if len(families) == 1 and families[0].size == n:  # one family covers every line
        scale = magnitude.max()
    else:
        scale = np.zeros(n)
        for lines_of_family in families:
            scale[lines_of_family] = magnitude[:, lines_of_family].max()
    # rounding noise around an empty-beam zero is not a governing load
    empty = (magnitude if len(results) == 1 else np.abs(best)) <= 1e-12 * scale
    values = np.where(empty, 0.0, best)
    if inverse.size != n:  # else every line is distinct and inverse the identity
        values = values[:, inverse]
    governing = [_Governors(w, results, winners[w], empty[w], values[w], keep, inverse, cases)
                 for w in (0, 1)]
    return Envelope(beam, sections, cases, line_effects, index_all, governing[0],
                    governing[1], full_batch)


class _Governors(Sequence):
    """The Governing of every line for the maxima (w = 0) or the minima (w = 1), built when
    first asked for: most callers read only the values (``values``, an array), and building
    thousands of Governing objects per call cost more than the scan itself.

    Line j is distinct line ``inverse[j]``; its extreme comes from case ``winners[u]``
    (``results``, per distinct line u), or from the empty beam where ``empty[u]``.
    """

    def __init__(self, w: int, results: Sequence[_CaseResult], winners: NDArray[np.int64],
                 empty: NDArray[np.bool_], values: NDArray[np.float64],
                 keep: NDArray[np.int64], inverse: NDArray[np.int64], cases: Sequence[Any]):
        self._w = w
        self._results = results
        self._winners = winners
        self._empty = empty
        self._keep = keep
        self._inverse = inverse
        self._cases = cases
        self._built: dict[int, Governing] = {}
        values.setflags(write=False)
        self.values = values  # (n_lines,) the extreme of every line

    def __len__(self) -> int:
        return self._inverse.size

    def _distinct(self, u: int) -> Governing:
        g = self._built.get(u)
        if g is None:
            if self._empty[u]:
                g = EMPTY
            else:
                g = self._results[self._winners[u]].governing(self._w, u)
                g = _renumbered(g, self._keep, self._cases)
            self._built[u] = g
        return g

    def __getitem__(self, j):
        if isinstance(j, slice):
            return tuple(self[i] for i in range(*j.indices(len(self))))
        j = int(j)
        if j < 0:
            j += len(self)
        if not 0 <= j < len(self):
            raise IndexError("line index out of range")
        return self._distinct(int(self._inverse[j]))

    def __iter__(self):
        for u in self._inverse:
            yield self._distinct(int(u))

    def __repr__(self) -> str:
        return f"<Governing of {len(self)} lines ({'max' if self._w == 0 else 'min'})>"


# lines ready to scan, by beam, sections and families (values, not identities): a beam
# checked again, under other loads, reuses them
_PREPARED: dict[tuple, tuple] = {}
_PREPARED_KEEP = 8


def _prepared_lines(beam: Beam, sections: NDArray[np.float64], families: tuple[str, ...],
                    moment_sides: tuple[str | None, ...] | None = None) -> tuple:
    """(effects, index, every line, keep, inverse, distinct index, distinct lines)."""
    # a Beam compares by identity; its repr (spelled once per beam) gives every value
    key = (beam._value_key, np.ascontiguousarray(sections, dtype=float).tobytes(), families,
           moment_sides)
    found = _PREPARED.get(key)
    if found is None:
        line_effects, index = _line_effects(beam, sections, families, moment_sides)
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


# what depends on the lines only (not on the loads), kept with the lines of the cache above
# for as long as they live: a placed uniform load's areas and its point load's ordinates are
# computed once for a beam checked again under other loads (a sweep of an axle spacing)
_MEMO: weakref.WeakKeyDictionary[LineBatch, dict[str, Any]] = weakref.WeakKeyDictionary()


def _lines_memo(batch: LineBatch, what: str) -> Any:
    """``"signed areas"`` (positive, negative area of each line) or ``"ordinate extremes"``
    (a unit load's scan of each line) of ``batch``, computed once per batch object."""
    memo = _MEMO.setdefault(batch, {})
    if what not in memo:
        found = (tuple(np.array(a) for a in batch.signed_areas) if what == "signed areas"
                 else scan_group(batch, TermGroup((0.0,), (1.0,))))
        for array in (found if isinstance(found, tuple) else (found,)):
            array.setflags(write=False)  # shared by every envelope of these lines
        memo[what] = found
    return memo[what]


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


def _renumbered(g: Governing, keep: NDArray[np.int64], cases: Sequence[Any]) -> Governing:
    """``g`` with a placed load's "sign of line" pattern pointing at the full set of lines,
    and named after its load case (``cases``: the envelope's, or a Together's parts)."""
    if g.case < 0:
        return g
    case = cases[g.case]
    pattern = g.pattern
    if pattern and pattern[0] == "sign of line":
        pattern = ("sign of line", int(keep[pattern[1]]), pattern[2])
    parts = tuple(_renumbered(p, keep, case.parts) for p in g.parts)
    return Governing(g.value, g.case, g.direction, g.reference, g.side, g.searched, pattern,
                     parts, case.name)


def kind_and_side(family: str) -> tuple[str, str | None]:
    """A result family as (effect kind, side): "shear_left" -> ("shear", "left")."""
    if family in ("shear_left", "shear_right"):
        return "shear", family[6:]
    return family, None
