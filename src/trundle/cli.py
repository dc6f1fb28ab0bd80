"""The ``trundle`` command: parse, call the library, print.

Bad input of any kind (model file, option values, output folder) ends with one line on
stderr, ``error: …``, and exit code 2; never a traceback, never a half-written output.
"""

from __future__ import annotations

import difflib
import sys
from collections.abc import Sequence
from pathlib import Path
from typing import Any, NoReturn

import click
from rich.console import Console
from rich.text import Text

from trundle._version import __version__
from trundle.core.beam import Beam, ModelError, Spring
from trundle.core.influence import Effect, InfluenceSet
from trundle.io.cranes import cranes_of, runway_spec
from trundle.io.loads import loads_of
from trundle.io.modelfile import Model, ModelFileError, load_model
from trundle.io.output_set import OutputSetError, check_out_option
from trundle.io.outputs import write_output_set
from trundle.io.units import UnitError, parse_quantity
from trundle.report import CAUTION, LOAD_MODEL_CAUTION

EFFECT_CHOICES = ("moment", "shear", "reaction", "deflection", "rotation", "support-moment")
_SECTION_KINDS = ("moment", "shear", "deflection", "rotation")
_SAFETY_HELP = ("CAUTION: results are for checking by a qualified engineer; local codes and "
                "licensed practice govern.")
_DESIGN_SAFETY_HELP = ("CAUTION: results are for checking by a qualified engineer; transcribed "
                       "load models must be verified against the edition in force; local codes "
                       "and licensed practice govern.")


class UserError(click.ClickException):
    """Bad input: printed as one line ``error: …``, exit code 2."""

    exit_code = 2

    def show(self, file: Any = None) -> None:
        click.echo(f"error: {_one_line(self.format_message())}", err=True)


def _one_line(text: str) -> str:
    return " ".join(str(text).split())


class _Commands(click.Group):
    """A click group whose every failure on bad input is one line on stderr, exit code 2."""

    def main(self, args: Sequence[str] | None = None, prog_name: str | None = None,
             complete_var: str | None = None, standalone_mode: bool = True,
             **extra: Any) -> Any:
        if not standalone_mode:
            return super().main(args, prog_name, complete_var, standalone_mode=False, **extra)
        try:
            result = super().main(args, prog_name, complete_var, standalone_mode=False,
                                  **extra)
        except click.exceptions.UsageError as error:
            where = error.ctx.command_path if error.ctx is not None else "trundle"
            _fail(f"{where}: {error.format_message()} (see '{where} --help')")
        except UserError as error:
            error.show()
            sys.exit(error.exit_code)
        except (ModelFileError, ModelError, UnitError) as error:
            _fail(str(error))
        except click.ClickException as error:
            _fail(error.format_message())
        except click.exceptions.Abort:
            click.echo("aborted", err=True)
            sys.exit(1)
        sys.exit(result if isinstance(result, int) else 0)


def _fail(message: str) -> NoReturn:
    click.echo(f"error: {_one_line(message)}", err=True)
    sys.exit(2)


def _console() -> Console:
    interactive = sys.stdout.isatty()
    return Console(highlight=False, markup=False, width=None if interactive else 140,
                   soft_wrap=False)


def _out_folder(value: str | None) -> Path | None:
    """The --out folder; a blank name is refused (it would mean the current folder)."""
    if value is None:
        return None
    try:
        return check_out_option(value)
    except OutputSetError as error:
        raise UserError(str(error)) from None


def _load(model_file: str) -> Model:
    return load_model(model_file)


@click.group(cls=_Commands, context_settings={"help_option_names": ["-h", "--help"]},
             invoke_without_command=True)
@click.version_option(__version__, prog_name="trundle")
@click.pass_context
def cli(context: click.Context) -> None:
    """trundle: exact influence lines for continuous beams, from a model file.

    \b
    Start with a model file (see docs/model-file.md and examples/):
      trundle summary examples/harbour_lane_floor_girder_si.toml
      trundle lines examples/harbour_lane_floor_girder_si.toml --effect moment --at 3.6
      trundle envelope examples/harbour_lane_floor_girder_si.toml --out results/
      trundle library
    """
    if context.invoked_subcommand is None:
        click.echo(context.get_help())


# ------------------------------------------------------------------------------------------
# trundle summary


@cli.command("summary")
@click.argument("model_file", metavar="MODEL")
def summary_command(model_file: str) -> None:
    """Check a model file and summarise the beam it describes.

    Prints spans, supports, hinges, flexural stiffness, the degree of indeterminacy and the
    sections where results will be reported. A model that cannot be analysed (unknown keys,
    wrong units, a mechanism, …) gives one line saying where and why.

    \b
    Example:
      trundle summary examples/millrace_access_bridge_us.toml
    """
    from trundle.report.tables import format_length, model_tables

    model = _load(model_file)
    beam, units = model.beam, model.units
    console = _console()
    length = units.label("length")
    console.print(model.title, style="bold")
    console.print(f"model file {model_file}; units {units.name} (force {units.force}, length "
                  f"{length}; deflection shown in {units.deflection})")
    description = model.raw.get("description")
    if description:
        console.print(" ".join(str(description).split()), style="dim")
    console.print(f"{beam.n_spans} span(s), total length {format_length(beam.length)} {length}; "
                  f"degree of indeterminacy {beam.degree_of_indeterminacy}")
    for table in model_tables(model):
        console.print(table)
    positions = ", ".join(format_length(x) for x in model.sections)
    console.print(f"{len(model.sections)} sections [{length}]: {positions}")
    if loads_of(model):
        from trundle.report.envelope_tables import model_loads_table, to_rich

        console.print(to_rich(model_loads_table(model)))
    if cranes_of(model):
        from trundle.report.crane_tables import model_cranes_tables
        from trundle.report.envelope_tables import to_rich

        for table in model_cranes_tables(model):
            console.print(to_rich(table))
    console.print(f"model is stable and complete: {len(beam.supports)} supports, "
                  f"{len(beam.hinges)} hinge(s), {len(beam.stiffness_segments)} stiffness "
                  "segment(s)")


# ------------------------------------------------------------------------------------------
# trundle lines


@cli.command("lines", epilog=_SAFETY_HELP)
@click.argument("model_file", metavar="MODEL")
@click.option("-e", "--effect", "effects", multiple=True, type=click.Choice(EFFECT_CHOICES),
              help="Effect to draw; repeat for several. Default: moment (reaction if only "
                   "--support is given).")
@click.option("--at", "positions", multiple=True, metavar="X",
              help="Section for moment, shear, deflection, rotation: a number in the model's "
                   "length unit or a value with a unit ('41 ft'); repeat for several. "
                   "Default: the model's [sections].")
@click.option("--support", "supports", multiple=True, type=int, metavar="K",
              help="Support number (0 = left end) for reaction and support-moment; repeat "
                   "for several. Default: every support that has one.")
@click.option("--side", type=click.Choice(["auto", "left", "right", "both"]), default="auto",
              show_default=True,
              help="Shear just left or right of the section; auto gives both sides at "
                   "interior supports (and both rotations at hinges).")
@click.option("-o", "--out", "out_dir", type=click.Path(file_okay=False),
              callback=lambda _context, _option, value: _out_folder(value),
              help="Write lines.csv, lines.json and a figure into this folder; files of an "
                   "earlier trundle run there that this run does not write are removed.")
@click.option("--format", "figure_format", type=click.Choice(["png", "svg", "pdf"]),
              default="png", show_default=True, help="Figure format.")
@click.option("--no-figure", is_flag=True, help="With --out: write the tables only.")
@click.option("--ordinates/--no-ordinates", default=None,
              help="Print ordinates at tenth points (default: when there are 6 lines or "
                   "fewer).")
def lines_command(model_file: str, effects: tuple[str, ...], positions: tuple[str, ...],
                  supports: tuple[int, ...], side: str, out_dir: Path | None,
                  figure_format: str, no_figure: bool, ordinates: bool | None) -> None:
    """Influence lines of a model: ordinates, extremes, CSV, JSON and a figure.

    An influence line gives an effect at a fixed section (or support) for a unit downward
    load standing at x; the lines are exact piecewise cubics. Signs: moment positive
    sagging, shear = upward resultant left of the section, reactions positive upward,
    deflection positive downward.

    \b
    Examples:
      trundle lines examples/harbour_lane_floor_girder_si.toml
      trundle lines examples/harbour_lane_floor_girder_si.toml -e moment -e shear \\
          --at 3.6 --at 7.2 -e reaction --support 1 --out results/
      trundle lines examples/millrace_access_bridge_us.toml -e deflection --at "33 ft"
    """
    from trundle.report.tables import extremes_table, ordinates_tables

    model = _load(model_file)
    beam, units = model.beam, model.units
    chosen = _choose_effects(model, effects, positions, supports, side)
    lines = beam.influence_set(chosen)
    console = _console()
    console.print(model.title, style="bold")
    console.print(f"model file {model_file}; {len(lines)} influence line(s) for a unit load "
                  f"of 1 {units.force}; x in {units.label('length')}")
    console.print(extremes_table(lines, beam, units))
    if ordinates or (ordinates is None and len(lines) <= 6):
        for table in ordinates_tables(lines, beam, units):
            console.print(table)
    elif ordinates is None:
        console.print(f"(ordinates at tenth points are not printed for {len(lines)} lines; "
                      "use --ordinates, or --out for the full CSV)", style="dim")
    if out_dir is not None:
        written = _write_outputs(model, model_file, lines, out_dir, figure_format,
                                 not no_figure)
        console.print("wrote " + ", ".join(str(p) for p in written))
    console.print(CAUTION, style="dim")


def _choose_effects(model: Model, kinds: Sequence[str], positions: Sequence[str],
                    supports: Sequence[int], side: str) -> list[Effect]:
    beam = model.beam
    if not kinds:
        kinds = ("reaction",) if supports and not positions else ("moment",)
    kinds = list(dict.fromkeys(kinds))
    section_kinds = [k for k in kinds if k in _SECTION_KINDS]
    support_kinds = [k.replace("-", "_") for k in kinds if k not in _SECTION_KINDS]
    if positions and not section_kinds:
        raise UserError("--at: expected with --effect moment, shear, deflection or rotation, "
                        f"found only {', '.join(kinds)}")
    if supports and not support_kinds:
        raise UserError("--support: expected with --effect reaction or support-moment, found "
                        f"only {', '.join(kinds)}")
    sections = [_position(beam, model, p) for p in positions] if positions else \
        list(model.sections)
    n_supports = len(beam.supports)
    for k in supports:
        if not 0 <= k < n_supports:
            raise UserError(f"--support: expected a support number 0 to {n_supports - 1}, "
                            f"found {k}")
    chosen: list[Effect] = []
    for kind in kinds:
        if kind in _SECTION_KINDS:
            for x in sections:
                chosen.extend(Effect(kind, at=x, side=s) for s in _sides(beam, kind, x, side))
            continue
        effect_kind = kind.replace("-", "_")
        numbers = list(dict.fromkeys(supports)) if supports else \
            [i for i, s in enumerate(beam.supports) if _has(effect_kind, s)]
        if not numbers:
            needed = "holds the beam" if effect_kind == "reaction" else "restrains rotation"
            raise UserError(f"--effect {kind}: expected a support that {needed}, found none "
                            "in this model")
        for k in numbers:
            if not _has(effect_kind, beam.supports[k]):
                what = "is free: it has no reaction" if effect_kind == "reaction" else \
                    "does not restrain rotation: it has no reaction couple"
                raise UserError(f"--support {k}: expected a support with a {kind}, found one "
                                f"that {what}")
            chosen.append(Effect(effect_kind, support=k))
    return chosen


def _has(kind: str, support: Any) -> bool:
    if kind == "reaction":
        return support != "free"
    return support == "fixed" or (isinstance(support, Spring) and support.kr is not None)


def _position(beam: Beam, model: Model, text: str) -> float:
    units = model.units
    try:
        x = parse_quantity(text, "position", units)
    except UnitError as error:
        raise UserError(f"--at: {error}") from None
    tolerance = 1e-9 * beam.length
    if not -tolerance <= x <= beam.length + tolerance:
        raise UserError(f"--at: expected a position on the beam (0 to {beam.length:g} "
                        f"{units.label('length')}), found \"{text}\"")
    return min(max(x, 0.0), beam.length)


def _sides(beam: Beam, kind: str, x: float, side: str) -> list[str | None]:
    tolerance = 1e-9 * beam.length
    at_left_end, at_right_end = x <= tolerance, x >= beam.length - tolerance
    if kind == "shear":
        if side in ("left", "right"):
            return [side]
        if at_left_end:
            return ["right"]
        if at_right_end:
            return ["left"]
        at_support = any(abs(x - s) <= tolerance for s in beam.support_positions)
        return ["left", "right"] if side == "both" or at_support else ["right"]
    if kind == "rotation" and any(abs(x - h) <= tolerance for h in beam.hinges):
        return ["left", "right"] if side in ("auto", "both") else [side]
    return [None]


def _write_outputs(model: Model, model_file: str, lines: InfluenceSet, out_dir: Path,
                   figure_format: str, with_figure: bool) -> list[Path]:
    from trundle.report.tables import lines_csv, lines_json, sample

    beam, units = model.beam, model.units
    if out_dir.exists() and not out_dir.is_dir():
        raise UserError(f"--out {out_dir}: expected a folder, found a file")
    generator = f"trundle {__version__}"
    sampled = sample(lines, beam, units, per_span=40, extra=beam.tenth_points())
    from trundle.io.outputs import Provenance

    files: dict[str, bytes | str] = {
        "lines.csv": Provenance.of_file(model_file).csv_comment() + "\n"
        + lines_csv(lines, beam, units, sampled),
        "lines.json": lines_json(lines, beam, units, sampled, model.title, model_file,
                                 generator),
    }
    if with_figure:
        from trundle.report.figures import figure_bytes, influence_figure

        axes = influence_figure(lines, beam, units, model.title, source=model_file,
                                generator=generator)
        files[f"lines.{figure_format}"] = figure_bytes(axes[0].figure, figure_format)
    try:
        return write_output_set(out_dir, files)[0]
    except OSError as error:
        raise UserError(f"--out {out_dir}: cannot write ({error.strerror or error})") from None


# ------------------------------------------------------------------------------------------
# trundle envelope


@cli.command("envelope", epilog=_DESIGN_SAFETY_HELP)
@click.argument("model_file", metavar="MODEL")
@click.option("-o", "--out", "out_dir", type=click.Path(file_okay=False),
              callback=lambda _context, _option, value: _out_folder(value),
              help="Write envelope.csv, reactions.csv, envelope.json, the figures and "
                   "report.html into this folder; files of an earlier trundle run there "
                   "that this run does not write again are removed.")
@click.option("--format", "figure_format", type=click.Choice(["png", "svg"]), default="png",
              show_default=True, help="Format of the figure files (the report embeds PNG).")
@click.option("--no-figure", is_flag=True, help="With --out: write no figure files.")
@click.option("--no-report", is_flag=True, help="With --out: write no report.html.")
def envelope_command(model_file: str, out_dir: Path | None, figure_format: str,
                     no_figure: bool, no_report: bool) -> None:
    """Envelopes of moment, shear, deflection and reactions under the model's loads.

    Runs every [[load]] of the model file (vehicles both ways unless one way, trains,
    uniform load placed where it is adverse, library load models) over the model's sections
    and prints, per span and per support, the governing values with the load that causes
    them, its direction of travel, where it stands and the spacings found. Values include
    each load's impact and factors. With --out it also writes the CSV and JSON tables, the
    figures and a self-contained HTML report.

    A model with [[crane]] tables and a [runway] table also gets the crane runway checks:
    wheel loads from the crane data, worst reactions per support with and without impact,
    moment and shear with impact, vertical and lateral deflection against the limits,
    longitudinal forces and fatigue ranges (runway-*.csv and runway-*.png with --out).
    Crane defaults (impact, lateral and longitudinal fractions, limits, cycles) must be
    verified against the governing guide/code.

    \b
    Example:
      trundle envelope examples/harbour_lane_floor_girder_si.toml --out results/
      trundle envelope examples/millrace_access_bridge_us.toml -o results --format svg
      trundle envelope examples/cranes/hall_kestrel_quay_si.toml --out results/
    """
    from trundle.io.loads import loads_of
    from trundle.io.outputs import Provenance
    from trundle.report.envelope_data import collect
    from trundle.report.sections import SECTIONS
    from trundle.workflows import moving_loads
    from trundle.workflows.crane_runway import analyse_runway

    model = _load(model_file)
    if out_dir is not None and out_dir.exists() and not out_dir.is_dir():
        raise UserError(f"--out {out_dir}: expected a folder, found a file")
    entries = loads_of(model)
    moving = None
    if entries:
        moving = moving_loads.run(moving_loads.MovingLoadsSpec(
            model.beam, [entry.case for entry in entries], sections=model.sections))
    spec = runway_spec(model)
    runway = (analyse_runway(model.beam, spec, sections=model.sections)
              if spec is not None else None)
    results = collect(model, Provenance.of_file(model_file), moving, providers=SECTIONS,
                      runway=runway)
    console = _console()
    for renderable in _envelope_summary(results):
        console.print(renderable)
    if out_dir is not None:
        from trundle.report.envelope_report import envelope_files

        files = envelope_files(results, figure_format, with_figures=not no_figure,
                               with_report=not no_report)
        try:
            written, removed = write_output_set(out_dir, files)
        except OSError as error:
            raise UserError(f"--out {out_dir}: cannot write ({error.strerror or error})") \
                from None
        console.print("wrote " + ", ".join(str(p) for p in written))
        if removed:
            console.print("removed the earlier run's " + ", ".join(p.name for p in removed))
    for caution in _envelope_cautions(results):
        console.print(caution, style="dim")


def _envelope_summary(results: Any) -> list[Any]:
    from trundle.report.envelope_tables import loads_table, summary_tables, to_rich

    units = results.units
    values = ("values include impact and factors" if results.has_loads
              else "crane runway only (no [[load]] tables)")
    header = [results.model.title, f"model file {results.model_file}; units {units.name}; "
              f"{len(results.sections)} sections; {values}; "
              "travel → towards +x, ← towards -x"]
    out: list[Any] = [Text(header[0], style="bold"), Text(header[1])]
    if results.has_loads:
        out.append(to_rich(loads_table(results)))
    out.extend(to_rich(t) for t in summary_tables(results))
    for section in results.extra:
        out.append(Text(section.title, style="bold"))
        out.extend(to_rich(t) for t in section.tables)
        out.extend(Text(note) for note in section.notes)
    return out


def _envelope_cautions(results: Any) -> list[str]:
    from trundle.report.envelope_report import cautions

    return cautions(results)


# ------------------------------------------------------------------------------------------
# trundle library


@cli.command("library", epilog=_DESIGN_SAFETY_HELP)
@click.argument("name", required=False, metavar="[NAME]")
def library_command(name: str | None) -> None:
    """List the built-in load models, or show one in detail.

    A model file uses one with `use = "NAME"` in a [[load]] table (see docs/model-file.md).
    The models shipped now are invented examples, not code load models.

    \b
    Examples:
      trundle library
      trundle library demo-heavy-vehicle-5-axle
    """
    from trundle.io.loads import read_library, read_library_model
    from trundle.loads import library
    from trundle.report.envelope_tables import library_detail, library_table, to_rich

    console = _console()
    if name is None:
        console.print(to_rich(library_table(read_library())))
        console.print(f"folder: {library.folder()}", style="dim")
    else:
        names = library.names()
        if name not in names:
            hint = difflib.get_close_matches(name, names, n=1, cutoff=0.5)
            extra = f' (did you mean "{hint[0]}"?)' if hint else ""
            raise UserError(f"library NAME: expected one of {', '.join(names)}, found "
                            f'"{name}"{extra}')
        for renderable in library_detail(read_library_model(name)):
            console.print(to_rich(renderable) if not isinstance(renderable, str)
                          else Text(renderable))
    console.print(LOAD_MODEL_CAUTION, style="dim")


def main() -> None:
    """Entry point of the ``trundle`` script and of ``python -m trundle``."""
    cli(prog_name="trundle")
