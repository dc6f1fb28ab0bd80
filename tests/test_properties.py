"""Properties every correct beam analysis has, on random beams drawn by hypothesis.

Statics of the whole beam (reactions and couples balance the unit load), Maxwell–Betti
reciprocity of deflection lines, mirror symmetry, and the static solve equal to the influence
line integrated against the load (the definition of an influence line).
Source: common practice, no source (equilibrium, Betti's reciprocal theorem).
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

import trundle
from naive import MIN_NODE_GAP, beam_nodes, floor_scale
from trundle.core.statics import DistributedLoad, PointLoad, PointMoment

PROPERTY_SETTINGS = settings(max_examples=30, deadline=None,
                             suppress_health_check=[HealthCheck.filter_too_much,
                                                    HealthCheck.too_slow])


def _rounded(lo: float, hi: float) -> st.SearchStrategy[float]:
    return st.floats(lo, hi).map(lambda v: round(v, 2))


@st.composite
def supports(draw: st.DrawFn, EI: float, span: float) -> object:
    kind = draw(st.sampled_from(["pin", "pin", "fixed", "free", "spring"]))
    if kind != "spring":
        return kind
    # springs comparable with the beam's own stiffness, so that they matter
    k = EI / span**3 * 10 ** draw(st.floats(0.5, 2.5))
    kr = draw(st.one_of(st.none(), st.floats(-0.5, 1.5).map(lambda e: EI / span * 10**e)))
    return trundle.Spring(k, kr)


@st.composite
def beams(draw: st.DrawFn, max_spans: int = 4) -> trundle.Beam:
    """Stable beams with pins, fixed and free ends, springs, hinges (also over supports),
    overhangs and stepped EI; mechanisms are rejected."""
    n = draw(st.integers(1, max_spans))
    spans = draw(st.lists(_rounded(2.0, 10.0), min_size=n, max_size=n))
    L = float(sum(spans))
    EI = draw(st.floats(0.5, 5.0))
    chosen = draw(st.lists(supports(EI, float(np.mean(spans))), min_size=n + 1, max_size=n + 1))
    ends = np.cumsum(spans)[:-1]
    hinges = draw(st.lists(st.one_of(_rounded(0.05 * L, 0.95 * L),
                                     st.sampled_from(list(ends)) if n > 1 else st.nothing()),
                           max_size=2, unique=True))
    stiffness: object = EI
    if draw(st.booleans()):
        cut = round(draw(st.floats(0.1, 0.9)) * L, 2)
        stiffness = [(0.0, cut, EI), (cut, L, EI * draw(st.floats(0.3, 3.0)))]
    try:
        beam = trundle.Beam(spans=spans, EI=stiffness, supports=chosen, hinges=hinges)
    except trundle.ModelError:
        assume(False)
    assume(np.min(np.diff(beam_nodes(beam))) >= MIN_NODE_GAP * L)
    return beam


def _placed(beam: trundle.Beam, t: float) -> float:
    """A point at fraction t of the beam, on a grid of L/50 and snapped onto a node when
    within 1 % of the length.

    Load points a hair's breadth from a node or from each other are a numerically different
    problem (a tiny element in the static solve); tests/test_statics.py looks at it on its own.
    """
    x = round(t * 50) / 50 * beam.length
    nodes = beam_nodes(beam)
    nearest = nodes[np.argmin(np.abs(nodes - x))]
    return float(nearest) if abs(nearest - x) < 0.01 * beam.length else x


def _probe(beam: trundle.Beam) -> np.ndarray:
    # a fine grid plus the nodes: the lines must hold at every x, knots included
    return np.unique(np.concatenate([np.linspace(0.0, beam.length, 97), beam_nodes(beam)]))


def _held(beam: trundle.Beam) -> list[int]:
    return [i for i, s in enumerate(beam.supports) if s != "free"]


def _turn_held(beam: trundle.Beam) -> list[int]:
    return [i for i, s in enumerate(beam.supports)
            if s == "fixed" or (isinstance(s, trundle.Spring) and s.kr is not None)]


@PROPERTY_SETTINGS
@given(beams())
def test_reaction_lines_sum_to_one(beam: trundle.Beam) -> None:
    """Vertical equilibrium: for a unit load anywhere the reactions (springs included) add to
    one."""
    x = _probe(beam)
    reactions = trundle.influence_batch(beam, "reaction", supports=_held(beam))
    for side in ("left", "right"):
        total = reactions(x, side=side).sum(axis=1)
        np.testing.assert_allclose(total, 1.0, rtol=0, atol=1e-10)


@PROPERTY_SETTINGS
@given(beams())
def test_reactions_and_couples_balance_the_load_moment(beam: trundle.Beam) -> None:
    """Moment about x = 0, counter-clockwise positive: an upward reaction R_i at x_i gives
    R_i·x_i, a support couple C_i (CCW positive) gives C_i, the unit load at ξ gives −ξ, so
    Σ R_i·x_i + Σ C_i = ξ."""
    x = _probe(beam)
    effects = [trundle.Effect("reaction", support=i) for i in _held(beam)]
    effects += [trundle.Effect("support_moment", support=i) for i in _turn_held(beam)]
    lines = beam.influence_set(effects)(x)
    arms = np.array([beam.support_positions[e.support] if e.kind == "reaction" else 1.0
                     for e in effects])
    # 1e-9: random beams include near-mechanisms (soft springs holding a chain of hinged
    # pieces) whose stiffness is ill conditioned enough to cost a tenth digit
    np.testing.assert_allclose(lines @ arms, x, rtol=0, atol=1e-9 * beam.length)


@PROPERTY_SETTINGS
@given(beams(), st.floats(0.0, 1.0), st.floats(0.0, 1.0))
def test_maxwell_betti_reciprocity(beam: trundle.Beam, ta: float, tb: float) -> None:
    """The deflection at a due to a unit load at b equals the deflection at b due to a unit
    load at a (Maxwell's reciprocal theorem)."""
    a, b = _placed(beam, ta), _placed(beam, tb)
    line_a = beam.influence("deflection", at=a)
    line_b = beam.influence("deflection", at=b)
    scale = max(abs(line_a.max()[0]), abs(line_b.max()[0]), abs(line_a.min()[0]),
                floor_scale(beam, "deflection"))
    assert line_a(b) == pytest.approx(line_b(a), rel=0, abs=1e-10 * scale)
    # and the deflection line at a is the deflected shape under a unit load at a
    shape = beam.static([PointLoad(a, 1.0)])
    probe = _probe(beam)
    np.testing.assert_allclose(line_a(probe), shape.deflection(probe), rtol=0,
                               atol=1e-10 * scale)


@PROPERTY_SETTINGS
@given(beams(max_spans=3), st.floats(0.0, 1.0))
def test_mirror_image_beam_gives_mirror_lines(beam: trundle.Beam, t: float) -> None:
    """Turning the beam end for end mirrors every reaction and deflection line and keeps
    moment lines (sagging stays sagging)."""
    L = beam.length
    mirrored = trundle.Beam(
        spans=beam.spans[::-1],
        EI=[(L - s.x1, L - s.x0, s.EI0) for s in beam.stiffness_segments[::-1]],
        supports=beam.supports[::-1],
        hinges=[L - h for h in beam.hinges],
    )
    x = _probe(beam)
    n = len(beam.supports)
    for i in _held(beam):
        ours = beam.influence("reaction", support=i)(x)
        theirs = mirrored.influence("reaction", support=n - 1 - i)(L - x)
        np.testing.assert_allclose(ours, theirs, rtol=0, atol=1e-10 * max(1.0, np.abs(ours).max()))
    at = _placed(beam, t)
    # the moment jumps by the couple at a support that holds rotation; lines read it just
    # right of the section, which the mirror turns into just left (test_statics checks those)
    couple_points = beam.support_positions[_turn_held(beam)]
    kinds = ["deflection"] if np.any(np.abs(couple_points - at) < 1e-9) else ["moment",
                                                                              "deflection"]
    for kind in kinds:
        ours = beam.influence(kind, at=at)(x)
        theirs = mirrored.influence(kind, at=L - at)(L - x)
        scale = max(np.abs(ours).max(), floor_scale(beam, kind))
        np.testing.assert_allclose(ours, theirs, rtol=0, atol=1e-10 * scale)


# --- the static solve is the influence line integrated against the load --------------------


@st.composite
def load_cases(draw: st.DrawFn, beam: trundle.Beam) -> list[object]:
    loads: list[object] = []
    for _ in range(draw(st.integers(1, 3))):
        loads.append(PointLoad(_placed(beam, draw(st.floats(0.0, 1.0))),
                               draw(st.floats(-50.0, 100.0))))
    for _ in range(draw(st.integers(1, 2))):
        a, b = sorted(_placed(beam, t) for t in draw(st.lists(st.floats(0.0, 1.0), min_size=2,
                                                              max_size=2)))
        assume(b - a > 0.02 * beam.length)
        loads.append(DistributedLoad(a, b, draw(st.floats(-5.0, 20.0)),
                                     draw(st.one_of(st.none(), st.floats(-5.0, 20.0)))))
    return loads


@st.composite
def beams_with_loads(draw: st.DrawFn) -> tuple[trundle.Beam, list[object], float, float]:
    beam = draw(beams())
    loads = draw(load_cases(beam))
    couple_at = _placed(beam, draw(st.floats(0.0, 1.0)))
    section = _placed(beam, draw(st.floats(0.0, 1.0)))
    return beam, loads, couple_at, section


def _magnitude(loads: list[object]) -> float:
    """Total of the loads' absolute sizes (force), to scale the tolerance."""
    total = 0.0
    for ld in loads:
        if isinstance(ld, PointLoad):
            total += abs(ld.P)
        elif isinstance(ld, DistributedLoad):
            total += max(abs(ld.w0), abs(ld.w_end)) * (ld.x1 - ld.x0)
    return max(total, 1.0)


GAUSS_X, GAUSS_W = np.polynomial.legendre.leggauss(4)


def _effect_of(line: trundle.InfluenceLine, loads: list[object]) -> float:
    """Σ P·IL(x) + ∫ w(x)·IL(x) dx, integrated exactly: between breaks the integrand is a
    cubic times a linear load, which 4-point Gauss–Legendre integrates without error."""
    total = 0.0
    for load in loads:
        if isinstance(load, PointLoad):
            total += load.P * line(load.x)
        else:
            inner = line.knots[(line.knots > load.x0) & (line.knots < load.x1)]
            breaks = np.concatenate([[load.x0], inner, [load.x1]])
            for a, b in zip(breaks[:-1], breaks[1:], strict=True):
                s = 0.5 * (a + b) + 0.5 * (b - a) * GAUSS_X
                total += 0.5 * (b - a) * float(np.sum(GAUSS_W * load.at(s) * line(s)))
    return total


@PROPERTY_SETTINGS
@given(beams_with_loads())
def test_static_solve_equals_line_times_load(case: tuple) -> None:
    beam, loads, _, at = case
    result = beam.static(loads)
    effects = [trundle.Effect("reaction", support=i) for i in _held(beam)]
    effects += [trundle.Effect("support_moment", support=i) for i in _turn_held(beam)]
    effects += [trundle.Effect("moment", at=at), trundle.Effect("deflection", at=at),
                trundle.Effect("rotation", at=at)]
    lines = beam.influence_set(effects)
    found = []
    for e in effects:
        if e.kind == "reaction":
            found.append(result.reactions[e.support])
        elif e.kind == "support_moment":
            found.append(result.support_moments[e.support])
        else:
            found.append(float(getattr(result, e.kind)(at)[0]))
    magnitude = _magnitude(loads)
    for j, e in enumerate(effects):
        line = lines.line(j)
        expected = _effect_of(line, loads)
        scale = magnitude * max(abs(line.max()[0]), abs(line.min()[0]),
                                floor_scale(beam, e.kind))
        assert found[j] == pytest.approx(expected, rel=0, abs=1e-9 * scale), \
            (beam.describe(), e.label)


@PROPERTY_SETTINGS
@given(beams_with_loads())
def test_point_couple_acts_through_the_line_slope(case: tuple) -> None:
    """A clockwise couple M at c is the limit of a downward force M/ε at c + ε/2 and an upward
    one at c − ε/2, so its effect is M·IL'(c) wherever the line is smooth at c."""
    beam, _, c, at = case
    # the line must be smooth at c: off the nodes (supports, hinges, EI steps) and the section
    assume(np.abs(np.append(beam_nodes(beam), at) - c).min() > 0.01 * beam.length)
    M = 7.5
    result = beam.static([PointMoment(c, M)])
    for kind in ("moment", "deflection"):
        line = beam.influence(kind, at=at)
        slope = line.ppoly.derivative()
        found = float(getattr(result, kind)(at)[0])
        # the slope of a moment line is of order 1, of a deflection line of order L²/EI
        scale = M * max(float(np.abs(slope(_probe(beam))).max()),
                        floor_scale(beam, kind) / beam.length)
        assert found == pytest.approx(M * float(slope(c)), rel=0, abs=1e-9 * scale), \
            beam.describe()
    for i in _held(beam):
        slope = beam.influence("reaction", support=i).ppoly.derivative()
        scale = M * max(float(np.abs(slope(_probe(beam))).max()), 1.0 / beam.length)
        assert result.reactions[i] == pytest.approx(M * float(slope(c)), rel=0,
                                                    abs=1e-9 * scale), beam.describe()
