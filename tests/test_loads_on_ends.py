"""An axle standing exactly on an end of the beam, on a support or on a section counts on the
side where it stands (issue 7, item 4): the envelope equals the supremum over positions.

Sources: the statics of a beam with overhangs (V is the upward resultant of everything left
of the cut; a load on a free tip is carried through the whole overhang: V = ±P just inside
the tip, from memory, any mechanics of materials text, e.g. Hibbeler's chapter on shear and
moment diagrams); independently, trundle's static solve (``Beam.static``) at the governing
positions, and the plain-Python twin of the scan (tests/naive_scan.py) with its own point
evaluation where a load stands on an end.
"""

from __future__ import annotations

import numpy as np
import pytest

import trundle
from naive_scan import Arrangement, PlainLine, plain_scan
from trundle.core.statics import PointLoad
from trundle.scan import LineBatch, TermGroup, group_response, scan_group

OVERHANGS = dict(spans=[2.0, 10.0, 3.0], supports=["free", "pin", "pin", "free"], EI=1.0)


def _static_shear(beam: trundle.Beam, env: trundle.Envelope, g, x: float, side: str) -> float:
    positions = env.axle_positions(g)
    loads = env.group_of(g).point_P
    on = [PointLoad(float(p), float(w) * env.cases[g.case].multiplier)
          for p, w in zip(positions, loads, strict=True)
          if -1e-12 <= p <= beam.length + 1e-12]
    return float(beam.static(on).shear([x], side)[0])


def test_wheel_on_a_free_tip_gives_the_whole_wheel_as_shear() -> None:
    # issue 7: shear just left of the right tip and just right of the left tip were 0
    beam = trundle.Beam(**OVERHANGS)
    wheel = trundle.Vehicle(loads=[100.0], spacings=[])
    L = beam.length
    env = trundle.envelope(beam, [wheel], sections=[0.0, L], effects=("shear",))
    assert env.max("shear", "left")[1] == pytest.approx(100.0, rel=1e-12)
    assert env.min("shear", "right")[0] == pytest.approx(-100.0, rel=1e-12)
    # beyond the ends nothing acts: V(0⁻) = V(L⁺) = 0 for every load
    assert env.max("shear", "left")[0] == 0.0 and env.min("shear", "right")[1] == 0.0
    # the governing configurations re-solved statically give the same values
    g_max = env.governing("shear", "max", "left")[1]
    g_min = env.governing("shear", "min", "right")[0]
    assert _static_shear(beam, env, g_max, L, "left") == pytest.approx(100.0, rel=1e-12)
    assert _static_shear(beam, env, g_min, 0.0, "right") == pytest.approx(-100.0, rel=1e-12)
    # and the concurrent values read from the envelope agree
    line = env.lines_of("shear", "left")[1]
    assert env.response_to(g_max)[line] == pytest.approx(100.0, rel=1e-12)


@pytest.mark.parametrize("seed", range(6))
def test_every_extreme_with_an_axle_on_an_end_matches_the_static_solve(seed: int) -> None:
    rng = np.random.default_rng(seed)
    beam = trundle.Beam(**OVERHANGS)
    L = beam.length
    n = int(rng.integers(2, 4))
    loads = np.round(rng.uniform(20.0, 150.0, n), 1).tolist()
    # spacings that put one axle on a tip while another stands on a section or a support
    spacings = rng.choice([2.0, 3.0, 5.0, 7.0, 10.0, 12.0, 13.0], n - 1).tolist()
    truck = trundle.Vehicle(loads=loads, spacings=spacings)
    xs = [0.0, 1.0, 2.0, 5.0, 12.0, 13.0, L]
    env = trundle.envelope(beam, [truck], sections=xs, effects=("shear", "moment"))
    for side in ("left", "right"):
        for which in ("max", "min"):
            values = env.max("shear", side) if which == "max" else env.min("shear", side)
            for i, g in enumerate(env.governing("shear", which, side)):
                if g.case < 0 or g.side != 0:
                    continue  # limits are checked by the brute-force tests
                assert _static_shear(beam, env, g, xs[i], side) == pytest.approx(
                    values[i], abs=1e-9 * max(1.0, abs(values[i])))


@pytest.mark.parametrize("seed", range(4))
def test_kernel_matches_the_twin_on_a_beam_with_overhangs(seed: int) -> None:
    rng = np.random.default_rng(100 + seed)
    beam = trundle.Beam(**OVERHANGS)
    L = beam.length
    E = trundle.Effect
    effects = [E("shear", at=x, side=s) for x in (0.0, 1.0, 2.0, 6.5, 12.0, L)
               for s in ("left", "right")]
    effects += [E("moment", at=x) for x in (1.0, 6.5, 13.0)]
    effects += [E("deflection", at=x) for x in (0.0, L)]
    lines = beam.influence_set(effects)
    batch = LineBatch.from_set(lines)
    n = int(rng.integers(1, 4))
    P = np.round(rng.uniform(0.5, 3.0, n), 3)
    u = np.concatenate([[0.0], np.cumsum(rng.choice([1.0, 2.0, 4.5, 5.5, 10.0], n - 1))])
    group = TermGroup(tuple(u.tolist()), tuple(P.tolist()))
    arrangement = Arrangement(tuple(zip(u.tolist(), P.tolist(), strict=True)))
    found = scan_group(batch, group)
    for j, effect in enumerate(effects):
        twin = PlainLine.from_ppoly(lines.knots, lines.coefficients[:, :, j], effect)
        expected = plain_scan(twin, arrangement)
        for col in (0, 3):
            assert found[j, col] == pytest.approx(expected[col], abs=1e-10), (effect, col)
            if not np.isnan(found[j, col + 1]):
                again = group_response(batch, group, found[j, col + 1], found[j, col + 2])[j]
                assert again == pytest.approx(found[j, col], abs=1e-10), (effect, col)
