"""Rainflow counting of the moment history of one crane passage.

Source: ASTM E1049-85 (reapproved), "Standard Practices for Cycle Counting in Fatigue
Analysis", §5.4.4 rainflow counting and its worked example (from memory): the load history
−2, 1, −3, 5, −1, 3, −4, 4, −2 counts range 3 → 0.5, 4 → 1.5, 6 → 0.5, 8 → 1.0, 9 → 0.5
cycles. The same example is the documented example of the `rainflow` package. The three-point
procedure of §5.4.4 is written out below as an independent twin of the library.

Crane passages (common practice, no source; the histories derived by hand from influence
lines): on a simple span a section between a wheelbase from either end sees one full cycle per
passage, its range the maximum moment; nearer the end the first wheel makes a small extra
cycle. On a continuous runway the moment at a section near the interior support reverses
sign during a passage: more than one cycle, the largest range is max − min of the envelope.

Every crane and runway is invented. Forces in kN, lengths in m.
"""

from __future__ import annotations

from collections import defaultdict

import numpy as np
import pytest
import rainflow

import trundle
from conftest import make_crane
from trundle.core.statics import PointLoad
from trundle.loads.cranes import Crane
from trundle.scan.engine import LineBatch
from trundle.scan.passages import passage_history
from trundle.workflows.crane_runway import RunwayResult, RunwaySpec, analyse_runway

ASTM_HISTORY = [-2.0, 1.0, -3.0, 5.0, -1.0, 3.0, -4.0, 4.0, -2.0]
ASTM_COUNTS = {3.0: 0.5, 4.0: 1.5, 6.0: 0.5, 8.0: 1.0, 9.0: 0.5}


def _reversals(series: list[float]) -> list[float]:
    """Peaks and valleys, the first and last points kept (ASTM E1049 §3.2.5 / §5.4.1)."""
    points: list[float] = []
    for value in series:
        if points and value == points[-1]:
            continue
        if len(points) >= 2 and (points[-1] - points[-2]) * (value - points[-1]) > 0:
            points[-1] = value  # still rising (or falling): not a reversal
        else:
            points.append(value)
    return points


def astm_rainflow(series: list[float]) -> dict[float, float]:
    """ASTM E1049-85 §5.4.4, literally: X the most recent range, Y the previous one."""
    counts: dict[float, float] = defaultdict(float)
    stack: list[float] = []
    for point in _reversals(list(series)):
        stack.append(point)
        while len(stack) >= 3:
            x_range = abs(stack[-1] - stack[-2])
            y_range = abs(stack[-2] - stack[-3])
            if x_range < y_range:
                break
            if len(stack) == 3:  # Y contains the starting point: half a cycle, drop S
                counts[y_range] += 0.5
                stack.pop(0)
            else:  # a full cycle: discard the peak and valley of Y
                counts[y_range] += 1.0
                del stack[-3:-1]
    for a, b in zip(stack[:-1], stack[1:], strict=True):  # residue: half cycles
        counts[abs(b - a)] += 0.5
    return dict(counts)


def _as_dict(pairs) -> dict[float, float]:
    out: dict[float, float] = defaultdict(float)
    for r, n in pairs:
        out[float(r)] += float(n)
    return dict(out)


def _assert_same_counts(found: dict[float, float], expected: dict[float, float],
                        rel: float) -> None:
    f, e = sorted(found.items()), sorted(expected.items())
    assert len(f) == len(e), (f, e)
    for (rf, nf), (re_, ne) in zip(f, e, strict=True):
        assert rf == pytest.approx(re_, rel=rel, abs=1e-9)
        assert nf == ne


def test_astm_worked_example() -> None:
    # Source: ASTM E1049-85, rainflow counting example (from memory)
    assert astm_rainflow(ASTM_HISTORY) == ASTM_COUNTS
    assert _as_dict(rainflow.count_cycles(ASTM_HISTORY)) == ASTM_COUNTS
    # 5 distinct ranges, 4 cycles in all
    assert sum(ASTM_COUNTS.values()) == 4.0


@pytest.mark.parametrize("seed", range(6))
def test_library_matches_the_three_point_twin(seed: int) -> None:
    rng = np.random.default_rng(seed)
    series = list(np.round(rng.normal(size=60).cumsum(), 6))
    _assert_same_counts(_as_dict(rainflow.count_cycles(series)), astm_rainflow(series),
                        rel=1e-12)


# ---------------------------------------------------------------- one crane, simple span

L, A = 12.0, 3.6


def _crane() -> Crane:
    """Cab crane, maximum wheel load (150 + 250·19/20)/2 = 193.75 kN, wheels 3.6 m apart."""
    return make_crane("shop crane", wheel_spacings=(A,))


P = 193.75


@pytest.fixture(scope="module")
def simple_span() -> RunwayResult:
    beam = trundle.Beam(spans=[L], EI=2.0e5)
    return analyse_runway(beam, RunwaySpec(cranes=(_crane(),)),
                          sections=np.array([1.2, 3.6, 4.8, 6.0, 8.4]))


def test_one_cycle_per_passage_between_a_wheelbase_from_the_ends(simple_span) -> None:
    # Derived by hand: for a ≤ x ≤ L − a the moment at x rises while the wheels come on and
    # falls while they leave: 0 → M_max → 0, one full cycle (two halves of the same range).
    # Midspan: one wheel there, the other a further on: M = P(L/4 + L/4 − a/2) = P(L − a)/2.
    by_x = {round(f.x, 9): f for f in simple_span.fatigue}
    mid = by_x[6.0]
    assert mid.moment_range == pytest.approx(P * (L - A) / 2, rel=1e-12)  # 813.75, no impact
    assert len(mid.cycles) == 1
    (rng, count), = mid.cycles
    assert count == 1.0 and mid.cycles_per_passage == 1.0
    assert rng == pytest.approx(P * (L - A) / 2, rel=1e-9)
    # every section in that stretch: one cycle, range = the service maximum moment
    service_max = trundle.envelope(simple_span.beam, [_crane().vehicle("loaded")],
                                   sections=simple_span.sections, effects=("moment",))
    for f, m_max in zip(simple_span.fatigue, service_max.max("moment"), strict=True):
        assert f.moment_range == pytest.approx(m_max, rel=1e-12)
        if A <= f.x <= L - A:
            assert f.cycles_per_passage == 1.0
            assert f.cycles[0][0] == pytest.approx(m_max, rel=1e-9)


def test_two_cycles_near_the_end(simple_span) -> None:
    # Derived by hand for x < a (here x = 1.2, a = 3.6): the front wheel alone at x gives
    # M1 = P·x(L − x)/L; it runs on until the rear wheel enters (ξ = a): Mv = P·x(L − a)/L
    # (the moment then rises again since P(L − 2x)/L > 0); the rear wheel at x, the front
    # a beyond: M2 = P·x(2L − 2x − a)/L. History 0, M1, Mv, M2, 0: one small full cycle
    # M1 − Mv = P·x(a − x)/L = 46.5 and one large M2 = 348.75.
    x = 1.2
    (f,) = [f for f in simple_span.fatigue if abs(f.x - x) < 1e-9]
    small, large = P * x * (A - x) / L, P * x * (2 * L - 2 * x - A) / L
    assert (small, large) == pytest.approx((46.5, 348.75), rel=1e-12)
    counts = _as_dict(f.cycles)
    _assert_same_counts(counts, {small: 1.0, large: 1.0}, rel=1e-9)
    assert f.moment_range == pytest.approx(large, rel=1e-12)
    by_hand = astm_rainflow([0.0, P * x * (L - x) / L, P * x * (L - A) / L, large, 0.0])
    _assert_same_counts(by_hand, {small: 1.0, large: 1.0}, rel=1e-12)


# ---------------------------------------------------------------- two-span continuous runway

SPANS = [12.0, 12.0]
SECTIONS = np.array([6.0, 10.8, 12.0, 13.2])


@pytest.fixture(scope="module")
def two_spans() -> RunwayResult:
    beam = trundle.Beam(spans=SPANS, EI=2.0e5)
    return analyse_runway(beam, RunwaySpec(cranes=(_crane(),)), sections=SECTIONS)


def test_sign_reversal_near_the_interior_support(two_spans) -> None:
    # The moment line at 0.9 L of the first span is positive near the section and negative
    # elsewhere: the passage runs 0 → negative → positive → negative → 0.
    service = trundle.envelope(two_spans.beam, [_crane().vehicle("loaded")],
                               sections=SECTIONS, effects=("moment",))
    high, low = service.max("moment"), service.min("moment")
    for i, f in enumerate(two_spans.fatigue):
        assert f.moment_range == pytest.approx(high[i] - low[i], rel=1e-12)
        if f.cycles:
            # the largest rainflow range pairs the history's max and min
            assert max(r for r, _ in f.cycles) == pytest.approx(f.moment_range, rel=1e-6)
    near = two_spans.fatigue[1]
    assert near.x == pytest.approx(10.8)
    assert high[1] > 0.0 > low[1]
    assert near.moment_range > high[1]  # the range exceeds the largest moment
    assert near.cycles_per_passage > 1.0


def _static_history(beam: trundle.Beam, xis: np.ndarray, xs: np.ndarray) -> np.ndarray:
    """Moments at xs with the front wheel at each ξ: one beam.static per wheel."""
    out = np.zeros((xis.size, xs.size))
    for k, xi in enumerate(xis):
        for u in (0.0, A):
            if 0.0 <= xi - u <= beam.length:
                out[k] += beam.static([PointLoad(float(xi - u), P)]).moment(xs)
    return out


def test_cycles_of_the_passage_against_static_solves_and_the_twin(two_spans) -> None:
    beam = two_spans.beam
    batch = LineBatch.from_set(beam.influence_set(
        [trundle.Effect("moment", at=float(x)) for x in SECTIONS]))
    xis, history = passage_history(batch, _crane().vehicle("loaded").group())
    # the sampled history is the static response (checked on every 25th position)
    pick = np.arange(0, xis.size, 25)
    reference = _static_history(beam, xis[pick], SECTIONS)
    np.testing.assert_allclose(history[pick], reference, rtol=1e-9,
                               atol=1e-9 * np.abs(reference).max())
    # the counts reported are the twin's count of that history (empty runway at both ends)
    for i, f in enumerate(two_spans.fatigue):
        series = [0.0, *history[:, i], 0.0]
        expected = {r: n for r, n in astm_rainflow(series).items()
                    if r > 1e-12 * max(1.0, f.moment_range)}
        _assert_same_counts(_as_dict(f.cycles), expected, rel=1e-9)
