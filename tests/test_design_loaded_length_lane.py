"""Lane load whose intensity depends on the loaded length: the exact level search against a
brute force over loaded stretches, and the found set solved statically on the beam.

No published source: the intensity table is invented; the reference is the brute force (every
stretch, or every pair of stretches one per span, with ends on a grid) and static solves.
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from scipy.interpolate import PPoly

import trundle
from trundle.analysis.patterns import (
    LEVEL_SEARCH,
    WHOLE_SEGMENTS,
    LaneIntensity,
    loaded_length_lane,
    worst_loaded_set,
    worst_whole_segments,
)
from trundle.core.statics import DistributedLoad

SPANS = [6.0, 8.0]
TABLE = LaneIntensity(lengths=(0.0, 4.0, 10.0, 20.0), intensities=(12.0, 9.0, 6.0, 5.0))
LAW = LaneIntensity(coefficient=12.0 * 4.0**0.3, exponent=-0.3, upper=12.0, lower=5.0)
GRID = 0.2


def _w(intensity: LaneIntensity, length: np.ndarray) -> np.ndarray:
    if intensity.lengths:
        return np.interp(length, intensity.lengths, intensity.intensities)
    raw = intensity.coefficient * np.maximum(length, 1e-300) ** intensity.exponent
    return np.clip(raw, intensity.lower, intensity.upper)


def _line(beam: trundle.Beam, effect: trundle.Effect, sign: float) -> PPoly:
    line = beam.influence(effect.kind, at=effect.at, side=effect.side) if effect.at is not None \
        else beam.influence(effect.kind, support=effect.support)
    return PPoly(sign * line.coefficients, line.knots, extrapolate=False)


def _brute(pp: PPoly, intensity: LaneIntensity, pairs: bool) -> float:
    F = pp.antiderivative()
    ends = np.array([0.0, SPANS[0], sum(SPANS)])
    best = 0.0
    stretches = []
    for a, b in zip(ends[:-1], ends[1:], strict=True):
        grid = np.arange(a, b + GRID / 2, GRID)
        lo, hi = np.triu_indices(grid.size, 1)
        stretches.append((grid[hi] - grid[lo], F(grid[hi]) - F(grid[lo])))
    whole = np.arange(0.0, ends[-1] + GRID / 2, GRID)
    lo, hi = np.triu_indices(whole.size, 1)
    length, area = whole[hi] - whole[lo], F(whole[hi]) - F(whole[lo])
    best = max(best, float(np.max(_w(intensity, length) * area)))
    if pairs:
        (l1, a1), (l2, a2) = stretches
        length = l1[:, None] + l2[None, :]
        area = a1[:, None] + a2[None, :]
        best = max(best, float(np.max(_w(intensity, length) * area)))
    return best


@pytest.mark.parametrize("intensity", [TABLE, LAW], ids=["table", "power law"])
@pytest.mark.parametrize(("effect", "sign"), [
    (trundle.Effect("moment", at=2.5), 1.0),                    # sagging, span 1
    (trundle.Effect("moment", at=6.0), -1.0),                   # hogging at the pier
    (trundle.Effect("shear", at=9.0, side="right"), 1.0),       # positive shear, span 2
    (trundle.Effect("reaction", support=1), 1.0),
])
def test_level_search_equals_brute_force_and_statics(effect, sign, intensity) -> None:
    beam = trundle.Beam(spans=SPANS)
    pp = _line(beam, effect, sign)
    found = worst_loaded_set(pp, intensity)
    brute = _brute(pp, intensity, pairs=True)
    assert found.value >= brute * (1 - 1e-9)          # never below any loaded set tried
    assert found.value == pytest.approx(brute, rel=2e-2)  # the brute force's grid is 0.2
    # the set found, loaded with w(L), solved statically, gives the value
    w = intensity(found.length)
    result = beam.static([DistributedLoad(a, b, w) for a, b in found.stretches])
    if effect.kind == "moment":
        value = result.moment(effect.at)[0]
    elif effect.kind == "shear":
        value = result.shear(effect.at, side=effect.side)[0]
    else:
        value = result.reactions[effect.support]
    assert sign * value == pytest.approx(found.value, rel=1e-9)


def test_whole_segments_never_exceed_the_exact_set_and_equal_their_brute_force() -> None:
    beam = trundle.Beam(spans=SPANS)
    pp = _line(beam, trundle.Effect("moment", at=6.0), -1.0)
    exact = worst_loaded_set(pp, TABLE)
    whole = worst_whole_segments(pp, TABLE)
    assert whole.value <= exact.value * (1 + 1e-12)
    # the two adverse segments are the two spans; brute force over their subsets
    F = pp.antiderivative()
    options = []
    for subset in ([(0, 6)], [(6, 14)], [(0, 6), (6, 14)]):
        length = sum(b - a for a, b in subset)
        options.append(TABLE(length) * sum(F(b) - F(a) for a, b in subset))
    assert whole.value == pytest.approx(max(options), rel=1e-9)


def test_envelope_names_the_rule_and_a_power_law_is_bounded() -> None:
    beam = trundle.Beam(spans=SPANS)
    law = LAW
    assert law(1.0) == 12.0 and law(1e6) == 5.0
    assert law.max_between(2.0, 8.0) == pytest.approx(law(2.0))
    result = loaded_length_lane(beam, law, [2.5, 6.0])
    assert result.rule == LEVEL_SEARCH
    assert result.governing["moment", "max"][0].startswith("loaded ")
    segments = loaded_length_lane(beam, law, [2.5, 6.0], whole_segments=True)
    assert segments.rule == WHOLE_SEGMENTS
    for key, values in segments.values.items():
        sign = 1 if key[1] == "max" else -1
        assert np.all(sign * values <= sign * result.values[key] + 1e-9)


def test_bad_intensities_are_refused() -> None:
    with pytest.raises(trundle.ModelError, match="increasing lengths"):
        LaneIntensity(lengths=(0.0, 0.0), intensities=(1.0, 2.0))
    with pytest.raises(trundle.ModelError, match="upper bound"):
        LaneIntensity(coefficient=1.0, exponent=-0.2)
    for bad in itertools.product([(1.0,)], [(1.0, 2.0)]):
        with pytest.raises(trundle.ModelError):
            LaneIntensity(lengths=bad[0], intensities=bad[1])
