"""The batched fleet kernel (trundle.scan.batched) against the single-vehicle envelope and
against its plain-Python twin (tests/naive_fleet.py), on random beams and random trucks.

Source of truth: the exact single-vehicle scan (trundle.analysis.envelope, itself checked against
brute-force static solves in test_envelope_bruteforce.py) — the fleet kernel must give every
truck the same extremes to rounding, in both directions or in the one the record gives.
"""

from __future__ import annotations

import numpy as np
import pytest

import trundle
from conftest import SCAN_BEAMS, random_beam
from naive_fleet import plain_fleet
from naive_scan import effects_at, random_axles, random_sections
from trundle.core.influence import influence_set
from trundle.scan.batched import scan_fleet
from trundle.scan.engine import LineBatch


def _random_fleet(rng: np.random.Generator, beam: trundle.Beam, n: int):
    starts, weights, offsets, vehicles = [0], [], [], []
    for _ in range(n):
        loads, spacings = random_axles(rng, beam, 1, 6) if rng.random() < 0.2 else \
            random_axles(rng, beam, 2, 6)
        vehicles.append(trundle.Vehicle(loads=loads, spacings=spacings))
        weights += loads
        offsets += [0.0, *np.cumsum(spacings).tolist()]
        starts.append(len(weights))
    return (np.array(starts), np.array(weights), np.array(offsets), vehicles)


@pytest.mark.parametrize("seed", range(6))
def test_every_truck_equals_its_single_vehicle_envelope(seed: int) -> None:
    rng = np.random.default_rng(1300 + seed)
    beam = random_beam(rng, **SCAN_BEAMS)
    sections = random_sections(rng, beam, 3)
    effects = effects_at(beam, sections)
    batch = LineBatch.from_set(influence_set(beam, effects))
    starts, weights, offsets, vehicles = _random_fleet(rng, beam, 8)
    direction = rng.choice([-1, 0, 1], size=len(vehicles))
    for parallel in (True, False):
        got = scan_fleet(batch, starts, weights, offsets, direction, parallel=parallel)
        assert got.shape == (len(vehicles), len(effects), 8)
        for i, vehicle in enumerate(vehicles):
            if direction[i] != 0:
                # a one-way record: the envelope of the truck run one way only
                one_way = vehicle if direction[i] == 1 else trundle.Vehicle(
                    loads=vehicle.loads[::-1], spacings=vehicle.spacings[::-1])
                vehicle = trundle.Vehicle(loads=one_way.loads, spacings=one_way.spacings,
                                          reversible=False)
            env = trundle.envelope(beam, [vehicle], sections=sections,
                                   effects=("moment", "shear", "deflection", "reaction",
                                            "support_moment"))
            expected = _envelope_by_effect(env, effects)
            scale = max(1.0, float(np.abs(expected).max()))
            np.testing.assert_allclose(got[i, :, [0, 3]].T, expected, rtol=0,
                                       atol=1e-12 * scale)


def _envelope_by_effect(env: trundle.Envelope, effects: list[trundle.Effect]) -> np.ndarray:
    """(n_effects, 2) max and min of the envelope, in the order of ``effects``."""
    order = {e: j for j, e in enumerate(env.effects)}
    return np.array([[env.maximum[order[e]], env.minimum[order[e]]] for e in effects])


@pytest.mark.parametrize("seed", range(3))
def test_kernel_equals_its_plain_python_twin(seed: int) -> None:
    rng = np.random.default_rng(1400 + seed)
    beam = random_beam(rng, **SCAN_BEAMS)
    effects = effects_at(beam, random_sections(rng, beam, 2), kinds=("moment", "shear"))
    lines = influence_set(beam, effects)
    batch = LineBatch.from_set(lines)
    starts, weights, offsets, _ = _random_fleet(rng, beam, 5)
    direction = rng.choice([-1, 0, 1], size=5)
    got = scan_fleet(batch, starts, weights, offsets, direction)
    want = plain_fleet(batch.line_knots, batch.n_pieces, batch.line_coef, starts, weights,
                       offsets, direction)
    scale = max(1.0, float(np.abs(want[:, :, [0, 3]]).max()))
    for col in (0, 3):  # values
        np.testing.assert_allclose(got[:, :, col], want[:, :, col], rtol=0, atol=1e-9 * scale)
    # the governing direction: +1 or -1 where a truck governs, 0 where the empty beam does
    for value_col, dir_col in ((0, 6), (3, 7)):
        governs = ~np.isnan(got[:, :, value_col + 1])
        assert np.isin(got[:, :, dir_col][governs], (-1.0, 1.0)).all()
        assert (got[:, :, dir_col][~governs] == 0.0).all()


def test_a_one_axle_truck_reads_the_line_extremes() -> None:
    """One axle of weight P: max = P·(largest ordinate), the empty beam 0 otherwise
    (definition of an influence line; closed form for a simple span: M(L/2) = P·L/4,
    any structural-analysis text, e.g. Hibbeler, Structural Analysis, ch. 6, from memory)."""
    beam = trundle.Beam(spans=[10.0], EI=1.0, supports=["pin", "pin"])
    batch = LineBatch.from_set(influence_set(beam, [trundle.Effect("moment", at=5.0)]))
    got = scan_fleet(batch, np.array([0, 1]), np.array([3.0]), np.array([0.0]))
    assert got[0, 0, 0] == pytest.approx(3.0 * 10.0 / 4.0, rel=1e-14)
    assert got[0, 0, 1] == pytest.approx(5.0, rel=1e-12)
    assert got[0, 0, 3] == 0.0 and np.isnan(got[0, 0, 4])


def test_bad_fleet_arrays_are_refused() -> None:
    beam = trundle.Beam(spans=[10.0], EI=1.0, supports=["pin", "pin"])
    batch = LineBatch.from_set(influence_set(beam, [trundle.Effect("moment", at=5.0)]))
    with pytest.raises(ValueError, match="no axle"):
        scan_fleet(batch, np.array([0, 0]), np.array([]), np.array([]))
    with pytest.raises(ValueError, match="offset 0"):
        scan_fleet(batch, np.array([0, 1]), np.array([1.0]), np.array([2.0]))
