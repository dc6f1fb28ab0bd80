"""Benchmark: the absolute moment maximum and minimum per span ("anywhere"), exact against the
sampled search it replaces for rigid groups of concentrated loads.

Old: a fixed-spacing envelope on 41 sections per span, then ``minimize_scalar`` (bounded)
between the neighbours of the best section, an exact envelope per trial section (assumes one
peak; still used, labelled not certified, for searched spacings, uniform load and loads
acting together). New: the envelopes of the two span ends (minimum, and the maximum at an
end) and, per axle and direction, every piece of the piecewise quartic "moment under this
axle" maximised exactly (``analysis.absolute_moment``).

Jobs (all invented): a three-axle truck (35, 145, 145 kN at 4.3 m, both directions) on
3 spans 24 + 30 + 24 m; the same on 10 spans of 30 m; an 80-axle train (20 four-axle cars)
on 10 spans of 30 m; two crane wheels confined between end stops on 6 spans of 7.5 m.
Printed: time of old and new for every span of the beam (max and min), their ratio, the
pieces examined, and how far the old value was below the exact one; then the same for the
deflection anywhere (old: the sampled search; new: the branch and bound certified to 1e-9,
and how many of its values it certified).

Run: PYTHONPATH=src python scripts/bench_absolute.py [--quick]
``--quick`` runs at tiny sizes (the test suite runs it so the benchmark cannot rot); its
numbers mean nothing.
"""

from __future__ import annotations

import os
import sys
import time

import numpy as np

import trundle
from trundle.analysis.absolute_moment import moment_under_axles
from trundle.analysis.envelope import (
    _arrangements,
    _coarse_sections,
    _sampled_extreme,
    _span_end_lines,
    absolute_extremes,
)
from trundle.loads.cases import LoadCase
from trundle.scan import use_compiled_kernels


def train(cars: int) -> trundle.Vehicle:
    spacings: list[float] = []
    for c in range(cars):
        spacings += [1.8, 7.2, 1.8]
        if c < cars - 1:
            spacings.append(3.0)
    return trundle.Vehicle([200.0] * (4 * cars), spacings, name=f"{4 * cars}-axle train")


def old_method(beam: trundle.Beam, case: LoadCase, kind: str = "moment") -> list[float]:
    """The former sampled search of ``kind`` (max and min of every span)."""
    coarse = _coarse_sections(beam, case, kind)
    out = []
    for span in range(beam.n_spans):
        a, b = beam.support_positions[span], beam.support_positions[span + 1]
        for which in ("max", "min"):
            out.append(_sampled_extreme(beam, case, kind, which, a, b, coarse)[0])
    return out


def new_method(beam: trundle.Beam, case: LoadCase) -> list[float]:
    return [e.value for span in range(beam.n_spans)
            for e in absolute_extremes(beam, case, span, "moment")]


def new_deflection(beam: trundle.Beam, case: LoadCase) -> list:
    return [e for span in range(beam.n_spans)
            for e in absolute_extremes(beam, case, span, "deflection")]


def pieces(beam: trundle.Beam, case: LoadCase) -> int:
    total = 0
    for span in range(beam.n_spans):
        a, b = beam.support_positions[span], beam.support_positions[span + 1]
        knots, m, v = _span_end_lines(beam, span)
        for arrangement in _arrangements(case).values():
            total += moment_under_axles(knots, m, v, a, b, arrangement.base,
                                        arrangement.weights, arrangement.confined).pieces
    return total


def timed(fn, repeat: int) -> tuple[float, object]:
    best, result = np.inf, None
    for _ in range(repeat):
        t0 = time.perf_counter()
        result = fn()
        best = min(best, time.perf_counter() - t0)
    return best, result


def main(quick: bool) -> None:
    use_compiled_kernels()  # time the compiled kernels, never their first-run copies
    load = os.getloadavg() if hasattr(os, "getloadavg") else ("?",)
    print(f"load average at start: {', '.join(f'{v:.2f}' for v in load)}")
    truck = trundle.Vehicle([35.0, 145.0, 145.0], [4.3, 4.3], name="three-axle truck")
    crane = trundle.Vehicle([180.0, 180.0], [3.2], name="crane wheels", confined=True)
    jobs = [("truck, 3 spans 24+30+24 m", trundle.Beam([24.0, 30.0, 24.0]), truck),
            ("truck, 10 spans of 30 m", trundle.Beam([30.0] * (3 if quick else 10)), truck),
            ("80-axle train, 10 spans of 30 m", trundle.Beam([30.0] * (3 if quick else 10)),
             train(2 if quick else 20)),
            ("crane wheels confined, 6 spans of 7.5 m", trundle.Beam([7.5] * 6), crane)]
    repeat = 1 if quick else 3
    print(f"{'job':42s} {'old':>10s} {'new':>10s} {'new/old':>8s} {'pieces':>8s} "
          f"{'old below exact (worst, relative)':>34s}")
    for label, beam, vehicle in jobs:
        case = LoadCase(vehicle)
        t_old, old = timed(lambda beam=beam, case=case: old_method(beam, case), repeat)
        t_new, new = timed(lambda beam=beam, case=case: new_method(beam, case), repeat)
        old_values, new_values = np.array(old), np.array(new)
        scale = np.abs(new_values).max()
        # max rows: old low when below; min rows: old "low" when above
        sign = np.tile([1.0, -1.0], len(new_values) // 2)
        shortfall = float(np.max(sign * (new_values - old_values)) / scale)
        print(f"{label:42s} {t_old:8.3f} s {t_new:8.3f} s {t_new / t_old:7.2f}x "
              f"{pieces(beam, case):8d} {shortfall:34.2e}")
    print("\ndeflection anywhere (old: sampled search; new: branch and bound certified to 1e-9)")
    print(f"{'job':42s} {'old':>10s} {'new':>10s} {'new/old':>8s} {'certified':>10s} "
          f"{'old below new (worst, relative)':>32s}")
    for label, beam, vehicle in jobs[:1] + jobs[3:]:
        case = LoadCase(vehicle)
        t_old, old = timed(lambda beam=beam, case=case: old_method(beam, case, "deflection"),
                           repeat)
        t_new, new = timed(lambda beam=beam, case=case: new_deflection(beam, case), repeat)
        values = np.array([e.value for e in new])
        sign = np.tile([1.0, -1.0], len(values) // 2)
        shortfall = float(np.max(sign * (values - np.array(old))) / np.abs(values).max())
        certified = sum(e.certified for e in new)
        print(f"{label:42s} {t_old:8.3f} s {t_new:8.3f} s {t_new / t_old:7.2f}x "
              f"{certified:4d} of {len(new):3d} {shortfall:32.2e}")
    load = os.getloadavg() if hasattr(os, "getloadavg") else ("?",)
    print(f"load average at end: {', '.join(f'{v:.2f}' for v in load)}")


if __name__ == "__main__":
    main(quick="--quick" in sys.argv)
