"""Benchmark: cost of the exact search of spacings and gaps, by the number of searched
dimensions.

Invented jobs: a continuous girder 30 + 36 + 30 m (EI constant), sections at the tenth points
(moment, shear both sides, reactions); a moving load with 1, 2, 3 or 5 searched dimensions:
  1: a 3-axle truck 35/145/145 kN, rear spacing 4.3–9.0 m;
  2: the same with both spacings searched (3.0–6.0, 4.3–9.0 m);
  3: two such trucks (one spacing each searched) with a gap 15–60 m between them;
  5: two trucks with both spacings searched and the gap searched.
Printed per job: seconds for the envelope with the searched values on a coarse grid only
(``refine=False``: about 33 fixed-spacing scans, a lower bound and the floor of what the
former grid + local search cost) and with the exact search, their ratio, and the extremes'
sum as a fingerprint. Run the same script against another revision of the package
(PYTHONPATH) to compare searches.

Run: PYTHONPATH=src /work/venv/bin/python scripts/bench_search.py [--quick]
"""

from __future__ import annotations

import sys
import time

import numpy as np

import trundle
from trundle.scan import use_compiled_kernels

QUICK = "--quick" in sys.argv


def loads_for(dims: int):
    if dims == 1:
        return trundle.Vehicle(loads=[35, 145, 145], spacings=[4.3, (4.3, 9.0)])
    if dims == 2:
        return trundle.Vehicle(loads=[35, 145, 145], spacings=[(3.0, 6.0), (4.3, 9.0)])
    if dims == 3:
        truck = trundle.Vehicle(loads=[35, 145, 145], spacings=[4.3, (4.3, 9.0)])
        return trundle.Train(vehicles=[truck, truck], gaps=[(15.0, 60.0)])
    truck = trundle.Vehicle(loads=[35, 145, 145], spacings=[(3.0, 6.0), (4.3, 9.0)])
    return trundle.Train(vehicles=[truck, truck], gaps=[(15.0, 60.0)])


def best_of(runs: int, job):
    times = []
    for _ in range(runs):
        t0 = time.perf_counter()
        out = job()
        times.append(time.perf_counter() - t0)
    return min(times), out


def main() -> None:
    use_compiled_kernels()  # time the compiled kernels, never their first-run copies
    if QUICK:
        beam = trundle.Beam(spans=[10.0, 12.0], EI=1.0, supports=["pin"] * 3)
        sections = np.array([5.0, 10.0])
        dims_list = (1, 2, 3, 5)
        runs = 1
    else:
        beam = trundle.Beam(spans=[30.0, 36.0, 30.0], EI=1.0, supports=["pin"] * 4)
        sections = beam.tenth_points()
        dims_list = (1, 2, 3, 5)
        runs = 3
    effects = ("moment", "shear", "reaction")
    for load in (loads_for(1), loads_for(5)):  # compile (or load the cache) first
        trundle.envelope(beam, [load], sections=sections[:1], effects=effects)
        trundle.envelope(beam, [load], sections=sections[:1], effects=effects, refine=False)
    print(f"{'dims':>4} {'lines':>6} {'grid only [s]':>14} {'exact [s]':>10} {'ratio':>8} "
          f"{'sum of extremes':>18}")
    for dims in dims_list:
        load = loads_for(dims)
        t_grid, coarse = best_of(runs, lambda load=load: trundle.envelope(
            beam, [load], sections=sections, effects=effects, refine=False))
        t_exact, full = best_of(runs, lambda load=load: trundle.envelope(
            beam, [load], sections=sections, effects=effects))
        print(f"{dims:>4} {len(full.effects):>6} {t_grid:>14.3f} {t_exact:>10.3f} "
              f"{t_exact / t_grid:>7.1f}x {np.nansum(full.maximum - full.minimum):>18.6f}")
        # the exact extremes are never below the grid's
        assert np.all(full.maximum >= coarse.maximum - 1e-9 * np.abs(coarse.maximum).max())
        assert np.all(full.minimum <= coarse.minimum + 1e-9 * np.abs(coarse.minimum).max())
    print("(ratio = exact search / coarse grid only; exact = the package on PYTHONPATH)")


if __name__ == "__main__":
    main()
