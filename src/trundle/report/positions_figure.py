"""Critical load positions drawn on the beam: for the governing values of each span (largest
sagging and hogging moment) and each support (largest reaction), a small elevation of the
beam with the loads of the governing configuration where they stand.

Drawn from the same :class:`~trundle.report.envelope_data.Extreme` records the tables and the
CSV files are written from (``axles``: every concentrated load's x; ``loaded``: the stretches
of a placed uniform load), so the drawing cannot disagree with them. Arrows mark where loads
stand, not their size (the tables give the values); a load beyond an end of the beam is drawn
hollow and dashed. Black and white: no meaning is carried by colour alone.
"""

from __future__ import annotations

from dataclasses import dataclass

from matplotlib.axes import Axes
from matplotlib.figure import Figure

from trundle.report.crane_data import runway_report, runway_spans, support_reactions
from trundle.report.crane_tables import runway_decimals
from trundle.report.envelope_data import (
    EnvelopeResults,
    Extreme,
    direction_arrow,
    quantity_unit,
    span_summaries,
    support_extremes,
)
from trundle.report.envelope_tables import table_decimals
from trundle.report.figures import INK, MUTED, figure_style, new_figure, plot_beam
from trundle.report.format import fixed as _fixed
from trundle.report.format import marked
from trundle.report.format import position as _position
from trundle.report.safe_text import figure_text

POSITIONS_FIGURE = "load-positions"
NOT_CERTIFIED_SHORT = "* not certified: may read low"  # fits a half-width panel's heading
_TITLE_WIDTH = 62  # characters per title line of a half-width panel


@dataclass(frozen=True)
class Panel:
    """One elevation: a heading and the governing configuration it shows."""

    heading: str
    extreme: Extreme
    mark: str


def governing_panels(results: EnvelopeResults) -> list[Panel]:
    """The panels for the moving-load envelope: per span the worst sagging and hogging
    moment (the worse of 'at the sections' and 'anywhere'), per support the largest
    reaction; an extreme no load makes worse than the empty beam is left out."""
    panels = _crane_panels(results)
    if not results.has_loads:
        return panels
    units = results.units
    M, R = quantity_unit("moment", units), quantity_unit("reaction", units)
    # values as their tables write them; "*" on a value a sampled search found
    d_moment, d_reaction = table_decimals(results, "moment"), table_decimals(results, "reaction")
    panels = []
    for s in span_summaries(results):
        for which, at, anywhere in (("max", s.moment_max, s.absolute_max),
                                    ("min", s.moment_min, s.absolute_min)):
            sign = 1.0 if which == "max" else -1.0
            e = at
            if anywhere is not None and sign * anywhere.value > sign * at.value:
                e = anywhere
            if not e.governed or sign * e.value <= 0.0:
                continue
            word = "sagging" if which == "max" else "hogging"
            panels.append(Panel(f"span {s.span + 1}, {word}: "
                                f"{_moment_words(e, d_moment, M)}", e, f"M {which}"))
    for k, e in sorted(support_extremes(results, "reaction", "max").items()):
        if e.governed and e.value > 0.0:
            panels.append(Panel(f"support {k}: R max = {_fixed(e.value, d_reaction)} {R}", e,
                                f"R {k}"))
    return panels


def _crane_panels(results: EnvelopeResults) -> list[Panel]:
    """The crane runway's governing positions (with impact): per span the largest sagging
    moment, per support the largest reaction."""
    if results.runway is None:
        return []
    report = runway_report(results)
    if report is None:
        return []
    units = results.units
    M, R = quantity_unit("moment", units), quantity_unit("reaction", units)
    d_moment, d_reaction = runway_decimals(report, "moment"), runway_decimals(report, "reaction")
    panels = []
    for s in runway_spans(report):
        p = s.moment_anywhere if (s.moment_anywhere is not None and s.moment_anywhere.governed
                                  and s.moment_anywhere.extreme.value
                                  > s.moment_max.extreme.value) else s.moment_max
        e = p.extreme
        if p.governed and e.value > 0.0:
            panels.append(Panel(f"cranes, span {s.span + 1}: "
                                f"{_moment_words(e, d_moment, M, ' max')}", e, "M max"))
    for r in support_reactions(report):
        e = r.max_with_impact.extreme
        if r.max_with_impact.governed and e.value > 0.0:
            panels.append(Panel(f"cranes, support {r.support}: R max = "
                                f"{_fixed(e.value, d_reaction)} {R}", e, f"R {r.support}"))
    return panels


def _moment_words(e: Extreme, places: int, unit: str, which: str = "") -> str:
    """"M = 495.5 kN·m at x = 10.481" as the moment table writes it; a value a sampled
    search found is marked "*" and says so, as the table does."""
    words = f"M{which} = {marked(_fixed(e.value, places), e.certified)} {unit} at x = " \
        f"{_position(e.x)}"
    return words if e.certified else f"{words} ({NOT_CERTIFIED_SHORT})"


def _configuration_words(e: Extreme, length_unit: str) -> str:
    if e.placement:
        return f"{e.load}: {e.placement}"
    return (f"{e.load} {direction_arrow(e.direction)}, lead axle at "
            f"{_position(e.lead_x)} {length_unit}")


def draw_panel(ax: Axes, results: EnvelopeResults, panel: Panel) -> None:
    """One small elevation: the beam, the loaded stretches (hatched), the loads as arrows,
    the section (or support) the value is for as a dashed line."""
    beam, units = results.beam, results.units
    length = beam.length
    e = panel.extreme
    plot_beam(beam, units, ax=ax, span_labels=False)
    ax.set_xlabel("")
    for a, b in e.loaded:  # a placed uniform load: a hatched band on the loaded stretches
        ax.fill_between([a, b], 0.12, 0.42, facecolor="white", edgecolor=INK, hatch="////",
                        lw=0.6, zorder=4)
    for x in e.axles:
        on_beam = -1e-9 * length <= x <= length * (1 + 1e-9)
        ax.annotate("", xy=(x, 0.1), xytext=(x, 0.85),
                    arrowprops={"arrowstyle": "-|>", "color": INK if on_beam else MUTED,
                                "lw": 1.2, "ls": "-" if on_beam else "--",
                                "fc": INK if on_beam else "white", "shrinkA": 0,
                                "shrinkB": 0}, zorder=6, annotation_clip=False)
    ax.plot([e.x, e.x], [-0.45, 0.95], color=INK, lw=0.8, ls=(0, (3, 2)), zorder=1)
    # the mark above the loads, clear of the support numbers and the beam
    ax.annotate(panel.mark, (e.x, 0.95), xytext=(0, 1), textcoords="offset points",
                ha="center", va="bottom", fontsize=6.5, color=INK, annotation_clip=False,
                zorder=7)
    lows = [0.0, *e.axles]
    highs = [length, *e.axles]
    span = max(highs) - min(lows)
    ax.set_xlim(min(lows) - 0.03 * span, max(highs) + 0.03 * span)
    words = _configuration_words(e, units.label("length"))
    # the heading whole (a value's mark and what it means are never elided), the
    # configuration on at most two lines
    heading = figure_text(f"{_wrap(panel.heading, elide=False)}\n{_wrap(words)}",
                          parse_math=False)
    ax.set_title(heading, fontsize=7, color=INK, loc="left", pad=12)


def _wrap(text: str, elide: bool = True) -> str:
    import textwrap

    lines = textwrap.wrap(text, _TITLE_WIDTH) or [""]
    if elide and len(lines) > 2:  # a long placement: two lines, the rest elided
        lines = [lines[0], lines[1][: _TITLE_WIDTH - 1] + "…"]
    return "\n".join(lines)


def positions_figure(results: EnvelopeResults, panels: list[Panel] | None = None
                     ) -> Figure | None:
    """Every panel in two columns on one figure (None when there is nothing to draw)."""
    panels = governing_panels(results) if panels is None else panels
    if not panels:
        return None
    columns = 2 if len(panels) > 1 else 1
    rows = -(-len(panels) // columns)
    with figure_style():
        figure = new_figure(7.5, 0.35 + 1.7 * rows)
        grid = figure.add_gridspec(rows, columns)
        axes = []
        for i, panel in enumerate(panels):
            ax = figure.add_subplot(grid[i // columns, i % columns])
            draw_panel(ax, results, panel)
            axes.append(ax)
        # every panel on the same x range, so positions compare at a glance
        low = min(ax.get_xlim()[0] for ax in axes)
        high = max(ax.get_xlim()[1] for ax in axes)
        for ax in axes:
            ax.set_xlim(low, high)
            ax.tick_params(axis="x", labelsize=6.5)
    return figure


def positions_caption(results: EnvelopeResults) -> str:
    L = results.units.label("length")
    return (f"Critical load positions [{L}]: for the largest sagging and hogging moment of "
            "each span and the largest reaction of each support, the loads of the governing "
            "configuration where they stand (arrows: concentrated loads, showing position not "
            "size; hatched: loaded stretches of a placed uniform load; hollow dashed arrow: a "
            "load beyond an end of the beam; dashed line: the section or support). Values and "
            "positions are those of the governing tables.")


def positions_figures(results: EnvelopeResults) -> dict[str, Figure]:
    """The positions figure by name (empty when there is none)."""
    figure = positions_figure(results)
    return {} if figure is None else {POSITIONS_FIGURE: figure}


__all__ = ["POSITIONS_FIGURE", "Panel", "draw_panel", "governing_panels", "positions_caption",
           "positions_figure", "positions_figures"]
