"""Statistics of load effects from traffic: histograms, block maxima, extreme-value fits,
return levels with bootstrap intervals, and fatigue damage-equivalent ranges.

Extreme-value theory as in S. Coles, *An Introduction to Statistical Modeling of Extreme
Values*, Springer 2001 (from memory): maxima of blocks (days, weeks) follow approximately a
generalized extreme-value distribution (GEV); the Gumbel distribution is its shape-zero case.
The return level for a period T is the level a block maximum exceeds with probability
1/n_T, n_T = T / (block length), i.e. the (1 − 1/n_T) quantile of the block-maximum
distribution (Coles eq. 3.4). scipy's ``genextreme`` uses the shape c = −ξ of Coles' ξ.

Minima (hogging moments, negative reactions) are handled by the caller as maxima of the
negated values.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray
from scipy import stats

BLOCKS = {"day": 1.0, "week": 7.0}
DAYS_PER_YEAR = 365.25


@dataclass(frozen=True)
class ExtremeFit:
    """A fitted block-maximum distribution.

    Fields
    ------
    kind : "gev" or "gumbel"
    shape : scipy's c (GEV; 0 for Gumbel) [-]
    location, scale : [effect units]
    n_blocks : how many block maxima were fitted
    block_days : the block length [d]
    """

    kind: str
    shape: float
    location: float
    scale: float
    n_blocks: int
    block_days: float

    def distribution(self):  # scipy frozen distribution
        if self.kind == "gumbel":
            return stats.gumbel_r(loc=self.location, scale=self.scale)
        return stats.genextreme(self.shape, loc=self.location, scale=self.scale)

    def return_level(self, period_years: float) -> float:
        """The level exceeded on average once in ``period_years`` [effect units]."""
        return return_level(self, period_years)


@dataclass(frozen=True)
class ReturnLevel:
    """A return level with its bootstrap confidence interval.

    Fields
    ------
    period_years : [yr]
    value : from the fit to all block maxima [effect units]
    low, high : percentile bootstrap interval [effect units]
    confidence : e.g. 0.95
    n_bootstrap : resamples used
    """

    period_years: float
    value: float
    low: float
    high: float
    confidence: float
    n_bootstrap: int


def histogram(values: NDArray[np.float64], bins: int = 40
              ) -> tuple[NDArray[np.int64], NDArray[np.float64]]:
    """(counts, edges) of the finite values."""
    finite = np.asarray(values, dtype=float)
    finite = finite[np.isfinite(finite)]
    return np.histogram(finite, bins=bins)


def block_maxima(values: NDArray[np.float64], timestamps: NDArray[np.datetime64],
                 block: str = "day") -> tuple[NDArray[np.datetime64], NDArray[np.float64], int]:
    """Maximum of ``values`` per block of time.

    Returns (start of each block that has at least one truck, its maximum, how many values
    had no timestamp and were left out). Blocks are counted from the first timestamp's day.
    """
    if block not in BLOCKS:
        raise ValueError(f"block: expected one of {', '.join(BLOCKS)}, found {block!r}")
    values = np.asarray(values, dtype=float)
    stamps = np.asarray(timestamps, dtype="datetime64[s]")
    known = ~np.isnat(stamps)
    missing = int((~known).sum())
    if not known.any():
        return np.array([], dtype="datetime64[s]"), np.array([]), missing
    days = stamps[known].astype("datetime64[D]").astype(np.int64)
    length = int(BLOCKS[block])
    origin = days.min()
    index = (days - origin) // length
    order = np.argsort(index, kind="stable")
    index, v = index[order], values[known][order]
    starts = np.flatnonzero(np.r_[True, np.diff(index) > 0])
    maxima = np.maximum.reduceat(v, starts)
    block_start = (origin + index[starts] * length).astype("datetime64[D]").astype(
        "datetime64[s]")
    return block_start, maxima, missing


def fit_block_maxima(maxima: NDArray[np.float64], kind: str = "gev",
                     block_days: float = 1.0) -> ExtremeFit:
    """Maximum-likelihood fit (scipy.stats) of a GEV or Gumbel distribution to block maxima."""
    maxima = np.asarray(maxima, dtype=float)
    if maxima.size < 5:
        raise ValueError(f"block maxima: expected at least 5 to fit a distribution, found "
                         f"{maxima.size}")
    if np.ptp(maxima) == 0.0:
        raise ValueError("block maxima: all equal; no distribution can be fitted")
    if kind == "gumbel":
        loc, scale = stats.gumbel_r.fit(maxima)
        return ExtremeFit("gumbel", 0.0, float(loc), float(scale), maxima.size, block_days)
    if kind == "gev":
        # start from the Gumbel fit: scipy's default start can stall for large locations
        loc0, scale0 = stats.gumbel_r.fit(maxima)
        c, loc, scale = stats.genextreme.fit(maxima, 0.0, loc=loc0, scale=scale0)
        return ExtremeFit("gev", float(c), float(loc), float(scale), maxima.size, block_days)
    raise ValueError(f"fit: expected gev or gumbel, found {kind!r}")


def return_level(fit: ExtremeFit, period_years: float) -> float:
    """The (1 − 1/n) quantile of the block maximum, n = blocks in ``period_years``."""
    n = period_years * DAYS_PER_YEAR / fit.block_days
    if n <= 1.0:
        raise ValueError(f"return period: expected longer than one block "
                         f"({fit.block_days:g} d), found {period_years:g} years")
    return float(fit.distribution().isf(1.0 / n))


def gumbel_return_level(location: float, scale: float, n_blocks: float) -> float:
    """Closed form: x = μ − β·ln(−ln(1 − 1/n)) (Coles 2001, eq. 3.4 with ξ → 0)."""
    return location - scale * np.log(-np.log1p(-1.0 / n_blocks))


def return_level_interval(maxima: NDArray[np.float64], period_years: float, kind: str = "gev",
                          block_days: float = 1.0, confidence: float = 0.95,
                          n_bootstrap: int = 200, seed: int = 0) -> ReturnLevel:
    """Return level from all block maxima, and a percentile bootstrap interval (resampling
    the block maxima with replacement, refitting each resample)."""
    maxima = np.asarray(maxima, dtype=float)
    fit = fit_block_maxima(maxima, kind, block_days)
    value = return_level(fit, period_years)
    rng = np.random.default_rng(seed)
    found = []
    for _ in range(n_bootstrap):
        sample = rng.choice(maxima, size=maxima.size, replace=True)
        if np.ptp(sample) == 0.0:
            continue
        try:
            found.append(return_level(fit_block_maxima(sample, kind, block_days),
                                      period_years))
        except (ValueError, RuntimeError):
            continue
    found_arr = np.asarray(found)
    found_arr = found_arr[np.isfinite(found_arr)]
    alpha = (1.0 - confidence) / 2.0
    low, high = (np.quantile(found_arr, [alpha, 1.0 - alpha]) if found_arr.size
                 else (np.nan, np.nan))
    return ReturnLevel(period_years, value, float(low), float(high), confidence,
                       int(found_arr.size))


def damage_sum(history: NDArray[np.float64], slope: float = 3.0) -> tuple[float, float]:
    """(Σ n·S^m, Σ n) over the rainflow cycles of one effect history (ASTM E1049-85 counting,
    via the ``rainflow`` package; half cycles count ½)."""
    import rainflow

    total = 0.0
    cycles = 0.0
    for rng_, count in rainflow.count_cycles(np.asarray(history, dtype=float)):
        total += count * rng_ ** slope
        cycles += count
    return total, cycles


def damage_equivalent_range(damage_sums: NDArray[np.float64], n_reference: float,
                            slope: float = 3.0) -> float:
    """The constant range that does the same Miner damage in ``n_reference`` cycles:
    S_eq = (Σ n·S^m / n_reference)^(1/m); m = 3 is the usual slope of steel S-N curves
    (common practice, no source)."""
    total = float(np.sum(damage_sums))
    if n_reference <= 0:
        raise ValueError(f"n_reference: expected > 0, found {n_reference}")
    return (total / n_reference) ** (1.0 / slope)
