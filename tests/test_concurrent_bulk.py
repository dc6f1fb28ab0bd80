"""The concurrent effects of every section in one pass (``analysis/concurrent.py``) against
their section-by-section twin ``Envelope.concurrent_matching`` (one Governing, one group
response at a time), and the paired line readers against ``LineBatch.ordinates`` /
``running_at`` (every line at every point; the diagonal is what the pairs must give).

No outside source: the twin is trundle's own readable implementation, itself checked against
static solves in tests/test_concurrent_faces.py (AASHTO LRFD design-truck axles on a simple
span, statics of a simple beam, from memory).
"""

from __future__ import annotations

import numpy as np
import pytest

import trundle
from conftest import random_beam
from trundle.analysis.concurrent import concurrent_matching, paired_ordinates, paired_running
from trundle.loads.cases import LoadCase, Together
from trundle.loads.patterns import UniformLoad
from trundle.loads.vehicles import AttachedUniform, Train, Vehicle


def _loads(rng: np.random.Generator, length: float) -> list:
    """Every load kind the records meet: a truck with a searched spacing (impact, factors,
    load factor), a train with uniform load ahead and behind, placed uniform load of each
    placement with a point load, and a truck and a lane load acting together."""
    truck = Vehicle(loads=rng.uniform(20, 120, 3).round(1).tolist(),
                    spacings=[round(0.1 * length, 2), (0.08 * length, 0.2 * length)],
                    name="truck")
    train = Train(vehicles=(Vehicle([50.0, 80.0], [0.07 * length], name="car"),) * 2,
                  gaps=(0.05 * length,), ahead=AttachedUniform(9.0, 0.3 * length, 0.02 * length),
                  behind=AttachedUniform(6.0), name="train")
    lane = UniformLoad(10.0, "anywhere", point_load=40.0, name="lane")
    return [
        LoadCase(truck, impact=0.33, factors=(("distribution", 0.6),), load_factor=1.75),
        train,
        lane,
        UniformLoad(7.0, "spans", point_load=25.0, name="span by span"),
        UniformLoad(5.0, "everywhere", name="all or nothing"),
        Together((LoadCase(Vehicle([35.0, 145.0], [0.1 * length], name="pair"), impact=0.2),
                  lane), name="pair + lane"),
    ]


@pytest.mark.parametrize("seed", range(6))
def test_every_section_at_once_equals_the_section_by_section_answer(seed: int) -> None:
    rng = np.random.default_rng(seed)
    beam = random_beam(rng, max_spans=3, shortest=3.0, min_node_gap=0.5)
    sections = np.unique(np.concatenate([
        np.linspace(0.0, beam.length, int(rng.integers(5, 30))), beam.support_positions]))
    loads = _loads(rng, beam.length)
    chosen = [loads[i] for i in sorted(rng.choice(len(loads), 3, replace=False))]
    if seed == 0:
        chosen = loads  # every kind at once, each governing somewhere
    env = trundle.envelope(beam, chosen, sections=sections)
    families = ("shear_left", "shear_right", "deflection", "moment")
    for kind in ("moment", "deflection", "shear"):
        for which in ("max", "min"):
            expected = env.concurrent_matching(kind, which, families)
            found = concurrent_matching(env, kind, which, families)
            assert found.keys() == expected.keys()
            for family, values in expected.items():
                scale = max(np.abs(values).max(), 1e-300)
                np.testing.assert_allclose(found[family], values, rtol=1e-12,
                                           atol=1e-12 * scale, err_msg=f"{kind} {which}")


def test_the_millrace_pattern_truck_and_lane_together_at_many_sections() -> None:
    # the bundled example's loads (a truck, a lane load and both together) at 200 sections
    beam = trundle.Beam(spans=[20.0, 20.0], EI=[(0.0, 16.0, 1.0), (16.0, 24.0, 2.0),
                                                (24.0, 40.0, 1.0)])
    truck = Vehicle([8.0, 32.0, 32.0], [4.3, (4.3, 9.0)], name="truck")
    lane = UniformLoad(9.3, "anywhere", name="lane")
    env = trundle.envelope(beam, [truck, lane, Together((truck, lane), name="truck + lane")],
                           sections=np.linspace(0.0, 40.0, 201))
    for which in ("max", "min"):
        expected = env.concurrent_matching("moment", which, ("shear_left", "shear_right"))
        found = concurrent_matching(env, "moment", which, ("shear_left", "shear_right"))
        for family, values in expected.items():
            np.testing.assert_allclose(found[family], values, rtol=1e-12,
                                       atol=1e-12 * np.abs(values).max())


@pytest.mark.parametrize("seed", range(4))
def test_paired_readers_are_the_diagonal_of_the_batch_readers(seed: int) -> None:
    rng = np.random.default_rng(100 + seed)
    beam = random_beam(rng, max_spans=3, shortest=3.0, min_node_gap=0.5)
    sections = np.linspace(0.0, beam.length, 9)
    env = trundle.envelope(beam, [Vehicle([1.0], [])], sections=sections)
    batch = env.batch
    n = batch.n_lines
    # points inside, on every knot (the sections, where shear lines jump, and the
    # structural nodes), a rounding hair off a knot, on both ends and off the beam
    knots = batch.knots
    x = np.concatenate([rng.uniform(0.0, beam.length, 40), knots, knots + 1e-14 * beam.length,
                        [0.0, beam.length, -1.0, beam.length + 1.0]])
    lines = rng.integers(0, n, x.size)
    for side in ("left", "right", "point"):
        every = batch.ordinates(x, side)  # (points, lines)
        np.testing.assert_array_equal(paired_ordinates(batch, x, side, lines),
                                      every[np.arange(x.size), lines], err_msg=side)
    every = batch.running_at(x)
    np.testing.assert_array_equal(paired_running(batch, x, lines),
                                  every[np.arange(x.size), lines])


@pytest.mark.parametrize("seed", range(4))
def test_sign_intervals_cover_exactly_where_the_line_has_that_sign(seed: int) -> None:
    # both signs of a line's loaded stretches come from one root search: sampled, a value
    # clearly positive lies in a positive interval and in no negative one, and so on
    from trundle.core.influence import sign_intervals

    rng = np.random.default_rng(200 + seed)
    beam = random_beam(rng, max_spans=3, shortest=3.0, min_node_gap=0.5)
    env = trundle.envelope(beam, [Vehicle([1.0], [])], sections=np.linspace(0.0, beam.length, 7))
    batch = env.batch
    x = np.linspace(0.0, beam.length, 997)[1:-1]
    for j in range(batch.n_lines):
        m = int(batch.n_pieces[j])
        positive, negative = sign_intervals(batch.line_knots[j, :m + 1],
                                            batch.line_coef[j, :m, :].T)
        values = paired_ordinates(batch, x, "right", np.full(x.size, j))
        scale = max(np.abs(values).max(), 1e-300)
        for intervals, sign in ((positive, 1.0), (negative, -1.0)):
            inside = np.zeros(x.size, dtype=bool)
            for a, b in intervals:
                assert a < b
                inside |= (x > a) & (x < b)
            # clearly signed, and not on a knot (where a shear line jumps)
            knots = batch.line_knots[j, :m + 1]
            clear = (np.abs(values) > 1e-9 * scale) & (
                np.abs(x[:, None] - knots[None, :]).min(axis=1) > 1e-9 * beam.length)
            assert np.array_equal(inside[clear], (sign * values[clear]) > 0), (j, sign)
