"""Permit check: one or more permit vehicles over every bridge of a route: spec → run() → result.

For each bridge, effect and permit vehicle: the exact extremes of the vehicle's effect with
the dynamic allowance the user sets (batched exact scan, both directions), the governing
front-axle position and direction, the design model's extremes (exact envelope), their ratio,
and a flag where the ratio exceeds the user's limit. The ratio is taken on the side (max or
min) where the design effect is larger in magnitude; the other side is reported too.

A permit vehicle is one definite vehicle: its spacings must be fixed (a range is refused).
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from trundle.influence import influence_set
from trundle.io.inventory import Bridge
from trundle.loadfile import read_load_model_file
from trundle.loads import library
from trundle.loads.vehicles import Vehicle
from trundle.modelfile import ModelFileError
from trundle.scan.batched import scan_fleet
from trundle.scan.engine import LineBatch
from trundle.units import UnitSystem
from trundle.workflows.design_ratio import DesignModel, design_extremes, ratio

EXCEEDS = "EXCEEDS"
WITHIN = "within"


@dataclass(frozen=True, eq=False)
class PermitSpec:
    """What to check.

    Fields
    ------
    vehicles : load-model names or files, each one vehicle with fixed spacings
    bridges : the route
    design : the design load model compared with
    impact : dynamic allowance on the permit vehicle's axles, as a fraction (0.1 = 10 %)
    limit : the largest acceptable ratio permit / design (e.g. 1.0)
    """

    vehicles: tuple[str, ...]
    bridges: tuple[Bridge, ...]
    design: DesignModel
    impact: float = 0.0
    limit: float = 1.0


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
    verdict : "EXCEEDS" or "within" the limit
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
    units: UnitSystem


@dataclass(frozen=True, eq=False)
class PermitResult:
    """Rows in route order, then effect, then vehicle; ``exceeds`` counts flagged rows."""

    spec: PermitSpec
    rows: tuple[PermitRow, ...]

    @property
    def exceeds(self) -> int:
        return sum(r.verdict == EXCEEDS for r in self.rows)


def _vehicle(name: str, units: UnitSystem) -> Vehicle:
    path = library.path_of(name) if name in library.names() else Path(name)
    if not path.is_file():
        raise ModelFileError(name, "vehicle", f"expected a load model of the library "
                             f"({', '.join(library.names())}) or a load-model file, found "
                             f"neither")
    read = read_load_model_file(path, units)
    if not isinstance(read.load, Vehicle):
        raise ModelFileError(str(path), "axles", f"expected one permit vehicle, found a "
                             f"{read.kind}")
    if read.load.parameters():
        raise ModelFileError(str(path), "spacings", "expected fixed spacings for a permit "
                             "vehicle (one definite vehicle), found a range")
    return read.load


def run(spec: PermitSpec) -> PermitResult:
    if not spec.vehicles:
        raise ModelFileError("permit", "vehicle", "expected at least one vehicle, found none")
    if not (np.isfinite(spec.impact) and 0.0 <= spec.impact <= 2.0):
        raise ModelFileError("permit", "impact", f"expected a fraction from 0 to 2, found "
                             f"{spec.impact!r}")
    if not (np.isfinite(spec.limit) and spec.limit > 0):
        raise ModelFileError("permit", "limit", f"expected a ratio > 0, found {spec.limit!r}")
    spec.design.check()
    for name in spec.vehicles:  # refuse an unknown vehicle before any scan
        _vehicle(name, spec.bridges[0].units)
    rows: list[PermitRow] = []
    for bridge in spec.bridges:
        vehicles = [_vehicle(name, bridge.units) for name in spec.vehicles]
        starts = np.concatenate([[0], np.cumsum([len(v.loads) for v in vehicles])])
        weights = np.concatenate([np.asarray(v.loads) * (1.0 + spec.impact) for v in vehicles])
        offsets = np.concatenate([v.axle_offsets() for v in vehicles])
        batch = LineBatch.from_set(influence_set(bridge.beam, list(bridge.effects)))
        found = scan_fleet(batch, starts, weights, offsets)
        design = design_extremes(bridge, spec.design)
        for j, effect in enumerate(bridge.effects):
            d_max, d_min = design[j]
            for v, name in enumerate(spec.vehicles):
                p = found[v, j]
                use_max = abs(d_max) >= abs(d_min)
                value, d, col = (p[0], d_max, 0) if use_max else (p[3], d_min, 3)
                r = float(ratio(value, d))
                flagged = (np.isnan(r) and abs(value) > 0) or r > spec.limit
                rows.append(PermitRow(bridge.name, effect.label, effect.quantity, name,
                                      float(p[0]), float(p[3]), float(d_max), float(d_min), r,
                                      "max" if use_max else "min", float(p[col + 1]),
                                      int(p[6 if use_max else 7]),
                                      EXCEEDS if flagged else WITHIN, bridge.units))
    return PermitResult(spec, tuple(rows))
