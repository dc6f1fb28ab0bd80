"""The exact search of searched spacings and gaps (trundle.analysis.search,
trundle.scan.candidates).

References: the plain-Python twins of the compiled kernels (tests/naive_scan.py:
``plain_block_candidates``, ``plain_chain_maximum``; an axle standing exactly on an end of
the beam is valued by ``ReferenceSolver``, a static solve sharing no code with trundle, from
the definition of each effect); trundle's own exact fixed-spacing
envelope evaluated on a dense grid of the searched values plus a local refinement
(``dense_grid_search``: a lower bound of the true extreme), and at the values the search
reports (the extreme must be attained there). The two cases with numbers are invented beams
from an independent check of this tool (issue 7), whose values were confirmed by trundle's
fixed-spacing scan at spacings inside the ranges.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import example, given, settings
from hypothesis import strategies as st

import trundle
from conftest import make_crane
from naive_scan import (
    ReferenceSolver,
    dense_grid_search,
    fixed_spacing_extreme,
    plain_block_candidates,
    plain_chain_maximum,
    plain_end_positions,
    static_effects,
)
from trundle.analysis.search import plan_search
from trundle.core.beam import ModelError
from trundle.core.influence import line_pieces
from trundle.loads.cranes import buffer_gap
from trundle.scan.candidates import block_candidates, candidate_capacity, chain_maximum
from trundle.scan.engine import LineBatch


def _batch(beam, effects):
    return LineBatch.from_pieces(line_pieces(beam, effects))


END_SUPPORTS = {
    # every span between pins; or a free end (an overhang, a cantilever when there is one span)
    "pins": lambda n: ["pin"] * (n + 1),
    "free right": lambda n: ["fixed", "free"] if n == 1 else ["pin"] * n + ["free"],
    "free left": lambda n: ["free", "fixed"] if n == 1 else ["free"] + ["pin"] * n,
}


@settings(max_examples=40, deadline=None)
@given(seed=st.integers(0, 100_000), confined=st.booleans(), uniform=st.booleans(),
       supports=st.sampled_from(sorted(END_SUPPORTS)),
       section=st.sampled_from(["inside", "left end", "right end"]))
@example(seed=1614, confined=False, uniform=False, supports="pins", section="inside")  # two
# breaks a rounding step apart
@example(seed=38, confined=False, uniform=False, supports="free right", section="right end")
# a cantilever, shear at its free tip: 0 with no axle on the beam or one just off the tip,
# +1 with an axle standing exactly on it (it jumps there): only that exact position reads it
@example(seed=18, confined=False, uniform=True, supports="free right", section="right end")
@example(seed=49, confined=True, uniform=False, supports="free left", section="left end")
@example(seed=0, confined=False, uniform=False, supports="pins", section="left end")  # shear
# right of a pinned end: 0 with the axle on the support, 1 just right of it
@example(seed=37, confined=False, uniform=True, supports="free right", section="inside")
@example(seed=1733, confined=False, uniform=False, supports="free left", section="right end")
def test_block_candidates_match_the_plain_twin(seed, confined, uniform, supports, section):
    rng = np.random.default_rng(seed)
    spans = list(np.round(rng.uniform(3.0, 10.0, int(rng.integers(1, 4))), 1))
    beam = trundle.Beam(spans=spans, EI=1.0, supports=END_SUPPORTS[supports](len(spans)))
    x = float(np.round(rng.uniform(0.1, 0.9) * beam.length, 2))
    kind = str(rng.choice(["moment", "shear", "deflection"]))
    face = "left"
    if section != "inside":  # a section on an end: shear on the beam's side of it
        x, face = (0.0, "right") if section == "left end" else (float(beam.length), "left")
        if section == "right end" and kind == "moment":
            # the reference solver counts a support standing on the section as left of it:
            # on the right end that is the moment just beyond the beam (zero), not the
            # moment at the end that trundle's line gives (the couple of a fixed end)
            kind = "shear"
    effect = trundle.Effect(kind, at=x, **({"side": face} if kind == "shear" else {}))
    batch = _batch(beam, [effect])
    n = int(rng.integers(1, 4))
    weights = list(rng.uniform(10.0, 100.0, n))
    offsets = list(np.cumsum(np.round(rng.uniform(0.5, 4.0, n), 2)) - 0.5)
    kinds = [0] * n
    if uniform:  # a uniform load behind the last axle, of finite length
        weights += [3.0, -3.0]
        offsets += [offsets[-1] + 1.0, offsets[-1] + 6.0]
        kinds += [1, 1]
    m = int(batch.n_pieces[0])
    args = (batch.line_knots[0, :m + 1], batch.line_coef[0, :m], batch.line_running[0, :m],
            float(batch.running_end[0]))
    cap = candidate_capacity(len(weights), m)
    pos, val, side = np.empty(cap), np.empty(cap), np.empty(cap)
    k = block_candidates(batch.line_knots[0], m, batch.line_coef[0], batch.line_running[0],
                         batch.running_end[0], np.array(weights), np.array(kinds),
                         np.array(offsets), 4 if uniform else 3, confined,
                         int(batch.own_knot[0]), float(batch.own_value[0]),
                         bool(batch.end_live[0]), pos, val, side, 0)
    scale = sum(abs(w) for w in weights) * max(1.0, float(np.abs(batch.line_coef).max()))
    scale *= beam.length ** 3
    # the loads standing exactly where they are: a static solve of the beam (the reference
    # solver shares no code with trundle), from the definition of each effect
    solver = ReferenceSolver(beam, [x])

    def standing(loads):
        return float(static_effects(solver, [effect], loads)[0])

    plain = plain_block_candidates(*args, weights, kinds, offsets, confined, scale, standing)
    ends = sorted((p, s, v) for p, v, s in plain if s != 0.0)
    mine = sorted((p, s, v) for p, v, s in zip(pos[:k], val[:k], side[:k], strict=True)
                  if s != 0.0)
    assert len(ends) == len(mine)
    for (p0, s0, _), (p1, s1, _) in zip(ends, mine, strict=True):
        assert p1 == pytest.approx(p0, abs=1e-12 * beam.length) and s1 == s0
    # each one-sided value of one is a one-sided value of the other within a rounding step of
    # position: where two breaks fall a rounding step apart (an axle meets a section as
    # another meets a support), which side of the sliver an axle stands on is rounding
    step = 1e-12 * beam.length
    for this, other in ((ends, mine), (mine, ends)):
        for p0, _, v0 in this:
            assert any(abs(p1 - p0) <= step and abs(v1 - v0) <= 1e-9 * scale
                       for p1, _, v1 in other), (p0, v0)
    # an axle standing exactly on an end of the beam: the twin values every such position;
    # the kernel, on a line where that can differ from both one-sided limits (end_live),
    # gives the same position and value (side 0), and elsewhere one of its one-sided values
    # there is that value already (so leaving the position out loses nothing); a value of
    # the kernel's above the twin's fails the comparison of the extremes below
    axles = offsets[:n]  # the concentrated loads come first
    lo, hi = (max(axles), beam.length + min(axles)) if confined else (
        min(offsets), beam.length + max(offsets))
    on_end = plain_end_positions(beam.length, offsets, kinds, lo, hi) if lo < hi else []
    # (the twin puts them at exactly these positions; a critical point may fall a rounding
    # step from one)
    exact = [(p, v) for p, v, s in plain if s == 0.0 and p in on_end]
    assert len(exact) == len(on_end)
    for p0, v0 in exact:
        if batch.end_live[0]:  # (a critical point may also fall a rounding step from it)
            assert any(abs(pos[j] - p0) <= step and side[j] == 0.0
                       and abs(val[j] - v0) <= 1e-9 * scale for j in range(k)), (
                "no exact candidate where an axle stands on an end", p0, v0)
        assert any(abs(pos[j] - p0) <= step and abs(val[j] - v0) <= 1e-9 * scale
                   for j in range(k)), (p0, v0)
    # every interior critical point of the twin is a candidate of the kernel's (a critical
    # point, or a piece end where the twin finds a double root by rounding), same value
    for p0, v0, s0 in plain:
        if s0 == 0.0 and (p0, v0) not in exact:
            near = int(np.argmin(np.abs(pos[:k] - p0)))
            assert abs(pos[near] - p0) <= 1e-6 * beam.length
            assert val[near] == pytest.approx(v0, abs=1e-7 * scale)
    if k == 0:  # a confined block longer than the beam: nowhere to stand, in both
        assert not plain
        return
    # and the extremes over all candidates agree
    assert val[:k].max() == pytest.approx(max(v for _, v, _ in plain), abs=1e-9 * scale)
    assert val[:k].min() == pytest.approx(min(v for _, v, _ in plain), abs=1e-9 * scale)


@settings(max_examples=25, deadline=None)
@given(seed=st.integers(0, 100_000), n_blocks=st.integers(1, 3))
def test_chain_maximum_matches_every_combination(seed, n_blocks):
    rng = np.random.default_rng(seed)
    blocks = [sorted((float(p), float(v)) for p, v in
                     zip(np.round(rng.uniform(0, 20, int(rng.integers(1, 7))), 1),
                         rng.normal(size=7), strict=False)) for _ in range(n_blocks)]
    shifts = list(np.round(rng.uniform(0, 3, n_blocks), 1))
    ranges = [tuple(sorted(np.round(rng.uniform(-5, 15, 2), 1))) for _ in range(n_blocks - 1)]
    margin = 1e-9
    start = np.cumsum([0] + [len(b) for b in blocks]).astype(np.int64)
    pos = np.array([p for b in blocks for p, _ in b])
    signed = np.array([v for b in blocks for _, v in b])
    n = pos.size
    value, chosen = chain_maximum(
        pos, signed, start, np.arange(n_blocks, dtype=np.int64), n_blocks,
        np.array(shifts), np.arange(n_blocks, dtype=np.int64),
        np.array([r[0] for r in ranges] + [0.0]), np.array([r[1] for r in ranges] + [0.0]),
        margin, np.empty(n), np.empty(n, dtype=np.int64), np.empty(n, dtype=np.int64))
    expected = plain_chain_maximum(blocks, shifts, ranges, margin)
    assert value == pytest.approx(expected, abs=1e-12) or value == expected == -np.inf


def test_multi_peaked_spacing_is_found_globally():
    """Spans 20-1-20-1-20 m, two 100 kN axles, spacing searched in (5, 60) m: the moment at
    20.5 m has two peaks in the spacing; a fixed spacing of 20.92 m gives 24.273."""
    beam = trundle.Beam(spans=[20, 1, 20, 1, 20], EI=1.0, supports=["pin"] * 6)
    v = trundle.Vehicle(loads=[100.0, 100.0], spacings=[(5.0, 60.0)])
    e = trundle.envelope(beam, [v], sections=[20.5], effects=("moment",))
    found = float(e.max("moment")[0])
    assert found >= fixed_spacing_extreme(beam, v, [20.92], 20.5) >= 24.2725  # 24.273 rounded
    assert found >= 24.2728
    g = e.governing("moment")[0]
    attained = fixed_spacing_extreme(beam, v, g.searched, 20.5)
    assert attained == pytest.approx(found, rel=1e-12)
    reference = dense_grid_search(beam, v, 20.5, per_dimension=111)
    assert found >= reference - 1e-9 * abs(reference)


def test_three_searched_dimensions_hogging_over_pier():
    """Two spans of 40 m, two 35/145/145 kN trucks, rear spacings 4.3–9.0 m, gap 15–60 m:
    spacings 4.3/4.3 with the gap searched give −2444.9 over the pier."""
    beam = trundle.Beam(spans=[40, 40], EI=1.0, supports=["pin"] * 3)
    truck = trundle.Vehicle(loads=[35, 145, 145], spacings=[4.3, (4.3, 9.0)])
    train = trundle.Train(vehicles=[truck, truck], gaps=[(15.0, 60.0)])
    e = trundle.envelope(beam, [train], sections=[40.0], effects=("moment",))
    found = float(e.min("moment")[0])
    fixed = fixed_spacing_extreme(beam, train, [4.3, 25.565, 4.3], 40.0, which="min")
    assert found <= fixed + 1e-9 * abs(fixed)
    assert found <= -2444.9
    g = e.governing("moment", "min")[0]
    attained = fixed_spacing_extreme(beam, train, g.searched, 40.0, which="min")
    assert attained == pytest.approx(found, rel=1e-12)


def _random_vehicle(rng, dims):
    loads = list(np.round(rng.uniform(10.0, 100.0, dims + 1), 0))
    spacings = [(float(a), float(a + rng.uniform(1.0, 8.0)))
                for a in np.round(rng.uniform(0.5, 4.0, dims), 1)]
    return trundle.Vehicle(loads=loads, spacings=spacings)


@settings(max_examples=6, deadline=None)
@given(seed=st.integers(0, 10_000), dims=st.integers(1, 3))
def test_never_below_the_dense_grid_and_always_attained(seed, dims):
    rng = np.random.default_rng(seed)
    spans = list(np.round(rng.uniform(4.0, 12.0, int(rng.integers(1, 4))), 1))
    if rng.uniform() < 0.5:  # short spans between long ones: several peaks in the spacing
        spans = [spans[0], 1.0, *spans[1:]]
    beam = trundle.Beam(spans=spans, EI=1.0, supports=["pin"] * (len(spans) + 1))
    v = _random_vehicle(rng, dims)
    x = float(np.round(rng.uniform(0.2, 0.8) * beam.length, 2))
    for kind, which in (("moment", "max"), ("moment", "min"), ("shear", "max")):
        e = trundle.envelope(beam, [v], sections=[x], effects=(kind,))
        found = float((e.max(kind) if which == "max" else e.min(kind))[0])
        g = e.governing(kind, which)[0]
        if g.case >= 0:
            attained = fixed_spacing_extreme(beam, v, g.searched, x, kind, which)
            assert attained == pytest.approx(found, rel=1e-9, abs=1e-9)
        per = {1: 61, 2: 13, 3: 6}[dims]
        reference = dense_grid_search(beam, v, x, kind, which, per_dimension=per, refine=2)
        scale = max(1.0, abs(reference))
        if which == "max":
            assert found >= reference - 1e-9 * scale
        else:
            assert found <= reference + 1e-9 * scale


@settings(max_examples=5, deadline=None)
@given(seed=st.integers(0, 10_000))
def test_adding_a_case_never_weakens_the_envelope(seed):
    """The envelope of a set of loads is, line by line, the worst of each load alone."""
    rng = np.random.default_rng(seed)
    beam = trundle.Beam(spans=[float(rng.uniform(8, 20)), float(rng.uniform(8, 20))], EI=1.0,
                        supports=["pin"] * 3)
    a = trundle.Vehicle(loads=list(np.round(rng.uniform(20, 120, 2))),
                        spacings=[(float(rng.uniform(1, 3)), float(rng.uniform(4, 9)))])
    b = trundle.Vehicle(loads=list(np.round(rng.uniform(20, 120, 3))),
                        spacings=[float(rng.uniform(1, 3)),
                                  (float(rng.uniform(1, 3)), float(rng.uniform(4, 9)))])
    c = trundle.Vehicle(loads=[float(rng.uniform(50, 200))])
    sections = beam.tenth_points()
    effects = ("moment", "shear", "reaction")
    loads = (a, b, c)
    both = trundle.envelope(beam, loads, sections=sections, effects=effects)
    alone = [trundle.envelope(beam, [load], sections=sections, effects=effects)
             for load in loads]
    assert np.array_equal(both.maximum, np.max([e.maximum for e in alone], axis=0))
    assert np.array_equal(both.minimum, np.min([e.minimum for e in alone], axis=0))


def test_confined_crane_pair_matches_a_brute_force_over_the_gap():
    """Two test cranes between end stops on a 16 m simple span, clear gap searched from
    buffers touching to 12 m apart (part of the range cannot stand): the exact search against
    the fixed-gap scan on a fine grid of gaps with a local refinement. (On a 12 m span the
    pair cannot stand at any gap, which the envelope refuses.)"""
    beam = trundle.Beam(spans=[16.0], EI=1.0, supports=["pin", "pin"])
    crane = make_crane()
    wheels = crane.vehicle("loaded", confined=True)
    touching = buffer_gap(crane, crane)
    train = trundle.Train((wheels, wheels), ((touching, touching + 12.0),), confined=True)
    for kind, which, x in (("moment", "max", 8.0), ("moment", "max", 6.4),
                           ("shear", "max", 1.6), ("shear", "min", 9.3)):
        e = trundle.envelope(beam, [train], sections=[x], effects=(kind,))
        found = float((e.max(kind) if which == "max" else e.min(kind))[0])
        reference = dense_grid_search(beam, train, x, kind, which, per_dimension=241)
        sign = 1.0 if which == "max" else -1.0
        assert sign * found >= sign * reference - 1e-9 * abs(reference)
        # and not above what some gap really gives
        assert found == pytest.approx(reference, rel=1e-6)
        g = e.governing(kind, which)[0]
        assert touching <= g.searched[0] <= touching + 12.0
        attained = fixed_spacing_extreme(beam, train, g.searched, x, kind, which)
        assert attained == pytest.approx(found, rel=1e-9)


def test_five_searched_dimensions_run_and_are_attained():
    beam = trundle.Beam(spans=[20.0, 24.0], EI=1.0, supports=["pin"] * 3)
    truck = trundle.Vehicle(loads=[35, 145, 145], spacings=[(3.0, 6.0), (4.3, 9.0)])
    train = trundle.Train(vehicles=[truck, truck], gaps=[(15.0, 60.0)])
    assert len(train.parameters()) == 5
    sections = [10.0, 20.0, 30.0]
    e = trundle.envelope(beam, [train], sections=sections, effects=("moment",))
    coarse = trundle.envelope(beam, [train], sections=sections, effects=("moment",),
                              refine=False)
    assert np.all(e.max("moment") >= coarse.max("moment") - 1e-9)
    assert np.all(e.min("moment") <= coarse.min("moment") + 1e-9)
    for j, x in enumerate(sections):
        for which in ("max", "min"):
            g = e.governing("moment", which)[j]
            value = float((e.max("moment") if which == "max" else e.min("moment"))[j])
            if g.case < 0:  # the empty beam governs (no sagging over the pier)
                assert value == 0.0
                continue
            attained = fixed_spacing_extreme(beam, train, g.searched, x, "moment", which)
            assert attained == pytest.approx(value, rel=1e-9)


def test_searched_values_that_are_not_a_chain_are_refused():
    """Two loads moved by different searched values, neither containing the other."""
    slope = np.array([[0.0, 1.0, 0.0], [0.0, 0.0, 1.0]])
    with pytest.raises(ModelError, match="chain"):
        plan_search(np.ones(3), np.zeros(3, dtype=np.int64), np.zeros(3), slope,
                    np.array([1.0, 1.0]), np.array([2.0, 2.0]))


def test_plan_of_a_train_is_a_chain_with_merged_blocks():
    """Three axles, both spacings searched: three sub-groups, two links, 9 assignments; the
    block of all three sub-groups comes in 4 kinds (each link at its lower or upper bound)."""
    slope = np.array([[0.0, 1.0, 1.0], [0.0, 0.0, 1.0]])
    plan = plan_search(np.ones(3), np.zeros(3, dtype=np.int64), np.array([0.0, 0.0, 0.0]),
                       slope, np.array([1.0, 2.0]), np.array([3.0, 5.0]))
    assert plan.n_links == 2 and plan.assign_codes.shape == (9, 2)
    assert plan.link_lo.tolist() == [1.0, 2.0] and plan.link_hi.tolist() == [3.0, 5.0]
    assert plan.block_shift.size == 3 + 2 * 2 + 4
    values = plan.parameter_values(np.array([2.0, 4.0]), np.array([1.0, 2.0]),
                                   np.array([3.0, 5.0]))
    assert values.tolist() == [2.0, 4.0]


def test_confined_pair_spanning_the_whole_beam_is_the_limit_of_standing():
    """Overhangs 3-4-3 m, two 2-wheel cranes (1 m wheelbase) between end stops, gap searched
    0.5–20 m: the worst deflection at 2.1 m has the wheels at both end stops (gap 8 m, the
    loads spanning the beam exactly). The search reports that limit, at a gap a hair inside
    where the fixed-gap scan confirms it; the dense grid over the gap approaches it from
    below."""
    beam = trundle.Beam(spans=[3.0, 4.0, 3.0], EI=1.0, supports=["free", "pin", "pin", "free"])
    wheel = trundle.Vehicle(loads=[100.0, 100.0], spacings=[1.0], confined=True)
    train = trundle.Train((wheel, wheel), ((0.5, 20.0),), confined=True)
    e = trundle.envelope(beam, [train], sections=[2.1], effects=("deflection",))
    found = float(e.max("deflection")[0])
    g = e.governing("deflection")[0]
    assert g.searched[0] == pytest.approx(8.0, abs=1e-9)
    attained = fixed_spacing_extreme(beam, train, g.searched, 2.1, "deflection")
    assert attained == pytest.approx(found, rel=1e-9)
    reference = dense_grid_search(beam, train, 2.1, "deflection", per_dimension=196)
    assert found >= reference - 1e-9 * abs(reference)
    assert found == pytest.approx(reference, rel=1e-6)


def test_train_with_attached_uniform_loads_and_a_searched_gap():
    """Uniform load ahead (finite) and behind (unlimited) a train of two trucks, spacing and gap
    searched (quartic pieces): never below the dense grid, attained at the values found."""
    beam = trundle.Beam(spans=[12.0, 1.5, 12.0], EI=1.0, supports=["pin"] * 4)
    truck = trundle.Vehicle(loads=[50, 80], spacings=[(2.0, 6.0)])
    train = trundle.Train((truck, truck), ((3.0, 20.0),),
                          ahead=trundle.AttachedUniform(5.0, 4.0, 1.0),
                          behind=trundle.AttachedUniform(3.0, gap=2.0))
    for x, kind, which in ((12.75, "moment", "min"), (18.0, "deflection", "max")):
        e = trundle.envelope(beam, [train], sections=[x], effects=(kind,))
        found = float((e.max(kind) if which == "max" else e.min(kind))[0])
        g = e.governing(kind, which)[0]
        attained = fixed_spacing_extreme(beam, train, g.searched, x, kind, which)
        assert attained == pytest.approx(found, rel=1e-9)
        reference = dense_grid_search(beam, train, x, kind, which, per_dimension=7, refine=2)
        sign = 1.0 if which == "max" else -1.0
        assert sign * found >= sign * reference - 1e-9 * abs(reference)


def test_searched_spacing_counts_an_axle_standing_on_a_free_tip():
    """Issue 7 item 4 with a searched spacing: shear just left of a free tip with an axle
    standing on the tip. Statics of the tip (closed form): the shear just left of a free end
    carries the whole load standing on it, so the max is the heaviest axle, 145 kN. The exact
    search once gave 0 there (its candidates lacked the load standing on the end) and its
    self-check refused the result; a dense grid of fixed spacings is the lower bound."""
    beam = trundle.Beam(spans=[20, 25, 20], EI=1e6,
                        supports=["pin", "pin", trundle.Spring(1e4), "free"], hinges=[30])
    v = trundle.Vehicle(loads=[35, 145, 145], spacings=[4.3, (4.3, 9.0)])
    e = trundle.envelope(beam, [v], sections=[65.0], effects=("shear",))
    found = float(e.max("shear_left")[0])
    assert found == pytest.approx(145.0, rel=1e-12)
    grid = max(float(trundle.envelope(beam, [trundle.Vehicle(loads=[35, 145, 145],
                                                             spacings=[4.3, s])],
                                      sections=[65.0], effects=("shear",)).max("shear_left")[0])
               for s in np.linspace(4.3, 9.0, 11))
    assert found >= grid - 1e-9 * abs(grid)


def test_a_group_just_right_of_a_section_with_its_last_axle_on_a_free_tip():
    """A cantilever 8.32 m long beyond its only rigid support, one spacing searched 2.0–6.21 m:
    the worst shear on the cantilever has the group just right of a section with its last
    axle on the free tip. The search reaches that value as a limit (the spacing a hair
    shorter than the one that puts the last axle exactly on the tip); it used to stop with an
    internal error because the fixed-spacing check looked only at the exact spacing found.

    Closed form (statics of a cantilever, common practice, no source): the shear at a section
    of the cantilever is the sum of the loads standing between it and the tip (each counted
    whole), so its largest value is the heaviest run of consecutive axles whose shortest
    length fits in the distance to the tip; nothing left of the section counts."""
    beam = trundle.Beam([7.18, 5.02, 3.3], EI=4.88,
                        supports=(trundle.Spring(k=1.75, kr=19.8), "pin", "free", "free"))
    loads, fixed, (low, high) = [57.0, 101.8, 95.5], 2.8, (2.0, 6.21)
    vehicle = trundle.Vehicle(loads, [fixed, (low, high)])
    e = trundle.envelope(beam, [vehicle], effects=("shear",))
    runs = [(57.0, 0.0), (101.8, 0.0), (95.5, 0.0), (57.0 + 101.8, fixed),
            (101.8 + 95.5, low), (sum(loads), fixed + low)]
    tip = 15.5
    checked = 0
    for x, top, bottom in zip(e.sections, e.max("shear"), e.min("shear"), strict=True):
        if not 7.18 < x < tip:
            continue
        expected = max(total for total, length in runs if length <= tip - x + 1e-12)
        assert top == pytest.approx(expected, rel=1e-12), x
        assert bottom == pytest.approx(0.0, abs=1e-9), x
        checked += 1
    assert checked >= 10
    assert max(e.max("shear")) == pytest.approx(254.3, rel=1e-12)  # all three on the cantilever
