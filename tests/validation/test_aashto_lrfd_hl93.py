"""HL-93 on simple spans: the design lane load, the design truck and the design case.

Source: AASHTO LRFD Bridge Design Specifications (8th/9th ed.), Art. 3.6.1.2 (design truck,
tandem, lane load), Art. 3.6.1.3.1 (application), Table 3.6.2.1-1 (33 % dynamic allowance), and
the tables of maximum live-load moments on simple spans published with it and with the earlier
Standard Specifications (Appendix A, HS20: 1,524 kip-ft for a 100 ft span) — all from memory.
Values are recomputed by hand (statics) in each test; the published figures are checked as ≈.
Units: kip and ft.
"""

from __future__ import annotations

import numpy as np
import pytest

import trundle
from trundle.analysis.case_envelopes import design_case_envelope, load_case_envelope
from trundle.io.loads import read_library_model, read_load_model_file
from trundle.loads import library

SPAN = 100.0


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
