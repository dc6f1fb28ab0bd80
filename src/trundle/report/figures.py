"""Figures for calculation packages: the beam with its supports, and influence lines above it.

Every plotting function draws into an Axes it is given (or makes one) and returns it. All
drawing happens inside :func:`figure_style`, one restrained house style. Figures are
``matplotlib.figure.Figure`` objects on the Agg canvas: no pyplot, no global backend switch.

Symbols: pin = triangle on a hatched ground line; fixed = hatched wall (a hatched block at an
interior support); spring = zig-zag to ground, with a spiral when it also resists rotation;
free = nothing; internal hinge = open circle. Symbols are sized in points so they look the
same on any beam length.
"""

from __future__ import annotations

import io
from collections.abc import Iterator, Sequence
from contextlib import contextmanager
from typing import Any

import matplotlib
import numpy as np
from matplotlib.axes import Axes
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.collections import LineCollection
from matplotlib.figure import Figure
from matplotlib.lines import Line2D
from matplotlib.transforms import (
    Affine2D,
    ScaledTranslation,
    Transform,
    blended_transform_factory,
)

from trundle.core.beam import Beam, Spring
from trundle.core.influence import InfluenceSet
from trundle.io.units import UnitSystem
from trundle.report import CAUTION
from trundle.report.safe_text import figure_text
from trundle.report.tables import (
    effect_label,
    extreme_ordinate_cells,
    format_length,
    line_extremes,
    ordinate_units,
    sample,
)

# House palette: ink-and-paper tones with a few muted accents.
INK = "#262b31"
MUTED = "#6c757d"
RULE = "#d9dde1"
PALETTE = ("#1f4e79", "#b4532a", "#2e7d5b", "#8a6d1d", "#6a4c93", "#3d8fa8")
SEQUENTIAL = "cividis"

# The fixed sign conventions (see DESIGN.md), repeated on every axis that shows an effect.
SIGN_CONVENTION = {
    "moment": "sagging +",
    "shear": "upward on left +",
    "reaction": "upward +",
    "support_moment": "CCW on beam +",
    "deflection": "downward +",
    "rotation": "clockwise +",
}

_STYLE = {
    "font.family": "DejaVu Sans",
    "font.size": 8.5,
    "axes.titlesize": 9.5,
    "axes.labelsize": 8.5,
    "axes.edgecolor": MUTED,
    "axes.labelcolor": INK,
    "axes.linewidth": 0.7,
    "axes.spines.top": False,
    "axes.spines.right": False,
    "axes.grid": True,
    "grid.color": RULE,
    "grid.linewidth": 0.5,
    "xtick.color": MUTED,
    "ytick.color": MUTED,
    "xtick.labelcolor": INK,
    "ytick.labelcolor": INK,
    "xtick.labelsize": 7.5,
    "ytick.labelsize": 7.5,
    "legend.fontsize": 7.5,
    "legend.frameon": False,
    "lines.linewidth": 1.4,
    "savefig.dpi": 200,
    "svg.fonttype": "none",
    # fixed ids in SVG output: the same model gives the same file (and the same report)
    "svg.hashsalt": "trundle",
    # text from model files ("$" in a title or load name) is shown as written, never as maths
    "text.parse_math": False,
}


@contextmanager
def figure_style() -> Iterator[None]:
    """The one style every trundle figure is drawn in."""
    with matplotlib.rc_context(_STYLE):
        yield


def new_figure(width: float, height: float) -> Figure:
    """A Figure on the Agg canvas (no pyplot state), size in inches."""
    with figure_style():
        figure = Figure(figsize=(width, height), layout="constrained")
    FigureCanvasAgg(figure)
    return figure


def wrapped(text: str, width_inches: float = 7.5, fontsize: float = 9.5) -> str:
    """``text`` broken into lines that fit a figure ``width_inches`` wide at ``fontsize``
    points (a DejaVu Sans character is at most about 0.62 em wide on average), so a long title
    is never clipped at the figure's edges."""
    import textwrap

    per_line = max(20, int(0.94 * width_inches * 72.0 / (0.62 * fontsize)))
    lines = []
    for line in text.split("\n"):
        lines.extend(textwrap.wrap(line, per_line, break_long_words=True) or [""])
    return "\n".join(lines)


def figure_bytes(figure: Figure, fmt: str = "png") -> bytes:
    """The rendered figure as bytes in ``fmt`` ("png", "svg" or "pdf")."""
    buffer = io.BytesIO()
    with figure_style():
        figure.savefig(buffer, format=fmt, metadata=_metadata(fmt))
    return buffer.getvalue()


def _metadata(fmt: str) -> dict[str, str | None]:
    # Leave out creation dates so the same model gives the same file.
    if fmt == "svg":
        return {"Date": None}
    if fmt == "pdf":
        return {"CreationDate": None}
    return {}


# ------------------------------------------------------------------------------------------
# the beam


def _in_points(ax: Axes, x: float, y: float = 0.0) -> Transform:
    """Coordinates in points, with the origin at data point (x, y)."""
    return (Affine2D().scale(1.0 / 72.0) + ax.figure.dpi_scale_trans
            + ScaledTranslation(x, y, ax.transData))


def _ground(ax: Axes, x: float, y: float, half_width: float = 9.0) -> None:
    t = _in_points(ax, x)
    ax.plot([-half_width, half_width], [y, y], color=INK, lw=0.9, transform=t,
            solid_capstyle="butt", clip_on=False)
    for xs in np.arange(-half_width + 2.5, half_width + 0.1, 3.5):
        ax.plot([xs, xs - 3.0], [y, y - 3.5], color=INK, lw=0.6, transform=t, clip_on=False)


def _draw_pin(ax: Axes, x: float) -> None:
    t = _in_points(ax, x)
    ax.fill([0.0, -5.5, 5.5], [-1.2, -10.0, -10.0], facecolor="white", edgecolor=INK, lw=0.9,
            transform=t, clip_on=False, zorder=3)
    _ground(ax, x, -10.0)


def _draw_fixed(ax: Axes, x: float, where: str) -> None:
    t = _in_points(ax, x)
    if where == "interior":
        ax.fill([-5.5, 5.5, 5.5, -5.5], [-1.5, -1.5, -10.0, -10.0], facecolor="white",
                edgecolor=INK, lw=0.9, hatch="////", transform=t, clip_on=False, zorder=3)
        _ground(ax, x, -10.0)
        return
    outward = -1.0 if where == "left" else 1.0
    ax.plot([0.0, 0.0], [-11.0, 11.0], color=INK, lw=1.2, transform=t, clip_on=False)
    for y in np.arange(-9.0, 11.5, 3.5):
        ax.plot([0.0, 3.5 * outward], [y, y - 3.5], color=INK, lw=0.6, transform=t,
                clip_on=False)


def _draw_spring(ax: Axes, x: float, rotational: bool) -> None:
    t = _in_points(ax, x)
    zig_x = [0.0, 0.0, -4.0, 4.0, -4.0, 4.0, 0.0, 0.0]
    zig_y = [-1.5, -3.5, -5.5, -8.5, -11.5, -14.5, -16.5, -18.0]
    ax.plot(zig_x, zig_y, color=INK, lw=0.9, transform=t, clip_on=False)
    _ground(ax, x, -18.0, half_width=7.0)
    if rotational:
        turns = np.linspace(0.0, 3.5 * np.pi, 80)
        radius = 1.5 + 1.6 * turns / np.pi
        ax.plot(radius * np.cos(turns), radius * np.sin(turns), color=INK, lw=0.7,
                transform=t, clip_on=False, zorder=4)


def plot_beam(beam: Beam, units: UnitSystem, ax: Axes | None = None,
              sections: Sequence[float] = (), section_colors: Sequence[str] | None = None,
              span_labels: bool = True) -> Axes:
    """Draw the beam, its supports, hinges and spans; mark ``sections`` with small ticks.

    The y axis is hidden; x is position along the beam [length]. ``span_labels=False``
    leaves out the span lengths above the beam (where loads are drawn on it).
    """
    with figure_style():
        if ax is None:
            ax = new_figure(7.5, 1.3).add_subplot()
        length = beam.length
        ax.set_ylim(-1.0, 1.0)
        ax.set_xlim(-0.03 * length, 1.03 * length)
        ax.yaxis.set_visible(False)
        for side in ("left", "right", "top"):
            ax.spines[side].set_visible(False)
        ax.grid(False)
        _draw_beam_line(ax, beam)
        ends = beam.support_positions
        for i, (s, xs) in enumerate(zip(beam.supports, ends, strict=True)):
            where = "left" if i == 0 else "right" if i == len(ends) - 1 else "interior"
            if s == "pin":
                _draw_pin(ax, xs)
            elif s == "fixed":
                _draw_fixed(ax, xs, where)
            elif isinstance(s, Spring):
                _draw_spring(ax, xs, s.kr is not None)
            ax.annotate(str(i), (xs, 0.0), xytext=(0, -32), textcoords="offset points",
                        ha="center", va="center", fontsize=7, color=MUTED)
        for a, b in zip(ends[:-1], ends[1:], strict=True) if span_labels else ():
            ax.annotate(f"{format_length(b - a)} {units.label('length')}", ((a + b) / 2, 0.0),
                        xytext=(0, 11), textcoords="offset points", ha="center",
                        va="bottom", fontsize=7.5, color=MUTED)
        if beam.hinges:
            ax.plot(beam.hinges, np.zeros(len(beam.hinges)), ls="none", marker="o", ms=6,
                    mfc="white", mec=INK, mew=1.0, zorder=6)
        _section_ticks(ax, sections, section_colors)
        ax.set_xlabel(f"position along beam [{units.label('length')}]")
    return ax


def _section_ticks(ax: Axes, sections: Sequence[float],
                   section_colors: Sequence[str] | None) -> None:
    """A tick 3.5 to 8.5 points above the beam at each section, drawn as one artist (one
    path when all have one colour, else one collection), not one line per section: a figure
    of thousands of sections is drawn and measured once."""
    colors = list(section_colors or [PALETTE[0]] * len(sections))[:len(sections)]
    x = np.asarray(sections, dtype=float)[:len(colors)]
    if x.size == 0:
        return
    if len(set(colors)) == 1:
        # x in data units, y in points above the beam's axis
        upward = blended_transform_factory(ax.transData, _in_points(ax, 0.0))
        ax.add_line(Line2D(np.repeat(x, 3), np.tile([3.5, 8.5, np.nan], x.size),
                           color=colors[0], lw=1.1, transform=upward, clip_on=False))
        return
    ticks = LineCollection([[(0.0, 3.5), (0.0, 8.5)]], colors=colors, linewidths=1.1,
                           offsets=np.column_stack([x, np.zeros(x.size)]),
                           offset_transform=ax.transData,
                           transform=Affine2D().scale(1.0 / 72.0) + ax.figure.dpi_scale_trans,
                           clip_on=False, capstyle="projecting", zorder=2)
    ax.add_collection(ticks, autolim=False)


def _draw_beam_line(ax: Axes, beam: Beam) -> None:
    """The beam as a band whose depth follows EI, so stepped and haunched parts show."""
    segments = beam.stiffness_segments
    EI_max = max(max(s.EI0, s.EI1) for s in segments)
    EI_min = min(min(s.EI0, s.EI1) for s in segments)
    xs_all, half_all = [], []
    for seg in segments:
        xs = np.linspace(seg.x0, seg.x1, 49 if seg.varies else 2)
        EI = seg.at(xs)
        relative = (EI - EI_min) / (EI_max - EI_min) if EI_max > EI_min else np.zeros_like(EI)
        xs_all.append(xs)
        half_all.append(0.035 + 0.045 * relative)  # axis units: the strip spans -1 .. 1
    x = np.concatenate(xs_all)
    half = np.concatenate(half_all)
    ax.fill_between(x, -half, half, color=INK, lw=0, zorder=2)


# ------------------------------------------------------------------------------------------
# influence lines


def plot_influence(lines: InfluenceSet, beam: Beam, units: UnitSystem,
                   indices: Sequence[int] | None = None, ax: Axes | None = None,
                   annotate: bool | None = None) -> Axes:
    """Plot lines of one effect kind (``indices`` into ``lines``) against position.

    Up to six lines get palette colours and a legend; more get a sequential colour map by
    section position. With three lines or fewer the largest and smallest ordinates are
    marked and labelled (``annotate`` overrides).
    """
    chosen = list(range(len(lines))) if indices is None else list(indices)
    with figure_style():
        if ax is None:
            ax = new_figure(7.5, 2.6).add_subplot()
        sampled = sample(lines, beam, units, per_span=240)
        first = lines.effects[chosen[0]]
        ou = ordinate_units(first, units)
        many = len(chosen) > len(PALETTE)
        colors = _colors(lines, chosen, beam) if many else \
            [PALETTE[k % len(PALETTE)] for k in range(len(chosen))]
        ax.axhline(0.0, color=MUTED, lw=0.8, zorder=1)
        for support_x in beam.support_positions:
            ax.axvline(support_x, color=RULE, lw=0.8, zorder=0)
        if annotate is None:
            annotate = len(chosen) <= 2
        extremes = line_extremes(lines, beam, units) if annotate else []
        for color, j in zip(colors, chosen, strict=True):
            effect = lines.effects[j]
            y = sampled.values[:, j]
            label = effect_label(effect, beam, units).removeprefix(
                effect.kind.replace("_", " ") + " ")
            if annotate:  # the extremes' values go in the legend, never over the curves
                label += _extremes_words(extremes[j], units)
            ax.plot(sampled.x, y, color=color, lw=0.9 if many else 1.5, label=label, zorder=3)
            if len(chosen) == 1:
                ax.fill_between(sampled.x, y, 0.0, color=color, alpha=0.12, lw=0, zorder=2)
            if effect.at is not None and not many:
                ax.axvline(effect.at, color=color, lw=0.8, ls=(0, (2, 2)), zorder=2)
            if annotate:
                _mark_extremes(ax, extremes[j], color)
        kind = first.kind.replace("_", " ")
        ax.set_ylabel(f"{kind} ({SIGN_CONVENTION[first.kind]})\n[{ou.label}]")
        ax.set_xlim(-0.03 * beam.length, 1.03 * beam.length)
        ax.margins(y=0.3)
        if many:
            ax.set_title(f"{len(chosen)} lines, coloured by section position (dark = left, "
                         "light = right; sections ticked on the beam)", loc="right",
                         fontsize=7, color=MUTED)
        else:
            ax.legend(loc="lower left", bbox_to_anchor=(0.0, 1.0),
                      ncols=1 if annotate else min(len(chosen), 3),
                      handlelength=1.6, borderaxespad=0.2)
    return ax


def _colors(lines: InfluenceSet, chosen: Sequence[int], beam: Beam) -> list[str]:
    cmap = matplotlib.colormaps[SEQUENTIAL]
    result = []
    for j in chosen:
        effect = lines.effects[j]
        x = effect.at if effect.at is not None else beam.support_positions[effect.support]
        result.append(matplotlib.colors.to_hex(cmap(0.05 + 0.85 * x / beam.length)))
    return result


def _shown_extremes(extremes: dict[str, Any]) -> list[tuple[str, float, float]]:
    """(name, value, x) of the extremes worth marking: a non-zero max above and min below 0."""
    top, x_top = extremes["max"], extremes["x_max"]
    bottom, x_bottom = extremes["min"], extremes["x_min"]
    if x_top is None:  # the line vanishes
        return []
    scale = max(abs(top), abs(bottom))
    return [(name, value, x) for name, value, x in (("max", top, x_top),
                                                    ("min", bottom, x_bottom))
            if abs(value) > 1e-6 * scale and (value > 0.0 if name == "max" else value < 0.0)]


def _extremes_words(extremes: dict[str, Any], units: UnitSystem) -> str:
    unit = units.label("length")
    cells = extreme_ordinate_cells(extremes)  # as the extremes table writes them
    words = [f"{name} {cells[name]} at {cells['x_' + name]} {unit}"
             for name, _, _ in _shown_extremes(extremes)]
    return (": " + ", ".join(words) + " (● max, ○ min)") if words else ""


def _mark_extremes(ax: Axes, extremes: dict[str, Any], color: str) -> None:
    """A filled dot at the max, an open one at the min (told apart in black and white);
    their values are in the legend, so no label lies over a curve."""
    for name, value, x in _shown_extremes(extremes):
        ax.plot([x], [value], marker="o", ms=4.0, color=color,
                mfc=color if name == "max" else "white", mew=1.2, zorder=5)


def influence_figure(lines: InfluenceSet, beam: Beam, units: UnitSystem, title: str,
                     source: str = "", generator: str = "") -> list[Axes]:
    """One panel per effect kind, stacked over the beam drawing; returns all Axes.

    The figure is ``axes[0].figure``; the last Axes is the beam.
    """
    kinds: list[str] = []
    for e in lines.effects:
        if e.kind not in kinds:
            kinds.append(e.kind)
    groups = [[j for j, e in enumerate(lines.effects) if e.kind == k] for k in kinds]
    with figure_style():
        figure = new_figure(7.5, 0.9 + 2.3 * len(groups) + 1.25)
        grid = figure.add_gridspec(len(groups) + 1, 1,
                                   height_ratios=[2.3] * len(groups) + [1.25])
        axes: list[Axes] = []
        beam_ax = figure.add_subplot(grid[-1])
        for row, group in enumerate(groups):
            ax = figure.add_subplot(grid[row], sharex=beam_ax)
            plot_influence(lines, beam, units, group, ax=ax)
            axes.append(ax)
        sections = [lines.effects[j].at for group in groups for j in group
                    if lines.effects[j].at is not None]
        plot_beam(beam, units, ax=beam_ax, sections=sorted(set(sections)))
        axes.append(beam_ax)
        shown = figure_text(title, parse_math=False)
        figure.suptitle(f"{shown}\ninfluence lines for a unit load of 1 {units.force} "
                        "moving along the beam", fontsize=9.5, color=INK)
        footer = figure_text(" · ".join(p for p in (generator, source, CAUTION) if p),
                             limit=400, parse_math=False)
        figure.supxlabel(footer, fontsize=6, color=MUTED)
    return axes
