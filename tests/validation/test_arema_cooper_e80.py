"""Cooper E80 with the alternate live load on simple spans.

Source: AREMA Manual for Railway Engineering, Chapter 15, Part 1 (Cooper E80 and the alternate
live load) and its table of maximum moments, end shears and floorbeam reactions on simple spans
for E80 (from memory). We do not trust our memory of the table's numbers, so each check below
recomputes a table entry by hand (statics, shown in the test) — the same computation the table
is built from — and the envelope must match it; per-rail values are half (factor 0.5, as the
load-model file says). Units: kip, ft.
"""

from __future__ import annotations

import numpy as np
import pytest

import trundle
from trundle.analysis.case_envelopes import design_case_envelope
from trundle.io.loads import read_library_model

AXLES = np.array([40, 80, 80, 80, 80, 52, 52, 52, 52] * 2, dtype=float)
ONE = np.cumsum([0, 8, 5, 5, 5, 9, 5, 6, 5], dtype=float)
OFFSETS = np.concatenate([ONE, ONE + ONE[-1] + 8.0])  # second locomotive 8 ft behind
TRAILING = 8.0  # kip/ft from 5 ft behind the last axle


def _end_shear_brute(span: float) -> float:
    """The largest left reaction on a simple span: every axle over the support in turn (the
    maximum of a linear influence line with the train moving off has an axle at the support),
    both directions, the trailing load integrated exactly."""
    best = 0.0
    for reverse in (False, True):
        offsets = (OFFSETS[-1] - OFFSETS[::-1]) if reverse else OFFSETS
        loads = AXLES[::-1] if reverse else AXLES
        for k in range(offsets.size):
            x = offsets - offsets[k]  # axle k at the support, the others further on
            on = (x >= 0) & (x <= span)
            value = float(np.sum(loads[on] * (span - x[on]) / span))
            if not reverse:  # trailing load behind the last axle, towards the far support
                start = x[-1] + 5.0
                if start < span:
                    value += TRAILING * (span - start) ** 2 / (2 * span)
            best = max(best, value)
    return best


@pytest.mark.parametrize("span", [20.0, 40.0, 100.0, 200.0])
def test_end_shear_per_track_and_per_rail(span: float) -> None:
    # alternate load: four 100 kip axles at 5, 6, 5 ft, the first over the support:
    # V = 100·(L + (L − 5) + (L − 11) + (L − 16))/L = 100·(4L − 32)/L
    alternate = 100.0 * (4 * span - 32.0) / span
    expected = max(alternate, _end_shear_brute(span))
    beam = trundle.Beam(spans=[span])
    e80 = read_library_model("cooper-e80").load
    result = design_case_envelope(beam, e80, [span / 2])
    assert result.max("reaction")[0] == pytest.approx(expected, rel=1e-9)
    # per rail: the factor 0.5 documented in the file
    assert 0.5 * result.max("reaction")[0] == pytest.approx(0.5 * expected, rel=1e-9)
    governing = result.governing["reaction", "max"][0]
    assert governing == ("E80 alternate load" if alternate >= expected else
                         "Cooper E80 locomotives")


def test_alternate_load_governs_short_spans_moment() -> None:
    """10 ft span: at most two 100 kip axles (5 ft apart) fit on it. By the rule of the axle
    nearest the resultant (2.5 ft from each), the worst section is L/2 − 1.25 ft with an axle
    there: M = 200·(L/2 − 1.25)²/L = 200·3.75²/10 = 281.25 kip-ft."""
    span = 10.0
    beam = trundle.Beam(spans=[span])
    e80 = read_library_model("cooper-e80").load
    x = span / 2 - 1.25
    result = design_case_envelope(beam, e80, [x])
    hand = 200.0 * x**2 / span
    # locomotive drivers 80 kip at 5 ft: 2 axles → 160·3.75²/10 = 225 < 281.25
    assert result.max("moment")[0] == pytest.approx(hand, rel=1e-9)
    assert result.governing["moment", "max"][0] == "E80 alternate load"


def test_midspan_moment_of_a_long_span_against_static_placements() -> None:
    """200 ft span, midspan: brute force over lead-axle positions on a 0.25 ft grid (both
    directions), the trailing uniform load integrated exactly; the envelope must be at least the
    brute force and within its grid error."""
    span = 200.0
    beam = trundle.Beam(spans=[span])
    mid = span / 2

    def influence(x: np.ndarray) -> np.ndarray:
        return np.where((x < 0) | (x > span), 0.0, np.where(x <= mid, x / 2, (span - x) / 2))

    best = 0.0
    for reverse in (False, True):
        for lead in np.arange(-5.0, span + OFFSETS[-1] + 5.0, 0.25):
            x = lead + OFFSETS if reverse else lead - OFFSETS
            value = float(np.sum(AXLES * influence(x)))
            # trailing load from 5 ft behind the last axle, on the side it trails
            a, b = (x[-1] + 5.0, np.inf) if reverse else (-np.inf, x[-1] - 5.0)
            lo, hi = max(a, 0.0), min(b, span)
            if hi > lo:
                grid = np.linspace(lo, hi, 2001)
                value += TRAILING * np.trapezoid(influence(grid), grid)
            best = max(best, value)
    e80 = read_library_model("cooper-e80").load
    result = design_case_envelope(beam, e80, [mid])
    assert result.max("moment")[0] >= best * (1 - 1e-6)
    assert result.max("moment")[0] == pytest.approx(best, rel=1e-3)
