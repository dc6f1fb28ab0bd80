"""AASHTO LRFD Bridge Design Specifications: HL-93 on simple and continuous spans and the
Strength I combination.

Source: AASHTO LRFD Bridge Design Specifications (8th/9th ed.) — Art. 3.6.1.2 (design truck
8, 32, 32 kip at 14 ft with the rear spacing 14 to 30 ft, tandem, lane load 0.64 kip/ft),
Art. 3.6.1.3.1 (application; the two-truck rule: 90 % of two design trucks at least 50 ft
apart with 90 % of the lane load, for negative moment between points of contraflexure and
interior reactions), Art. 3.6.1.4.1 (fatigue truck), Table 3.6.2.1-1 (33 % dynamic
allowance), Tables 3.4.1-1 and 3.4.1-2 (Strength I: 1.25 DC + 1.50 DW + 1.75 (LL + IM), 0.90
DC and 0.65 DW where favourable) — all from memory. Published figures checked as ≈: the
tables of maximum live-load moments on simple spans published with it and with the earlier
Standard Specifications (Appendix A, HS20: 1,523.9 kip-ft on a 100 ft span). Every value is
recomputed by hand (statics, shown in each test) or by a brute force of static solves; the
beam formulas used by hand (two equal spans: pier moment line −a(L² − a²)/(4L²), moments
under uniform load) are those of test_handbook_beams.py (AISC "Beam Diagrams and Formulas",
from memory). Units: kip and ft.
"""

from __future__ import annotations

import numpy as np
import pytest

import trundle
from trundle.analysis.case_envelopes import design_case_envelope, load_case_envelope
from trundle.analysis.combinations import BRIDGE_STRENGTH_I, design_envelope
from trundle.analysis.permanent import PermanentLoad, permanent_effects
from trundle.analysis.rules import contraflexure_points, in_region
from trundle.core.statics import PointLoad
from trundle.io.loads import read_library_model, read_load_model_file
from trundle.loads import library
from trundle.loads.design_cases import for_beam

SPAN = 100.0
L = SPAN  # each span of the continuous beams


def test_design_lane_load_on_a_100_ft_span_is_800_kip_ft() -> None:
    lane = read_library_model("hl93-lane")
    beam = trundle.Beam(spans=[SPAN])
    env = trundle.envelope(beam, [lane.load], sections=[SPAN / 2], effects=("moment",))
    # w L² / 8 = 0.64 · 100² / 8 = 800 kip-ft (AASHTO LRFD 3.6.1.2.4, from memory)
    assert env.max("moment")[0] == pytest.approx(0.64 * SPAN**2 / 8, rel=1e-12)
    assert env.max("moment")[0] == pytest.approx(800.0, rel=1e-12)


def test_design_truck_absolute_maximum_on_a_100_ft_span() -> None:
    """Hand computation: axles 8, 32, 32 kip at 14 ft (the rear spacing at its shortest).
    Resultant 72 kip stands 14·(32 + 2·32)/72 = 18.667 ft behind the 8 kip axle, i.e. e =
    4.667 ft from the middle axle; the middle axle at x = (L − e)/2 = 47.667 ft. Left reaction
    = 72·(L − x − e)/L = 72·47.667/100 = 34.32 kip; M = 34.32·47.667 − 8·14 = 1,523.9 kip-ft."""
    truck = read_library_model("hl93-truck")
    case = trundle.LoadCase(truck.load, impact=0.0)  # the tables are without impact
    e = 14.0 * (32 + 2 * 32) / 72 - 14.0
    x = (SPAN - e) / 2
    hand = 72.0 * (SPAN - x - e) / SPAN * x - 8.0 * 14.0
    assert hand == pytest.approx(1523.9, abs=0.05)  # the published figure (from memory)
    beam = trundle.Beam(spans=[SPAN])
    env = trundle.envelope(beam, [case], sections=[x], effects=("moment",))
    assert env.max("moment")[0] == pytest.approx(hand, rel=1e-9)
    (absolute,) = [a for a in env.absolute("moment") if a.which == "max"]
    assert absolute.value == pytest.approx(hand, rel=1e-9)
    assert env.governing("moment", "max")[0].searched[0] == pytest.approx(14.0, abs=1e-6)


def test_hl93_case_at_midspan_of_a_100_ft_span() -> None:
    """Midspan: truck with the middle axle at midspan, 8 kip 14 ft away:
    R = (8·64 + 32·50 + 32·36)/100 = 32.64 kip, M = 32.64·50 − 8·14 = 1,520 kip-ft (a figure of
    the simple-span tables, from memory); tandem 25·25 + 25·23 = 1,200 kip-ft; lane 800.
    HL-93 = 1.33·1,520 + 800 = 2,821.6 kip-ft (truck + lane governs). The two-truck rule applies
    only between points of contraflexure, and a simple span has none: it is excluded."""
    beam = trundle.Beam(spans=[SPAN])
    hl93 = read_library_model("hl93").load
    result = design_case_envelope(beam, hl93, [SPAN / 2])
    assert result.max("moment")[0] == pytest.approx(1.33 * 1520.0 + 800.0, rel=1e-9)
    assert result.governing["moment", "max"][0] == "truck + lane"
    assert "90 % (two trucks + lane)" in result.excluded["moment", "max"][0]
    tandem = load_case_envelope(beam, read_library_model("hl93-tandem").load, [SPAN / 2])
    assert tandem.max("moment")[0] == pytest.approx(1200.0, rel=1e-12)


def test_hl93_fatigue_truck_fixed_rear_spacing() -> None:
    """Fatigue truck (Art. 3.6.1.4.1, from memory): 30 ft rear spacing; on a 100 ft span the
    end reaction with the 32 kip rear axle over the support is 32 + 32·70/100 + 8·56/100 =
    58.88 kip, times 1.15."""
    fatigue = read_load_model_file(library.path_of("hl93-fatigue"))
    beam = trundle.Beam(spans=[SPAN])
    env = trundle.envelope(beam, [trundle.LoadCase(fatigue.load, impact=fatigue.impact)],
                           sections=[SPAN / 2], effects=("reaction",))
    assert fatigue.impact == pytest.approx(0.15)
    assert np.max(env.max("reaction")) == pytest.approx(1.15 * 58.88, rel=1e-12)


def test_hl93_si_equivalents_convert_exactly() -> None:
    """The SI equivalents published beside the US values (from memory): 35/145/145 kN,
    4.3 m; tandem 110 kN at 1.2 m; lane 9.3 kN/m — rounded conversions of the US values."""
    from trundle.io.units import SYSTEMS

    truck = read_library_model("hl93-truck", SYSTEMS["SI"]).load
    assert truck.loads == pytest.approx((35.6, 142.3, 142.3), abs=0.05)
    assert truck.spacings[0] == pytest.approx(4.27, abs=0.01)
    assert read_library_model("hl93-tandem", SYSTEMS["SI"]).load.loads[0] == pytest.approx(111.2,
                                                                                     abs=0.05)
    assert read_library_model("hl93-lane", SYSTEMS["SI"]).load.w == pytest.approx(9.34, abs=0.01)


# --- the design truck by the classic rule (Art. 3.6.1.2.2) ----------------------------------

AXLES = [8.0, 32.0, 32.0]
SPACING = 14.0


def _classic_rule() -> tuple[float, float]:
    """(moment, section) from the rule: the middle axle is the heavy axle nearest the
    resultant; the 8 kip axle stands on the other side of the section."""
    total = sum(AXLES)
    u = np.array([0.0, SPACING, 2 * SPACING])  # from the 8 kip axle
    resultant = float(np.dot(AXLES, u) / total)
    e = resultant - u[1]  # middle axle to resultant
    section = (SPAN - e) / 2
    # left reaction × section, less the 8 kip axle 14 ft left of the section
    moment = total * (SPAN - section - e) / SPAN * section - AXLES[0] * SPACING
    return moment, section


def test_absolute_maximum_moment_of_the_design_truck() -> None:
    beam = trundle.Beam(spans=[SPAN])
    truck = trundle.Vehicle(loads=AXLES, spacings=[SPACING, SPACING], name="design truck")
    expected, section = _classic_rule()
    assert expected == pytest.approx(1523.9, rel=1e-4)  # the published figure
    env = trundle.envelope(beam, [truck], sections=[section, SPAN / 2], effects=("moment",))
    assert env.max("moment")[0] == pytest.approx(expected, rel=1e-12)
    assert env.max("moment")[1] < expected  # midspan is not the worst section
    g = env.governing("moment", "max")[0]
    x = env.axle_positions(g)  # 8, 32, 32 kip in that order
    assert x[1] == pytest.approx(section, abs=1e-9 * SPAN)  # the middle axle at the section
    assert abs(x[0] - x[1]) == pytest.approx(SPACING, rel=1e-12)
    (absolute,) = [a for a in env.absolute("moment") if a.which == "max"]
    assert absolute.value == pytest.approx(expected, rel=1e-9)
    assert min(abs(absolute.x - section), abs(absolute.x - (SPAN - section))) < 1e-4 * SPAN


def test_variable_rear_spacing_governs_at_its_shortest() -> None:
    """With the rear spacing free between 14 and 30 ft, 14 ft gives the largest moment."""
    beam = trundle.Beam(spans=[SPAN])
    truck = trundle.Vehicle(loads=AXLES, spacings=[SPACING, (14.0, 30.0)])
    expected, section = _classic_rule()
    env = trundle.envelope(beam, [truck], sections=[section], effects=("moment",))
    assert env.max("moment")[0] == pytest.approx(expected, rel=1e-9)
    assert env.governing("moment", "max")[0].searched[0] == pytest.approx(14.0, abs=1e-6)


def test_maximum_end_reaction_of_the_design_truck() -> None:
    """A 32 kip axle over the support and the truck on the span: R = 32 + 32·86/100 +
    8·72/100 = 65.28 kip (statics of a simple span; common practice, no source)."""
    beam = trundle.Beam(spans=[SPAN])
    truck = trundle.Vehicle(loads=AXLES, spacings=[SPACING, SPACING])
    env = trundle.envelope(beam, [truck], sections=[0.0], effects=("reaction", "shear"))
    expected = 32.0 + 32.0 * (SPAN - 14.0) / SPAN + 8.0 * (SPAN - 28.0) / SPAN
    assert expected == pytest.approx(65.28, rel=1e-12)
    assert env.max("reaction")[0] == pytest.approx(expected, rel=1e-12)
    assert env.max("shear", side="right")[0] == pytest.approx(expected, rel=1e-12)


# --- the two-truck rule on two equal spans (Art. 3.6.1.3.1) --------------------------------

STEP = 0.5  # every axle of the brute force stands on this grid
TWO_TRUCKS = "90 % (two trucks + lane)"


@pytest.fixture(scope="module")
def beam() -> trundle.Beam:
    return trundle.Beam(spans=[L, L])


@pytest.fixture(scope="module")
def pier_line(beam) -> tuple[np.ndarray, np.ndarray]:
    """M at the pier for a unit load at every grid point: one static solve each."""
    x = np.arange(0.0, 2 * L + STEP / 2, STEP)
    values = np.array([beam.static([PointLoad(float(p), 1.0)]).moment(L)[0] for p in x])
    return x, values


def test_static_line_equals_the_handbook_formula(pier_line) -> None:
    x, values = pier_line
    a = np.where(x <= L, x, 2 * L - x)
    assert values == pytest.approx(-a * (L**2 - a**2) / (4 * L**2), abs=1e-9)


def test_pier_moment_of_two_trucks_equals_the_brute_force(beam, pier_line) -> None:
    x, line = pier_line
    hl93 = read_library_model("hl93").load
    alternative = next(a for a in hl93.alternatives if a.name == TWO_TRUCKS)
    case = for_beam(alternative, beam.length)
    trucks = case.parts[0]
    assert trucks.impact == pytest.approx(0.33)
    # brute force: every gap from 50 ft (on the grid), every lead-axle position
    axles = np.array([8.0, 32.0, 32.0, 8.0, 32.0, 32.0]) * 1.33
    n = x.size
    worst = 0.0
    for gap in np.arange(50.0, 2 * L + STEP / 2, STEP):
        offsets = np.array([0.0, 14.0, 28.0, 28.0 + gap, 42.0 + gap, 56.0 + gap])
        steps = np.round(offsets / STEP).astype(int)
        for lead in range(-steps[-1], n):  # lead axle index on the grid (may be off the beam)
            idx = lead + steps
            on = (idx >= 0) & (idx < n)
            value = float(np.sum(axles[on] * line[idx[on]]))
            worst = min(worst, value)
    env = trundle.envelope(beam, [trucks], sections=[L], effects=("moment",))
    exact = env.min("moment")[0]
    assert exact <= worst + 1e-9 * abs(worst)  # never less severe than the brute force
    # and achievable: the configuration found, solved statically, gives the value
    g = env.governing("moment", "min")[0]
    positions = env.axle_positions(g)
    loads = [PointLoad(float(p), float(P)) for p, P in zip(positions, axles, strict=True)
             if 0.0 <= p <= 2 * L]
    assert beam.static(loads).moment(L)[0] == pytest.approx(exact, rel=1e-9)
    assert exact == pytest.approx(worst, rel=2e-3)  # the grid is 0.5 ft
    assert g.searched[0] >= 50.0 - 1e-9


def test_rule_governs_only_negative_moment_near_the_pier_and_interior_reactions(beam) -> None:
    hl93 = read_library_model("hl93").load
    sections = beam.tenth_points()
    result = design_case_envelope(beam, hl93, sections)
    # points of contraflexure of uniform load on both spans: 0.75 L from the ends (handbook)
    assert contraflexure_points(beam) == pytest.approx([0.75 * L, 1.25 * L], rel=1e-9)
    for family in ("moment", "shear_left", "shear_right", "deflection"):
        assert TWO_TRUCKS not in result.governing[family, "max"]
    for which in ("max", "min"):
        for family in ("shear_left", "shear_right"):
            assert TWO_TRUCKS not in result.governing[family, which]
            assert all("two trucks" in e for e in result.excluded[family, which])
    hogging = in_region(beam, "between points of contraflexure", sections)
    governing_min = np.array(result.governing["moment", "min"])
    assert not np.any(governing_min[~hogging] == TWO_TRUCKS)
    j = int(np.argmin(np.abs(sections - L)))
    assert governing_min[j] == TWO_TRUCKS  # two 100 ft spans: the rule governs at the pier
    # end reactions never, the interior reaction may
    assert result.governing["reaction", "max"][0] != TWO_TRUCKS
    assert result.governing["reaction", "max"][2] != TWO_TRUCKS
    assert "two trucks" in result.excluded["reaction", "max"][0]
    # the value at the pier is the worst of the three alternatives, each as its own envelope
    values = []
    for a in hl93.alternatives:
        env = trundle.envelope(beam, [for_beam(a, beam.length)], sections=[L],
                               effects=("moment",))
        values.append(a.factor * env.min("moment")[0])
    assert result.min("moment")[j] == pytest.approx(min(values), rel=1e-12)


# --- Strength I by hand (Tables 3.4.1-1 and 3.4.1-2) --------------------------------------

DC, DW, LANE = 1.2, 0.3, 0.64  # kip/ft


def test_strength_i_by_hand_at_0_4_L_and_at_the_pier() -> None:
    beam = trundle.Beam(spans=[L, L])
    x = 0.4 * L
    sections = [x, L]
    permanent = permanent_effects(beam, [
        PermanentLoad("girder and deck", "DC", "self weight", DC),
        PermanentLoad("wearing surface", "DW", "superimposed dead", DW)], sections)
    live = load_case_envelope(beam, trundle.UniformLoad(LANE, name="lane"), sections)
    result = design_envelope(BRIDGE_STRENGTH_I, permanent, [live])

    def both(w: float, at: float) -> float:
        return w * (3 / 8 * L * at - at**2 / 2)

    m_dc, m_dw = both(DC, x), both(DW, x)            # 0.07 wL², sagging: adverse for max
    ll_max = LANE * (7 / 16 * L * x - x**2 / 2)      # span 1 loaded: 0.095 wL²
    ll_min = -LANE * L * x / 16                       # span 2 loaded: −0.025 wL²
    assert m_dc == pytest.approx(0.07 * DC * L**2, rel=1e-12)
    assert result.max("moment")[0] == pytest.approx(1.25 * m_dc + 1.50 * m_dw + 1.75 * ll_max,
                                                    rel=1e-9)
    # for the minimum the sagging permanent moments are favourable: 0.90 and 0.65
    assert result.min("moment")[0] == pytest.approx(0.90 * m_dc + 0.65 * m_dw + 1.75 * ll_min,
                                                    rel=1e-9)
    # at the pier the permanent moment is hogging: favourable for the maximum
    p_dc, p_dw, ll_pier = -DC * L**2 / 8, -DW * L**2 / 8, -LANE * L**2 / 8
    assert result.max("moment")[1] == pytest.approx(0.90 * p_dc + 0.65 * p_dw, abs=1e-9)
    assert result.min("moment")[1] == pytest.approx(1.25 * p_dc + 1.50 * p_dw + 1.75 * ll_pier,
                                                    rel=1e-9)
    assert result.governing["moment", "max"][0] == "lane"
    assert result.by_case["lane"]["moment", "max"][0] == result.max("moment")[0]
