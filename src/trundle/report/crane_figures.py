"""Crane runway figures: reactions per support, the vertical and lateral envelopes, and the
governing crane positions drawn on the runway.

Envelope panels follow the house style of :mod:`trundle.report.envelope_figures` (max and min
through the values at the sections, a light band to zero, the largest values labelled) above
the beam drawing of :func:`trundle.report.figures.plot_beam`, whose support symbols also carry
the crane-position panels: wheels as arrows at the positions the envelope found.
"""

from __future__ import annotations

from types import SimpleNamespace

import numpy as np
from matplotlib.axes import Axes
from matplotlib.figure import Figure

from trundle.report.crane_data import (
    CranePlacement,
    RunwayReport,
    runway_spans,
    support_reactions,
)
from trundle.report.crane_tables import runway_decimals, wheel_decimals
from trundle.report.envelope_figures import (
    _annotate,
    _footer,
    _label_extremes,
    _series,
    mark_anywhere,
)
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
from trundle.report.format import position as _position
from trundle.report.safe_text import figure_text
from trundle.workflows.crane_runway import lateral_extremes

MAX_COLOR = PALETTE[0]
MIN_COLOR = PALETTE[1]
SERVICE_COLOR = PALETTE[2]
LIMIT_COLOR = PALETTE[3]
CRANE_COLORS = (PALETTE[0], PALETTE[1], PALETTE[4], PALETTE[5], PALETTE[2])


def _title(report: RunwayReport, what: str) -> str:
    return wrapped(figure_text(f"{report.results.model.title}\n{what}", parse_math=False))


def _finish(report: RunwayReport, figure: Figure, what: str) -> None:
    figure.suptitle(_title(report, what), fontsize=9.5, color=INK)
    figure.supxlabel(_footer(report.results), fontsize=6, color=MUTED)


def _adapter(report: RunwayReport, strength: bool) -> SimpleNamespace:
    """What the envelope-figure helpers read (env, beam, units, sections) for one of the
    runway envelopes."""
    env = report.runway.strength if strength else report.runway.service
    return SimpleNamespace(env=env, beam=report.beam, units=report.units,
                           sections=env.sections)


def _frame(ax: Axes, report: RunwayReport, ylabel: str) -> None:
    length = report.beam.length
    ax.axhline(0.0, color=MUTED, lw=0.8, zorder=1)
    for support_x in report.beam.support_positions:
        ax.axvline(support_x, color=RULE, lw=0.8, zorder=0)
    ax.set_ylabel(ylabel)
    ax.set_xlim(-0.03 * length, 1.03 * length)
    ax.margins(y=0.28)


def _bands(ax: Axes, x: np.ndarray, top: np.ndarray, bottom: np.ndarray, labels: tuple[str, str],
           colors: tuple[str, str] = (MAX_COLOR, MIN_COLOR)) -> None:
    ax.fill_between(x, top, 0.0, color=colors[0], alpha=0.12, lw=0, zorder=2)
    ax.fill_between(x, bottom, 0.0, color=colors[1], alpha=0.12, lw=0, zorder=2)
    ax.plot(x, top, color=colors[0], lw=1.5, marker="o", ms=2.4, zorder=3, label=labels[0])
    # min dashed with squares: told apart from max in black and white too
    ax.plot(x, bottom, color=colors[1], lw=1.5, ls=(0, (4, 1.5)), marker="s", ms=2.2, zorder=3,
            label=labels[1])


def _legend(ax: Axes, columns: int = 3) -> None:
    ax.legend(loc="lower left", bbox_to_anchor=(0.0, 1.0), ncols=columns, handlelength=1.6,
              borderaxespad=0.2)


def _limit_lines(ax: Axes, report: RunwayReport, allowable: list[float], both: bool,
                 label: str) -> None:
    ends = report.beam.support_positions
    for i, (a, b) in enumerate(zip(ends[:-1], ends[1:], strict=True)):
        for sign in ((1.0, -1.0) if both else (1.0,)):
            ax.plot([a, b], [sign * allowable[i]] * 2, color=LIMIT_COLOR, lw=1.0,
                    ls=(0, (4, 2)), zorder=4, label=label if i == 0 and sign > 0 else None)


def _moment_panel(ax: Axes, report: RunwayReport) -> None:
    units = report.units
    adapter = _adapter(report, strength=True)
    x, top, bottom, limits = _series(adapter, "moment")
    _frame(ax, report, f"moment ({SIGN_CONVENTION['moment']})\n[{units.label('moment')}]")
    _bands(ax, x, top, bottom, ("max with impact", "min with impact"))
    anywhere = {}
    for s in runway_spans(report):
        p = s.moment_anywhere
        if p is None or p.extreme.value <= s.moment_max.extreme.value:
            continue
        if np.min(np.abs(report.sections - p.extreme.x)) <= 1e-9 * report.beam.length:
            continue
        anywhere[(s.span, "max")] = (p.extreme.x, p.extreme.value, p.extreme.certified)
    mark_anywhere(ax, list(anywhere.values()))
    _label_extremes(ax, adapter, x, top, bottom, limits, anywhere,  # type: ignore[arg-type]
                    runway_decimals(report, "moment"))
    _legend(ax)


def _shear_panel(ax: Axes, report: RunwayReport) -> None:
    units = report.units
    adapter = _adapter(report, strength=True)
    x, top, bottom, limits = _series(adapter, "shear")
    _frame(ax, report, f"shear ({SIGN_CONVENTION['shear']})\n[{units.label('force')}]")
    _bands(ax, x, top, bottom, ("max with impact", "min with impact"))
    _label_extremes(ax, adapter, x, top, bottom, limits, {},  # type: ignore[arg-type]
                    runway_decimals(report, "shear"))
    _legend(ax, 2)


def _deflection_panel(ax: Axes, report: RunwayReport) -> None:
    units = report.units
    to_display = units.factor(units.length, units.deflection)
    x = report.sections
    top = report.runway.service.max("deflection") * to_display
    bottom = report.runway.service.min("deflection") * to_display
    _frame(ax, report, f"deflection ({SIGN_CONVENTION['deflection']})\n[{units.deflection}]")
    _bands(ax, x, top, bottom, ("max without impact", "min without impact"),
           (SERVICE_COLOR, MIN_COLOR))
    checks = report.runway.vertical_checks
    _limit_lines(ax, report, [c.limit * to_display for c in checks], both=False,
                 label=f"allowable span / {checks[0].ratio:g}" if checks else "allowable")
    places = runway_decimals(report, "deflection")
    for c in checks:  # as the deflection table writes it, "*" where not certified
        _annotate(ax, c.x, c.value * to_display,
                  marked(_fixed(c.value * to_display, places), c.certified),
                  SERVICE_COLOR, above=True, length=report.beam.length)
    _uncertified_note(ax, checks)
    _legend(ax)


def _uncertified_note(ax: Axes, checks) -> None:
    """A legend entry saying what "*" on a deflection label means, where one has it."""
    if any(not c.certified for c in checks):
        ax.plot([], [], ls="none", label=NOT_CERTIFIED_WORDS)


def runway_vertical_figure(report: RunwayReport) -> Figure:
    """Moment and shear with impact, deflection without impact, above the runway."""
    with figure_style():
        figure = new_figure(7.5, 0.9 + 3 * 2.3 + 1.25 + 0.2)
        grid = figure.add_gridspec(4, 1, height_ratios=[2.3, 2.3, 2.3, 1.25])
        beam_ax = figure.add_subplot(grid[3])
        axes = [figure.add_subplot(grid[i], sharex=beam_ax) for i in range(3)]
        _moment_panel(axes[0], report)
        _shear_panel(axes[1], report)
        _deflection_panel(axes[2], report)
        plot_beam(report.beam, report.units, ax=beam_ax, sections=list(report.sections))
        _finish(report, figure, "crane runway, vertical: moment and shear with impact, "
                                "deflection without")
    return figure


def runway_lateral_figure(report: RunwayReport) -> Figure | None:
    """Lateral moment and deflection of the top flange, either way, above the runway."""
    runway = report.runway
    if runway.lateral is None:
        return None
    units = report.units
    to_display = units.factor(units.length, units.deflection)
    x = report.sections
    with figure_style():
        figure = new_figure(7.5, 0.9 + 2 * 2.3 + 1.25 + 0.2)
        grid = figure.add_gridspec(3, 1, height_ratios=[2.3, 2.3, 1.25])
        beam_ax = figure.add_subplot(grid[2])
        moment_ax = figure.add_subplot(grid[0], sharex=beam_ax)
        deflection_ax = figure.add_subplot(grid[1], sharex=beam_ax)
        top, bottom = lateral_extremes(runway, "moment")
        _frame(moment_ax, report, f"lateral moment (either way)\n[{units.label('moment')}]")
        _bands(moment_ax, x, top, bottom, ("wheel forces one way", "the other way"))
        adapter = SimpleNamespace(beam=report.beam)
        _label_extremes(moment_ax, adapter, x, top, bottom, [""] * len(x), {},  # type: ignore
                        runway_decimals(report, "lateral_moment"))
        _legend(moment_ax, 2)
        top, bottom = lateral_extremes(runway, "deflection")
        top, bottom = top * to_display, bottom * to_display
        _frame(deflection_ax, report, f"lateral deflection (either way)\n[{units.deflection}]")
        _bands(deflection_ax, x, top, bottom, ("one way", "the other way"))
        checks = runway.lateral_checks
        _limit_lines(deflection_ax, report, [c.limit * to_display for c in checks],
                     both=True, label=f"allowable span / {checks[0].ratio:g}" if checks
                     else "allowable")
        places = runway_decimals(report, "deflection")
        for c in checks:  # the worst of each span, found between the sections too
            value = c.value * to_display
            _annotate(deflection_ax, c.x, value, "±" + marked(_fixed(value, places),
                                                               c.certified),
                      MAX_COLOR, above=True, length=report.beam.length)
        _uncertified_note(deflection_ax, checks)
        _legend(deflection_ax)
        plot_beam(report.beam, units, ax=beam_ax, sections=list(report.sections))
        _finish(report, figure, "crane runway, lateral (top flange): lateral wheel forces "
                                "either way, no impact")
    return figure


def runway_reactions_figure(report: RunwayReport) -> Figure:
    """Worst reaction of every support with and without impact (and uplift, if any)."""
    units = report.units
    items = support_reactions(report)
    with_impact = np.array([r.max_with_impact.extreme.value for r in items])
    without = np.array([r.max_without_impact.extreme.value for r in items])
    uplift = np.array([r.min_with_impact.extreme.value for r in items])
    series = [(with_impact, "max with impact", MAX_COLOR),
              (without, "max without impact", SERVICE_COLOR)]
    if np.any(uplift < -1e-9 * max(with_impact.max(), 1e-300)):
        series.append((uplift, "min with impact (uplift)", MIN_COLOR))
    places = runway_decimals(report, "reaction")  # labels read as the table's cells
    with figure_style():
        figure = new_figure(7.5, 3.4)
        ax = figure.add_subplot()
        positions = np.arange(len(items))
        width = 0.8 / len(series)
        hatches = ("", "////", "xxxx")  # told apart in black and white too
        for j, (values, label, color) in enumerate(series):
            bars = ax.bar(positions + (j - (len(series) - 1) / 2) * width, values, width,
                          color=color if j == 0 else "white", edgecolor=color,
                          hatch=hatches[j], lw=0.8, label=label, zorder=3)
            ax.bar_label(bars, labels=[_fixed(v, places) for v in values], fontsize=6.5,
                         padding=2, color=INK)
        ax.axhline(0.0, color=MUTED, lw=0.8, zorder=2)
        L = units.label("length")
        ax.set_xticks(positions, [f"support {r.support}\nx = {r.x:.6g} {L}" for r in items])
        ax.set_ylabel(f"reaction ({SIGN_CONVENTION['reaction']})\n[{units.label('force')}]")
        ax.grid(axis="x", visible=False)
        ax.margins(y=0.2)
        _legend(ax)
        _finish(report, figure, "crane runway: vertical reactions per support from one rail")
    return figure


def _draw_cranes(ax: Axes, report: RunwayReport, p: CranePlacement, label: str
                 ) -> tuple[float, float]:
    """The wheels of a placement as arrows onto the runway, each crane bracketed between its
    buffers, and the section it governs marked; returns the x range it needs."""
    units = report.units
    F = units.label("force")
    wheels = np.asarray(p.extreme.axles)
    loads = np.asarray(p.wheel_loads)
    by_name = {c.name: c for c in report.cranes}
    start = 0
    lows, highs = [0.0, float(wheels.min())], [report.beam.length, float(wheels.max())]
    for i, (name, state, count) in enumerate(p.cranes):
        color = CRANE_COLORS[i % len(CRANE_COLORS)]
        xs = wheels[start:start + count]
        ps = loads[start:start + count]
        start += count
        crane = by_name[name]
        for x in xs:
            on_runway = -1e-9 <= x <= report.beam.length * (1 + 1e-9)
            ax.annotate("", xy=(x, 0.1), xytext=(x, 0.72),
                        arrowprops={"arrowstyle": "-|>", "color": color if on_runway else MUTED,
                                    "lw": 1.4 if state == "loaded" else 0.9,
                                    "ls": "-" if state == "loaded" else "--",
                                    "shrinkA": 0, "shrinkB": 0}, zorder=6)
        a = xs.min() - crane.end_distance
        b = xs.max() + crane.end_distance
        lows.append(a)
        highs.append(b)
        ax.plot([a, b], [0.8, 0.8], color=color, lw=1.0, zorder=6, clip_on=False)
        for end in (a, b):
            ax.plot([end, end], [0.74, 0.86], color=color, lw=1.0, zorder=6, clip_on=False)
        # with the wheel-load table's decimals
        text = f"{name} ({state}): {count} × {_fixed(ps[0], wheel_decimals(report.cranes))} {F}"
        ax.annotate(text, (0.5 * (a + b), 0.86), xytext=(0, 3 + 10 * (i % 2)),
                    textcoords="offset points", ha="center", va="bottom", fontsize=7,
                    color=color, zorder=7, annotation_clip=False)
    x = p.extreme.x
    ax.plot([x, x], [-1.0, 0.05], color=LIMIT_COLOR, lw=1.0, ls=(0, (3, 2)), zorder=1)
    _clear_support_number(ax, report, x)
    ax.annotate(label, (x, -0.82), xytext=(4, 0), textcoords="offset points", ha="left",
                va="center", fontsize=7, color=LIMIT_COLOR, zorder=7,
                bbox={"boxstyle": "round,pad=0.12", "fc": "white", "ec": "none",
                      "alpha": 0.85})
    span = max(highs) - min(lows)
    ax.set_xlim(min(lows) - 0.03 * span, max(highs) + 0.03 * span)
    return min(lows) - 0.03 * span, max(highs) + 0.03 * span


def _clear_support_number(ax: Axes, report: RunwayReport, x: float) -> None:
    """A section at a support (a reaction): its number moves left of the dashed line, which
    would run through it, and the line's label stays right of it."""
    ends = report.beam.support_positions
    tolerance = 1e-9 * report.beam.length
    at = [k for k, end in enumerate(ends) if abs(end - x) <= tolerance]
    for text in ax.texts:
        if at and text.get_text() == str(at[0]) and abs(text.xy[0] - x) <= tolerance:
            text.xyann = (-4.0, text.xyann[1])
            text.set_horizontalalignment("right")


def _placement_words(report: RunwayReport, p: CranePlacement) -> str:
    e = p.extreme
    L = report.units.label("length")
    travel = {1: "travelling towards +x", -1: "travelling towards −x"}.get(e.direction, "")
    words = f"{e.load}, {travel}, lead wheel at x = {_position(e.lead_x)} {L}"
    for gap, touching in zip(p.gaps, p.touching, strict=True):
        words += (f"; wheel to wheel between cranes {_position(gap)} {L}"
                  + (" (buffers touching)" if touching else ""))
    return words


def runway_positions_figure(report: RunwayReport) -> Figure | None:
    """Where the cranes stand for the worst reaction and the worst sagging moment (with
    impact), drawn on the runway."""
    units = report.units
    F, M = units.label("force"), units.label("moment")
    reactions = support_reactions(report)
    panels: list[tuple[str, str, CranePlacement]] = []
    if reactions:
        worst = max(reactions, key=lambda r: r.max_with_impact.extreme.value)
        p = worst.max_with_impact
        if p.governed:
            value = _fixed(p.extreme.value, runway_decimals(report, "reaction"))
            panels.append((f"worst reaction with impact: support {worst.support}, "
                           f"R = {value} {F}",
                           f"R max, support {worst.support}", p))
    spans = runway_spans(report)
    candidates = [s.moment_anywhere or s.moment_max for s in spans]
    candidates = [c for c in candidates if c.governed]
    if candidates:
        p = max(candidates, key=lambda c: c.extreme.value)
        value = marked(_fixed(p.extreme.value, runway_decimals(report, "moment")),
                       p.extreme.certified)
        panels.append((f"worst sagging moment with impact: M = {value} {M} at "
                       f"x = {_position(p.extreme.x)} {units.label('length')}"
                       + ("" if p.extreme.certified else f" ({NOT_CERTIFIED_WORDS})"),
                       "M max", p))
    if not panels:
        return None
    with figure_style():
        figure = new_figure(7.5, 0.9 + 2.2 * len(panels) + 0.3)
        grid = figure.add_gridspec(len(panels), 1)
        axes, ranges = [], []
        for row, (title, label, p) in enumerate(panels):
            ax = figure.add_subplot(grid[row])
            plot_beam(report.beam, units, ax=ax, span_labels=False)
            ranges.append(_draw_cranes(ax, report, p, label))
            axes.append(ax)
            ax.set_title(wrapped(f"{title}\n{_placement_words(report, p)}", fontsize=7.5),
                         fontsize=7.5, color=INK, loc="left", pad=26)
        for ax in axes:  # every panel on the same x range: positions compare at a glance
            ax.set_xlim(min(r[0] for r in ranges), max(r[1] for r in ranges))
        _finish(report, figure, "crane runway: governing crane positions\n(wheel loads with "
                                "impact; dashed: unloaded crane; grey: wheel beyond the "
                                "runway end)")
    return figure


def runway_figures(report: RunwayReport) -> tuple[dict[str, Figure], dict[str, str]]:
    """The crane figures by file stem, and their captions."""
    units = report.units
    F, M, D = units.label("force"), units.label("moment"), units.deflection
    figures: dict[str, Figure] = {}
    captions: dict[str, str] = {}
    figures["runway-reactions"] = runway_reactions_figure(report)
    captions["runway-reactions"] = (f"Crane runway: worst vertical reaction of every support "
                                    f"from one rail [{F}], with and without impact.")
    figures["runway-vertical"] = runway_vertical_figure(report)
    captions["runway-vertical"] = (f"Crane runway, vertical: moment [{M}] and shear [{F}] "
                                   f"with impact, deflection [{D}] without impact against the "
                                   "allowable deflection of each span.")
    lateral = runway_lateral_figure(report)
    if lateral is not None:
        figures["runway-lateral"] = lateral
        captions["runway-lateral"] = (f"Crane runway, lateral: moment [{M}] and deflection "
                                      f"[{D}] of the top flange with the lateral wheel forces "
                                      "either way, against the allowable lateral deflection.")
    positions = runway_positions_figure(report)
    if positions is not None:
        figures["runway-positions"] = positions
        captions["runway-positions"] = ("Governing crane positions for the worst reaction and "
                                        "the worst sagging moment: wheels (arrows) at the "
                                        "positions found, each crane bracketed between its "
                                        "buffers.")
    return figures, captions
