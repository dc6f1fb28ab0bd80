"""``trundle sweep``: vary one or two numbers of a model file, follow the governing effects.

Thin: parse the options, build and run the sweep workflow, print a table, write the files.
Bad paths, ranges and effects end with one line ``error: …`` and exit code 2 (the group in
:mod:`trundle.cli` turns :class:`UserError` into that).
"""

from __future__ import annotations

import os
import sys
from pathlib import Path

import click
from rich.console import Console
from rich.table import Table
from rich.text import Text

from trundle.io.model_paths import MAX_POINTS_PER_AXIS, ModelPathError, valid_paths
from trundle.modelfile import load_model
from trundle.workflows.sweep import (
    DEFAULT_EFFECTS,
    MAX_POINTS,
    SweepError,
    SweepResult,
    SweepSpec,
    build_spec,
    run,
)

SWEEP_SAFETY_HELP = ("CAUTION: results are for checking by a qualified engineer; transcribed "
                     "load models must be verified against the edition in force; local codes "
                     "and licensed practice govern.")
_MAX_ROWS_SHOWN = 41


def register(group: click.Group) -> None:
    """Add the ``sweep`` command to the ``trundle`` group."""
    group.add_command(sweep_command)


def _user_error(message: str) -> click.ClickException:
    from trundle.cli import UserError  # the group's one-line, exit-2 error

    return UserError(message)


@click.command("sweep", epilog=SWEEP_SAFETY_HELP)
@click.argument("model_file", metavar="MODEL")
@click.option("--vary", "vary", multiple=True, metavar="PATH=START:STOP:STEP",
              help="A number of the model and its values, e.g. "
                   "'load.truck.spacings[2]=4.3:9:0.1 m'; once or twice (a contour). "
                   f"At most {MAX_POINTS_PER_AXIS:,} values each, {MAX_POINTS:,} points in all. "
                   "See --paths for the numbers this model has.")
@click.option("-e", "--effect", "effects", multiple=True, metavar="EFFECT",
              help="What to follow: '[loads|cranes] KIND max|min [span N [anywhere] | "
                   "support K | at X]', KIND one of moment, shear, deflection, reaction, "
                   "support_moment; spans from 1, supports from 0; repeat for several. "
                   f"Default: {', '.join(DEFAULT_EFFECTS)}.")
@click.option("-o", "--out", "out_dir", type=click.Path(file_okay=False, path_type=Path),
              help="Write sweep.csv (one row per point) and a figure into this folder.")
@click.option("--format", "figure_format", type=click.Choice(["png", "svg", "pdf"]),
              default="png", show_default=True, help="Figure format.")
@click.option("--no-figure", is_flag=True, help="With --out: write the table only.")
@click.option("--paths", "list_paths", is_flag=True,
              help="List the numbers of this model that can be varied, and stop.")
def sweep_command(model_file: str, vary: tuple[str, ...], effects: tuple[str, ...],
                  out_dir: Path | None, figure_format: str, no_figure: bool,
                  list_paths: bool) -> None:
    """What-if: vary one or two numbers of a model and tabulate the governing effects.

    At every point the model file is read again with the numbers replaced (so every value
    is checked as in the file) and the exact envelope of the effects asked for is computed.
    Paths are written like the keys in trundle's error messages (indices from 0); a
    [[load]] or [[crane]] may be named by its name, quoted when it has spaces. A range is
    START:STOP:STEP with the unit once at the end or on each number; without a unit the
    values take the unit of the number they replace. A searched spacing {min, max} swept
    becomes one value per point. When only loads change, the influence lines are reused.

    \b
    Examples:
      trundle sweep examples/harbour_lane_floor_girder_si.toml --paths
      trundle sweep examples/harbour_lane_floor_girder_si.toml \\
          --vary 'load."pallet forklift".spacings[0]=1.2:3.0:0.1 m' \\
          --effect "moment max span 2" --effect "reaction max support 1" --out results/
      trundle sweep examples/cranes/hall_kestrel_quay_si.toml \\
          --vary 'crane."20 t process crane".wheel_spacings[0]=3.0:5.0:0.25' \\
          --vary 'beam.spans[1]=6.5:8.5:0.5 m' --effect "reaction max support 1"
    """
    from trundle.report.sweep_section import CAUTIONS, effect_title, summary_lines
    from trundle.report.sweep_section import displayed as shown_values

    model = load_model(model_file)
    # a terminal, or COLUMNS when set, gives the width; piped output is 140 columns otherwise
    free = sys.stdout.isatty() or os.environ.get("COLUMNS", "").isdigit()
    console = Console(highlight=False, markup=False, soft_wrap=False,
                      width=None if free else 140)
    if list_paths:
        paths = valid_paths(model.raw)
        console.print(f"{len(paths)} numbers of {model_file} can be varied:")
        for path in paths:
            given = "" if path.given is None else f" = {path.given}"
            note = f" ({path.note})" if path.note else ""
            console.print(f"  {path.text}{given}  [{path.kind}]{note}")
        return
    if not vary:
        raise _user_error("--vary: expected one or two PATH=START:STOP:STEP (see --paths for "
                          "the numbers of this model), found none")
    if out_dir is not None and out_dir.exists() and not out_dir.is_dir():
        raise _user_error(f"--out {out_dir}: expected a folder, found a file")
    try:
        spec = build_spec(model, vary, effects or DEFAULT_EFFECTS)
        result = _run_with_progress(spec)
    except (ModelPathError, SweepError) as error:
        raise _user_error(str(error)) from None
    console.print(Text(model.title, style="bold"))
    for line in summary_lines(result):
        console.print(line)
    for note in spec.notes:
        console.print(Text(f"note: {note}"))
    table = Table(title=Text("the governing effects at each point", style="bold"),
                  title_justify="left")
    for r in result.ranges:
        table.add_column(Text(f"{r.path.text} [{r.label}]"), justify="right", overflow="fold")
    for e in range(len(result.effects)):
        table.add_column(Text(effect_title(result, e)), justify="right", overflow="fold")
        table.add_column(Text("load"), overflow="fold")
    columns = [shown_values(result, e) for e in range(len(result.effects))]
    rows = _rows_shown(len(result.points))
    for p in rows:
        if p < 0:
            table.add_row(*(["…"] * (len(result.ranges) + 2 * len(result.effects))))
            continue
        cells = [f"{v:.5g}" for v in result.points[p]]
        for e in range(len(result.effects)):
            cells += [f"{columns[e][p]:.5g}", result.load[p][e] or "—"]
        table.add_row(*cells)
    console.print(table)
    if len(rows) < len(result.points):
        console.print(f"({len(result.points)} points; every point is in sweep.csv with --out)",
                      style="dim")
    if out_dir is not None:
        from trundle.report.sweep_section import write_sweep

        try:
            written = write_sweep(result, out_dir, figure_format, with_figure=not no_figure)
        except OSError as error:
            raise _user_error(f"--out {out_dir}: cannot write ({error.strerror or error})") \
                from None
        console.print("wrote " + ", ".join(str(p) for p in written))
    for caution in CAUTIONS:
        console.print(caution, style="dim")


def _rows_shown(n: int) -> list[int]:
    """Every row of a short sweep; the first and last rows of a long one (−1: a gap)."""
    if n <= _MAX_ROWS_SHOWN:
        return list(range(n))
    half = _MAX_ROWS_SHOWN // 2
    return [*range(half), -1, *range(n - half, n)]


def _run_with_progress(spec: SweepSpec) -> SweepResult:
    """Run the sweep with a progress bar on a terminal, silently otherwise."""
    if not sys.stderr.isatty() or spec.n_points < 2:
        return run(spec)
    from rich.progress import BarColumn, MofNCompleteColumn, Progress, TimeRemainingColumn

    with Progress("sweep", BarColumn(), MofNCompleteColumn(), TimeRemainingColumn(),
                  console=Console(stderr=True), transient=True) as bar:
        task = bar.add_task("sweep", total=spec.n_points)
        return run(spec, lambda done, total: bar.update(task, completed=done))
