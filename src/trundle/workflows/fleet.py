"""Recorded (or invented) traffic over a bridge inventory, on Dask: spec → run() → result.

Work is cut into units of (a chunk of trucks × a chunk of bridges). Each unit scans its trucks
over the influence lines of its bridges with the batched exact kernel
(:mod:`trundle.scan.batched`; lines computed once per bridge, by the driver) and returns a
columnar table; the driver writes it as one Parquet partition named by a content hash of the
unit's inputs (the trucks' arrays, the lines' coefficients, the options and the format
version). A rerun of an interrupted job finds the partitions already written and skips them;
partitions are written atomically, so a partition that exists is complete.

By default the units run on a ``distributed.LocalCluster`` on this machine (one worker process
per core, one thread each, on 127.0.0.1), started and stopped by trundle; ``scheduler`` set to
an address runs them on an existing Dask cluster instead; ``scheduler="none"`` runs them in
this process (the reference the Dask run must equal). A worker that dies is replaced and its
units run again elsewhere (Dask reschedules them); every unit is a pure function of its
inputs, so a unit that runs twice writes the same partition once.

Results per truck and effect are exact (to rounding). The statistics that follow (block
maxima, fits, return levels) are estimates with stated intervals.
"""

from __future__ import annotations

import hashlib
import os
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import pyarrow as pa
import pyarrow.compute as pc
import pyarrow.parquet as pq
from numpy.typing import NDArray

from trundle.analysis import extremes
from trundle.core.influence import influence_set
from trundle.loads.traffic import Traffic
from trundle.scan.batched import scan_fleet
from trundle.scan.engine import LineBatch
from trundle.scan.passages import exact_turning_points
from trundle.workflows.bridges import Bridge
from trundle.workflows.dask_units import execute
from trundle.workflows.design_ratio import DesignModel, design_extremes, ratio

FORMAT_VERSION = "trundle-fleet-partition-1"
PARTITIONS = "partitions"


@dataclass(frozen=True, eq=False)
class FleetSpec:
    """What to run.

    Fields
    ------
    traffic : the trucks (any units; converted to each bridge's units)
    bridges : the inventory
    out_dir : the partitions go to ``out_dir/partitions``
    design : design load model for the ratios (None: no ratios)
    truck_chunk, bridge_chunk : size of a work unit
    scheduler : None (a LocalCluster started here), "none" (this process) or an address
        ("tcp://10.0.0.5:8786") of a running Dask scheduler
    n_workers : LocalCluster workers (default: one per core)
    block : "day" or "week" for block maxima
    fit : "gumbel" or "gev"
    return_period_years : e.g. 75
    confidence, n_bootstrap : of the return-level interval
    fatigue : also compute rainflow damage sums of each truck's exact moment history (its
        turning points, scan.passages.exact_turning_points; slower)
    fatigue_slope : S-N slope m
    progress : show a progress bar on stderr
    """

    traffic: Traffic
    bridges: tuple[Bridge, ...]
    out_dir: Path
    design: DesignModel | None = None
    truck_chunk: int = 50_000
    bridge_chunk: int = 4
    scheduler: str | None = None
    n_workers: int | None = None
    block: str = "day"
    fit: str = "gumbel"
    return_period_years: float = 75.0
    confidence: float = 0.95
    n_bootstrap: int = 200
    fatigue: bool = False
    fatigue_slope: float = 3.0
    progress: bool = True


@dataclass(frozen=True)
class EffectSummary:
    """Statistics of one effect of one bridge over the traffic.

    Fields
    ------
    bridge, effect : names; quantity : "moment", "force" (shear, reaction)
    n_trucks : trucks scanned
    maximum, minimum : the largest and smallest value of any truck [effect units]
    truck_at_max, truck_at_min : ids of the trucks that produce them
    x_at_max, direction_at_max : front-axle position [length] and direction of that truck
    design_max, design_min : the design model's extremes (NaN without a design model)
    ratio_max, ratio_min : maximum / design_max, minimum / design_min
    histogram : (counts, edges) of the per-truck maxima
    block_starts, block_maxima : per block (day/week) of the per-truck maxima
    fit : the fitted distribution of the block maxima (None if too few blocks)
    return_level : with its bootstrap interval (None if no fit)
    fit_note : why there is no fit, if there is none
    damage_sum, cycles : Σ n·S^m and Σ n over every truck (fatigue; NaN if not asked)
    equivalent_range : damage-equivalent range per truck crossing (NaN if not asked)
    """

    bridge: str
    effect: str
    quantity: str
    n_trucks: int
    maximum: float
    minimum: float
    truck_at_max: str
    truck_at_min: str
    x_at_max: float
    direction_at_max: int
    design_max: float
    design_min: float
    ratio_max: float
    ratio_min: float
    histogram: tuple[NDArray[np.int64], NDArray[np.float64]]
    block_starts: NDArray[np.datetime64]
    block_maxima: NDArray[np.float64]
    fit: extremes.ExtremeFit | None
    return_level: extremes.ReturnLevel | None
    fit_note: str
    damage_sum: float = float("nan")
    cycles: float = float("nan")
    equivalent_range: float = float("nan")


@dataclass(frozen=True, eq=False)
class FleetResult:
    """The outcome of a fleet run.

    Fields
    ------
    spec : what was run
    summaries : one EffectSummary per (bridge, effect), inventory order
    partitions : every partition file of the job
    written, skipped : how many partitions this run wrote / found already written
    trucks_skipped : bad rows dropped when the traffic was read
    engine : "this process", "LocalCluster (n workers)" or the scheduler address
    """

    spec: FleetSpec
    summaries: tuple[EffectSummary, ...]
    partitions: tuple[Path, ...]
    written: int
    skipped: int
    trucks_skipped: int
    engine: str
    units: dict[str, Any] = field(default_factory=dict)

    def per_truck(self) -> pa.Table:
        """Every (bridge, effect, truck) row of every partition, in a stable order."""
        return read_partitions(self.partitions)


# --- work units --------------------------------------------------------------------------------


@dataclass(frozen=True)
class _BridgeLines:
    """What a worker needs of one bridge: plain arrays (each line on its own breaks), no Beam."""

    name: str
    units: str
    batch: LineBatch
    moment_lines: NDArray[np.int64]


@dataclass(frozen=True)
class _TruckChunk:
    first: int  # global index of the first truck
    axle_start: NDArray[np.int64]
    axle_weight: NDArray[np.float64]
    axle_offset: NDArray[np.float64]
    direction: NDArray[np.int64]
    units: str
    force_factor: dict[str, float]  # to each bridge unit system
    length_factor: dict[str, float]


def _lines_of(bridge: Bridge) -> _BridgeLines:
    batch = LineBatch.from_set(influence_set(bridge.beam, list(bridge.effects)))
    moment = np.array([j for j, e in enumerate(bridge.effects) if e.kind == "moment"],
                      dtype=np.int64)
    return _BridgeLines(bridge.name, bridge.units.name, batch, moment)


def _digest(*parts: Any) -> str:
    h = hashlib.sha256()
    for part in parts:
        if isinstance(part, np.ndarray):
            h.update(str(part.dtype).encode())
            h.update(str(part.shape).encode())
            h.update(np.ascontiguousarray(part).tobytes())
        elif part is None:
            h.update(b"<none>")
        else:
            h.update(repr(part).encode())
        h.update(b"|")
    return h.hexdigest()


def _truck_digest(chunk: _TruckChunk) -> str:
    return _digest(chunk.first, chunk.axle_start, chunk.axle_weight, chunk.axle_offset,
                   chunk.direction, chunk.units)


def _bridge_digest(lines: _BridgeLines) -> str:
    return _digest(lines.name, lines.units, lines.batch.line_knots, lines.batch.n_pieces,
                   lines.batch.line_coef)


def run_unit(trucks: _TruckChunk, bridges: tuple[_BridgeLines, ...], fatigue: bool,
             slope: float) -> pa.Table:
    """One work unit: every truck of the chunk over every line of every bridge of the chunk.

    Runs on a worker (one core: the serial kernel). Pure: the same inputs give the same table.
    """
    tables = []
    n = trucks.axle_start.size - 1
    truck_index = np.arange(trucks.first, trucks.first + n, dtype=np.int64)
    for lines in bridges:
        weight = trucks.axle_weight * trucks.force_factor[lines.units]
        offset = trucks.axle_offset * trucks.length_factor[lines.units]
        out = scan_fleet(lines.batch, trucks.axle_start, weight, offset, trucks.direction,
                         parallel=False)
        n_lines = out.shape[1]
        columns = {
            "bridge": pa.array(np.full(n * n_lines, lines.name)),
            "effect": pa.array(np.tile(np.arange(n_lines, dtype=np.int32), n)),
            "truck": pa.array(np.repeat(truck_index, n_lines)),
            "max": pa.array(out[:, :, 0].ravel()),
            "x_at_max": pa.array(out[:, :, 1].ravel()),
            "direction_at_max": pa.array(out[:, :, 6].ravel().astype(np.int8)),
            "min": pa.array(out[:, :, 3].ravel()),
            "x_at_min": pa.array(out[:, :, 4].ravel()),
            "direction_at_min": pa.array(out[:, :, 7].ravel().astype(np.int8)),
        }
        if fatigue:
            damage = np.full((n, n_lines), np.nan)
            cycles = np.full((n, n_lines), np.nan)
            if lines.moment_lines.size:
                d, c = _fatigue(lines, trucks.axle_start, weight, offset, trucks.direction,
                                slope)
                damage[:, lines.moment_lines] = d
                cycles[:, lines.moment_lines] = c
            columns["damage_sum"] = pa.array(damage.ravel())
            columns["cycles"] = pa.array(cycles.ravel())
        tables.append(pa.table(columns))
    return pa.concat_tables(tables)


def _fatigue(lines: _BridgeLines, axle_start: NDArray[np.int64], weight: NDArray[np.float64],
             offset: NDArray[np.float64], direction: NDArray[np.int64], slope: float
             ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Rainflow damage sums of each truck's moment history at each moment line.

    The history is each truck's exact sequence of turning points over the whole crossing, in
    the recorded direction (+x when not recorded): ``passages.exact_turning_points``.
    """
    batch = lines.batch
    sub = batch.subset(lines.moment_lines) if lines.moment_lines.size != batch.n_lines \
        else batch
    n = axle_start.size - 1
    damage = np.zeros((n, sub.n_lines))
    cycles = np.zeros((n, sub.n_lines))
    for i in range(n):
        u = offset[axle_start[i]:axle_start[i + 1]]
        w = weight[axle_start[i]:axle_start[i + 1]]
        if direction[i] < 0:
            u = -u  # the mirrored run, as the scan does it
        _, history = exact_turning_points(sub, w, u)
        if direction[i] < 0:
            history = history[::-1]
        for j in range(sub.n_lines):
            damage[i, j], cycles[i, j] = extremes.damage_sum(history[:, j], slope)
    return damage, cycles


# --- running -----------------------------------------------------------------------------------


def _chunks(traffic: Traffic, size: int, bridges: tuple[Bridge, ...]) -> list[_TruckChunk]:
    systems = {b.units.name: b.units for b in bridges}  # the io layer's unit systems
    force = {u: s.factor(traffic.units.force, s.force) for u, s in systems.items()}
    length = {u: s.factor(traffic.units.length, s.length) for u, s in systems.items()}
    out = []
    for first in range(0, traffic.n_trucks, size):
        part = traffic.slice(first, min(first + size, traffic.n_trucks))
        out.append(_TruckChunk(first, part.axle_start, part.axle_weight, part.axle_offset,
                               part.direction, traffic.units.name, force, length))
    return out


def run(spec: FleetSpec, on_started: Callable[[Any], None] | None = None) -> FleetResult:
    """Run the job (see the module); ``on_started`` gets the Dask client once work is
    submitted (for monitoring), or None when running in this process."""
    if spec.truck_chunk < 1 or spec.bridge_chunk < 1:
        raise ValueError("truck_chunk and bridge_chunk: expected >= 1")
    folder = Path(spec.out_dir) / PARTITIONS
    lines = [_lines_of(b) for b in spec.bridges]
    design = ([design_extremes(b, spec.design) for b in spec.bridges]
              if spec.design is not None else None)
    truck_chunks = _chunks(spec.traffic, spec.truck_chunk, spec.bridges)
    bridge_chunks = [tuple(lines[i:i + spec.bridge_chunk])
                     for i in range(0, len(lines), spec.bridge_chunk)]
    options = (FORMAT_VERSION, spec.fatigue, spec.fatigue_slope if spec.fatigue else None)
    truck_keys = [_truck_digest(c) for c in truck_chunks]
    bridge_keys = [_digest(*[_bridge_digest(b) for b in chunk]) for chunk in bridge_chunks]
    units = []
    for t, chunk in enumerate(truck_chunks):
        for b, bchunk in enumerate(bridge_chunks):
            key = _digest(truck_keys[t], bridge_keys[b], *options)[:32]
            units.append((folder / f"part-{key}.parquet", chunk, bchunk))
    todo = [u for u in units if not u[0].is_file()]
    skipped = len(units) - len(todo)
    folder.mkdir(parents=True, exist_ok=True)
    engine = _execute(spec, todo, on_started)
    summaries = _summarise(spec, [u[0] for u in units], design)
    return FleetResult(spec, tuple(summaries), tuple(u[0] for u in units), len(todo), skipped,
                       len(spec.traffic.skipped), engine)


def _write_partition(path: Path, table: pa.Table) -> None:
    """Atomically (a temporary file in the same folder, then a rename): a partition that
    exists is complete, so a rerun may skip it."""
    sink = pa.BufferOutputStream()
    pq.write_table(table, sink)
    tmp = path.with_name(f".{path.name}.{os.getpid()}.tmp")
    try:
        tmp.write_bytes(sink.getvalue().to_pybytes())
        os.replace(tmp, path)
    finally:
        tmp.unlink(missing_ok=True)


def _execute(spec: FleetSpec, todo: list, on_started: Callable[[Any], None] | None) -> str:
    return execute(run_unit, [(trucks, bridges, spec.fatigue, spec.fatigue_slope)
                              for _, trucks, bridges in todo],
                   [f"fleet-{path.stem}" for path, _, _ in todo],
                   lambda i, table: _write_partition(todo[i][0], table),
                   spec.scheduler, spec.n_workers, spec.progress, on_started)


# --- statistics --------------------------------------------------------------------------------


def read_partitions(paths: tuple[Path, ...] | list[Path], bridge: str | None = None,
                    columns: list[str] | None = None) -> pa.Table:
    """The rows of the partitions (of one bridge if given), sorted by bridge, effect, truck."""
    import pyarrow.dataset as ds

    dataset = ds.dataset([str(p) for p in paths], format="parquet")
    flt = ds.field("bridge") == bridge if bridge is not None else None
    table = dataset.to_table(filter=flt, columns=columns)
    return table.sort_by([("bridge", "ascending"), ("effect", "ascending"),
                          ("truck", "ascending")])


def _summarise(spec: FleetSpec, paths: list[Path], design: list | None) -> list[EffectSummary]:
    out = []
    traffic = spec.traffic
    n = traffic.n_trucks
    block_days = extremes.BLOCKS[spec.block]
    for b, bridge in enumerate(spec.bridges):
        cols = ["bridge", "effect", "truck", "max", "min", "x_at_max", "direction_at_max"]
        if spec.fatigue:
            cols += ["damage_sum", "cycles"]
        table = read_partitions(paths, bridge.name, cols)
        for j, effect in enumerate(bridge.effects):
            rows = table.filter(pc.equal(table.column("effect"), j))
            truck = rows.column("truck").to_numpy()
            if truck.size != n or (truck != np.arange(n)).any():
                raise RuntimeError(f"bridge {bridge.name!r}, {effect.label}: expected one row "
                                   f"per truck ({n}), found {truck.size}")
            vmax = rows.column("max").to_numpy().copy()
            vmin = rows.column("min").to_numpy().copy()
            # rounding noise around an empty-beam zero is not an effect (the envelope's rule)
            scale = max(np.abs(vmax).max(), np.abs(vmin).max())
            vmax[np.abs(vmax) <= 1e-12 * scale] = 0.0
            vmin[np.abs(vmin) <= 1e-12 * scale] = 0.0
            i_max, i_min = int(np.argmax(vmax)), int(np.argmin(vmin))
            d_max, d_min = (design[b][j] if design is not None else (np.nan, np.nan))
            governs_max = abs(vmax[i_max]) >= abs(vmin[i_min])
            # statistics of the side that governs the effect's magnitude
            values = vmax if governs_max else -vmin
            fit = level = None
            note = ""
            starts, maxima, missing = extremes.block_maxima(values, traffic.timestamp,
                                                            spec.block)
            if missing == n:
                note = "no timestamps: no block maxima"
            elif maxima.size < 10:
                note = f"only {maxima.size} {spec.block} blocks: no fit (10 needed)"
            else:
                try:
                    fit = extremes.fit_block_maxima(maxima, spec.fit, block_days)
                    level = extremes.return_level_interval(
                        maxima, spec.return_period_years, spec.fit, block_days,
                        spec.confidence, spec.n_bootstrap, seed=b * 1000 + j)
                except (ValueError, RuntimeError) as error:
                    fit, level, note = None, None, f"no fit ({error})"
            if not governs_max:
                note = ("statistics of −min (the minimum governs)" + (f"; {note}" if note
                                                                       else ""))
            damage = cycles = eq = float("nan")
            if spec.fatigue and effect.kind == "moment":
                damage = float(np.sum(rows.column("damage_sum").to_numpy()))
                cycles = float(np.sum(rows.column("cycles").to_numpy()))
                eq = extremes.damage_equivalent_range(np.array([damage]), n,
                                                      spec.fatigue_slope)
            out.append(EffectSummary(
                bridge.name, effect.label, effect.quantity, n, float(vmax[i_max]),
                float(vmin[i_min]), str(traffic.truck_id[i_max]), str(traffic.truck_id[i_min]),
                float(rows.column("x_at_max").to_numpy()[i_max]),
                int(rows.column("direction_at_max").to_numpy()[i_max]),
                float(d_max), float(d_min), float(ratio(vmax[i_max], d_max)),
                float(ratio(vmin[i_min], d_min)), extremes.histogram(values), starts, maxima,
                fit, level, note, damage, cycles, eq))
    return out
