"""Permit check: one or more permit vehicles over every bridge of a route: spec → run() → result.

For each bridge, effect and permit vehicle: the exact extremes of the vehicle's effect with
the dynamic allowance the user sets (batched exact scan, both directions), the governing
front-axle position and direction, the design model's extremes (exact envelope), their ratio,
and a flag where the ratio exceeds the user's limit. The ratio is taken on the side (max or
min) where the design effect is larger in magnitude; the other side is reported too.

A permit vehicle is one definite vehicle: its spacings must be fixed (a range is refused).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import NDArray

from trundle.analysis.checks import EXCEEDS, verdict
from trundle.core.influence import influence_set
from trundle.loads.vehicles import Vehicle
from trundle.scan.batched import scan_fleet
from trundle.scan.engine import LineBatch
from trundle.workflows.bridges import Bridge
from trundle.workflows.dask_units import execute
from trundle.workflows.design_ratio import DesignModel, design_extremes, ratio

__all__ = ["EXCEEDS", "PermitError", "PermitResult", "PermitRow", "PermitSpec", "run"]


class PermitError(ValueError):
    """A permit job that cannot run; the message names the argument."""


@dataclass(frozen=True, eq=False)
class PermitSpec:
    """What to check.

    Fields
    ------
    vehicles : names of the permit vehicles (load-model names or files)
    read_vehicle : (name, unit system) -> Vehicle with fixed spacings: the io layer's reader
        (``trundle.io.design_models.permit_vehicle``), so the workflow reads no file
    bridges : the route
    design : the design load model compared with
    impact : dynamic allowance on the permit vehicle's axles, as a fraction (0.1 = 10 %)
    limit : the largest acceptable ratio permit / design (e.g. 1.0)
    scheduler, n_workers, progress : as in ``FleetSpec``: by default a LocalCluster started
        here, "none" this process, or the address of a running Dask scheduler; one work unit
        per bridge
    """

    vehicles: tuple[str, ...]
    read_vehicle: Callable[[str, Any], Vehicle]
    bridges: tuple[Bridge, ...]
    design: DesignModel
    impact: float = 0.0
    limit: float = 1.0
    scheduler: str | None = None
    n_workers: int | None = None
    progress: bool = False


@dataclass(frozen=True)
class PermitRow:
    """One (bridge, effect, vehicle).

    Fields
    ------
    bridge, effect, vehicle : names
    permit_max, permit_min : the permit's extremes with its dynamic allowance [effect units]
    design_max, design_min : the design model's [effect units]
    ratio : permit / design on the governing side (NaN where the design effect is zero)
    side : "max" or "min": the side the ratio is taken on
    x_front_axle : front-axle position at the governing permit value [length]
    direction : +1 towards +x, −1 towards −x, 0 (the empty beam: no effect on this side)
    verdict : PASS (ratio within the limit) or EXCEEDS, from ``analysis.checks.verdict``
        of ratio / limit (an effect where the design gives none is EXCEEDS)
    units : the bridge's unit system
    """

    bridge: str
    effect: str
    quantity: str
    vehicle: str
    permit_max: float
    permit_min: float
    design_max: float
    design_min: float
    ratio: float
    side: str
    x_front_axle: float
    direction: int
    verdict: str
    units: Any  # the bridge's unit system (io layer), duck-typed


@dataclass(frozen=True, eq=False)
class PermitResult:
    """Rows in route order, then effect, then vehicle; ``exceeds`` counts flagged rows."""

    spec: PermitSpec
    rows: tuple[PermitRow, ...]
    engine: str = "this process"

    @property
    def exceeds(self) -> int:
        return sum(r.verdict == EXCEEDS for r in self.rows)


def _scan_bridge(batch: LineBatch, starts: NDArray[np.int64], weights: NDArray[np.float64],
                 offsets: NDArray[np.float64]) -> NDArray[np.float64]:
    """One work unit: the permit vehicles over one bridge's lines (one core: serial)."""
    return scan_fleet(batch, starts, weights, offsets, parallel=False)


def run(spec: PermitSpec) -> PermitResult:
    if not spec.vehicles:
        raise PermitError("permit: vehicle: expected at least one vehicle, found none")
    if not spec.bridges:
        raise PermitError("permit: route: expected at least one bridge, found none")
    if not (np.isfinite(spec.impact) and 0.0 <= spec.impact <= 2.0):
        raise PermitError(f"permit: impact: expected a fraction from 0 to 2, found "
                          f"{spec.impact!r}")
    if not (np.isfinite(spec.limit) and spec.limit > 0):
        raise PermitError(f"permit: limit: expected a ratio > 0, found {spec.limit!r}")
    for name in spec.vehicles:  # refuse an unknown vehicle before any scan
        spec.read_vehicle(name, spec.bridges[0].units)
    arguments = []
    for bridge in spec.bridges:
        vehicles = [spec.read_vehicle(name, bridge.units) for name in spec.vehicles]
        starts = np.concatenate([[0], np.cumsum([len(v.loads) for v in vehicles])])
        weights = np.concatenate([np.asarray(v.loads) * (1.0 + spec.impact) for v in vehicles])
        offsets = np.concatenate([v.axle_offsets() for v in vehicles])
        batch = LineBatch.from_set(influence_set(bridge.beam, list(bridge.effects)))
        arguments.append((batch, starts.astype(np.int64), weights, offsets))
    found: list[NDArray[np.float64] | None] = [None] * len(arguments)

    def keep(i: int, value: NDArray[np.float64]) -> None:
        found[i] = value

    keys = [f"permit-{i}-{bridge.name}" for i, bridge in enumerate(spec.bridges)]
    engine = execute(_scan_bridge, arguments, keys, keep, spec.scheduler, spec.n_workers,
                     spec.progress)
    rows: list[PermitRow] = []
    for bridge, scanned in zip(spec.bridges, found, strict=True):
        assert scanned is not None
        design = design_extremes(bridge, spec.design)
        for j, effect in enumerate(bridge.effects):
            d_max, d_min = design[j]
            for v, name in enumerate(spec.vehicles):
                p = scanned[v, j]
                use_max = abs(d_max) >= abs(d_min)
                value, d, col = (p[0], d_max, 0) if use_max else (p[3], d_min, 3)
                r = float(ratio(value, d))
                # no design effect but a permit effect: not covered (verdict of NaN: EXCEEDS)
                utilisation = (0.0 if np.isnan(r) and value == 0 else r / spec.limit)
                rows.append(PermitRow(bridge.name, effect.label, effect.quantity, name,
                                      float(p[0]), float(p[3]), float(d_max), float(d_min), r,
                                      "max" if use_max else "min", float(p[col + 1]),
                                      int(p[6 if use_max else 7]), verdict(utilisation),
                                      bridge.units))
    return PermitResult(spec, tuple(rows), engine)
