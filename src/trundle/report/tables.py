"""Tables of influence lines and models: rich tables for the terminal, CSV and JSON text.

Writers return finished text; the caller writes it (atomically, see :mod:`trundle.io.outputs`).
Ordinates are in display units: effect per unit load, e.g. kN·m/kN for a moment line and
mm/kN for a deflection line.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np
from numpy.typing import NDArray
from rich.table import Table
from rich.text import Text

from trundle.core.beam import Beam, Spring
from trundle.core.influence import Effect, InfluenceSet
from trundle.io.outputs import Provenance
from trundle.io.units import UnitSystem
from trundle.report import CAUTION
from trundle.report.export import csv_text, json_text
from trundle.report.format import fixed as _cell
from trundle.report.format import length as format_length
from trundle.report.format import number as _number
from trundle.report.format import position as format_position
from trundle.report.format import significant
from trundle.report.safe_text import clean_text

if TYPE_CHECKING:
    from trundle.io.modelfile import Model

_KIND_NAMES = {"reaction": "reaction", "support_moment": "support moment", "moment": "moment",
               "shear": "shear", "deflection": "deflection", "rotation": "rotation"}


def effect_label(effect: Effect, beam: Beam, units: UnitSystem) -> str:
    """A self-explaining label: "shear left of 7.2 m (support 1)"."""
    name = _KIND_NAMES[effect.kind]
    unit = units.label("length")
    if effect.support is not None:
        x = format_length(beam.support_positions[effect.support])
        return f"{name} at support {effect.support} (x = {x} {unit})"
    assert effect.at is not None
    x = float(effect.at)
    where = f"{format_length(x)} {unit}"
    notes = []
    tolerance = 1e-9 * beam.length
    for i, xs in enumerate(beam.support_positions):
        if abs(xs - x) <= tolerance:
            notes.append(f"support {i}")
    if any(abs(h - x) <= tolerance for h in beam.hinges):
        notes.append("hinge")
    note = f" ({', '.join(notes)})" if notes else ""
    sided = effect.kind == "shear" or (effect.kind == "rotation" and "hinge" in notes)
    if sided and effect.side:
        return f"{name} {effect.side} of {where}{note}"
    return f"{name} at {where}{note}"


@dataclass(frozen=True)
class OrdinateUnits:
    """How a line's ordinates are shown: ``display = factor × core value``."""

    factor: float
    label: str
    ascii: str
    area_label: str
    area_ascii: str


def ordinate_units(effect: Effect, units: UnitSystem) -> OrdinateUnits:
    factor, label, ascii_label = units.influence_unit(effect.quantity)
    # An area under a line times a distributed load gives the effect: effect per (force/length)
    effect_unit = label.rsplit("/", 1)[0]
    effect_ascii = ascii_label.rsplit("/", 1)[0]
    per = f"{units.force}/{units.length}"
    return OrdinateUnits(factor, label, ascii_label, f"{effect_unit} per {per}",
                         f"{effect_ascii} per {per}")


@dataclass(frozen=True)
class Sampled:
    """Ordinates sampled along the beam; where a line jumps the position appears twice.

    Fields
    ------
    x : (n,) positions [length]
    limit : (n,) "left", "right" at a jump, "" elsewhere
    values : (n, n_lines) ordinates in display units
    """

    x: NDArray[np.float64]
    limit: tuple[str, ...]
    values: NDArray[np.float64]


def display_factors(lines: InfluenceSet, units: UnitSystem) -> NDArray[np.float64]:
    return np.array([ordinate_units(e, units).factor for e in lines.effects])


def noise_floors(lines: InfluenceSet, beam: Beam, units: UnitSystem) -> NDArray[np.float64]:
    """Per line, the size below which an ordinate is rounding noise (display units).

    A line that must vanish (moment at a pinned end) comes out of the solve as ±1e-17 or
    so; 1e-12 of the quantity's natural size (1 for forces, L for moments, L³/EI and L²/EI
    for deflections and rotations) sets it to zero for display, far below any printed digit.
    """
    length = beam.length
    EI = min(min(s.EI0, s.EI1) for s in beam.stiffness_segments)
    natural = {"force": 1.0, "moment": length, "deflection": length**3 / EI,
               "rotation": length**2 / EI}
    return np.array([1e-12 * natural[e.quantity] * ordinate_units(e, units).factor
                     for e in lines.effects])


def _clean(values: NDArray[np.float64], floors: NDArray[np.float64]) -> NDArray[np.float64]:
    return np.where(np.abs(values) < floors, 0.0, values) + 0.0


def sample(lines: InfluenceSet, beam: Beam, units: UnitSystem, per_span: int = 40,
           extra: Sequence[float] = ()) -> Sampled:
    """Ordinates at ``per_span`` equal steps in every span, at every knot and at ``extra``.

    Both one-sided limits are listed where any line jumps (a shear line at its section).
    """
    ends = beam.support_positions
    grid = [np.linspace(a, b, per_span + 1) for a, b in zip(ends[:-1], ends[1:], strict=True)]
    tolerance = 1e-9 * beam.length
    exact = np.unique(np.concatenate([lines.knots, np.asarray(extra, dtype=float)]))
    grid_points = np.concatenate(grid)
    # a grid point within rounding of a knot (7.2 * 20/40 = 3.5999999999999996) is that knot,
    # so the jump of a shear line at its section is caught at the exact position
    nearest = np.abs(grid_points[:, None] - exact[None, :]).min(axis=1)
    points = np.sort(np.concatenate([exact, grid_points[nearest > tolerance]]))
    points = points[np.concatenate([[True], np.diff(points) > tolerance])]
    factors = display_factors(lines, units)
    floors = noise_floors(lines, beam, units)
    left = _clean(lines(points, side="left") * factors, floors)
    right = _clean(lines(points, side="right") * factors, floors)
    scale = np.maximum(np.abs(right).max(axis=0), floors)
    jumps = (np.abs(left - right) > 1e-9 * scale).any(axis=1)
    xs: list[float] = []
    limits: list[str] = []
    rows: list[NDArray[np.float64]] = []
    for i, x in enumerate(points):
        if jumps[i]:
            xs.extend([x, x])
            limits.extend(["left", "right"])
            rows.extend([left[i], right[i]])
        else:
            xs.append(x)
            limits.append("")
            rows.append(right[i])
    return Sampled(np.asarray(xs), tuple(limits), np.asarray(rows) + 0.0)


def lines_csv(lines: InfluenceSet, beam: Beam, units: UnitSystem, sampled: Sampled,
              provenance: Provenance | None = None) -> str:
    """CSV text: the provenance comment, a position column, a limit column, one column per
    line (unit in the header)."""
    header = [f"x [{units.label('length')}]", "limit"]
    for effect in lines.effects:
        header.append(f"{effect_label(effect, beam, units)} "
                      f"[{ordinate_units(effect, units).label}]")
    return csv_text(header, ([_number(x), limit, *(_number(v) for v in row)]
                             for x, limit, row in zip(sampled.x, sampled.limit, sampled.values,
                                                      strict=True)), provenance)


def line_extremes(lines: InfluenceSet, beam: Beam, units: UnitSystem
                  ) -> list[dict[str, Any]]:
    """Per line: max and min ordinate (display units) with x, and the signed areas.

    A line that is zero everywhere (within rounding) has no place of max or min: x is None.
    """
    factors = display_factors(lines, units)
    floors = noise_floors(lines, beam, units)
    positive, negative = lines.signed_areas()
    out = []
    for i in range(len(lines)):
        line = lines.line(i)
        top, x_top = line.max()
        bottom, x_bottom = line.min()
        f, floor = factors[i], floors[i]
        top, bottom = top * f, bottom * f
        vanishes = max(abs(top), abs(bottom)) < floor
        out.append({
            "max": 0.0 if abs(top) < floor else top + 0.0,
            "x_max": None if vanishes else x_top,
            "min": 0.0 if abs(bottom) < floor else bottom + 0.0,
            "x_min": None if vanishes else x_bottom,
            "area_positive": 0.0 if vanishes else positive[i] * f + 0.0,
            "area_negative": 0.0 if vanishes else negative[i] * f + 0.0,
        })
    return out


def lines_json(lines: InfluenceSet, beam: Beam, units: UnitSystem, sampled: Sampled,
               title: str, source: str, generator: str) -> str:
    """JSON text with, per line, the exact piecewise cubic as well as the sampled ordinates."""
    factors = display_factors(lines, units)
    extremes = line_extremes(lines, beam, units)
    length = units.ascii_label("length")
    entries = []
    for i, effect in enumerate(lines.effects):
        ou = ordinate_units(effect, units)
        ex = extremes[i]
        entries.append({
            "label": effect_label(effect, beam, units),
            "effect": effect.kind,
            "section": effect.at,
            "support": effect.support,
            "side": effect.side,
            "ordinate_unit": ou.ascii,
            "max": {"ordinate": ex["max"], "x": ex["x_max"]},
            "min": {"ordinate": ex["min"], "x": ex["x_min"]},
            "area": {"positive": ex["area_positive"], "negative": ex["area_negative"],
                     "unit": ou.area_ascii},
            "ordinates": [float(v) for v in sampled.values[:, i]],
            "piecewise_cubic": {
                "note": f"ordinate = sum of c[k] * (x - knot)^(3-k) on each piece, "
                        f"x in {length}, ordinate in {ou.ascii}",
                "coefficients": (lines.coefficients[:, :, i].T * factors[i] + 0.0).tolist(),
            },
        })
    document = {
        "title": title,
        "model": source,
        "generator": generator,
        "caution": CAUTION,
        "units": {"length": length, "force": units.force, "unit_load": f"1 {units.force}"},
        "beam": {"spans": list(beam.spans), "length": beam.length,
                 "supports": [beam.support_label(i) for i in range(len(beam.supports))],
                 "hinges": list(beam.hinges)},
        "x": [float(v) for v in sampled.x],
        "limit": list(sampled.limit),
        "knots": lines.knots.tolist(),
        "lines": entries,
    }
    return json_text(document)


def _add_row(table: Table, *cells: str) -> None:
    """Cells as plain text: user strings with brackets are not rich markup."""
    # names come from model files: no control character reaches the terminal
    table.add_row(*(Text(clean_text(cell, keep_newlines=True)) for cell in cells))


def _decimals(values: NDArray[np.float64], significant: int = 5) -> int:
    biggest = float(np.max(np.abs(values))) if values.size else 0.0
    if biggest == 0.0 or not math.isfinite(biggest):
        return 3
    return int(min(8, max(0, significant - 1 - math.floor(math.log10(biggest)))))


def extreme_ordinate_cells(ex: dict[str, Any]) -> dict[str, str]:
    """The largest and smallest ordinate of a line and where they are, as the extremes table
    writes them (values with the line's decimals, positions to a thousandth); the figures'
    legends write them with this too."""
    d = _decimals(np.array([ex["max"], ex["min"]]))
    return {"max": _cell(ex["max"], d), "min": _cell(ex["min"], d),
            "x_max": format_position(ex["x_max"]), "x_min": format_position(ex["x_min"])}


def extremes_table(lines: InfluenceSet, beam: Beam, units: UnitSystem) -> Table:
    """One row per line: largest and smallest ordinate, where they occur, signed areas."""
    length = units.label("length")
    table = Table(title="Influence lines: extreme ordinates (unit load)", title_justify="left")
    table.add_column(Text("line"))
    table.add_column(Text("unit"))
    table.add_column(Text("max"), justify="right")
    table.add_column(Text(f"at x [{length}]"), justify="right")
    table.add_column(Text("min"), justify="right")
    table.add_column(Text(f"at x [{length}]"), justify="right")
    table.add_column(Text("area +"), justify="right")
    table.add_column(Text("area −"), justify="right")
    table.add_column(Text("area unit"))
    for effect, ex in zip(lines.effects, line_extremes(lines, beam, units), strict=True):
        ou = ordinate_units(effect, units)
        cells = extreme_ordinate_cells(ex)
        da = _decimals(np.array([ex["area_positive"], ex["area_negative"]]))
        _add_row(table, effect_label(effect, beam, units), ou.label, cells["max"],
                      cells["x_max"], cells["min"], cells["x_min"],
                      _cell(ex["area_positive"], da), _cell(ex["area_negative"], da),
                      ou.area_label)
    return table


def ordinates_tables(lines: InfluenceSet, beam: Beam, units: UnitSystem,
                     columns: int = 6) -> list[Table]:
    """Ordinates at the tenth points of every span, ``columns`` lines per table.

    Where a line jumps at a tenth point the cell shows "left / right".
    """
    x = beam.tenth_points()
    factors = display_factors(lines, units)
    floors = noise_floors(lines, beam, units)
    left = _clean(lines(x, side="left") * factors, floors)
    right = _clean(lines(x, side="right") * factors, floors)
    extremes = line_extremes(lines, beam, units)
    length = units.label("length")
    tables = []
    for start in range(0, len(lines), columns):
        chosen = range(start, min(start + columns, len(lines)))
        table = Table(title="Ordinates at tenth points (unit load at x)", title_justify="left",
                      caption="a / b: left / right limit where the line jumps",
                      caption_justify="left")
        table.add_column(Text("span"), justify="right")
        table.add_column(Text(f"x [{length}]"), justify="right")
        decimals = {}
        for j in chosen:
            effect = lines.effects[j]
            table.add_column(Text(f"{effect_label(effect, beam, units)}\n"
                             f"[{ordinate_units(effect, units).label}]"), justify="right")
            decimals[j] = _decimals(np.concatenate([left[:, j], right[:, j]]))
        for i, xi in enumerate(x):
            span = beam.span_of(xi) + 1 if 0 < xi < beam.length else ""
            cells = []
            for j in chosen:
                scale = max(abs(extremes[j]["max"]), abs(extremes[j]["min"]), 1e-300)
                a, b = left[i, j], right[i, j]
                if abs(a - b) > 1e-9 * scale:
                    cells.append(f"{_cell(a, decimals[j])} / {_cell(b, decimals[j])}")
                else:
                    cells.append(_cell(b, decimals[j]))
            _add_row(table, str(span), format_length(xi), *cells)
        table.add_section()
        for name, key, where in (("max", "max", "x_max"), ("min", "min", "x_min")):
            cells = [f"{_cell(extremes[j][key], decimals[j])} @ "
                     f"{format_position(extremes[j][where])}" for j in chosen]
            _add_row(table, "", name, *cells)
        tables.append(table)
    return tables


# ------------------------------------------------------------------------------------------
# model summary


def model_tables(model: Model) -> list[Table]:
    """Spans, supports, hinges and stiffness of a model, as rich tables."""
    beam, units = model.beam, model.units
    length = units.label("length")
    ends = beam.support_positions

    spans = Table(title="Spans", title_justify="left")
    for name in ("span", f"from [{length}]", f"to [{length}]", f"length [{length}]"):
        spans.add_column(Text(name), justify="right")
    for i, (a, b) in enumerate(zip(ends[:-1], ends[1:], strict=True)):
        _add_row(spans, str(i + 1), format_length(a), format_length(b), format_length(b - a))

    supports = Table(title="Supports", title_justify="left")
    supports.add_column(Text("support"), justify="right")
    supports.add_column(Text(f"x [{length}]"), justify="right")
    supports.add_column(Text("kind"))
    supports.add_column(Text(f"vertical stiffness [{units.label('spring stiffness')}]"),
                        justify="right")
    supports.add_column(Text(f"rotational stiffness [{units.label('rotational stiffness')}]"),
                        justify="right")
    for i, s in enumerate(beam.supports):
        if isinstance(s, Spring):
            kr = significant(s.kr) if s.kr is not None else "free"
            _add_row(supports, str(i), format_length(ends[i]), "spring", significant(s.k), kr)
        else:
            vertical = {"pin": "rigid", "fixed": "rigid", "free": "none"}[str(s)]
            rotation = {"pin": "free", "fixed": "rigid", "free": "free"}[str(s)]
            _add_row(supports, str(i), format_length(ends[i]), str(s), vertical, rotation)

    stiffness = Table(title="Flexural stiffness", title_justify="left")
    stiffness.add_column(Text(f"from [{length}]"), justify="right")
    stiffness.add_column(Text(f"to [{length}]"), justify="right")
    stiffness.add_column(Text(f"EI [{units.label('flexural rigidity')}]"), justify="right")
    stiffness.add_column(Text(f"EI at end [{units.label('flexural rigidity')}]"), justify="right")
    stiffness.add_column(Text("shape"))
    stiffness.add_column(Text("as given"))
    given = list(model.stiffness_given) + [""] * len(beam.stiffness_segments)
    for seg, text in zip(beam.stiffness_segments, given, strict=False):
        end = significant(seg.EI1) if seg.shape != "constant" else ""
        _add_row(stiffness, format_length(seg.x0), format_length(seg.x1), significant(seg.EI0), end,
                          seg.shape, text)

    tables = [spans, supports, stiffness]
    if beam.hinges:
        hinges = Table(title="Internal hinges", title_justify="left")
        hinges.add_column(Text(f"x [{length}]"), justify="right")
        hinges.add_column(Text("in span"), justify="right")
        for h in beam.hinges:
            _add_row(hinges, format_length(h), str(beam.span_of(h) + 1))
        tables.append(hinges)
    return tables
