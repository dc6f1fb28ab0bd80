"""Trucks as rows of arrays: the container recorded (or invented) traffic is held in.

Read by :mod:`trundle.io.traffic` (files) and :mod:`trundle.io.traffic_generator` (invented);
used by the fleet workflow. The unit system is carried, not interpreted, here: it is the
io layer's ``UnitSystem`` (``name``, ``force``, ``length``, ``factor()``), used by duck typing so
that this layer imports nothing above it.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pyarrow as pa
from numpy.typing import NDArray


@dataclass(frozen=True)
class BadRow:
    """One refused row: ``row`` counts data rows from 1; ``line`` is the CSV line (or None)."""

    row: int
    line: int | None
    truck_id: str
    problems: tuple[str, ...]

    def describe(self) -> str:
        where = f"row {self.row}" + (f" (line {self.line})" if self.line is not None else "")
        who = f" id {self.truck_id!r}" if self.truck_id else ""
        return f"{where}{who}: " + "; ".join(self.problems)


@dataclass(frozen=True, eq=False)
class Traffic:
    """Trucks as rows of arrays (no Python object per truck).

    Fields
    ------
    truck_id : (n,) identifiers (numpy unicode array)
    timestamp : (n,) datetime64[s]; NaT where not recorded
    lane : (n,) lane number, −1 where not recorded
    direction : (n,) +1, −1, or 0 (not recorded: both directions are scanned)
    gross : (n,) gross weight [force]
    axle_start : (n + 1,) axles of truck i are ``axle_start[i]:axle_start[i + 1]``
    axle_weight : (n_axles,) [force], front axle first
    axle_offset : (n_axles,) distance behind the truck's front axle [length]
    units : the unit system of the numbers
    source : the file read, or a description ("invented by …")
    invented : True for generated traffic (shown on every output)
    skipped : the bad rows dropped (``bad_rows="skip"``)
    """

    truck_id: NDArray[np.str_]
    timestamp: NDArray[np.datetime64]
    lane: NDArray[np.int64]
    direction: NDArray[np.int64]
    gross: NDArray[np.float64]
    axle_start: NDArray[np.int64]
    axle_weight: NDArray[np.float64]
    axle_offset: NDArray[np.float64]
    units: Any  # the unit system (trundle.io.units.UnitSystem): name, force, length, factor()
    source: str = ""
    invented: bool = False
    skipped: tuple[BadRow, ...] = field(default=())

    @property
    def n_trucks(self) -> int:
        return int(self.gross.size)

    @property
    def axle_count(self) -> NDArray[np.int64]:
        return np.diff(self.axle_start)

    def slice(self, start: int, stop: int) -> Traffic:
        """Trucks ``start:stop`` (a chunk for one work unit)."""
        a0, a1 = int(self.axle_start[start]), int(self.axle_start[stop])
        return Traffic(self.truck_id[start:stop], self.timestamp[start:stop],
                       self.lane[start:stop], self.direction[start:stop],
                       self.gross[start:stop], self.axle_start[start:stop + 1] - a0,
                       self.axle_weight[a0:a1], self.axle_offset[a0:a1], self.units,
                       self.source, self.invented, ())

    def in_units(self, system: Any) -> Traffic:
        """The same trucks with forces and lengths converted to ``system``."""
        if system.name == self.units.name:
            return self
        force = system.factor(self.units.force, system.force)
        length = system.factor(self.units.length, system.length)
        return Traffic(self.truck_id, self.timestamp, self.lane, self.direction,
                       self.gross * force, self.axle_start, self.axle_weight * force,
                       self.axle_offset * length, system, self.source, self.invented,
                       self.skipped)

    def spacings(self) -> NDArray[np.float64]:
        """(n_axles,) spacing from each axle to the next within its truck (NaN for the last)."""
        out = np.full(self.axle_offset.size, np.nan)
        nxt = np.diff(self.axle_offset, append=np.nan)
        last = self.axle_start[1:] - 1
        inner = np.ones(self.axle_offset.size, dtype=bool)
        inner[last] = False
        out[inner] = nxt[inner]
        return out

    def wide_table(self) -> pa.Table:
        """The trucks in the wide layout (for writing CSV or Parquet)."""
        n_max = int(self.axle_count.max()) if self.n_trucks else 1
        counts = self.axle_count
        row_of = np.repeat(np.arange(self.n_trucks), counts)
        k_of = np.arange(self.axle_weight.size) - np.repeat(self.axle_start[:-1], counts)
        weights = np.full((self.n_trucks, n_max), np.nan)
        weights[row_of, k_of] = self.axle_weight
        spacing = np.full((self.n_trucks, n_max), np.nan)
        spacing[row_of, k_of] = self.spacings()
        columns: dict[str, pa.Array] = {
            "id": pa.array(self.truck_id.astype(str)),
            "timestamp": pa.array(self.timestamp.astype("datetime64[s]"), type=pa.timestamp("s")),
            "lane": pa.array(self.lane, mask=self.lane < 0),
            "direction": pa.array(self.direction, mask=self.direction == 0),
            "gross": pa.array(self.gross),
        }
        for k in range(n_max):
            columns[f"axle_{k + 1}"] = pa.array(weights[:, k], mask=np.isnan(weights[:, k]))
        for k in range(n_max - 1):
            columns[f"spacing_{k + 1}"] = pa.array(spacing[:, k], mask=np.isnan(spacing[:, k]))
        meta = {b"trundle.units": self.units.name.encode(),
                b"trundle.invented": b"true" if self.invented else b"false",
                b"trundle.source": self.source.encode()}
        return pa.table(columns).replace_schema_metadata(meta)
