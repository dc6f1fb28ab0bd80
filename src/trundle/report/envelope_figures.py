"""Envelope figures: moment, shear and deflection envelopes over the beam, and reactions.

Each envelope figure is one panel above the beam drawing of :func:`plot_beam` (same support
symbols as the influence-line figures). Max and min are drawn as lines through the values at
the model's sections (marked), each with a light band to zero; the values are those of the
tables. Per span the largest and smallest values are labelled; for the moment the worst
section found between the sections ("anywhere") is marked with a diamond, hollow where it is
certified, filled and labelled "*" where a sampled search found it (it may read low), as the
tables mark it. Labels write a value exactly as its table cell (same decimals).
"""

from __future__ import annotations

import numpy as np
from matplotlib.axes import Axes
from matplotlib.figure import Figure

from trundle.report import CAUTION
from trundle.report.envelope_data import (
    EnvelopeResults,
    quantity_unit,
    span_summaries,
)
from trundle.report.envelope_tables import max_min_arrays, table_decimals
from trundle.report.figures import (
    INK,
    MUTED,
    PALETTE,
    RULE,
    SIGN_CONVENTION,
    figure_style,
    new_figure,
    plot_beam,
    wrapped,
)
from trundle.report.format import NOT_CERTIFIED_WORDS, marked
from trundle.report.format import fixed as _fixed
from trundle.report.safe_text import figure_text

MAX_COLOR = PALETTE[0]
MIN_COLOR = PALETTE[1]
_TITLES = {"moment": "bending moment envelope", "shear": "shear envelope",
           "deflection": "deflection envelope"}


def _series(results: EnvelopeResults, kind: str
            ) -> tuple[np.ndarray, np.ndarray, np.ndarray, list[str]]:
    """x, max, min along the beam, and which limit each point is ("left", "right", "");
    shear has both one-sided values where they differ."""
    x = results.sections
    if kind != "shear":
        top, bottom = max_min_arrays(results, kind)
        return x, top, bottom, [""] * len(x)
    left_top, left_bottom = max_min_arrays(results, "shear_left")
    right_top, right_bottom = max_min_arrays(results, "shear_right")
    xs, tops, bottoms, limits = [], [], [], []
    length = results.beam.length
    tolerance = 1e-9 * length
    scale = max(np.abs(left_top).max(), np.abs(left_bottom).max(), 1e-300)
    for i, xi in enumerate(x):
        jumps = (abs(left_top[i] - right_top[i]) > 1e-9 * scale
                 or abs(left_bottom[i] - right_bottom[i]) > 1e-9 * scale)
        at_start, at_end = xi <= tolerance, xi >= length - tolerance
        if at_end or (jumps and not at_start):  # the value just left of the section
            xs.append(xi)
            tops.append(left_top[i])
            bottoms.append(left_bottom[i])
            limits.append("left" if jumps else "")
        if not at_end:  # the value just right of it (the same where nothing jumps)
            xs.append(xi)
            tops.append(right_top[i])
            bottoms.append(right_bottom[i])
            limits.append("right" if jumps else "")
    return np.asarray(xs), np.asarray(tops), np.asarray(bottoms), limits


def plot_envelope(results: EnvelopeResults, kind: str, ax: Axes | None = None) -> Axes:
    """Max and min of ``kind`` ("moment", "shear" or "deflection") along the beam."""
    units, beam = results.units, results.beam
    family = "shear_left" if kind == "shear" else kind
    unit = quantity_unit(family, units)
    with figure_style():
        if ax is None:
            ax = new_figure(7.5, 2.6).add_subplot()
        x, top, bottom, limits = _series(results, kind)
        ax.axhline(0.0, color=MUTED, lw=0.8, zorder=1)
        for support_x in beam.support_positions:
            ax.axvline(support_x, color=RULE, lw=0.8, zorder=0)
        ax.fill_between(x, top, 0.0, color=MAX_COLOR, alpha=0.12, lw=0, zorder=2)
        ax.fill_between(x, bottom, 0.0, color=MIN_COLOR, alpha=0.12, lw=0, zorder=2)
        ax.plot(x, top, color=MAX_COLOR, lw=1.5, marker="o", ms=2.4, zorder=3, label="max")
        # max solid with dots, min dashed with squares: told apart in black and white too
        ax.plot(x, bottom, color=MIN_COLOR, lw=1.5, ls=(0, (4, 1.5)), marker="s", ms=2.2,
                zorder=3, label="min")
        anywhere = _mark_anywhere(ax, results) if kind == "moment" else {}
        _label_extremes(ax, results, x, top, bottom, limits, anywhere,
                        table_decimals(results, kind))
        ax.set_ylabel(f"{kind} ({SIGN_CONVENTION[kind]})\n[{unit}]")
        ax.set_xlim(-0.03 * beam.length, 1.03 * beam.length)
        ax.margins(y=0.28)
        ax.legend(loc="lower left", bbox_to_anchor=(0.0, 1.0), ncols=3, handlelength=1.6,
                  borderaxespad=0.2)
    return ax


def _label_extremes(ax: Axes, results: EnvelopeResults, x: np.ndarray, top: np.ndarray,
                    bottom: np.ndarray, limits: list[str],
                    anywhere: dict[tuple[int, str], tuple[float, float, bool]],
                    places: int) -> None:
    """Per span: the largest max and the smallest min, each labelled once with ``places``
    decimals (those of its table); a worst section between the sections
    (``anywhere[(span, which)] = (x, value, certified)``) replaces the section's, marked "*"
    where it is not certified."""
    ends = results.beam.support_positions
    tolerance = 1e-9 * results.beam.length
    scale = max(np.abs(top).max(), np.abs(bottom).max(), 1e-300)
    limit = np.asarray(limits)
    done: set[tuple[float, str]] = set()
    for span, (a, b) in enumerate(zip(ends[:-1], ends[1:], strict=True)):
        # inside the span: right of its left support, left of its right support
        inside = np.array([i for i in results.beam.sections_in_span(x, span)
                           if not ((abs(x[i] - a) <= tolerance and limit[i] == "left")
                                   or (abs(x[i] - b) <= tolerance and limit[i] == "right"))],
                          dtype=np.int64)
        if inside.size == 0:
            continue
        for values, color, sign, which in ((top, MAX_COLOR, 1.0, "max"),
                                           (bottom, MIN_COLOR, -1.0, "min")):
            i = inside[np.argmax(sign * values[inside])]
            where, value, certified = float(x[i]), float(values[i]), True
            if (span, which) in anywhere:
                where, value, certified = anywhere[(span, which)]
            if sign * value <= 1e-6 * scale:
                continue
            key = (round(where, 9), which)
            if key in done:
                continue
            done.add(key)
            _annotate(ax, where, value, marked(_fixed(value, places), certified), color,
                      above=sign > 0, length=results.beam.length)


def _annotate(ax: Axes, x: float, y: float, text: str, color: str, above: bool,
              length: float) -> None:
    ha = "left" if x < 0.08 * length else "right" if x > 0.92 * length else "center"
    ax.annotate(text, (x, y), xytext=(0, 6 if above else -6), textcoords="offset points",
                ha=ha, va="bottom" if above else "top", fontsize=7, color=color,
                bbox={"boxstyle": "round,pad=0.12", "fc": "white", "ec": "none",
                      "alpha": 0.85}, zorder=6)


def _mark_anywhere(ax: Axes, results: EnvelopeResults
                   ) -> dict[tuple[int, str], tuple[float, float, bool]]:
    """Diamonds at the worst sections found between the sections (absolute extremes per
    span) where they are worse than every section; returns them by (span, which) as
    (x, value, certified)."""
    found: dict[tuple[int, str], tuple[float, float, bool]] = {}
    for s in span_summaries(results):
        for which, e, at_sections in (("max", s.absolute_max, s.moment_max),
                                      ("min", s.absolute_min, s.moment_min)):
            sign = 1.0 if which == "max" else -1.0
            if e is None or not e.governed or sign * e.value <= sign * at_sections.value:
                continue
            if np.min(np.abs(results.sections - e.x)) <= 1e-9 * results.beam.length:
                continue
            found[(s.span, which)] = (e.x, e.value, e.certified)
    mark_anywhere(ax, list(found.values()))
    return found


def mark_anywhere(ax: Axes, points: list[tuple[float, float, bool]]) -> None:
    """The diamonds of worst sections between the sections, (x, value, certified) each:
    hollow where certified, filled where not, the legend saying what the "*" means."""
    for certified, label, face in ((True, "worst section between the sections", "white"),
                                   (False, "worst between the sections, " + NOT_CERTIFIED_WORDS,
                                    INK)):
        chosen = [(x, y) for x, y, c in points if c is certified]
        if chosen:
            xs, ys = zip(*chosen, strict=True)
            ax.plot(xs, ys, ls="none", marker="D", ms=4.0, mfc=face, mec=INK, mew=0.9,
                    zorder=5, label=label)


def envelope_figure(results: EnvelopeResults, kind: str) -> Figure:
    """The envelope of ``kind`` above the beam drawing, with title and footer."""
    beam, units = results.beam, results.units
    with figure_style():
        figure = new_figure(7.5, 0.9 + 2.6 + 1.25 + 0.2)
        grid = figure.add_gridspec(2, 1, height_ratios=[2.6, 1.25])
        beam_ax = figure.add_subplot(grid[1])
        ax = figure.add_subplot(grid[0], sharex=beam_ax)
        plot_envelope(results, kind, ax=ax)
        plot_beam(beam, units, ax=beam_ax, sections=list(results.sections))
        included = INCLUDED_IN_DEFLECTION if kind == "deflection" else INCLUDED
        figure.suptitle(_title(results, _TITLES[kind], included), fontsize=9.5, color=INK)
        figure.supxlabel(_footer(results), fontsize=6, color=MUTED)
    return figure


def reactions_figure(results: EnvelopeResults) -> Figure:
    """Max and min reaction of every support as bars, values printed on them."""
    beam, units = results.beam, results.units
    unit = quantity_unit("reaction", units)
    top, bottom = max_min_arrays(results, "reaction")
    supports = [k for k in range(len(beam.supports)) if np.isfinite(top[k])]
    places = table_decimals(results, "reaction")  # labels read as the table's cells
    with figure_style():
        figure = new_figure(7.5, 3.2)
        ax = figure.add_subplot()
        positions = np.arange(len(supports))
        width = 0.36
        bars_top = ax.bar(positions - width / 2, top[supports], width, color=MAX_COLOR,
                          label="max", zorder=3)
        bars_bottom = ax.bar(positions + width / 2, bottom[supports], width, color="white",
                             edgecolor=MIN_COLOR, hatch="////", lw=0.8, label="min", zorder=3)
        for bars in (bars_top, bars_bottom):
            ax.bar_label(bars, labels=[_fixed(b.get_height(), places) for b in bars],
                         fontsize=7, padding=2, color=INK)
        ax.axhline(0.0, color=MUTED, lw=0.8, zorder=2)
        ax.set_xticks(positions, [_support_tick(results, k) for k in supports])
        ax.set_ylabel(f"reaction ({SIGN_CONVENTION['reaction']})\n[{unit}]")
        ax.grid(axis="x", visible=False)
        ax.margins(y=0.2)
        ax.legend(loc="lower left", bbox_to_anchor=(0.0, 1.0), ncols=2, handlelength=1.6,
                  borderaxespad=0.2)
        figure.suptitle(_title(results, "support reactions, max and min"), fontsize=9.5,
                        color=INK)
        figure.supxlabel(_footer(results), fontsize=6, color=MUTED)
    return figure


def _support_tick(results: EnvelopeResults, k: int) -> str:
    x = results.beam.support_positions[k]
    return f"support {k}\nx = {round(float(x), 9) + 0.0:.6g} {results.units.label('length')}"


INCLUDED = "(with dynamic allowance and factors)"
# deflections are at service level: every load's load factor (service multiplier) left out,
# as the deflection table says
INCLUDED_IN_DEFLECTION = "(with dynamic allowance and factors, without load factors: service level)"


def _title(results: EnvelopeResults, what: str, included: str = INCLUDED) -> str:
    names = ", ".join(entry.name for entry in results.loads)
    if len(names) > 70:
        names = f"{len(results.loads)} loads"
    return wrapped(figure_text(f"{results.model.title}\n{what}: {names} {included}",
                               parse_math=False))


def _footer(results: EnvelopeResults) -> str:
    trace = " · ".join((f"trundle {results.version}", results.model_file,
                        f"SHA-256 {results.sha256[:16]}…", results.date))
    return figure_text(f"{trace}\n{CAUTION}", limit=400, parse_math=False)


def envelope_figures(results: EnvelopeResults) -> dict[str, Figure]:
    """Every figure of the envelope outputs by file stem, extra sections' figures included."""
    figures: dict[str, Figure] = {}
    if results.has_loads:
        figures.update({f"envelope-{kind}": envelope_figure(results, kind)
                        for kind in ("moment", "shear", "deflection")})
        figures["reactions"] = reactions_figure(results)
    for section in results.extra:
        figures.update(section.figures)
    return figures

