"""INVENTED traffic for demonstrations and tests: a seeded mixture of 2- to 6-axle trucks.

Nothing here is measured or taken from any survey, code or real weigh-in-motion site. The
numbers were chosen to look plausible for road trucks and to exercise the fleet workflow; do
not use the output to assess a real bridge. Every output says "invented".

The mixture (SI: kN, m; each truck is drawn independently). Per class: share of trucks;
gross weight [kN] as a mix of empty N(mean, sd) with probability p and loaded N(mean, sd);
axle shares of the gross, front to back; spacings [m] as mean ± sd:

- 2 axles, share 0.30: empty N(70, 12) p = 0.40, loaded N(140, 25); shares 0.35, 0.65;
  spacing 4.5 ± 0.6
- 3 axles, share 0.20: empty N(110, 15) p = 0.35, loaded N(230, 35); shares 0.28, 0.36,
  0.36; spacings 4.2 ± 0.5, 1.3 ± 0.05
- 4 axles, share 0.10: empty N(150, 20) p = 0.35, loaded N(300, 40); shares 0.22, 0.26,
  0.26, 0.26; spacings 3.2 ± 0.4, 5.2 ± 0.6, 1.3 ± 0.05
- 5 axles, share 0.33: empty N(160, 20) p = 0.30, loaded N(380, 50); shares 0.13, 0.22,
  0.22, 0.215, 0.215; spacings 3.6 ± 0.3, 1.3 ± 0.05, 6.5 ± 0.9, 1.3 ± 0.05
- 6 axles, share 0.07: empty N(190, 25) p = 0.30, loaded N(440, 50); shares 0.11, 0.18,
  0.18, 0.18, 0.175, 0.175; spacings 3.6 ± 0.3, 1.3 ± 0.05, 6.0 ± 0.8, 1.3 ± 0.05,
  1.3 ± 0.05

"± s" is a normal distribution's standard deviation. Gross weights are truncated to
[0.5, 1.6] × the class's loaded mean; each axle share is multiplied by 1 + N(0, 0.05) and the
shares renormalised; spacings are clipped to ≥ 0.9 m. Axle weights are rounded to 0.1 kN
and the gross weight is their sum. Trucks arrive at uniformly random times over ``days``
days from 2026-01-05T00:00 (an invented date), sorted by time; direction +1 or −1 with equal
probability; lane 1 or 2.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trundle.io.units import SI, SYSTEMS
from trundle.loads.traffic import Traffic

INVENTED_NOTE = ("INVENTED traffic from trundle's generator (seeded mixture of 2- to 6-axle "
                 "trucks); not measured, not for assessing a real bridge")
START = np.datetime64("2026-01-05T00:00:00", "s")


@dataclass(frozen=True)
class TruckClass:
    """One class of the invented mixture (see the module table)."""

    share: float
    empty_mean: float
    empty_sd: float
    empty_probability: float
    loaded_mean: float
    loaded_sd: float
    axle_shares: tuple[float, ...]
    spacing_mean: tuple[float, ...]
    spacing_sd: tuple[float, ...]


MIXTURE = (
    TruckClass(0.30, 70, 12, 0.40, 140, 25, (0.35, 0.65), (4.5,), (0.6,)),
    TruckClass(0.20, 110, 15, 0.35, 230, 35, (0.28, 0.36, 0.36), (4.2, 1.3), (0.5, 0.05)),
    TruckClass(0.10, 150, 20, 0.35, 300, 40, (0.22, 0.26, 0.26, 0.26), (3.2, 5.2, 1.3),
               (0.4, 0.6, 0.05)),
    TruckClass(0.33, 160, 20, 0.30, 380, 50, (0.13, 0.22, 0.22, 0.215, 0.215),
               (3.6, 1.3, 6.5, 1.3), (0.3, 0.05, 0.9, 0.05)),
    TruckClass(0.07, 190, 25, 0.30, 440, 50, (0.11, 0.18, 0.18, 0.18, 0.175, 0.175),
               (3.6, 1.3, 6.0, 1.3, 1.3), (0.3, 0.05, 0.8, 0.05, 0.05)),
)


def invented_traffic(n_trucks: int, seed: int = 2026, days: float = 28.0,
                     units: str = "SI") -> Traffic:
    """``n_trucks`` INVENTED trucks from the documented mixture (reproducible for a seed).

    Parameters
    ----------
    n_trucks : how many trucks (≥ 1)
    seed : seed of numpy's default generator
    days : the trucks arrive over this many days [d]
    units : "SI" (kN, m) or "US" (converted exactly from the SI draw)
    """
    if n_trucks < 1:
        raise ValueError(f"n_trucks: expected >= 1, found {n_trucks}")
    if days <= 0:
        raise ValueError(f"days: expected > 0, found {days}")
    rng = np.random.default_rng(seed)
    shares = np.array([c.share for c in MIXTURE])
    cls = rng.choice(len(MIXTURE), size=n_trucks, p=shares / shares.sum())
    counts = np.array([len(MIXTURE[c].axle_shares) for c in range(len(MIXTURE))])[cls]
    axle_start = np.concatenate([[0], np.cumsum(counts)]).astype(np.int64)
    weight = np.empty(int(axle_start[-1]))
    offset = np.empty(int(axle_start[-1]))
    for c, tc in enumerate(MIXTURE):
        rows = np.flatnonzero(cls == c)
        if rows.size == 0:
            continue
        n_ax = len(tc.axle_shares)
        empty = rng.random(rows.size) < tc.empty_probability
        gross = np.where(empty, rng.normal(tc.empty_mean, tc.empty_sd, rows.size),
                         rng.normal(tc.loaded_mean, tc.loaded_sd, rows.size))
        gross = np.clip(gross, 0.5 * tc.loaded_mean, 1.6 * tc.loaded_mean)
        share = np.array(tc.axle_shares)[None, :] * (1 + rng.normal(0, 0.05, (rows.size, n_ax)))
        share = np.clip(share, 0.02, None)
        share /= share.sum(axis=1, keepdims=True)
        axles = np.round(gross[:, None] * share, 1)
        spacing = np.clip(rng.normal(tc.spacing_mean, tc.spacing_sd, (rows.size, n_ax - 1)),
                          0.9, None)
        spacing = np.round(spacing, 2)
        offs = np.concatenate([np.zeros((rows.size, 1)), np.cumsum(spacing, axis=1)], axis=1)
        idx = axle_start[rows][:, None] + np.arange(n_ax)[None, :]
        weight[idx] = axles
        offset[idx] = offs
    gross = np.add.reduceat(weight, axle_start[:-1])
    seconds = np.sort(rng.uniform(0.0, days * 86400.0, n_trucks)).astype(np.int64)
    timestamp = START + seconds.astype("timedelta64[s]")
    direction = np.where(rng.random(n_trucks) < 0.5, 1, -1).astype(np.int64)
    lane = np.where(direction > 0, 1, 2).astype(np.int64)
    ids = np.char.add("inv-", np.char.zfill(np.arange(1, n_trucks + 1).astype(str), 7))
    traffic = Traffic(ids, timestamp, lane, direction, gross, axle_start, weight, offset, SI,
                      INVENTED_NOTE, invented=True)
    return traffic.in_units(SYSTEMS[units.upper()])
