"""The exact envelope against a brute-force scan that shares no code with trundle's scan.

The brute force (tests/naive_scan.py) moves the loads across the beam on a fine grid, solves
the beam statically at every position, refines the promising grid maxima between their
neighbours with scipy's bounded scalar minimiser and evaluates the kink and jump positions
exactly. Random beams (1–3 spans; pins, fixed and free ends, springs with and without a
rotational spring, hinges, stepped EI) and random vehicles (2–5 axles, both directions),
trains with gaps and attached uniform load (finite and unlimited), searched spacings and
gaps, and uniform load placed anywhere / on whole spans / everywhere. Agreement: 1e-9
relative to the largest |value| of the effect's kind (1e-6 where a spacing is searched).
Source: independent brute-force reference, common practice, no source.
"""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest
from scipy.optimize import brentq, minimize_scalar

import trundle
from conftest import SCAN_BEAMS, random_beam
from naive_scan import (
    Arrangement,
    BruteForce,
    ReferenceSolver,
    beam_nodes,
    effects_at,
    random_axles,
    random_sections,
)
from trundle.core.statics import DistributedLoad, PointLoad
from trundle.scan import LineBatch, TermGroup, scan_group

REL = 1e-9


def _by_effect(env: trundle.Envelope) -> dict[trundle.Effect, int]:
    return {e: i for i, e in enumerate(env.effects)}


def _assert_envelope_matches(env: trundle.Envelope, effects: list[trundle.Effect],
                             expected_max: np.ndarray, expected_min: np.ndarray,
                             rel: float = REL) -> None:
    index = _by_effect(env)
    kinds = np.array([e.kind for e in effects])
    for j, e in enumerate(effects):
        same = kinds == e.kind
        # a family that is zero up to rounding (moment at a pinned end) is measured in units
        scale = max(np.abs(expected_max[same]).max(), np.abs(expected_min[same]).max(), 1e-6)
        i = index[e]
        assert env.maximum[i] == pytest.approx(expected_max[j], abs=rel * scale), (e, "max")
        assert env.minimum[i] == pytest.approx(expected_min[j], abs=rel * scale), (e, "min")


def _axles(loads: list[float], spacings: list[float], start: float = 0.0
           ) -> list[tuple[float, float]]:
    u = start + np.concatenate([[0.0], np.cumsum(spacings)])
    return list(zip(u.tolist(), loads, strict=True))


# --- the static reference itself ----------------------------------------------------------------


def test_reference_solver_closed_forms() -> None:
    """Simply supported span L, point load P at a (b = L − a): R_A = Pb/L, M = Pab/L under
    the load, V = Pb/L just left of it and −Pa/L just right, deflection Pa²b²/(3EIL) under
    it. Source: Roark's Formulas for Stress and Strain, simply supported beam, concentrated
    load (from memory)."""
    L, P, a, EI = 10.0, 3.0, 3.0, 7.0
    b = L - a
    beam = trundle.Beam(spans=[L], EI=EI)
    res = ReferenceSolver(beam, [a]).solve([(a, P)])
    assert res.reactions[0] == pytest.approx(P * b / L, rel=1e-13)
    assert res.moment(a) == pytest.approx(P * a * b / L, rel=1e-13)
    assert res.shear(a, "left") == pytest.approx(P * b / L, rel=1e-13)
    assert res.shear(a, "right") == pytest.approx(-P * a / L, rel=1e-13)
    assert res.deflection(a) == pytest.approx(P * a**2 * b**2 / (3 * EI * L), rel=1e-12)
    # propped cantilever (fixed at 0, pin at L), uniform w: R_B = 3wL/8, fixed-end moment
    # −wL²/8. Source: Roark's Formulas, fixed–supported beam, uniform load (from memory).
    w = 2.0
    propped = trundle.Beam(spans=[L], EI=EI, supports=["fixed", "pin"])
    res = ReferenceSolver(propped, [0.5 * L]).solve([], [(0.0, L, w)])
    assert res.reactions[1] == pytest.approx(3 * w * L / 8, rel=1e-12)
    assert res.moment(0.0) == pytest.approx(-w * L**2 / 8, rel=1e-12)


@pytest.mark.parametrize("seed", range(6))
def test_reference_solver_agrees_with_beam_static(seed: int) -> None:
    """Two independent static solvers agree, loads anywhere (a hair from a node too)."""
    rng = np.random.default_rng(seed)
    beam = random_beam(rng, **SCAN_BEAMS)
    sections = random_sections(rng, beam, 3)
    effects = effects_at(beam, sections)
    nodes = beam_nodes(beam)
    points = [float(rng.uniform(0.0, beam.length)),
              float(rng.choice(nodes) + rng.choice([-1.0, 1.0]) * 1e-6)]
    points = [min(max(x, 0.0), beam.length) for x in points]
    points.append(float(rng.choice(nodes)))
    points = [x for x in points if min(abs(x - s) for s in sections) > 0.05]
    P = rng.uniform(0.5, 2.0, len(points))
    a, b = sorted(rng.uniform(0.0, beam.length, 2))
    res = beam.static([PointLoad(x, p) for x, p in zip(points, P, strict=True)]
                      + [DistributedLoad(a, b, 0.7)])
    ref = ReferenceSolver(beam, sections).solve(list(zip(points, P, strict=True)),
                                                [(a, b, 0.7)])
    for e in effects:
        value = {"reaction": lambda e: res.reactions[e.support],
                 "support_moment": lambda e: res.support_moments[e.support],
                 "moment": lambda e: res.moment([e.at])[0],
                 "shear": lambda e: res.shear([e.at], e.side)[0],
                 "deflection": lambda e: res.deflection([e.at])[0]}[e.kind](e)
        assert value == pytest.approx(ref.effect(e), rel=1e-10, abs=1e-10), e


HINGED = dict(spans=[10.0, 10.0, 10.0], EI=[(0.0, 15.0, 1.0), (15.0, 30.0, 2.0)],
              supports=["fixed", "pin", trundle.Spring(0.05), "free"], hinges=[5.0])


@pytest.mark.parametrize("node", [0.0, 5.0, 10.0, 15.0, 20.0, 30.0])
def test_beam_static_with_a_load_a_hair_from_a_node(node: float) -> None:
    """A load very close to a fixed end, hinge, pin, stiffness step, spring or free end.
    Regression test: beam.static once made the load point a node, and the very short element
    cost it digits (1e-5 wrong at 1e-3 from a hinge) or was refused as "unstable"."""
    beam = trundle.Beam(**HINGED)
    solver = ReferenceSolver(beam, [12.3])
    effects = [trundle.Effect("reaction", support=k) for k in range(3)] + [
        trundle.Effect("support_moment", support=0), trundle.Effect("moment", at=12.3)]
    for distance in (1e-3, 1e-5, 1e-7):
        for x in (node - distance, node + distance):
            if not 0.0 <= x <= beam.length:
                continue
            res = beam.static([PointLoad(x, 1.0)])
            assert res.reactions.sum() == pytest.approx(1.0, rel=1e-9)  # vertical equilibrium
            found = [*res.reactions[:3], res.support_moments[0], res.moment([12.3])[0]]
            ref = solver.solve([(x, 1.0)])
            expected = [ref.effect(e) for e in effects]
            np.testing.assert_allclose(found, expected, rtol=0, atol=1e-9 * beam.length)


# --- vehicles ---------------------------------------------------------------------------------


@pytest.mark.parametrize("seed", range(6))
def test_vehicle_envelope_matches_brute_force(seed: int) -> None:
    rng = np.random.default_rng(seed)
    beam = random_beam(rng, **SCAN_BEAMS)
    sections = random_sections(rng, beam, 2)
    effects = effects_at(beam, sections)
    loads, spacings = random_axles(rng, beam)
    vehicle = trundle.Vehicle(loads=loads, spacings=spacings)
    env = trundle.envelope(beam, [vehicle], sections=sections)
    high, low = BruteForce(beam, effects).extremes(Arrangement(tuple(_axles(loads, spacings))))
    _assert_envelope_matches(env, effects, high, low)


@pytest.mark.parametrize("seed", range(4))
def test_sections_at_supports_and_hinges_match_brute_force(seed: int) -> None:
    """Sections on the nodes (an end, supports, hinges: shear jumps and kinks of the line
    coincide with the beam's own breaks), one to three axles, two of them side by side."""
    rng = np.random.default_rng(seed + 1000)
    beam = random_beam(rng, **SCAN_BEAMS)
    nodes = [float(x) for x in beam_nodes(beam) if x < beam.length]
    sections = sorted(rng.choice(nodes, size=min(3, len(nodes)), replace=False).tolist())
    effects = effects_at(beam, sections)
    n = int(rng.integers(1, 4))
    loads = np.round(rng.uniform(0.5, 3.0, n), 3).tolist()
    spacings = np.round(rng.uniform(0.0, 0.3, n - 1) * beam.length, 3).tolist()
    if n > 2:
        spacings[0] = 0.0
    env = trundle.envelope(beam, [trundle.Vehicle(loads=loads, spacings=spacings)],
                           sections=sections)
    high, low = BruteForce(beam, effects).extremes(Arrangement(tuple(_axles(loads, spacings))))
    _assert_envelope_matches(env, effects, high, low)


def test_one_way_vehicle_matches_brute_force_in_its_direction() -> None:
    rng = np.random.default_rng(42)
    beam = random_beam(rng, **SCAN_BEAMS)
    sections = random_sections(rng, beam, 2)
    effects = effects_at(beam, sections, kinds=("moment", "shear"))
    loads, spacings = [3.0, 1.0, 0.5], [0.2 * beam.length, 0.1 * beam.length]
    vehicle = trundle.Vehicle(loads=loads, spacings=spacings, reversible=False)
    env = trundle.envelope(beam, [vehicle], sections=sections, effects=("moment", "shear",
                                                                        "reaction",
                                                                        "support_moment"))
    high, low = BruteForce(beam, effects).extremes(
        Arrangement(tuple(_axles(loads, spacings))), reversible=False)
    _assert_envelope_matches(env, effects, high, low)


# --- trains with gaps and attached uniform load ---------------------------------------------------


TRAINS = ["ahead-unlimited", "behind-unlimited", "ahead-finite", "behind-finite", "both"]


def _train(rng: np.random.Generator, beam: trundle.Beam, variant: str
           ) -> tuple[trundle.Train, Arrangement]:
    """A random two-vehicle train and the same loads written out by hand in group
    coordinates (front axle at u = 0, u growing backwards)."""
    loads1, spacings1 = random_axles(rng, beam, 1, 3)
    loads2, spacings2 = random_axles(rng, beam, 2, 3)
    gap = float(np.round(rng.uniform(0.1, 0.4) * beam.length, 3))
    w = float(np.round(rng.uniform(0.1, 0.6), 3))
    clear = float(np.round(rng.uniform(0.0, 0.1) * beam.length, 3))
    reach = float(np.round(rng.uniform(0.2, 0.7) * beam.length, 3))
    first = _axles(loads1, spacings1)
    second = _axles(loads2, spacings2, start=first[-1][0] + gap)
    back = second[-1][0]
    ahead = behind = None
    uniform: list[tuple[float, float, float]] = []
    if variant.startswith("ahead") or variant == "both":
        length = math.inf if variant != "ahead-finite" else reach
        ahead = trundle.AttachedUniform(w, length=length, gap=clear)
        uniform.append((-clear - length, -clear, w))
    if variant.startswith("behind") or variant == "both":
        length = math.inf if variant != "behind-finite" else reach
        behind = trundle.AttachedUniform(0.5 * w, length=length, gap=clear)
        uniform.append((back + clear, back + clear + length, 0.5 * w))
    train = trundle.Train(vehicles=[trundle.Vehicle(loads=loads1, spacings=spacings1),
                                    trundle.Vehicle(loads=loads2, spacings=spacings2)],
                          gaps=[gap], ahead=ahead, behind=behind)
    return train, Arrangement(tuple(first + second), tuple(uniform))


@pytest.mark.parametrize("variant", TRAINS)
def test_train_envelope_matches_brute_force(variant: str) -> None:
    rng = np.random.default_rng(TRAINS.index(variant) + 100)
    beam = random_beam(rng, **SCAN_BEAMS)
    sections = random_sections(rng, beam, 2)
    effects = effects_at(beam, sections)
    train, arrangement = _train(rng, beam, variant)
    env = trundle.envelope(beam, [train], sections=sections)
    high, low = BruteForce(beam, effects).extremes(arrangement)
    _assert_envelope_matches(env, effects, high, low)


# --- searched spacings and gaps ---------------------------------------------------------------


def _fixed_spacing_extremes(batch: LineBatch, group: TermGroup) -> np.ndarray:
    """(n_lines, 2): max and min over both directions for one fixed spacing."""
    forward, backward = scan_group(batch, group), scan_group(batch, group.mirrored())
    return np.stack([np.maximum(forward[:, 0], backward[:, 0]),
                     np.minimum(forward[:, 3], backward[:, 3])], axis=1)


def _check_searched(env: trundle.Envelope, load, low: float, high: float) -> None:
    """The found spacing lies in the range; the envelope is at least the envelope of every
    fixed spacing on a grid; and it agrees with a fine search over the spacing (201 values,
    then a bounded refinement around the best, each an exact scan at that fixed spacing)."""
    batch = env.batch
    grid = np.linspace(low, high, 201)
    table = np.array([_fixed_spacing_extremes(batch, load.group([s])) for s in grid])
    family_scale = np.zeros(batch.n_lines)
    for lines in env.index.values():
        if lines.size:
            family_scale[lines] = np.abs(table[:, lines]).max()
    for w, which in ((0, "max"), (1, "min")):
        sign = 1.0 if w == 0 else -1.0
        governing = env.governing_max if w == 0 else env.governing_min
        values = env.maximum if w == 0 else env.minimum
        for j, g in enumerate(governing):
            scale = family_scale[j]
            if g.case >= 0:
                assert len(g.searched) == 1
                assert low - 1e-12 <= g.searched[0] <= high + 1e-12, (which, j, g.searched)
            column = sign * table[:, j, w]
            assert sign * values[j] >= column.max() - 1e-12 * scale, (which, j)
            k = int(np.argmax(column))
            res = minimize_scalar(
                lambda s, j=j, w=w, sign=sign: -sign * _fixed_spacing_extremes(
                    batch, load.group([s]))[j, w],
                bounds=(grid[max(k - 1, 0)], grid[min(k + 1, 200)]), method="bounded",
                options={"xatol": 1e-10 * (high - low)})
            fine = max(column.max(), -res.fun)
            assert sign * values[j] == pytest.approx(fine, abs=1e-6 * scale), (which, j)


def test_searched_axle_spacing() -> None:
    """A three-axle vehicle with a variable rear spacing on a continuous beam."""
    beam = trundle.Beam(spans=[9.0, 12.0, 8.0], supports=["pin", "pin", "pin", "fixed"],
                        EI=[(0.0, 14.0, 2.0), (14.0, 29.0, 3.0)])
    low, high = 1.5, 6.0
    truck = trundle.Vehicle(loads=[1.0, 4.0, 4.0], spacings=[2.0, (low, high)])
    env = trundle.envelope(beam, [truck], sections=[4.1, 9.0, 15.3, 25.0],
                           effects=("moment", "reaction", "support_moment"))
    _check_searched(env, truck, low, high)


@pytest.mark.parametrize("where, reach", [("behind", math.inf), ("behind", 6.0),
                                          ("ahead", math.inf), ("ahead", 6.0)])
def test_searched_gap_of_a_train_with_uniform_load(where: str, reach: float) -> None:
    beam = trundle.Beam(spans=[10.0, 14.0, 10.0])
    low, high = 2.0, 12.0
    lead = trundle.Vehicle(loads=[2.0, 2.0], spacings=[1.5])
    part = trundle.AttachedUniform(0.3, length=reach, gap=1.0)
    train = trundle.Train(vehicles=[lead, lead], gaps=[(low, high)],
                          **{where: part})
    sections = [5.0, 10.0, 17.0]
    env = trundle.envelope(beam, [train], sections=sections,
                           effects=("moment", "shear", "reaction"))
    _check_searched(env, train, low, high)
    # at the gap found for the largest support moment, the brute force agrees exactly
    effects = [trundle.Effect("moment", at=10.0)]
    gap = env.governing("moment", "min")[1].searched[0]
    axles = _axles([2.0, 2.0, 2.0, 2.0], [1.5, gap, 1.5])
    back = axles[-1][0]
    uniform = ((back + 1.0, back + 1.0 + reach, 0.3) if where == "behind"
               else (-1.0 - reach, -1.0, 0.3))
    _, low_bf = BruteForce(beam, effects).extremes(Arrangement(tuple(axles), (uniform,)))
    assert env.min("moment")[1] == pytest.approx(low_bf[0], rel=REL)


# --- uniform load placed anywhere, on whole spans, everywhere ------------------------------------


def _sign_stretches(solver: ReferenceSolver, effects: list[trundle.Effect],
                    samples: int = 2000) -> dict[tuple[int, float], list[tuple[float, float]]]:
    """For every effect and sign: the stretches where a unit load gives the effect that sign.
    Sampled between the points where a line may jump or kink, each sign change pinned down
    by brentq on the static solve."""
    L = solver.beam.length

    def unit(x: float) -> np.ndarray:
        res = solver.solve([(x, 1.0)])
        return np.array([res.effect(e) for e in effects])

    marks = sorted({*beam_nodes(solver.beam).tolist(),
                    *(float(e.at) for e in effects if e.at is not None)})
    stretches = []
    for a, b in zip(marks[:-1], marks[1:], strict=True):
        xs = np.linspace(a, b, max(8, int(samples * (b - a) / L)))[1:-1]
        stretches.append((a, b, xs, np.array([unit(x) for x in xs])))
    out = {}
    for j in range(len(effects)):
        cuts: list[float] = []
        for a, _, xs, table in stretches:
            cuts.append(a)
            v = table[:, j]
            for k in np.flatnonzero(np.sign(v[:-1]) * np.sign(v[1:]) < 0):
                cuts.append(brentq(lambda x, j=j: unit(x)[j], xs[k], xs[k + 1],
                                   xtol=1e-14 * L))
        cuts.append(L)
        for sign in (1.0, -1.0):
            out[j, sign] = [(a, b) for a, b in zip(cuts[:-1], cuts[1:], strict=True)
                            if b > a and sign * unit(0.5 * (a + b))[j] > 0]
    return out


@pytest.mark.parametrize("seed", range(3))
def test_placed_uniform_load_matches_brute_force(seed: int) -> None:
    rng = np.random.default_rng(seed + 200)
    beam = random_beam(rng, **SCAN_BEAMS)
    sections = random_sections(rng, beam, 2)
    effects = effects_at(beam, sections)
    solver = ReferenceSolver(beam, sections)
    w, P = 0.8, 1.7
    cases = [trundle.UniformLoad(w, placement=p, point_load=P)
             for p in ("anywhere", "spans", "everywhere")]
    envs = [trundle.envelope(beam, [case], sections=sections) for case in cases]
    # P × the largest and smallest ordinate, from a brute-force scan of one unit load
    high_1, low_1 = BruteForce(beam, effects).extremes(Arrangement(((0.0, 1.0),)))
    ends = beam.support_positions
    spans = list(zip(ends[:-1], ends[1:], strict=True))
    stretches = _sign_stretches(solver, effects)
    for j, e in enumerate(effects):
        # anywhere: w over the stretches where a unit load acts in the wanted sense
        anywhere = [solver.solve([], [(a, b, w) for a, b in stretches[j, s]]).effect(e)
                    for s in (1.0, -1.0)]
        # whole spans: every combination of loaded spans
        per_combination = [solver.solve([], [(a, b, w) for (a, b), on in zip(spans, mask,
                                                                            strict=True) if on])
                           .effect(e) if any(mask) else 0.0
                           for mask in itertools.product([False, True], repeat=len(spans))]
        full = solver.solve([], [(0.0, beam.length, w)]).effect(e)
        # the concentrated load travels with the uniform load and stands at the worst point;
        # placed everywhere, the load is on the whole beam or absent
        expected = {"anywhere": (anywhere[0] + P * high_1[j], anywhere[1] + P * low_1[j]),
                    "spans": (max(per_combination) + P * high_1[j],
                              min(per_combination) + P * low_1[j]),
                    "everywhere": (max(full + P * high_1[j], 0.0),
                                   min(full + P * low_1[j], 0.0))}
        for env, case in zip(envs, cases, strict=True):
            i = _by_effect(env)[e]
            hi, lo = expected[case.placement]
            scale = max(abs(hi), abs(lo), abs(full), 1e-12)
            assert env.maximum[i] == pytest.approx(hi, abs=1e-9 * scale), (
                e, case.placement, "max")
            assert env.minimum[i] == pytest.approx(lo, abs=1e-9 * scale), (
                e, case.placement, "min")
