"""Patterned uniform live load on two and three equal spans, reported with its pattern.

Sources (from memory): AISC Steel Construction Manual, "Beam Diagrams and Formulas", continuous
beam of two equal spans: one span loaded M_max = 49/512·wL² ≈ +0.0957·wL² at 7/16·L, both
loaded M_B = −0.125·wL²; coefficient tables for three equal spans in steel and concrete design
handbooks (e.g. Reynolds & Steedman, Reinforced Concrete Designer's Handbook, continuous-beam
coefficients): end span +0.101·wL² with spans 1 and 3 loaded, middle span +0.075·wL² with span
2 loaded, interior support −0.117·wL² with spans 1 and 2 loaded, interior reaction 1.20·wL.
Published coefficients are rounded: checked with rel=5e-3; the exact fractions with rel=1e-9.
"""

from __future__ import annotations

import pytest

import trundle
from trundle.analysis.patterns import WHOLE_SPANS, patterned_uniform

L = 8.0
W = 2.5


def test_two_equal_spans() -> None:
    beam = trundle.Beam(spans=[L, L])
    result = patterned_uniform(beam, W, [7 / 16 * L, L], "spans", name="floor live load")
    assert result.rule == WHOLE_SPANS
    assert result.max("moment")[0] == pytest.approx(0.0957 * W * L**2, rel=5e-3)
    assert result.max("moment")[0] == pytest.approx(49 / 512 * W * L**2, rel=1e-9)
    assert result.governing["moment", "max"][0] == "span 1 loaded"
    assert result.min("moment")[1] == pytest.approx(-0.125 * W * L**2, rel=1e-9)
    assert result.governing["moment", "min"][1] == "spans 1, 2 loaded"
    assert result.max("reaction")[1] == pytest.approx(1.25 * W * L, rel=1e-9)


def test_three_equal_spans_worst_patterns() -> None:
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


def test_wherever_adverse_is_at_least_the_span_pattern() -> None:
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
