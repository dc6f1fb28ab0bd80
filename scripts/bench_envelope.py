"""Benchmark: the exact moving-load envelope against a static solve per position, a vectorised
numpy fixed-step scan and a floor estimate; how the cost grows; large jobs; the first run.

Jobs (all invented): continuous beams of equal EI; a three-axle truck (35, 145, 145 kN at
4.3 m, both directions); an 80-axle train (20 four-axle cars) over 10 spans.

Printed, in one run (ratios are what to read; absolute times depend on the machine and on
how loaded it is, so the load average is printed at the start and at the end):
  1. the standard job (3 spans 24 + 30 + 24 m, 31 sections, moment, the truck): the whole
     envelope call against (a) the scan kernel's own time, (b) one static solve per position
     at a step of L/1000, (c) the best numpy fixed-step scan at L/1000 (each line sampled once
     on the grid, axles shifted and added; with its error), (d) a floor estimate
     (pieces of the response to visit × 10 flops at 2 Gflop/s);
  2. growth exponents of the whole call (first call for a beam, lines built; and a repeat
     call, lines reused) and of the kernel over sections (31 → 3,001), spans (1 → 100, tenth
     points) and axles (3 → 80);
  3. large jobs: 3 spans and 3,001 sections, moment + shear left/right + deflection, the truck
     (time; peak memory of a fresh process); the 80-axle train over 10 spans at tenth points
     (time, ratio to the floor); kernel efficiency on 2 threads;
  4. the first run in a fresh process with a cold and a warm numba cache.

Run: PYTHONPATH=src python scripts/bench_envelope.py [--quick]
``--quick`` runs every part at tiny sizes (the test suite runs it so the benchmark cannot rot);
its numbers mean nothing.
"""

from __future__ import annotations

import importlib
import os
import subprocess
import sys
import tempfile
import time

import numpy as np

import trundle
from trundle.core.fem import assemble, build_mesh
from trundle.scan import kernels, use_compiled_kernels

# the module that holds envelope(), wherever it lives
envelope_module = importlib.import_module(trundle.envelope.__module__)
TRUCK = ([35.0, 145.0, 145.0], [4.3, 4.3])
FLOPS_PER_PIECE = 10.0
FLOP_RATE = 2e9  # a nominal scalar core [flop/s] for the floor estimate


def truck() -> trundle.Vehicle:
    return trundle.Vehicle(*TRUCK, name="three-axle truck")


def train(cars: int = 20) -> trundle.Vehicle:
    """Four-axle cars, 200 kN axles: 1.8 m bogie spacing, 7.2 m between bogies, 3.0 m
    between cars (invented)."""
    spacings = []
    for c in range(cars):
        spacings += [1.8, 7.2, 1.8]
        if c < cars - 1:
            spacings.append(3.0)
    return trundle.Vehicle([200.0] * (4 * cars), spacings, name=f"{4 * cars}-axle train")


def sections_of(beam: trundle.Beam, per_span: int) -> np.ndarray:
    ends = beam.support_positions
    return np.unique(np.concatenate([np.linspace(a, b, per_span + 1)
                                     for a, b in zip(ends[:-1], ends[1:], strict=True)]))


def timed(fn, repeat: int = 5, budget: float = 2.0) -> float:
    """Shortest time of fn() over the repeats [s] (on a shared machine the other runs measure
    the neighbours); fewer repeats when one call is slow."""
    times = []
    start = time.perf_counter()
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
        if time.perf_counter() - start > budget:
            break
    return float(np.min(times))


def run(beam, sections, load, effects=("moment",)):
    return trundle.envelope(beam, [load], sections=sections, effects=effects)


def first_call(beam, sections, load, effects=("moment",)) -> float:
    """The whole call for a beam seen for the first time (lines built, not reused)."""
    def fresh():
        envelope_module._PREPARED.clear()
        trundle.core.fem._cached_assembly.cache_clear()
        run(beam, sections, load, effects)
    return timed(fresh, repeat=3)


def prepared(env):
    """The distinct lines the envelope scans (shear left/right inside a span are one)."""
    families = tuple(f for f in envelope_module.REQUESTABLE
                     if any(k.startswith(f) for k, v in env.index.items() if v.size))
    return envelope_module._prepared_lines(env.beam, env.sections, families)[-1]


def kernel_calls(env, load):
    """The kernel calls the envelope makes for ``load`` (both directions in one call), as
    (arguments, loads-on-ends arrays)."""
    batch = prepared(env)
    case = trundle.LoadCase(load)
    plans = envelope_module._scan_plans(batch, envelope_module._arrangements(case))
    return batch, [(plan.args, plan.own) for _, plan in plans]


def kernel_time(env, load, threads: int | None = 1) -> float:
    """The scan kernel's own time (as the envelope calls it), on ``threads`` threads."""
    _, calls = kernel_calls(env, load)

    def go():
        for args, own in calls:
            kernels.scan_rows(*args, threads=threads, own_knot=own[0], own_value=own[1],
                              end_live=own[2])
    go()
    return timed(go, repeat=7)


def paired_efficiency(env, load, pairs: int = 15) -> tuple[float, float, float]:
    """(t1, t2, median of t1 / (2 · t2) over pairs): one- and two-thread kernel runs taken
    in turn, so that a slower or faster spell of the machine (a shared virtual machine's
    cores change speed from one second to the next) falls on both sides of each pair."""
    _, calls = kernel_calls(env, load)

    def go(threads: int) -> float:
        t0 = time.perf_counter()
        for args, own in calls:
            kernels.scan_rows(*args, threads=threads, own_knot=own[0], own_value=own[1],
                              end_live=own[2])
        return time.perf_counter() - t0

    go(1), go(2)
    runs = np.array([(go(1), go(2)) for _ in range(pairs)])
    return (float(np.median(runs[:, 0])), float(np.median(runs[:, 1])),
            float(np.median(runs[:, 0] / (2.0 * runs[:, 1]))))


def slice_balance(env, load) -> tuple[float, float]:
    """(serial time of the chunks, the time two threads need for them when each thread takes
    the next chunk as soon as it is free, as ``kernels.scan_rows_parallel`` does): every chunk
    the kernel would cut is timed alone, serially, so a loaded machine spoils this less;
    t / (2 · that time) bounds the two-thread efficiency by the split of the work alone."""
    _, calls = kernel_calls(env, load)
    total, makespan = 0.0, 0.0
    for args, own in calls:
        lines, n_terms, prune = args[11], args[8].shape[0], args[15]
        bounds = kernels.chunk_bounds(kernels.row_work(args[1], lines, n_terms, prune), 2)
        free_at = [0.0, 0.0]
        for lo, hi in zip(bounds[:-1], bounds[1:], strict=True):
            part = list(args)
            part[10] = args[10] if args[10].shape[0] == 1 else args[10][lo:hi]
            part[11] = lines[lo:hi]
            t = timed(lambda part=part, own=own: kernels.scan_rows(
                *part, threads=1, own_knot=own[0], own_value=own[1], end_live=own[2]),
                repeat=7)
            total += t
            free_at[free_at.index(min(free_at))] += t
        makespan += max(free_at)
    return total, makespan


def response_pieces(env, load) -> int:
    """Pieces of the response a sweep visits without pruning: per line and direction, every
    line piece once for every axle, plus the entry and exit."""
    batch = prepared(env)
    n_axles = len(load.loads)
    return int(2 * ((batch.n_pieces + 1) * n_axles).sum())


def floor(env, load) -> float:
    return response_pieces(env, load) * FLOPS_PER_PIECE / FLOP_RATE


class StaticScan:
    """A plain finite-element moving-load scan: the beam meshed with every section as a node,
    factorised once, one static solve per load position; moments read at the sections."""

    def __init__(self, beam, sections):
        self.beam = beam
        self.mesh = build_mesh(beam, tuple(sections))
        self.k_el = self.mesh.element_k  # (a prismatic beam here: Hermite loads are exact)
        self.asm = assemble(self.mesh)
        x = self.mesh.x
        self.nodes = np.clip(np.searchsorted(x, sections - 1e-9 * beam.length), 0, len(x) - 1)

    def moments(self, xs, ps):
        mesh = self.mesh
        F = np.zeros(mesh.n_dof)
        q = np.zeros((len(mesh.lengths), 4))
        for x, p in zip(xs, ps, strict=True):
            if not (0.0 <= x <= self.beam.length):
                continue
            e = min(int(np.searchsorted(mesh.x, x, side="right")) - 1, len(mesh.lengths) - 1)
            h = mesh.lengths[e]
            s = (x - mesh.x[e]) / h
            n = p * np.array([1 - 3 * s**2 + 2 * s**3, h * (s - 2 * s**2 + s**3),
                              3 * s**2 - 2 * s**3, h * (-(s**2) + s**3)])
            q[e] += n
            F[mesh.element_dofs[e]] += n
        u = self.asm.expand(self.asm.solve(F[self.asm.free]))
        Q = np.einsum("eij,ej->ei", self.k_el, u[mesh.element_dofs]) - q
        n_el = len(mesh.lengths)
        right = np.minimum(self.nodes, n_el - 1)
        left = np.maximum(self.nodes - 1, 0)
        return np.where(self.nodes < n_el, Q[right, 1], -Q[left, 3])


def numpy_scan_setup(env, step: float):
    """Every line sampled once on the grid x = k·step (outside the timing, as trundle's lines
    are reused between calls)."""
    length = env.beam.length
    x = np.arange(0.0, length + 0.5 * step, step)
    return env.batch.ordinates(np.minimum(x, length), "right")


def numpy_scan(ordinates, load, step: float):
    """Fixed-step scan by shift and add: axle offsets rounded to the grid; both directions."""
    shifts = np.round(np.cumsum([0.0, *load.spacings]) / step).astype(int)
    reach = int(shifts.max())
    n_x, n_lines = ordinates.shape
    padded = np.zeros((n_x + 2 * reach, n_lines))
    padded[reach:reach + n_x] = ordinates
    best_max = np.zeros(n_lines)
    best_min = np.zeros(n_lines)
    n_pos = n_x + reach
    for direction in (1, -1):
        total = np.zeros((n_pos, n_lines))
        for s, p in zip(shifts, load.loads, strict=True):
            # position i puts the reference axle at grid point i (− reach); the axle s steps
            # behind (direction +1) or ahead (−1) of it
            start = reach - s if direction == 1 else s
            total += p * padded[start:start + n_pos]
        np.maximum(best_max, total.max(axis=0), out=best_max)
        np.minimum(best_min, total.min(axis=0), out=best_min)
    return best_max, best_min


def exponent(sizes, times) -> tuple[float, float]:
    """(overall, last step) growth exponents d log t / d log n."""
    sizes, times = np.asarray(sizes, float), np.asarray(times, float)
    whole = np.log(times[-1] / times[0]) / np.log(sizes[-1] / sizes[0])
    last = np.log(times[-1] / times[-2]) / np.log(sizes[-1] / sizes[-2])
    return float(whole), float(last)


def load_average() -> str:
    try:
        return " ".join(f"{v:.2f}" for v in os.getloadavg())
    except OSError:
        return "n/a"


def standard_job(quick: bool) -> None:
    beam = trundle.Beam([24.0, 30.0, 24.0])
    sections = beam.tenth_points()
    load = truck()
    env = run(beam, sections, load)
    t_call = timed(lambda: run(beam, sections, load), repeat=20 if not quick else 2)
    t_kernel = kernel_time(env, load)
    t_floor = floor(env, load)
    exact_max, exact_min = env.max("moment"), env.min("moment")
    scale = max(np.abs(exact_max).max(), np.abs(exact_min).max())

    step = beam.length / 1000
    ordinates = numpy_scan_setup(env, step)
    lines = env.lines_of("moment")
    t_numpy = timed(lambda: numpy_scan(ordinates, load, step), repeat=20 if not quick else 2)
    n_max, n_min = numpy_scan(ordinates, load, step)
    err_numpy = max(np.abs(n_max[lines] - exact_max).max(),
                    np.abs(n_min[lines] - exact_min).max()) / scale

    static = StaticScan(beam, sections)
    offsets = np.cumsum([0.0, *load.spacings])
    xi = np.arange(offsets.min(), beam.length + offsets.max() + step, step)
    n_positions = 2 * len(xi)
    sample = xi[np.linspace(0, len(xi) - 1, 20 if quick else 200).astype(int)]
    t0 = time.perf_counter()
    worst = np.zeros(len(sections))
    for x in sample:
        worst = np.maximum(worst, static.moments(x - offsets, load.loads))
    t_static = (time.perf_counter() - t0) / len(sample) * n_positions

    print(f"1. standard job: spans 24 + 30 + 24 m, {len(sections)} sections, moment, "
          f"{load.name} both ways ({response_pieces(env, load)} response pieces)")
    print(f"   {'':38s} {'time':>10s} {'ratio to trundle':>17s}")
    rows = [("trundle, whole envelope call", t_call),
            ("(a) its scan kernel alone", t_kernel),
            (f"(b) static solve per position, L/1000 ({n_positions})", t_static),
            ("(c) numpy shift-and-add scan, L/1000", t_numpy),
            (f"(d) floor ({FLOPS_PER_PIECE:g} flops/piece, {FLOP_RATE / 1e9:g} Gflop/s)",
             t_floor)]
    for label, t in rows:
        print(f"   {label:38s} {t * 1e3:8.3f} ms {t / t_call:16.3g}x")
    print(f"   whole call / kernel: {t_call / t_kernel:.1f};  numpy scan / whole call: "
          f"{t_numpy / t_call:.2f};  worst error of the numpy scan: {err_numpy:.1e} of the "
          "largest moment (trundle: exact)")


def growth(quick: bool) -> None:
    print("\n2. growth (shortest of repeated runs; exponent = d log t / d log n over the "
          "whole range, and over the last step)")
    load = truck()
    cases = {
        "sections (3 spans)": [(trundle.Beam([24.0, 30.0, 24.0]), per)
                               for per in ((2, 5, 10) if quick else (10, 30, 100, 300, 1000))],
        "spans (tenth points)": [(trundle.Beam([25.0] * n), 10)
                                 for n in ((1, 2, 3) if quick else (1, 3, 10, 30, 100))],
    }
    for name, jobs in cases.items():
        sizes, first, repeat, kernel = [], [], [], []
        for beam, per in jobs:
            sections = sections_of(beam, per)
            env = run(beam, sections, load)
            sizes.append(len(sections) if name.startswith("sections") else beam.n_spans)
            first.append(first_call(beam, sections, load))
            repeat.append(timed(lambda b=beam, s=sections: run(b, s, load)))
            kernel.append(kernel_time(env, load))
        _growth_table(name, sizes, first, repeat, kernel)
    beam = trundle.Beam([24.0, 30.0, 24.0])
    sections = beam.tenth_points()
    sizes, first, repeat, kernel = [], [], [], []
    for cars in ((1, 2) if quick else (1, 3, 8, 20)):
        vehicle = train(cars)
        env = run(beam, sections, vehicle)
        sizes.append(len(vehicle.loads))
        first.append(first_call(beam, sections, vehicle))
        repeat.append(timed(lambda v=vehicle: run(beam, sections, v)))
        kernel.append(kernel_time(env, vehicle))
    _growth_table("axles (3 spans, 31 sections)", sizes, first, repeat, kernel)


def _growth_table(name, sizes, first, repeat, kernel) -> None:
    print(f"   {name}")
    print(f"   {'n':>8s} {'first call':>12s} {'repeat call':>12s} {'kernel':>12s}")
    for n, a, b, c in zip(sizes, first, repeat, kernel, strict=True):
        print(f"   {n:8d} {a * 1e3:9.2f} ms {b * 1e3:9.2f} ms {c * 1e3:9.3f} ms")
    for label, t in (("first call", first), ("repeat call", repeat), ("kernel", kernel)):
        whole, last = exponent(sizes, t)
        print(f"   exponent {label:12s} {whole:5.2f} (last step {last:5.2f})")


BIG_CODE = """
import resource, sys, time, tracemalloc
import numpy as np
import trundle
from trundle.analysis import envelope as envelope_module
per, effects = int(sys.argv[1]), tuple(sys.argv[2].split(","))
beam = trundle.Beam([24.0, 30.0, 24.0])
ends = beam.support_positions
sections = np.unique(np.concatenate([np.linspace(a, b, per + 1)
                                     for a, b in zip(ends[:-1], ends[1:])]))
truck = trundle.Vehicle([35.0, 145.0, 145.0], [4.3, 4.3])
trundle.envelope(trundle.Beam([10.0]), [truck], effects=effects)  # kernels loaded
before = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
t0 = time.perf_counter()
env = trundle.envelope(beam, [truck], sections=sections, effects=effects)
t = time.perf_counter() - t0
t0 = time.perf_counter()
env = trundle.envelope(beam, [truck], sections=sections, effects=effects)
again = time.perf_counter() - t0
after = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
# the call's own allocations (numpy reports its arrays to tracemalloc), lines built afresh
envelope_module._PREPARED.clear()
trundle.core.fem._cached_assembly.cache_clear()
tracemalloc.start()
env = trundle.envelope(beam, [truck], sections=sections, effects=effects)
peak = tracemalloc.get_traced_memory()[1]
tracemalloc.stop()
print(len(sections), len(env.effects), t, again, before / 1024, after / 1024, peak / 2**20)
"""


def large_jobs(quick: bool) -> None:
    print("\n3. large jobs")
    per = 3 if quick else 1000
    effects = "moment,shear,deflection"
    out = subprocess.run([sys.executable, "-c", BIG_CODE, str(per), effects],
                         capture_output=True, text=True, check=True, env=os.environ.copy())
    n_sec, n_lines, t, again, before, after, peak = out.stdout.split()
    print(f"   3 spans, {n_sec} sections, moment + shear L/R + deflection ({n_lines} lines), "
          f"three-axle truck, fresh process: first call {float(t):.3f} s (target < 1 s), "
          f"again with the lines kept {float(again):.3f} s; memory: the call's own peak "
          f"{float(peak):.0f} MB (tracemalloc), the process's peak resident set "
          f"{float(after):.0f} MB (target < 500 MB; before the call {float(before):.0f} MB: "
          "interpreter, numpy, scipy, numba)")

    beam = trundle.Beam([30.0] * (2 if quick else 10))
    sections = beam.tenth_points()
    vehicle = train(2 if quick else 20)
    env = run(beam, sections, vehicle)
    t_call = timed(lambda: run(beam, sections, vehicle), repeat=3)
    t_first = first_call(beam, sections, vehicle)
    t_floor = floor(env, vehicle)
    t_kernel = kernel_time(env, vehicle)
    print(f"   {len(vehicle.loads)}-axle train over {beam.n_spans} spans of 30 m, "
          f"{len(sections)} tenth points, moment: whole call {t_call * 1e3:.1f} ms (first call "
          f"{t_first * 1e3:.1f} ms), kernel {t_kernel * 1e3:.1f} ms, floor "
          f"{t_floor * 1e3:.2f} ms; whole call / floor {t_call / t_floor:.1f}")

    print("   kernel on 1 and 2 threads: efficiency = t1 / (2 · t2) on the wall clock, the "
          "median over 15 pairs of runs taken in turn (spoilt by any other load on the machine: "
          "see the load average); balance = t1 / (2 · the "
          "time two threads need for the chunks, each chunk timed alone, every thread taking "
          "the next chunk when free): the efficiency the split of the work allows")
    big_beam = trundle.Beam([24.0, 30.0, 24.0])
    jobs = [("3 spans, 3,001 sections, moment + shear + deflection, truck", big_beam,
             sections_of(big_beam, 3 if quick else 1000), truck(),
             ("moment", "shear", "deflection")),
            ("10 spans, tenth points, 80-axle train", beam, sections, vehicle, ("moment",)),
            ("100 spans, tenth points, truck", trundle.Beam([25.0] * (3 if quick else 100)),
             None, truck(), ("moment",))]
    for label, b, s, ld, eff in jobs:
        s = sections_of(b, 10) if s is None else s
        env = run(b, s, ld, eff)
        one, two, efficiency = paired_efficiency(env, ld, pairs=3 if quick else 15)
        auto = kernel_time(env, ld, threads=None)
        alone, slowest = slice_balance(env, ld)
        print(f"     {label:60s} 1: {one * 1e3:7.2f} ms  2: {two * 1e3:7.2f} ms  "
              f"efficiency {efficiency:.2f}  balance {alone / (2 * slowest):.2f}  "
              f"(threads chosen by trundle: {auto * 1e3:.2f} ms; load "
              f"{load_average().split()[0]})")


FIRST_CODE = """
import time
import numpy as np
marks = []
def mark():
    marks.append((time.perf_counter(), time.process_time()))
mark()
import trundle
mark()
beam = trundle.Beam([24.0, 30.0, 24.0])
truck = trundle.Vehicle([35.0, 145.0, 145.0], [4.3, 4.3])
trundle.envelope(beam, [truck], effects=("moment",))
mark()
searched = trundle.Vehicle([35.0, 145.0, 145.0], [4.3, (4.3, 9.0)])
trundle.envelope(beam, [searched], effects=("moment",))
mark()
sections = np.linspace(0.0, 78.0, 3001)
trundle.envelope(beam, [truck], effects=("moment", "shear", "deflection"), sections=sections)
mark()
from trundle.core.influence import Effect, influence_set
from trundle.scan.batched import scan_fleet
from trundle.scan.engine import LineBatch
lines = LineBatch.from_set(influence_set(beam, [Effect("moment", at=12.0),
                                                Effect("reaction", support=1)]))
start = np.array([0, 3, 5]); weight = np.array([35.0, 145.0, 145.0, 100.0, 100.0])
offset = np.array([0.0, 4.3, 8.6, 0.0, 1.8])
scan_fleet(lines, start, weight, offset, parallel=False)
mark()
print(*(b[k] - a[k] for k in (0, 1) for a, b in zip(marks[:-1], marks[1:])))
"""


def first_run(quick: bool) -> None:
    print("\n4. first run in a fresh process [s] (wall clock, and CPU time of the process: "
          "on a loaded machine the CPU time is what the work costs): import trundle; then the "
          "first use of each kind of job, in this order: the standard envelope (3 spans, "
          "moment, truck); the same with a searched spacing; a large envelope (3,001 "
          "sections, moment + shear + deflection: beyond the first-run budget, so with a "
          "cold cache it compiles the loop body, and it runs on threads); the fleet kernel "
          "(2 trucks, serial as in a Dask worker). With a cold cache the first two run the "
          "kernels' interpreted copies (the first-run tier)")
    if quick:
        print("   (skipped in --quick: compiling takes seconds)")
        return
    with tempfile.TemporaryDirectory() as cache:
        env = {**os.environ, "NUMBA_CACHE_DIR": cache}
        for label in ("cold numba cache", "warm numba cache"):
            print(f"   load average before the {label} run: {load_average()}")
            out = subprocess.run([sys.executable, "-c", FIRST_CODE], env=env,
                                 capture_output=True, text=True, check=True)
            values = [float(v) for v in out.stdout.split()]
            for clock, part in (("wall", values[:5]), ("CPU", values[5:])):
                a, b, c, d, e = part
                print(f"   {label:17s} {clock:4s} import {a:5.2f}  envelope {b:5.2f}  "
                      f"searched {c:5.2f}  large {d:5.2f}  fleet {e:5.2f}")


def main(quick: bool = False) -> None:
    use_compiled_kernels()  # time the compiled kernels, never their first-run copies
    print(f"load average at start (1, 5, 15 min): {load_average()}; "
          f"{os.cpu_count()} cpus; numba threads {kernels._threads()}")
    standard_job(quick)
    growth(quick)
    large_jobs(quick)
    first_run(quick)
    print(f"\nload average at end: {load_average()}")


if __name__ == "__main__":
    main(quick="--quick" in sys.argv)
