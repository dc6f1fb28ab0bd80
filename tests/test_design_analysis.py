"""Rules, permanent loads, deflection checks, verdicts and critical sections against closed
forms and static solves."""

from __future__ import annotations

import numpy as np
import pytest

import trundle
from trundle.analysis.case_envelopes import case_envelopes, design_case_envelope
from trundle.analysis.checks import (
    EXCEEDS,
    PASS,
    live_load_deflection_checks,
    utilisation_of,
    verdict,
)
from trundle.analysis.combinations import (
    BUILDING_1_2D_1_6L,
    BUILDING_1_4D,
    PERMANENT_ONLY,
    design_envelope,
)
from trundle.analysis.critical_sections import parse_from_supports, sections_from_supports
from trundle.analysis.patterns import patterned_uniform
from trundle.analysis.permanent import PermanentLoad, permanent_effects
from trundle.analysis.rules import applicability, contraflexure_points, hogging_region
from trundle.core.beam import ModelError
from trundle.core.statics import DistributedLoad, PointLoad, PointMoment
from trundle.loads.design_cases import Alternative, DesignCase, Rule


def test_contraflexure_of_three_equal_spans() -> None:
    """Uniform load on three equal spans: M_B = −wL²/10 (handbook coefficient tables, from
    memory); zeros at 0.8 L in the end spans and at L(0.5 ± √0.05) in the middle span."""
    L = 12.0
    beam = trundle.Beam(spans=[L, L, L])
    r = np.sqrt(0.05)
    expected = [0.8 * L, L + L * (0.5 - r), L + L * (0.5 + r), 3 * L - 0.8 * L]
    assert contraflexure_points(beam) == pytest.approx(expected, rel=1e-9)
    assert hogging_region(beam)[0] == pytest.approx((0.8 * L, L + L * (0.5 - r)), rel=1e-9)
    masks = applicability(Rule(("negative moment", "interior reactions"),
                               "between points of contraflexure"), beam, [6.0, 10.0, 18.0])
    assert masks["moment", "min"].tolist() == [False, True, False]
    assert not masks["moment", "max"].any()
    assert masks["reaction", "max"].tolist() == [False, True, True, False]
    assert not masks["shear_left", "min"].any()
    with pytest.raises(ModelError, match="negative shear"):
        Rule(("negative shear",))
    with pytest.raises(ModelError, match="region"):
        Rule(("shear",), region="near piers")


def test_a_case_excluded_everywhere_is_nan_and_never_governs() -> None:
    beam = trundle.Beam(spans=[10.0])
    only_hogging = DesignCase("hogging only", (Alternative(
        "lane", trundle.UniformLoad(1.0), rule=Rule(("negative moment",))),))
    result = design_case_envelope(beam, only_hogging, [5.0])
    assert np.isnan(result.max("moment")[0])
    assert result.excluded["moment", "max"][0] == "lane: only negative moment"
    assert result.min("moment")[0] == 0.0  # it applies, and the simple span never hogs
    perm = permanent_effects(beam, [PermanentLoad("slab", "D", "self weight", 2.0)], [5.0])
    design = design_envelope(BUILDING_1_2D_1_6L, perm, [result])
    assert design.governing["moment", "max"][0] == PERMANENT_ONLY
    assert design.max("moment")[0] == pytest.approx(1.2 * 2.0 * 100 / 8, rel=1e-12)


def test_permanent_loads_equal_static_solves() -> None:
    beam = trundle.Beam(spans=[6.0, 9.0], EI=5e4)
    loads = [PermanentLoad("self weight", "D", "self weight", 3.0),
             PermanentLoad("partition", "D", "partial uniform", 2.0, start=7.0, end=11.0),
             PermanentLoad("column", "D", "point", 40.0, at=10.5),
             PermanentLoad("bracket", "D", "couple", -15.0, at=3.0)]
    sections = beam.tenth_points()
    effects = permanent_effects(beam, loads, sections)
    statics = [[DistributedLoad(0.0, 15.0, 3.0)], [DistributedLoad(7.0, 11.0, 2.0)],
               [PointLoad(10.5, 40.0)], [PointMoment(3.0, -15.0)]]
    for e, ref in zip(effects, statics, strict=True):
        r = beam.static(ref)
        assert e.values["moment"] == pytest.approx(r.moment(sections), abs=1e-9)
        assert e.values["shear_left"] == pytest.approx(r.shear(sections, side="left"), abs=1e-9)
        assert e.values["reaction"] == pytest.approx(r.reactions, abs=1e-9)
    # simple span closed form (handbook): wL²/8 and a couple M0 at a: R = ±M0/L
    simple = trundle.Beam(spans=[8.0])
    (sw,) = permanent_effects(simple, [PermanentLoad("w", "D", "self weight", 2.0)], [4.0])
    assert sw.values["moment"][0] == pytest.approx(2.0 * 64 / 8, rel=1e-12)
    with pytest.raises(ModelError, match="names must differ"):
        permanent_effects(beam, [loads[0], loads[0]], sections)


def test_building_pair_on_a_patterned_floor_beam() -> None:
    """Two equal spans, D = 4, L = 3 kN/m: at the pier 1.4D gives −1.4·4·L²/8, 1.2D + 1.6L
    gives −(1.2·4 + 1.6·3)·L²/8 (both spans loaded); sagging at 7/16 L: D both spans,
    live on span 1 only (AISC beam diagrams, from memory)."""
    L = 6.0
    beam = trundle.Beam(spans=[L, L])
    x = 7 / 16 * L
    sections = [x, L]
    perm = permanent_effects(beam, [PermanentLoad("slab", "D", "self weight", 4.0)], sections)
    live = patterned_uniform(beam, 3.0, sections, "spans", name="floor live load")
    cases = case_envelopes(beam, [live], sections)
    a = design_envelope(BUILDING_1_4D, perm, cases)
    b = design_envelope(BUILDING_1_2D_1_6L, perm, cases)
    assert a.min("moment")[1] == pytest.approx(-1.4 * 4 * L**2 / 8, rel=1e-9)
    assert b.min("moment")[1] == pytest.approx(-(1.2 * 4 + 1.6 * 3) * L**2 / 8, rel=1e-9)
    dead = 4.0 * (3 / 8 * L * x - x**2 / 2)
    assert b.max("moment")[0] == pytest.approx(1.2 * dead + 1.6 * 3.0 * 49 / 512 * L**2,
                                               rel=1e-9)
    assert b.governing["moment", "max"][0] == "floor live load"
    assert live.governing["moment", "max"][0] == "span 1 loaded"


def test_verdict_and_deflection_limit() -> None:
    assert utilisation_of(1.0, 2.0) == 0.5 and verdict(0.5) == PASS
    assert utilisation_of(-2.5, 2.0) == 1.25 and verdict(1.25) == EXCEEDS
    assert verdict(utilisation_of(2.0, 2.0)) == PASS
    assert verdict(utilisation_of(float("nan"), 2.0)) == EXCEEDS
    assert verdict(utilisation_of(1.0, 0.0)) == EXCEEDS
    # simple span, uniform w: 5wL⁴/(384EI) at midspan (handbook)
    L, EI, w = 20.0, 2e6, 9.0
    beam = trundle.Beam(spans=[L], EI=EI)
    (check,) = live_load_deflection_checks(beam, [trundle.UniformLoad(w, name="lane")], 800)
    expected = 5 * w * L**4 / (384 * EI)
    assert check.value == pytest.approx(expected, rel=1e-9)
    assert check.x == pytest.approx(L / 2, rel=1e-6)
    assert check.limit == pytest.approx(L / 800)
    assert check.utilisation == pytest.approx(expected / (L / 800), rel=1e-9)
    assert check.verdict == (PASS if expected <= L / 800 else EXCEEDS)
    (strict,) = live_load_deflection_checks(beam, [trundle.UniformLoad(w, name="lane")],
                                            2.0 * L / expected)
    assert strict.verdict == EXCEEDS and strict.utilisation == pytest.approx(2.0)
    with pytest.raises(ModelError, match="ratio"):
        live_load_deflection_checks(beam, [trundle.UniformLoad(w)], -800)


def test_critical_shear_sections() -> None:
    beam = trundle.Beam(spans=[5.0, 7.0, 5.0])
    d = parse_from_supports("d from supports", depth=0.6)
    assert d == 0.6
    assert parse_from_supports("2d from supports", depth=0.6) == pytest.approx(1.2)
    assert parse_from_supports("0.9 from supports") == 0.9
    assert parse_from_supports("tenth points") is None
    with pytest.raises(ModelError, match="effective depth"):
        parse_from_supports("d from supports")
    x = sections_from_supports(beam, 0.6, face_offset=0.15)
    assert x == pytest.approx([0.75, 4.25, 5.75, 11.25, 12.75, 16.25])
    # reported like any section: the shear envelope there equals the envelope's own
    env = trundle.envelope(beam, [trundle.UniformLoad(2.0)], sections=x)
    live = patterned_uniform(beam, 2.0, x, "adverse")
    assert live.max("shear_right") == pytest.approx(env.max("shear", side="right"), rel=1e-9)
