"""Properties of envelopes on random beams, checked with the exact static reference of
tests/naive_scan.py (a dense stiffness solve with work-equivalent loads, equilibrium of the part
left of a section; no influence lines):

- the envelope bounds the effect of the load standing anywhere (hypothesis);
- the governing configuration (axle positions, side at a jump, loaded stretches) reproduces
  the extreme, and the concurrent effects are the static solution under it;
- absolute maxima per span are at least the envelope at every section of the span.

Source: equilibrium and the definition of an envelope; common practice, no source.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import trundle
from conftest import SCAN_BEAMS, random_beam
from naive_scan import (
    Arrangement,
    ReferenceSolver,
    random_axles,
    random_sections,
    static_effects,
)
from trundle.core.statics import PointLoad

REL = 1e-9


def _random_case(seed: int, uniform: bool) -> tuple[trundle.Beam, list[float], object,
                                                     Arrangement]:
    """A random beam and sections, and a vehicle (or a one-vehicle train with uniform load
    behind or ahead) with the same loads written out by hand in group coordinates."""
    rng = np.random.default_rng(seed)
    beam = random_beam(rng, **SCAN_BEAMS)
    sections = random_sections(rng, beam, 2)
    loads, spacings = random_axles(rng, beam)
    u = np.concatenate([[0.0], np.cumsum(spacings)]).tolist()
    points = tuple(zip(u, loads, strict=True))
    vehicle = trundle.Vehicle(loads=loads, spacings=spacings)
    if not uniform:
        return beam, sections, vehicle, Arrangement(points)
    w = float(np.round(rng.uniform(0.1, 0.5), 3))
    gap = float(np.round(rng.uniform(0.0, 0.1) * beam.length, 3))
    length = math.inf if rng.random() < 0.5 else float(np.round(0.4 * beam.length, 3))
    if rng.random() < 0.5:
        train = trundle.Train([vehicle], ahead=trundle.AttachedUniform(w, length, gap))
        part = (-gap - length, -gap, w)
    else:
        train = trundle.Train([vehicle], behind=trundle.AttachedUniform(w, length, gap))
        part = (u[-1] + gap, u[-1] + gap + length, w)
    return beam, sections, train, Arrangement(points, (part,))


def _place(arrangement: Arrangement, xi: float, direction: int
           ) -> tuple[list[tuple[float, float]], list[tuple[float, float, float]]]:
    """Axles (x, P) and uniform loads (x0, x1, w) with the reference point at ξ."""
    a = arrangement if direction > 0 else arrangement.mirrored()
    return ([(xi - u, P) for u, P in a.points],
            [(xi - u1, xi - u0, w) for u0, u1, w in a.uniform])


def _family_scale(env: trundle.Envelope) -> np.ndarray:
    scale = np.zeros(len(env.effects))
    both = np.maximum(np.abs(env.maximum), np.abs(env.minimum))
    for lines in env.index.values():
        if lines.size:
            scale[lines] = max(both[lines].max(), 1e-300)
    return scale


# --- the envelope bounds every position ---------------------------------------------------------


@settings(max_examples=15, deadline=None)
@given(seed=st.integers(0, 10_000), uniform=st.booleans(),
       samples=st.lists(st.tuples(st.floats(0.0, 1.0), st.sampled_from([1, -1])),
                        min_size=3, max_size=8))
def test_envelope_bounds_the_effect_at_any_position(seed: int, uniform: bool,
                                                    samples: list[tuple[float, int]]) -> None:
    beam, sections, load, arrangement = _random_case(seed, uniform)
    env = trundle.envelope(beam, [load], sections=sections)
    solver = ReferenceSolver(beam, sections)
    effects = list(env.effects)
    scale = _family_scale(env)
    offsets = arrangement.offsets()
    for fraction, direction in samples:
        span = (min(offsets), beam.length + max(offsets))
        if direction < 0:
            span = (-max(offsets), beam.length - min(offsets))
        xi = span[0] + fraction * (span[1] - span[0])
        axles, parts = _place(arrangement, xi, direction)
        values = static_effects(solver, effects, axles, parts)
        assert np.all(values <= env.maximum + REL * scale), xi
        assert np.all(values >= env.minimum - REL * scale), xi


# --- governing configurations and concurrent effects --------------------------------------------


FAMILIES = [("moment", None), ("shear", "left"), ("shear", "right"), ("deflection", None),
            ("reaction", None)]


@pytest.mark.parametrize("uniform", [False, True])
@pytest.mark.parametrize("seed", range(3))
def test_concurrent_effects_are_the_static_solution(seed: int, uniform: bool) -> None:
    beam, sections, load, arrangement = _random_case(seed + 50, uniform)
    impact, factor = 0.25, 0.8
    case = trundle.LoadCase(load, impact=impact, factors=(("distribution", factor),))
    env = trundle.envelope(beam, [case], sections=sections)
    solver = ReferenceSolver(beam, sections)
    effects = list(env.effects)
    scale = _family_scale(env)
    factored = Arrangement(tuple((u, P * (1 + impact)) for u, P in arrangement.points),
                           arrangement.uniform)
    for kind, side in FAMILIES:
        for which in ("max", "min"):
            governing = env.governing(kind, which, side=side)
            concurrent = env.concurrent(kind, which, side=side)
            lines = env.lines_of(kind, side=side)
            for row, (line, g) in enumerate(zip(lines, governing, strict=True)):
                response = env.response_to(g)
                # concurrent effects: the governing configuration with every load where it
                # stands where that reproduces the extreme (continuous lines), else the limit
                # (faces of an axle on the section: tests/test_concurrent_faces.py)
                acting = env.concurrent_to(g, int(line))
                assert acting[line] == pytest.approx(g.value, abs=REL * scale[line])
                for family, idx in env.index.items():
                    if idx.size:
                        np.testing.assert_array_equal(concurrent[family][row], acting[idx])
                if g.case < 0:
                    assert g.value == 0.0
                    assert not response.any()
                    continue
                axles, parts = _place(factored, g.reference, g.direction)
                assert response[line] == pytest.approx(g.value, abs=REL * scale[line])
                np.testing.assert_allclose(env.axle_positions(g), [x for x, _ in axles],
                                           rtol=0, atol=1e-12 * beam.length)
                if g.side == 0:
                    # exact position: an axle standing right on a shear section would make
                    # that concurrent shear two-valued; either limit is a true value
                    other = factor * static_effects(solver, effects, axles, parts, limit=1)
                    other_low = factor * static_effects(solver, effects, axles, parts, limit=-1)
                    ok = (np.isclose(response, other, rtol=0, atol=REL * scale)
                          | np.isclose(response, other_low, rtol=0, atol=REL * scale))
                    assert ok.all(), (kind, which, row)
                else:
                    expected = factor * static_effects(solver, effects, axles, parts,
                                                       limit=g.side)
                    bad = np.abs(response - expected) > REL * scale
                    assert not bad.any(), (kind, which, row, g, [
                        (effects[i], response[i], expected[i]) for i in np.flatnonzero(bad)])


def test_reference_and_direction_of_a_one_way_vehicle() -> None:
    """A heavy front axle and a light rear one on a simple span: the largest moment at
    midspan has the heavy axle at midspan and the light one behind it (towards −x when the
    vehicle runs towards +x); reversed runs are not considered. Source: statics of a simple
    span, common practice, no source."""
    L = 20.0
    beam = trundle.Beam(spans=[L])
    truck = trundle.Vehicle(loads=[10.0, 2.0], spacings=[4.0], reversible=False)
    env = trundle.envelope(beam, [truck], sections=[10.0], effects=("moment",))
    g = env.governing("moment", "max")[0]
    assert g.direction == 1
    np.testing.assert_allclose(env.axle_positions(g), [10.0, 6.0], atol=1e-9)
    assert g.value == pytest.approx(10.0 * L / 4 + 2.0 * 6.0 / 2, rel=1e-12)
    both = trundle.envelope(beam, [trundle.Vehicle(loads=[10.0, 2.0], spacings=[4.0])],
                            sections=[3.0], effects=("moment",))
    # at x = 3 the light axle is better placed ahead (x = 7) than behind (x = −1, off)
    g = both.governing("moment", "max")[0]
    assert g.direction == -1
    np.testing.assert_allclose(both.axle_positions(g), [3.0, 7.0], atol=1e-9)


def test_concurrent_shear_with_an_axle_a_rounding_off_the_section() -> None:
    """Two unit axles 0.15 apart on a unit simple span, largest moment at x = 0.3: one axle
    stands at the section (0.45 − 0.15 is one ulp off 0.3 in floating point), and the side
    the envelope reports says on which side of the shear jump it stands; with both axles just
    right of it, V = R_A = 0.55 + 0.7 = 1.25 (statics). Regression test."""
    beam = trundle.Beam(spans=[1.0])
    env = trundle.envelope(beam, [trundle.Vehicle(loads=[1.0, 1.0], spacings=[0.15])],
                           sections=[0.3], effects=("moment", "shear"))
    g = env.governing("moment", "max")[0]
    axles = [(x, 1.0) for x in env.axle_positions(g)]
    expected = static_effects(ReferenceSolver(beam, [0.3]), list(env.effects), axles,
                              limit=g.side)
    np.testing.assert_allclose(env.response_to(g), expected, rtol=0, atol=1e-12)


@pytest.mark.parametrize("placement", ["anywhere", "spans", "everywhere"])
def test_loaded_stretches_reproduce_the_placed_extreme(placement: str) -> None:
    rng = np.random.default_rng(7)
    beam = random_beam(rng, **SCAN_BEAMS)
    sections = random_sections(rng, beam, 2)
    env = trundle.envelope(beam, [trundle.UniformLoad(0.9, placement=placement)],
                           sections=sections, effects=("moment", "deflection", "reaction"))
    solver = ReferenceSolver(beam, sections)
    scale = _family_scale(env)
    for which in ("max", "min"):
        for line, g in enumerate(env.governing_max if which == "max" else env.governing_min):
            if g.case < 0:
                continue
            stretches, x_p = env.loaded_stretches(g)
            assert x_p is None
            res = solver.solve([], [(a, b, 0.9) for a, b in stretches])
            assert res.effect(env.effects[line]) == pytest.approx(g.value,
                                                                  abs=REL * scale[line])
            if placement == "spans":
                ends = set(beam.support_positions.tolist())
                assert all(a in ends and b in ends for a, b in stretches)


def test_concurrent_shear_of_uniform_load_with_point_load() -> None:
    """The concentrated load of a placed uniform load stands on the side of the shear jump
    that gives the extreme; the concurrent values must read that side. Regression test."""
    beam = trundle.Beam(spans=[10.0, 10.0])
    env = trundle.envelope(beam, [trundle.UniformLoad(1.0, point_load=5.0)], sections=[4.0],
                           effects=("shear",))
    for side in ("left", "right"):
        for which in ("max", "min"):
            g = env.governing("shear", which, side=side)[0]
            line = env.lines_of("shear", side=side)[0]
            assert env.response_to(g)[line] == pytest.approx(g.value, rel=1e-9), (side, which)


# --- absolute maxima per span ------------------------------------------------------------------


def test_absolute_moment_bounds_every_section_of_the_span() -> None:
    beam = trundle.Beam(spans=[8.0, 11.0], supports=["fixed", "pin", "pin"])
    truck = trundle.Vehicle(loads=[1.0, 3.0, 2.0], spacings=[1.2, 2.5])
    xs = np.linspace(0.0, 19.0, 96)
    env = trundle.envelope(beam, [truck], sections=xs, effects=("moment",))
    for a in env.absolute("moment"):
        lo, hi = beam.support_positions[a.span], beam.support_positions[a.span + 1]
        assert lo - 1e-12 <= a.x <= hi + 1e-12
        inside = (xs >= lo) & (xs <= hi)
        values = env.max("moment") if a.which == "max" else env.min("moment")
        sign = 1.0 if a.which == "max" else -1.0
        assert sign * a.value >= (sign * values[inside]).max() - 1e-9 * abs(a.value)
        # the governing axles reproduce the value at the reported section
        axles = list(zip(env.axle_positions(a.governing), truck.loads, strict=True))
        at = ReferenceSolver(beam, [a.x])
        value = static_effects(at, [trundle.Effect("moment", at=a.x)], axles,
                               limit=a.governing.side)[0]
        assert value == pytest.approx(a.value, rel=1e-9)


def test_absolute_extreme_of_placed_uniform_load_names_its_loaded_stretches() -> None:
    """The governing pattern of an absolute extreme must be readable on the envelope it is
    reported by (it was found on a temporary one). Regression test."""
    beam = trundle.Beam(spans=[10.0, 10.0])
    env = trundle.envelope(beam, [trundle.UniformLoad(1.0)], effects=("moment",))
    for a in env.absolute("moment"):
        stretches, _ = env.loaded_stretches(a.governing)
        res = ReferenceSolver(beam, [a.x]).solve([], [(x0, x1, 1.0) for x0, x1 in stretches])
        assert res.moment(a.x) == pytest.approx(a.value, rel=1e-9)


def test_load_factor_is_for_strength_only():
    # A strength load factor multiplies forces and moments but not deflection, which is a
    # service check (common practice, no source): the deflection envelope and its concurrent
    # values are those of the case without the load factor; forces are exactly 1.5 times.
    beam = trundle.Beam([10.0, 10.0])
    truck = trundle.Vehicle([10.0, 20.0], [3.0])
    plain = trundle.envelope(beam, [trundle.LoadCase(truck, factors=(("share", 0.5),))])
    factored = trundle.envelope(
        beam, [trundle.LoadCase(truck, factors=(("share", 0.5),), load_factor=1.5)])
    for kind in ("moment", "reaction"):
        np.testing.assert_allclose(factored.max(kind), 1.5 * plain.max(kind), rtol=1e-12)
    np.testing.assert_allclose(factored.max("deflection"), plain.max("deflection"), rtol=1e-12)
    g = factored.governing("deflection")[3]
    assert factored.response_to(g)[factored.lines_of("deflection")[3]] == pytest.approx(
        factored.max("deflection")[3], rel=1e-12)
    # across cases, deflection is chosen at service level: the heavier service load governs
    light_but_factored = trundle.LoadCase(truck, name="light", factors=(("share", 0.5),),
                                          load_factor=3.0)
    heavy = trundle.LoadCase(truck, name="heavy", factors=(("share", 0.6),))
    both = trundle.envelope(beam, [light_but_factored, heavy])
    assert {both.cases[g.case].name for g in both.governing("deflection")
            if g.case >= 0} == {"heavy"}
    assert {both.cases[g.case].name for g in both.governing("moment")
            if g.case >= 0} == {"light"}
    with pytest.raises(trundle.ModelError, match="load_factor"):
        trundle.LoadCase(truck, load_factor=0.0)


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_confined_vehicle_against_static_solves_on_the_beam(seed):
    # A confined group (a crane between end stops) stands only where every axle is on the
    # beam. Reference: static solves over allowed positions of the front axle, both ways,
    # on a fine grid plus the window ends (common practice, no source); the exact scan is at
    # least every sampled value and within the grid's reach of the best of them.
    rng = np.random.default_rng(seed)
    spans = list(rng.uniform(6.0, 12.0, size=2))
    beam = trundle.Beam(spans)
    loads = list(rng.uniform(10.0, 50.0, size=3))
    spacings = list(rng.uniform(1.0, 3.0, size=2))
    vehicle = trundle.Vehicle(loads, spacings, confined=True)
    sections = np.array([0.3 * spans[0], spans[0], spans[0] + 0.6 * spans[1]])
    env = trundle.envelope(beam, [vehicle], sections=sections, effects=("moment",))
    u = vehicle.axle_offsets()
    best = np.zeros(3)
    worst = np.zeros(3)
    for d in (u, u[-1] - u[::-1]):
        P = loads if d is u else loads[::-1]
        for xi in np.linspace(d[-1], beam.length + d[0], 1501):
            x = xi - d
            m = beam.static([PointLoad(float(xx), p) for xx, p in zip(x, P, strict=True)])
            values = m.moment(sections)
            best, worst = np.maximum(best, values), np.minimum(worst, values)
    scale = np.abs(np.concatenate([best, worst])).max()
    assert np.all(env.max("moment") >= best - 1e-9 * scale)
    assert np.all(env.min("moment") <= worst + 1e-9 * scale)
    np.testing.assert_allclose(env.max("moment"), best, atol=2e-3 * scale)
    for g in env.governing("moment"):
        if g.case >= 0:
            x = env.axle_positions(g)
            assert x.min() >= -1e-9 and x.max() <= beam.length + 1e-9


def test_loads_acting_together_add_their_own_worst_placements():
    # A lane load superposed on a design vehicle: each stands where it is worst for the
    # effect, so the envelope of the sum is the sum of the envelopes (common practice, no
    # source); concurrent values are the static solution with the axles where reported and
    # the lane on its reported stretches; deflection leaves out each part's load factor.
    beam = trundle.Beam([30.0, 30.0])
    truck = trundle.LoadCase(trundle.Vehicle([35.0, 145.0, 145.0], [4.3, (4.3, 9.0)],
                                             name="truck"), impact=0.33, load_factor=1.75)
    lane = trundle.LoadCase(trundle.UniformLoad(9.3, name="lane"), load_factor=1.75)
    both = trundle.Together((truck, lane), name="truck + lane")
    together = trundle.envelope(beam, [both])
    alone = [trundle.envelope(beam, [part]) for part in (truck, lane)]
    for kind in ("moment", "reaction", "deflection"):
        for which in ("max", "min"):
            expected = sum(getattr(e, which)(kind) for e in alone)
            np.testing.assert_allclose(getattr(together, which)(kind), expected, rtol=1e-12,
                                       atol=1e-12 * np.nanmax(np.abs(expected)))
    g = together.governing("moment", "min")[10]  # over the pier
    assert [p.case for p in g.parts] == [0, 1]
    axles = together.axle_positions(g)
    stretches, _ = together.loaded_stretches(g)
    # axle_positions keeps the listed axle order in either direction of travel
    loads = [PointLoad(float(x), 1.33 * 1.75 * p)
             for x, p in zip(axles, truck.load.loads, strict=True)]
    loads += [trundle.DistributedLoad(a, b, 9.3 * 1.75) for a, b in stretches]
    static = beam.static(loads)
    assert together.min("moment")[10] == pytest.approx(float(static.moment([30.0])[0]),
                                                       rel=1e-9)
    assert together.response_to(g)[together.lines_of("moment")[10]] == pytest.approx(
        together.min("moment")[10], rel=1e-12)
    with pytest.raises(trundle.ModelError, match="two or more"):
        trundle.Together((truck,))



def test_identical_lines_are_scanned_once_and_reported_for_each_effect():
    # Inside a span no point force acts at a section, so shear just left and just right of
    # it are one line (common practice, no source); the envelope scans it once and reports it
    # for both effects. Reference: each line scanned on its own with the scan engine, both
    # directions.
    from trundle.scan import LineBatch, scan_group

    beam = trundle.Beam([10.0, 12.0])
    truck = trundle.Vehicle([20.0, 40.0], [3.0])
    sections = np.array([3.0, 10.0, 15.0])
    env = trundle.envelope(beam, [truck], sections=sections, effects=("shear",))
    for side in ("left", "right"):
        lines = trundle.influence_batch(beam, "shear", at=sections, side=side)
        batch = LineBatch.from_set(lines)
        forward = scan_group(batch, truck.group())
        backward = scan_group(batch, truck.group().mirrored())
        # (the envelope reports rounding noise around an empty-beam zero as 0)
        np.testing.assert_allclose(env.max("shear", side=side),
                                   np.maximum(forward[:, 0], backward[:, 0]), rtol=1e-12,
                                   atol=1e-12)
        np.testing.assert_allclose(env.min("shear", side=side),
                                   np.minimum(forward[:, 3], backward[:, 3]), rtol=1e-12,
                                   atol=1e-12)
    inside = [0, 2]  # sections 3.0 and 15.0; 10.0 is the middle support
    np.testing.assert_array_equal(env.max("shear", side="left")[inside],
                                  env.max("shear", side="right")[inside])
    assert env.max("shear", side="left")[1] != env.max("shear", side="right")[1]
