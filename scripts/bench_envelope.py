"""Benchmark: the exact moving-load envelope against fixed-step scans.

Standard job (invented): three continuous spans 24 + 30 + 24 m, EI constant; 31 sections
(tenth points) x (moment, shear left, shear right) + every reaction; a five-axle vehicle
(axles 50, 110, 110, 90, 90 kN; spacings 3.6, 1.4, (4.0 .. 9.0), 1.4 m — the third searched),
both directions; plus a uniform load of 9 kN/m placed anywhere.

Printed:
  (a) time of the exact envelope (numba kernels warm);
  (b) one static solve per load position at a step of span/1000, for a grid of 17 values of
      the searched spacing and both directions, the way a general finite-element program is
      scripted for moving loads: (b1) stiffness factorised once and reused, (b2) assembled and
      factorised again for every position. Both are timed on a sample of positions and scaled
      to the full count; the accuracy of each is measured on the full scan of (b1);
  (c) a vectorised numpy fixed-step scan over the same influence lines at span/1000;
  a scaling table (sections, axles, spans) and the first-run compile time with a cold and a
  warm numba cache.

Run: .venv/bin/python scripts/bench_envelope.py  [--quick]
"""

from __future__ import annotations

import os
import subprocess
import sys
import tempfile
import time

import numpy as np

import trundle
from trundle.analysis.envelope import _line_effects
from trundle.core.fem import assemble, build_mesh, element_stiffness

SPANS = [24.0, 30.0, 24.0]
AXLES = [50.0, 110.0, 110.0, 90.0, 90.0]
SPACINGS = [3.6, 1.4, (4.0, 9.0), 1.4]
LANE = 9.0
BASELINE_SPACINGS = 17


def job(spans=SPANS, axles=AXLES, spacings=SPACINGS, sections_per_span=10):
    beam = trundle.Beam(spans)
    ends = beam.support_positions
    sections = np.unique(np.concatenate([np.linspace(a, b, sections_per_span + 1)
                                         for a, b in zip(ends[:-1], ends[1:], strict=True)]))
    loads = [trundle.Vehicle(axles, spacings, name="five-axle"),
             trundle.UniformLoad(LANE, name="lane")]
    return beam, sections, loads


def exact(beam, sections, loads):
    return trundle.envelope(beam, loads, sections=sections,
                            effects=("moment", "shear", "reaction"))


def _timed(fn, repeat=3):
    best = np.inf
    result = None
    for _ in range(repeat):
        t0 = time.perf_counter()
        result = fn()
        best = min(best, time.perf_counter() - t0)
    return best, result


class StaticScan:
    """A plain finite-element moving-load scan: one static solve per load position."""

    def __init__(self, beam, sections):
        self.beam = beam
        self.sections = sections
        self.mesh = build_mesh(beam, tuple(sections))
        self.k_el = element_stiffness(self.mesh.element_EI, self.mesh.lengths)
        self._factorise()

    def _factorise(self):
        asm = assemble(self.mesh)
        self.asm = asm

    def solve_position(self, xs, ps, reassemble=False):
        mesh = self.mesh
        if reassemble:
            self._factorise()
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
        nodes = np.array([mesh.node_at(x) for x in self.sections])
        right = np.minimum(nodes, len(mesh.lengths) - 1)
        left = np.maximum(nodes - 1, 0)
        moment = np.where(nodes < len(mesh.lengths), Q[right, 1], -Q[left, 3])
        shear_right = np.where(nodes < len(mesh.lengths), -Q[right, 0], 0.0)
        shear_left = np.where(nodes > 0, Q[left, 2], 0.0)
        R = self.asm.K @ u - F
        reactions = -R[mesh.v_dof[mesh.support_nodes]]
        return np.concatenate([moment, shear_left, shear_right, reactions])


def positions_for(beam, offsets, step):
    return np.arange(offsets.min(), beam.length + offsets.max() + step, step)


def main(quick: bool = False) -> None:
    beam, sections, loads = job()
    exact(beam, sections, loads)  # compile / load kernels
    t_exact, env = _timed(lambda: exact(beam, sections, loads))
    exact_max = np.concatenate([env.max("moment"), env.max("shear", "left"),
                                env.max("shear", "right"), env.max("reaction")])
    exact_min = np.concatenate([env.min("moment"), env.min("shear", "left"),
                                env.min("shear", "right"), env.min("reaction")])
    n_lines = len(env.effects)
    print(f"job: spans {SPANS} m, {len(sections)} sections x (moment, shear L/R) + "
          f"{len(beam.supports)} reactions = {n_lines} lines; five-axle vehicle with one "
          "searched spacing, both directions; uniform load anywhere")
    print(f"(a) exact envelope                      : {t_exact * 1e3:9.1f} ms")

    step = min(SPANS) / 1000
    vehicle = loads[0]
    grid = np.linspace(4.0, 9.0, BASELINE_SPACINGS)
    scan = StaticScan(beam, sections)
    n_positions = 0
    for g in grid:
        u = vehicle.axle_offsets([g])
        n_positions += 2 * len(positions_for(beam, u, step))
    sample = 60 if quick else 200
    u = vehicle.axle_offsets([grid[0]])
    xi = positions_for(beam, u, step)
    pick = xi[np.linspace(0, len(xi) - 1, sample).astype(int)]
    t0 = time.perf_counter()
    for x in pick:
        scan.solve_position(x - u, vehicle.loads)
    per_reused = (time.perf_counter() - t0) / sample
    t0 = time.perf_counter()
    for x in pick[: sample // 4]:
        scan.solve_position(x - u, vehicle.loads, reassemble=True)
    per_reassembled = (time.perf_counter() - t0) / (sample // 4)
    t_b1 = per_reused * n_positions
    t_b2 = per_reassembled * n_positions

    # accuracy of the fixed-step static scan: run it in full on the vehicle part only
    vehicle_env = trundle.envelope(beam, [vehicle], sections=sections,
                                   effects=("moment", "shear", "reaction"))
    v_max = np.concatenate([vehicle_env.max("moment"), vehicle_env.max("shear", "left"),
                            vehicle_env.max("shear", "right"), vehicle_env.max("reaction")])
    if quick:
        err_b = float("nan")
    else:
        best = np.zeros_like(v_max)
        for g in grid[:: 4 if quick else 1]:
            u = vehicle.axle_offsets([g])
            for direction in (1, -1):
                uu = u if direction == 1 else -u
                for x in positions_for(beam, uu, step):
                    best = np.maximum(best, scan.solve_position(x - uu, vehicle.loads))
        err_b = np.max(np.abs(best - v_max) / np.abs(v_max).max())

    # (c) vectorised numpy scan over the same lines
    effects, _ = _line_effects(beam, sections, ("moment", "shear", "reaction"))
    lines = beam.influence_set(effects)

    def numpy_scan():
        best_max = np.zeros(n_lines)
        best_min = np.zeros(n_lines)
        for g in grid:
            u = vehicle.axle_offsets([g])
            for uu in (u, -u):
                xi = positions_for(beam, uu, step)
                total = np.zeros((len(xi), n_lines))
                for d, p in zip(uu, vehicle.loads, strict=True):
                    x = xi - d
                    on = (x >= 0) & (x <= beam.length)
                    total[on] += p * lines(x[on])
                best_max = np.maximum(best_max, total.max(axis=0))
                best_min = np.minimum(best_min, total.min(axis=0))
        x = np.arange(0.0, beam.length + step, step)
        ordinates = lines(np.minimum(x, beam.length))
        pos = np.trapezoid(np.maximum(ordinates, 0), x, axis=0) * LANE
        neg = np.trapezoid(np.minimum(ordinates, 0), x, axis=0) * LANE
        return np.maximum(best_max, pos), np.minimum(best_min, neg)

    t_c, (c_max, c_min) = _timed(numpy_scan, repeat=1 if quick else 2)
    order = np.concatenate([env.lines_of("moment"), env.lines_of("shear", "left"),
                            env.lines_of("shear", "right"), env.lines_of("reaction")])
    scale = max(np.abs(exact_max).max(), np.abs(exact_min).max())
    err_c = max(np.max(np.abs(c_max[order] - exact_max)), np.max(np.abs(c_min[order] - exact_min)))
    print(f"(b1) static solve per position, reused : {t_b1:9.2f} s  "
          f"({n_positions} positions; x{t_b1 / t_exact:,.0f} slower; "
          f"worst error {err_b:.1e} of the largest value, vehicle part)")
    print(f"(b2) static solve per position, rebuilt: {t_b2:9.2f} s  "
          f"(x{t_b2 / t_exact:,.0f} slower)")
    print(f"(c)  numpy fixed-step scan, same lines : {t_c:9.3f} s  "
          f"(x{t_c / t_exact:,.1f} slower; worst error {err_c / scale:.1e} of the largest value)")

    print("\nscaling of (a) [ms]:")
    rows = []
    for n in (5, 10, 30, 100):
        b, s, ld = job(sections_per_span=n)
        rows.append((f"sections {len(s)}", _timed(lambda b=b, s=s, ld=ld: exact(b, s, ld))[0]))
    for k in (2, 5, 10, 20):
        ax = [100.0] * k
        sp = [1.5] * (k - 1)
        b, s, ld = job(axles=ax, spacings=sp)
        rows.append((f"axles {k} (fixed spacing)",
                     _timed(lambda b=b, s=s, ld=ld: exact(b, s, ld))[0]))
    for n in (1, 3, 10):
        b, s, ld = job(spans=[25.0] * n)
        rows.append((f"spans {n}", _timed(lambda b=b, s=s, ld=ld: exact(b, s, ld))[0]))
    for label, t in rows:
        print(f"  {label:28s} {t * 1e3:9.1f}")

    print("\nfirst run in a new process (import + one envelope) [s]:")
    code = ("import time; t=time.perf_counter(); import sys; sys.path.insert(0, 'scripts'); "
            "import bench_envelope as b; b.exact(*b.job()); print(time.perf_counter()-t)")
    with tempfile.TemporaryDirectory() as cache:
        envvars = {**os.environ, "NUMBA_CACHE_DIR": cache}
        for label in ("cold numba cache (compiles)", "warm numba cache"):
            out = subprocess.run([sys.executable, "-c", code], env=envvars, capture_output=True,
                                 text=True, check=True, cwd=os.path.dirname(__file__) + "/..")
            print(f"  {label:28s} {float(out.stdout.strip()):9.2f}")


if __name__ == "__main__":
    main(quick="--quick" in sys.argv)
