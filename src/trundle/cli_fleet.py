"""``trundle fleet`` and ``trundle permit``: parse, run the workflow, render.

Registered on the main command group by :func:`register`. Bad input ends with one line on
stderr and exit code 2, before anything is written: the traffic, the inventory and the
design model are all read and checked before the first work unit runs.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import click
from rich.console import Console
from rich.table import Table
from rich.text import Text

from trundle import cli_console as term
from trundle.io.inventory import InventoryError, read_inventory
from trundle.io.output_set import write_output_set
from trundle.io.outputs import Provenance
from trundle.io.traffic import TrafficFileError, read_traffic
from trundle.report import CAUTION, CAUTION_LINE, LOAD_MODEL_CAUTION
from trundle.report.format import decimals, fixed, verdict_cell

EXIT_EXCEEDS = 3  # permit: the run worked and a check exceeds its limit (1 is an internal error)


def _console() -> Console:
    return term.console()


def _inputs_error(error: Exception) -> click.ClickException:
    return click.ClickException(" ".join(str(error).split()))


def _check_out(out_dir: Path) -> None:
    if out_dir.exists() and not out_dir.is_dir():
        raise click.ClickException(f"--out {out_dir}: expected a folder, found a file")


def _provenance(*inputs: tuple[str, Path]) -> tuple[str, list[Any]]:
    """The comment line every CSV of the run starts with: each input file and its SHA-256
    (a folder of model files or a library name has none: "-"); and the same inputs for the
    report's traceability block."""
    from trundle.report.fleet_section import InputFile

    parts = []
    files = []
    found = Provenance()
    for label, path in inputs:
        found = Provenance.of_file(path)
        parts.append(f"{label} {path}; SHA-256 {found.sha256 or '-'}")
        files.append(InputFile(label, str(path), found.sha256))
    return (f"# trundle {found.version}; " + "; ".join(parts)
            + f"; computed {found.date}"), files


def _project(path: Path | None) -> Any:
    """The --project file's [project] table (None without the option); read before any
    work, so a bad file stops the run with one line and exit code 2."""
    if path is None:
        return None
    from trundle.io.modelfile import ModelFileError
    from trundle.io.project import read_project_file

    try:
        return read_project_file(path)
    except ModelFileError as error:
        raise _inputs_error(error) from None


def _write(out_dir: Path, files: dict[str, Any]) -> list[Path]:
    try:
        return write_output_set(out_dir, files)[0]
    except OSError as error:
        raise click.ClickException(f"--out {out_dir}: cannot write "
                                   f"({error.strerror or error})") from None


@click.command("fleet", epilog=CAUTION_LINE)
@term.verbosity_options
@click.argument("trucks", metavar="TRUCKS", type=click.Path(path_type=Path))
@click.argument("inventory", metavar="INVENTORY", type=click.Path(path_type=Path))
@click.option("--units", type=click.Choice(["SI", "US"], case_sensitive=False), default="SI",
              show_default=True, help="Units of the traffic file: SI (kN, m) or US (kip, ft).")
@click.option("--bad-rows", type=click.Choice(["fail", "skip"]), default="fail",
              show_default=True, help="A bad row refuses the file (fail) or is dropped and "
                                      "counted (skip).")
@click.option("--design", metavar="MODEL",
              help="Design load model for the ratios: library names or load-model files; "
                   "'a+b' acting together, 'a,b' enveloped.")
@click.option("-o", "--out", "out_dir", type=click.Path(path_type=Path),
              default=Path("out/fleet"), show_default=True,
              help="Folder for the partitions, tables, figures and report.html.")
@click.option("--scheduler", metavar="ADDRESS",
              help="Run on an existing Dask cluster (tcp://host:8786); default: a "
                   "LocalCluster on this machine, one worker per core.")
@click.option("--workers", type=click.IntRange(1, 512), help="LocalCluster workers.")
@click.option("--single-process", is_flag=True, help="No Dask: run in this process.")
@click.option("--truck-chunk", type=click.IntRange(1), default=50_000, show_default=True,
              help="Trucks per work unit.")
@click.option("--bridge-chunk", type=click.IntRange(1), default=4, show_default=True,
              help="Bridges per work unit.")
@click.option("--block", type=click.Choice(["day", "week"]), default="day", show_default=True,
              help="Block of the block maxima.")
@click.option("--fit", type=click.Choice(["gumbel", "gev"]), default="gumbel",
              show_default=True, help="Distribution fitted to the block maxima.")
@click.option("--period", type=click.FloatRange(min=0, min_open=True), default=75.0,
              show_default=True, help="Return period [years].")
@click.option("--fatigue", is_flag=True,
              help="Rainflow damage of each truck's exact moment history (turning points).")
@click.option("--project", "project_file", metavar="FILE", type=click.Path(path_type=Path),
              help="TOML file whose [project] table fills the report's project block (a "
                   "model file will do); without it the block is blank, to fill in by hand.")
@click.option("--no-figure", is_flag=True, help="Write no figures.")
@click.option("--no-progress", is_flag=True, help="Show no progress bar.")
def fleet_command(trucks: Path, inventory: Path, units: str, bad_rows: str, design: str | None,
                  out_dir: Path, scheduler: str | None, workers: int | None,
                  single_process: bool, truck_chunk: int, bridge_chunk: int, block: str,
                  fit: str, period: float, fatigue: bool, project_file: Path | None,
                  no_figure: bool, no_progress: bool) -> None:
    """Recorded traffic over a bridge inventory: per bridge and effect, the exact extreme of
    every truck, the distribution, block maxima with a fitted distribution and the return
    level for a period (bootstrap interval), the ratio to a design load model, and fatigue.

    TRUCKS is a CSV or Parquet file in the wide layout (id, timestamp, lane, direction,
    gross, axle_1 …, spacing_1 …; see the README). INVENTORY is a CSV with one bridge a
    row, or a folder of model files. Work runs on Dask; a rerun skips the partitions
    already written in --out.

    \b
    Example:
      trundle fleet examples/fleet/traffic_invented.csv \\
        examples/fleet/inventory.csv \\
        --design demo-heavy-vehicle-5-axle+demo-lane-load --out out/fleet
    """
    from trundle.io.design_models import design_model
    from trundle.report.fleet_section import cautions, fleet_files
    from trundle.workflows.fleet import FleetSpec, run

    _check_out(out_dir)
    if scheduler and single_process:
        raise click.ClickException("--scheduler and --single-process: expected one of them, "
                                   "found both")
    try:
        traffic = read_traffic(trucks, units=units, bad_rows=bad_rows)
        bridges = tuple(read_inventory(inventory))
    except (TrafficFileError, InventoryError) as error:
        raise _inputs_error(error) from None
    project = _project(project_file)
    model = design_model(design) if design else None  # every name checked before any scan
    # the partitions live beside the output set (which is replaced whole), so a rerun finds
    # them: <out>.work/partitions
    work_dir = out_dir.with_name(out_dir.name + ".work")
    spec = FleetSpec(traffic, bridges, work_dir, model, truck_chunk, bridge_chunk,
                     "none" if single_process else scheduler, workers, block, fit, period,
                     fatigue=fatigue, progress=not no_progress and term.progress_shown())
    console = _console()
    if traffic.skipped:
        console.print(f"skipped {len(traffic.skipped)} bad row(s) of {trucks} "
                      f"(listed in bad_rows_skipped.csv)")
    with term.step(f"fleet: {traffic.n_trucks} trucks over {len(bridges)} bridges"):
        result = run(spec)
    table = Table(title=f"{traffic.n_trucks} trucks over {len(bridges)} bridges "
                        f"({result.engine})")
    for column in ("bridge", "effect", "max", "min", "ratio", f"{period:g}-year level",
                   "interval"):
        table.add_column(column, overflow="fold",
                         justify="left" if column in ("bridge", "effect", "interval")
                         else "right")
    for s in result.summaries:
        sign = -1.0 if s.fit_note.startswith("statistics of −min") else 1.0
        rl = s.return_level
        ratio = max(s.ratio_max, s.ratio_min) if s.ratio_max == s.ratio_max else s.ratio_min
        places = decimals([s.maximum, s.minimum])
        table.add_row(s.bridge, s.effect, fixed(s.maximum, places), fixed(s.minimum, places),
                      fixed(ratio, 3) if ratio == ratio else verdict_cell(None),
                      fixed(sign * rl.value, places) if rl else verdict_cell(None),
                      f"{fixed(sign * rl.low, places)} … {fixed(sign * rl.high, places)}"
                      if rl else s.fit_note)
    term.print_renderable(console, table)
    comment, inputs = _provenance(("traffic file", trucks), ("inventory", inventory))
    written = _write(out_dir, fleet_files(result, figures=not no_figure, provenance=comment,
                                          inputs=inputs, project=project))
    console.print(f"partitions: {result.written} written, {result.skipped} already there, in "
                  f"{work_dir / 'partitions'}")
    console.print("wrote " + ", ".join(str(p) for p in written[:6])
                  + (f" and {len(written) - 6} more" if len(written) > 6 else ""))
    for caution in cautions(traffic.invented):
        console.print(caution, style="dim")
    ratios = [(max(s.ratio_max, s.ratio_min) if s.ratio_max == s.ratio_max else s.ratio_min,
               s.bridge, s.effect) for s in result.summaries]
    ratios = [r for r in ratios if r[0] == r[0]]
    if ratios:
        worst = max(ratios)
        term.say(f"largest ratio of the recorded extremes to the design model: "
                 f"{fixed(worst[0], 3)} ({worst[1]}, {worst[2]})")
    if term.quiet():
        term.say(f"{traffic.n_trucks} trucks over {len(bridges)} bridges: "
                 f"{len(result.summaries)} bridge effects summarised; wrote {len(written)} "
                 f"file(s) in {out_dir}")
        term.say(CAUTION_LINE, style="dim")


@click.command("permit", epilog=CAUTION_LINE)
@term.verbosity_options
@click.argument("vehicle", metavar="VEHICLE")
@click.argument("route", metavar="ROUTE", type=click.Path(path_type=Path))
@click.option("--design", metavar="MODEL", required=True,
              help="Design load model compared with: library names or load-model files; "
                   "'a+b' acting together, 'a,b' enveloped.")
@click.option("--impact", type=click.FloatRange(0, 200), default=0.0, show_default=True,
              help="Dynamic allowance on the permit vehicle's axles [%].")
@click.option("--limit", type=click.FloatRange(min=0, min_open=True), default=1.0,
              show_default=True, help="Largest acceptable ratio permit / design.")
@click.option("-o", "--out", "out_dir", type=click.Path(path_type=Path),
              help="Write permit.csv, permit.parquet and report.html into this folder.")
@click.option("--project", "project_file", metavar="FILE", type=click.Path(path_type=Path),
              help="TOML file whose [project] table fills the report's project block (a "
                   "model file will do); without it the block is blank, to fill in by hand.")
@click.option("--scheduler", metavar="ADDRESS",
              help="Run on an existing Dask cluster (tcp://host:8786); default: a "
                   "LocalCluster on this machine, one worker per core.")
@click.option("--workers", type=click.IntRange(1, 512), help="LocalCluster workers.")
@click.option("--single-process", is_flag=True, help="No Dask: run in this process.")
def permit_command(vehicle: str, route: Path, design: str, impact: float, limit: float,
                   out_dir: Path | None, project_file: Path | None, scheduler: str | None,
                   workers: int | None, single_process: bool) -> int:
    """Permit vehicle(s) over every bridge of a route: per bridge and effect, the ratio of
    the permit's effect (with the dynamic allowance given) to the design model's, flagged
    EXCEEDS above the limit, with the governing front-axle position and direction.

    VEHICLE is a load-model file or library name with fixed spacings; several are joined
    by commas. ROUTE is an inventory CSV (one bridge a row) or a folder of model files.
    Exit code 3 when any check exceeds the limit (2: bad input, 1: internal error).

    \b
    Example:
      trundle permit examples/fleet/permit_crane_carrier.toml \\
        examples/fleet/inventory.csv \\
        --design demo-heavy-vehicle-5-axle+demo-lane-load --impact 10 --limit 1.0
    """
    from trundle.io.design_models import design_model, permit_vehicle
    from trundle.report.fleet_section import permit_files
    from trundle.workflows.permit import PermitError, PermitSpec, run

    if out_dir is not None:
        _check_out(out_dir)
    try:
        bridges = tuple(read_inventory(route))
    except InventoryError as error:
        raise _inputs_error(error) from None
    project = _project(project_file)
    if scheduler and single_process:
        raise click.ClickException("--scheduler and --single-process: expected one of them, "
                                   "found both")
    vehicles = tuple(v.strip() for v in vehicle.split(",") if v.strip())
    model = design_model(design)
    for name in vehicles:  # refuse an unknown or indefinite vehicle before any scan
        permit_vehicle(name, bridges[0].units)
    try:
        with term.step(f"permit: {len(vehicles)} vehicle(s) over {len(bridges)} bridges"):
            result = run(PermitSpec(vehicles, permit_vehicle, bridges, model, impact / 100.0,
                                    limit, "none" if single_process else scheduler, workers,
                                    progress=term.progress_shown()))
    except PermitError as error:
        raise _inputs_error(error) from None
    console = _console()
    console.print(Text(f"Permit check: {', '.join(vehicles)} (+{impact:g} % dynamic allowance)"
                       f" against {design}, limit {limit:g}", style="bold"))
    for title, table in _permit_tables(result, several=len(vehicles) > 1):
        # narrow gaps (two characters) keep a bridge's table whole at 80 columns; rich wraps
        # its words should a console be narrower still
        console.print(Text(title, style="bold"))
        console.print(table)
    console.print("permit, design: the extremes on the side checked (max or min); travel of the "
                  "front axle: → towards +x (left to right), ← towards −x")
    term.say(f"{result.exceeds} of {len(result.rows)} checks EXCEED the limit"
             if result.exceeds else f"all {len(result.rows)} checks PASS (within the limit)")
    if out_dir is not None:
        comment, inputs = _provenance(*[("vehicle", Path(v)) for v in vehicles],
                                      ("route", route))
        written = _write(out_dir, permit_files(result, comment, inputs, project))
        console.print("wrote " + ", ".join(str(p) for p in written))
    console.print(CAUTION, style="dim")
    console.print(LOAD_MODEL_CAUTION, style="dim")
    if term.quiet():
        term.say(CAUTION_LINE, style="dim")
    return EXIT_EXCEEDS if result.exceeds else 0


def _permit_tables(result: Any, several: bool) -> list[tuple[str, Table]]:
    """One table per bridge, each value with its unit in a column of its own, the positions
    with the length unit in the heading (narrow enough for 80 columns)."""
    from rich import box

    from trundle.report.fleet_section import by_bridge, permit_report_tables
    from trundle.workflows.permit import EXCEEDS

    travel = {1: "→", -1: "←"}
    tables = []
    for shown, rows in zip(permit_report_tables(result), by_bridge(result.rows).values(),
                           strict=True):
        table = Table(box=box.SIMPLE_HEAD, pad_edge=False, padding=(0, 1, 0, 0),
                      show_edge=False)
        at = {c: k for k, c in enumerate(shown.columns)}
        position_heading = next(c for c in shown.columns if c.startswith("front axle at"))
        names = ["effect", "unit", *(("vehicle",) if several else ()), "side", "permit",
                 "design", "ratio", "verdict"]
        for name in names:
            table.add_column(name, overflow="fold",
                             justify="right" if name in ("permit", "design", "ratio")
                             else "left")
        # where the front axle stands and which way it travels, in one column
        table.add_column(position_heading.replace("front axle at", "axle at"), justify="right",
                         overflow="fold")
        for cells, row in zip(shown.rows, rows, strict=True):
            table.add_row(*(Text(cells[at[c]], style="bold red" if c == "verdict"
                                 and row.verdict == EXCEEDS else "") for c in names),
                          f"{cells[at[position_heading]]} "
                          f"{travel.get(int(row.direction), verdict_cell(None))}")
        tables.append((shown.title, table))
    return tables


def register(cli_group: click.Group) -> None:
    """Add ``fleet`` and ``permit`` to the main command group."""
    cli_group.add_command(fleet_command)
    cli_group.add_command(permit_command)
