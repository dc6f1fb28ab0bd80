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
from trundle.report.format import decimals, fixed, length, number, verdict_cell
from trundle.report.package import inline_svg
from trundle.workflows.sweep import NOT_CERTIFIED, SweepResult, effect_family

FAIL = "#a3161b"  # a check that EXCEEDS, as the report page marks it

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
    names = result.check_names
    if names:
        header.append("checks")
        for name in names:
            header += [f"{name}: utilisation", f"{name}: verdict"]
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
        if names:
            row.append(verdict_cell(result.point_verdict(p)))
            by_name = {c.name: c for c in result.checks[p]}
            for name in names:
                c = by_name.get(name)
                row += ["", verdict_cell(None)] if c is None else \
                    [number(c.utilisation), verdict_cell(c.verdict)]
        rows.append(row)
    return header, rows


def check_summary(result: SweepResult, with_points: bool = True) -> str:
    """One line: how many points EXCEED a check of the model, which checks and (with
    ``with_points``) at which points; the verdicts are those of
    :mod:`trundle.analysis.checks`, carried by each point's checks."""
    names = result.check_names
    n = len(result.points)
    if not names:
        return "checks: none (the model defines no deflection limit or fatigue check)"
    failing = result.exceeding()
    if not failing:
        return f"checks: all {n} points PASS all {len(names)} checks"
    exceeded: dict[str, None] = {}
    for p in failing:
        for c in result.checks[p]:
            if c.verdict != "PASS":
                exceeded.setdefault(c.name, None)
    # "vertical deflection, span 1", "…, span 2" -> "vertical deflection (spans 1, 2)"
    grouped: dict[str, list[str]] = {}
    for name in exceeded:
        what, _, span = name.rpartition(", span ")
        if what:
            grouped.setdefault(what, []).append(span)
        else:
            grouped.setdefault(name, [])
    listed = [f"{what} (span{'s' if len(spans) > 1 else ''} {', '.join(spans)})" if spans
              else what for what, spans in grouped.items()]
    more = f" and {len(listed) - 4} more" if len(listed) > 4 else ""
    text = f"checks: {len(failing)} of {n} points EXCEED ({'; '.join(listed[:4])}{more})"
    if not with_points:
        return text
    where = "; ".join(_point_text(result, p) for p in failing[:6]) + (
        "; …" if len(failing) > 6 else "")
    return f"{text} at {where}"


def _point_text(result: SweepResult, p: int) -> str:
    return ", ".join(f"{a.name} = {length(result.points[p, k])} {a.unit}"
                     for k, a in enumerate(result.axes))


def worst_check_text(result: SweepResult, p: int) -> str:
    """The check of largest utilisation at a point: "vertical deflection, span 1: 2.013"."""
    c = result.worst_check(p)
    if c is None:
        return verdict_cell(None)
    return f"{c.name}: {c.utilisation:.3f}" + ("" if c.certified else f" {NOT_CERTIFIED_CHECK}")


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
        if result.check_names:
            c = result.worst_check(p)
            row += [verdict_cell(result.point_verdict(p)),
                    verdict_cell(None) if c is None else f"{c.utilisation:.3f}",
                    verdict_cell(None) if c is None else
                    c.name + ("" if c.certified else f" {NOT_CERTIFIED_CHECK}")]
        rows.append(row)
    if result.check_names:
        header = header[:len(header) - 1 - 2 * len(result.check_names)] + [
            "checks", "largest utilisation", "of the check"]
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
        where = SAME_EVERYWHERE if result.constant(e) else _point_text(result, p)
        value = _short(displayed(result, e)[p])
        if NOT_CERTIFIED in result.load[p][e]:
            value = f"{value} {NOT_CERTIFIED}"
        out.append((effect_title(result, e), value, where))
    return out


SAME_EVERYWHERE = "the same at every point"
NOT_CERTIFIED_CHECK = "(search not certified: may read low)"


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
    failing = np.array(result.exceeding(), dtype=int)
    any_failing = bool(failing.size)
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
            if any_failing:  # every point where a check EXCEEDS, on every panel
                ax.plot(x[failing], y[failing], marker="x", color=FAIL, markersize=7,
                        markeredgewidth=1.6, linestyle="none", clip_on=False,
                        label="a check EXCEEDS at this point")
                if e == 0:
                    ax.legend(loc="best", fontsize=7, frameon=False)
            # the worst value above the panel, never over the curve (the diamond marks it)
            at = f", {SAME_EVERYWHERE}" if result.constant(e) else \
                f" at {length(x[p])} {result.axes[0].unit}"
            ax.set_title(f"worst: {_short(y[p])}{at}", loc="right", fontsize=7, color=INK)
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
            if any_failing:
                ax.plot(result.points[failing, 0], result.points[failing, 1], marker="x",
                        color=FAIL, markersize=6, markeredgewidth=1.4, linestyle="none",
                        clip_on=False,
                        label="a check EXCEEDS at this point")
                if e == 0:
                    ax.legend(loc="best", fontsize=7)
            ax.set_xlabel(wrapped(axis_title(result, 0), 2.6, 8.5))
            ax.set_ylabel(wrapped(axis_title(result, 1), 2.6, 8.5))
    heading = title or result.spec.title
    # wrapped to the figure's width (less the margins), so the title is never clipped
    # the points themselves are marked × on every panel
    verdicts = check_summary(result, with_points=False) + (" (×)" if any_failing else "")
    figure.suptitle(wrapped(f"What-if sweep: {heading}", width - 0.4, 9) + "\n"
                    + wrapped(verdicts, width - 0.4, 8), fontsize=9,
                    color=FAIL if any_failing else INK)
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
                     "worst_point": result.worst(e),
                     "same_at_every_point": result.constant(e)}
                    for e, s in enumerate(result.effects)],
        "points": result.points,
        "checks": [{"name": name,
                    "quantity": next(c.quantity for point in result.checks for c in point
                                     if c.name == name),
                    "utilisation": [_check_of(result, p, name, "utilisation")
                                    for p in range(len(result.points))],
                    "verdict": [_check_of(result, p, name, "verdict")
                                for p in range(len(result.points))],
                    "certified": [_check_of(result, p, name, "certified")
                                  for p in range(len(result.points))]}
                   for name in result.check_names],
        "point_verdicts": [result.point_verdict(p) for p in range(len(result.points))],
        "points_exceeding": result.exceeding(),
        "check_summary": check_summary(result),
        "length_unit": length,
        "notes": list(result.spec.notes),
        "cautions": list(CAUTIONS),
    }
    return json_text(document)


def _check_of(result: SweepResult, p: int, name: str, field: str) -> Any:
    for c in result.checks[p]:
        if c.name == name:
            return getattr(c, field)
    return None


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
    numeric = [not h.endswith(": load") and not h.endswith(": support")
               and h not in ("checks", "of the check") for h in header]
    failing = result.exceeding()
    checks = f"<p class='{'fail' if failing else 'checks'}'>{e(check_summary(result))}</p>"
    if failing:
        checks += ("<table><tr><th>point</th><th>check</th><th>utilisation</th>"
                   "<th>verdict</th><th>governing</th></tr>" + "".join(
                       f"<tr><td>{e(_point_text(result, p))}</td><td>{e(c.name)}</td>"
                       f"<td class='num'>{c.utilisation:.3f}</td>"
                       f"<td class='fail'>{e(verdict_cell(c.verdict))}</td>"
                       f"<td>{e(c.governing or '—')}</td></tr>"
                       for p in failing for c in result.checks[p] if c.verdict != "PASS")
                   + "</table>")
    body = "".join("<tr>" + "".join(
        f"<td class='num'>{e(c)}</td>" if right else
        f"<td class='fail'>{e(c)}</td>" if c == "EXCEEDS" else f"<td>{e(c)}</td>"
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
 .fail {{ color: {FAIL}; font-weight: 700; }}
</style></head><body>
<p>WHAT-IF SWEEP</p><h1>{e(result.spec.title)}</h1>
<p>Model file {e(provenance.model_file or "(built in Python)")}; SHA-256
{e(provenance.sha256 or "-")}; trundle {e(provenance.version)}; {e(provenance.date)}</p>
<div class="caution"><ul>{cautions}</ul></div>
<p>{len(result.points)} points: {e(swept)}. Each point is the model with the swept numbers
replaced, enveloped exactly.</p>{notes}
<h2>Checks at every point</h2>
{checks}
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
        at = f", {where}" if where == SAME_EVERYWHERE else f" at {where}"
        lines.append(f"worst {effect}: {value}{at}")
    lines.append(check_summary(result))
    return lines
