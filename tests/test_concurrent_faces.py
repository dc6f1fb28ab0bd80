"""The shear acting with an extreme moment, on each face of the section (issue 7, item 5).

Case of the issue: a 100 ft simple span, section x = 47.5 ft, a truck of 8, 32 and 32 kip
axles 14 ft apart (the axle loads and spacing of the AASHTO LRFD HL-93 design truck, Art.
3.6.1.2.2, from memory). Mmax = 1523.9 kip-ft with the middle axle on the section. Statics of
a simple beam (from memory): R_left = Σ P (L − a)/L with the axles at 33.5, 47.5, 61.5 ft:
R_left = (8·66.5 + 32·52.5 + 32·38.5)/100 = 34.44 kip; V just left of 47.5 (middle axle right
of the cut) = 34.44 − 8 = 26.44 kip; just right (middle axle left of the cut) = 26.44 − 32 =
−5.56 kip. Independently: trundle's static solve at the governing axle positions.
"""

from __future__ import annotations

import numpy as np
import pytest

import trundle
from trundle.core.statics import PointLoad


def _truck_case():
    beam = trundle.Beam(spans=[100.0], EI=1.0)
    truck = trundle.Vehicle(loads=[8.0, 32.0, 32.0], spacings=[14.0, 14.0])
    env = trundle.envelope(beam, [truck], sections=[47.5], effects=("moment", "shear"))
    return beam, env


def test_concurrent_shear_differs_on_the_two_faces_by_the_axle_on_the_section() -> None:
    beam, env = _truck_case()
    assert env.max("moment")[0] == pytest.approx(1523.9, rel=1e-12)
    concurrent = env.concurrent("moment", "max")
    assert concurrent["shear_left"][0, 0] == pytest.approx(26.44, rel=1e-12)
    assert concurrent["shear_right"][0, 0] == pytest.approx(-5.56, rel=1e-12)
    g = env.governing("moment", "max")[0]
    assert env.axle_face(g, 47.5, "moment") == "on"
    # the static solve of the governing configuration
    axles = env.axle_positions(g)
    loads = [PointLoad(float(x), float(p)) for x, p in
             zip(axles, env.group_of(g).point_P, strict=True)]
    static = beam.static(loads)
    assert float(static.moment([47.5])[0]) == pytest.approx(1523.9, rel=1e-12)
    assert float(static.shear([47.5], "left")[0]) == pytest.approx(26.44, rel=1e-12)
    assert float(static.shear([47.5], "right")[0]) == pytest.approx(-5.56, rel=1e-12)


def test_concurrent_to_keeps_the_moment_itself() -> None:
    # the exact configuration is used only where it reproduces the extreme
    rng = np.random.default_rng(7)
    beam = trundle.Beam(spans=[12.0, 18.0, 9.0], EI=1.0,
                        supports=["pin", "pin", "pin", "free"])
    truck = trundle.Vehicle(loads=rng.uniform(20, 120, 4).round(1).tolist(),
                            spacings=[1.5, 4.0, 6.0])
    xs = np.linspace(0.0, beam.length, 27)
    env = trundle.envelope(beam, [truck], sections=xs, effects=("moment", "shear"))
    for which in ("max", "min"):
        c = env.concurrent("moment", which)
        diagonal = np.diagonal(c["moment"])
        extreme = env.max("moment") if which == "max" else env.min("moment")
        np.testing.assert_allclose(diagonal, extreme, rtol=1e-9,
                                   atol=1e-9 * np.abs(extreme).max())
        for i, g in enumerate(env.governing("moment", which)):
            if g.case < 0:
                continue
            # each face from the configuration, checked by a static solve with every axle
            # where it stands whenever the exact configuration was used
            if env.axle_face(g, xs[i], "moment") != "on":
                continue
            axles = env.axle_positions(g)
            on = [PointLoad(float(x), float(p)) for x, p in
                  zip(axles, env.group_of(g).point_P, strict=True)
                  if 0.0 <= x <= beam.length]
            static = beam.static(on)
            size = max(1.0, np.abs(extreme).max())
            for side in ("left", "right"):
                assert c[f"shear_{side}"][i, i] == pytest.approx(
                    float(static.shear([xs[i]], side)[0]), abs=1e-9 * size)
