"""Benchmark: a what-if sweep of an axle spacing against standalone envelope runs.

Standard job (invented, the same as scripts/bench_envelope.py): three continuous spans
24 + 30 + 24 m, EI constant, tenth points (31 sections); a five-axle vehicle (axles 50, 110,
110, 90, 90 kN; spacings 3.6, 1.4, s, 1.4 m) both directions, and a uniform load of 9 kN/m
placed anywhere. The third spacing s is swept over 50 values, 4.0 to 8.9 m.

Printed, each the best of a few repeats (numba kernels warm):
  (a) 50 standalone envelopes, one per spacing, built in Python (Beam, Vehicle, envelope):
      moment, shear and reaction at every section and support, as `trundle envelope` does;
      the envelope's cache of lines is emptied before each, as in a fresh process (a
      standalone run), so each builds its lines;
  (b) the same 50 envelopes, each from the model file read again, in one process (what a
      script looping over a model file does: the envelope's cache of lines, keyed on the
      beam's values, reuses the lines from the second run on);
  (c) `trundle.sweep` over the same 50 spacings following the same lines (max and min of
      moment, shear and reaction everywhere): the influence lines are built once and reused
      (the envelope's own cache);
  (d) `trundle.sweep` following two effects only (max reaction at support 1, max moment in
      span 2): only the lines those need are built, once.
The ratios (c)/(a) and (d)/(a) are the cost of the sweep against 50 standalone runs.

Run: python scripts/bench_sweep.py  [--quick]   (--quick: 10 spacings, one repeat)
"""

from __future__ import annotations

import sys
import time

import numpy as np

import trundle
from trundle.analysis import envelope as envelope_module
from trundle.io.loads import loads_of
from trundle.io.modelfile import read_model
from trundle.io.sweeps import sweep
from trundle.scan import use_compiled_kernels

SPANS = [24.0, 30.0, 24.0]
AXLES = [50.0, 110.0, 110.0, 90.0, 90.0]
LANE = 9.0
MODEL = """
title = "Standard three-span job (invented)"
units = "SI"

[beam]
spans = [24.0, 30.0, 24.0]
supports = ["pin", "pin", "pin", "pin"]
EI = 1.0

[[load]]
name = "five-axle"
axles = [50.0, 110.0, 110.0, 90.0, 90.0]
spacings = [3.6, 1.4, SPACING, 1.4]

[[load]]
name = "lane"
uniform = 9.0
"""
ALL_LINES = ("moment max", "moment min", "shear max", "shear min", "reaction max",
             "reaction min")
TWO_EFFECTS = ("reaction max support 1", "moment max span 2")


def standalone_python(spacings: np.ndarray) -> list[float]:
    beam = trundle.Beam(SPANS)
    sections = beam.tenth_points()
    out = []
    for s in spacings:
        envelope_module._PREPARED.clear()  # a standalone run starts without lines
        loads = [trundle.Vehicle(AXLES, [3.6, 1.4, float(s), 1.4], name="five-axle"),
                 trundle.UniformLoad(LANE, name="lane")]
        env = trundle.envelope(beam, loads, sections=sections,
                               effects=("moment", "shear", "reaction"))
        out.append(float(env.max("reaction")[1]))
    return out


def standalone_model_file(spacings: np.ndarray) -> list[float]:
    out = []
    for s in spacings:
        model = read_model(MODEL.replace("SPACING", repr(float(s))))
        cases = [entry.case for entry in loads_of(model)]
        env = trundle.envelope(model.beam, cases, sections=model.sections,
                               effects=("moment", "shear", "reaction"))
        out.append(float(env.max("reaction")[1]))
    return out


def swept(spacings: np.ndarray, effects: tuple[str, ...]) -> object:
    model = read_model(MODEL.replace("SPACING", "{ min = 4.0, max = 9.0 }"))
    start, stop = float(spacings[0]), float(spacings[-1])
    step = round(float(spacings[1] - spacings[0]), 10)
    result = sweep(model, {'load."five-axle".spacings[2]': f"{start!r}:{stop!r}:{step!r} m"},
                   effects)
    assert len(result.points) == len(spacings)
    return result


def _fresh(fn, *args):
    """``fn(*args)`` starting, like a new process, without cached lines."""
    envelope_module._PREPARED.clear()
    return fn(*args)


def _best(fn, repeat: int) -> tuple[float, object]:
    best, result = np.inf, None
    for _ in range(repeat):
        t0 = time.perf_counter()
        result = fn()
        best = min(best, time.perf_counter() - t0)
    return best, result


def main(quick: bool = False) -> None:
    use_compiled_kernels()  # time the compiled kernels, never their first-run copies
    count = 10 if quick else 50
    repeat = 1 if quick else 3
    spacings = np.round(4.0 + 0.1 * np.arange(count), 10)
    standalone_python(spacings[:2])  # load the numba kernels
    swept(spacings[:2], TWO_EFFECTS)
    t_a, direct = _best(lambda: standalone_python(spacings), repeat)
    t_b, from_file = _best(lambda: _fresh(standalone_model_file, spacings), repeat)
    t_c, all_lines = _best(lambda: _fresh(swept, spacings, ALL_LINES), repeat)
    t_d, two = _best(lambda: _fresh(swept, spacings, TWO_EFFECTS), repeat)
    # the sweep must give what the standalone runs give, or the timing means nothing
    reaction = all_lines.values[:, ALL_LINES.index("reaction max")]
    np.testing.assert_allclose(reaction, direct, rtol=1e-12)
    np.testing.assert_allclose(from_file, direct, rtol=1e-12)
    np.testing.assert_allclose(two.values[:, 0], direct, rtol=1e-12)
    print(f"job: spans {SPANS} m, 31 sections, five-axle vehicle + lane; third spacing swept "
          f"over {count} values {spacings[0]:g} to {spacings[-1]:g} m")
    print(f"(a) {count} standalone envelopes (Python objects) : {t_a:8.2f} s")
    print(f"(b) {count} standalone envelopes (model file)     : {t_b:8.2f} s")
    print(f"(c) sweep, the same lines (all sections)        : {t_c:8.2f} s  "
          f"ratio (c)/(a) = {t_c / t_a:.2f}; lines reused at {all_lines.reused_lines} of "
          f"{count} points")
    print(f"(d) sweep, two effects                          : {t_d:8.2f} s  "
          f"ratio (d)/(a) = {t_d / t_a:.2f}")


if __name__ == "__main__":
    main(quick="--quick" in sys.argv)
