"""What a what-if sweep writes: the table (CSV, one row per point), JSON, a figure, a page.

:func:`sweep_files` turns a :class:`trundle.workflows.sweep.SweepResult` and its
:class:`~trundle.io.outputs.Provenance` into finished file contents (``sweep.csv`` with the
provenance as its first comment line, ``sweep.json``, ``sweep.<format>`` and the report page
``sweep.html`` with the cautions and the figure drawn inline as SVG, like every other report),
for :func:`trundle.io.outputs.write_output_set`. One swept
number gives a line figure (one panel per effect), two give contour plots. Every figure and
table labels the swept numbers by their model path and unit and the effects by what they are
and their unit; the figure carries the caution. Numbers are written by
:mod:`trundle.report.format`. Runs no analysis and reads no file.
"""

from __future__ import annotations

import html
import math
from collections.abc import Sequence
from typing import Any

import numpy as np
from matplotlib.figure import Figure

from trundle.io.outputs import Provenance
from trundle.report import CAUTION, LOAD_MODEL_CAUTION
from trundle.report.envelope_data import display_factor, quantity_unit
from trundle.report.export import csv_text, json_text
from trundle.report.figures import (
    INK,
    MUTED,
    PALETTE,
    SEQUENTIAL,
    figure_bytes,
    new_figure,
    wrapped,
)
from trundle.report.format import decimals, fixed, length, number
from trundle.report.package import inline_svg
from trundle.workflows.sweep import NOT_CERTIFIED, SweepResult, effect_family

CAUTIONS = (CAUTION, LOAD_MODEL_CAUTION,
            "Each point is the model file with the swept numbers replaced; values at points "
            "between those computed are not checked.")


def effect_unit(result: SweepResult, effect: int, ascii_only: bool = False) -> str:
    return quantity_unit(effect_family(result.effects[effect]), result.units, ascii_only)


def displayed(result: SweepResult, effect: int) -> np.ndarray:
    """The values of one effect in display units (deflection in mm or in)."""
    factor = display_factor(effect_family(result.effects[effect]), result.units)
    return result.values[:, effect] * factor


def axis_title(result: SweepResult, axis: int) -> str:
    a = result.axes[axis]
    return f"{a.name} [{a.unit}]"


def effect_title(result: SweepResult, effect: int, ascii_only: bool = False) -> str:
    return f"{result.effects[effect].label} [{effect_unit(result, effect, ascii_only)}]"


def sweep_rows(result: SweepResult) -> tuple[list[str], list[list[str]]]:
    """(header, rows): per point the swept values, then per effect its value, where it
    occurs (x of the section, or the support) and the governing load."""
    length = result.units.label("length")
    header = [axis_title(result, a) for a in range(len(result.axes))]
    for e, selector in enumerate(result.effects):
        header.append(effect_title(result, e))
        if selector.kind in ("reaction", "support_moment"):
            header.append(f"{selector.label}: support")
        else:
            header.append(f"{selector.label}: x [{length}]")
        header.append(f"{selector.label}: load")
    shown = [displayed(result, e) for e in range(len(result.effects))]
    rows = []
    for p, point in enumerate(result.points):
        row = [number(v) for v in point]
        for e, selector in enumerate(result.effects):
            row.append(number(shown[e][p]))
            if selector.kind in ("reaction", "support_moment"):
                row.append(str(int(result.support[p, e])))
            else:
                row.append(number(result.x[p, e]))
            row.append(result.load[p][e])
        rows.append(row)
    return header, rows


def people_rows(result: SweepResult) -> tuple[list[str], list[list[str]]]:
    """The rows of :func:`sweep_rows` written for people: swept values and positions as
    lengths, each effect's column with the decimals that give its largest value five
    significant digits (the terminal's table uses the same)."""
    header, _ = sweep_rows(result)
    columns = [column_text(displayed(result, e)) for e in range(len(result.effects))]
    rows = []
    for p, point in enumerate(result.points):
        row = [length(v) for v in point]
        for e, selector in enumerate(result.effects):
            row.append(columns[e][p])
            if selector.kind in ("reaction", "support_moment"):
                row.append(str(int(result.support[p, e])))
            else:
                row.append(length(result.x[p, e]))
            row.append(result.load[p][e] or "—")
        rows.append(row)
    return header, rows


def sweep_csv(result: SweepResult, provenance: Provenance | None = None) -> str:
    """One row per point; the provenance comment as the first line."""
    header, rows = sweep_rows(result)
    return csv_text(header, rows, provenance or Provenance())


def worst_points(result: SweepResult) -> list[tuple[str, str, str]]:
    """Per effect: (effect with unit, its worst value, where in the sweep)."""
    out = []
    for e in range(len(result.effects)):
        p = result.worst(e)
        where = ", ".join(f"{r.name} = {length(result.points[p, a])} {r.unit}"
                          for a, r in enumerate(result.axes))
        value = _short(displayed(result, e)[p])
        if NOT_CERTIFIED in result.load[p][e]:
            value = f"{value} {NOT_CERTIFIED}"
        out.append((effect_title(result, e), value, where))
    return out


def column_text(values: Sequence[float], significant: int = 5) -> list[str]:
    """A column of values for people: the same decimals for all (report/format.py)."""
    places = decimals(values, significant=significant)
    return [fixed(float(v), places) if math.isfinite(v) else "—" for v in values]


def _short(value: float) -> str:
    """A value for people: five significant digits, fixed-point (report/format.py)."""
    if not math.isfinite(value):
        return "—"
    return fixed(float(value), decimals([value], significant=5))


def sweep_figure(result: SweepResult, title: str = "") -> Figure:
    """A line figure (one swept number) or contours (two), one panel per effect."""
    n = len(result.effects)
    width = 6.8
    if len(result.axes) == 1:
        figure = new_figure(width, 1.0 + 1.9 * n)
        axes = figure.subplots(n, 1, sharex=True, squeeze=False)[:, 0]
        x = result.points[:, 0]
        for e, ax in enumerate(axes):
            y = displayed(result, e)
            ax.plot(x, y, color=PALETTE[e % len(PALETTE)],
                    marker="o" if len(x) <= 40 else None, markersize=2.5)
            p = result.worst(e)
            ax.plot([x[p]], [y[p]], marker="D", color=INK, markersize=4, linestyle="none")
            # the worst value above the panel, never over the curve (the diamond marks it)
            ax.set_title(f"worst: {_short(y[p])} at {length(x[p])} {result.axes[0].unit}",
                         loc="right", fontsize=7, color=INK)
            # a label runs along the panel's height (1.9 in): wrapped to fit it
            ax.set_ylabel(wrapped(effect_title(result, e), 1.7, 8.5))
        axes[-1].set_xlabel(wrapped(axis_title(result, 0), width - 0.6, 8.5))
    else:
        columns = 1 if n == 1 else 2
        rows = math.ceil(n / columns)
        width = 3.6 * columns + 0.4
        figure = new_figure(width, 0.9 + 3.0 * rows)
        grid = figure.subplots(rows, columns, squeeze=False)
        x1, x2 = (np.asarray(r.values) for r in result.axes)
        for e in range(rows * columns):
            ax = grid[e // columns, e % columns]
            if e >= n:
                ax.set_visible(False)
                continue
            z = displayed(result, e).reshape(result.shape)
            filled = ax.contourf(x1, x2, z.T, levels=12, cmap=SEQUENTIAL)
            ax.contour(x1, x2, z.T, levels=filled.levels, colors=MUTED, linewidths=0.3)
            bar = figure.colorbar(filled, ax=ax)
            bar.set_label(wrapped(effect_title(result, e), 2.6, 8.5))
            p = result.worst(e)
            ax.plot([result.points[p, 0]], [result.points[p, 1]], marker="D", color="white",
                    markeredgecolor=INK, markersize=5, linestyle="none")
            ax.set_xlabel(wrapped(axis_title(result, 0), 2.6, 8.5))
            ax.set_ylabel(wrapped(axis_title(result, 1), 2.6, 8.5))
    heading = title or result.spec.title
    # wrapped to the figure's width (less the margins), so the title is never clipped
    figure.suptitle(wrapped(f"What-if sweep: {heading}", width - 0.4, 9), fontsize=9)
    # the caution sits in a strip the layout keeps free (as tall as its lines), so it never
    # covers a label
    caution = wrapped(CAUTION, width - 0.2, 6)
    strip = (caution.count("\n") + 1) * 7.5 / 72.0 / figure.get_figheight()
    figure.get_layout_engine().set(rect=(0.0, strip + 0.005, 1.0, 1.0 - strip - 0.005))
    figure.text(0.01, 0.004, caution, fontsize=6, color=MUTED, ha="left", va="bottom")
    return figure


def sweep_json(result: SweepResult, provenance: Provenance | None = None) -> str:
    """Every point of the sweep with its units, notes and cautions."""
    provenance = provenance or Provenance()
    length = result.units.ascii_label("length") if result.units is not None else ""
    shown = [displayed(result, e) for e in range(len(result.effects))]
    document: dict[str, Any] = {
        "generator": f"trundle {provenance.version}",
        "model_file": provenance.model_file, "sha256": provenance.sha256,
        "date": provenance.date, "title": result.spec.title,
        "axes": [{"name": a.name, "unit": a.unit, "values": a.values}
                 for a in result.axes],
        "effects": [{"label": s.label, "phrase": s.text, "kind": s.kind, "which": s.which,
                     "unit": effect_unit(result, e, ascii_only=True),
                     "values": shown[e],
                     "x": None if s.kind in ("reaction", "support_moment")
                     else result.x[:, e],
                     "support": result.support[:, e]
                     if s.kind in ("reaction", "support_moment") else None,
                     "load": [result.load[p][e] for p in range(len(result.points))],
                     "worst_point": result.worst(e)}
                    for e, s in enumerate(result.effects)],
        "points": result.points,
        "length_unit": length,
        "notes": list(result.spec.notes),
        "cautions": list(CAUTIONS),
    }
    return json_text(document)


def sweep_html(result: SweepResult, provenance: Provenance | None = None,
               svg: bytes | None = None) -> str:
    """The sweep's report page: what was swept, the worst points, the figure, every point,
    the notes and the cautions (self-contained: the figure is drawn inline as SVG, like the
    figures of every other report). Every point's values are written for people (the same
    decimals down a column, :mod:`trundle.report.format`); sweep.csv has them in full."""
    provenance = provenance or Provenance()
    e = html.escape
    cautions = "".join(f"<li>{e(c)}</li>" for c in CAUTIONS)
    notes = "".join(f"<p class='note'>Note: {e(n)}</p>" for n in result.spec.notes)
    worst = "".join(f"<tr><td>{e(effect)}</td><td class='num'>{e(value)}</td>"
                    f"<td>{e(where)}</td></tr>" for effect, value, where in worst_points(result))
    header, rows = people_rows(result)
    head = "".join(f"<th>{e(h)}</th>" for h in header)
    numeric = [not h.endswith(": load") and not h.endswith(": support") for h in header]
    body = "".join("<tr>" + "".join(
        f"<td class='num'>{e(c)}</td>" if right else f"<td>{e(c)}</td>"
        for c, right in zip(row, numeric, strict=True)) + "</tr>" for row in rows)
    figure = ""
    if svg is not None:
        figure = f"<figure>{inline_svg(svg, 's1-')}</figure>"
    swept = "; ".join(f"{a.name} from {length(a.values[0])} to {length(a.values[-1])} "
                      f"{a.unit} ({len(a.values)} values)" for a in result.axes)
    return f"""<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">
<meta name="generator" content="trundle {e(provenance.version)}">
<title>{e(result.spec.title)} — what-if sweep</title>
<style>
 body {{ margin: 0 auto; max-width: 64rem; padding: 2rem; color: #262b31;
        font-family: "DejaVu Sans", Helvetica, Arial, sans-serif; line-height: 1.45; }}
 .caution {{ border: 1px solid #8a6d1d; border-left-width: 6px; background: #fbf7ea;
            padding: 0.6rem 1rem; font-weight: 600; }}
 table {{ border-collapse: collapse; font-size: 0.85rem; margin: 0.5rem 0 1rem; }}
 th, td {{ padding: 0.2rem 0.6rem; border-bottom: 1px solid #d9dde1; text-align: left; }}
 td.num {{ text-align: right; font-variant-numeric: tabular-nums; }}
 figure {{ margin: 0.6rem 0 1.6rem; }}
 figure svg.figure {{ display: block; width: 100%; max-width: 54rem; height: auto; }}
 .wrap {{ overflow-x: auto; }}
</style></head><body>
<p>WHAT-IF SWEEP</p><h1>{e(result.spec.title)}</h1>
<p>Model file {e(provenance.model_file or "(built in Python)")}; SHA-256
{e(provenance.sha256 or "-")}; trundle {e(provenance.version)}; {e(provenance.date)}</p>
<div class="caution"><ul>{cautions}</ul></div>
<p>{len(result.points)} points: {e(swept)}. Each point is the model with the swept numbers
replaced, enveloped exactly.</p>{notes}
<h2>Worst point of each effect</h2>
<table><tr><th>effect</th><th>worst value</th><th>where in the sweep</th></tr>{worst}</table>
{figure}
<h2>Every point</h2><div class="wrap"><table><tr>{head}</tr>{body}</table></div>
</body></html>
"""


def sweep_files(result: SweepResult, provenance: Provenance | None = None,
                figure_format: str = "png", with_figure: bool = True,
                with_report: bool = True) -> dict[str, bytes | str]:
    """Finished contents, by file name: ``sweep.csv``, ``sweep.json``, ``sweep.<format>``
    and ``sweep.html`` (for :func:`trundle.io.outputs.write_output_set`)."""
    files: dict[str, bytes | str] = {"sweep.csv": sweep_csv(result, provenance),
                                     "sweep.json": sweep_json(result, provenance)}
    figure = sweep_figure(result) if (with_figure or with_report) else None
    svg = figure_bytes(figure, "svg") if figure is not None and (
        with_report or figure_format == "svg") else None
    if with_figure and figure is not None:
        files[f"sweep.{figure_format}"] = svg if figure_format == "svg" and svg is not None \
            else figure_bytes(figure, figure_format)
    if with_report:
        files["sweep.html"] = sweep_html(result, provenance, svg)
    return files


def summary_lines(result: SweepResult) -> Sequence[str]:
    """Short lines for a terminal: what was swept and the worst point of each effect."""
    lines = [f"{len(result.points)} points: " + "; ".join(
        f"{r.name} from {length(r.values[0])} to {length(r.values[-1])} {r.unit} "
        f"({len(r.values)} values)" for r in result.axes)]
    for effect, value, where in worst_points(result):
        lines.append(f"worst {effect}: {value} at {where}")
    return lines
