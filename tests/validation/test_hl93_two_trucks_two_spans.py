"""The HL-93 two-truck rule on two equal spans: 90 % of two design trucks (14 ft rear spacing,
at least 50 ft from the lead axle of one to the rear axle of the other) with 90 % of the lane
load, for negative moment between points of contraflexure and interior reactions only.

Sources: AASHTO LRFD Bridge Design Specifications (8th/9th ed.), Art. 3.6.1.3.1 (from
memory). Reference: a brute-force search over the gap and the position by static solves on the
beam (one solve per load position), and the handbook influence line of the pier moment of two
equal spans, M_B = −a(L² − a²)/(4L²) for a unit load at a in either span (AISC Steel
Construction Manual, "Beam Diagrams and Formulas", from memory). Units: kip, ft.
"""

from __future__ import annotations

import numpy as np
import pytest

import trundle
from trundle.analysis.case_envelopes import design_case_envelope
from trundle.analysis.rules import contraflexure_points, in_region
from trundle.core.statics import PointLoad
from trundle.io.loads import read_library_model
from trundle.loads.design_cases import for_beam

L = 100.0
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
