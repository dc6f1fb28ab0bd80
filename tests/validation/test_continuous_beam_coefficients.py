"""Coefficients of continuous beams of equal spans under patterned uniform load: through the
envelope (uniform load placed where it is adverse, or span by span) and through the
design-envelope patterns (:func:`trundle.analysis.patterns.patterned_uniform`, reported with the
pattern that governs).

Sources (from memory):
- AISC Steel Construction Manual, "Beam Diagrams and Formulas", continuous beam, two equal
  spans, uniform load on one span: R1 = 7/16·wL, R3 = −1/16·wL, M_max = 49/512·wL²
  ≈ 0.0957·wL² at 7/16·L = 0.4375·L; both spans loaded: support moment −wL²/8, interior
  reaction 5/4·wL.
- Common handbook coefficient tables for continuous beams of three equal spans (e.g. the
  coefficient tables of steel and concrete design handbooks): interior support moment
  −0.1167·wL² with spans 1 and 2 loaded, largest positive moment in an end span 0.101·wL²
  with spans 1 and 3 loaded, largest interior reaction 1.20·wL with spans 1 and 2 loaded.
The published coefficients are rounded (checked with rel=5e-3 or 1e-3); each is also computed
exactly (the fractions, or ``beam.static`` with the stated pattern, rel 1e-9), and trundle must
match that.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.optimize import brentq

import trundle
from trundle.analysis.patterns import WHOLE_SPANS, patterned_uniform
from trundle.core.statics import DistributedLoad, PointLoad

L = 10.0
W = 1.5


def _static(beam: trundle.Beam, spans: list[int], extra: list | None = None):
    ends = beam.support_positions
    loads = [DistributedLoad(ends[i], ends[i + 1], W) for i in spans]
    return beam.static(loads + (extra or []))


def _envelope(beam: trundle.Beam, placement: str, sections: list[float], point_load: float = 0.0
              ) -> trundle.Envelope:
    return trundle.envelope(beam, [trundle.UniformLoad(W, placement=placement,
                                                       point_load=point_load)],
                            sections=sections, effects=("moment", "shear", "reaction"))


# --- two equal spans ---------------------------------------------------------------------------


@pytest.mark.parametrize("placement", ["anywhere", "spans"])
def test_two_spans_handbook_coefficients(placement: str) -> None:
    beam = trundle.Beam(spans=[L, L])
    x_pos = 0.4375 * L
    env = _envelope(beam, placement, [x_pos, L])
    one_span = _static(beam, [0])
    both = _static(beam, [0, 1])
    # largest positive moment: one span loaded, at 0.4375 L
    m_pos = float(one_span.moment([x_pos])[0])
    assert m_pos == pytest.approx(49 / 512 * W * L**2, rel=1e-9)
    assert m_pos / (W * L**2) == pytest.approx(0.0957, rel=1e-3)
    assert env.max("moment")[0] == pytest.approx(m_pos, rel=1e-9)
    # support moment: both spans loaded
    m_support = float(both.moment([L])[0])
    assert m_support / (W * L**2) == pytest.approx(-0.125, rel=1e-9)
    assert env.min("moment")[1] == pytest.approx(m_support, rel=1e-9)
    # reactions: end 7/16 wL (one span), interior 5/4 wL (both), end uplift −1/16 wL
    assert one_span.reactions[0] / (W * L) == pytest.approx(0.4375, rel=1e-9)
    assert both.reactions[1] / (W * L) == pytest.approx(1.25, rel=1e-9)
    assert one_span.reactions[2] / (W * L) == pytest.approx(-0.0625, rel=1e-9)
    np.testing.assert_allclose(env.max("reaction"), [one_span.reactions[0], both.reactions[1],
                                                     one_span.reactions[0]], rtol=1e-9)
    np.testing.assert_allclose(env.min("reaction"), [one_span.reactions[2], 0.0,
                                                     one_span.reactions[2]], atol=1e-9 * W * L)


def test_two_spans_absolute_positive_moment_at_0_4375_span() -> None:
    beam = trundle.Beam(spans=[L, L])
    env = trundle.envelope(beam, [trundle.UniformLoad(W)], effects=("moment",))
    (a,) = [a for a in env.absolute("moment") if a.which == "max" and a.span == 0]
    assert a.value == pytest.approx(49 / 512 * W * L**2, rel=1e-9)
    assert a.x == pytest.approx(0.4375 * L, abs=1e-4 * L)


# --- three equal spans -------------------------------------------------------------------------


@pytest.mark.parametrize("placement", ["anywhere", "spans"])
def test_three_spans_handbook_coefficients(placement: str) -> None:
    beam = trundle.Beam(spans=[L, L, L])
    x_end = 0.45 * L  # where the end-span moment under spans 1 and 3 peaks (R1 = 0.45 wL)
    env = _envelope(beam, placement, [x_end, L])
    spans_12 = _static(beam, [0, 1])
    spans_13 = _static(beam, [0, 2])
    m_support = float(spans_12.moment([L])[0])
    assert m_support / (W * L**2) == pytest.approx(-7 / 60, rel=1e-9)
    assert m_support / (W * L**2) == pytest.approx(-0.1167, rel=1e-3)
    assert env.min("moment")[1] == pytest.approx(m_support, rel=1e-9)
    m_end = float(spans_13.moment([x_end])[0])
    assert m_end / (W * L**2) == pytest.approx(0.10125, rel=1e-9)
    assert m_end / (W * L**2) == pytest.approx(0.101, rel=3e-3)
    assert env.max("moment")[0] == pytest.approx(m_end, rel=1e-9)
    r_interior = float(spans_12.reactions[1])
    assert r_interior / (W * L) == pytest.approx(1.20, rel=1e-3)
    assert env.max("reaction")[1] == pytest.approx(r_interior, rel=1e-9)


def test_three_spans_absolute_positive_moment_in_the_end_span() -> None:
    beam = trundle.Beam(spans=[L, L, L])
    env = trundle.envelope(beam, [trundle.UniformLoad(W, placement="spans")],
                           effects=("moment",))
    (a,) = [a for a in env.absolute("moment") if a.which == "max" and a.span == 0]
    assert a.value == pytest.approx(0.10125 * W * L**2, rel=1e-9)
    assert a.x == pytest.approx(0.45 * L, abs=1e-4 * L)


# --- where the line changes sign within a span ----------------------------------------------------


def _unit_effect(beam: trundle.Beam, kind: str, at: float, side: str = "right"):
    def value(x: float) -> float:
        res = beam.static([PointLoad(x, 1.0)])
        return float(res.moment([at])[0] if kind == "moment" else res.shear([at], side)[0])
    return value


def _stretches(beam: trundle.Beam, f, at: float, sign: float) -> list[tuple[float, float]]:
    """Where a unit load gives the effect the wanted sign: sampled away from the supports and
    the section, each sign change pinned down by brentq on the static solve."""
    marks = sorted({*beam.support_positions.tolist(), at})
    cuts: list[float] = []
    for a, b in zip(marks[:-1], marks[1:], strict=True):
        xs = np.linspace(a, b, 41)[1:-1]
        v = np.array([f(x) for x in xs])
        cuts.append(a)
        cuts += [brentq(f, xs[k], xs[k + 1], xtol=1e-13 * L)
                 for k in np.flatnonzero(np.sign(v[:-1]) * np.sign(v[1:]) < 0)]
    cuts.append(beam.length)
    return [(a, b) for a, b in zip(cuts[:-1], cuts[1:], strict=True)
            if sign * f(0.5 * (a + b)) > 0]


@pytest.mark.parametrize("kind, at", [("moment", 0.9 * L), ("shear", 0.3 * L)])
def test_anywhere_beats_whole_spans_where_the_line_changes_sign_in_a_span(kind: str,
                                                                          at: float) -> None:
    """Moment near the interior support and shear inside a span of two equal spans: their
    lines change sign within a span, so loading only the adverse stretches is worse than
    any choice of whole spans. Both are checked against static solves with the stretches
    found from unit-load static solves."""
    beam = trundle.Beam(spans=[L, L])
    anywhere = _envelope(beam, "anywhere", [at])
    spans = _envelope(beam, "spans", [at])
    f = _unit_effect(beam, kind, at)
    for which, sign in (("max", 1.0), ("min", -1.0)):
        loaded = [DistributedLoad(a, b, W) for a, b in _stretches(beam, f, at, sign)]
        res = beam.static(loaded)
        expected = float(res.moment([at])[0] if kind == "moment" else res.shear([at])[0])
        found = getattr(anywhere, which)(kind)[0]
        assert found == pytest.approx(expected, rel=1e-9)
        best_spans = []
        for pattern in ([0], [1], [0, 1]):
            r = _static(beam, pattern)
            best_spans.append(float(r.moment([at])[0] if kind == "moment"
                                    else r.shear([at])[0]))
        best = max([*best_spans, 0.0]) if which == "max" else min([*best_spans, 0.0])
        assert getattr(spans, which)(kind)[0] == pytest.approx(best, rel=1e-9, abs=1e-12)
        assert sign * found > sign * best + 1e-3 * abs(expected)


def test_point_load_adds_its_load_times_the_largest_ordinate() -> None:
    """Uniform load on span 1 and the concentrated load at the section (where the moment
    line peaks): the static solve of that pattern equals the envelope."""
    beam = trundle.Beam(spans=[L, L])
    P = 4.0
    x = 0.4375 * L
    env = _envelope(beam, "anywhere", [x], point_load=P)
    expected = float(_static(beam, [0], [PointLoad(x, P)]).moment([x])[0])
    assert env.max("moment")[0] == pytest.approx(expected, rel=1e-9)
    line = beam.influence("moment", at=x)
    assert env.max("moment")[0] == pytest.approx(49 / 512 * W * L**2 + P * line(x), rel=1e-9)


# --- the same coefficients through the design-envelope patterns ------------------------------


def test_two_equal_spans_by_whole_span_patterns() -> None:
    beam = trundle.Beam(spans=[L, L])
    result = patterned_uniform(beam, W, [7 / 16 * L, L], "spans", name="floor live load")
    assert result.rule == WHOLE_SPANS
    assert result.max("moment")[0] == pytest.approx(0.0957 * W * L**2, rel=5e-3)
    assert result.max("moment")[0] == pytest.approx(49 / 512 * W * L**2, rel=1e-9)
    assert result.governing["moment", "max"][0] == "span 1 loaded"
    assert result.min("moment")[1] == pytest.approx(-0.125 * W * L**2, rel=1e-9)
    assert result.governing["moment", "min"][1] == "spans 1, 2 loaded"
    assert result.max("reaction")[1] == pytest.approx(1.25 * W * L, rel=1e-9)


def test_three_equal_spans_by_whole_span_patterns() -> None:
    beam = trundle.Beam(spans=[L, L, L])
    end_span_x = 0.45 * L  # spans 1, 3 loaded: R_A = 0.45 wL, maximum at 0.45 L
    result = patterned_uniform(beam, W, [end_span_x, 1.5 * L, L], "spans")
    assert result.max("moment")[0] == pytest.approx(0.101 * W * L**2, rel=5e-3)
    assert result.max("moment")[0] == pytest.approx(0.10125 * W * L**2, rel=1e-9)
    assert result.governing["moment", "max"][0] == "spans 1, 3 loaded"
    assert result.max("moment")[1] == pytest.approx(0.075 * W * L**2, rel=1e-9)
    assert result.governing["moment", "max"][1] == "span 2 loaded"
    assert result.min("moment")[2] == pytest.approx(-0.117 * W * L**2, rel=5e-3)
    assert result.min("moment")[2] == pytest.approx(-7 / 60 * W * L**2, rel=1e-9)
    assert result.governing["moment", "min"][2] == "spans 1, 2 loaded"
    assert result.max("reaction")[1] == pytest.approx(1.20 * W * L, rel=5e-3)
    assert result.governing["reaction", "max"][1] == "spans 1, 2 loaded"


def test_patterns_wherever_adverse_are_at_least_the_span_pattern() -> None:
    beam = trundle.Beam(spans=[L, 1.3 * L, L])
    sections = beam.tenth_points()
    spans = patterned_uniform(beam, W, sections, "spans")
    adverse = patterned_uniform(beam, W, sections, "adverse")
    for family in ("moment", "shear_left", "shear_right", "reaction"):
        assert (adverse.max(family) >= spans.max(family) - 1e-9).all()
        assert (adverse.min(family) <= spans.min(family) + 1e-9).all()
    # and equal to the envelope's own placement "anywhere"
    env = trundle.envelope(beam, [trundle.UniformLoad(W)], sections=sections)
    assert adverse.max("moment") == pytest.approx(env.max("moment"), rel=1e-9, abs=1e-9)
