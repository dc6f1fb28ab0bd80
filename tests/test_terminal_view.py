"""The default terminal view of ``trundle envelope`` (report/terminal_view.py): short enough to
read at 80 columns, its numbers those of the CSV files, every failing check shown as failing,
and a pointer to the files for what it leaves out; ``--full`` prints every table."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from rich.cells import cell_len

from cli_helpers import read_csv, run
from trundle.report.envelope_data import TableData
from trundle.report.terminal_view import check_view, narrowed

ROOT = Path(__file__).resolve().parents[1]
FLOOR = ROOT / "examples" / "harbour_lane_floor_girder_si.toml"
CRANES = ROOT / "examples" / "cranes" / "hall_kestrel_quay_si.toml"
BRIDGE_US = ROOT / "examples" / "millrace_access_bridge_us.toml"

CHECKS = TableData(
    "Deflection per span", ("span", "direction", "δ [mm]", "utilisation", "verdict"),
    (("1", "vertical", "9.4", "0.751", "PASS"), ("2", "vertical", "13.1", "1.048", "EXCEEDS"),
     ("3", "vertical", "9.0", "0.720", "PASS"), ("1", "lateral", "12.7", "0.675", "PASS"),
     ("2", "lateral", "—", "—", "—"), ("3", "lateral", "12.0", "0.640", "PASS")),
    (True, False, True, True, False))


def test_a_check_table_is_summarised_per_kind_and_a_failure_is_never_hidden():
    summary = check_view(CHECKS, group=1, where=0)
    assert summary.columns == ("direction", "checks", "exceeding", "largest utilisation", "at",
                               "verdict")
    vertical, lateral = summary.rows
    assert vertical == ("vertical", "3", "1 EXCEED", "1.048", "span 2", "EXCEEDS")
    assert lateral == ("lateral", "3", "none", "0.675", "span 1", "PASS")
    # a utilisation that does not read as a number counts as the worst, never the mildest
    odd = TableData(CHECKS.title, CHECKS.columns, CHECKS.rows[:3] + (
        ("4", "vertical", "?", "inf", "EXCEEDS"),), CHECKS.numeric)
    assert check_view(odd, group=1, where=0).rows[0][2:] == ("2 EXCEED", "inf", "span 4",
                                                             "EXCEEDS")
    # a value marked * (not certified) keeps the note saying what the mark means
    marked = TableData(CHECKS.title, CHECKS.columns, (("2 *",) + CHECKS.rows[1][1:],)
                       + CHECKS.rows[2:], CHECKS.numeric, note="* not certified: may read low")
    assert check_view(marked, group=1, where=0).note == "* not certified: may read low"
    assert check_view(CHECKS, group=1, where=0).note == ""
    # a table of a couple of rows is shown whole
    short = TableData(CHECKS.title, CHECKS.columns, CHECKS.rows[:2], CHECKS.numeric)
    assert check_view(short).rows == short.rows


def test_narrowed_keeps_the_columns_asked_for_and_what_not_certified_means():
    table = TableData("Bending moment", ("span", "extreme", "M [kN·m]", "searched [m] / notes",
                                         "load"),
                      (("1", "max anywhere (not certified)", "12.0", "", "truck"),),
                      (True, False, True, False, False),
                      note="'anywhere': the worst section. 'not certified': found by a "
                           "search; may read low: check it where it governs. Other words.")
    short = narrowed(table, ("span", "extreme", "M", "searched", "load"))
    assert short.columns == ("span", "extreme", "M [kN·m]", "load")  # the empty one left out
    assert short.note == ("'not certified': found by a search; may read low: check it where "
                          "it governs.")
    assert narrowed(table, ("span", "M")).note == ""
    # a column of words the same in every row is said once, under the table
    two = TableData("Reactions", ("support", "R [kN]", "load"),
                    (("0", "12.0", "truck"), ("1", "15.0", "truck")), (True, True, False))
    once = narrowed(two, ("support", "R", "load"))
    assert once.columns == ("support", "R [kN]") and once.note == "load: truck, in every row."


def _lines(output: str) -> list[str]:
    return output.rstrip("\n").split("\n")


@pytest.fixture(scope="module")
def floor(tmp_path_factory):
    out = tmp_path_factory.mktemp("floor") / "out"
    with pytest.MonkeyPatch.context() as patch:
        patch.setenv("COLUMNS", "80")
        result = run("envelope", FLOOR, "--out", out, "--no-figure", "--no-report")
        full = run("envelope", FLOOR, "--full")
    assert result.exit_code == 0 and full.exit_code == 0, result.stderr + full.stderr
    return result.output, full.output, out


def _same(shown: str, exact: float) -> bool:
    places = len(shown.split(".")[1]) if "." in shown else 0
    return abs(float(shown) - exact) <= 0.5 * 10.0 ** -places * (1 + 1e-9)


def test_the_default_view_is_short_and_fits_80_columns(floor):
    output, full, _ = floor
    lines = _lines(output)
    assert all(cell_len(line) <= 80 for line in lines), max(lines, key=cell_len)
    assert len(lines) < 120 < len(_lines(full)) + 60
    assert "┏" not in output and "┏" in full  # compact tables; --full: every table framed
    # the governing values with their load, the verdict lines, the cautions, the pointers
    for text in ("Bending moment per span", "Shear per span", "Reactions per support",
                 "Largest downward deflection per span", "Maximum and minimum at each section",
                 "floor live load", "loads: max moment 129.8 kN·m", "qualified engineer",
                 "edition in", "--full", "envelope.csv"):
        assert text in output, text
    # where each load stands and the concurrent shear: left to --full and the files
    assert "placed: spans" not in output and "placed: spans" in full
    assert "V left with it" not in output


def test_the_tenth_point_table_shows_the_numbers_of_envelope_csv(floor):
    output, _, out = floor
    lines = _lines(output)
    start = lines.index("Maximum and minimum at each section")
    rule = next(i for i in range(start, len(lines)) if lines[i].startswith("───"))
    rows = []
    for line in lines[rule + 1:]:
        cells = line.split()
        if not cells or not cells[0].replace(".", "").isdigit():
            break
        rows.append(cells)
    header, body = read_csv(out / "envelope.csv")
    x = np.array([float(r[0]) for r in body])
    names = ["moment max [kN·m]", "moment min [kN·m]", "shear left max [kN]",
             "shear left min [kN]", "shear right max [kN]", "shear right min [kN]",
             "deflection max [mm]", "deflection min [mm]"]
    assert len(rows) == 31  # the tenth points of three spans (the section at 3 m left out)
    for cells in rows:
        i = int(np.argmin(np.abs(x - float(cells[0]))))
        assert abs(x[i] - float(cells[0])) < 1e-9
        for cell, name in zip(cells[1:], names, strict=True):
            assert _same(cell, float(body[i][header.index(name)])), (cells[0], name, cell)


def test_the_crane_example_is_short_and_points_to_its_files(monkeypatch):
    monkeypatch.setenv("COLUMNS", "80")
    result = run("envelope", CRANES)
    assert result.exit_code == 0, result.stderr
    lines = _lines(result.output)
    assert len(lines) <= 120 and all(cell_len(line) <= 80 for line in lines)
    for text in ("Vertical reactions per support", "Bending moment per span with impact",
                 "(summary)", "checks: all 24 PASS", "runway-sections.csv",
                 "All crane values are unfactored", "verify each against the governing"):
        assert text in " ".join(result.output.split()), text


def test_a_us_model_at_120_columns(monkeypatch):
    monkeypatch.setenv("COLUMNS", "120")
    result = run("envelope", BRIDGE_US)
    assert result.exit_code == 0, result.stderr
    lines = _lines(result.output)
    assert len(lines) < 100 and all(cell_len(line) <= 120 for line in lines)
    assert "kip·ft" in result.output and "kN" not in result.output
