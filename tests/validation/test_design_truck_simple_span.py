"""A design truck on a 100 ft simple span: absolute maximum moment and end reaction.

Sources:
- The design truck: axles of 8, 32 and 32 kip at 14 ft (the rear spacing variable, 14 to
  30 ft), AASHTO LRFD Bridge Design Specifications, Art. 3.6.1.2.2 (the HS20 truck of the
  earlier Standard Specifications) (from memory).
- Absolute maximum moment on a 100 ft simple span ≈ 1,523.9 kip-ft: tables of maximum
  truck moments on simple spans, e.g. AASHTO Standard Specifications for Highway Bridges,
  Appendix A (from memory), and the classic rule that it occurs under the heavy axle nearest
  the resultant when midspan bisects the distance between them (textbook rule; from memory).
  The test computes the value from that rule and statics; 1,523.9 is only checked as ≈.
Units: kip and ft (the core is unit-agnostic).
"""

from __future__ import annotations

import numpy as np
import pytest

import trundle

SPAN = 100.0
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
