"""Benchmark: influence lines for many sections from one factorisation.

Job: a 10-span continuous beam (invented, 20 m spans, one fixed end and two hinges so every
feature of the mesh is used), 1,000 sections x 4 effects (moment, shear left, shear right,
deflection) = 4,000 lines.

Baseline at the same exactness: a line is a cubic between knots, fixed by its value and slope
at every knot. A program that solves one static load case at a time gets the value from a unit
load at the knot and the slope from a unit couple there (dIL/dx = effect of a unit clockwise
couple), so it needs two static solves per knot, each read at all 4,000 effects. We time that
two ways on a sample of knots and scale to all knots: (a) trundle's own static solver, which
re-meshes and factorises per load case but is banded (cost linear in the number of nodes);
(b) a dense solve of the same stiffness per load case (numpy.linalg.solve), the way a
straightforward script built on a general matrix library does it.

Second job, haunches: the same lines on an invented three-span girder with parabolic 1:3
haunches either side of both piers (8 m each), each haunch divided automatically for 1e-8
accuracy on the lines (the default) against 24 equal pieces (``haunch_divisions = 24``, the
piece count of the former prismatic division, with no accuracy control): time, pieces per line,
and the largest ratio of the checked error bound to the tolerance.

Run: PYTHONPATH=src python scripts/bench_influence.py [--quick]
``--quick`` runs it on 40 sections (the test suite runs it so the benchmark cannot rot).
"""

from __future__ import annotations

import sys
import time

import numpy as np

import trundle
from trundle.core import influence as influence_module
from trundle.core.influence import Effect, line_pieces
from trundle.core.statics import PointLoad, PointMoment
from trundle.scan import use_compiled_kernels


def job(quick: bool = False) -> tuple[trundle.Beam, list[Effect], np.ndarray]:
    beam = trundle.Beam([20.0] * 10, supports=["fixed"] + ["pin"] * 10, hinges=[30.0, 50.0])
    sections = np.linspace(0.0, beam.length, 40 if quick else 1000)
    effects = [Effect(kind, at=float(x), side=side) for x in sections
               for kind, side in (("moment", None), ("shear", "left"), ("shear", "right"),
                                  ("deflection", None))]
    return beam, effects, sections


def read_all(result, sections: np.ndarray) -> np.ndarray:
    return np.concatenate([result.moment(sections), result.shear(sections, "left"),
                           result.shear(sections, "right"), result.deflection(sections)])


def main(quick: bool = False) -> None:
    use_compiled_kernels()  # time the compiled kernels, never their first-run copies
    beam, effects, sections = job(quick)
    beam.influence_set(effects[:4])  # warm imports
    runs = []
    for _ in range(3):
        trundle.core.fem._cached_assembly.cache_clear()
        t0 = time.perf_counter()
        lines = beam.influence_set(effects)
        runs.append(time.perf_counter() - t0)
    ours = min(runs)
    runs = []
    for _ in range(3):
        trundle.core.fem._cached_assembly.cache_clear()
        t0 = time.perf_counter()
        line_pieces(beam, effects)
        runs.append(time.perf_counter() - t0)
    own_breaks = min(runs)
    knots = lines.knots
    sample = knots[np.linspace(1, len(knots) - 2, 5 if quick else 40).astype(int)]
    t0 = time.perf_counter()
    worst = 0.0
    n_sec = len(sections)
    for x in sample:
        values = read_all(beam.static([PointLoad(float(x), 1.0)]), sections)
        read_all(beam.static([PointMoment(float(x), 1.0)]), sections)
        # the same numbers from the lines (moment and deflection: continuous, no side to pick)
        ours_values = lines(np.array([x]))[0]
        for k, block in ((0, 0), (3, 3)):
            a = values[block * n_sec:(block + 1) * n_sec]
            b = ours_values[k::4]
            worst = max(worst, np.abs(a - b).max() / (np.abs(a).max() + 1e-300))
    per_knot = (time.perf_counter() - t0) / len(sample)
    baseline = per_knot * len(knots)
    asm = trundle.core.fem.assembly_for(beam, sections)
    K_ff = asm.K[asm.free][:, asm.free].toarray()
    rhs = np.zeros((K_ff.shape[0], 2))
    rhs[0, 0] = rhs[1, 1] = 1.0
    t0 = time.perf_counter()
    for _ in range(5):
        np.linalg.solve(K_ff, rhs)
    dense = (time.perf_counter() - t0) / 5 * len(knots)
    print(f"job: {beam.n_spans} spans, {len(sections)} sections x 4 effects = {len(effects)} "
          f"lines, {len(knots) - 1} cubic pieces each")
    print(f"one factorisation, all lines       : {ours:8.3f} s")
    print(f"each line on its own breaks        : {own_breaks:8.3f} s "
          f"(what envelopes use; shared knots / own: {ours / own_breaks:.1f})")
    print(f"static solve per knot (value+slope): {baseline:8.3f} s "
          f"(timed on {len(sample)} knots, scaled to {len(knots)})")
    print(f"  ratio                            : {baseline / ours:8.1f} x")
    print(f"dense solve per knot (value+slope) : {dense:8.3f} s "
          f"({K_ff.shape[0]} dofs, solve time only, timed on 5 and scaled)")
    print(f"  ratio                            : {dense / ours:8.1f} x")
    print(f"largest difference at sampled knots: {worst:.2e} (relative to the largest ordinate)")
    haunches(quick)


def haunched_beam(divisions: int | None) -> trundle.Beam:
    ei = [(0.0, 22.0, 1.0), (22.0, 30.0, 1.0, 3.0, "parabolic"),
          (30.0, 38.0, 3.0, 1.0, "parabolic"), (38.0, 62.0, 1.0),
          (62.0, 70.0, 1.0, 3.0, "parabolic"), (70.0, 78.0, 3.0, 1.0, "parabolic"),
          (78.0, 100.0, 1.0)]
    return trundle.Beam([30.0, 40.0, 30.0], EI=ei, haunch_divisions=divisions)


def haunches(quick: bool = False) -> None:
    sections = np.linspace(0.0, 100.0, 40 if quick else 1000)
    effects = [Effect(kind, at=float(x), side=side) for x in sections
               for kind, side in (("moment", None), ("shear", "left"), ("shear", "right"),
                                  ("deflection", None))]
    bounds: list[float] = []
    original = influence_module._haunch_lines

    def watched(*args, **kwargs):
        result = original(*args, **kwargs)
        bounds.append(float(result[-1].max()))
        return result

    print(f"haunched girder, {len(effects)} lines (each haunch 8 m, EI 1 -> 3 parabolic):")
    for label, divisions in (("automatic, 1e-8 (default)", None), ("24 equal pieces", 24)):
        beam = haunched_beam(divisions)
        runs = []
        for _ in range(1 if quick else 3):
            trundle.core.fem._cached_assembly.cache_clear()
            bounds.clear()
            influence_module._haunch_lines = watched
            try:
                t0 = time.perf_counter()
                pieces = line_pieces(beam, effects)
                runs.append(time.perf_counter() - t0)
            finally:
                influence_module._haunch_lines = original
        print(f"  {label:26s}: {min(runs):8.3f} s, {len(pieces.nodes) - 1} pieces a line, "
              f"error bound / 1e-8 <= {bounds[-1]:.3g}")


if __name__ == "__main__":
    main(quick="--quick" in sys.argv)
