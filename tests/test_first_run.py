"""The first run: interpreted copies of the compiled kernels, and when each copy runs.

Until a kernel's compiled code is at hand, small calls run its interpreted copy (the same
source run by the Python interpreter; ``core._jit.FirstRunTier``). The copies must give the
same results as the compiled kernels bit for bit, on random beams and loads (influence lines
of random continuous beams with hinges, springs and overhangs from ``conftest.random_beam``);
and the tier must switch to the compiled code when the budget is spent, when the code is
compiled in this process, or when numba's disk cache already holds it.
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from numba import njit

import trundle
from conftest import SCAN_BEAMS, random_beam
from naive_scan import effects_at, random_sections
from test_scan_kernels import _random_group
from trundle.analysis import search as search_module
from trundle.core._jit import FirstRunTier, compiled_without_compiling, interpreted_copies
from trundle.scan import LineBatch, candidates, kernels

SRC = str(Path(__file__).resolve().parents[1] / "src")


def _random_lines(seed: int):
    rng = np.random.default_rng(seed)
    beam = random_beam(rng, **SCAN_BEAMS)
    lines = beam.influence_set(effects_at(beam, random_sections(rng, beam, 3)))
    return rng, beam, LineBatch.from_set(lines)


@pytest.mark.parametrize("uniform", ["none", "finite", "unlimited", "both"])
@pytest.mark.parametrize("seed", range(5))
@pytest.mark.parametrize("confined", [False, True])
def test_interpreted_loop_body_is_the_compiled_one_bit_for_bit(seed, uniform, confined):
    rng, beam, batch = _random_lines(seed)
    group, _ = _random_group(rng, beam.length, uniform)
    weights, offsets, kinds, constant = group.terms()
    degree = 4 if (kinds == kernels.KIND_RUNNING_INTEGRAL).any() else 3
    rows = np.concatenate([np.arange(batch.n_lines), np.arange(batch.n_lines)])
    row_offsets = np.concatenate([np.tile(offsets, (batch.n_lines, 1)),
                                  np.tile(-offsets[::-1], (batch.n_lines, 1))])
    prune = degree == 3 and constant == 0.0 and seed % 2 == 0
    outputs = []
    for body in (kernels._scan_chunk, kernels.interpreted_loop_body()):
        result = np.full((rows.shape[0], 6), np.nan)
        body(0, rows.shape[0], batch.line_knots, batch.n_pieces, batch.line_coef,
             batch.line_running, batch.running_end, batch.head, batch.tail, batch.peak,
             weights, kinds, np.ascontiguousarray(row_offsets), rows, float(constant),
             degree, bool(confined and uniform == "none"), prune, batch.own_knot,
             batch.own_value, batch.end_live, result, *kernels.scan_workspace(len(weights)))
        outputs.append(result)
    np.testing.assert_array_equal(outputs[0], outputs[1])
    assert np.isfinite(outputs[0][:, [0, 3]]).all()


@pytest.mark.parametrize("seed", range(4))
def test_interpreted_search_is_the_compiled_one_bit_for_bit(seed, monkeypatch):
    rng = np.random.default_rng(100 + seed)
    beam = random_beam(rng, **SCAN_BEAMS)
    vehicle = trundle.Vehicle(loads=list(np.round(rng.uniform(20, 150, 3), 1)),
                              spacings=[float(np.round(rng.uniform(1, 4), 2)),
                                        (2.0, float(np.round(rng.uniform(3, 9), 2)))])
    calls = []

    def capturing(*args):
        calls.append(args)
        return candidates._search_lines(*args)

    monkeypatch.setattr(search_module, "search_lines", capturing)
    trundle.envelope(beam, [vehicle], effects=("moment", "shear", "reaction"))
    assert calls
    interpreted = candidates.interpreted_search()
    for args in calls:
        compiled_values, compiled_links = candidates._search_lines(*args)
        values, links = interpreted(*args)
        np.testing.assert_array_equal(values, compiled_values)
        np.testing.assert_array_equal(links, compiled_links)


@pytest.mark.parametrize("seed", range(3))
def test_interpreted_line_evaluation_is_the_compiled_one_bit_for_bit(seed):
    rng, beam, batch = _random_lines(seed)
    x = np.concatenate([rng.uniform(-1.0, beam.length + 1.0, 40), batch.knots])
    interpreted = interpreted_copies(kernels._evaluate_lines)["_evaluate_lines"]
    for coef in (batch.line_coef, batch.line_running):
        for from_left in (False, True):
            np.testing.assert_array_equal(
                interpreted(batch.line_knots, batch.n_pieces, coef, x, from_left),
                kernels._evaluate_lines(batch.line_knots, batch.n_pieces, coef, x, from_left))


# --- when the interpreted copy runs ------------------------------------------------------


@njit
def _weighted_sum(values, weight):
    total = 0.0
    for v in values:
        total += weight * v
    return total


def test_the_tier_interprets_within_the_budget_and_then_compiles(tmp_path, monkeypatch):
    monkeypatch.setenv("NUMBA_CACHE_DIR", str(tmp_path))
    args = (np.arange(5.0), 2.0)
    tier = FirstRunTier(_weighted_sum, [_weighted_sum], budget=10.0)
    first = tier.function(args, 4.0)
    assert first is not _weighted_sum and first(*args) == 20.0  # the interpreted copy
    assert tier.function(args, 6.0) is first  # exactly what is left of the budget
    assert tier.function(args, 0.5) is _weighted_sum  # beyond it: compiled from now on
    assert tier.function(args, 0.0) is _weighted_sum
    # what was interpreted is remembered for the next process: a new tier with the same
    # budget has nothing left
    tier._write_ledger()
    again = FirstRunTier(njit(_weighted_sum.py_func), [_weighted_sum], 10.0)  # not compiled
    assert again.function(args, 1.0) is again.compiled_function
    # a ledger nobody can read counts as empty (the budget applies per process)
    for ledger in tmp_path.glob("trundle-interpreted-*"):
        ledger.write_text("not a number\n")
    fresh = FirstRunTier(njit(_weighted_sum.py_func), [_weighted_sum], 10.0)
    assert fresh.function(args, 4.0) is not fresh.compiled_function


def test_the_tier_runs_compiled_code_already_at_hand(tmp_path, monkeypatch):
    monkeypatch.setenv("NUMBA_CACHE_DIR", str(tmp_path))
    compiled = njit(_weighted_sum.py_func)
    args = (np.arange(3.0), 1.5)
    assert not compiled_without_compiling(compiled, args)
    compiled(*args)  # compiled in this process
    assert compiled_without_compiling(compiled, args)
    tier = FirstRunTier(compiled, [compiled], budget=1e9)
    assert tier.function(args, 1.0) is compiled
    # a forced switch (benchmarks, tests of the compiled kernels)
    forced = FirstRunTier(njit(_weighted_sum.py_func), [_weighted_sum], 1e9)
    forced.use_compiled()
    assert forced.function(args, 1.0) is forced.compiled_function


_PROBE = """
import sys, numpy as np
from trundle.scan import kernels
from trundle.core._jit import compiled_without_compiling
args = (np.zeros((1, 2)), np.array([1]), np.zeros((1, 1, 4)), np.array([0.5]), False)
before = compiled_without_compiling(kernels._evaluate_lines, args)
if sys.argv[1] == "compile":
    kernels._evaluate_lines(*args)
print(before)
"""


def test_the_probe_reads_numbas_disk_cache(tmp_path):
    """A fresh process finds the kernel in numba's disk cache only after another process has
    compiled it there (numba's own index, read as numba reads it)."""
    env = {**os.environ, "NUMBA_CACHE_DIR": str(tmp_path), "PYTHONPATH": SRC}

    def run(what: str) -> str:
        return subprocess.run([sys.executable, "-c", _PROBE, what], env=env, text=True,
                              capture_output=True, check=True, timeout=300).stdout.strip()

    assert run("compile") == "False"
    assert run("probe") == "True"


# --- threads ----------------------------------------------------------------------------------


@pytest.mark.parametrize("threads", [2, 3])
def test_chunks_cover_every_row_once_in_order(threads):
    rng = np.random.default_rng(threads)
    for n in (1, 2, 7, 500):
        work = rng.uniform(10, 4000, n)
        bounds = kernels.chunk_bounds(work, threads)
        assert bounds[0] == 0 and bounds[-1] == n
        assert (np.diff(bounds) > 0).all()
        total = work.sum()
        if total >= kernels.CHUNK_FROM_VISITS * threads * kernels.CHUNKS_PER_THREAD:
            assert len(bounds) - 1 >= threads * kernels.CHUNKS_PER_THREAD // 2


@pytest.mark.parametrize("seed", range(3))
def test_threads_give_the_serial_result(seed):
    rng, beam, batch = _random_lines(seed)
    group, _ = _random_group(rng, beam.length, "none")
    weights, offsets, kinds, constant = group.terms()
    rows = np.tile(np.arange(batch.n_lines), 5)
    args = (batch.line_knots, batch.n_pieces, batch.line_coef, batch.line_running,
            batch.running_end, batch.head, batch.tail, batch.peak, weights, kinds,
            offsets[None, :], rows, float(constant), 3, False, False)
    own = dict(own_knot=batch.own_knot, own_value=batch.own_value, end_live=batch.end_live)
    serial = kernels.scan_rows(*args, threads=1, **own)
    for threads in (2, 3):
        np.testing.assert_array_equal(kernels.scan_rows(*args, threads=threads, **own), serial)
