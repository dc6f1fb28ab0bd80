"""Influence lines against the independent dense reference in tests/naive.py.

For a unit load at ξ the reference builds and solves its own stiffness matrix (nodes at the
supports, hinges, EI steps, the section and ξ) and reads every effect by equilibrium of the
part left of the section. The exact piecewise-cubic lines must agree to 1e-10 relative to the
line's largest ordinate, on random beams with hinges, springs, fixed and free ends, overhangs
and stepped EI.
"""

from __future__ import annotations

import numpy as np
import pytest

import trundle
from conftest import random_beam
from naive import (
    beam_nodes,
    effects_for,
    floor_scale,
    naive_effect,
    naive_solve,
    spread_points,
)

REL = 1e-10


def _scale(line: trundle.InfluenceLine, reference: np.ndarray) -> float:
    """Largest ordinate of the line (knots and extremes), or of the reference if larger."""
    biggest = max(abs(line.max()[0]), abs(line.min()[0]), float(np.abs(reference).max()))
    return max(biggest, 1e-300)


def _load_positions(beam: trundle.Beam, rng: np.random.Generator,
                    sections: np.ndarray) -> np.ndarray:
    # random positions clear of the nodes and sections, and the nodes themselves
    return np.concatenate([spread_points(rng, beam, 7, avoid=sections), beam_nodes(beam)])


@pytest.mark.parametrize("seed", range(40))
def test_lines_match_dense_reference(seed: int) -> None:
    rng = np.random.default_rng(seed)
    beam = random_beam(rng)
    effects = effects_for(beam, rng)
    lines = beam.influence_set(effects)
    sections = np.array([e.at for e in effects if e.at is not None])
    xi = _load_positions(beam, rng, sections)
    for j, effect in enumerate(effects):
        line = lines.line(j)
        at = effect.at
        # shear jumps under the load at its own section: read the one-sided limit there
        positions = xi if effect.kind != "shear" else xi[np.abs(xi - at) > 1e-9]
        expected = np.array([naive_effect(beam, effect, float(p)) for p in positions])
        found = line(positions)
        scale = max(_scale(line, expected), floor_scale(beam, effect.kind))
        np.testing.assert_allclose(found, expected, rtol=0, atol=REL * scale,
                                   err_msg=f"{beam.describe()}; {effect.label}")


@pytest.mark.parametrize("seed", range(10))
def test_shear_one_sided_limits_under_the_load(seed: int) -> None:
    """With the load exactly at the section, the line's left limit is the shear with the load
    counted on the left (just passed), its right limit the shear with the load not yet there.
    Reactions are continuous in ξ, so the reference takes them for the load at the section."""
    rng = np.random.default_rng(100 + seed)
    beam = random_beam(rng)
    x = float(spread_points(rng, beam, 1)[0])
    res = naive_solve(beam, x, sections=(x,))
    xs = beam.support_positions
    for side in ("left", "right"):
        line = beam.influence("shear", at=x, side=side)
        held_left = res.reactions[xs < x].sum()  # no support at x: the section is off the nodes
        assert line(x, side="left") == pytest.approx(held_left - 1.0, abs=1e-10)
        assert line(x, side="right") == pytest.approx(held_left, abs=1e-10)


def test_reference_reproduces_a_closed_form() -> None:
    """The reference itself on a simple span: M at the load = P a b / L, deflection under a
    central load P L³ / (48 EI). Source: common practice, no source (statics; textbook
    beam-deflection formula)."""
    L, EI, a = 12.0, 3.0, 4.0
    beam = trundle.Beam(spans=[L], EI=EI)
    res = naive_solve(beam, a, P=2.0, sections=(a, L / 2))
    assert res.moment(a) == pytest.approx(2.0 * a * (L - a) / L, rel=1e-12)
    assert res.reactions == pytest.approx([2.0 * (L - a) / L, 2.0 * a / L], rel=1e-12)
    mid = naive_solve(beam, L / 2, P=1.0)
    assert mid.deflection(L / 2) == pytest.approx(L**3 / (48 * EI), rel=1e-12)


@pytest.mark.parametrize("seed", range(8))
def test_batch_equals_single_lines(seed: int) -> None:
    """influence_batch (one factorisation, shared knots) gives the same lines as one-by-one
    requests. Source: common practice, no source (a refactoring invariant)."""
    rng = np.random.default_rng(200 + seed)
    beam = random_beam(rng)
    xs = np.sort(rng.uniform(0.0, beam.length, 5))
    batch = trundle.influence_batch(beam, "moment", at=xs)
    probe = rng.uniform(0.0, beam.length, 25)
    values = batch(probe)
    assert values.shape == (25, 5)
    for j, x in enumerate(xs):
        single = beam.influence("moment", at=float(x))
        scale = max(abs(single.max()[0]), abs(single.min()[0]), floor_scale(beam, "moment"))
        np.testing.assert_allclose(values[:, j], single(probe), rtol=0, atol=1e-10 * scale)
    reactions = trundle.influence_batch(beam, "reaction",
                                        supports=[i for i, s in enumerate(beam.supports)
                                                  if s != "free"])
    assert reactions.coefficients.shape[0] == 4
    assert reactions.coefficients.shape[1] == len(reactions.knots) - 1


@pytest.mark.parametrize("support", [trundle.Spring(400.0, kr=60.0), "fixed"])
def test_moment_either_side_of_a_support_couple(support: object) -> None:
    """Where a support holds rotation (a fixed interior support, a rotational spring such as
    a column framed into a continuous girder) the moment jumps by the support's couple;
    side= picks the face, as for shear, and both faces match the reference. Without side=
    the line reads the right face, as before."""
    beam = trundle.Beam(spans=[6.0, 7.0], EI=3.0, supports=["pin", support, "pin"])
    xi = np.array([0.0, 1.3, 3.0, 4.9, 6.0, 7.7, 10.0, 12.2, 13.0])
    faces = {}
    for side in ("left", "right"):
        line = beam.influence("moment", at=6.0, side=side)
        expected = np.array([naive_solve(beam, float(p), sections=(6.0,)).moment(6.0, side)
                             for p in xi])
        np.testing.assert_allclose(line(xi), expected, rtol=0, atol=1e-10 * 6.0)
        faces[side] = expected
        static = beam.static([trundle.PointLoad(3.0, 1.0)]).moment(6.0, side=side)[0]
        assert static == pytest.approx(naive_solve(beam, 3.0).moment(6.0, side), abs=1e-10)
    assert np.abs(faces["left"] - faces["right"]).max() > 0.1  # the faces really differ
    np.testing.assert_allclose(beam.influence("moment", at=6.0)(xi), faces["right"], rtol=0,
                               atol=1e-10 * 6.0)
