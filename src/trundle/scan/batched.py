"""Many trucks over the same influence lines in one compiled call (recorded traffic, fleets).

A fleet is stored as rows of arrays, never as one Python object per truck (compressed sparse
rows, CSR):

- ``axle_start`` (n_trucks + 1,): the axles of truck i are ``axle_start[i]:axle_start[i + 1]``;
- ``axle_weight`` (n_axles,) [force], front axle first;
- ``axle_offset`` (n_axles,) [length]: distance of each axle behind the truck's front axle
  (0 for the front axle, growing backwards);
- ``direction`` (n_trucks,): +1 the truck crosses towards +x only, −1 towards −x only, 0 both
  ways (the record does not say).

For every truck and line the kernel sweeps the front-axle position over the whole crossing,
in each allowed direction, with the single-vehicle scan's one loop body
(``trundle.scan.kernels._scan_chunk``: the same compiled routine, not a re-derivation; every
line of the bridge is a row on its own breaks, ``LineBatch.line_knots`` / ``n_pieces`` /
``line_coef`` / ``line_running``, pruned by the same bounds and rule as the envelope). The mirrored
run uses the offsets negated in the same axle order, exactly as ``TermGroup.mirrored`` does,
so every truck's result equals the single-vehicle envelope of that truck to the last bit of
the scan (the envelope only zeroes rounding noise around an empty-beam zero afterwards).

The result is (n_trucks, n_lines, 8): max, ξ at max, side at max, min, ξ at min, side at min,
direction at max, direction at min. ξ is the front axle's x; side as in ``scan_rows_serial``;
direction +1/−1 (0 when the empty beam governs, value 0 and ξ NaN). Ties between directions
go to +1, as in the envelope.
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange
from numpy.typing import NDArray

from trundle.scan._config import JIT_OPTIONS, PARALLEL_OPTIONS
from trundle.scan.engine import PRUNE_FROM_PIECES, LineBatch
from trundle.scan.kernels import _WORK_ROWS, _WORK_WIDTH, _scan_chunk

N_COLUMNS = 8


@njit(**JIT_OPTIONS)
def _fleet_truck(truck, out, line_knots, n_pieces, line_coef, line_running, running_end, head,
                 tail, peak, all_lines, axle_start, axle_weight, axle_offset, direction, prune,
                 own_knot, own_value, end_live, found):
    """All lines for one truck, both allowed directions; writes out[truck]. ``found`` is
    (n_lines, 6) scratch the scan writes into."""
    a0 = axle_start[truck]
    a1 = axle_start[truck + 1]
    n_axles = a1 - a0
    n_lines = line_coef.shape[0]
    weight = np.empty(n_axles)
    kind = np.zeros(n_axles, dtype=np.int64)  # every axle is a concentrated load
    forward = np.empty((1, n_axles))
    backward = np.empty((1, n_axles))
    # the loop body's work arrays (as ``kernels.scan_workspace``)
    piece = np.empty(n_axles, dtype=np.int64)
    upcoming = np.empty(n_axles)
    arrived = np.empty(n_axles, dtype=np.bool_)
    work = np.empty((_WORK_ROWS, _WORK_WIDTH))
    for a in range(n_axles):
        weight[a] = axle_weight[a0 + a]
        forward[0, a] = axle_offset[a0 + a]
        backward[0, a] = -axle_offset[a0 + a]
    for line in range(n_lines):
        out[truck, line, 0] = 0.0
        out[truck, line, 1] = np.nan
        out[truck, line, 2] = 0.0
        out[truck, line, 3] = 0.0
        out[truck, line, 4] = np.nan
        out[truck, line, 5] = 0.0
        out[truck, line, 6] = 0.0
        out[truck, line, 7] = 0.0
    # the loop body takes these typed as the envelope passes them (int64, bool): literal
    # constants (0, 3, False) would make numba compile a second copy of the whole body
    first_row = n_lines - n_lines
    degree = first_row + 3
    confined = n_lines < 0
    for d in (1, -1):
        if direction[truck] != 0 and direction[truck] != d:
            continue
        offsets = forward if d == 1 else backward
        # every line of the bridge is one row of the single-vehicle loop body
        _scan_chunk(first_row, n_lines, line_knots, n_pieces, line_coef, line_running,
                    running_end, head, tail, peak, weight, kind, offsets, all_lines, 0.0,
                    degree, confined, prune, own_knot, own_value, end_live, found, piece,
                    upcoming, arrived, work)
        for line in range(n_lines):
            # the envelope's rule: strictly better, and a real position (not the empty beam)
            if not np.isnan(found[line, 1]) and found[line, 0] > out[truck, line, 0]:
                out[truck, line, 0] = found[line, 0]
                out[truck, line, 1] = found[line, 1]
                out[truck, line, 2] = found[line, 2]
                out[truck, line, 6] = float(d)
            if not np.isnan(found[line, 4]) and found[line, 3] < out[truck, line, 3]:
                out[truck, line, 3] = found[line, 3]
                out[truck, line, 4] = found[line, 4]
                out[truck, line, 5] = found[line, 5]
                out[truck, line, 7] = float(d)


@njit(**PARALLEL_OPTIONS)
def scan_fleet_parallel(line_knots, n_pieces, line_coef, line_running, running_end, head, tail,
                        peak, axle_start, axle_weight, axle_offset, direction, prune,
                        own_knot, own_value, end_live):
    """Exact extremes of every truck on every line; trucks split over threads, each truck
    writing only its own rows. Arguments as in the module docstring and ``LineBatch``."""
    n_trucks = axle_start.shape[0] - 1
    n_lines = line_coef.shape[0]
    out = np.empty((n_trucks, n_lines, N_COLUMNS))
    all_lines = np.arange(n_lines)
    for truck in prange(n_trucks):
        found = np.empty((n_lines, 6))
        _fleet_truck(truck, out, line_knots, n_pieces, line_coef, line_running, running_end,
                     head, tail, peak, all_lines, axle_start, axle_weight, axle_offset,
                     direction, prune, own_knot, own_value, end_live, found)
    return out


@njit(**JIT_OPTIONS)
def scan_fleet_serial(line_knots, n_pieces, line_coef, line_running, running_end, head, tail,
                      peak, axle_start, axle_weight, axle_offset, direction, prune,
                      own_knot, own_value, end_live):
    """``scan_fleet_parallel`` on one thread: for a Dask worker that already owns one core."""
    n_trucks = axle_start.shape[0] - 1
    n_lines = line_coef.shape[0]
    out = np.empty((n_trucks, n_lines, N_COLUMNS))
    all_lines = np.arange(n_lines)
    found = np.empty((n_lines, 6))
    for truck in range(n_trucks):
        _fleet_truck(truck, out, line_knots, n_pieces, line_coef, line_running, running_end,
                     head, tail, peak, all_lines, axle_start, axle_weight, axle_offset,
                     direction, prune, own_knot, own_value, end_live, found)
    return out


def check_fleet_arrays(axle_start: NDArray[np.int64], axle_weight: NDArray[np.float64],
                       axle_offset: NDArray[np.float64], direction: NDArray[np.int64]) -> None:
    """Refuse arrays the kernel would misread (ValueError naming the array and the row)."""
    if axle_start.ndim != 1 or axle_start.size < 1 or axle_start[0] != 0:
        raise ValueError("axle_start: expected a 1-D array starting at 0")
    counts = np.diff(axle_start)
    if (counts < 1).any():
        raise ValueError(f"axle_start: truck {int(np.argmax(counts < 1))} has no axle")
    if axle_start[-1] != axle_weight.size or axle_weight.size != axle_offset.size:
        raise ValueError(f"axle arrays: expected {int(axle_start[-1])} axles, found "
                         f"{axle_weight.size} weights and {axle_offset.size} offsets")
    if direction.size != counts.size:
        raise ValueError(f"direction: expected {counts.size} entries, found {direction.size}")
    if not np.isfinite(axle_weight).all() or not np.isfinite(axle_offset).all():
        raise ValueError("axle arrays: expected finite numbers, found NaN or infinity")
    if (axle_offset[axle_start[:-1]] != 0.0).any():
        raise ValueError("axle_offset: the front axle of every truck must be at offset 0")
    if not np.isin(direction, (-1, 0, 1)).all():
        raise ValueError("direction: expected -1, 0 or +1")


def scan_fleet(batch: LineBatch, axle_start: NDArray[np.int64], axle_weight: NDArray[np.float64],
               axle_offset: NDArray[np.float64], direction: NDArray[np.int64] | None = None,
               parallel: bool = True) -> NDArray[np.float64]:
    """(n_trucks, n_lines, 8) exact extremes of every truck over every line of ``batch``.

    Parameters
    ----------
    batch : the influence lines, computed once per bridge
    axle_start : (n_trucks + 1,) CSR row starts
    axle_weight : (n_axles,) [force], dynamic allowance already applied if wanted
    axle_offset : (n_axles,) [length] behind each truck's front axle
    direction : (n_trucks,) +1, −1 or 0 (both ways, the default)
    parallel : split trucks over numba threads (off inside a one-core Dask worker)
    """
    axle_start = np.ascontiguousarray(axle_start, dtype=np.int64)
    axle_weight = np.ascontiguousarray(axle_weight, dtype=float)
    axle_offset = np.ascontiguousarray(axle_offset, dtype=float)
    n_trucks = axle_start.size - 1
    direction = (np.zeros(n_trucks, dtype=np.int64) if direction is None
                 else np.ascontiguousarray(direction, dtype=np.int64))
    check_fleet_arrays(axle_start, axle_weight, axle_offset, direction)
    kernel = scan_fleet_parallel if parallel else scan_fleet_serial
    # the envelope's own rule for pruning (concentrated loads only, lines long enough)
    prune = int(batch.n_pieces.max()) >= PRUNE_FROM_PIECES
    return kernel(batch.line_knots, batch.n_pieces, batch.line_coef, batch.line_running,
                  batch.running_end, batch.head, batch.tail, batch.peak, axle_start,
                  axle_weight, axle_offset, direction, prune, batch.own_knot, batch.own_value,
                  batch.end_live)
