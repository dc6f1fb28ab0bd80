"""The exact moment history used for fleet fatigue (scan.passages.exact_turning_points).

Sources of truth: the exact scan (its extremes must be the history's extremes, to rounding:
the scan finds the true extreme of each piece in closed form) and a dense brute-force
evaluation of the same response (every sampled value must lie inside the exact history's
range, and a rainflow count of the dense samples converges to the count of the exact turning
points from below — sampling can only cut a peak, never add one).
"""

from __future__ import annotations

import numpy as np
import pytest

from conftest import SCAN_BEAMS, random_beam
from naive_scan import effects_at, random_axles, random_sections
from trundle.analysis.extremes import damage_sum
from trundle.core.influence import influence_set
from trundle.scan.batched import scan_fleet
from trundle.scan.engine import LineBatch
from trundle.scan.passages import exact_turning_points


@pytest.mark.parametrize("seed", range(4))
def test_turning_points_are_exact(seed: int) -> None:
    rng = np.random.default_rng(1700 + seed)
    beam = random_beam(rng, **SCAN_BEAMS)
    effects = effects_at(beam, random_sections(rng, beam, 3), kinds=("moment",))
    batch = LineBatch.from_set(influence_set(beam, effects))
    loads, spacings = random_axles(rng, beam, 2, 5)
    offsets = np.concatenate([[0.0], np.cumsum(spacings)])
    weights = np.asarray(loads)
    xi, history = exact_turning_points(batch, weights, offsets)
    assert history.shape == (xi.size, batch.n_lines)
    scanned = scan_fleet(batch, np.array([0, len(loads)]), weights, offsets,
                         np.array([1]), parallel=False)[0]
    scale = max(1.0, float(np.abs(scanned[:, [0, 3]]).max()))
    np.testing.assert_allclose(history.max(axis=0), np.maximum(scanned[:, 0], 0.0),
                               rtol=0, atol=1e-10 * scale)
    np.testing.assert_allclose(history.min(axis=0), np.minimum(scanned[:, 3], 0.0),
                               rtol=0, atol=1e-10 * scale)
    dense = np.linspace(offsets.min(), batch.length + offsets.max(), 160_001)
    sampled = sum(w * batch.ordinates(dense - d, "right") for w, d in
                  zip(weights, offsets, strict=True))
    # before and after the crossing the beam is empty (a reaction line jumps at an end)
    empty = np.zeros((1, batch.n_lines))
    sampled = np.concatenate([empty, sampled, empty])
    assert (history[[0, -1]] == 0.0).all()
    assert (sampled.max(axis=0) <= history.max(axis=0) + 1e-10 * scale).all()
    assert (sampled.min(axis=0) >= history.min(axis=0) - 1e-10 * scale).all()
    for j in range(batch.n_lines):
        exact, _ = damage_sum(history[:, j], 3.0)
        coarse, _ = damage_sum(sampled[:, j], 3.0)
        assert coarse <= exact * (1 + 1e-9) + 1e-12 * scale**3
        # a peak at a kink (a load over a moment section) is cut by up to slope × step
        assert coarse == pytest.approx(exact, rel=1e-3, abs=1e-9 * scale**3)
