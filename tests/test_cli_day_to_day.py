"""The command line as engineers use it every day: width, --quiet/--verbose, exit codes,
--version, progress, the summary of every table, clearer unit typos.

No outside source: these are properties of trundle's own interface (its README and
``trundle --help`` state them).
"""

from __future__ import annotations

from pathlib import Path

import pytest
from rich.cells import cell_len
from rich.console import Console
from rich.table import Table
from tests.cli_helpers import assert_one_line_error, run

from trundle import cli_console
from trundle._version import __version__
from trundle.io.units import SI, US, UnitError, parse_quantity

ROOT = Path(__file__).resolve().parents[1]
FLOOR = ROOT / "examples" / "harbour_lane_floor_girder_si.toml"
CRANE = ROOT / "examples" / "cranes" / "hall_kestrel_quay_si.toml"
DESIGN_SI = ROOT / "examples" / "design" / "quarry_yard_floor_beam_si.toml"


def _widest(text: str) -> int:
    return max((cell_len(line.rstrip()) for line in text.splitlines()), default=0)


@pytest.fixture
def columns_80(monkeypatch):
    monkeypatch.setenv("COLUMNS", "80")


# ------------------------------------------------------------------------------------------
# width


@pytest.mark.parametrize("args", [
    ("summary", DESIGN_SI),
    ("summary", CRANE),
    ("lines", FLOOR, "-e", "moment", "-e", "shear", "--at", "3.6", "-e", "reaction"),
    ("envelope", FLOOR),
    ("library",),
    ("library", "hl93"),
])
def test_every_line_fits_COLUMNS(columns_80, args) -> None:
    result = run(*args)
    assert result.exit_code == 0, result.output + result.stderr
    assert _widest(result.stdout) <= 80
    assert "Traceback" not in result.output + result.stderr


def test_without_a_terminal_or_COLUMNS_the_width_is_the_documented_default(monkeypatch):
    monkeypatch.delenv("COLUMNS", raising=False)
    assert cli_console.terminal_width() == cli_console.WIDTH_WITHOUT_TERMINAL
    monkeypatch.setenv("COLUMNS", "97")
    assert cli_console.terminal_width() == 97
    monkeypatch.setenv("COLUMNS", "5")  # a silly width still gives readable tables
    assert cli_console.terminal_width() == cli_console.NARROWEST


def _wide_table() -> Table:
    table = Table(title="Bending moment per span [kN·m] (sagging +)")
    table.add_column("span", justify="right")
    table.add_column("extreme")
    for name in ("M [kN·m]", "at x [m]", "V left with it [kN]", "V right with it [kN]",
                 "lead axle x [m]", "searched spacing [m]", "R max [kN]", "R min [kN]"):
        table.add_column(name, justify="right")
    table.add_column("governing load and where it stands")
    for span in (1, 2):
        for extreme in ("max at sections", "min at sections"):
            table.add_row(str(span), extreme, "-1234567.8", "12.345", "-104.6", "111.5",
                          "3.313", "4.3..9.0", "318.8", "-26.7",
                          "heavy vehicle, both directions, rear axle over the pier")
    return table


@pytest.mark.parametrize("width", [60, 80, 100, 140])
def test_a_wide_table_is_cut_into_parts_that_fit_and_keep_numbers_and_headings_whole(width):
    console = Console(width=width, record=True, file=open("/dev/null", "w"))  # noqa: SIM115
    cli_console.print_renderable(console, _wide_table())
    text = console.export_text()
    assert _widest(text) <= width
    # a number is never folded, a heading word never cut
    assert text.count("-1234567.8") == 4
    for word in ("M", "[kN·m]", "searched", "spacing", "governing"):
        assert word in text
    lines = text.splitlines()
    # every part repeats the names of the rows (span and extreme: the span alone repeats)
    parts = [i for i, line in enumerate(lines) if line.startswith("┏")]
    assert len(parts) >= 1
    assert sum("max at sections" in line for line in lines) == 2 * len(parts)
    # no heading of a numeric column wraps one word per line: at most two heading lines
    # per part for these headings (the longest is three words)
    for start in parts:
        end = next(i for i in range(start, len(lines)) if lines[i].startswith("┡"))
        assert end - start - 1 <= 3


def test_a_table_that_fits_is_printed_unchanged():
    table = Table(title="small")
    table.add_column("a")
    table.add_column("b", justify="right")
    table.add_row("x", "1.5")
    assert cli_console.fit_table(table, 80) == [table]


# ------------------------------------------------------------------------------------------
# --quiet, --verbose, exit codes, --version


def test_version():
    result = run("--version")
    assert result.exit_code == 0 and __version__ in result.output


def test_quiet_prints_only_the_verdict_summary_and_a_caution(tmp_path):
    text = DESIGN_SI.read_text().replace('deflection_limit = "L/360"',
                                         'deflection_limit = "L/100000"')
    model = tmp_path / "tight.toml"
    model.write_text(text)
    quiet = run("envelope", model, "--quiet")
    assert quiet.exit_code == 0, quiet.stderr
    lines = quiet.stdout.splitlines()
    assert lines[0].startswith("building 1.4D: max moment ")  # the governing values first
    checks = [line for line in lines if line.startswith("checks: ")]
    assert len(checks) == 1 and "EXCEED" in checks[0]
    assert any(line.strip().startswith("EXCEEDS") for line in lines)
    assert "qualified engineer" in quiet.stdout
    assert "┏" not in quiet.stdout and "───" not in quiet.stdout  # no table
    normal = run("envelope", model)  # the short tables of the default view
    assert "───" in normal.stdout and "EXCEED" in normal.stdout
    assert "┏" in run("envelope", model, "--full").stdout  # every table, framed
    passing = run("envelope", DESIGN_SI, "-q")
    assert any(line.startswith("checks: all ") for line in passing.stdout.splitlines())


@pytest.mark.parametrize("args", [("summary", FLOOR), ("lines", FLOOR), ("library",)])
def test_quiet_on_every_command_is_short(args):
    result = run(*args, "--quiet")
    assert result.exit_code == 0, result.stderr
    assert len(result.stdout.splitlines()) <= 4 and "┏" not in result.stdout


def test_verbose_says_what_was_computed_and_how_long_on_stderr():
    result = run("envelope", FLOOR, "--verbose")
    assert result.exit_code == 0
    assert "moving loads: 2 load(s) over 32 sections" in result.stderr
    assert " s\n" in result.stderr
    assert "moving loads:" not in result.stdout


def test_an_internal_error_is_one_line_exit_1_with_a_hint(monkeypatch):
    from trundle.workflows import moving_loads

    def broken(spec):
        raise ZeroDivisionError("a defect planted by the test")

    monkeypatch.setattr(moving_loads, "run", broken)
    result = run("envelope", FLOOR)
    assert result.exit_code == 1
    assert result.stderr.splitlines() == [
        "error: internal error (ZeroDivisionError: a defect planted by the test); rerun "
        "with --verbose for the traceback"]
    verbose = run("envelope", FLOOR, "--verbose")
    assert verbose.exit_code == 1
    assert "Traceback" in verbose.stderr and "a defect planted by the test" in verbose.stderr


def test_bad_input_is_still_exit_2_with_quiet_and_verbose(tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text('units = "SI"\n[beam]\nspans = ["40 M"]\nsupports = ["pin", "pin"]\nEI = 1.0\n')
    for flag in ("--quiet", "--verbose"):
        result = run("summary", bad, flag)
        assert_one_line_error(result, "bad.toml", "beam.spans[0]", '"40 M"', '"40 m"')
        assert "[length]" not in result.stderr and "[substance]" not in result.stderr


@pytest.mark.parametrize(("written", "quantity"), [("34,5 kN", "force"), ("1,65 m", "length"),
                                                   ("1,000 kN", "force")])
def test_a_comma_in_a_number_is_refused_not_dropped(written, quantity):
    # pint drops a comma ("34,5 kN" would be 345 kN): a decimal comma, common in Europe, must
    # never be read silently as a number ten or a hundred times too large
    with pytest.raises(UnitError, match="a comma"):
        parse_quantity(written, quantity, SI)


def test_a_decimal_comma_in_a_model_file_is_exit_2(tmp_path):
    bad = tmp_path / "comma.toml"
    bad.write_text('units = "SI"\n[beam]\nspans = ["9.0 m", "9,0 m"]\n'
                   'supports = ["pin", "pin", "pin"]\nEI = 1.0\n')
    result = run("summary", bad)
    assert_one_line_error(result, "comma.toml", "beam.spans[1]", '"9,0 m"', '"9.0 m"')


def test_the_level_does_not_leak_into_the_next_run():
    run("library", "--quiet")
    assert cli_console.STATE.level == cli_console.QUIET
    result = run("library")
    assert "┏" in result.output


# ------------------------------------------------------------------------------------------
# progress


def test_progress_is_silent_without_a_terminal_and_drawn_on_one(monkeypatch):
    result = run("envelope", FLOOR)
    assert "━" not in result.stderr and "envelope" not in result.stderr
    assert not cli_console.progress_shown()
    monkeypatch.setattr(cli_console.sys.stderr, "isatty", lambda: True, raising=False)
    assert cli_console.progress_shown()
    cli_console.set_level(cli_console.QUIET)
    assert not cli_console.progress_shown()
    cli_console.set_level(cli_console.NORMAL)
    done = []
    with cli_console.Progress(2, "test") as bar:
        with bar.step("first"):
            done.append(1)
        with bar.step("second"):
            done.append(2)
    assert done == [1, 2]


# ------------------------------------------------------------------------------------------
# summary describes every table


def test_summary_describes_the_design_tables():
    result = run("summary", DESIGN_SI)
    assert result.exit_code == 0
    out = result.output
    for name in ("beam self weight", "slab and finishes", "partition on span 2",
                 "hanger load", "office live load, whole spans",
                 "office live load, wherever adverse", "building 1.4D",
                 "building 1.2D + 1.6L", "L/360", "d from supports"):
        assert name in out, name


def test_summary_describes_the_runway_and_a_design_case():
    crane = run("summary", CRANE).output
    assert "[runway] as written" in crane and "service_class" in crane
    hl93 = run("summary", ROOT / "examples" / "design" / "alder_creek_overpass_hl93_us.toml")
    assert hl93.exit_code == 0
    assert "Design cases ([[design_load]])" in hl93.output and "hl93" in hl93.output


# ------------------------------------------------------------------------------------------
# unit typos


@pytest.mark.parametrize(("text", "quantity", "system", "suggestion"), [
    ("40 M", "length", SI, '"40 m"'),
    ("40 fet", "length", US, '"40 ft"'),
    ("5 kNm", "moment", SI, '"5 kN*m"'),
    ("3 kipft", "moment", US, '"3 kip*ft"'),
    ("55200 cm4", "second moment of area", SI, '"55200 cm^4"'),
    ("210 gpa", "modulus", SI, '"210 GPa"'),
    ("9 mol", "force", SI, "kN, N, MN, kip, lbf"),
    ("12 m/s", "length", SI, "a speed"),
])
def test_unit_typos_say_what_was_expected_found_and_suggest(text, quantity, system,
                                                            suggestion):
    with pytest.raises(UnitError) as caught:
        parse_quantity(text, quantity, system)
    message = str(caught.value)
    assert message.startswith("expected ") and f'found "{text}"' in message
    assert suggestion in message
    assert "[" + "length]" not in message and "[substance]" not in message
    assert "[time]" not in message and "[mass]" not in message


def test_a_wrong_kind_of_unit_is_not_guessed_into_another():
    # a distributed load where a force belongs is a mistake of key, not of spelling: no
    # "did you mean" that silently drops the "/m"
    with pytest.raises(UnitError) as caught:
        parse_quantity("5 kN/m", "force", SI)
    assert "did you mean" not in str(caught.value)
    assert "force per length" in str(caught.value)


# ------------------------------------------------------------------------------------------
# one number format


@pytest.mark.parametrize(("value", "shown"), [
    (37256944.4, "37256900"), (115920.0, "115920"), (48573.0, "48573"),
    (0.000123456789, "0.000123457"), (-0.0, "0"), (1234567.89, "1234570"),
    (2.5e5, "250000"), (1e20, "1.00000e+20"), (float("nan"), "—"),
])
def test_a_property_of_the_structure_is_written_without_an_exponent(value, shown):
    from trundle.report.format import significant

    assert significant(value) == shown


def test_the_summary_writes_EI_like_the_numbers_beside_it():
    result = run("summary", ROOT / "examples" / "design" / "alder_creek_overpass_hl93_us.toml")
    assert "37256900" in result.stdout and "e+0" not in result.stdout
