"""``trundle sweep``: files agree with the library, bad paths/ranges/effects are one line with
exit code 2 and write nothing, the help shows the cautions; and the benchmark's quick mode."""

from __future__ import annotations

import html
import json
import re
from pathlib import Path

import numpy as np
import pytest

from cli_helpers import assert_one_line_error, column, html_problems, read_csv, run
from trundle.io.sweeps import sweep

ROOT = Path(__file__).resolve().parents[1]
FLOOR = ROOT / "examples" / "harbour_lane_floor_girder_si.toml"
FORKLIFT = 'load."pallet forklift".spacings[0]'


def test_sweep_writes_csv_and_figure_that_match_the_library(tmp_path: Path) -> None:
    out = tmp_path / "out"
    result = run("sweep", FLOOR, "--vary", f"{FORKLIFT}=1.2:2.4:0.4 m",
                 "-e", "moment max span 2", "-e", "reaction max support 1",
                 "-e", "deflection max", "--out", out)
    assert result.exit_code == 0, result.output + result.stderr
    assert "qualified engineer" in result.output
    assert sorted(p.name for p in out.iterdir()) == [".trundle-output.json", "sweep.csv",
                                                     "sweep.html", "sweep.json", "sweep.png"]
    first = (out / "sweep.csv").read_text().splitlines()[0]
    assert first.startswith("# trundle ") and "SHA-256 " in first and str(FLOOR) in first
    header, rows = read_csv(out / "sweep.csv")
    assert len(rows) == 4
    library = sweep(FLOOR, {FORKLIFT: "1.2:2.4:0.4 m"},
                    ["moment max span 2", "reaction max support 1", "deflection max"])
    np.testing.assert_allclose(column(header, rows, f"{FORKLIFT} [m]"), [1.2, 1.6, 2.0, 2.4])
    np.testing.assert_allclose(column(header, rows, "max moment, span 2 [kN·m]"),
                               library.values[:, 0], rtol=1e-8)
    np.testing.assert_allclose(column(header, rows, "max reaction, support 1 [kN]"),
                               library.values[:, 1], rtol=1e-8)
    # deflection in mm, as every output of trundle shows it
    np.testing.assert_allclose(column(header, rows, "max deflection [mm]"),
                               1000.0 * library.values[:, 2], rtol=1e-8)
    # the JSON carries the same numbers, the swept values and the cautions
    document = json.loads((out / "sweep.json").read_text())
    assert document["axes"][0]["name"] == FORKLIFT and document["axes"][0]["unit"] == "m"
    np.testing.assert_allclose(document["effects"][0]["values"], library.values[:, 0],
                               rtol=1e-12)
    assert document["effects"][2]["unit"] == "mm"
    assert any("qualified engineer" in c for c in document["cautions"])
    # the report page: the cautions, the worst point and every point
    page = (out / "sweep.html").read_text()
    assert "qualified engineer" in page and "edition in force" in page
    assert page.count("<tr>") >= 4 + 3
    check_sweep_page(page, out / "sweep.csv", n_effects=3)
    # a second run into the folder without a figure removes the earlier figure
    again = run("sweep", FLOOR, "--vary", f"{FORKLIFT}=1.2:2.4:0.4 m", "--no-figure",
                "--no-report", "--out", out)
    assert again.exit_code == 0, again.stderr
    assert sorted(p.name for p in out.iterdir()) == [".trundle-output.json", "sweep.csv",
                                                     "sweep.json"]


def _cells(row_html: str, tag: str = "td") -> list[str]:
    return [html.unescape(re.sub(r"<[^>]+>", "", c)).strip()
            for c in re.findall(rf"<{tag}[^>]*>(.*?)</{tag}>", row_html, re.S)]


def _same(shown: str, exact: float) -> bool:
    """A page cell equals the CSV value to the decimals the cell shows."""
    places = len(shown.split(".")[1]) if "." in shown else 0
    return abs(float(shown) - exact) <= 0.5 * 10.0 ** -places * (1 + 1e-9)


def check_sweep_page(page: str, csv_path: Path, n_effects: int) -> None:
    """sweep.html: well-formed HTML, its figure inline SVG (no image file, nothing fetched),
    and every number of its tables that of sweep.csv to the decimals shown."""
    assert page.startswith("<!DOCTYPE html>")
    assert html_problems(page) == []
    assert "<img" not in page and "data:image" not in page
    assert page.count('<svg role="img" class="figure"') == 1
    header, rows = read_csv(csv_path)
    table = page.split("<h2>Every point</h2>")[1]
    shown = re.findall(r"<tr>(.*?)</tr>", table, re.S)
    assert _cells(shown[0], "th") == header  # the same headings, units and all
    body = [_cells(r) for r in shown[1:]]
    assert len(body) == len(rows)
    for cells, row in zip(body, rows, strict=True):
        for k, (cell, exact) in enumerate(zip(cells, row, strict=True)):
            if header[k].endswith(": load"):
                assert cell == exact
            else:
                assert _same(cell, float(exact)), (header[k], cell, exact)
    # the worst point of each effect: its value is the largest of the CSV column
    worst = page.split("<h2>Worst point of each effect</h2>")[1].split("</table>")[0]
    worst_rows = [_cells(r) for r in re.findall(r"<tr>(.*?)</tr>", worst, re.S)][1:]
    assert len(worst_rows) == n_effects
    for effect, value, _where in worst_rows:
        k = header.index(effect)
        values = [float(r[k]) for r in rows]
        assert _same(value.split()[0], max(values, key=abs)), (effect, value)


def test_the_sweep_figure_keeps_every_label_inside(tmp_path: Path) -> None:
    """No title, label or annotation of the sweep figure is clipped at its edges: each text's
    drawn extent lies inside the figure, for one and two swept numbers and a long title."""
    from matplotlib.text import Text

    from trundle.io.modelfile import load_model
    from trundle.io.sweeps import build_spec
    from trundle.report.sweep_section import sweep_figure
    from trundle.workflows.sweep import run as run_sweep

    model = load_model(FLOOR)
    for vary in ({FORKLIFT: "1.2:2.4:0.6 m"},
                 {FORKLIFT: "1.2:2.4:0.6 m", "beam.supports[3].spring": "10:20:10 MN/m"}):
        spec = build_spec(model, vary, ["moment max span 2", "reaction max support 1",
                                        "deflection max"])
        result = run_sweep(spec)
        figure = sweep_figure(result, title="A title long enough to need two lines at the "
                                            "width of this figure: " + "what if " * 12)
        figure.canvas.draw()
        renderer = figure.canvas.get_renderer()
        # every drawn artist (titles, axis and colour-bar labels, tick labels, annotations,
        # the caution) together, in inches: the box a "tight" save would crop to
        drawn = figure.get_tightbbox(renderer)
        width, height = figure.get_size_inches()
        assert drawn.x0 >= -0.01 and drawn.y0 >= -0.01, drawn
        assert drawn.x1 <= width + 0.01 and drawn.y1 <= height + 0.01, drawn
        title = figure._suptitle.get_window_extent(renderer)
        assert title.x0 >= 0 and title.x1 <= figure.bbox.x1 and "\n" in figure._suptitle.get_text()
        texts = [t for t in figure.findobj(Text) if t.get_visible() and t.get_text().strip()]
        assert len(texts) > 10


def test_two_parameters_give_a_contour_figure(tmp_path: Path) -> None:
    result = run("sweep", FLOOR, "--vary", f"{FORKLIFT}=1.2:2.4:0.6 m",
                 "--vary", "beam.supports[3].spring=10:20:5 MN/m",
                 "-e", "reaction max support 2", "--out", tmp_path, "--format", "svg")
    assert result.exit_code == 0, result.stderr
    header, rows = read_csv(tmp_path / "sweep.csv")
    assert len(rows) == 9 and header[:2] == [f"{FORKLIFT} [m]",
                                             "beam.supports[3].spring [MN/m]"]
    assert (tmp_path / "sweep.svg").read_text().lstrip().startswith("<?xml")
    check_sweep_page((tmp_path / "sweep.html").read_text(), tmp_path / "sweep.csv",
                     n_effects=1)


def test_paths_lists_the_numbers_of_the_model() -> None:
    result = run("sweep", FLOOR, "--paths")
    assert result.exit_code == 0
    assert FORKLIFT in result.output and "beam.spans[1]" in result.output


def test_help_shows_the_cautions() -> None:
    result = run("sweep", "--help")
    assert result.exit_code == 0
    text = " ".join(result.output.split())
    assert "qualified engineer" in text and "edition in force" in text
    assert "sweep" in run("--help").output


@pytest.mark.parametrize(("args", "fragments"), [
    (["--vary", "load.forklift.spacings[0]=1:2:0.5"], ["valid paths:", FORKLIFT]),
    (["--vary", "beam.spans[7]=1:2:0.5"], ["valid paths:", "beam.spans[2]"]),
    (["--vary", "beam.spans[1]"], ["PATH=START:STOP:STEP"]),
    (["--vary", "beam.spans[1]=9:8:0.5"], ["STOP at least START"]),
    (["--vary", "beam.spans[1]=8:9:0"], ["STEP greater than zero"]),
    (["--vary", "beam.spans[1]=1:5000:1"], ["at most 2,001 values"]),
    (["--vary", "beam.spans[1]=8:9:0.5 kN"], ["a length"]),
    (["--vary", "beam.spans[1]=8:9"], ["START:STOP:STEP"]),
    (["--vary", "beam.spans[1]=8:9:0.5", "--vary", "beam.spans[1]=8:9:0.5"], ["twice"]),
    (["--vary", "beam.spans[0]=7:8:1", "--vary", "beam.spans[1]=8:9:1",
      "--vary", "beam.spans[2]=7:8:1"], ["at most 2 parameters"]),
    (["--vary", "beam.spans[0]=1:2000:1", "--vary", "beam.spans[1]=1:2000:1"],
     ["at most 20,000 points"]),
    (["--vary", f"{FORKLIFT}=-1:1:1"], [f"{FORKLIFT} = -1 m", "load[1].spacings[0]"]),
    (["--vary", "beam.spans[1]=8:9:1", "-e", "moment max span 9"], ["span number 1 to 3"]),
    (["--vary", "beam.spans[1]=8:9:1", "-e", "bending max"], ["KIND WHICH"]),
    ([], ["--vary"]),
])
def test_bad_sweeps_are_one_line_errors_and_write_nothing(tmp_path: Path, args: list[str],
                                                           fragments: list[str]) -> None:
    out = tmp_path / "out"
    result = run("sweep", FLOOR, *args, "--out", out)
    assert_one_line_error(result, *fragments)
    assert not out.exists()


def test_out_that_is_a_file_is_refused(tmp_path: Path) -> None:
    target = tmp_path / "taken"
    target.write_text("keep me")
    result = run("sweep", FLOOR, "--vary", f"{FORKLIFT}=1.2:1.6:0.4", "--out", target)
    assert_one_line_error(result, "is a file")
    assert target.read_text() == "keep me"


def test_a_missing_model_file_is_one_line() -> None:
    assert_one_line_error(run("sweep", "no-such-model.toml", "--vary", "beam.spans[0]=1:2:1"),
                          "no-such-model.toml")


def test_the_progress_bar_advances_once_per_sweep_point(monkeypatch) -> None:
    """On a terminal the bar is drawn and advances by one after each point (not per section
    or per step of the work); off a terminal nothing is drawn; the result is the same."""
    import io

    from rich.console import Console

    import trundle.cli as cli_module
    import trundle.cli_console as console_module
    from trundle.io.modelfile import load_model
    from trundle.io.sweeps import build_spec
    from trundle.workflows.sweep import run as run_sweep

    spec = build_spec(load_model(FLOOR), {FORKLIFT: "1.2:2.1:0.3 m"}, ["moment max span 2"])
    assert spec.n_points == 4
    screen = io.StringIO()
    monkeypatch.setattr(console_module, "Console", lambda **_: Console(
        file=screen, force_terminal=True, width=80))
    advances: list[tuple[int, float | None]] = []
    update = console_module.Progress.update

    def counting(self, description=None, advance=0):
        done = self._bar.tasks[0].completed if self._bar is not None else None
        advances.append((advance, done))
        update(self, description, advance)

    monkeypatch.setattr(console_module.Progress, "update", counting)
    # off a terminal (as under pytest): counted, never drawn
    silent = cli_module._run_with_progress(spec)
    assert [a for a, _ in advances] == [1] * 4 and screen.getvalue() == ""
    # on a terminal: drawn, 0, 1, 2, 3 points done before each advance
    advances.clear()
    monkeypatch.setattr(console_module, "_show_progress", lambda: True)
    shown = cli_module._run_with_progress(spec)
    assert advances == [(1, 0), (1, 1), (1, 2), (1, 3)]
    assert "sweep: points done" in screen.getvalue() and "4/4" in screen.getvalue()
    np.testing.assert_array_equal(shown.values, run_sweep(spec).values)
    np.testing.assert_array_equal(silent.values, shown.values)
