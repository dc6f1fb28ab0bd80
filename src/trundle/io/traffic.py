"""Recorded traffic: trucks from CSV or Parquet in the wide layout, checked row by row.

The wide layout is one row a truck:

=============  ==========================================================================
column         meaning
=============  ==========================================================================
``id``         the truck's identifier (any text; required)
``timestamp``  when it crossed, ISO 8601 (``2026-03-01T06:12:09``); optional, may be empty
``lane``       lane number; optional
``direction``  ``+1`` it travels towards +x of every bridge, ``-1`` towards −x, empty: not
               known (both are scanned); optional
``gross``      gross weight [force]; required
``axle_1`` …   axle weights [force], front axle first; empty cells after the last axle
``spacing_1``… distance from axle k to axle k+1 [length]; empty after the last axle
=============  ==========================================================================

Other columns are ignored. The units are not in the file: the caller says them (``SI``: kN
and m, ``US``: kip and ft).

Checks on every row (each failed check is one problem, reported with the row number):

- the id is present; every axle weight up to the last one given is present, a number and
  > 0; there is at least one axle;
- every spacing between given axles is present, a number, > 0 and at most ``max_spacing``
  (default 20 m, or 65 ft in US units: longer than any rigid axle group of a road truck —
  common practice, no source; a weigh-in-motion record with a longer gap is two vehicles);
  no spacing is given behind the last axle;
- the gross weight is present and the axle weights add up to it within the tolerance
  ``|Σ axles − gross| ≤ max(gross_rel_tolerance · gross, gross_abs_tolerance)``; defaults 1 %
  and 0.5 kN (0.1 kip): the rounding of a record to 0.1 unit per axle on up to 6 axles, plus
  a margin;
- a timestamp or direction, if given, can be read.

Row numbers count data rows from 1; for a CSV file the line of the file is given too (the
header is line 1). Bad rows are never used silently: ``bad_rows="fail"`` refuses the whole
file (:class:`TrafficFileError`), ``"skip"`` drops them and keeps the list.
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pyarrow as pa
import pyarrow.compute as pc
from numpy.typing import NDArray

from trundle.io.units import SYSTEMS, UnitSystem
from trundle.loads.traffic import BadRow, Traffic

BAD_ROW_POLICIES = ("fail", "skip")
DEFAULT_MAX_SPACING = {"SI": 20.0, "US": 65.0}
DEFAULT_GROSS_REL_TOLERANCE = 0.01
DEFAULT_GROSS_ABS_TOLERANCE = {"SI": 0.5, "US": 0.1}
SHOWN_BAD_ROWS = 20  # an error message lists this many bad rows, then counts the rest

_AXLE = re.compile(r"^axle_(\d+)$")
_SPACING = re.compile(r"^spacing_(\d+)$")


class TrafficFileError(ValueError):
    """A traffic file that cannot be used; the message names the file and what is wrong."""


# --- reading -----------------------------------------------------------------------------------


def read_traffic(path: str | Path, units: str = "SI", bad_rows: str = "fail",
                 max_spacing: float | None = None,
                 gross_rel_tolerance: float = DEFAULT_GROSS_REL_TOLERANCE,
                 gross_abs_tolerance: float | None = None) -> Traffic:
    """Read and check a traffic file (``.csv`` or ``.parquet``) in the wide layout.

    Parameters
    ----------
    path : the file
    units : "SI" (kN, m) or "US" (kip, ft): the units the file's numbers are in
    bad_rows : "fail" (default): any bad row refuses the file; "skip": drop bad rows and
        keep them in ``Traffic.skipped``
    max_spacing : longest axle spacing accepted [length]; default 20 m / 65 ft
    gross_rel_tolerance, gross_abs_tolerance : allowed |Σ axles − gross| (see the module)

    Raises
    ------
    TrafficFileError naming the file, the column or the rows, what was expected and found.
    """
    name = str(path)
    key = str(units).upper()
    if key not in SYSTEMS:
        raise TrafficFileError(f"{name}: units: expected SI or US, found {units!r}")
    system = SYSTEMS[key]
    if bad_rows not in BAD_ROW_POLICIES:
        raise TrafficFileError(f"{name}: bad rows: expected fail or skip, found {bad_rows!r}")
    max_spacing = DEFAULT_MAX_SPACING[key] if max_spacing is None else float(max_spacing)
    abs_tol = DEFAULT_GROSS_ABS_TOLERANCE[key] if gross_abs_tolerance is None \
        else float(gross_abs_tolerance)
    table, is_csv = _read_table(Path(path), name)
    return check_table(table, name, system, bad_rows, max_spacing, gross_rel_tolerance,
                       abs_tol, first_line=2 if is_csv else None)


def _read_table(path: Path, name: str) -> tuple[pa.Table, bool]:
    suffix = path.suffix.lower()
    if suffix not in (".csv", ".parquet", ".pq"):
        raise TrafficFileError(f"{name}: expected a .csv or .parquet traffic file, found "
                               f"the extension {suffix or '(none)'!r}")
    if not path.is_file():
        raise TrafficFileError(f"{name}: expected an existing traffic file, found none")
    try:
        if suffix == ".csv":
            import pyarrow.csv as pacsv

            # every column as text: a cell that is not a number must be reported with its row,
            # not make the reader guess another type for the whole column
            with path.open("r", encoding="utf-8") as handle:
                header = handle.readline().strip().split(",")
            return pacsv.read_csv(
                path, convert_options=pacsv.ConvertOptions(
                    column_types={h.strip().strip('"'): pa.string() for h in header},
                    strings_can_be_null=True, null_values=[""])), True
        import pyarrow.parquet as pq

        return pq.read_table(path), False
    except UnicodeDecodeError as error:
        raise TrafficFileError(f"{name}: expected UTF-8 text, found a byte that is not UTF-8 "
                               f"at offset {error.start}") from None
    except (pa.ArrowInvalid, OSError) as error:
        detail = " ".join(str(error).split())
        raise TrafficFileError(f"{name}: cannot be read as a table ({detail})") from None


class _Problems:
    """Problems per row, collected column by column (vectorised checks, messages only for
    the rows that fail)."""

    def __init__(self, n: int):
        self.by_row: dict[int, list[str]] = {}
        self.bad = np.zeros(n, dtype=bool)
        # per column, the cells already reported as not a number: an "empty cell" check of
        # the same cell would contradict that report (the value is NaN either way)
        self.not_numbers: dict[str, NDArray[np.bool_]] = {}

    def unread(self, column: str) -> NDArray[np.bool_]:
        """The rows whose cell in ``column`` holds something that is not a number."""
        return self.not_numbers.get(column, np.zeros(self.bad.size, dtype=bool))

    def add(self, mask: NDArray[np.bool_], message) -> None:
        for i in np.flatnonzero(mask):
            self.by_row.setdefault(int(i), []).append(message(int(i)))
        self.bad |= mask


def _text(table: pa.Table, column: str) -> NDArray[np.object_]:
    return np.asarray(table.column(column).cast(pa.string()).to_pylist(), dtype=object)


def _numbers(table: pa.Table, column: str, problems: _Problems) -> NDArray[np.float64]:
    """A numeric column with NaN for empty cells; cells that are no number are problems."""
    col = table.column(column)
    if pa.types.is_floating(col.type) or pa.types.is_integer(col.type):
        values = col.cast(pa.float64()).fill_null(np.nan).to_numpy(zero_copy_only=False).copy()
        infinite = np.isinf(values)
        problems.add(infinite, lambda i: f"{column}: expected a finite number, found "
                                         f"{values[i]!r}")
        problems.not_numbers[column] = infinite
        values[infinite] = np.nan
        return values
    text = col.cast(pa.string())
    values = np.full(len(col), np.nan)
    cells = text.to_pylist()
    wrong = np.zeros(len(col), dtype=bool)
    for i, cell in enumerate(cells):
        if cell is None or not cell.strip():
            continue
        try:
            values[i] = float(cell)
        except ValueError:
            wrong[i] = True
    found = cells
    not_number = wrong | ~np.isfinite(np.where(np.isnan(values), 0.0, values))
    problems.add(not_number, lambda i: f"{column}: expected a number, found {found[i]!r}")
    problems.not_numbers[column] = not_number
    values[not_number] = np.nan
    return values


def check_table(table: pa.Table, name: str, system: UnitSystem, bad_rows: str = "fail",
                max_spacing: float | None = None,
                gross_rel_tolerance: float = DEFAULT_GROSS_REL_TOLERANCE,
                gross_abs_tolerance: float | None = None, first_line: int | None = None,
                source: str | None = None) -> Traffic:
    """Check a wide-layout table (see the module) and turn it into :class:`Traffic`."""
    max_spacing = DEFAULT_MAX_SPACING[system.name] if max_spacing is None else max_spacing
    abs_tol = DEFAULT_GROSS_ABS_TOLERANCE[system.name] if gross_abs_tolerance is None \
        else gross_abs_tolerance
    meta = table.schema.metadata or {}
    names = [c.strip() for c in table.column_names]
    table = table.rename_columns(names)
    axles = sorted(int(m.group(1)) for c in names if (m := _AXLE.match(c)))
    spacings = sorted(int(m.group(1)) for c in names if (m := _SPACING.match(c)))
    for required in ("id", "gross"):
        if required not in names:
            raise TrafficFileError(f"{name}: column {required!r}: expected in the header "
                                   f"(wide layout: id, gross, axle_1 …, spacing_1 …), found "
                                   f"only {', '.join(names) or 'no columns'}")
    if not axles:
        raise TrafficFileError(f"{name}: columns axle_1 …: expected at least axle_1 in the "
                               f"header, found only {', '.join(names)}")
    n_max = max(axles)
    if axles != list(range(1, n_max + 1)):
        missing = sorted(set(range(1, n_max + 1)) - set(axles))
        raise TrafficFileError(f"{name}: column axle_{missing[0]}: expected in the header "
                               f"(axle_{n_max} is there), found none")
    if spacings and max(spacings) >= n_max:
        raise TrafficFileError(f"{name}: column spacing_{max(spacings)}: expected at most "
                               f"spacing_{n_max - 1} for {n_max} axle columns")
    n = table.num_rows
    problems = _Problems(n)
    ids = _text(table, "id")
    problems.add(np.array([v is None or not str(v).strip() for v in ids], dtype=bool),
                 lambda i: "id: expected an identifier, found an empty cell")
    W = np.column_stack([_numbers(table, f"axle_{k}", problems) for k in range(1, n_max + 1)])
    S = np.full((n, max(n_max - 1, 0)), np.nan)
    for k in spacings:
        S[:, k - 1] = _numbers(table, f"spacing_{k}", problems)
    gross = _numbers(table, "gross", problems)
    present = ~np.isnan(W)
    count = np.where(present.any(axis=1), n_max - np.argmax(present[:, ::-1], axis=1), 0)
    unread_axles = np.column_stack([problems.unread(f"axle_{k}") for k in range(1, n_max + 1)])
    problems.add((count == 0) & ~unread_axles.any(axis=1),
                 lambda i: "axle_1 …: expected at least one axle weight, found none")
    k_index = np.arange(n_max)[None, :]
    within = k_index < count[:, None]
    for k in range(n_max):
        gap = within[:, k] & ~present[:, k] & ~unread_axles[:, k]
        problems.add(gap, lambda i, k=k: f"axle_{k + 1}: expected a weight (axle_{count[i]} "
                                         f"is given), found an empty cell")
        low = within[:, k] & present[:, k] & (W[:, k] <= 0.0)
        problems.add(low, lambda i, k=k: f"axle_{k + 1}: expected a weight > 0, found "
                                         f"{W[i, k]:g}")
    for k in range(n_max - 1):
        needed = k + 1 < count
        col = S[:, k]
        problems.add(needed & np.isnan(col) & ~problems.unread(f"spacing_{k + 1}"),
                     lambda i, k=k: f"spacing_{k + 1}: expected a length between axle_{k + 1} "
                                    f"and axle_{k + 2}, found an empty cell")
        problems.add(needed & (col <= 0.0),
                     lambda i, k=k: f"spacing_{k + 1}: expected a length > 0, found "
                                    f"{S[i, k]:g}")
        problems.add(needed & (col > max_spacing),
                     lambda i, k=k: f"spacing_{k + 1}: expected at most {max_spacing:g} "
                                    f"{system.length} (a longer gap is two vehicles), found "
                                    f"{S[i, k]:g}")
        problems.add(~needed & (count > 0) & ~np.isnan(col),
                     lambda i, k=k: f"spacing_{k + 1}: given, but there is no "
                                    f"axle_{k + 2}")
    total = np.where(within & present, W, 0.0).sum(axis=1)
    problems.add(np.isnan(gross) & ~problems.unread("gross"),
                 lambda i: "gross: expected the gross weight, found an empty cell")
    tolerance = np.maximum(gross_rel_tolerance * np.abs(gross), gross_abs_tolerance
                           if gross_abs_tolerance is not None else abs_tol)
    # a sum over a cell that is not a number would be a second, derived complaint
    mismatch = (~np.isnan(gross) & (count > 0) & ~unread_axles.any(axis=1)
                & (np.abs(total - gross) > tolerance))
    problems.add(mismatch, lambda i: f"gross: the axle weights add up to {total[i]:g} "
                                     f"{system.force}, expected {gross[i]:g} within "
                                     f"{tolerance[i]:g}")
    timestamp = _timestamps(table, problems) if "timestamp" in names else \
        np.full(n, np.datetime64("NaT"), dtype="datetime64[s]")
    direction = _directions(table, problems) if "direction" in names else np.zeros(n, np.int64)
    if "lane" in names:
        lane_values = _numbers(table, "lane", problems)
        lane = np.where(np.isnan(lane_values), -1, lane_values).astype(np.int64)
    else:
        lane = np.full(n, -1, dtype=np.int64)
    bad_list = tuple(BadRow(i + 1, None if first_line is None else i + first_line,
                            "" if ids[i] is None else str(ids[i]), tuple(msgs))
                     for i, msgs in sorted(problems.by_row.items()))
    if bad_list and bad_rows == "fail":
        shown = "; ".join(b.describe() for b in bad_list[:SHOWN_BAD_ROWS])
        more = (f"; … and {len(bad_list) - SHOWN_BAD_ROWS} more bad rows"
                if len(bad_list) > SHOWN_BAD_ROWS else "")
        raise TrafficFileError(f"{name}: {len(bad_list)} bad row(s) (nothing was used; pass "
                               f"--bad-rows skip to drop them): {shown}{more}")
    good = ~problems.bad
    if not good.any():
        raise TrafficFileError(f"{name}: expected at least one usable truck, found "
                               f"{'none' if n == 0 else f'{n} rows, all bad'}")
    counts = count[good]
    Wg = W[good]
    Sg = np.nan_to_num(S[good])
    offsets = np.concatenate([np.zeros((Wg.shape[0], 1)), np.cumsum(Sg, axis=1)], axis=1) \
        if n_max > 1 else np.zeros((Wg.shape[0], 1))
    keep = (k_index < counts[:, None])
    axle_start = np.concatenate([[0], np.cumsum(counts)]).astype(np.int64)
    invented = meta.get(b"trundle.invented") == b"true" or (
        "provenance" in names and any("invented" in str(v) for v in
                                      _text(table, "provenance")[:1000]))
    return Traffic(ids[good].astype(str), timestamp[good], lane[good], direction[good],
                   gross[good], axle_start, Wg[keep], offsets[keep], system,
                   source if source is not None else name, invented, bad_list)


def _timestamps(table: pa.Table, problems: _Problems) -> NDArray[np.datetime64]:
    col = table.column("timestamp")
    if pa.types.is_timestamp(col.type):
        return col.cast(pa.timestamp("s")).to_numpy(zero_copy_only=False).astype(
            "datetime64[s]")
    cells = col.cast(pa.string()).to_pylist()
    out = np.full(len(cells), np.datetime64("NaT"), dtype="datetime64[s]")
    wrong = np.zeros(len(cells), dtype=bool)
    for i, cell in enumerate(cells):
        if cell is None or not cell.strip():
            continue
        try:
            out[i] = np.datetime64(cell.strip().replace(" ", "T").rstrip("Z"), "s")
        except ValueError:
            wrong[i] = True
    problems.add(wrong, lambda i: f"timestamp: expected ISO 8601 (2026-03-01T06:12:09), found "
                                  f"{cells[i]!r}")
    return out


def _directions(table: pa.Table, problems: _Problems) -> NDArray[np.int64]:
    cells = table.column("direction").cast(pa.string()).to_pylist()
    out = np.zeros(len(cells), dtype=np.int64)
    wrong = np.zeros(len(cells), dtype=bool)
    for i, cell in enumerate(cells):
        text = "" if cell is None else cell.strip()
        if text in ("", "0"):
            continue
        if text in ("1", "+1", "1.0", "+1.0"):
            out[i] = 1
        elif text in ("-1", "-1.0"):
            out[i] = -1
        else:
            wrong[i] = True
    problems.add(wrong, lambda i: f"direction: expected +1, -1 or empty, found {cells[i]!r}")
    return out


# --- writing -----------------------------------------------------------------------------------


def traffic_bytes(traffic: Traffic, fmt: str) -> bytes:
    """The trucks in the wide layout as CSV or Parquet bytes (for an atomic write)."""
    table = traffic.wide_table()
    sink = pa.BufferOutputStream()
    if fmt == "csv":
        import pyarrow.csv as pacsv

        # CSV keeps no metadata: an invented file says so in a column on every row
        if traffic.invented:
            table = table.append_column("provenance", pa.array(
                np.full(table.num_rows, "invented, not measured")))
        # spacings come back as differences of offsets: 1e-10 of a length unit is kept, the
        # rounding noise of the subtraction (3.3099999999999996) is not
        for k, name in enumerate(table.column_names):
            if name.startswith("spacing_"):
                table = table.set_column(k, name, pc.round(table.column(name), 10))
        table = table.set_column(1, "timestamp", pc.strftime(table.column("timestamp"),
                                                             format="%Y-%m-%dT%H:%M:%S"))
        pacsv.write_csv(table, sink)
    elif fmt == "parquet":
        import pyarrow.parquet as pq

        pq.write_table(table, sink)
    else:
        raise ValueError(f"format: expected csv or parquet, found {fmt!r}")
    return sink.getvalue().to_pybytes()
