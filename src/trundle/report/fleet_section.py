"""The fleet and permit outputs: tables (CSV, Parquet), figures and a report page.

Presents results the workflows computed; runs no analysis and reads no input file. Every
output carries the cautions, says when the traffic is invented, and shows a permit ratio
above its limit as EXCEEDS.
"""

from __future__ import annotations

import html
import math
from collections.abc import Sequence
from typing import Any

import numpy as np
import pyarrow as pa
import pyarrow.parquet as pq

from trundle.report import CAUTION, LOAD_MODEL_CAUTION
from trundle.report.export import csv_text
from trundle.report.figures import figure_bytes, new_figure
from trundle.report.format import decimals, fixed, number, verdict_cell

MAX_BRIDGE_FIGURES = 12  # histogram and return-level figures for the first this many bridges
STATISTICS_NOTE = (
    "Per-truck values are exact extremes of each truck's crossing (both directions where the "
    "record does not give one). Block maxima, fitted distributions and return levels are "
    "statistical estimates: the interval is a percentile bootstrap of the block maxima; "
    "extrapolating far beyond the recorded period is uncertain. Where the minimum governs an "
    "effect, its statistics are of −min and the return level is shown with its sign.")
FATIGUE_NOTE = (
    "Fatigue: rainflow cycles of each truck's moment history, taken as the exact sequence of "
    "its turning points over the crossing (every break and every stationary point of the "
    "cubic between breaks; no sampling step), damage sum Σ n·S^m, and the damage-equivalent "
    "range per truck crossing (S-N slope m as stated).")


def _parquet(table: pa.Table) -> bytes:
    sink = pa.BufferOutputStream()
    pq.write_table(table, sink)
    return sink.getvalue().to_pybytes()


def _csv(table: pa.Table, comment: str) -> str:
    """CSV text: the provenance comment line first, numbers by ``format.number``."""
    return csv_text(table.column_names, (
        {name: number(v) if isinstance(v, float) else ("" if v is None else v)
         for name, v in row.items()} for row in table.to_pylist()), comment)


# --- fleet -------------------------------------------------------------------------------------


def _unit(quantity: str, units: Any) -> str:
    return units.label(quantity) if quantity in ("moment", "force") else ""


def fleet_summary_table(result: Any) -> pa.Table:
    """One row per (bridge, effect)."""
    bridges = {b.name: b for b in result.spec.bridges}
    rows: dict[str, list[Any]] = {k: [] for k in (
        "bridge", "effect", "unit", "trucks", "max", "truck_at_max", "x_front_axle_at_max",
        "direction_at_max", "min", "truck_at_min", "design_max", "design_min", "ratio_max",
        "ratio_min", "blocks", "fit", "fit_shape", "fit_location", "fit_scale",
        "return_period_years", "return_level", "return_level_low", "return_level_high",
        "damage_equivalent_range", "note")}
    for s in result.summaries:
        sign = -1.0 if s.fit_note.startswith("statistics of −min") else 1.0
        rl = s.return_level
        rows["bridge"].append(s.bridge)
        rows["effect"].append(s.effect)
        rows["unit"].append(_unit(s.quantity, bridges[s.bridge].units))
        rows["trucks"].append(s.n_trucks)
        rows["max"].append(s.maximum)
        rows["truck_at_max"].append(s.truck_at_max)
        rows["x_front_axle_at_max"].append(s.x_at_max)
        rows["direction_at_max"].append(s.direction_at_max)
        rows["min"].append(s.minimum)
        rows["truck_at_min"].append(s.truck_at_min)
        rows["design_max"].append(s.design_max)
        rows["design_min"].append(s.design_min)
        rows["ratio_max"].append(s.ratio_max)
        rows["ratio_min"].append(s.ratio_min)
        rows["blocks"].append(int(s.block_maxima.size))
        rows["fit"].append(s.fit.kind if s.fit else "")
        rows["fit_shape"].append(s.fit.shape if s.fit else np.nan)
        rows["fit_location"].append(sign * s.fit.location if s.fit else np.nan)
        rows["fit_scale"].append(s.fit.scale if s.fit else np.nan)
        rows["return_period_years"].append(result.spec.return_period_years)
        rows["return_level"].append(sign * rl.value if rl else np.nan)
        low, high = (rl.low, rl.high) if rl else (np.nan, np.nan)
        rows["return_level_low"].append(min(sign * low, sign * high))
        rows["return_level_high"].append(max(sign * low, sign * high))
        rows["damage_equivalent_range"].append(s.equivalent_range)
        rows["note"].append(s.fit_note)
    return pa.table(rows)


def fleet_files(result: Any, figure_format: str = "png", figures: bool = True,
                provenance: str = "") -> dict[str, bytes | str]:
    """Every output file of a fleet run, by name (written by the caller through the output
    set writer). ``provenance``: the comment line every CSV starts with (input files and
    their SHA-256, made by the caller; this layer reads no file)."""
    table = fleet_summary_table(result)
    files: dict[str, bytes | str] = {
        "fleet_summary.csv": _csv(table, provenance),
        "fleet_summary.parquet": _parquet(table),
    }
    skipped = result.spec.traffic.skipped
    if skipped:
        files["bad_rows_skipped.csv"] = _csv(pa.table({
            "row": [b.row for b in skipped], "line": [b.line for b in skipped],
            "id": [b.truck_id for b in skipped],
            "problems": ["; ".join(b.problems) for b in skipped]}), provenance)
    images: list[tuple[str, str]] = []
    if figures:
        for k, s in enumerate(governing_effects(result.summaries)[:MAX_BRIDGE_FIGURES]):
            stem = f"bridge{k + 1:03d}"
            if s.block_maxima.size:
                name = f"{stem}_histogram.{figure_format}"
                files[name] = figure_bytes(histogram_figure(s), figure_format)
                images.append((name, f"{s.bridge}: {s.effect}: histogram and fit"))
            if s.fit is not None:
                name = f"{stem}_return_level.{figure_format}"
                files[name] = figure_bytes(return_level_figure(s, result.spec), figure_format)
                images.append((name, f"{s.bridge}: {s.effect}: return level"))
        if result.spec.design is not None:
            name = f"ratio_across_inventory.{figure_format}"
            files[name] = figure_bytes(ratio_figure(result.summaries), figure_format)
            images.insert(0, (name, "Ratio of traffic to the design model across the "
                                    "inventory"))
    files["report.html"] = fleet_html(result, table, images, provenance)
    return files


def governing_effects(summaries: Sequence[Any]) -> list[Any]:
    """Per bridge, the effect with the largest ratio to the design model (without a design
    model: the first effect with a fit), for the figures; every effect is in the tables."""
    out = []
    for bridge in dict.fromkeys(s.bridge for s in summaries):
        mine = [s for s in summaries if s.bridge == bridge]
        ratios = [np.nanmax([s.ratio_max, s.ratio_min, -np.inf]) for s in mine]
        if np.isfinite(ratios).any():
            out.append(mine[int(np.nanargmax(np.where(np.isfinite(ratios), ratios, -np.inf)))])
        else:
            fitted = [s for s in mine if s.fit is not None]
            out.append(fitted[0] if fitted else mine[0])
    return out


def histogram_figure(s: Any) -> Any:
    """Histogram of the per-truck values, and of the block maxima with the fitted density."""
    figure = new_figure(8.0, 3.2)
    left, right = figure.subplots(1, 2)
    counts, edges = s.histogram
    left.stairs(counts, edges, fill=True, alpha=0.6)
    left.set_xlabel(f"{s.effect} per truck" + (" (−min)" if "−min" in s.fit_note else ""))
    left.set_ylabel("trucks")
    left.set_yscale("log")
    right.hist(s.block_maxima, bins=min(30, max(5, s.block_maxima.size // 3)), density=True,
               alpha=0.6, label="block maxima")
    if s.fit is not None:
        x = np.linspace(s.block_maxima.min(), s.block_maxima.max() * 1.1, 200)
        right.plot(x, s.fit.distribution().pdf(x), label=f"fitted {s.fit.kind}")
    right.set_xlabel(f"{s.effect}: maximum per {s.fit.block_days:g} d" if s.fit
                     else f"{s.effect}: block maximum")
    right.set_ylabel("density")
    right.legend()
    return figure


def return_level_figure(s: Any, spec: Any) -> Any:
    """Return level against return period (fit), block maxima at their plotting positions
    (Gringorten), and the chosen period with its bootstrap interval."""
    figure = new_figure(6.0, 3.6)
    ax = figure.subplots()
    per_year = 365.25 / s.fit.block_days
    periods = np.logspace(np.log10(2.0 / per_year), np.log10(max(1000.0,
                                                                 spec.return_period_years)),
                          100)
    levels = s.fit.distribution().isf(1.0 / (periods * per_year))
    ax.plot(periods, levels, label=f"fitted {s.fit.kind}")
    sorted_maxima = np.sort(s.block_maxima)
    n = sorted_maxima.size
    p = (np.arange(1, n + 1) - 0.44) / (n + 0.12)
    ax.plot(1.0 / ((1.0 - p) * per_year), sorted_maxima, "o", ms=3, label="block maxima")
    rl = s.return_level
    ax.errorbar([rl.period_years], [rl.value], yerr=[[rl.value - rl.low], [rl.high - rl.value]],
                fmt="s", capsize=4, label=f"{rl.period_years:g} years, "
                                          f"{100 * rl.confidence:g} % interval")
    ax.set_xscale("log")
    ax.set_xlabel("return period [years]")
    ax.set_ylabel(s.effect + (" (−min)" if "−min" in s.fit_note else ""))
    ax.legend()
    return figure


def ratio_figure(summaries: Sequence[Any]) -> Any:
    """Largest traffic / design ratio of each effect, bridge by bridge."""
    figure = new_figure(7.0, 3.6)
    ax = figure.subplots()
    bridges = list(dict.fromkeys(s.bridge for s in summaries))
    for i, bridge in enumerate(bridges):
        values = [np.nanmax([s.ratio_max, s.ratio_min]) for s in summaries
                  if s.bridge == bridge and not (np.isnan(s.ratio_max) and np.isnan(s.ratio_min))]
        ax.plot(np.full(len(values), i), values, "o", ms=4)
    ax.axhline(1.0, color="0.3", lw=0.8)
    ax.set_xticks(range(len(bridges)), bridges, rotation=30, ha="right")
    ax.set_ylabel("traffic / design")
    return figure


def _html_table(table: pa.Table, flag_column: str | None = None) -> str:
    head = "".join(f"<th>{html.escape(c)}</th>" for c in table.column_names)
    places = {c: decimals(v for v in table.column(c).to_pylist() if isinstance(v, float))
              for c in table.column_names}
    body = []
    for row in table.to_pylist():
        cells = []
        for c, v in row.items():
            if isinstance(v, float):
                text = fixed(v, places[c]) if math.isfinite(v) else verdict_cell(None)
            elif c == flag_column:
                text = verdict_cell(v)
            else:
                text = html.escape(str(v))
            style = ' class="fail"' if c == flag_column and v == "EXCEEDS" else ""
            cells.append(f"<td{style}>{text}</td>")
        body.append("<tr>" + "".join(cells) + "</tr>")
    return f"<table><tr>{head}</tr>{''.join(body)}</table>"


def _page(title: str, parts: list[str]) -> str:
    style = ("body{font-family:sans-serif;margin:2em}table{border-collapse:collapse;"
             "font-size:0.85em}td,th{border:1px solid #bbb;padding:2px 6px}"
             ".fail{background:#f6c6c6;font-weight:bold}.caution{border:2px solid #c60;"
             "padding:0.5em}")
    return (f"<!doctype html><html><head><meta charset='utf-8'><title>{html.escape(title)}"
            f"</title><style>{style}</style></head><body><h1>{html.escape(title)}</h1>"
            + "".join(parts) + "</body></html>")


def cautions(invented: bool) -> list[str]:
    out = [CAUTION, LOAD_MODEL_CAUTION]
    if invented:
        out.insert(0, "The traffic is INVENTED (trundle's seeded generator), not measured: "
                      "the numbers demonstrate the workflow and say nothing about any real "
                      "bridge.")
    return out


def fleet_html(result: Any, table: pa.Table, images: list[tuple[str, str]],
               provenance: str = "") -> str:
    spec = result.spec
    traffic = spec.traffic
    parts = ["<div class='caution'>" + "<br>".join(html.escape(c) for c in
                                                  cautions(traffic.invented)) + "</div>"]
    parts.append(
        f"<p>Traffic: {traffic.n_trucks} trucks from {html.escape(traffic.source)}; "
        f"{len(traffic.skipped)} bad rows skipped. Bridges: {len(spec.bridges)}. Design model: "
        f"{html.escape(spec.design.text) if spec.design else '(none)'}. Engine: "
        f"{html.escape(result.engine)}; {len(result.partitions)} partitions "
        f"({result.written} written, {result.skipped} already there).</p>")
    if provenance:
        parts.append(f"<p>Inputs: {html.escape(provenance.lstrip('# '))}</p>")
    parts.append(f"<p>{html.escape(STATISTICS_NOTE)}</p>")
    if spec.fatigue:
        parts.append(f"<p>{html.escape(FATIGUE_NOTE)} m = {spec.fatigue_slope:g}.</p>")
    parts.append(_html_table(table))
    for name, caption in images:
        parts.append(f"<figure><img src='{html.escape(name)}'><figcaption>"
                     f"{html.escape(caption)}</figcaption></figure>")
    return _page("Traffic over the bridge inventory", parts)


# --- permit ------------------------------------------------------------------------------------


def permit_table(result: Any) -> pa.Table:
    rows = result.rows
    return pa.table({
        "bridge": [r.bridge for r in rows], "effect": [r.effect for r in rows],
        "unit": [_unit(r.quantity, r.units) for r in rows],
        "vehicle": [r.vehicle for r in rows], "permit_max": [r.permit_max for r in rows],
        "permit_min": [r.permit_min for r in rows], "design_max": [r.design_max for r in rows],
        "design_min": [r.design_min for r in rows], "side": [r.side for r in rows],
        "ratio": [r.ratio for r in rows], "limit": [result.spec.limit] * len(rows),
        "verdict": [r.verdict for r in rows],
        "x_front_axle": [r.x_front_axle for r in rows],
        "direction": [r.direction for r in rows]})


def permit_files(result: Any, provenance: str = "") -> dict[str, bytes | str]:
    """permit.csv (``provenance`` its first line), permit.parquet and report.html."""
    table = permit_table(result)
    spec = result.spec
    parts = ["<div class='caution'>" + "<br>".join(html.escape(c) for c in cautions(False))
             + "</div>",
             f"<p>Inputs: {html.escape(provenance.lstrip('# '))}</p>" if provenance else "",
             f"<p>Permit vehicle(s): {html.escape(', '.join(spec.vehicles))}, dynamic "
             f"allowance {100 * spec.impact:g} %; design model {html.escape(spec.design.text)};"
             f" limit {spec.limit:g}. {result.exceeds} of {len(result.rows)} checks EXCEED "
             f"the limit.</p>", _html_table(table, "verdict")]
    return {"permit.csv": _csv(table, provenance), "permit.parquet": _parquet(table),
            "report.html": _page("Permit check over the route", parts)}

