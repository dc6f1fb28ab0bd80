"""The compiled scan kernels against their plain-Python twins in tests/naive_scan.py.

Numba kernels are called from Python directly, on parametrised and random inputs: the Taylor
shift, the quadratic roots (against 50-digit arithmetic), the critical points of cubics and
quartics (against ``numpy.roots``), and the whole scan of random load groups over the
influence lines of random beams, with only concentrated loads (cubic pieces) and with
attached uniform loads, finite and unlimited (quartic pieces).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from numba import njit

import trundle
from conftest import SCAN_BEAMS, random_beam
from naive_scan import (
    Arrangement,
    PlainLine,
    critical_points,
    effects_at,
    plain_scan,
    quadratic_roots,
    random_sections,
    taylor_shift,
)
from trundle.scan import LineBatch, TermGroup, group_response, kernels, scan_group

# --- helpers -------------------------------------------------------------------------------------

# The kernel's helpers are compiled without a Python entry point (cheaper to compile on a first
# run; see kernels.HELPER_OPTIONS): the tests call them through these compiled shims.


@njit
def _quadratic_roots(a, b, c, out):
    return kernels._quadratic_roots(a, b, c, out)


@njit
def _critical_points(poly, degree, width, out, scratch):
    return kernels._critical_points(poly, degree, width, out, scratch)


@njit
def _piece_polynomial(poly, constant, piece, kind, weight, offset, n_terms, xi, knots, coef,
                      running, m, end_value, work):
    kernels._piece_polynomial(poly, constant, piece, kind, weight, offset, n_terms, xi, knots,
                              coef, running, m, end_value, work)


def _close_sets(found: list[float], expected: list[float], rel: float) -> bool:
    """Every root of each list lies within rel·max(1, |root|) of a root of the other."""
    def near(a: float, pool: list[float]) -> bool:
        return any(abs(a - b) <= rel * max(1.0, abs(b)) for b in pool)

    return all(near(a, expected) for a in found) and all(near(b, found) for b in expected)


def _run_kernel(parallel: bool, batch: LineBatch, group: TermGroup,
                lines: np.ndarray | None = None, offsets: np.ndarray | None = None,
                prune: bool = False) -> np.ndarray:
    """Call the compiled kernel directly: one row per line (all lines by default), the
    group's offsets shared by every row unless ``offsets`` gives them per row; the parallel
    kernel with the rows cut into three uneven slices."""
    weights, own_offsets, kinds, constant = group.terms()
    degree = 4 if (kinds == kernels.KIND_RUNNING_INTEGRAL).any() else 3
    lines = np.arange(batch.n_lines) if lines is None else lines
    offsets = own_offsets[None, :] if offsets is None else offsets
    args = (batch.line_knots, batch.n_pieces, batch.line_coef, batch.line_running,
            batch.running_end, batch.head, batch.tail, batch.peak, weights, kinds,
            np.ascontiguousarray(offsets, dtype=float), np.ascontiguousarray(lines),
            float(constant), degree, group.confined, prune)
    own = (batch.own_knot, batch.own_value, batch.end_live)
    if not parallel:
        return kernels.scan_rows_serial(*args, *own)
    n = len(lines)
    bounds = np.array([0, n // 5, n // 2, n], dtype=np.int64)
    return kernels.scan_rows_parallel(*args, bounds, *own)


def _own_line(batch: LineBatch, j: int, effect: trundle.Effect | None = None) -> PlainLine:
    """Line j of the batch as its plain twin, on its own knots."""
    m = batch.n_pieces[j]
    return PlainLine.from_ppoly(batch.line_knots[j, :m + 1], batch.line_coef[j, :m].T,
                                effect)


def _random_group(rng: np.random.Generator, length: float, uniform: str
                  ) -> tuple[TermGroup, Arrangement]:
    n = int(rng.integers(1, 5))
    P = np.round(rng.uniform(0.5, 3.0, n), 3)
    u = np.concatenate([[0.0], np.cumsum(np.round(rng.uniform(0.05, 0.35, n - 1) * length, 3))])
    parts: list[tuple[float, float, float]] = []
    if uniform != "none":
        w = float(np.round(rng.uniform(0.1, 1.0), 3))
        gap = float(np.round(rng.uniform(0.0, 0.2) * length, 3))
        reach = math.inf if uniform == "unlimited" else float(
            np.round(rng.uniform(0.1, 0.8) * length, 3))
        if rng.random() < 0.5:  # ahead of the first axle
            parts.append((-gap - reach, -gap, w))
        else:  # behind the last axle
            parts.append((u[-1] + gap, u[-1] + gap + reach, w))
        if uniform == "both":
            parts.append((-gap - 0.3 * length, -gap, 0.5 * w))
    group = TermGroup(tuple(u.tolist()), tuple(P.tolist()), tuple(parts))
    return group, Arrangement(tuple(zip(u.tolist(), P.tolist(), strict=True)), tuple(parts))


# --- the helpers of the kernel -------------------------------------------------------------------


@pytest.mark.parametrize("n_coef", [4, 5])
@pytest.mark.parametrize("seed", range(6))
def test_piece_polynomial_is_the_taylor_shift(n_coef: int, seed: int) -> None:
    # one term on one piece: the piece's polynomial read from ξ is its own polynomial
    # shifted by s0 = ξ − offset − knot (a cubic of IL for a concentrated load, n_coef 4; a
    # quartic of ∫IL for an end of a uniform load, n_coef 5), weighted, plus the constant
    rng = np.random.default_rng(seed)
    coef_high_first = rng.normal(size=n_coef) * 10.0 ** rng.uniform(-3, 3, n_coef)
    s0 = float(rng.uniform(-5.0, 5.0))
    weight = float(rng.normal())
    constant = float(rng.normal())
    knots = np.array([0.0, 1.0])
    coef = np.zeros((1, 4))
    running = np.zeros((1, 5))
    (coef if n_coef == 4 else running)[0] = coef_high_first
    kind = np.array([kernels.KIND_POINT if n_coef == 4 else kernels.KIND_RUNNING_INTEGRAL])
    poly = np.full(5, np.nan)
    _piece_polynomial(poly, constant, np.array([0]), kind, np.array([weight]), np.array([0.0]), 1,
                      s0, knots, coef, running, 1, 0.0, np.empty(5))
    expected = np.zeros(5)
    expected[:n_coef] = weight * np.array(taylor_shift(list(coef_high_first), s0))
    expected[0] += constant
    scale = np.abs(weight) * np.abs(coef_high_first).max() * max(1.0, abs(s0)) ** n_coef
    np.testing.assert_allclose(poly, expected, rtol=0, atol=1e-13 * scale + 1e-15)
    # and the shifted polynomial is the original one read further along
    for t in rng.uniform(-2.0, 2.0, 4):
        value = sum(c * t**i for i, c in enumerate(poly)) - constant
        direct = weight * np.polyval(coef_high_first, t + s0)
        assert value == pytest.approx(direct, rel=1e-10, abs=1e-12 * scale)


QUADRATICS = [
    (1.0, -3.0, 2.0),  # 1, 2
    (2.0, 0.0, -8.0),  # ±2
    (1.0, 2.0, 1.0),  # double root −1
    (1.0, 0.0, 0.0),  # double root 0
    (1.0, 0.0, 1.0),  # none
    (0.0, 2.0, -3.0),  # linear: 1.5
    (0.0, 0.0, 1.0),  # no equation
    (1.0, 1e8, 1.0),  # cancellation: a tiny root −1e−8 next to −1e8
    (1e-9, 1.0, -1.0),  # nearly linear: root near 1 and one near −1e9
    (-3.0, 5.0, 0.0),  # a root exactly at 0
]


@pytest.mark.parametrize("abc", QUADRATICS)
def test_quadratic_roots_special_cases(abc: tuple[float, float, float]) -> None:
    out = np.empty(2)
    m = _quadratic_roots(*abc, out)
    assert _close_sets(list(out[:m]), quadratic_roots(*abc), rel=1e-13)


@pytest.mark.parametrize("seed", range(5))
def test_quadratic_roots_random(seed: int) -> None:
    rng = np.random.default_rng(seed)
    out = np.empty(2)
    for _ in range(200):
        a, b, c = rng.normal(size=3) * 10.0 ** rng.uniform(-4, 4, 3)
        m = _quadratic_roots(a, b, c, out)
        assert _close_sets(list(out[:m]), quadratic_roots(a, b, c), rel=1e-12), (a, b, c)


def _extremes_on(poly: np.ndarray, width: float, points: list[float]) -> tuple[float, float]:
    values = [np.polyval(poly[::-1], t) for t in [0.0, width, *points]]
    return max(values), min(values)


@pytest.mark.parametrize("degree", [3, 4])
@pytest.mark.parametrize("seed", range(6))
def test_critical_points_match_numpy_roots(degree: int, seed: int) -> None:
    rng = np.random.default_rng(seed)
    out, scratch = np.empty(3), np.empty(6)
    for _ in range(150):
        width = float(rng.uniform(0.5, 5.0))
        poly = np.zeros(5)
        # roots of the derivative placed at random in and around the interval
        roots = rng.uniform(-0.3 * width, 1.3 * width, degree - 1)
        derivative = np.poly(roots) * rng.choice([-1.0, 1.0]) * 10.0 ** rng.uniform(-2, 2)
        poly[1:degree + 1] = (derivative[::-1] / np.arange(1, degree + 1))
        poly[0] = rng.normal()
        n = _critical_points(poly, degree, width, out, scratch)
        found = sorted(out[:n])
        expected = critical_points(list(poly[:degree + 1]), width)
        # a root within rounding of an interval end may fall on either side of it
        clear = [r for r in expected if 1e-9 * width < r < width - 1e-9 * width]
        found_clear = [r for r in found if 1e-9 * width < r < width - 1e-9 * width]
        # two derivative roots closer than this are a touching point, not two extremes
        separated = len(roots) < 2 or np.min(np.diff(np.sort(roots))) > 1e-3 * width
        if separated:
            assert _close_sets(found_clear, clear, rel=1e-7), (poly, width)
        high, low = _extremes_on(poly, width, found)
        high_ref, low_ref = _extremes_on(poly, width, expected)
        size = max(abs(high_ref), abs(low_ref), 1e-300)
        assert high == pytest.approx(high_ref, abs=1e-12 * size)
        assert low == pytest.approx(low_ref, abs=1e-12 * size)


# --- the whole scan -----------------------------------------------------------------------------


def _lines_of_random_beam(seed: int):
    rng = np.random.default_rng(seed)
    beam = random_beam(rng, **SCAN_BEAMS)
    effects = effects_at(beam, random_sections(rng, beam, 2))
    lines = beam.influence_set(effects)
    return rng, beam, lines


@pytest.mark.parametrize("uniform", ["none", "finite", "unlimited", "both"])
@pytest.mark.parametrize("seed", range(4))
def test_kernels_match_plain_scan(seed: int, uniform: str) -> None:
    rng, beam, lines = _lines_of_random_beam(seed)
    batch = LineBatch.from_set(lines)
    group, arrangement = _random_group(rng, beam.length, uniform)
    serial = _run_kernel(False, batch, group)
    parallel = _run_kernel(True, batch, group)
    engine = scan_group(batch, group)
    np.testing.assert_array_equal(serial, parallel)
    np.testing.assert_array_equal(serial, engine)
    plain_lines = [PlainLine.from_ppoly(lines.knots, lines.coefficients[:, :, j],
                                        lines.effects[j]) for j in range(len(lines))]
    expected = np.array([plain_scan(p, arrangement) for p in plain_lines])
    kinds = np.array([e.kind for e in lines.effects])
    for j, effect in enumerate(lines.effects):
        same = kinds == effect.kind
        scale = max(np.abs(expected[same][:, [0, 3]]).max(), 1e-300)
        for col in (0, 3):
            assert serial[j, col] == pytest.approx(expected[j, col], abs=1e-10 * scale), (
                effect, col)
            xi, side = serial[j, col + 1], serial[j, col + 2]
            if np.isnan(xi):  # the empty beam governs
                assert abs(expected[j, col]) <= 1e-10 * scale
                continue
            # the reported position reproduces the reported value; positions within
            # rounding of it (1e-12 of the length) are the same position: an axle that the
            # scan puts exactly on a section can read 1 ulp beside it, across the jump
            shift = 1e-12 * beam.length
            again = [plain_lines[j].response(arrangement, xi + d, side)
                     for d in (0.0, -shift, shift)]
            assert min(abs(a - serial[j, col]) for a in again) <= 1e-10 * scale, (
                effect, col, again, serial[j, col])


@pytest.mark.parametrize("seed", range(3))
def test_scan_of_a_single_unit_load_is_the_line_extreme(seed: int) -> None:
    """One unit load: the scan's extremes are the line's own largest and smallest ordinates
    (``InfluenceLine.max``/``min``, found from the derivative's roots by scipy)."""
    _, _, lines = _lines_of_random_beam(seed)
    batch = LineBatch.from_set(lines)
    r = _run_kernel(False, batch, TermGroup((0.0,), (1.0,)))
    for j in range(len(lines)):
        line = lines.line(j)
        scale = max(abs(line.max()[0]), abs(line.min()[0]), 1e-300)
        assert r[j, 0] == pytest.approx(max(line.max()[0], 0.0), abs=1e-12 * scale)
        assert r[j, 3] == pytest.approx(min(line.min()[0], 0.0), abs=1e-12 * scale)


@pytest.mark.parametrize("seed", range(3))
def test_rows_with_their_own_arrangements_match_plain_scan(seed: int) -> None:
    """Rows may scan different lines with different offsets (a searched spacing): every row
    equals the plain scan of its own line under its own arrangement."""
    rng, beam, lines = _lines_of_random_beam(seed + 10)
    batch = LineBatch.from_set(lines)
    group, arrangement = _random_group(rng, beam.length, "finite")
    weights, offsets, kinds, _ = group.terms()
    n_rows = 3 * len(lines)
    row_lines = rng.integers(0, len(lines), n_rows)
    stretch = rng.uniform(0.5, 1.5, n_rows)  # every offset scaled per row
    row_offsets = stretch[:, None] * offsets[None, :]
    serial = _run_kernel(False, batch, group, row_lines, row_offsets)
    parallel = _run_kernel(True, batch, group, row_lines, row_offsets)
    np.testing.assert_array_equal(serial, parallel)
    expected = np.empty((n_rows, 6))
    for r in range(n_rows):
        f = stretch[r]
        own = Arrangement(tuple((f * u, P) for u, P in arrangement.points),
                          tuple((f * u0, f * u1, w) for u0, u1, w in arrangement.uniform))
        line = PlainLine.from_ppoly(lines.knots, lines.coefficients[:, :, row_lines[r]],
                                    lines.effects[row_lines[r]])
        expected[r] = plain_scan(line, own)
    kinds = np.array([lines.effects[j].kind for j in row_lines])
    for r in range(n_rows):
        scale = max(np.abs(expected[kinds == kinds[r]][:, [0, 3]]).max(), 1e-300)
        assert serial[r, 0] == pytest.approx(expected[r, 0], abs=1e-10 * scale)
        assert serial[r, 3] == pytest.approx(expected[r, 3], abs=1e-10 * scale)


@pytest.mark.parametrize("seed", range(3))
def test_own_breaks_equal_every_knot(seed: int) -> None:
    # A line is one cubic between structural nodes and its own section; the batch stores it
    # on those breaks only. Reference: the same lines on every section's knot (the shared
    # layout of influence_set), scanned by the same kernel, which the plain twin above checks.
    rng, beam, lines = _lines_of_random_beam(seed)
    own = LineBatch.from_set(lines)
    n, knots = len(lines), lines.knots
    every = LineBatch.from_arrays(np.ascontiguousarray(np.broadcast_to(knots, (n, len(knots)))),
                                  np.full(n, len(knots) - 1), lines.coefficients.transpose(2, 1, 0),
                                  knots, np.arange(n))
    assert own.line_knots.shape[1] < len(knots) or len(knots) <= 3
    group, _ = _random_group(rng, beam.length, "both")
    a, b = _run_kernel(False, own, group), _run_kernel(False, every, group)
    size = np.abs(b[:, [0, 3]]).max()
    np.testing.assert_allclose(a[:, [0, 3]], b[:, [0, 3]], rtol=0, atol=1e-12 * size)


def _long_beam_lines(rng: np.random.Generator, spans: int):
    lengths = np.round(rng.uniform(8.0, 30.0, spans), 1)
    beam = trundle.Beam(list(lengths))
    ends = beam.support_positions
    sections = np.unique(np.concatenate([np.linspace(a, b, 6)
                                         for a, b in zip(ends[:-1], ends[1:], strict=True)]))
    return beam, beam.influence_set(effects_at(beam, list(sections)))


@pytest.mark.parametrize("seed", range(4))
def test_pruned_sweep_matches_plain_scan(seed: int) -> None:
    """Sweeping from a line's largest piece outwards and stopping where the bound on |IL|
    rules the rest out gives the extremes of the full sweep (twin: plain_scan)."""
    rng = np.random.default_rng(seed)
    beam, lines = _long_beam_lines(rng, int(rng.integers(6, 12)))
    batch = LineBatch.from_set(lines)
    n_axles = int(rng.integers(1, 6))
    u = np.concatenate([[0.0], np.cumsum(np.round(rng.uniform(1.0, 9.0, n_axles - 1), 2))])
    P = np.round(rng.uniform(20.0, 150.0, n_axles), 1)
    group = TermGroup(tuple(u.tolist()), tuple(P.tolist()))
    arrangement = Arrangement(tuple(zip(u.tolist(), P.tolist(), strict=True)), ())
    pruned = _run_kernel(False, batch, group, prune=True)
    np.testing.assert_array_equal(pruned, _run_kernel(True, batch, group, prune=True))
    full = _run_kernel(False, batch, group)
    kinds = np.array([e.kind for e in lines.effects])
    for j in rng.choice(len(lines), 12, replace=False):
        expected = plain_scan(_own_line(batch, j, lines.effects[j]), arrangement)
        scale = max(np.abs(full[kinds == kinds[j]][:, [0, 3]]).max(), 1e-300)
        for col in (0, 3):
            assert pruned[j, col] == pytest.approx(expected[col], abs=1e-10 * scale)
            assert full[j, col] == pytest.approx(expected[col], abs=1e-10 * scale)
            if not np.isnan(pruned[j, col + 1]):  # the position reproduces the value
                # (read by the engine, which puts a load missing a knot by rounding on it)
                again = group_response(batch, group, pruned[j, col + 1],
                                       pruned[j, col + 2])[j]
                assert again == pytest.approx(pruned[j, col], abs=1e-10 * scale)
    size = np.abs(full[:, [0, 3]]).max()
    np.testing.assert_allclose(pruned[:, [0, 3]], full[:, [0, 3]], rtol=0, atol=1e-12 * size)


@pytest.mark.parametrize("seed", range(3))
def test_evaluate_lines_matches_plain_lines(seed: int) -> None:
    rng, beam, lines = _lines_of_random_beam(seed)
    batch = LineBatch.from_set(lines)
    x = np.concatenate([rng.uniform(0.0, beam.length, 20), lines.knots])
    for side in ("left", "right"):
        found = batch.ordinates(x, side)
        for j in range(batch.n_lines):
            twin = _own_line(batch, j)
            expected = [twin.ordinate(float(v), side) for v in x]
            np.testing.assert_allclose(found[:, j], expected, rtol=1e-12,
                                       atol=1e-12 * max(1.0, np.abs(expected).max()))
    running = batch.running_at(x)
    for j in range(batch.n_lines):
        twin = _own_line(batch, j)
        expected = [twin.running(float(v)) for v in x]
        np.testing.assert_allclose(running[:, j], expected, rtol=1e-12,
                                   atol=1e-12 * max(1.0, np.abs(expected).max()))


