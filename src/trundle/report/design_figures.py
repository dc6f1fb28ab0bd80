"""Design-envelope figures: per combination, the moment and the shear of every live case
combined on its own (thin lines, one per case) with the design envelope over them (thick), and
the governing case named along the beam wherever it changes. Renders a DesignResult computed
by the caller; runs no analysis.
"""

from __future__ import annotations

from typing import Any

import numpy as np
from matplotlib.figure import Figure

from trundle.analysis.combinations import PERMANENT_ONLY
from trundle.report import CAUTION
from trundle.report.envelope_data import EnvelopeResults, display_factor, quantity_unit
from trundle.report.figures import (
    INK,
    MUTED,
    PALETTE,
    figure_style,
    new_figure,
    plot_beam,
    wrapped,
)
from trundle.report.format import length
from trundle.report.safe_text import figure_text

_KINDS = {"moment": ("moment",), "shear": ("shear_left", "shear_right")}


def _stem(name: str) -> str:
    return "".join(c if c.isalnum() else "-" for c in name.lower()).strip("-")


def figure_stem(combination: str, what: str) -> str:
    """The file stem of a combination's figure: design-<combination>-<what>."""
    return f"design-{_stem(combination)}-{what}"


def _runs(names: tuple[str, ...]) -> list[tuple[int, int, str]]:
    """Stretches of consecutive sections with the same governing name: (first, last, name)."""
    out: list[tuple[int, int, str]] = []
    for j, name in enumerate(names):
        if out and out[-1][2] == name:
            out[-1] = (out[-1][0], j, name)
        else:
            out.append((j, j, name))
    return out


def _family_curve(values: dict, kind: str, which: str) -> np.ndarray:
    """Moment as is; shear as the worse side at each section."""
    families = _KINDS[kind]
    if len(families) == 1:
        return np.asarray(values[families[0], which], dtype=float)
    left, right = (np.asarray(values[f, which], dtype=float) for f in families)
    return np.where(np.abs(left) >= np.abs(right), left, right)


def design_figure(results: EnvelopeResults, combination: str, kind: str) -> Figure:
    result, units = results.design, results.units
    env = result.designs[combination]
    x = result.sections
    unit = quantity_unit("moment" if kind == "moment" else "shear_left", units)
    scale = display_factor("moment", units)
    names = list(env.by_case)
    colors = {name: PALETTE[(i + 2) % len(PALETTE)] for i, name in enumerate(names)}
    colors[PERMANENT_ONLY] = MUTED
    family = _KINDS[kind][0]
    with figure_style():
        figure = new_figure(7.5, 0.9 + 3.0 + 0.55 + 1.25 + 0.2)
        grid = figure.add_gridspec(3, 1, height_ratios=[3.0, 0.55, 1.25])
        beam_ax = figure.add_subplot(grid[2])
        ax = figure.add_subplot(grid[0], sharex=beam_ax)
        strip = figure.add_subplot(grid[1], sharex=beam_ax)
        dashes = ("--", ":", "-.", (0, (6, 2, 1, 2, 1, 2)), (0, (1, 3)))
        for k, (name, values) in enumerate(env.by_case.items()):
            for which in ("max", "min"):
                if (family, which) not in values:
                    continue
                curve = _family_curve(values, kind, which) * scale
                ax.plot(x, curve, color=colors[name], lw=1.0, ls=dashes[k % len(dashes)],
                        label=f"{name} (on its own)" if which == "max" else None, zorder=4)
        for which, color, marker in (("max", PALETTE[0], "o"), ("min", PALETTE[1], "s")):
            curve = _family_curve(env.values, kind, which) * scale
            ax.plot(x, curve, color=color, lw=2.2, alpha=0.55, marker=marker, ms=2.5,
                    label=f"design {which}", zorder=3)
        ax.axhline(0.0, color=MUTED, lw=0.8)
        what = "bending moment, sagging positive" if kind == "moment" else "shear"
        ax.set_ylabel(f"{what}\n[{unit}]")
        ax.legend(loc="lower left", bbox_to_anchor=(0.0, 1.0), ncols=3, fontsize=6,
                  handlelength=1.6, borderaxespad=0.2)
        # the governing case named along the beam: one band for max, one for min
        edges = np.concatenate([[x[0]], 0.5 * (x[1:] + x[:-1]), [x[-1]]])
        span = float(x[-1] - x[0]) or 1.0
        for row, which in ((1, "max"), (0, "min")):
            for first, last, name in _runs(env.governing[family, which]):
                a, b = edges[first], edges[last + 1]
                strip.axvspan(a, b, ymin=row / 2 + 0.05, ymax=row / 2 + 0.45,
                              color=colors.get(name, MUTED), alpha=0.35, lw=0)
                if (b - a) / span > 0.08:
                    strip.text(0.5 * (a + b), row + 0.5, name, ha="center", va="center",
                               fontsize=5.5, color=INK, clip_on=True)
        strip.set_ylim(0, 2)
        strip.set_yticks([0.5, 1.5], ["min", "max"])
        strip.set_ylabel("governing", fontsize=6)
        strip.grid(False)
        strip.tick_params(axis="x", labelbottom=False)
        plot_beam(results.beam, units, ax=beam_ax, sections=list(x))
        figure.suptitle(wrapped(figure_text(f"{results.model.title}\n{combination}: design "
                                            f"{kind} envelope and every case",
                                            parse_math=False)), fontsize=9.5, color=INK)
        trace = " · ".join((f"trundle {results.version}", results.model_file,
                            f"SHA-256 {results.sha256[:16]}…", results.date))
        figure.supxlabel(f"{trace}\n{CAUTION}", fontsize=6, color=MUTED)
    return figure


def design_figures(results: EnvelopeResults) -> tuple[dict[str, Any], dict[str, str]]:
    """(figures by file stem, captions) of every combination."""
    figures: dict[str, Any] = {}
    captions: dict[str, str] = {}
    L = results.units.label("length")
    for name in results.design.designs:
        for kind in _KINDS:
            stem = figure_stem(name, kind)
            figures[stem] = design_figure(results, name, kind)
            captions[stem] = (f"{name}: {kind} of every live case combined on its own (dashed, "
                              "one curve per case) and the design envelope over them (thick); "
                              "the band under the plot names the governing case along the "
                              "beam. Sections at "
                              f"{len(results.design.sections)} points, x in {L}; first at "
                              f"{length(results.design.sections[0])} {L}.")
    return figures, captions
