"""Extreme-value statistics (trundle.analysis.extremes) against known distributions and
closed forms.

Sources: S. Coles, An Introduction to Statistical Modeling of Extreme Values, Springer 2001,
section 3.1.3, eq. 3.4 (return level of the GEV and its Gumbel limit), from memory; scipy's
``genextreme`` uses c = −ξ (scipy documentation). ASTM E1049-85 (2017), Standard Practices for
Cycle Counting in Fatigue Analysis, section 5.4.4 rainflow counting, from memory, for the
hand-counted history below.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from trundle.analysis import extremes as ex


def test_gev_fit_recovers_known_parameters() -> None:
    # seeded sample of 4000 from GEV(c = -0.1, loc = 300, scale = 25); the maximum-likelihood
    # standard errors at this size are about 0.012 (c), 0.45 (loc), 0.33 (scale): tolerances
    # are four of them
    sample = stats.genextreme(-0.1, loc=300.0, scale=25.0).rvs(4000, random_state=1301)
    fit = ex.fit_block_maxima(sample, "gev")
    assert fit.shape == pytest.approx(-0.1, abs=0.05)
    assert fit.location == pytest.approx(300.0, abs=2.0)
    assert fit.scale == pytest.approx(25.0, abs=1.5)


def test_gumbel_fit_and_return_level_against_the_closed_form() -> None:
    loc, scale = 500.0, 40.0
    sample = stats.gumbel_r(loc=loc, scale=scale).rvs(3000, random_state=1302)
    fit = ex.fit_block_maxima(sample, "gumbel", block_days=7.0)
    assert fit.location == pytest.approx(loc, abs=3.0)  # se ≈ 0.75
    assert fit.scale == pytest.approx(scale, abs=2.5)  # se ≈ 0.57
    n = 75 * ex.DAYS_PER_YEAR / 7.0
    # the function's return level is the closed form of its own parameters, to rounding
    assert fit.return_level(75) == pytest.approx(
        fit.location - fit.scale * np.log(-np.log(1 - 1 / n)), rel=1e-12)
    # and near the true distribution's return level
    true = ex.gumbel_return_level(loc, scale, n)
    assert fit.return_level(75) == pytest.approx(true, rel=0.02)


def test_bootstrap_interval_covers_the_true_return_level() -> None:
    loc, scale = 200.0, 10.0
    sample = stats.gumbel_r(loc=loc, scale=scale).rvs(400, random_state=1303)
    level = ex.return_level_interval(sample, 50, "gumbel", block_days=1.0, n_bootstrap=200)
    true = ex.gumbel_return_level(loc, scale, 50 * ex.DAYS_PER_YEAR)
    assert level.low < level.value < level.high
    assert level.low <= true <= level.high
    assert level.n_bootstrap >= 190


def test_block_maxima_per_day_and_week() -> None:
    t0 = np.datetime64("2026-01-05T00:00:00", "s")
    hours = np.array([1, 5, 30, 31, 200, 170], dtype="timedelta64[h]")
    stamps = (t0 + hours).astype("datetime64[s]")
    stamps = np.append(stamps, np.datetime64("NaT"))
    values = np.array([1.0, 3.0, 2.0, 7.0, 4.0, 9.0, 100.0])
    start, maxima, missing = ex.block_maxima(values, stamps, "day")
    assert maxima.tolist() == [3.0, 7.0, 9.0, 4.0]  # days 0, 1, 7, 8
    assert missing == 1
    start, maxima, _ = ex.block_maxima(values, stamps, "week")
    assert maxima.tolist() == [7.0, 9.0]


def test_damage_sum_of_a_hand_counted_history() -> None:
    # 0 → 10 → 0: one cycle of range 10 counted as two half cycles; 0 → 10 → 4 → 8 → 0: a full
    # cycle of range 4 inside, and half cycles of 10 (ASTM E1049 rainflow)
    total, cycles = ex.damage_sum(np.array([0.0, 10.0, 0.0]))
    assert total == pytest.approx(1000.0) and cycles == pytest.approx(1.0)
    total, cycles = ex.damage_sum(np.array([0.0, 10.0, 4.0, 8.0, 0.0]))
    assert total == pytest.approx(1000.0 + 64.0) and cycles == pytest.approx(2.0)
    assert ex.damage_equivalent_range(np.array([1000.0, 64.0]), 2.0) == pytest.approx(
        (1064.0 / 2.0) ** (1 / 3))
