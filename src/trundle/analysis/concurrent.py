"""What acts together with every extreme of a family, for all its sections in one pass.

:meth:`Envelope.concurrent_matching <trundle.analysis.envelope.Envelope.concurrent_matching>`
answers one section at a time (a Governing, a few lines, one group response each): clear, but
at thousands of sections its Python work per section costs more than the whole scan.
:func:`concurrent_matching` gives the same numbers for every section at once: the sections
are grouped by what governs them (load case, part, direction, searched values, which limit),
and each group's loads are read on the lines of its sections in a few array operations.

The line values are read exactly as :class:`~trundle.scan.engine.LineBatch` reads them
(``ordinates``, ``running_at``: the same snapping to knots, one-sided limits, loads off the
beam, a load standing on an end or on a shear line's own section), but in pairs: line
``lines[r]`` at ``x[r]``, so the work is linear in the sections (the batch's own methods give
every line at every point). ``tests/test_concurrent_bulk.py`` checks it against the section
by section answer.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np
from numpy.typing import NDArray

from trundle.analysis.envelope import Envelope, Governing, _at_point
from trundle.loads.cases import Together
from trundle.loads.patterns import UniformLoad
from trundle.scan.engine import KIND_POINT, LineBatch


def _evaluate_pairs(knots: NDArray[np.float64], n_pieces: NDArray[np.int64],
                    coef: NDArray[np.float64], lines: NDArray[np.int64],
                    x: NDArray[np.float64], from_left: bool) -> NDArray[np.float64]:
    """Line ``lines[r]`` (each on its own knots; ``coef`` highest power first) at ``x[r]``:
    at a knot the piece on the left if ``from_left``, else the one on the right; the end
    pieces extend beyond the ends (as ``kernels.evaluate_lines``, in pairs)."""
    own_knots = knots[lines]  # (R, K)
    m = n_pieces[lines]
    inner = own_knots[:, 1:]
    passed = (inner < x[:, None]) if from_left else (inner <= x[:, None])
    passed &= np.arange(1, own_knots.shape[1])[None, :] < m[:, None]
    piece = passed.sum(axis=1)  # knots sorted: the last inner knot passed
    s = x - own_knots[np.arange(lines.size), piece]
    c = coef[lines, piece]  # (R, degree + 1)
    value = c[:, 0].copy()
    for p in range(1, c.shape[1]):
        value = value * s + c[:, p]
    return value


def paired_ordinates(batch: LineBatch, x: NDArray[np.float64], side: str,
                     lines: NDArray[np.int64]) -> NDArray[np.float64]:
    """IL of line ``lines[r]`` at ``x[r]`` (1-D arrays of one length), as
    ``batch.ordinates(x, side, lines)`` reads it: the one-sided limit from ``side`` ("left",
    "right") or a load standing exactly there (``"point"``)."""
    x = np.asarray(x, dtype=float)
    lines = np.asarray(lines, dtype=np.int64)
    length = batch.length
    if side == "point":
        out = paired_ordinates(batch, x, "right", lines)
        tolerance = 1e-12 * max(1.0, length)
        at_right_end = np.abs(x - length) <= tolerance
        if at_right_end.any():
            out[at_right_end] = paired_ordinates(
                batch, np.full(int(at_right_end.sum()), length), "left", lines[at_right_end])
        own_knot = batch.own_knot[lines]
        owning = np.flatnonzero(own_knot >= 0)
        if owning.size:
            own_x = batch.line_knots[lines[owning], own_knot[owning]]
            on = owning[np.abs(x[owning] - own_x) <= tolerance]
            out[on] = batch.own_value[lines[on]]
        return out
    x = batch.snapped(x)
    out = _evaluate_pairs(batch.line_knots, batch.n_pieces, batch.line_coef, lines, x,
                          side == "left")
    out[batch.off_beam(x, side)] = 0.0
    return out


def paired_running(batch: LineBatch, x: NDArray[np.float64], lines: NDArray[np.int64]
                   ) -> NDArray[np.float64]:
    """F = ∫ IL of line ``lines[r]`` up to ``x[r]``, as ``batch.running_at(x, lines)``."""
    x = np.asarray(x, dtype=float)
    lines = np.asarray(lines, dtype=np.int64)
    length = batch.length
    out = _evaluate_pairs(batch.line_knots, batch.n_pieces, batch.line_running, lines,
                          np.clip(x, 0.0, length), False)
    out[x <= 0.0] = 0.0
    at_end = x >= length
    out[at_end] = batch.running_end[lines[at_end]]
    return out


def _limit(side: int) -> str:
    return "left" if side < 0 else "right" if side > 0 else "point"


def _on_lines(read, batch: LineBatch, x: NDArray[np.float64], lines: NDArray[np.int64],
              *args: Any) -> NDArray[np.float64]:
    """``read`` of every line of each row at each of the row's points: x (R, T), lines
    (R, L) -> (R, T, L)."""
    rows, terms = x.shape
    width = lines.shape[1]
    xx = np.broadcast_to(x[:, :, None], (rows, terms, width)).ravel()
    ll = np.broadcast_to(lines[:, None, :], (rows, terms, width)).ravel()
    return read(batch, xx, *args, ll).reshape(rows, terms, width)


class _Responses:
    """Responses of the lines of many rows to the loads governing them (see
    ``Envelope.response_to``), grouped so that each group costs a few array operations."""

    def __init__(self, env: Envelope) -> None:
        self.env = env
        self.batch = env.batch
        self._groups: dict[tuple, tuple] = {}

    def _terms(self, where: tuple[int, ...], case: Any, g: Governing) -> tuple:
        key = (where, g.direction, g.searched)
        found = self._groups.get(key)
        if found is None:
            found = self.env._group(case, g).terms()
            self._groups[key] = found
        return found

    def of(self, governing: Sequence[Governing], lines: NDArray[np.int64]
           ) -> NDArray[np.float64]:
        """(R, L): row r's lines under ``governing[r]`` (``response_to``)."""
        out = np.zeros(lines.shape)
        by_case: dict[int, list[int]] = {}
        for r, g in enumerate(governing):
            if g.case >= 0:
                by_case.setdefault(g.case, []).append(r)
        for c, rows in by_case.items():
            case = self.env.cases[c]
            chosen = np.asarray(rows, dtype=np.int64)
            if isinstance(case, Together):
                total = np.zeros((chosen.size, lines.shape[1]))
                for k, part in enumerate(case.parts):
                    present = [i for i, r in enumerate(rows) if governing[r].parts[k].case >= 0]
                    if not present:
                        continue
                    at = np.asarray(present, dtype=np.int64)
                    total[at] = total[at] + self._case(
                        (c, k), part, [governing[rows[i]].parts[k] for i in present],
                        lines[chosen[at]])
                out[chosen] = total
            else:
                out[chosen] = self._case((c,), case, [governing[r] for r in rows],
                                         lines[chosen])
        return out

    def _case(self, where: tuple[int, ...], case: Any, governing: list[Governing],
              lines: NDArray[np.int64]) -> NDArray[np.float64]:
        """``Envelope._response`` of one load case for many rows."""
        if isinstance(case.load, UniformLoad):
            total = self._placed(case, governing, lines)
        else:
            total = np.empty(lines.shape)
            groups: dict[tuple, list[int]] = {}
            for r, g in enumerate(governing):
                groups.setdefault((g.direction, g.searched, _limit(g.side)), []).append(r)
            for (_, _, limit), rows in groups.items():
                chosen = np.asarray(rows, dtype=np.int64)
                terms = self._terms(where, case, governing[rows[0]])
                xi = np.array([governing[r].reference for r in rows])
                total[chosen] = self._moving(terms, xi, limit, lines[chosen])
        factor = np.full(lines.shape, case.multiplier)
        # no strength load factor on deflections
        factor[np.isin(lines, self.env.index["deflection"])] = case.service_multiplier
        return factor * total

    def _moving(self, terms: tuple, xi: NDArray[np.float64], limit: str,
                lines: NDArray[np.int64]) -> NDArray[np.float64]:
        """``group_response`` of one group with its reference at ``xi[r]`` on row r's lines."""
        weights, offsets, kinds, constant = terms
        batch = self.batch
        x = xi[:, None] - offsets[None, :]
        total = constant * batch.running_end[lines]
        point = kinds == KIND_POINT
        if point.any():
            values = _on_lines(paired_ordinates, batch, np.ascontiguousarray(x[:, point]),
                               lines, limit)
            total += np.matmul(weights[point], values)
        if (~point).any():
            values = _on_lines(paired_running, batch, np.ascontiguousarray(x[:, ~point]),
                               lines)
            total += np.matmul(weights[~point], values)
        return total

    def _placed(self, case: Any, governing: list[Governing], lines: NDArray[np.int64]
                ) -> NDArray[np.float64]:
        """A placed uniform load on its loaded stretches, with its point load."""
        load: UniformLoad = case.load
        batch = self.batch
        total = np.zeros(lines.shape)
        found = [self.env._stretches(g) for g in governing]
        stretches = [intervals for intervals, _ in found]
        for k in range(max((len(s) for s in stretches), default=0)):
            rows = np.asarray([r for r, s in enumerate(stretches) if len(s) > k],
                              dtype=np.int64)
            ends = np.array([stretches[r][k] for r in rows])  # (rows, 2): a, b
            both = _on_lines(paired_running, batch, ends, lines[rows])
            total[rows] += load.w * (both[:, 1] - both[:, 0])
        if load.point_load:
            for limit in ("left", "right"):
                rows = np.asarray([r for r, (g, (_, x_p)) in enumerate(zip(governing, found,
                                                                         strict=True))
                                   if x_p is not None and (g.side < 0) == (limit == "left")],
                                  dtype=np.int64)
                if rows.size:
                    x = np.array([[found[r][1]] for r in rows])
                    values = _on_lines(paired_ordinates, batch, x, lines[rows], limit)
                    total[rows] += load.point_load * values[:, 0]
        return total


def concurrent_matching(env: Envelope, kind: str, which: str, families: Sequence[str]
                        ) -> dict[str, NDArray[np.float64]]:
    """``env.concurrent_matching(kind, which, families)`` for every section at once: for each
    line of ``kind``, the value of the line in the same place of each of ``families`` under
    its governing load (an axle on the section counted on each face's own side; see
    ``Envelope.concurrent_to``)."""
    own = env.lines_of(kind)
    families = [f for f in families if env.index[f].size == own.size]
    governing = env.governing(kind, which)
    lines = np.column_stack([own, *(env.index[f] for f in families)]).astype(np.int64)
    responses = _Responses(env)
    limit = responses.of(governing, lines)
    chosen = limit
    if kind != "shear":
        exact = responses.of([_at_point(g) for g in governing], lines)
        size = np.maximum(np.maximum(np.abs(limit[:, 0]), np.abs(limit).max(axis=1) * 1e-6),
                          1e-300)
        use_exact = np.abs(exact[:, 0] - limit[:, 0]) <= 1e-9 * size
        chosen = np.where(use_exact[:, None], exact, limit)
    return {f: chosen[:, k + 1].copy() for k, f in enumerate(families)}
