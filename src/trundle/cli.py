"""The ``trundle`` command: parse, call the library, print.

Exit codes: 0 when the command ran (a check that EXCEEDS is shown as such in the output;
``permit`` alone returns 3 when a check exceeds its limit, for scripts); 2 for bad input of
any kind (model file, option values, output folder): one line on stderr, ``error: …``, never a
traceback, never a half-written output; 1 for an internal error (a defect of trundle): one
line with a hint to rerun with ``--verbose``, which adds the traceback.
"""

from __future__ import annotations

import difflib
import sys
import traceback
from collections.abc import Sequence
from pathlib import Path
from typing import Any, NoReturn

import click
from rich.console import Console
from rich.text import Text

from trundle import cli_console as term
from trundle._version import __version__
from trundle.core.beam import Beam, ModelError, Spring
from trundle.core.influence import Effect, InfluenceSet
from trundle.io.cranes import cranes_of, runway_spec
from trundle.io.loads import loads_of
from trundle.io.model_paths import MAX_POINTS_PER_AXIS
from trundle.io.modelfile import Model, ModelFileError, load_model
from trundle.io.output_set import OutputSet, OutputSetError, check_out_option, write_output_set
from trundle.io.outputs import Provenance
from trundle.io.plausibility import deflection_warnings, model_warnings
from trundle.io.units import UnitError, parse_quantity
from trundle.report import CAUTION, CAUTION_LINE, LOAD_MODEL_CAUTION
from trundle.report.safe_text import terminal_text
from trundle.workflows.sweep import DEFAULT_EFFECTS, MAX_POINTS

EFFECT_CHOICES = ("moment", "shear", "reaction", "deflection", "rotation", "support-moment")
_SECTION_KINDS = ("moment", "shear", "deflection", "rotation")
_SAFETY_HELP = CAUTION_LINE  # one wording in every command's help and in the terminal


class UserError(click.ClickException):
    """Bad input: printed as one line ``error: …``, exit code 2."""

    exit_code = 2

    def show(self, file: Any = None) -> None:
        click.echo(f"error: {_one_line(self.format_message())}", err=True)


def _one_line(text: str) -> str:
    return terminal_text(str(text))  # one line, no control characters


class _Commands(click.Group):
    """A click group whose every failure on bad input is one line on stderr, exit code 2."""

    def main(self, args: Sequence[str] | None = None, prog_name: str | None = None,
             complete_var: str | None = None, standalone_mode: bool = True,
             **extra: Any) -> Any:
        term.set_level(term.NORMAL)  # every invocation starts afresh (tests run in-process)
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
        except (ModelFileError, ModelError, UnitError, OutputSetError) as error:
            _fail(str(error))
        except click.ClickException as error:
            _fail(error.format_message())
        except click.exceptions.Abort:
            click.echo("aborted", err=True)
            sys.exit(1)
        except Exception as error:  # a defect of trundle, not of the input: short, exit 1
            _internal_error(error)
        sys.exit(result if isinstance(result, int) else 0)


def _internal_error(error: BaseException) -> NoReturn:
    """One line (exit code 1) for an error that is trundle's, not the input's; the traceback
    only with --verbose."""
    if term.verbose():
        traceback.print_exception(error, file=sys.stderr)
        hint = "please report it with the traceback above and the model file"
    else:
        hint = "rerun with --verbose for the traceback"
    click.echo(f"error: internal error ({type(error).__name__}: "
               f"{_one_line(str(error))[:200]}); {hint}", err=True)
    sys.exit(1)


def _fail(message: str) -> NoReturn:
    click.echo(f"error: {_one_line(message)}", err=True)
    sys.exit(2)


def _console() -> Console:
    return term.console()


def _show(console: Console, renderable: Any, style: str | None = None) -> None:
    """A table fitted to the width (cut into parts if need be), or any other renderable."""
    term.print_renderable(console, renderable, style)


def _out_folder(value: str | None) -> Path | None:
    """The --out folder; a blank name is refused (it would mean the current folder)."""
    if value is None:
        return None
    try:
        return check_out_option(value)
    except OutputSetError as error:
        raise UserError(str(error)) from None


def _load(model_file: str, allow_paths: Sequence[str] = ()) -> Model:
    """Read the model file and print its plausibility warnings (one line each, stderr)."""
    model = load_model(model_file, allowed=allow_paths)
    _warn(model_warnings(model))
    return model


def _warn(warnings: Sequence[str]) -> None:
    for warning in warnings:
        click.echo(_one_line(warning), err=True)


def _allow_path_option(function: Any) -> Any:
    return click.option(
        "--allow-path", "allow_paths", multiple=True, metavar="DIR",
        type=click.Path(exists=True, file_okay=False),
        help="A folder outside the model file's folder from which `use` may read load-model "
             "files (by default only the model's folder tree and the library); repeat for "
             "several.")(function)


@click.group(cls=_Commands, context_settings={"help_option_names": ["-h", "--help"]},
             invoke_without_command=True)
@click.version_option(__version__, prog_name="trundle")
@term.verbosity_options
@click.pass_context
def cli(context: click.Context) -> None:
    """trundle: exact influence lines for continuous beams, from a model file.

    \b
    Start with a model file (see docs/model-file.md and examples/):
      trundle summary examples/harbour_lane_floor_girder_si.toml
      trundle lines examples/harbour_lane_floor_girder_si.toml --at 3.6
      trundle envelope examples/harbour_lane_floor_girder_si.toml --out results/
      trundle library

    Exit codes: 0 done, 2 bad input (one line naming the file, key, expected and found),
    1 internal error (rerun with --verbose for the traceback), 3 permit: a check exceeds.

    \b
    Shell completion (bash):
      eval "$(_TRUNDLE_COMPLETE=bash_source trundle)"
    zsh and fish: see the README.
    """
    if context.invoked_subcommand is None:
        click.echo(context.get_help())


# ------------------------------------------------------------------------------------------
# trundle summary


@cli.command("summary", epilog=_SAFETY_HELP)
@term.verbosity_options
@click.argument("model_file", metavar="MODEL")
@_allow_path_option
def summary_command(model_file: str, allow_paths: tuple[str, ...]) -> None:
    """Check a model file and summarise everything it describes.

    Prints the beam (spans, supports, hinges, flexural stiffness, degree of indeterminacy),
    the sections where results will be reported, the [[load]] tables, the cranes and the
    [runway] settings, the design tables ([[design_load]], [[permanent]], [[live_pattern]],
    [[lane_length_load]], [[combination]], [design]) and any other table of the file, as read.
    A model that cannot be analysed (unknown keys, wrong units, a mechanism, …) gives one
    line saying where and why.

    \b
    Example:
      trundle summary examples/millrace_access_bridge_us.toml
      trundle summary examples/design/quarry_yard_floor_beam_si.toml
    """
    from trundle.report.envelope_tables import to_rich
    from trundle.report.tables import format_length, model_tables

    with term.step("read and check the model file"):
        model = _load(model_file, allow_paths)
    beam, units = model.beam, model.units
    console = _console()
    length = units.label("length")
    console.print(terminal_text(model.title), style="bold")
    console.print(terminal_text(f"model file {model_file}; units {units.name} (force "
                                f"{units.force}, length {length}; deflection shown in "
                                f"{units.deflection})"))
    description = model.raw.get("description")
    if description:
        console.print(terminal_text(str(description)), style="dim")
    console.print(f"{beam.n_spans} span(s), total length {format_length(beam.length)} {length}; "
                  f"degree of indeterminacy {beam.degree_of_indeterminacy}")
    for table in model_tables(model):
        _show(console, table)
    positions = ", ".join(format_length(x) for x in model.sections)
    console.print(f"{len(model.sections)} sections [{length}]: {positions}")
    parts = [f"{beam.n_spans} span(s)", f"{len(model.sections)} sections"]
    if loads_of(model):
        from trundle.report.envelope_tables import model_loads_table

        _show(console, to_rich(model_loads_table(model)))
        parts.append(f"{len(loads_of(model))} load(s)")
    if cranes_of(model):
        from trundle.report.crane_tables import model_cranes_tables

        for table in model_cranes_tables(model):
            _show(console, to_rich(table))
        parts.append(f"{len(cranes_of(model))} crane(s)")
    for title, table in _as_written_tables(model):
        _show(console, _key_value_table(title, table))
    design_parts = _design_summary(console, model)
    parts.extend(design_parts)
    console.print(f"model is stable and complete: {len(beam.supports)} supports, "
                  f"{len(beam.hinges)} hinge(s), {len(beam.stiffness_segments)} stiffness "
                  "segment(s)")
    if term.quiet():
        term.say(terminal_text(f"{model_file}: model is stable and complete ("
                               + ", ".join(parts) + ")"))


# tables the summary shows as written (key = value), beside those it describes in detail
_DESCRIBED = frozenset({"title", "units", "description", "beam", "sections", "load", "crane",
                        "design_load", "permanent", "live_pattern", "lane_length_load",
                        "combination"})


def _as_written_tables(model: Model) -> list[tuple[str, dict[str, Any]]]:
    """The single tables of the file not described elsewhere ([runway], [design], [project],
    …): shown key by key as written, so the summary leaves out no part of the model."""
    return [(f"[{key}] as written", value) for key, value in model.raw.items()
            if key not in _DESCRIBED and isinstance(value, dict)]


def _key_value_table(title: str, table: dict[str, Any]) -> Any:
    from rich.table import Table

    from trundle.io.units import show_value

    out = Table(title=Text(terminal_text(title), style="bold"), title_justify="left")
    out.add_column("key", overflow="fold")
    out.add_column("value", overflow="fold")
    for key, value in table.items():
        out.add_row(terminal_text(str(key)), terminal_text(show_value(value)))
    return out


def _design_summary(console: Console, model: Model) -> list[str]:
    """Tables of the design tables the model has (what each design case, permanent load,
    pattern and combination is, as read); the parts for the one-line summary."""
    from rich.table import Table

    from trundle.io.design_tables import design_model_of, has_design_tables
    from trundle.report.format import length as fmt

    if not has_design_tables(model):
        return []
    design = design_model_of(model)
    units = model.units
    L, F = units.label("length"), units.label("force")
    parts: list[str] = []

    def table(title: str, *columns: str) -> Table:
        out = Table(title=Text(title, style="bold"), title_justify="left")
        for column in columns:
            out.add_column(column, overflow="fold")
        return out

    if design.design_loads:
        cases = table("Design cases ([[design_load]])", "case", "alternatives (factor)",
                      "parameters")
        for case in design.design_loads:
            alternatives = "; ".join(f"{a.name} ({fmt(a.factor)})" for a in case.alternatives)
            parameters = ", ".join(f"{k} = {v}" for k, v in case.parameters) or "—"
            cases.add_row(terminal_text(case.name), terminal_text(alternatives),
                          terminal_text(parameters))
        _show(console, cases)
        parts.append(f"{len(design.design_loads)} design case(s)")
    if design.permanent:
        per_length = f"{F}/{L}"
        unit_of = {"point": F, "couple": units.label("moment")}
        loads = table("Permanent loads ([[permanent]])", "name", "category", "kind",
                      "value", f"where [{L}]")
        for p in design.permanent:
            where = (f"{fmt(p.start)} to {fmt(p.end)}" if p.start is not None
                     else fmt(p.at) if p.at is not None else "whole beam")
            loads.add_row(terminal_text(p.name), terminal_text(p.category), p.kind,
                          f"{fmt(p.value)} {unit_of.get(p.kind, per_length)}", where)
        _show(console, loads)
        parts.append(f"{len(design.permanent)} permanent load(s)")
    if design.live_patterns or design.lane_length_loads:
        live = table("Patterned live load ([[live_pattern]], [[lane_length_load]])", "name",
                     "load", "placement")
        for name, w, placement in design.live_patterns:
            live.add_row(terminal_text(name), f"{fmt(w)} {F}/{L}",
                         "whole spans, worst set" if placement == "spans"
                         else "wherever adverse")
        for name, _intensity, loaded_set in design.lane_length_loads:
            live.add_row(terminal_text(name), "by loaded length",
                         "worst loaded set" if loaded_set else "as given")
        _show(console, live)
        parts.append(f"{len(design.live_patterns) + len(design.lane_length_loads)} "
                     "live pattern(s)")
    if design.combinations:
        combos = table("Combinations ([[combination]])", "name", "permanent factors "
                       "(max / min)", "live", "source")
        for c in design.combinations:
            factors = ", ".join(f"{k} {fmt(hi)} / {fmt(lo)}" for k, (hi, lo)
                                in c.permanent.items()) or "—"
            combos.add_row(terminal_text(c.name), factors, fmt(c.live),
                           terminal_text(c.provenance or "—"))
        _show(console, combos)
        parts.append(f"{len(design.combinations)} combination(s)")
    return parts


# ------------------------------------------------------------------------------------------
# trundle lines


@cli.command("lines", epilog=_SAFETY_HELP)
@term.verbosity_options
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
@_allow_path_option
def lines_command(model_file: str, effects: tuple[str, ...], positions: tuple[str, ...],
                  supports: tuple[int, ...], side: str, out_dir: Path | None,
                  figure_format: str, no_figure: bool, ordinates: bool | None,
                  allow_paths: tuple[str, ...]) -> None:
    """Influence lines of a model: ordinates, extremes, CSV, JSON and a figure.

    An influence line gives an effect at a fixed section (or support) for a unit downward
    load standing at x; the lines are exact piecewise cubics (inside a haunch: within 1e-8
    of the line's largest ordinate). Signs: moment positive
    sagging, shear = upward resultant left of the section, reactions positive upward,
    deflection positive downward.

    \b
    Examples:
      trundle lines examples/harbour_lane_floor_girder_si.toml
      trundle lines examples/harbour_lane_floor_girder_si.toml -e moment \\
          -e shear --at 3.6 --at 7.2 -e reaction --support 1 --out results/
      trundle lines examples/millrace_access_bridge_us.toml -e deflection \\
          --at "33 ft"
    """
    with term.step("read and check the model file"):
        model = _load(model_file, allow_paths)
    chosen = _choose_effects(model, effects, positions, supports, side)
    with _output_set(out_dir, "lines") as outputs:  # locked before the work, swapped at the end
        with term.step(f"{len(chosen)} influence line(s)"):
            lines = model.beam.influence_set(chosen)
        _lines_report(model, model_file, lines, outputs, figure_format, no_figure, ordinates)


def _lines_report(model: Model, model_file: str, lines: InfluenceSet,
                  outputs: OutputSet | None, figure_format: str, no_figure: bool,
                  ordinates: bool | None) -> None:
    from trundle.report.tables import extremes_table, ordinates_tables

    beam, units = model.beam, model.units
    console = _console()
    console.print(terminal_text(model.title), style="bold")
    console.print(terminal_text(f"model file {model_file}; {len(lines)} influence line(s) "
                                f"for a unit load of 1 {units.force}; x in "
                                f"{units.label('length')}"))
    _show(console, extremes_table(lines, beam, units))
    if ordinates or (ordinates is None and len(lines) <= 6):
        for table in ordinates_tables(lines, beam, units):
            _show(console, table)
    elif ordinates is None:
        console.print(f"(ordinates at tenth points are not printed for {len(lines)} lines; "
                      "use --ordinates, or --out for the full CSV)", style="dim")
    if outputs is not None:
        written, removed = outputs.commit(_lines_files(model, model_file, lines, figure_format,
                                                       not no_figure))
        _print_written(console, written, removed)
    console.print(CAUTION, style="dim")
    if term.quiet():
        term.say(terminal_text(f"{model_file}: {len(lines)} influence line(s)"
                               + (f"; wrote {len(written)} file(s) in {outputs.shown}"
                                  if outputs is not None else "")))
        term.say(CAUTION_LINE, style="dim")


class _NoOutputs:
    """Stands in for an OutputSet when there is no --out."""

    def __enter__(self) -> None:
        return None

    def __exit__(self, *exception: object) -> None:
        return None


def _output_set(out_dir: Path | None, command: str) -> OutputSet | _NoOutputs:
    """The output set of --out (locked on entry, refused at once if another run writes into
    the folder or it holds another command's outputs), or nothing without --out."""
    return OutputSet(out_dir, command=command) if out_dir is not None else _NoOutputs()


def _print_written(console: Console, written: Sequence[Path], removed: Sequence[Path]) -> None:
    console.print(terminal_text("wrote " + ", ".join(str(p) for p in written)))
    if removed:
        console.print(terminal_text("removed the earlier run's "
                                    + ", ".join(p.name for p in removed)))


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


def _lines_files(model: Model, model_file: str, lines: InfluenceSet, figure_format: str,
                 with_figure: bool) -> dict[str, bytes | str]:
    from trundle.report.tables import lines_csv, lines_json, sample

    beam, units = model.beam, model.units
    generator = f"trundle {__version__}"
    sampled = sample(lines, beam, units, per_span=40, extra=beam.tenth_points())
    files: dict[str, bytes | str] = {
        "lines.csv": lines_csv(lines, beam, units, sampled,
                               Provenance.of_model(model, model_file)),
        "lines.json": lines_json(lines, beam, units, sampled, model.title, model_file,
                                 generator),
    }
    if with_figure:
        from trundle.report.figures import figure_bytes, influence_figure

        axes = influence_figure(lines, beam, units, model.title, source=model_file,
                                generator=generator)
        files[f"lines.{figure_format}"] = figure_bytes(axes[0].figure, figure_format)
    return files


# ------------------------------------------------------------------------------------------
# trundle envelope


@cli.command("envelope", epilog=_SAFETY_HELP)
@term.verbosity_options
@click.argument("model_file", metavar="MODEL")
@click.option("-o", "--out", "out_dir", type=click.Path(file_okay=False),
              callback=lambda _context, _option, value: _out_folder(value),
              help="Write envelope.csv, reactions.csv, envelope.json, the figures and "
                   "report.html into this folder; files of an earlier trundle run there "
                   "that this run does not write again are removed.")
@click.option("--format", "figure_format", type=click.Choice(["png", "svg"]), default="png",
              show_default=True,
              help="Format of the figure files (the report draws its figures inline as SVG "
                   "either way).")
@click.option("--no-figure", is_flag=True, help="With --out: write no figure files.")
@click.option("--no-report", is_flag=True, help="With --out: write no report.html.")
@click.option("--full", is_flag=True,
              help="Print every table in full: the inputs as read, the defaults in use, where "
                   "each load stands, concurrent shear, every check. Without it the terminal "
                   "shows the governing values, the tenth-point table, each check summarised "
                   "and the verdicts (every section is in the CSV files and report.html).")
@_allow_path_option
def envelope_command(model_file: str, out_dir: Path | None, figure_format: str,
                     no_figure: bool, no_report: bool, full: bool,
                     allow_paths: tuple[str, ...]) -> None:
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

    A model with design tables ([[design_load]] such as use = "hl93", [[permanent]],
    [[live_pattern]], [[lane_length_load]], [[combination]], [design]) also gets the design
    envelope: every live case's own envelope, the factored design envelope of every
    combination with the governing case and the rule that excluded a case, critical shear
    sections and the live-load deflection check (design-*.csv and design-*.png with --out).
    Published load models are transcribed from memory: verify them against the edition in
    force.

    \b
    Example:
      trundle envelope examples/harbour_lane_floor_girder_si.toml --out results/
      trundle envelope examples/millrace_access_bridge_us.toml -o results \\
          --format svg
      trundle envelope examples/cranes/hall_kestrel_quay_si.toml --out results/
      trundle envelope examples/design/alder_creek_overpass_hl93_us.toml \\
          --out results/
    """
    with term.step("read and check the model file"):
        model = _load(model_file, allow_paths)
    with _output_set(out_dir, "envelope") as outputs:  # locked before the work
        _envelope_run(model, model_file, outputs, figure_format, no_figure, no_report, full)


def _envelope_run(model: Model, model_file: str, outputs: OutputSet | None,
                  figure_format: str, no_figure: bool, no_report: bool,
                  full: bool = False) -> None:
    from trundle.io.design_tables import design_model_of, design_spec_of, has_design_tables
    from trundle.report.envelope_data import collect
    from trundle.report.sections import SECTIONS
    from trundle.workflows import design_envelope, moving_loads
    from trundle.workflows.crane_runway import analyse_runway

    entries = loads_of(model)
    spec = runway_spec(model)
    designed = has_design_tables(model)
    n_sections = len(model.sections)
    steps = int(bool(entries)) + int(spec is not None) + int(designed) + 1 + int(
        outputs is not None)
    moving = runway = design = None
    with term.Progress(steps, "envelope") as bar:
        if entries:
            with bar.step(f"moving loads: {len(entries)} load(s) over {n_sections} sections"):
                moving = moving_loads.run(moving_loads.MovingLoadsSpec(
                    model.beam, [entry.case for entry in entries], sections=model.sections))
            _warn(_deflection_warnings(model, moving.env))
        if spec is not None:
            with bar.step(f"crane runway: {len(spec.cranes)} crane(s) over {n_sections} "
                          "sections, checks and fatigue"):
                runway = analyse_runway(model.beam, spec, sections=model.sections)
        if designed:
            with bar.step("design envelope: every live case and every combination"):
                design = design_envelope.run(design_spec_of(design_model_of(model)))
        with bar.step("tables"):
            results = collect(model, Provenance.of_model(model, model_file), moving,
                              providers=SECTIONS, runway=runway, design=design)
        files = None
        if outputs is not None:
            from trundle.report.envelope_report import envelope_files

            with bar.step("files" + ("" if no_figure else ", figures")
                          + ("" if no_report else ", report")):
                files = envelope_files(results, figure_format, with_figures=not no_figure,
                                       with_report=not no_report)
    console = _console()
    for renderable in (_envelope_summary(results) if full else _envelope_short(results)):
        _show(console, renderable)
    if outputs is not None and files is not None:
        written, removed = outputs.commit(files)
        _print_written(console, written, removed)
    for line in [*_governing_summary(model, moving, runway, design), *_verdict_summary(results)]:
        term.say(line)
    for caution in _envelope_cautions(results):
        console.print(caution, style="dim")
    if term.quiet():
        term.say(CAUTION_LINE, style="dim")


def _governing_summary(model: Model, moving: Any, runway: Any, design: Any) -> list[str]:
    """The governing values in a few lines (printed even with --quiet): the largest sagging
    and hogging moment and the largest reaction of each part of the run, with the load or
    case that causes them; every value is one of the envelope's own (nothing recomputed)."""
    import numpy as np

    from trundle.report.format import decimals, fixed
    from trundle.report.format import length as fmt

    units = model.units
    M, F, L = units.label("moment"), units.label("force"), units.label("length")

    def value(v: float, unit: str, places: int) -> str:
        return f"{fixed(v, places)} {unit}"

    def places_of(*arrays: Any) -> int:
        # the decimals of the quantity's column in the tables: from every finite value of it
        finite = np.concatenate([np.ravel(np.asarray(a, dtype=float)) for a in arrays])
        return decimals(finite[np.isfinite(finite)])

    def words(label: str, values: Any, sections: Any, names: Any, unit: str, pick: Any,
              where: str, places: int) -> str | None:
        values = np.asarray(values, dtype=float)
        if not np.isfinite(values).any():
            return None
        i = int(pick(np.where(np.isfinite(values), values, np.nan)))
        at = f"x = {fmt(sections[i])} {L}" if where == "x" else f"support {i}"
        name = names(i)
        if not name and values[i] == 0.0:  # nothing loads it that way: not worth a line
            return None
        return (f"{label} {value(values[i], unit, places)} at {at}"
                + (f" ({name})" if name else ""))

    lines = []
    envelopes = []
    if moving is not None:
        envelopes.append(("loads", moving.env))
    if runway is not None:
        envelopes.append(("cranes, with impact", runway.strength))
    for title, env in envelopes:
        parts = []
        for label, kind, which, pick, where in (
                ("max moment", "moment", "max", np.nanargmax, "x"),
                ("min moment", "moment", "min", np.nanargmin, "x"),
                ("max reaction", "reaction", "max", np.nanargmax, "support")):
            try:
                values = env.max(kind) if which == "max" else env.min(kind)
                governing = env.governing(kind, which)
                places = places_of(env.max(kind), env.min(kind))
            except (KeyError, ValueError):
                continue
            unit = M if kind == "moment" else F
            text = words(label, values, env.sections, lambda i, g=governing: g[i].load, unit,
                         pick, where, places)
            if text:
                parts.append(text)
        if parts:
            lines.append(f"{title}: " + "; ".join(parts))
    if design is not None:
        from trundle.report.design_section import design_places

        for name, d in design.designs.items():
            parts = []
            places = design_places(design, name)
            for label, family, which, pick, where in (
                    ("max moment", "moment", "max", np.nanargmax, "x"),
                    ("min moment", "moment", "min", np.nanargmin, "x"),
                    ("max reaction", "reaction", "max", np.nanargmax, "support")):
                key = (family, which)
                if key not in d.values:
                    continue
                cases = d.governing.get(key, ())
                text = words(label, d.values[key], d.sections,
                             lambda i, c=cases: c[i] if i < len(c) else "",
                             M if family == "moment" else F, pick, where, places[family])
                if text:
                    parts.append(text)
            if parts:
                lines.append(f"{_one_line(name)}: " + "; ".join(parts))
    return [_one_line(line) for line in lines]


def _verdict_summary(results: Any) -> list[str]:
    """One line per table that holds verdicts: how many checks PASS and which EXCEED (the
    verdicts come from analysis.checks through the tables; nothing is decided here)."""
    from trundle.report.format import verdict_cell

    tables = [*(_tables_of(section) for section in results.extra)]
    lines = []
    exceeded: list[str] = []
    counts = {"PASS": 0, "EXCEEDS": 0}
    for section_tables in tables:
        for table in section_tables:
            if "verdict" not in table.columns:
                continue
            column = table.columns.index("verdict")
            for row in table.rows:
                verdict = row[column]
                if verdict in counts:
                    counts[verdict] += 1
                if verdict == verdict_cell("EXCEEDS"):
                    exceeded.append(f"{_one_line(table.title)}: "
                                    f"{_one_line(table.columns[0])} {_one_line(row[0])}")
    total = counts["PASS"] + counts["EXCEEDS"]
    if total == 0:
        return []
    if counts["EXCEEDS"]:
        lines.append(f"checks: {counts['EXCEEDS']} of {total} EXCEED")
        lines.extend(f"  EXCEEDS {where}" for where in exceeded[:20])
        if len(exceeded) > 20:
            lines.append(f"  … and {len(exceeded) - 20} more")
    else:
        lines.append(f"checks: all {total} PASS")
    return lines


def _tables_of(section: Any) -> list[Any]:
    return list(section.tables)


def _deflection_warnings(model: Model, env: Any) -> list[str]:
    """span / 50 warnings from the envelope's deflections (none if it has no deflection)."""
    try:
        largest = [max(abs(a), abs(b)) for a, b in zip(env.max("deflection"),
                                                        env.min("deflection"), strict=True)]
    except (KeyError, ValueError):
        return []
    return deflection_warnings(model, list(env.sections), largest)


def _envelope_summary(results: Any, header_only: bool = False) -> list[Any]:
    from trundle.report.envelope_tables import loads_table, summary_tables, to_rich

    units = results.units
    values = ("values include impact and factors" if results.has_loads
              else "design envelope (no [[load]] tables)" if results.design is not None
              else "crane runway only (no [[load]] tables)")
    header = [terminal_text(results.model.title),
              terminal_text(f"model file {results.model_file}; units {units.name}; "
                            f"{len(results.sections)} sections; {values}; "
                            "travel → towards +x, ← towards -x")]
    out: list[Any] = [Text(header[0], style="bold"), Text(header[1])]
    if header_only:
        return out
    if results.has_loads:
        out.append(to_rich(loads_table(results)))
    out.extend(to_rich(t) for t in summary_tables(results))
    for section in results.extra:
        out.append(Text(terminal_text(section.title), style="bold"))
        out.extend(to_rich(t) for t in section.tables)
        out.extend(Text(terminal_text(note)) for note in section.notes)
    return out


def _envelope_short(results: Any) -> list[Any]:
    """The default terminal view (report/terminal_view.py): the governing values, the
    tenth-point envelope where it is short, each check summarised, where the rest is."""
    from trundle.report.envelope_tables import to_rich
    from trundle.report.terminal_view import FULL_HINT, Pointer, default_view, loads_view

    out = _envelope_summary(results, header_only=True)
    for item in default_view(results, loads_view(results)):
        if isinstance(item, Pointer):
            out.append(Text(terminal_text(item.text), style=item.style))
        elif isinstance(item, str):
            section = any(item == s.title for s in results.extra)
            out.append(Text(terminal_text(item), style="bold" if section else ""))
        else:
            out.append(to_rich(item, compact=True))
    out.append(Text(FULL_HINT, style="dim"))
    return out


def _envelope_cautions(results: Any) -> list[str]:
    from trundle.report.envelope_report import cautions

    return cautions(results)


# ------------------------------------------------------------------------------------------
# trundle library


@cli.command("library", epilog=_SAFETY_HELP)
@term.verbosity_options
@click.argument("name", required=False, metavar="[NAME]")
def library_command(name: str | None) -> None:
    """List the built-in load models, or show one in detail.

    A model file uses a vehicle, train or lane load with `use = "NAME"` in a [[load]] table,
    and a design case (kind "design case": hl93, cooper-e80, en1991-2-lm1, ...) with
    `use = "NAME"` in a [[design_load]] table (see docs/model-file.md). The demo-* models
    are invented examples; the published ones are transcribed from memory: verify them
    against the edition in force.

    \b
    Examples:
      trundle library
      trundle library demo-heavy-vehicle-5-axle
      trundle library hl93
    """
    from trundle.io.loads import read_library, read_library_model
    from trundle.loads import library
    from trundle.report.envelope_tables import library_detail, library_table, to_rich

    console = _console()
    if name is None:
        _show(console, to_rich(library_table(read_library())))
        console.print(f"folder: {library.folder()}", style="dim")
    else:
        names = library.names()
        if name not in names:
            hint = difflib.get_close_matches(name, names, n=1, cutoff=0.5)
            extra = f' (did you mean "{hint[0]}"?)' if hint else ""
            raise UserError(f"library NAME: expected one of {', '.join(names)}, found "
                            f'"{name}"{extra}')
        for renderable in library_detail(read_library_model(name)):
            _show(console, to_rich(renderable) if not isinstance(renderable, str)
                  else Text(renderable))
    console.print(LOAD_MODEL_CAUTION, style="dim")


# ------------------------------------------------------------------------------------------
# trundle sweep

_MAX_ROWS_SHOWN = 41


@cli.command("sweep", epilog=_SAFETY_HELP)
@term.verbosity_options
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
              help="Write sweep.csv (one row per point), sweep.json, a figure and sweep.html "
                   "into this folder; files of an earlier trundle run there that this run "
                   "does not write are removed.")
@click.option("--format", "figure_format", type=click.Choice(["png", "svg", "pdf"]),
              default="png", show_default=True, help="Figure format.")
@click.option("--no-figure", is_flag=True, help="With --out: write no figure file.")
@click.option("--no-report", is_flag=True, help="With --out: write no sweep.html.")
@click.option("--paths", "list_paths", is_flag=True,
              help="List the numbers of this model that can be varied, and stop.")
def sweep_command(model_file: str, vary: tuple[str, ...], effects: tuple[str, ...],
                  out_dir: Path | None, figure_format: str, no_figure: bool,
                  no_report: bool, list_paths: bool) -> None:
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
      trundle sweep examples/harbour_lane_floor_girder_si.toml \\
          --vary 'beam.supports[3].spring=5:40:5 MN/m' --effect "moment min span 3"
      trundle sweep examples/cranes/hall_kestrel_quay_si.toml \\
          --vary 'crane."20 t process crane".wheel_spacings[0]=3.0:5.0:0.5 m' \\
          --vary 'crane."10 t workshop crane".wheel_spacings[0]=2.8:3.6:0.4 m' \\
          --effect "reaction max support 1"

    Every check the model defines (a crane runway's deflection and fatigue checks, the
    live-load deflection limit of design tables) is made at every point, as `trundle
    envelope` makes it: each point shows PASS or EXCEEDS and its largest utilisation, and a
    line says how many points EXCEED.
    """
    from rich.table import Table

    from trundle.io.model_paths import ModelPathError, valid_paths
    from trundle.io.outputs import Provenance
    from trundle.io.sweeps import build_spec
    from trundle.report.format import length as format_length
    from trundle.report.format import verdict_cell
    from trundle.report.sweep_section import (
        CAUTIONS,
        column_text,
        effect_title,
        summary_lines,
        sweep_files,
        worst_check_text,
    )
    from trundle.report.sweep_section import displayed as shown_values
    from trundle.workflows.sweep import SweepError

    with term.step("read and check the model file"):
        model = _load(model_file)
    console = _console()
    if list_paths:
        paths = valid_paths(model.raw)
        console.print(f"{len(paths)} numbers of {model_file} can be varied:")
        for path in paths:
            given = "" if path.given is None else f" = {path.given}"
            note = f" ({path.note})" if path.note else ""
            console.print(f"  {path.text}{given}  [{path.kind}]{note}")
        return
    if not vary:
        raise UserError("--vary: expected one or two PATH=START:STOP:STEP (see --paths for "
                          "the numbers of this model), found none")
    if out_dir is not None and out_dir.exists() and not out_dir.is_dir():
        raise UserError(f"--out {out_dir}: expected a folder, found a file")
    try:
        spec = build_spec(model, vary, effects or DEFAULT_EFFECTS)
        with term.step(f"sweep: {spec.n_points} point(s)"):
            result = _run_with_progress(spec)
    except (ModelPathError, SweepError) as error:
        raise UserError(str(error)) from None
    console.print(Text(model.title, style="bold"))
    for line in summary_lines(result):
        term.say(line)
    for note in spec.notes:
        console.print(Text(f"note: {note}"))
    table = Table(title=Text("the governing effects at each point", style="bold"),
                  title_justify="left")
    for r in result.axes:
        table.add_column(Text(f"{r.name} [{r.unit}]"), justify="right", overflow="fold")
    several = len(result.effects) > 1
    for e in range(len(result.effects)):
        # numbered, so each "load" column says whose load it is
        tag = f"({e + 1}) " if several else ""
        table.add_column(Text(tag + effect_title(result, e)), justify="right", overflow="fold")
        table.add_column(Text(f"{tag}load"), overflow="fold")
    checked = bool(result.check_names)
    if checked:
        table.add_column(Text("checks"), overflow="fold")
        table.add_column(Text("largest utilisation"), overflow="fold")
    columns = [column_text(shown_values(result, e)) for e in range(len(result.effects))]
    rows = _rows_shown(len(result.points))
    for p in rows:
        if p < 0:
            table.add_row(*(["…"] * (len(result.axes) + 2 * len(result.effects)
                                     + 2 * checked)))
            continue
        cells: list[Any] = [format_length(v) for v in result.points[p]]
        for e in range(len(result.effects)):
            cells += [columns[e][p], result.load[p][e] or "—"]
        if checked:
            word = verdict_cell(result.point_verdict(p))
            cells += [Text(word, style="bold red") if word == "EXCEEDS" else word,
                      worst_check_text(result, p)]
        table.add_row(*cells)
    _show(console, table)
    if len(rows) < len(result.points):
        console.print(f"({len(result.points)} points; every point is in sweep.csv with --out)",
                      style="dim")
    if out_dir is not None:
        files = sweep_files(result, Provenance.of_model(model, model_file), figure_format,
                            with_figure=not no_figure, with_report=not no_report)
        try:
            written, removed = write_output_set(out_dir, files, command="sweep")
        except OSError as error:
            raise UserError(f"--out {out_dir}: cannot write ({error.strerror or error})") \
                from None
        console.print(f"wrote {', '.join(p.name for p in written)} in {out_dir}")
        if removed:
            console.print("removed the earlier run's " + ", ".join(p.name for p in removed))
    for caution in CAUTIONS:
        console.print(caution, style="dim")
    if term.quiet():
        term.say(CAUTION_LINE, style="dim")


def _rows_shown(n: int) -> list[int]:
    """Every row of a short sweep; the first and last rows of a long one (−1: a gap)."""
    if n <= _MAX_ROWS_SHOWN:
        return list(range(n))
    half = _MAX_ROWS_SHOWN // 2
    return [*range(half), -1, *range(n - half, n)]


def _run_with_progress(spec: Any) -> Any:
    """Run the sweep; on a terminal (and not quiet) a bar on stderr advances by one as each
    point is done (the shared :class:`cli_console.Progress`; silent otherwise)."""
    from trundle.workflows.sweep import run

    with term.Progress(spec.n_points, "sweep: points done") as bar:
        return run(spec, lambda done, total: bar.update(advance=1))


from trundle.cli_fleet import register as _register_fleet  # noqa: E402 (needs cli above)

_register_fleet(cli)


def main() -> None:
    """Entry point of the ``trundle`` script and of ``python -m trundle``."""
    cli(prog_name="trundle")
