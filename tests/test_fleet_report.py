"""The fleet and permit reports as calculation packages, their terminal tables, the bad-row
message and the caution wording.

The reports are read back as HTML: one self-contained file (figures inline SVG, no <img> of
another file, no matplotlib maths markup), the project block, the page-numbering print style
and the cautions; every number shown equals fleet_summary.csv / permit.csv to the decimals
shown (the one format policy); headings are words with units, travel is in words. Where
Debian's ``chromium`` is installed, both reports are printed to PDF and PNG.

The numbers themselves (exact extremes, ratios) are checked against closed forms and brute
force in test_fleet_cli.py, test_fleet_extremes.py and test_fleet_batched.py; here only that
the page shows the files' numbers.
"""

from __future__ import annotations

import re
import tempfile
from html.parser import HTMLParser
from pathlib import Path

import pytest

from cli_helpers import CHROMIUM, assert_one_line_error, read_csv, run
from cli_helpers import chromium as _chromium
from trundle.io.traffic import traffic_bytes
from trundle.io.traffic_generator import invented_traffic
from trundle.report import CAUTION, CAUTION_LINE, LOAD_MODEL_CAUTION
from trundle.report.fleet_section import DIRECTION_WORDS, _decade
from trundle.report.package import css_string

AXLE = """units = "SI"
description = "{what} (test)"
source = "test"
axles = [{axles}]
spacings = [{spacings}]
"""
# two bridges with long names (the ratio figure used to lose its last one) and a name with a
# dollar sign (text from a file is never read as matplotlib maths)
INVENTORY = ("name,units,spans,supports,stiffness,effects\n"
             "Long approach viaduct over the river (test),SI,20 24,pin pin pin,,"
             "midspan-moments pier-moments pier-reactions end-shears\n"
             "Short span $5 culvert (test),SI,12,pin pin,,midspan-moments end-reactions\n")


@pytest.fixture(scope="module")
def runs(tmp_path_factory: pytest.TempPathFactory) -> Path:
    folder = tmp_path_factory.mktemp("fleet_report")
    (folder / "inventory.csv").write_text(INVENTORY)
    (folder / "design.toml").write_text(AXLE.format(what="design", axles='"120 kN", "120 kN"',
                                                    spacings='"4 m"'))
    (folder / "permit.toml").write_text(AXLE.format(
        what="permit", axles='"100 kN", "150 kN", "150 kN"', spacings='"3.5 m", "1.4 m"'))
    (folder / "project.toml").write_text('[project]\nname = "Ring road survey (test)"\n'
                                         'job_number = "T-77"\nchecked_by = "B. Checker"\n'
                                         'date = 2026-12-03\n')
    (folder / "traffic.csv").write_bytes(traffic_bytes(invented_traffic(150, seed=4, days=14),
                                                       "csv"))
    fleet = run("fleet", folder / "traffic.csv", folder / "inventory.csv", "--design",
                folder / "design.toml", "--out", folder / "fleet", "--single-process",
                "--no-progress", "--project", folder / "project.toml")
    assert fleet.exit_code == 0, fleet.output + fleet.stderr
    permit = run("permit", folder / "permit.toml", folder / "inventory.csv", "--design",
                 folder / "design.toml", "--impact", "10", "--limit", "1.0", "--out",
                 folder / "permit", "--single-process")
    assert permit.exit_code in (0, 3), permit.output + permit.stderr
    return folder


class _Page(HTMLParser):
    """The tags must nest (void elements aside); collects the tables as text cells."""

    VOID = {"meta", "br", "img", "link", "input", "hr", "path", "use", "rect", "stop",
            "circle", "line", "polyline", "polygon", "ellipse", "image"}

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.stack: list[str] = []
        self.tables: list[dict] = []
        self._cell: list[str] | None = None
        self._in_caption = False
        self.imgs: list[dict] = []
        self.svgs = 0

    def handle_starttag(self, tag, attrs):
        if tag == "img":
            self.imgs.append(dict(attrs))
        if tag == "svg":
            self.svgs += 1
        if tag not in self.VOID:
            self.stack.append(tag)
        if tag == "table":
            self.tables.append({"class": dict(attrs).get("class", ""), "caption": "",
                                "head": [], "rows": []})
        elif tag == "tr" and self.tables:
            self.tables[-1]["rows"].append([])
        elif tag in ("td", "th"):
            self._cell = []
        elif tag == "caption":
            self._in_caption = True

    def handle_startendtag(self, tag, attrs):
        if tag == "img":
            self.imgs.append(dict(attrs))

    def handle_endtag(self, tag):
        if tag in self.VOID:
            return
        assert self.stack and self.stack[-1] == tag, (self.stack[-3:], tag)
        self.stack.pop()
        if tag in ("td", "th") and self._cell is not None:
            text = " ".join("".join(self._cell).split())
            table = self.tables[-1]
            if tag == "th" and len(table["rows"]) == 1 and "project" not in table["class"]:
                table["head"].append(text)
            else:
                table["rows"][-1].append(text)
            self._cell = None
        elif tag == "caption":
            self._in_caption = False

    def handle_data(self, data):
        if self._cell is not None:
            self._cell.append(data)
        elif self._in_caption:
            self.tables[-1]["caption"] += data


def _page(path: Path) -> tuple[str, _Page]:
    text = path.read_text(encoding="utf-8")
    parser = _Page()
    parser.feed(text)
    parser.close()
    assert parser.stack == [], parser.stack
    for table in parser.tables:  # the header row is not a body row
        table["rows"] = [r for r in table["rows"] if r]
    return text, parser


def _close(shown: str, value: float | str) -> None:
    """``shown`` is ``value`` written with the decimals it has (half a unit of its last
    place, and a little for the binary value); an empty CSV cell is shown as "—"."""
    if value == "":
        assert shown == "—"
        return
    value = float(value)
    places = len(shown.split(".")[1]) if "." in shown else 0
    assert abs(float(shown) - value) <= 0.5 * 10.0 ** -places * (1 + 1e-9) + 1e-12, (shown,
                                                                                       value)


@pytest.mark.parametrize("report", ["fleet", "permit"])
def test_the_report_is_one_self_contained_package(runs: Path, report: str) -> None:
    text, page = _page(runs / report / "report.html")
    assert page.imgs == []  # no image of another file
    assert not re.search(r"""src=["'](?!data:)""", text)
    assert "mathdefault" not in text and "$" not in text.replace("Short span $5", "")
    assert "Short span $5 culvert" in text  # a dollar sign from a file stays as written
    if report == "fleet":
        assert page.svgs >= 3 and '<svg role="img" class="figure"' in text
    # the project block (fleet: from --project; permit: blank, to fill in by hand), the
    # print style with page N of M, the cautions
    project = next(t for t in page.tables if "project" in t["class"])
    cells = [cell for row in project["rows"] for cell in row]
    fields = dict(zip(cells[::2], cells[1::2], strict=True))
    assert set(fields) >= {"project", "job number", "element", "designed by", "checked by",
                           "date", "revision", "calculation"}
    if report == "fleet":
        assert fields["project"] == "Ring road survey (test)" and fields["job number"] == "T-77"
        assert fields["date"] == "2026-12-03" and fields["checked by"] == "B. Checker"
        assert css_string("T-77 · Traffic over the bridge inventory") in text  # page footer
    else:
        assert fields["project"] == fields["job number"] == fields["checked by"] == ""
    assert '"page " counter(page) " of " counter(pages)' in text and "size: A4" in text
    assert CAUTION in text and LOAD_MODEL_CAUTION in text
    # people's headings: no field name of a file
    heads = [h for t in page.tables for h in t["head"]]
    assert heads and not any("_" in h for h in heads), heads


def test_the_fleet_tables_show_the_csv_numbers(runs: Path) -> None:
    header, body = read_csv(runs / "fleet" / "fleet_summary.csv")
    at = {h: header.index(h) for h in header}
    _, page = _page(runs / "fleet" / "report.html")
    extremes = [t for t in page.tables if t["caption"].endswith("trucks)")]
    levels = [t for t in page.tables if "return level" in t["caption"]]
    assert len(extremes) == len(levels) == 2
    checked = 0
    for row in body:
        bridge, effect = row[at["bridge"]], row[at["effect"]]
        ext = next(t for t in extremes if t["caption"].startswith(bridge + ":"))
        lev = next(t for t in levels if t["caption"].startswith(bridge + ":"))
        # the bridge is said once, in the caption, not on every row
        assert all(bridge not in cell for r in ext["rows"] for cell in r)
        shown = next(r for r in ext["rows"] if r[0].split(" at ")[0] == effect.split(" at ")[0]
                     and r[0].replace(" m", "") == effect)
        h = {name: k for k, name in enumerate(ext["head"])}
        assert shown[h["unit"]] == row[at["unit"]].replace("*", "·")
        _close(shown[h["max"]], row[at["max"]])
        _close(shown[h["min"]], row[at["min"]])
        assert shown[h["truck at max"]] == row[at["truck_at_max"]]
        _close(shown[h["front axle at max [m]"]], row[at["x_front_axle_at_max"]])
        assert shown[h["travel at max"]] == DIRECTION_WORDS[int(row[at["direction_at_max"]])]
        level = next(r for r in lev["rows"] if r[0] == shown[0])
        g = {name: k for k, name in enumerate(lev["head"])}
        _close(level[g["design max"]], row[at["design_max"]])
        _close(level[g["ratio max"]], row[at["ratio_max"]])
        _close(level[g["ratio min"]], row[at["ratio_min"]])
        if row[at["return_level"]]:
            _close(level[g["75-year level"]], row[at["return_level"]])
            low, high = level[g["interval"]].split(" … ")
            _close(low, row[at["return_level_low"]])
            _close(high, row[at["return_level_high"]])
        checked += 1
    assert checked == len(body) == 9  # 6 effects of the viaduct, 3 of the culvert


def test_the_fleet_figures_fit_the_page_and_name_every_bridge(runs: Path) -> None:
    text = (runs / "fleet" / "report.html").read_text()
    for box in re.findall(r'<svg[^>]*viewBox="0 0 ([\d.]+) ([\d.]+)"', text):
        assert float(box[0]) <= 7.2 * 72 + 1  # the text width of A4 portrait, scaled by CSS
    assert "width: 100%" in text
    ratio = next(svg for svg in text.split("<svg")[1:]
                 if "Ratio of the recorded extremes to the design model</text>" in svg)
    for word in ("viaduct", "river", "culvert"):  # the last bridge too (names wrapped)
        assert word in ratio
    # log axes labelled as plain numbers (the maths parser is off in trundle's style)
    assert [_decade(v) for v in (0.1, 1.0, 10.0, 1000.0, 1e4, 1e6)] == [
        "0.1", "1", "10", "1000", "10 000", "10⁶"]


def test_the_permit_table_shows_the_csv_numbers_in_words_and_units(runs: Path) -> None:
    header, body = read_csv(runs / "permit" / "permit.csv")
    at = {h: header.index(h) for h in header}
    text, page = _page(runs / "permit" / "report.html")
    tables = [t for t in page.tables if "project" not in t["class"]]
    assert len(tables) == 2
    # said once above the tables: the vehicle file, the limit, the design model
    assert "permit.toml" in text and "at most 1" in text
    for row in body:
        table = next(t for t in tables if t["caption"].startswith(row[at["bridge"]] + ":"))
        h = {name: k for k, name in enumerate(table["head"])}
        assert "vehicle" not in h and "limit" not in h and "bridge" not in h
        assert set(h) >= {"effect", "unit", "side", "permit", "design", "ratio", "verdict",
                          "front axle at [m]", "travel"}
        shown = next(r for r in table["rows"] if r[0].replace(" m", "") == row[at["effect"]])
        side = row[at["side"]]
        assert shown[h["side"]] == side
        _close(shown[h["permit"]], row[at[f"permit_{side}"]])
        _close(shown[h["design"]], row[at[f"design_{side}"]])
        _close(shown[h["ratio"]], row[at["ratio"]])
        assert shown[h["verdict"]] == row[at["verdict"]]
        _close(shown[h["front axle at [m]"]], row[at["x_front_axle"]])
        assert shown[h["travel"]] == DIRECTION_WORDS[int(row[at["direction"]])]
        if " at " in row[at["effect"]]:
            assert shown[0].endswith(" m")  # the position of the effect with its unit


def test_the_permit_terminal_table_has_units_and_fits_80_columns(runs: Path) -> None:
    from click.testing import CliRunner

    from trundle.cli import cli

    out = CliRunner().invoke(cli, ["permit", str(runs / "permit.toml"),
                                   str(runs / "inventory.csv"), "--design",
                                   str(runs / "design.toml"), "--impact", "10",
                                   "--single-process"], env={"COLUMNS": "80"})
    assert out.exit_code in (0, 3), out.output
    lines = out.output.splitlines()
    assert max(len(line) for line in lines) <= 80
    assert "(continued)" not in out.output  # one table per bridge, not cut in parts
    assert "kN·m" in out.output and " kN " in out.output + " "
    assert "moment at 10 m" in out.output  # the effect's position with its length unit
    assert "axle at [m]" in out.output and re.search(r"\d ←|\d →", out.output)
    assert CAUTION in " ".join(out.output.split())


def test_fleet_and_permit_say_the_cautions_as_every_command(runs: Path) -> None:
    """The one caution line of every command (trundle.report.CAUTION_LINE) under --quiet and
    in the help."""
    quiet = run("permit", runs / "permit.toml", runs / "inventory.csv", "--design",
                runs / "design.toml", "--single-process", "-q")
    assert CAUTION_LINE in " ".join(quiet.output.split())
    for command in ("fleet", "permit", "envelope", "sweep"):
        helped = " ".join(run(command, "--help").output.split())
        assert CAUTION_LINE in helped, command


def test_a_cell_that_is_no_number_is_one_clear_statement(tmp_path: Path) -> None:
    bad = tmp_path / "bad.csv"
    bad.write_text("id,timestamp,lane,direction,gross,axle_1,axle_2,spacing_1\n"
                   "t1,2026-01-01T00:00:00,1,1,abc,50,50,4\n"
                   "t2,2026-01-01T00:10:00,1,1,100,5x0,50,4\n"
                   "t3,2026-01-01T00:20:00,1,1,100,50,50,\n")
    (tmp_path / "inventory.csv").write_text("name,spans\na,10\n")
    out = tmp_path / "out"
    result = run("fleet", bad, tmp_path / "inventory.csv", "--single-process", "--out", out)
    assert_one_line_error(result, str(bad), "row 1 (line 2) id 't1': gross: expected a number, "
                                            "found 'abc'",
                          "row 2 (line 3) id 't2': axle_1: expected a number, found '5x0'",
                          "row 3 (line 4) id 't3': spacing_1: expected a length between "
                          "axle_1 and axle_2, found an empty cell")
    line = result.stderr
    # one statement per bad cell: no "empty cell" or derived sum for a cell that has text
    assert line.count("empty cell") == 1 and "add up to" not in line
    assert not out.exists()


def test_a_bad_project_file_is_one_line_and_exit_2(runs: Path, tmp_path: Path) -> None:
    args = ("permit", runs / "permit.toml", runs / "inventory.csv", "--design",
            runs / "design.toml", "--single-process", "--out", tmp_path / "out")
    (tmp_path / "none.toml").write_text('title = "no project here"\n')
    assert_one_line_error(run(*args, "--project", tmp_path / "none.toml"), "none.toml",
                          "project", "expected a [project] table")
    (tmp_path / "job.toml").write_text("[project]\njob_number = 1234\n")
    assert_one_line_error(run(*args, "--project", tmp_path / "job.toml"), "job.toml",
                          "project.job_number", "expected text", "found 1234")
    assert_one_line_error(run(*args, "--project", tmp_path / "missing.toml"), "missing.toml")
    assert not (tmp_path / "out").exists()


@pytest.mark.skipif(CHROMIUM is None, reason="Debian's chromium is not installed")
@pytest.mark.parametrize("report", ["fleet", "permit"])
def test_chromium_prints_the_fleet_and_permit_reports(runs: Path, report: str,
                                                      tmp_path: Path) -> None:
    url = (runs / report / "report.html").as_uri()
    pdf, png = tmp_path / "report.pdf", tmp_path / "report.png"
    with tempfile.TemporaryDirectory() as user_dir:
        _chromium("--no-pdf-header-footer", f"--print-to-pdf={pdf}", url, user_dir=user_dir)
    pages = len(re.findall(rb"/Type\s*/Page(?![a-zA-Z])", pdf.read_bytes()))
    assert 1 <= pages <= (8 if report == "fleet" else 3), pages
    # A4 portrait: 595 x 842 points
    sizes = re.findall(rb"/MediaBox\s*\[\s*0 0 ([\d.]+) ([\d.]+)", pdf.read_bytes())
    assert sizes and all(abs(float(w) - 595) < 2 and abs(float(h) - 842) < 2 for w, h in sizes)
    with tempfile.TemporaryDirectory() as user_dir:
        _chromium("--window-size=1200,3000", f"--screenshot={png}", url, user_dir=user_dir)
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n" and png.stat().st_size > 20_000
