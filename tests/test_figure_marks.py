"""Figures show values as the tables do: an "anywhere" value a sampled search found is marked
"*" (not certified, may read low) wherever it is drawn, and every label writes a number exactly
as its table cell (same decimals). The values themselves are checked elsewhere
(test_absolute_exact.py); these tests check how the report figures show them."""

from __future__ import annotations

import re

import pytest

from conftest import TRUCK_ON_TWO_SPANS
from trundle.io.loads import loads_of
from trundle.io.modelfile import load_model
from trundle.io.outputs import Provenance
from trundle.report.envelope_data import collect
from trundle.report.envelope_figures import envelope_figure, reactions_figure
from trundle.report.envelope_tables import moment_table, reactions_table
from trundle.report.figures import figure_bytes
from trundle.report.format import NOT_CERTIFIED_WORDS, marked
from trundle.report.positions_figure import governing_panels, positions_figure
from trundle.workflows import moving_loads

# One truck on two equal spans; a fixed rear spacing has an exact "anywhere" moment, a searched
# one (4.3 m to 9.0 m) only the sampled search, marked "not certified" in the tables.
_MODEL = TRUCK_ON_TWO_SPANS
_FIXED, _SEARCHED = '"4.3 m"', '{ min = "4.3 m", max = "9.0 m" }'


def _results(tmp_path, spacing: str):
    path = tmp_path / "truck.toml"
    path.write_text(_MODEL.replace("{spacing}", spacing))
    model = load_model(path)
    moving = moving_loads.run(moving_loads.MovingLoadsSpec(
        model.beam, [e.case for e in loads_of(model)], sections=model.sections))
    return collect(model, Provenance.of_model(model, str(path)), moving)


@pytest.fixture(scope="module", params=[(_FIXED, True), (_SEARCHED, False)],
                ids=["exact", "searched"])
def truck(request, tmp_path_factory):
    spacing, certified = request.param
    return _results(tmp_path_factory.mktemp("truck"), spacing), certified


def _svg_texts(figure) -> list[str]:
    """Every text of the figure's SVG (fonts kept as text by the house style)."""
    svg = figure_bytes(figure, "svg").decode("utf-8")
    import html

    return [html.unescape(t) for t in re.findall(r"<text[^>]*>(.*?)</text>", svg, re.S)]


def _anywhere_cells(results) -> list[tuple[str, bool]]:
    """(M cell, certified) of the 'max anywhere' rows of the moment table."""
    table = moment_table(results)
    return [(row[2], "not certified" not in row[1]) for row in table.rows
            if row[1].startswith("max anywhere")]


def test_the_moment_figure_marks_a_searched_anywhere_value_as_the_table_does(truck):
    results, certified = truck
    cells = _anywhere_cells(results)
    assert cells and all(c is certified for _, c in cells)
    texts = _svg_texts(envelope_figure(results, "moment"))
    joined = " ".join(texts)
    # the worst value anywhere is worse than every section here, so the figure labels it
    for cell, _ in cells:
        if certified:
            assert cell in texts and f"{cell} *" not in joined
        else:
            assert f"{cell} *" in texts, (cell, texts)
    assert (NOT_CERTIFIED_WORDS in joined) is (not certified)


def test_the_positions_figure_marks_a_searched_anywhere_value(truck):
    results, certified = truck
    headings = [p.heading for p in governing_panels(results) if p.mark == "M max"]
    cells = dict(_anywhere_cells(results))
    assert headings
    for heading in headings:
        value = re.search(r"M = (\S+)", heading).group(1)
        if certified:
            assert "*" not in heading and "not certified" not in heading
        else:  # the value of the table's cell, then the mark and what it means
            assert value in cells and f"M = {value} * kN·m" in heading
            assert "* not certified: may read low" in heading
    texts = " ".join(_svg_texts(positions_figure(results)))
    assert ("not certified" in texts) is (not certified)


def _labels(figure) -> list[str]:
    """The value labels drawn on the figure's value panels (annotations and bar labels), not
    the beam drawing's support numbers and span lengths."""
    return [t.get_text() for ax in figure.axes if ax.get_legend() is not None
            for t in ax.texts if t.get_text()]


def test_figure_labels_read_exactly_as_the_table_cells(truck):
    results, _ = truck
    # moment: every value label is a cell of the moment table, "*" where the row says
    # "not certified"; the largest sagging value of the table is among them
    rows = moment_table(results).rows
    cells = {marked(row[2], "not certified" not in row[1]) for row in rows}
    labels = _labels(envelope_figure(results, "moment"))
    assert labels and set(labels) <= cells, (labels, cells)
    worst = max(rows, key=lambda row: (float(row[2]), "anywhere" in row[1]))  # ties: the
    # figure labels the worst section found between the sections
    assert marked(worst[2], "not certified" not in worst[1]) in labels
    # reactions: the bar labels are the table's cells, every one of them
    r_cells = [row[3] for row in reactions_table(results).rows]
    bars = _labels(reactions_figure(results))
    assert sorted(bars) == sorted(r_cells)
    # the positions figure's headings carry the table's cells too
    for panel in governing_panels(results):
        if panel.mark.startswith("R "):
            assert re.search(r"R max = (\S+)", panel.heading).group(1) in r_cells
        else:
            value = re.search(r"M = (\S+)", panel.heading).group(1)
            assert value in {row[2] for row in rows}


# --- positions in words: to a thousandth of the length unit, as README says ------------------

_LANE_MODEL = """units = "US"
[beam]
spans = ["66.3713 ft", "52.2171 ft"]
supports = ["pin", "pin", "pin"]
E = "29000 ksi"
I = "9040 in^4"
[sections]
at = ["tenth points"]
[[load]]
use = "demo-lane-load"
[[load]]
use = "demo-heavy-vehicle-5-axle"
"""


def test_positions_in_placements_and_tables_have_at_most_three_decimals(tmp_path):
    from trundle.report.envelope_data import section_extremes, span_summaries
    from trundle.report.envelope_tables import (
        deflection_table,
        sections_table,
        shear_table,
        summary_tables,
    )

    path = tmp_path / "lane.toml"
    path.write_text(_LANE_MODEL)
    model = load_model(path)
    moving = moving_loads.run(moving_loads.MovingLoadsSpec(
        model.beam, [e.case for e in loads_of(model)], sections=model.sections))
    results = collect(model, Provenance.of_model(model, str(path)), moving)
    # tenth points of 66.3713 ft and 52.2171 ft: positions such as 6.63713 in the
    # model, 26.548 / 85.0363 would print with 4 decimals without one policy
    too_fine = re.compile(r"\d\.\d{4,}")
    placements = [e.placement for f in ("moment", "shear_left", "deflection")
                  for w in ("max", "min") for e in section_extremes(results, f, w)
                  if e.placement]
    assert any("point load at" in p for p in placements)
    # the test means something: some point load stands at a position finer than 0.001 ft
    raw = [e.lead_x for f in ("moment", "shear_left") for w in ("max", "min")
           for e in section_extremes(results, f, w) if e.placement and e.lead_x is not None]
    assert any(abs(x * 1000 - round(x * 1000)) > 1e-6 for x in raw)
    for text in placements:
        assert not too_fine.search(text), text
    for table in summary_tables(results):
        for row in table.rows:
            for cell in row:
                assert not too_fine.search(cell) or "×" in cell, (table.title, cell)
    xs = [row[0] for row in sections_table(results).rows]
    assert len({len(x.partition(".")[2]) for x in xs}) == 1  # one column, one decimals
    assert all(len(x.partition(".")[2]) <= 3 for x in xs)
    for table in (shear_table(results), deflection_table(results)):
        assert all(not too_fine.search(" ".join(row)) for row in table.rows)
    assert span_summaries(results)


def test_permanent_table_writes_moment_columns_with_shared_decimals():
    """M max and M min are one quantity: the same decimals, so a zero reads alike in both (a
    point load over a pier gives no sagging moment and no hogging moment at the sections)."""
    from types import SimpleNamespace

    import numpy as np

    from trundle.io.units import US
    from trundle.report.design_section import permanent_table

    def load(name, moment, reaction):
        return SimpleNamespace(name=name, category="DC", values={
            "moment": np.asarray(moment, float), "reaction": np.asarray(reaction, float)})

    units = US
    design = SimpleNamespace(permanent=[
        load("girder", [0.0, 772.5, -1269.0], [144.1, 0.0]),
        load("diaphragm", [0.0, 0.0, 0.0], [4.5, 0.0])])
    table = permanent_table(SimpleNamespace(design=design, units=units))
    rows = {row[0]: row for row in table.rows}
    assert rows["diaphragm"][2] == rows["diaphragm"][3] == "0"
    assert rows["girder"][2:4] == ("772", "-1269")  # 4 significant digits of the largest


def test_the_deflection_figure_title_says_load_factors_are_left_out(truck):
    """Deflections are at service level (the deflection table's note): the figure's title must
    not claim the factors of the moment figure."""
    results, _ = truck
    note = " ".join(r for r in (deflection_note(results),))
    assert "without its load factor" in note
    title = " ".join(envelope_figure(results, "deflection")._suptitle.get_text().split())
    assert "without load factors" in title and "service level" in title
    moment = " ".join(envelope_figure(results, "moment")._suptitle.get_text().split())
    assert "without load factors" not in moment


def deflection_note(results) -> str:
    from trundle.report.envelope_tables import deflection_table

    return deflection_table(results).note


# --- crane runway: the marks on the crane figures ---------------------------------------------

_CRANE_MODEL = """title = "two bays (invented)"
units = "SI"
[beam]
spans = ["7.5 m", "7.5 m"]
supports = ["pin", "pin", "pin"]
hinges = ["7.5 m"]
E = "210 GPa"
I = "107200 cm^4"
[sections]
at = ["tenth points"]
[[crane]]
name = "crane"
capacity = "20 t"
bridge_weight = "16 t"
trolley_weight = "5.5 t"
span = "21.0 m"
hook_approach = "1.2 m"
wheel_spacings = ["4.0 m"]
buffer_length = "5.0 m"
operation = "remote"
[runway]
combinations = ["each alone"]
service_class = "C"
end_stops = true
lateral_I = "6300 cm^4"
section_modulus = "4980 cm^3"
detail_category = "C'"
"""


@pytest.fixture(scope="module")
def crane_report(tmp_path_factory):
    from trundle.io.cranes import runway_spec
    from trundle.report.crane_data import runway_report
    from trundle.workflows.crane_runway import analyse_runway

    path = tmp_path_factory.mktemp("crane") / "crane.toml"
    path.write_text(_CRANE_MODEL)
    model = load_model(path)
    runway = analyse_runway(model.beam, runway_spec(model), sections=model.sections)
    results = collect(model, Provenance.of_model(model, str(path)), None, runway=runway)
    return runway_report(results)


def test_crane_figures_write_values_as_the_tables_and_mark_what_is_not_certified(crane_report):
    from trundle.report.crane_figures import runway_positions_figure, runway_reactions_figure
    from trundle.report.crane_tables import moment_table, reactions_table

    rows = moment_table(crane_report).rows
    anywhere = [row for row in rows if row[1].startswith("max anywhere")]
    figure = runway_positions_figure(crane_report)
    titles = " ".join(" ".join(ax.get_title(loc="left").split()) for ax in figure.axes)
    for row in anywhere:  # the worst sagging moment's panel writes the table's cell
        certified = "not certified" not in row[1]
        if float(row[2]) >= max(float(r[2]) for r in rows):
            assert f"M = {marked(row[2], certified)} kN·m" in titles
            assert (NOT_CERTIFIED_WORDS in titles) is (not certified)
    r_cells = {row[2] for row in reactions_table(crane_report).rows}
    assert re.search(r"R = (\S+) kN", titles).group(1) in r_cells
    bars = _labels(runway_reactions_figure(crane_report))
    assert set(bars) <= r_cells | {row[3] for row in reactions_table(crane_report).rows} | {
        row[4] for row in reactions_table(crane_report).rows}


def test_the_reaction_line_of_the_crane_positions_does_not_run_through_the_support_number(
        crane_report):
    from trundle.report.crane_figures import runway_positions_figure

    figure = runway_positions_figure(crane_report)
    figure.canvas.draw()
    renderer = figure.canvas.get_renderer()
    ax = figure.axes[0]  # the worst reaction's panel
    assert "worst reaction" in ax.get_title(loc="left")
    dashed = [line for line in ax.lines if line.get_linestyle() not in ("-", "None", "")
              and len(line.get_xdata()) == 2 and line.get_xdata()[0] == line.get_xdata()[1]]
    assert dashed
    x_pixels = ax.transData.transform((dashed[0].get_xdata()[0], 0.0))[0]
    numbers = [t for t in ax.texts if t.get_text().isdigit()]
    assert numbers
    for text in numbers:
        box = text.get_window_extent(renderer)
        assert not box.x0 - 0.5 <= x_pixels <= box.x1 + 0.5, text.get_text()


def test_influence_line_legends_write_extremes_as_the_extremes_table():
    """The lines report: the legend's "max 2.449 at 3.667 m" is the extremes table's cells
    (the line's decimals, the position to a thousandth)."""
    import trundle
    from trundle.io.units import SI
    from trundle.report.figures import _extremes_words
    from trundle.report.tables import extreme_ordinate_cells, line_extremes

    beam = trundle.Beam(spans=[11.0, 7.3])
    lines = beam.influence_set([trundle.Effect("moment", at=3.6667)])
    (ex,) = line_extremes(lines, beam, SI)
    cells = extreme_ordinate_cells(ex)
    words = _extremes_words(ex, SI)
    assert f"max {cells['max']} at {cells['x_max']} m" in words
    assert f"min {cells['min']} at {cells['x_min']} m" in words
    assert all(len(cells[k].partition(".")[2]) <= 3 for k in ("x_max", "x_min"))


def test_crane_positions_write_wheel_loads_as_the_wheel_load_table(crane_report):
    from trundle.io.cranes import cranes_of
    from trundle.report.crane_figures import runway_positions_figure
    from trundle.report.crane_tables import wheel_loads_table

    table = wheel_loads_table(cranes_of(crane_report.results.model), crane_report.units)
    with_impact = {row[0]: row[7] for row in table.rows}  # "maximum with impact"
    figure = runway_positions_figure(crane_report)
    texts = [t.get_text() for ax in figure.axes for t in ax.texts]
    loaded = [t for t in texts if "(loaded)" in t]
    assert loaded
    for text in loaded:
        name = text.split(" (loaded)")[0]
        assert text.endswith(f"× {with_impact[name]} kN"), (text, with_impact)


def test_the_moment_caption_says_what_a_filled_diamond_and_the_mark_mean(truck):
    from trundle.report.envelope_report import figure_captions

    results, certified = truck
    captions = figure_captions(results)
    assert ("not certified" in captions["envelope-moment"]) is (not certified)
    assert "without the loads' load factors" in captions["envelope-deflection"]
