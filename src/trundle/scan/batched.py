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
in each allowed direction, with the per-piece closed-form extreme logic of the single-vehicle
scan (``trundle.scan.kernels._scan_row``; the same routine, not a re-derivation). The mirrored
run uses the offsets negated in the same axle order, exactly as ``TermGroup.mirrored`` does,
so every truck's result equals the single-vehicle envelope of that truck to the last bit of
the scan (the envelope only zeroes rounding noise around an empty-beam zero afterwards).

The result is (n_trucks, n_lines, 8): max, ξ at max, side at max, min, ξ at min, side at min,
direction at max, direction at min. ξ is the front axle's x; side as in ``scan_rows_parallel``;
direction +1/−1 (0 when the empty beam governs, value 0 and ξ NaN). Ties between directions
go to +1, as in the envelope.
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange
from numpy.typing import NDArray

from trundle.scan._config import JIT_OPTIONS, PARALLEL_OPTIONS
from trundle.scan.engine import LineBatch
from trundle.scan.kernels import _breaks, _scan_row

N_COLUMNS = 8


@njit(**JIT_OPTIONS)
def _fleet_truck(truck, out, knots, coef, running, running_end, axle_start, axle_weight,
                 axle_offset, direction, prev_node, next_node, own):
    """All lines for one truck, both allowed directions; writes out[truck]."""
    a0 = axle_start[truck]
    a1 = axle_start[truck + 1]
    n_axles = a1 - a0
    n_lines = coef.shape[2]
    weight = np.empty(n_axles)
    kind = np.zeros(n_axles, dtype=np.int64)  # every axle is a concentrated load
    forward = np.empty(n_axles)
    backward = np.empty(n_axles)
    for a in range(n_axles):
        weight[a] = axle_weight[a0 + a]
        forward[a] = axle_offset[a0 + a]
        backward[a] = -axle_offset[a0 + a]
    scratch = np.empty((1, 6))
    for line in range(n_lines):
        best_max, pos_max, side_max, dir_max = 0.0, np.nan, 0.0, 0.0
        best_min, pos_min, side_min, dir_min = 0.0, np.nan, 0.0, 0.0
        for d in (1, -1):
            if direction[truck] != 0 and direction[truck] != d:
                continue
            offsets = forward if d == 1 else backward
            _scan_row(0, line, knots, coef, running, running_end, weight, kind, offsets,
                      0.0, 3, scratch, False, prev_node, next_node, own[line])
            # the envelope's rule: strictly better, and a real position (not the empty beam)
            if not np.isnan(scratch[0, 1]) and scratch[0, 0] > best_max:
                best_max, pos_max, side_max, dir_max = (scratch[0, 0], scratch[0, 1],
                                                        scratch[0, 2], float(d))
            if not np.isnan(scratch[0, 4]) and scratch[0, 3] < best_min:
                best_min, pos_min, side_min, dir_min = (scratch[0, 3], scratch[0, 4],
                                                        scratch[0, 5], float(d))
        out[truck, line, 0] = best_max
        out[truck, line, 1] = pos_max
        out[truck, line, 2] = side_max
        out[truck, line, 3] = best_min
        out[truck, line, 4] = pos_min
        out[truck, line, 5] = side_min
        out[truck, line, 6] = dir_max
        out[truck, line, 7] = dir_min


@njit(**PARALLEL_OPTIONS)
def scan_fleet_parallel(knots, coef, running, running_end, axle_start, axle_weight,
                        axle_offset, direction, prev_node=None, next_node=None, own=None):
    """Exact extremes of every truck on every line; trucks split over threads, each truck
    writing only its own rows. Arguments as in the module docstring and ``LineBatch``."""
    n_trucks = axle_start.shape[0] - 1
    out = np.empty((n_trucks, coef.shape[2], N_COLUMNS))
    prev_node_, next_node_, own_ = _breaks(knots.shape[0] - 1, coef.shape[2], prev_node,
                                           next_node, own)
    for truck in prange(n_trucks):
        _fleet_truck(truck, out, knots, coef, running, running_end, axle_start, axle_weight,
                     axle_offset, direction, prev_node_, next_node_, own_)
    return out


@njit(**JIT_OPTIONS)
def scan_fleet_serial(knots, coef, running, running_end, axle_start, axle_weight,
                      axle_offset, direction, prev_node=None, next_node=None, own=None):
    """``scan_fleet_parallel`` on one thread: for a Dask worker that already owns one core."""
    n_trucks = axle_start.shape[0] - 1
    out = np.empty((n_trucks, coef.shape[2], N_COLUMNS))
    prev_node_, next_node_, own_ = _breaks(knots.shape[0] - 1, coef.shape[2], prev_node,
                                           next_node, own)
    for truck in range(n_trucks):
        _fleet_truck(truck, out, knots, coef, running, running_end, axle_start, axle_weight,
                     axle_offset, direction, prev_node_, next_node_, own_)
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
    return kernel(batch.knots, batch.coef, batch.running, batch.running_end, axle_start,
                  axle_weight, axle_offset, direction, batch.prev_node, batch.next_node,
                  batch.own)
