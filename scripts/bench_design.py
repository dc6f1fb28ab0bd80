"""Benchmark: a three-span HL-93 design envelope with permanent loads against today's
single-vehicle envelope on the same beam.

Standard job (invented): three continuous spans 80 + 110 + 80 ft, EI constant, tenth points;
(a) the design truck alone (one vehicle, searched rear spacing), envelope of moment, shear,
deflection and reactions; (b) the HL-93 design case (three alternatives, the two-truck rule with
its searched gap) with each alternative's own envelope, four permanent loads and the Strength I
combination. The target of issue 11 is (b) <= 2 x (a).

Run: PYTHONPATH=src python scripts/bench_design.py [--quick]
"""

from __future__ import annotations

import sys
import time

import numpy as np

import trundle
from trundle.analysis.case_envelopes import case_envelopes
from trundle.analysis.combinations import BRIDGE_STRENGTH_I, design_envelope
from trundle.analysis.envelope import _PREPARED
from trundle.analysis.permanent import PermanentLoad, permanent_effects
from trundle.analysis.rules import _HOGGING
from trundle.io.loads import read_library_model
from trundle.scan import use_compiled_kernels

SPANS = [80.0, 110.0, 80.0]
PERMANENT = [PermanentLoad("girder and deck", "DC", "self weight", 1.35),
             PermanentLoad("barrier", "DC", "superimposed dead", 0.22),
             PermanentLoad("diaphragm", "DC", "point", 4.5, at=80.0),
             PermanentLoad("wearing surface", "DW", "superimposed dead", 0.28)]


TRUCK = read_library_model("hl93-truck")
HL93 = read_library_model("hl93").load


def single_vehicle(beam: trundle.Beam, sections: np.ndarray) -> None:
    truck = TRUCK
    trundle.envelope(beam, [trundle.LoadCase(truck.load, impact=truck.impact)],
                     sections=sections, effects=("moment", "shear", "deflection", "reaction"))


def design(beam: trundle.Beam, sections: np.ndarray) -> None:
    cases = case_envelopes(beam, [HL93], sections)
    permanent = permanent_effects(beam, PERMANENT, sections)
    design_envelope(BRIDGE_STRENGTH_I, permanent, cases)


def _best(fn, repeat: int, cold: bool) -> float:
    best = np.inf
    for _ in range(repeat):
        if cold:  # a beam seen for the first time: its lines and hogging regions are built
            _PREPARED.clear()
            _HOGGING.clear()
        start = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - start)
    return best


def main(quick: bool = False) -> None:
    use_compiled_kernels()  # time the compiled kernels, never their first-run copies
    beam = trundle.Beam(SPANS, EI=1.0e7)
    sections = beam.tenth_points()
    repeat = 1 if quick else 5
    single_vehicle(beam, sections)  # compile / warm the kernels
    print(f"sections: {sections.size}")
    for cold in (True, False):
        t_single = _best(lambda: single_vehicle(beam, sections), repeat, cold)
        t_design = _best(lambda: design(beam, sections), repeat, cold)
        label = "lines built in the call" if cold else "lines already prepared"
        print(f"{label}:")
        print(f"  (a) single vehicle envelope:             {t_single:8.3f} s")
        print(f"  (b) HL-93 design envelope + permanent:   {t_design:8.3f} s")
        print(f"  ratio (b)/(a): {t_design / t_single:.2f} (target <= 2)")


if __name__ == "__main__":
    main(quick="--quick" in sys.argv)
