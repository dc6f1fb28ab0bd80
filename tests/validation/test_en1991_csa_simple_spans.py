"""EN 1991-2 LM1 and LM71 and CSA S6 CL-625 on simple spans, by hand.

Sources (from memory): EN 1991-2:2003, 4.3.2 and Table 4.2 (LM1: tandem 2 x 300 kN at 1.2 m
and 9 kN/m² in lane 1), 6.3.2 (LM71: 4 x 250 kN at 1.6 m, 80 kN/m); CSA S6, 3.8.3.2 (CL-625
truck 50/125/125/175/150 kN at 3.6, 1.2, 6.6, 6.6 m; lane load 80 % of the truck + 9 kN/m) and
3.8.4.5 (dynamic load allowance 0.25 for three or more axles). Values by hand (statics),
the simple-span influence lines being triangles. Units: kN, m.
"""

from __future__ import annotations

import numpy as np
import pytest

import trundle
from trundle.analysis.case_envelopes import design_case_envelope
from trundle.io.loads import read_library_model


def test_lm1_lane_1_midspan_moment_of_a_20_m_span() -> None:
    """One axle at midspan, the other 1.2 m away: 300·5 + 300·4.4 = 2,820 kN·m; uniform
    9 kN/m² x 3 m = 27 kN/m: 27·20²/8 = 1,350 kN·m; together 4,170 kN·m."""
    span = 20.0
    beam = trundle.Beam(spans=[span])
    result = design_case_envelope(beam, read_library_model("en1991-2-lm1").load, [span / 2])
    assert result.max("moment")[0] == pytest.approx(2820.0 + 1350.0, rel=1e-9)


def test_lm71_is_never_below_the_code_value_on_a_simple_span() -> None:
    """On a simple span the code's value (80 kN/m beyond 0.8 m of the outer axles, on the whole
    adverse line) is the train with unlimited uniform load ahead and behind; the shipped model
    places the uniform load under the axles too: at least that, and exactly the bound
    axles + 80·L²/8 at midspan. 10 m span, axles symmetric about midspan at 2.6, 4.2, 5.8,
    7.4 m: 250·(1.3 + 2.1 + 2.1 + 1.3) = 1,700 kN·m; + 80·100/8 = 1,000."""
    span = 10.0
    beam = trundle.Beam(spans=[span])
    result = design_case_envelope(beam, read_library_model("en1991-2-lm71").load, [span / 2])
    code = trundle.Train(
        vehicles=(trundle.Vehicle(loads=[250.0] * 4, spacings=[1.6] * 3),),
        ahead=trundle.AttachedUniform(80.0, gap=0.8), behind=trundle.AttachedUniform(80.0, gap=0.8))
    exact = trundle.envelope(beam, [code], sections=[span / 2], effects=("moment",))
    assert result.max("moment")[0] >= exact.max("moment")[0]
    axles = 250.0 * (1.3 + 2.1 + 2.1 + 1.3)  # (an axle at midspan gives 250·6.8 as well)
    assert result.max("moment")[0] == pytest.approx(axles + 1000.0, rel=1e-9)


def test_cl625_end_shear_of_a_20_m_span() -> None:
    """The largest end reaction puts an axle over the support (linear line): each axle in
    turn, both directions; the truck with 25 % allowance, or 80 % of it + 9 kN/m · L/2."""
    span = 20.0
    loads = np.array([50.0, 125.0, 125.0, 175.0, 150.0])
    offsets = np.cumsum([0.0, 3.6, 1.2, 6.6, 6.6])
    best = 0.0
    for p, u in ((loads, offsets), (loads[::-1], offsets[-1] - offsets[::-1])):
        for k in range(p.size):
            x = u - u[k]
            on = (x >= 0) & (x <= span)
            best = max(best, float(np.sum(p[on] * (span - x[on]) / span)))
    # the second axle (125 kN) over the support, the 50 kN axle off the span:
    # 125 + 125·18.8/20 + 175·12.2/20 + 150·5.6/20 = 391.25 kN
    assert best == pytest.approx(391.25, rel=1e-12)
    beam = trundle.Beam(spans=[span])
    result = design_case_envelope(beam, read_library_model("csa-s6-cl625").load, [span / 2])
    expected = max(1.25 * best, 0.8 * best + 9.0 * span / 2)
    assert result.max("reaction")[0] == pytest.approx(expected, rel=1e-9)
    assert result.governing["reaction", "max"][0] == "CL-625 truck"
