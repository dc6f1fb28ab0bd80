"""What a what-if sweep writes: the table (CSV, one row per point), a figure, a summary.

Self-contained: :func:`sweep_files` turns a :class:`trundle.workflows.sweep.SweepResult` into
finished file contents, :func:`write_sweep` writes them atomically into a folder. One swept
number gives a line figure (one panel per effect), two give contour plots. Every figure and
table labels the swept numbers by their model path and unit and the effects by what they are
and their unit; the figure carries the caution.
"""

from __future__ import annotations

import csv
import io
import math
from collections.abc import Sequence
from pathlib import Path

import numpy as np
from matplotlib.figure import Figure

from trundle._io import write_all_atomic
from trundle.report import CAUTION, LOAD_MODEL_CAUTION
from trundle.report.envelope_data import display_factor, quantity_unit
from trundle.report.figures import INK, MUTED, PALETTE, SEQUENTIAL, figure_bytes, new_figure
from trundle.workflows.sweep import SweepResult, effect_family

CAUTIONS = (CAUTION, LOAD_MODEL_CAUTION,
            "Each point is the model file with the swept numbers replaced; values at points "
            "between those computed are not checked.")


def _number(value: float) -> str:
    return "" if not math.isfinite(value) else format(float(value) + 0.0, ".9g")


def effect_unit(result: SweepResult, effect: int, ascii_only: bool = False) -> str:
    return quantity_unit(effect_family(result.effects[effect]), result.units, ascii_only)


def displayed(result: SweepResult, effect: int) -> np.ndarray:
    """The values of one effect in display units (deflection in mm or in)."""
    factor = display_factor(effect_family(result.effects[effect]), result.units)
    return result.values[:, effect] * factor


def axis_title(result: SweepResult, axis: int) -> str:
    r = result.ranges[axis]
    return f"{r.path.text} [{r.label}]"


def effect_title(result: SweepResult, effect: int, ascii_only: bool = False) -> str:
    return f"{result.effects[effect].label} [{effect_unit(result, effect, ascii_only)}]"


def sweep_rows(result: SweepResult) -> tuple[list[str], list[list[str]]]:
    """(header, rows): per point the swept values, then per effect its value, where it
    occurs (x of the section, or the support) and the governing load."""
    length = result.units.ascii_label("length")
    header = [axis_title(result, a) for a in range(len(result.ranges))]
    for e, selector in enumerate(result.effects):
        header.append(effect_title(result, e, ascii_only=True))
        if selector.kind in ("reaction", "support_moment"):
            header.append(f"{selector.label}: support")
        else:
            header.append(f"{selector.label}: x [{length}]")
        header.append(f"{selector.label}: load")
    shown = [displayed(result, e) for e in range(len(result.effects))]
    rows = []
    for p, point in enumerate(result.points):
        row = [_number(v) for v in point]
        for e, selector in enumerate(result.effects):
            row.append(_number(shown[e][p]))
            if selector.kind in ("reaction", "support_moment"):
                row.append(str(int(result.support[p, e])))
            else:
                row.append(_number(result.x[p, e]))
            row.append(result.load[p][e])
        rows.append(row)
    return header, rows


def sweep_csv(result: SweepResult) -> str:
    header, rows = sweep_rows(result)
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(header)
    writer.writerows(rows)
    return buffer.getvalue()


def worst_points(result: SweepResult) -> list[tuple[str, str, str]]:
    """Per effect: (effect with unit, its worst value, where in the sweep)."""
    out = []
    for e in range(len(result.effects)):
        p = result.worst(e)
        where = ", ".join(f"{r.path.text} = {_short(result.points[p, a])} {r.label}"
                          for a, r in enumerate(result.ranges))
        out.append((effect_title(result, e), _short(displayed(result, e)[p]), where))
    return out


def _short(value: float) -> str:
    return format(float(value) + 0.0, ".5g") if math.isfinite(value) else "—"


def sweep_figure(result: SweepResult, title: str = "") -> Figure:
    """A line figure (one swept number) or contours (two), one panel per effect."""
    n = len(result.effects)
    if len(result.ranges) == 1:
        figure = new_figure(6.8, 1.0 + 1.9 * n)
        axes = figure.subplots(n, 1, sharex=True, squeeze=False)[:, 0]
        x = result.points[:, 0]
        for e, ax in enumerate(axes):
            y = displayed(result, e)
            ax.plot(x, y, color=PALETTE[e % len(PALETTE)],
                    marker="o" if len(x) <= 40 else None, markersize=2.5)
            p = result.worst(e)
            ax.plot([x[p]], [y[p]], marker="D", color=INK, markersize=4, linestyle="none")
            right_half = x[p] > 0.5 * (x.min() + x.max())
            ax.annotate(f"{_short(y[p])} at {_short(x[p])}", (x[p], y[p]),
                        textcoords="offset points", xytext=(-6 if right_half else 6, -10),
                        ha="right" if right_half else "left", fontsize=7, color=INK)
            ax.set_ylabel(_wrapped(effect_title(result, e)))
        axes[-1].set_xlabel(_wrapped(axis_title(result, 0), 80))
    else:
        columns = 1 if n == 1 else 2
        rows = math.ceil(n / columns)
        figure = new_figure(3.6 * columns + 0.4, 0.9 + 3.0 * rows)
        grid = figure.subplots(rows, columns, squeeze=False)
        x1, x2 = (np.asarray(r.values) for r in result.ranges)
        for e in range(rows * columns):
            ax = grid[e // columns, e % columns]
            if e >= n:
                ax.set_visible(False)
                continue
            z = displayed(result, e).reshape(result.shape)
            filled = ax.contourf(x1, x2, z.T, levels=12, cmap=SEQUENTIAL)
            ax.contour(x1, x2, z.T, levels=filled.levels, colors=MUTED, linewidths=0.3)
            bar = figure.colorbar(filled, ax=ax)
            bar.set_label(_wrapped(effect_title(result, e)))
            p = result.worst(e)
            ax.plot([result.points[p, 0]], [result.points[p, 1]], marker="D", color="white",
                    markeredgecolor=INK, markersize=5, linestyle="none")
            ax.set_xlabel(_wrapped(axis_title(result, 0), 36))
            ax.set_ylabel(_wrapped(axis_title(result, 1), 36))
    heading = title or result.spec.model.title
    figure.suptitle(_wrapped(f"What-if sweep: {heading}", 90), fontsize=9)
    # the caution sits in a strip the layout keeps free, so it never covers a label
    figure.get_layout_engine().set(rect=(0.0, 0.03, 1.0, 0.97))
    figure.text(0.01, 0.004, CAUTION, fontsize=6, color=MUTED, ha="left", va="bottom")
    return figure


def _wrapped(text: str, width: int = 44) -> str:
    """Break a long label at spaces so it is never clipped."""
    words, lines, line = text.split(), [], ""
    for word in words:
        if line and len(line) + 1 + len(word) > width:
            lines.append(line)
            line = word
        else:
            line = f"{line} {word}".strip()
    lines.append(line)
    return "\n".join(lines)


def sweep_files(result: SweepResult, figure_format: str = "png", with_figure: bool = True
                ) -> dict[str, bytes | str]:
    """Finished contents, by file name: ``sweep.csv`` and ``sweep.<format>``."""
    files: dict[str, bytes | str] = {"sweep.csv": sweep_csv(result)}
    if with_figure:
        files[f"sweep.{figure_format}"] = figure_bytes(sweep_figure(result), figure_format)
    return files


def write_sweep(result: SweepResult, folder: str | Path, figure_format: str = "png",
                with_figure: bool = True) -> list[Path]:
    """Write the sweep's files into ``folder`` (created if missing), each whole or not at
    all; returns the paths written."""
    return write_all_atomic(folder, sweep_files(result, figure_format, with_figure))


def summary_lines(result: SweepResult) -> Sequence[str]:
    """Short lines for a terminal: what was swept and the worst point of each effect."""
    lines = [f"{len(result.points)} points: " + "; ".join(
        f"{r.path.text} from {_short(r.values[0])} to {_short(r.values[-1])} {r.label} "
        f"({len(r.values)} values)" for r in result.ranges)]
    for effect, value, where in worst_points(result):
        lines.append(f"worst {effect}: {value} at {where}")
    return lines


def notes(result: SweepResult) -> Sequence[str]:
    """What the reader must know about the sweep (shown with its results)."""
    return result.spec.notes
