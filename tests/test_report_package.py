"""The HTML report as a calculation package, for every bundled example.

Each example is run once per session (``trundle envelope --out``, conftest.bundled_run);
its report must be well-formed HTML (parsed with ``html.parser``: every element closed in
order, no id twice), carry every part a checker asks for (project block, print style with
page numbers and breaks, cautions, figures as inline SVG, governing tables with concurrent
shear and loaded stretches, per-section table cut to the tenth points and supports, critical
load positions, the model file verbatim with its SHA-256), and show the numbers of its CSV
files. Where Debian's ``chromium`` is installed the report is printed to PDF and PNG in
headless Chromium and the page count is checked.

The ``[project]`` table reader is tested here too (errors name the key, exit code 2).
"""

from __future__ import annotations

import hashlib
import html
import re
import tempfile
from pathlib import Path

import numpy as np
import pytest

from cli_helpers import CHROMIUM, HtmlChecker, assert_one_line_error, read_csv, run
from cli_helpers import chromium as _chromium
from conftest import BUNDLED_EXAMPLES
from trundle.io.modelfile import read_model
from trundle.io.project import ProjectInfo, project_of
from trundle.report.package import css_string, inline_svg, model_text_lines

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = BUNDLED_EXAMPLES
WITH_PROJECT = {"harbour_lane_floor_girder_si", "hall_kestrel_quay_si"}
# A sensible A4 calculation package for these examples; the crane report printed to 19 pages
# before the per-section fatigue table moved to its CSV file.
MAX_PAGES = 15
BEAM = 'units = "SI"\n[beam]\nspans = ["6 m"]\nsupports = ["pin", "pin"]\nEI = 1e5\n'


# ------------------------------------------------------------------------------------------
# [project]


def test_project_table_is_read_with_a_date_and_a_number_revision():
    model = read_model(BEAM.replace('units = "SI"\n', 'units = "SI"\n[project]\n'
                                    'name = "Depot"\njob_number = "J-1"\ndate = 2026-11-30\n'
                                    'revision = 3\nchecked_by = "  B.\\tChecker "\n'), "m.toml")
    assert project_of(model) == ProjectInfo(name="Depot", job_number="J-1", date="2026-11-30",
                                            revision="3", checked_by="B. Checker")
    assert project_of(read_model(BEAM, "m.toml")) is None


@pytest.mark.parametrize(("table", "fragments"), [
    ('job = "J-1"', ("project.job", "unknown key", "job_number")),
    ("job_number = 1234", ("project.job_number", "expected text", "found 1234")),
    ("revision = true", ("project.revision", "whole number", "found true")),
    ("date = 2026-11-30T10:00:00", ("project.date", "expected a date")),
    ('designed_by = ["A", "B"]', ("project.designed_by", "expected text")),
])
def test_a_wrong_project_key_or_type_is_one_line_and_exit_2(tmp_path, table, fragments):
    model = tmp_path / "bad.toml"
    model.write_text(BEAM.replace('units = "SI"\n', f'units = "SI"\n[project]\n{table}\n')
                     + '[[load]]\nname = "P"\naxles = [10]\n')
    assert_one_line_error(run("envelope", model), "bad.toml", *fragments)


def test_project_is_not_a_table(tmp_path):
    model = tmp_path / "bad.toml"
    model.write_text('project = "Depot"\n' + BEAM + '[[load]]\nname = "P"\naxles = [10]\n')
    assert_one_line_error(run("summary", model), "project", "expected a table")


def test_css_string_cannot_leave_the_style_element():
    text = str(css_string('a"b</style><script>x\\'))
    assert "</" not in text and '"' not in text[1:-1] and "\\" + "00005c " in text


def test_inline_svg_prefixes_every_id():
    svg = (b'<?xml version="1.0"?>\n<!DOCTYPE svg>\n<svg width="10pt" height="5pt" '
           b'viewBox="0 0 10 5"><defs><path id="m1"/></defs><use xlink:href="#m1"/>'
           b'<g clip-path="url(#p2)"/></svg>')
    out = str(inline_svg(svg, "f3-"))
    assert out.startswith("<svg") and 'id="f3-m1"' in out and 'href="#f3-m1"' in out
    assert "url(#f3-p2)" in out and 'width="10pt"' not in out


def test_model_text_shows_every_character_visibly():
    # a direction override in a comment would make the appendix read differently from the file
    assert model_text_lines('a = 1\r\n# b\u202ec\x07\n') == "a = 1\n# b⟨U+202E⟩c⟨U+0007⟩\n"


# ------------------------------------------------------------------------------------------
# every example's report


@pytest.fixture(scope="module", params=EXAMPLES, ids=lambda p: p.stem)
def example(request, bundled_run):
    # the session's one run of the example (conftest.bundled_run; with its figure files,
    # which leave the report unchanged: it draws its own figures inline)
    path = request.param
    result, out = bundled_run(path)
    assert result.exit_code == 0, result.output + result.stderr
    return path, out, (out / "report.html").read_text(encoding="utf-8")


def _text(page: str) -> str:
    return " ".join(html.unescape(re.sub(r"<[^>]+>", " ", page)).split())


def test_the_report_is_well_formed_html(example):
    _, _, page = example
    assert page.startswith("<!DOCTYPE html>")
    checker = HtmlChecker()
    checker.feed(page)
    checker.close()
    assert not checker.errors, checker.errors[:5]
    assert checker.stack == [], checker.stack
    assert len(checker.ids) == len(set(checker.ids)), "an id is used twice"


def test_the_report_has_every_part_of_a_calculation_package(example):
    path, _, page = example
    text = _text(page)
    # the project block, filled in where the model has [project]
    block = re.search(r'<table class="project" id="project">(.*?)</table>', page, re.S)
    assert block, "no project block"
    for label in ("project", "job number", "element", "designed by", "checked by", "date",
                  "revision"):
        assert f'<th scope="row">{label}</th>' in block.group(1), label
    if path.stem in WITH_PROJECT:
        info = project_of(read_model(path.read_text(encoding="utf-8"), str(path)))
        for value in (info.job_number, info.checked_by, info.revision):
            assert value and html.escape(value) in block.group(1)
    # printing: numbered pages, tables/figures whole, headings kept with what follows
    assert re.search(r'@page \{.*?@bottom-right \{ content: "page " counter\(page\) " of " '
                     r"counter\(pages\)", page, re.S)
    assert re.search(r"table, figure[^{]*\{ break-inside: avoid", page)
    assert re.search(r"h1, h2, h3, caption[^{]*\{ break-after: avoid", page)
    # the cautions and every failing check shown as failing
    for caution in ("checking by a qualified engineer", "must be verified against the edition "
                    "in force", "local codes and licensed practice govern"):
        assert caution in text, caution
    assert "EXCEEDS" not in text or 'class="num short verdict-exceeds">EXCEEDS' in page or \
        'verdict-exceeds">EXCEEDS' in page
    # figures inline as SVG, nothing fetched from outside
    assert "<img" not in page and page.count('<svg role="img" class="figure"') >= 2
    assert not re.search(r'(src|href)="(https?:|//|file:)', page)
    # the model file verbatim with its SHA-256
    data = path.read_bytes()
    sha = hashlib.sha256(data).hexdigest()
    appendix = re.search(r'<section class="appendix" id="model-file">(.*?)</section>', page,
                         re.S)
    assert appendix and sha in appendix.group(1)
    shown = re.search(r'<pre class="model-text">(.*?)</pre>', appendix.group(1), re.S)
    assert html.unescape(shown.group(1)) == data.decode("utf-8")


def _table(page: str, caption_start: str) -> tuple[list[str], list[list[str]]]:
    """(headers, rows of cells) of the first report table whose caption starts so."""
    for match in re.finditer(r"<table>\s*<caption>(.*?)</caption>(.*?)</table>", page, re.S):
        if html.unescape(match.group(1)).startswith(caption_start):
            body = match.group(2)
            headers = [_text(h) for h in re.findall(r"<th[^>]*>(.*?)</th>", body, re.S)]
            rows = [[html.unescape(c) for c in re.findall(r"<td[^>]*>(.*?)</td>", r, re.S)]
                    for r in re.findall(r"<tr[^>]*>(.*?)</tr>", body, re.S)]
            return headers, [r for r in rows if r]
    raise AssertionError(f"no table {caption_start!r}")


def _same(shown: str, exact: float) -> bool:
    """A report cell equals the CSV value to the decimals the cell shows."""
    places = len(shown.split(".")[1]) if "." in shown else 0
    return abs(float(shown.replace("−", "-")) - exact) <= 0.5 * 10.0 ** -places * (1 + 1e-9)


def test_the_numbers_are_those_of_the_csv_files(example):
    path, out, page = example
    if (out / "envelope.csv").exists():
        header, body = read_csv(out / "envelope.csv")
        csv_x = np.array([float(r[0]) for r in body])
        headers, rows = _table(page, "Maximum and minimum at each section")
        names = {"M max": "moment max", "M min": "moment min", "V max left": "shear left max",
                 "V min left": "shear left min", "V max right": "shear right max",
                 "V min right": "shear right min", "δ max": "deflection max",
                 "δ min": "deflection min"}
        assert 0 < len(rows) <= len(body)
        for row in rows:
            i = int(np.argmin(np.abs(csv_x - float(row[0]))))
            assert abs(csv_x[i] - float(row[0])) <= 1e-6 * max(1.0, csv_x[-1])
            for k, head in enumerate(headers[2:], start=2):
                name = names[head.split(" [")[0]]
                column = next(j for j, h in enumerate(header) if h.startswith(f"{name} ["))
                assert _same(row[k], float(body[i][column])), (row, head)
        # the governing moment table: the value at the sections and the shear acting with it
        headers, rows = _table(page, "Bending moment per span")
        assert any(h.startswith("V left with it") for h in headers)
        for row in rows:
            if row[1] not in ("max at sections", "min at sections"):
                continue
            which = row[1].split()[0]
            i = int(np.argmin(np.abs(csv_x - float(row[3]))))
            values = {f"moment {which}": row[2], f"moment {which}: concurrent shear left":
                      row[4], f"moment {which}: concurrent shear right": row[5]}
            for name, cell in values.items():
                column = next(j for j, h in enumerate(header) if h.startswith(f"{name} ["))
                assert _same(cell, float(body[i][column])), (row, name)
            stretches = body[i][header.index(next(h for h in header if h.startswith(
                f"moment {which}: loaded stretches")))]
            if stretches:  # a placed load: its loaded stretches are in the table too
                assert "loaded " in row[8], row
    if (out / "runway-sections.csv").exists():
        header, body = read_csv(out / "runway-sections.csv")
        csv_x = np.array([float(r[0]) for r in body])
        headers, rows = _table(page, "Runway envelope at")
        assert 0 < len(rows) <= len(body)
        moment = header.index(next(h for h in header if h.startswith("moment max with impact")))
        column = next(k for k, h in enumerate(headers) if h.startswith("M max"))
        for row in rows:
            i = int(np.argmin(np.abs(csv_x - float(row[0]))))
            assert _same(row[column], float(body[i][moment])), row


def test_the_design_numbers_are_those_of_the_design_csv(example):
    _, out, page = example
    if not (out / "design-envelope.csv").exists():
        pytest.skip("no design tables in this example")
    header, body = read_csv(out / "design-envelope.csv")
    at = {h: header.index(h) for h in ("combination_or_case", "kind", "x_or_support",
                                        "family", "which", "value")}
    values = {(r[at["combination_or_case"]], float(r[at["x_or_support"]]), r[at["family"]],
               r[at["which"]]): float(r[at["value"]])
              for r in body if r[at["kind"]] == "design"}
    combinations = sorted({key[0] for key in values})
    assert combinations
    for name in combinations:
        headers, rows = _table(page, f"{name}: design envelope (factored) at the sections")
        assert rows
        for row in rows:
            x = float(row[0].rstrip(" *"))
            csv_x = min((key[1] for key in values if key[0] == name), key=lambda v: abs(v - x))
            assert abs(csv_x - x) <= 1e-6 * max(1.0, abs(x))
            assert _same(row[1], values[name, csv_x, "moment", "max"]), row
            assert _same(row[3], values[name, csv_x, "moment", "min"]), row


def test_a_us_report_shows_every_quantity_in_us_units(example):
    """A model in US units: no force, moment or deflection in SI anywhere in the report
    (a library load model written in SI has its description converted), apart from the
    model file reproduced verbatim in the appendix."""
    path, _, page = example
    if 'units = "US"' not in path.read_text(encoding="utf-8"):
        pytest.skip("an SI example")
    shown = re.sub(r'<pre class="model-text">.*?</pre>', "", page, flags=re.S)
    text = _text(re.sub(r"<style>.*?</style>", "", shown, flags=re.S))
    leaks = re.findall(r".{0,50}\b(?:kN|MN|mm|kN·m|kN/m)\b.{0,20}", text)
    assert not leaks, leaks[:3]


def test_the_critical_load_positions_are_drawn(example):
    path, out, page = example
    if (out / "envelope.csv").exists() or (out / "runway-sections.csv").exists():
        assert "Critical load positions" in page
        figure = re.search(r'<section id="positions">(.*?)</section>', page, re.S).group(1)
        assert figure.count("<svg") == 1


# ------------------------------------------------------------------------------------------
# a real browser


@pytest.mark.skipif(CHROMIUM is None, reason="Debian's chromium is not installed")
def test_chromium_prints_the_report_on_a_reasonable_number_of_pages(example, tmp_path):
    path, out, _ = example
    url = (out / "report.html").as_uri()
    pdf, png = tmp_path / "report.pdf", tmp_path / "report.png"
    with tempfile.TemporaryDirectory() as user_dir:
        _chromium("--no-pdf-header-footer", f"--print-to-pdf={pdf}", url, user_dir=user_dir)
    pages = len(re.findall(rb"/Type\s*/Page(?![a-zA-Z])", pdf.read_bytes()))
    assert 2 <= pages <= MAX_PAGES, pages
    if path.stem in WITH_PROJECT:  # a screen shot of two examples is enough (time)
        with tempfile.TemporaryDirectory() as user_dir:
            _chromium("--window-size=1100,1400", f"--screenshot={png}", url, user_dir=user_dir)
        assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n" and png.stat().st_size > 20_000


_PANEL = re.compile(r"\((\w+)\) (?:spans? [\d, ]+|support (\d+)): (M|V left|V right|R) (max|min) "
                    r"= (-?[\d.]+) \S+ at x = (-?[\d.]+)")
_SYMBOL = {"M": "moment", "V left": "shear_left", "V right": "shear_right", "R": "reaction"}


def test_the_design_load_positions_are_drawn_with_the_csv_numbers(example):
    """Each combination a live load governs has its critical-load-positions figure (inline
    SVG) with one panel per governing value of design-positions.csv; the value over each
    panel, and the first number of its key table row, are design-envelope.csv's to the
    decimals shown (the design table's column)."""
    _, out, page = example
    if not (out / "design-envelope.csv").exists():
        pytest.skip("no design tables in this example")
    header, body = read_csv(out / "design-envelope.csv")
    at = {h: header.index(h) for h in header}
    design = {(r[at["combination_or_case"]], r[at["x_or_support"]], r[at["family"]],
               r[at["which"]]): float(r[at["value"]]) for r in body if r[at["kind"]] == "design"}
    p_header, p_body = read_csv(out / "design-positions.csv")
    pat = {h: p_header.index(h) for h in p_header}
    drawn_rows = [r for r in p_body if r[pat["reproduced"]] == "yes"]
    assert all(r[pat["reproduced"]] in ("yes", "") for r in p_body)
    assert drawn_rows, "no live load governs any design value"
    for name in sorted({r[pat["combination"]] for r in drawn_rows}):
        rows = [r for r in drawn_rows if r[pat["combination"]] == name]
        figures = re.findall(r"<figure>\s*(<svg(?:(?!<figure>).)*?</svg>)\s*<figcaption>Figure "
                             r"\d+\. " + re.escape(html.escape(name, quote=False))
                             + r": critical load positions", page, re.S)
        assert figures, f"no positions figure for {name}"
        titles = [html.unescape(t) for svg in figures
                  for t in re.findall(r"<text[^>]*>([^<]*)</text>", svg)]
        panels = [m for t in titles if (m := _PANEL.match(t))]
        assert len(panels) == len(rows), (name, len(panels), len(rows))
        _, key = _table(page, f"{name}: governing design values and where the live load")
        assert len(key) == len(rows)
        for m, row, key_row in zip(panels, rows, key, strict=True):
            family, which = _SYMBOL[m.group(3)], m.group(4)
            assert (family, which) == (row[pat["family"]], row[pat["which"]])
            where = row[pat["x_or_support"]]
            if family == "reaction":
                assert m.group(2) == where
            else:
                assert abs(float(m.group(6)) - float(where)) <= 1e-3
            exact = design[name, where, family, which]
            assert _same(m.group(5), exact), (m.group(0), exact)
            assert key_row[0] == f"({m.group(1)})"
            assert _same(key_row[4].split(" = ")[0], exact), (key_row, exact)
            assert float(row[pat["value"]]) == exact


def test_design_table_columns_keep_one_number_of_decimals(example):
    """Within a numeric column of a design table every number has the same decimals."""
    _, out, page = example
    if not (out / "design-envelope.csv").exists():
        pytest.skip("no design tables in this example")
    section = re.search(r"<h2>\d+&ensp;Design envelope</h2>(.*?)</section>", page, re.S)
    assert section
    tables = re.findall(r"<table>(.*?)</table>", section.group(1), re.S)
    assert tables
    for table in tables:
        rows = [re.findall(r'<td class="([^"]*)">(.*?)</td>', r, re.S)
                for r in re.findall(r"<tr[^>]*>(.*?)</tr>", table, re.S)]
        rows = [r for r in rows if r]
        for k in range(len(rows[0])):
            cells = [html.unescape(r[k][1]).rstrip(" *") for r in rows
                     if k < len(r) and r[k][0].startswith("num")]
            numbers = [c for c in cells if re.fullmatch(r"-?\d+(\.\d+)?", c)]
            places = {len(c.split(".")[1]) if "." in c else 0 for c in numbers}
            assert len(places) <= 1, (re.search(r"<caption>(.*?)</caption>", table).group(1),
                                      k, numbers[:8])
