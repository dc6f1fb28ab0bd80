"""Plain-Python twin of ``trundle.scan.batched`` (the fleet kernel): a loop over trucks, lines
and directions calling the plain scan of ``naive_scan.plain_scan`` (numpy polynomials, no
numba), with the envelope's rule between directions (strictly better and not the empty beam;
a tie goes to +1).
"""

from __future__ import annotations

import math

import numpy as np

from naive_scan import Arrangement, PlainLine, plain_scan


def plain_fleet(line_knots: np.ndarray, n_pieces: np.ndarray, line_coef: np.ndarray,
                axle_start: np.ndarray, axle_weight: np.ndarray, axle_offset: np.ndarray,
                direction: np.ndarray) -> np.ndarray:
    """(n_trucks, n_lines, 8) as the compiled kernel returns it; each line on its own breaks
    (``LineBatch.line_knots`` / ``n_pieces`` / ``line_coef``)."""
    lines = [PlainLine.from_ppoly(line_knots[j, :n_pieces[j] + 1], line_coef[j, :n_pieces[j]].T)
             for j in range(line_coef.shape[0])]
    n_trucks = len(axle_start) - 1
    out = np.zeros((n_trucks, len(lines), 8))
    for i in range(n_trucks):
        a0, a1 = int(axle_start[i]), int(axle_start[i + 1])
        truck = Arrangement(tuple((float(axle_offset[a]), float(axle_weight[a]))
                                  for a in range(a0, a1)))
        runs = [(d, truck if d == 1 else truck.mirrored()) for d in (1, -1)
                if direction[i] in (0, d)]
        for j, line in enumerate(lines):
            best_max = (0.0, math.nan, 0.0, 0.0)
            best_min = (0.0, math.nan, 0.0, 0.0)
            for d, loads in runs:
                vmax, xmax, smax, vmin, xmin, smin = plain_scan(line, loads)
                if not math.isnan(xmax) and vmax > best_max[0]:
                    best_max = (vmax, xmax, smax, float(d))
                if not math.isnan(xmin) and vmin < best_min[0]:
                    best_min = (vmin, xmin, smin, float(d))
            out[i, j] = [*best_max[:3], *best_min[:3], best_max[3], best_min[3]]
    return out
