"""The fleet and permit outputs: tables (CSV, Parquet), figures and a report page.

Presents results the workflows computed; runs no analysis and reads no input file. Every
output carries the cautions, says when the traffic is invented, and shows a permit ratio
above its limit as EXCEEDS.
"""

from __future__ import annotations

import math
import re
import textwrap
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import pyarrow as pa
import pyarrow.parquet as pq
from jinja2 import Environment, PackageLoader, StrictUndefined, select_autoescape
from markupsafe import Markup

from trundle._version import __version__
from trundle.io.project import ProjectInfo
from trundle.report import CAUTION, LOAD_MODEL_CAUTION
from trundle.report.envelope_data import TableData
from trundle.report.export import csv_text
from trundle.report.figures import figure_bytes, figure_style, new_figure, wrapped
from trundle.report.format import (
    NO_VALUE,
    decimals,
    fixed,
    number,
    position_decimals,
    verdict_cell,
)
from trundle.report.package import css_string, inline_svg
from trundle.report.safe_text import clean_text, figure_text

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


@dataclass(frozen=True)
class InputFile:
    """An input of the run as the traceability block shows it: what it is, the path as the
    user gave it, and the SHA-256 of its bytes ("" for a folder or a library name)."""

    label: str
    path: str
    sha256: str = ""


# Widths of the figures [inches]: the page's text width (A4 portrait less the margins,
# 184 mm ≈ 7.2 in); the report scales them to the column, so the width only sets the text size.
FIGURE_WIDTH = 7.2


def fleet_files(result: Any, figure_format: str = "png", figures: bool = True,
                provenance: str = "", inputs: Sequence[InputFile] = (),
                project: ProjectInfo | None = None) -> dict[str, bytes | str]:
    """Every output file of a fleet run, by name (written by the caller through the output
    set writer). ``provenance``: the comment line every CSV starts with (input files and
    their SHA-256, made by the caller; this layer reads no file). The figures are written
    as files in ``figure_format`` and drawn inline (SVG) in report.html, which stands alone."""
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
    drawn: list[tuple[str, Any, str]] = []  # (file name, figure, caption)
    if figures:
        if result.spec.design is not None:
            drawn.append((f"ratio_across_inventory.{figure_format}", ratio_figure(
                result.summaries), "Largest ratio of the recorded extreme to the design "
                                   "model's, each effect of each bridge (1.0: the design value)."))
        for k, s in enumerate(governing_effects(result.summaries)[:MAX_BRIDGE_FIGURES]):
            stem = f"bridge{k + 1:03d}"
            unit = _people_unit(s.quantity, _bridge_units(result, s.bridge))
            what = f"{s.bridge}: {effect_words(s.effect, _bridge_units(result, s.bridge))}"
            if s.block_maxima.size:
                drawn.append((f"{stem}_histogram.{figure_format}", histogram_figure(s, unit, what),
                              f"{what} [{unit}]: per-truck values (left, log scale) and the "
                              "block maxima with the fitted density (right)."))
            if s.fit is not None:
                drawn.append((f"{stem}_return_level.{figure_format}",
                              return_level_figure(s, result.spec, unit, what),
                              f"{what} [{unit}]: return level against the return period, "
                              "with the block maxima at their plotting positions and the "
                              "bootstrap interval of the chosen period."))
    for name, figure, _ in drawn:
        files[name] = figure_bytes(figure, figure_format)
    svgs = [(figure_bytes(figure, "svg"), caption) for _, figure, caption in drawn]
    files["report.html"] = fleet_html(result, svgs, provenance, inputs, project)
    return files


def _bridge_units(result: Any, bridge: str) -> Any:
    return next(b.units for b in result.spec.bridges if b.name == bridge)


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


# --- figures -----------------------------------------------------------------------------------
# trundle's figure style turns matplotlib's maths parser off (text from files is shown as
# written), so a log axis must not use matplotlib's default labels ("$\mathdefault{10^{2}}$"
# would print as those characters): the decades are labelled as plain numbers instead.


def _plain_log_axis(axis: Any) -> None:
    from matplotlib.ticker import FuncFormatter, LogLocator, NullFormatter

    axis.set_major_locator(LogLocator(base=10.0))
    axis.set_major_formatter(FuncFormatter(lambda v, _: _decade(v)))
    axis.set_minor_formatter(NullFormatter())


def _decade(value: float) -> str:
    """A power of ten as a plain number: 0.01, 0.1, 1, 10, 100, 1 000, 10 000 (10⁵ above)."""
    if not (value > 0.0 and math.isfinite(value)):
        return ""
    exponent = round(math.log10(value))
    if exponent < -3 or exponent > 4:
        superscript = str(exponent).translate(str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹"))
        return f"10{superscript}"
    text = f"{10.0 ** exponent:.{max(0, -exponent)}f}"
    return f"{int(text):,}".replace(",", " ") if exponent >= 4 else text


def histogram_figure(s: Any, unit: str = "", title: str = "") -> Any:
    """Histogram of the per-truck values, and of the block maxima with the fitted density
    (``title``: default the bridge and the effect)."""
    with figure_style():
        return _histogram_figure(s, unit, title or f"{s.bridge}: {s.effect}")


def return_level_figure(s: Any, spec: Any, unit: str = "", title: str = "") -> Any:
    """Return level against return period (fit), block maxima at their plotting positions
    (Gringorten), and the chosen period with its bootstrap interval."""
    with figure_style():
        return _return_level_figure(s, spec, unit, title or f"{s.bridge}: {s.effect}")


def ratio_figure(summaries: Sequence[Any]) -> Any:
    """Largest traffic / design ratio of each effect, bridge by bridge."""
    with figure_style():
        return _ratio_figure(summaries)


def _title(ax: Any, text: str, width: float) -> None:
    ax.set_title(wrapped(figure_text(text, parse_math=False), width, 9.5), loc="left")


def _histogram_figure(s: Any, unit: str, title: str) -> Any:
    """Histogram of the per-truck values, and of the block maxima with the fitted density."""
    figure = new_figure(FIGURE_WIDTH, 3.0)
    left, right = figure.subplots(1, 2)
    counts, edges = s.histogram
    of = " (−min)" if "−min" in s.fit_note else ""
    left.stairs(counts, edges, fill=True, alpha=0.6)
    left.set_xlabel(f"per truck{of} [{unit}]" if unit else f"per truck{of}")
    left.set_ylabel("trucks")
    left.set_yscale("log")
    _plain_log_axis(left.yaxis)
    right.hist(s.block_maxima, bins=min(30, max(5, s.block_maxima.size // 3)), density=True,
               alpha=0.6, label="block maxima")
    if s.fit is not None:
        x = np.linspace(s.block_maxima.min(), s.block_maxima.max() * 1.1, 200)
        right.plot(x, s.fit.distribution().pdf(x), label=f"fitted {s.fit.kind}")
    block = f"maximum per {s.fit.block_days:g} d" if s.fit else "block maximum"
    right.set_xlabel(f"{block}{of} [{unit}]" if unit else f"{block}{of}")
    right.set_ylabel("density")
    right.legend()
    figure.suptitle(wrapped(figure_text(title, parse_math=False),
                            FIGURE_WIDTH, 9.5), x=0.01, ha="left", fontsize=9.5)
    return figure


def _return_level_figure(s: Any, spec: Any, unit: str, title: str) -> Any:
    """Return level against return period (fit), block maxima at their plotting positions
    (Gringorten), and the chosen period with its bootstrap interval."""
    figure = new_figure(FIGURE_WIDTH, 3.2)
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
    _plain_log_axis(ax.xaxis)
    ax.set_xlabel("return period [years]")
    of = " (−min)" if "−min" in s.fit_note else ""
    ax.set_ylabel(f"level{of} [{unit}]" if unit else f"level{of}")
    ax.legend(loc="lower right")
    _title(ax, title, FIGURE_WIDTH)
    return figure


def _ratio_figure(summaries: Sequence[Any]) -> Any:
    """Largest traffic / design ratio of each effect, bridge by bridge (every bridge on the
    axis, its name wrapped under it or, with many bridges, turned)."""
    bridges = list(dict.fromkeys(s.bridge for s in summaries))
    many = len(bridges) > 6
    figure = new_figure(FIGURE_WIDTH, 3.4 if not many else 4.2)
    ax = figure.subplots()
    for i, bridge in enumerate(bridges):
        values = [np.nanmax([s.ratio_max, s.ratio_min]) for s in summaries
                  if s.bridge == bridge and not (np.isnan(s.ratio_max) and np.isnan(s.ratio_min))]
        ax.plot(np.full(len(values), i), values, "o", ms=4, color="#1f4e79")
    ax.axhline(1.0, color="0.3", lw=0.8)
    ax.set_xlim(-0.6, len(bridges) - 0.4)
    # characters of a name per line: the axis width shared out, at the tick font (7.5 pt)
    per_name = max(8, int(0.8 * FIGURE_WIDTH * 72.0 / (0.62 * 7.5) / len(bridges)) - 2)
    names = [figure_text(b, parse_math=False) for b in bridges]
    if many:
        ax.set_xticks(range(len(bridges)), [textwrap.shorten(b, 40, placeholder="…")
                                             for b in names], rotation=40, ha="right")
    else:
        ax.set_xticks(range(len(bridges)), ["\n".join(textwrap.wrap(b, per_name)) for b in names])
    ax.set_ylabel("recorded / design")
    ax.set_ylim(bottom=0.0, top=max(1.1, ax.get_ylim()[1]))
    _title(ax, "Ratio of the recorded extremes to the design model", FIGURE_WIDTH)
    return figure


# --- words and tables for people -----------------------------------------------------------

_AT_POSITION = re.compile(r"\bat (-?\d+(?:\.\d*)?)$")
DIRECTION_WORDS = {1: "left to right", -1: "right to left"}
DIRECTION_NOTE = ("Travel: \"left to right\" is towards +x (x from the left end of the bridge), "
                  "\"right to left\" towards −x.")


def effect_words(effect: str, units: Any) -> str:
    """An effect's label with the length unit of its position: "moment at 16" → "moment at
    16 m" (a support's reaction, "reaction 1", has no position)."""
    return _AT_POSITION.sub(lambda m: f"at {m.group(1)} {units.label('length')}", effect)


def direction_words(direction: int) -> str:
    """A direction of travel for people ("—" for none: the empty beam governs)."""
    return DIRECTION_WORDS.get(int(direction), NO_VALUE)


def _people_unit(quantity: str, units: Any) -> str:
    return units.label(quantity) if quantity in ("moment", "force") else ""


def _column(values: Sequence[float]) -> list[str]:
    """A column of effect values for people: the one policy's decimals for the column."""
    places = decimals(values)
    return [fixed(v, places) if v is not None and math.isfinite(v) else NO_VALUE
            for v in values]


def _positions(values: Sequence[float]) -> list[str]:
    places = position_decimals(values)
    return [fixed(v, places) if v is not None and math.isfinite(v) else NO_VALUE
            for v in values]


def _ratios(values: Sequence[float]) -> list[str]:
    return [fixed(v, 3) if v is not None and math.isfinite(v) else NO_VALUE for v in values]


def _same(values: Sequence[str]) -> str | None:
    distinct = set(values)
    return next(iter(distinct)) if len(distinct) == 1 else None


def by_bridge(items: Sequence[Any]) -> dict[str, list[Any]]:
    out: dict[str, list[Any]] = {}
    for item in items:
        out.setdefault(item.bridge, []).append(item)
    return out


def fleet_report_tables(result: Any) -> list[TableData]:
    """Per bridge: the recorded extremes, and the design ratios with the return levels (the
    numbers of fleet_summary.csv, written by the one format policy)."""
    spec = result.spec
    period = f"{spec.return_period_years:g}-year"
    tables = []
    for bridge, mine in by_bridge(result.summaries).items():
        units = _bridge_units(result, bridge)
        L = units.label("length")
        effects = [effect_words(s.effect, units) for s in mine]
        unit = [_people_unit(s.quantity, units) for s in mine]
        tables.append(TableData(
            f"{bridge}: extremes of the recorded trucks ({mine[0].n_trucks} trucks)",
            ("effect", "unit", "max", "truck at max", f"front axle at max [{L}]",
             "travel at max", "min", "truck at min"),
            tuple(zip(effects, unit, _column([s.maximum for s in mine]),
                      [s.truck_at_max for s in mine], _positions([s.x_at_max for s in mine]),
                      [direction_words(s.direction_at_max) for s in mine],
                      _column([s.minimum for s in mine]), [s.truck_at_min for s in mine],
                      strict=True)),
            (False, False, True, False, True, False, True, False)))
        signs = [-1.0 if s.fit_note.startswith("statistics of −min") else 1.0 for s in mine]
        levels = [sign * s.return_level.value if s.return_level else math.nan
                  for sign, s in zip(signs, mine, strict=True)]
        lows = [min(sign * s.return_level.low, sign * s.return_level.high)
                if s.return_level else math.nan for sign, s in zip(signs, mine, strict=True)]
        highs = [max(sign * s.return_level.low, sign * s.return_level.high)
                 if s.return_level else math.nan for sign, s in zip(signs, mine, strict=True)]
        level_places = decimals([*levels, *lows, *highs])
        interval = [f"{fixed(a, level_places)} … {fixed(b, level_places)}"
                    if math.isfinite(a) else NO_VALUE for a, b in zip(lows, highs, strict=True)]
        design = spec.design is not None
        columns = ["effect", "unit"]
        cells: list[list[str]] = [effects, unit]
        numeric = [False, False]
        if design:
            columns += ["design max", "design min", "ratio max", "ratio min"]
            design_places = decimals([*(s.design_max for s in mine),
                                      *(s.design_min for s in mine)])
            cells += [[fixed(s.design_max, design_places) if math.isfinite(s.design_max)
                       else NO_VALUE for s in mine],
                      [fixed(s.design_min, design_places) if math.isfinite(s.design_min)
                       else NO_VALUE for s in mine],
                      _ratios([s.ratio_max for s in mine]), _ratios([s.ratio_min for s in mine])]
            numeric += [True] * 4
        columns += [f"{period} level", "interval"]
        cells += [[fixed(v, level_places) if math.isfinite(v) else NO_VALUE for v in levels],
                  interval]
        numeric += [True, True]
        if spec.fatigue:
            columns.append("damage-equivalent range")
            cells.append(_column([s.equivalent_range for s in mine]))
            numeric.append(True)
        notes = [s.fit_note for s in mine if s.fit_note
                 and not s.fit_note.startswith("statistics of −min")]
        blocks = _same([f"{s.block_maxima.size} block maxima"
                        + (f" of {s.fit.block_days:g} d, {s.fit.kind} fit" if s.fit else "")
                        for s in mine])
        title = (f"{bridge}: " + ("against the design model; " if design else "")
                 + f"{period} return level" + (f" ({blocks})" if blocks else ""))
        note = "A negative level is of the minimum (its statistics are of −min)." \
            if any(sign < 0 for sign in signs) else ""
        if notes:
            note = (note + " " if note else "") + "; ".join(
                f"{effect_words(s.effect, units)}: {s.fit_note}" for s in mine
                if s.fit_note and not s.fit_note.startswith("statistics of −min"))
        tables.append(TableData(title, tuple(columns), tuple(zip(*cells, strict=True)),
                                tuple(numeric), note))
    return tables


def _project_rows(project: ProjectInfo | None, version: str, date: str
                  ) -> list[list[tuple[str, str]]]:
    """The project block two fields a row; fields not given stay blank, to be filled in by
    hand on the printed page."""
    items = [*(project or ProjectInfo()).items(), ("calculation", f"trundle {version}, {date}")]
    return [items[i:i + 2] for i in range(0, len(items), 2)]


def _when(provenance: str) -> str:
    found = re.search(r"computed (\S+)\s*$", provenance)
    return found.group(1) if found else ""


def records_html(*, kicker: str, title: str, meta: list[tuple[str, str, bool]],
                 cautions_shown: Sequence[str], sections: list[dict[str, Any]],
                 inputs: Sequence[InputFile], date: str,
                 project: ProjectInfo | None = None) -> str:
    """A fleet or permit report page (template records.html.j2) as one HTML document."""
    environment = Environment(loader=PackageLoader("trundle.report", "templates"),
                              autoescape=select_autoescape(["html", "j2"]),
                              undefined=StrictUndefined, keep_trailing_newline=True)
    job = (project or ProjectInfo()).job_number
    context = {
        "kicker": kicker, "title": title, "version": __version__, "date": date,
        "project_rows": _project_rows(project, __version__, date),
        "page_title": css_string(" · ".join(p for p in (job, title) if p)[:120]),
        "meta": meta, "cautions": list(cautions_shown), "sections": sections,
        "inputs": [(i.label, i.path, i.sha256) for i in inputs],
        "markup_break": Markup("<br>"),
    }
    # names from the inventory and the traffic: no control or direction-override character
    return clean_text(environment.get_template("records.html.j2").render(**context),
                      keep_newlines=True)


def cautions(invented: bool) -> list[str]:
    out = [CAUTION, LOAD_MODEL_CAUTION]
    if invented:
        out.insert(0, "The traffic is INVENTED (trundle's seeded generator), not measured: "
                      "the numbers demonstrate the workflow and say nothing about any real "
                      "bridge.")
    return out


def fleet_html(result: Any, svgs: Sequence[tuple[bytes, str]] = (), provenance: str = "",
               inputs: Sequence[InputFile] = (), project: ProjectInfo | None = None) -> str:
    """The fleet report: the run, the extremes and return levels per bridge, the figures
    (``svgs``: SVG documents with their captions, drawn inline), the cautions."""
    spec = result.spec
    traffic = spec.traffic
    meta = [("traffic", f"{traffic.n_trucks} trucks from {traffic.source}; "
                        f"{len(traffic.skipped)} bad rows skipped", False),
            ("bridges", str(len(spec.bridges)), False),
            ("design model", spec.design.text if spec.design else "(none)", False),
            ("statistics", f"maxima per {spec.block}, {spec.fit} fit, "
                           f"{spec.return_period_years:g}-year return level", False),
            ("engine", f"{result.engine}; {len(result.partitions)} partitions "
                       f"({result.written} written, {result.skipped} already there)", False)]
    leads = [STATISTICS_NOTE, DIRECTION_NOTE]
    if spec.fatigue:
        leads.append(f"{FATIGUE_NOTE} m = {spec.fatigue_slope:g}.")
    figures = [{"svg": inline_svg(svg, f"f{k + 1}-"), "caption": caption}
               for k, (svg, caption) in enumerate(svgs)]
    sections = [{"title": "Extremes, design ratios and return levels", "leads": leads,
                 "tables": fleet_report_tables(result), "figures": [], "notes": []}]
    if figures:
        shown = min(MAX_BRIDGE_FIGURES, len(spec.bridges))
        sections.append({"title": "Figures", "leads": [
            f"Per bridge (the first {shown}), the effect with the largest ratio to the design "
            "model (without one: the first effect with a fit); every effect is in the tables "
            "and in fleet_summary.csv."], "tables": [], "figures": figures, "notes": []})
    return records_html(kicker="Recorded traffic over a bridge inventory",
                        title="Traffic over the bridge inventory", meta=meta,
                        cautions_shown=cautions(traffic.invented), sections=sections,
                        inputs=inputs, date=_when(provenance), project=project)


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


def permit_governing(row: Any) -> tuple[float, float]:
    """(permit, design) on the side the check is made (the row's ``side``)."""
    if row.side == "max":
        return row.permit_max, row.design_max
    return row.permit_min, row.design_min


def permit_report_tables(result: Any) -> list[TableData]:
    """Per bridge: each effect's governing side, the permit's and the design model's value
    there, the ratio, the verdict, and where the permit's front axle stands (permit.csv's
    numbers, written by the one format policy)."""
    several = len(result.spec.vehicles) > 1
    tables = []
    for bridge, mine in by_bridge(result.rows).items():
        units = mine[0].units
        L = units.label("length")
        governing = [permit_governing(r) for r in mine]
        places = decimals([v for pair in governing for v in pair])
        columns = ["effect", "unit", *(("vehicle",) if several else ()), "side", "permit",
                   "design", "ratio", "verdict", f"front axle at [{L}]", "travel"]
        rows = tuple(
            (effect_words(r.effect, units), _people_unit(r.quantity, units),
             *((r.vehicle,) if several else ()), r.side,
             fixed(p, places) if math.isfinite(p) else NO_VALUE,
             fixed(d, places) if math.isfinite(d) else NO_VALUE,
             ratio, verdict_cell(r.verdict), x, direction_words(r.direction))
            for r, (p, d), ratio, x in zip(mine, governing, _ratios([r.ratio for r in mine]),
                                           _positions([r.x_front_axle for r in mine]),
                                           strict=True))
        numeric = (False, False, *((False,) if several else ()), False, True, True, True,
                   False, True, False)
        exceeds = sum(1 for r in mine if r.verdict == "EXCEEDS")
        tables.append(TableData(f"{bridge}: {exceeds} of {len(mine)} checks EXCEED"
                                if exceeds else f"{bridge}: all {len(mine)} checks PASS",
                                tuple(columns), rows, numeric))
    return tables


def permit_files(result: Any, provenance: str = "", inputs: Sequence[InputFile] = (),
                 project: ProjectInfo | None = None) -> dict[str, bytes | str]:
    """permit.csv (``provenance`` its first line), permit.parquet and report.html."""
    table = permit_table(result)
    return {"permit.csv": _csv(table, provenance), "permit.parquet": _parquet(table),
            "report.html": permit_html(result, provenance, inputs, project)}


def permit_html(result: Any, provenance: str = "", inputs: Sequence[InputFile] = (),
                project: ProjectInfo | None = None) -> str:
    spec = result.spec
    verdict = (f"{result.exceeds} of {len(result.rows)} checks EXCEED the limit."
               if result.exceeds else f"All {len(result.rows)} checks PASS (within the limit).")
    meta = [("permit vehicle" + ("s" if len(spec.vehicles) > 1 else ""),
             ", ".join(spec.vehicles), False),
            ("dynamic allowance", f"{100 * spec.impact:g} % on the permit's axles", False),
            ("design model", spec.design.text, False),
            ("limit", f"ratio permit / design at most {spec.limit:g}", False),
            ("bridges", str(len(spec.bridges)), False), ("result", verdict, False)]
    leads = [verdict,
             "Each effect is checked on the side (max or min) where the design model's effect "
             "is larger; \"permit\" and \"design\" are the two extremes on that side (the permit's "
             "with its dynamic allowance), \"ratio\" is permit / design, EXCEEDS above the limit. "
             "The front axle's position and travel are those of the permit's extreme. "
             + DIRECTION_NOTE + " Both sides of every effect are in permit.csv."]
    sections = [{"title": "Permit against the design model", "leads": leads,
                 "tables": permit_report_tables(result), "figures": [], "notes": []}]
    return records_html(kicker="Permit check over a route", title="Permit check over the route",
                        meta=meta, cautions_shown=cautions(False), sections=sections,
                        inputs=inputs, date=_when(provenance), project=project)
